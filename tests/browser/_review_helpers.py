"""Browser helpers for the review screens: a JupyterLab running a review-board notebook,
and the layout checks shared by the board and the page.

The server and the kernel-ready wait are the browser suite's own (``conftest``); only
the notebook differs: it builds a ReviewBoard on invented repair times.
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from typing import Any

import pytest

from .conftest import SHOTS, Page, Server, _wait_kernel

BOARD_CELLS = [
    "import numpy as np\n"
    "import cdfsketch\n"
    "from cdfsketch import Sketch\n"
    "from cdfsketch.empirical import ECDF\n"
    "from cdfsketch.fit import fit_candidates\n"
    "hours = np.round(np.random.default_rng(7).gamma(1.6, 6.0, 240), 1)  # invented\n"
    "a = Sketch([0.5, 3, 12, 60], [0, 0.4, 0.8, 1], name='crew lead (invented)', units='h')\n"
    "b = Sketch([-2, 5, 20, 70], [0, 0.45, 0.85, 1], name='depot planner (invented)')\n"
    "pooled = cdfsketch.pool([a, b], name='linear pool of the two experts')\n"
    "fits = fit_candidates(hours, families=['gamma', 'lognormal', 'weibull', 'normal'],\n"
    "                      mixtures=[2], kde=True, rng=1, progress=False)\n"
    "rate = Sketch([55, 68, 90], [0, 0.5, 1], name='labour rate (invented)', units='EUR/h')\n"
    "def cost(d):  # an invented cost model\n"
    "    return {'cost': d['hours'] * d['rate']}\n"
    "board = cdfsketch.ReviewBoard(hours, [a, b, pooled, *fits, ECDF(hours)], units='h',\n"
    "                              name='pump repair time (invented)', rng=1, progress=False,\n"
    "                              model=cost, inputs={'hours': a, 'rate': rate}, vary='hours',\n"
    "                              size=20_000, output_units='EUR',\n"
    "                              consequence_options={'tolerance': 25.0,\n"
    "                                                   'thresholds': [1500, 3000]})\n"
    "board.choose('gamma', by='review group (invented)', rationale='closest held-out error')\n"
    "board",
]

#: Script: controls whose box intersects a plot's box (none may); args [plots, controls].
OVERLAP_JS = """([plotSel, controlSel]) => {
  const plots = [...document.querySelectorAll(plotSel)].map((p) => p.getBoundingClientRect());
  const bad = [];
  const cross = (r, p) =>
    r.left < p.right - 0.5 && r.right > p.left + 0.5 &&
    r.top < p.bottom - 0.5 && r.bottom > p.top + 0.5;
  for (const c of document.querySelectorAll(controlSel)) {
    const r = c.getBoundingClientRect();
    if (r.width === 0 || r.height === 0) continue;
    if (c.closest(plotSel)) continue; // a plot's own toolbar belongs to the plot
    const what = `${c.tagName}.${c.className} ${c.textContent.slice(0, 30)} ${c.title || ""}`;
    for (const p of plots) if (cross(r, p)) bad.push(what);
  }
  return bad;
}"""


def overlaps(page: Any, plots: str, controls: str) -> list[str]:
    """Controls (CSS selector) that overlap a plot (CSS selector) on the page."""
    return page.evaluate(OVERLAP_JS, [plots, controls])


def shot(page: Any, name: str) -> None:
    """Save a screenshot as ``review-<name>`` in the suite's screenshot folder."""
    SHOTS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SHOTS / f"review-{name}"))


def _notebook(cells: list[str]) -> dict[str, Any]:
    return {
        "cells": [
            {
                "cell_type": "code",
                "execution_count": None,
                "id": f"c{i}",
                "metadata": {},
                "outputs": [],
                "source": src,
            }
            for i, src in enumerate(cells)
        ],
        "metadata": {
            "kernelspec": {"name": "python3", "display_name": "Python 3", "language": "python"}
        },
        "nbformat": 4,
        "nbformat_minor": 5,
    }


@pytest.fixture(scope="module", name="review_lab")
def review_lab_fixture(server: Server) -> Iterator[Page]:
    """The review-board notebook open and run in JupyterLab on the suite's server."""
    folder = server.root / "review"
    folder.mkdir()
    (folder / "review_probe.ipynb").write_text(json.dumps(_notebook(BOARD_CELLS)), encoding="utf-8")
    server.delete_sessions()
    page = server.context.new_page()
    page.set_viewport_size({"width": 1400, "height": 900})
    try:
        page.goto(f"{server.base}/lab/tree/review/review_probe.ipynb?token={server.token}")
        lab = Page(page, folder, "lab")
        _wait_kernel(lab)
        page.evaluate("() => window.jupyterapp.commands.execute('notebook:run-all-cells')")
        page.wait_for_selector(".cdfsketch-review-cdf .curve .line", timeout=120_000)
        # close the left sidebar: the board gets the width a reviewer would give it
        page.evaluate(
            "() => { const s = window.jupyterapp.shell; if (!s.leftCollapsed) s.collapseLeft(); }"
        )
        page.wait_for_timeout(500)
        yield lab
    finally:
        page.close()
        server.delete_sessions()
