"""Shared test helpers."""

from __future__ import annotations

import numpy as np
import pytest

from cdfsketch import BoundedTail, ExponentialTail, Sketch


@pytest.fixture
def zoo() -> list[Sketch]:
    """Sketches covering the CDF model's cases (invented shapes, no meaning)."""
    return [
        Sketch([0, 10, 30], [0, 0.5, 1]),
        Sketch([0, 10, 30], [0, 0.5, 1], interpolation="pchip"),
        Sketch([0, 1, 4], [0.1, 0.5, 0.9], interpolation="pchip"),
        Sketch([0, 1, 4], [0.1, 0.5, 0.9]),
        Sketch([0, 0, 1], [0, 0.25, 1]),
        Sketch([0, 1, 1], [0, 0.7, 1], interpolation="pchip"),
        Sketch(
            [0, 1, 1, 4, 6],
            [0.1, 0.3, 0.5, 0.5, 0.95],
            interpolation="pchip",
            upper_tail=BoundedTail(9.0, density="taper"),
        ),
        Sketch(
            [2, 3, 5],
            [0.2, 0.6, 0.8],
            lower_tail=BoundedTail(0.0),
            upper_tail=ExponentialTail(scale=4.0),
        ),
        Sketch(
            [2, 3, 5],
            [0.2, 0.6, 0.8],
            interpolation="pchip",
            lower_tail=BoundedTail(1.0, density="taper"),
            upper_tail=BoundedTail(7.0),
        ),
        Sketch([1e6, 1e6 + 1, 1e6 + 3, 1e6 + 10], [0, 0.2, 0.9, 1], interpolation="pchip"),
        Sketch([-5, -1, 0, 0, 2, 8], [0.05, 0.2, 0.4, 0.6, 0.6, 0.97], interpolation="pchip"),
    ]


@pytest.fixture(scope="session")
def nile() -> np.ndarray:
    """statsmodels' Nile river flows (n = 100), shipped with statsmodels (offline)."""
    import statsmodels.api as sm

    return sm.datasets.nile.load_pandas().data["volume"].to_numpy(dtype=float)
