"""The palette keeps up to 12 candidates apart, also under simulated colour-vision deficiency.

Simulation: Machado, Oliveira & Fernandes (2009), "A physiologically-based model
for simulation of color vision deficiency", IEEE TVCG 15(6), the matrices for
severity 1.0 (protanopia, deuteranopia), applied to linear sRGB. The matrix
entries are transcribed from the paper's published table (written here from
memory of that table; the test below also checks that each matrix maps white to
white within 1 %, as the published ones do). Colour distance: CIE76 ΔE in
CIELAB under D65 (sRGB to XYZ by IEC 61966-2-1). Thresholds: ΔE ≥ 12 between any
two colours ("clearly different at a glance" for thin lines: common practice, no
source), and a pair closer than ΔE 20 must differ in dash or marker.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from cdfsketch.review import palette

PROTANOPIA = np.array(
    [[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216],
     [-0.003882, -0.048116, 1.051998]]
)  # fmt: skip
DEUTERANOPIA = np.array(
    [[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413],
     [-0.011820, 0.042940, 0.968881]]
)  # fmt: skip
SIMULATIONS = {"normal vision": np.eye(3), "protanopia": PROTANOPIA, "deuteranopia": DEUTERANOPIA}
# IEC 61966-2-1 (sRGB): linear RGB -> XYZ, D65 white
_XYZ = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722], [0.0193, 0.1192, 0.9505]])
_WHITE = np.array([0.95047, 1.0, 1.08883])
MIN_DELTA_E = 12.0
CLOSE_DELTA_E = 20.0


def _linear(hex_colour: str) -> np.ndarray:
    c = np.array([int(hex_colour[i : i + 2], 16) for i in (1, 3, 5)]) / 255
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def _lab(linear_rgb: np.ndarray) -> np.ndarray:
    t = (_XYZ @ np.clip(linear_rgb, 0, 1)) / _WHITE
    f = np.where(t > (6 / 29) ** 3, np.cbrt(t), t / (3 * (6 / 29) ** 2) + 4 / 29)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


def delta_e(a: str, b: str, sim: np.ndarray) -> float:
    """CIE76 colour difference of two colours as seen through a simulation matrix."""
    return float(np.linalg.norm(_lab(sim @ _linear(a)) - _lab(sim @ _linear(b))))


def test_simulation_matrices_keep_white() -> None:
    for name, m in SIMULATIONS.items():
        np.testing.assert_allclose(m.sum(axis=1), 1.0, atol=0.01, err_msg=name)


@pytest.mark.parametrize("sim", sorted(SIMULATIONS))
def test_colours_stay_apart(sim: str) -> None:
    colours = [*palette.CANDIDATES, palette.DATA]  # candidates and the data's grey
    worst = min(
        (delta_e(a, b, SIMULATIONS[sim]), a, b) for a, b in itertools.combinations(colours, 2)
    )
    assert worst[0] >= MIN_DELTA_E, worst


@pytest.mark.parametrize("sim", sorted(SIMULATIONS))
def test_twelve_candidates_distinguishable(sim: str) -> None:
    styles = [palette.style(i) for i in range(12)]
    assert len(set(styles)) == 12
    for (i, a), (j, b) in itertools.combinations(enumerate(styles), 2):
        if a.colour == b.colour:
            assert a.dash != b.dash, (i, j)  # same colour: another dash pattern
            continue
        d = delta_e(a.colour, b.colour, SIMULATIONS[sim])
        assert d >= MIN_DELTA_E, (i, j, d)
        if d < CLOSE_DELTA_E:
            assert a.marker != b.marker or a.dash != b.dash, (i, j, d)


def test_styles_are_fixed_by_position() -> None:
    assert [palette.style(i) for i in range(30)] == [palette.style(i) for i in range(30)]
    assert palette.MAX_DISTINCT >= 12
    assert palette.candidate_colour(3) == palette.style(3).colour
