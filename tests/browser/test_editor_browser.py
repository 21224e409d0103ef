"""The editor in a real JupyterLab and headless Chromium (see conftest.py).

The probe notebook (editor_probe.ipynb) opens an Editor that autosaves its
spec to ``state.json`` on every committed change: that file is the kernel's
state as the tests see it. Tests run in file order on one page.
"""

from __future__ import annotations

import json
import time
from pathlib import Path

import numpy as np
import pytest

import cdfsketch

pytestmark = pytest.mark.browser

DOTS = ".cdfsketch-cdf .object_grp"
ARTIFACTS = Path(__file__).parents[2] / "test-artifacts"


def knots(lab) -> tuple[np.ndarray, np.ndarray]:
    spec = lab.state()
    s = cdfsketch.load(spec)  # must be a valid spec and a valid sketch
    return s.x, s.p


def settled(lab) -> tuple[np.ndarray, np.ndarray]:
    lab.settle()
    return knots(lab)


# everything read from the page in one evaluation, so that no scroll can come in between:
# d3's tick offset (ticks are drawn half a pixel off when devicePixelRatio <= 1, for crisp
# lines), per figure the plot area's screen box and its axes' labelled ticks, and the dots
SNAPSHOT_JS = """() => {
  const box = e => { const r = e.getBoundingClientRect(); return [r.x, r.y, r.width, r.height]; };
  const mid = e => { const r = e.getBoundingClientRect();
    return [r.x + r.width / 2, r.y + r.height / 2]; };
  const fig = sel => { const f = document.querySelector(sel);
    return {area: box(f.querySelector('rect.plotarea_background')),
      axes: [...f.querySelectorAll('g.axis')].map(ax => [...ax.querySelectorAll('g.tick')]
        .filter(t => t.querySelector('line') && t.querySelector('text'))
        .map(t => [...mid(t.querySelector('line')), t.querySelector('text').textContent]))}; };
  return {offset: window.devicePixelRatio > 1 ? 0 : 0.5,
    cdf: fig('.cdfsketch-cdf'), pdf: fig('.cdfsketch-pdf'),
    dots: [...document.querySelectorAll('.cdfsketch-cdf .object_grp .dot')].map(mid)};
}"""


class Geometry:
    """What the page draws, and the CDF panel's scales' domains (from the kernel).

    Both position scales are linear without mark padding (``allow_padding=False``
    in the editor), so a value ``v`` is drawn at ``left + (v - lo) / (hi - lo) · width``
    and ``p`` at ``top + (phi - p) / (phi - plo) · height``: the map the drawn knots,
    the axes' ticks and the density panel's x axis are all checked against.
    """

    def __init__(self, lab) -> None:
        dom = json.loads((lab.root / "domain.json").read_text())
        self.lo, self.hi = dom["x"]
        self.plo, self.phi = dom["y"]
        snap = lab.page.evaluate(SNAPSHOT_JS)
        self.offset = float(snap["offset"])
        self.left, self.top, self.width, self.height = snap["cdf"]["area"]
        self.dots = np.array(snap["dots"], dtype=float).reshape(-1, 2)
        self.ticks = {name: _axes(snap[name]["axes"]) for name in ("cdf", "pdf")}
        self.pdf_area = snap["pdf"]["area"]
        # one screen pixel in data units
        self.px_x = (self.hi - self.lo) / self.width
        self.px_p = (self.phi - self.plo) / self.height

    def x_of(self, sx: np.ndarray) -> np.ndarray:
        return self.lo + (np.asarray(sx) - self.left) * self.px_x

    def p_of(self, sy: np.ndarray) -> np.ndarray:
        return self.phi - (np.asarray(sy) - self.top) * self.px_p

    def screen(self, x: float, p: float) -> tuple[float, float]:
        return self.left + (x - self.lo) / self.px_x, self.top + (self.phi - p) / self.px_p

    def inside(self, sx: float, sy: float, margin: float = 3.0) -> tuple[float, float]:
        """The screen point moved into the plot area (a drag never leaves the figure)."""
        return (
            min(max(sx, self.left + margin), self.left + self.width - margin),
            min(max(sy, self.top + margin), self.top + self.height - margin),
        )


def _axes(axes: list) -> tuple[np.ndarray, np.ndarray]:
    """The first horizontal and vertical axis, as rows ``(value, screen x, screen y)``."""
    out = []
    for ax in axes:
        rows = [(float(t.replace("\u2212", "-").replace(",", "")), cx, cy) for cx, cy, t in ax]
        out.append(np.array(rows, dtype=float).reshape(-1, 3))
    out = [a for a in out if a.shape[0] >= 2]
    horizontal = [a for a in out if np.ptp(a[:, 1]) > np.ptp(a[:, 2])]
    vertical = [a for a in out if np.ptp(a[:, 1]) < np.ptp(a[:, 2])]
    return horizontal[0], vertical[0]


def show_cdf_panel(lab) -> None:
    lab.page.locator(".cdfsketch-cdf").first.scroll_into_view_if_needed()


def gesture(lab, i: int, dx: float, dy: float, steps: int = 4, g: Geometry | None = None) -> None:
    """Press on knot ``i`` as drawn now, move by ``(dx, dy)`` px (kept in the plot), release."""
    g = Geometry(lab) if g is None else g
    x, y = g.dots[i]
    tx, ty = g.inside(x + dx, y + dy)
    m = lab.page.mouse
    m.move(x, y)
    m.down()
    m.move(tx, ty, steps=steps)
    m.up()


def test_drag_a_knot_moves_it_in_the_kernel(lab):
    show_cdf_panel(lab)
    x0, p0 = knots(lab)
    gesture(lab, 3, 40, -30)
    x1, p1 = settled(lab)
    assert x1[3] > x0[3] and p1[3] > p0[3]
    np.testing.assert_array_equal(np.delete(x1, 3), np.delete(x0, 3))  # no other knot moved
    np.testing.assert_array_equal(np.delete(p1, 3), np.delete(p0, 3))
    cdfsketch.check_knots(x1, p1)


def check_drawn_where_the_kernel_has_them(lab, kx: np.ndarray, kp: np.ndarray) -> None:
    """Knot dots, axis ticks and both panels agree with the kernel within half a pixel."""
    g = Geometry(lab)
    half = 0.5  # px: sub-pixel tolerance, in data units 0.5·(hi - lo)/width
    # the dots, mapped back through the kernel's scale domains
    px = g.dots
    assert px.shape == (kx.size, 2)
    np.testing.assert_allclose(g.x_of(px[:, 0]), kx, rtol=0, atol=half * g.px_x)
    np.testing.assert_allclose(g.p_of(px[:, 1]), kp, rtol=0, atol=half * g.px_p)
    # the axes draw every tick (labelled with its exact value) where the same map puts it
    ax_x, ax_p = g.ticks["cdf"]
    assert ax_x.shape[0] >= 3 and ax_p.shape[0] >= 3
    np.testing.assert_allclose(g.x_of(ax_x[:, 1] - g.offset), ax_x[:, 0], atol=half * g.px_x)
    np.testing.assert_allclose(g.p_of(ax_p[:, 2] - g.offset), ax_p[:, 0], atol=half * g.px_p)
    # the density panel shares the x axis pixel for pixel
    assert g.pdf_area[0] == pytest.approx(g.left) and g.pdf_area[2] == pytest.approx(g.width)
    ax_x2, _density = g.ticks["pdf"]
    np.testing.assert_allclose(g.x_of(ax_x2[:, 1] - g.offset), ax_x2[:, 0], atol=half * g.px_x)


def drawn_where_the_kernel_has_them_soon(lab, kx, kp, timeout: float = 10.0) -> None:
    """The view catches up with the kernel: checked again until it holds or ``timeout`` s.

    After a burst of gestures the kernel's last corrections can reach a busy
    browser after the kernel has gone quiet; a view that never catches up fails.
    """
    end = time.monotonic() + timeout
    while True:
        try:
            check_drawn_where_the_kernel_has_them(lab, kx, kp)
            return
        except AssertionError:
            if time.monotonic() > end:
                raise
            time.sleep(0.25)


def test_rapid_random_drags_stay_valid_and_drawn_where_the_kernel_has_them(lab):
    rng = np.random.default_rng(11)
    show_cdf_panel(lab)
    kx, kp = settled(lab)
    check_drawn_where_the_kernel_has_them(lab, kx, kp)
    done = 0
    for _burst in range(10):
        show_cdf_panel(lab)
        for _ in range(30):
            g = Geometry(lab)
            i = int(rng.integers(0, len(g.dots)))
            gesture(lab, i, *rng.normal(0, 60, 2), steps=2, g=g)
            done += 1
        kx, kp = settled(lab)  # loads and checks the autosaved spec
        cdfsketch.check_knots(kx, kp)
        drawn_where_the_kernel_has_them_soon(lab, kx, kp)
    assert done == 300


def test_add_remove_type_undo_redo_through_the_ui(lab):
    page = lab.page
    # start from the sketch the editor opened, whatever earlier tests did (the reset button)
    page.locator(".cdfsketch-reset").click()
    x0, p0 = settled(lab)
    n0 = x0.size
    # the "add knot" button (no knot selected: the middle of the widest step in p)
    page.locator(".cdfsketch-add").click()
    x1, _p1 = settled(lab)
    assert x1.size == n0 + 1
    page.locator(".cdfsketch-remove").click()  # the added knot is the selected one
    x2, p2 = settled(lab)
    np.testing.assert_array_equal(x2, x0)
    np.testing.assert_array_equal(p2, p0)
    # a click on an empty part of the canvas adds a knot there: halfway (in x and p)
    # between the neighbours with the most room on screen in both directions
    show_cdf_panel(lab)
    g = Geometry(lab)
    sx, sy = np.array([g.screen(a, b) for a, b in zip(x2, p2, strict=True)]).T
    j = int(np.argmax(np.minimum(np.abs(np.diff(sx)), np.abs(np.diff(sy)))))
    assert min(abs(sx[j + 1] - sx[j]), abs(sy[j + 1] - sy[j])) > 20  # room for a clear click
    cx, cy = 0.5 * (sx[j] + sx[j + 1]), 0.5 * (sy[j] + sy[j + 1])
    page.mouse.click(cx, cy)
    x3, p3 = settled(lab)
    assert x3.size == n0 + 1
    new = np.flatnonzero(~np.isin(x3, x2))
    assert new.size == 1  # one new knot, at the clicked place (within a pixel)
    assert abs(x3[new[0]] - g.x_of(cx)) <= g.px_x
    assert abs(p3[new[0]] - g.p_of(cy)) <= g.px_p
    # select the new knot by clicking it, then "remove selected"
    k = int(new[0])
    dot = page.locator(DOTS).nth(k)
    dot.scroll_into_view_if_needed()
    dot.locator(".dot").click()
    remove = page.locator(".cdfsketch-remove")
    remove.scroll_into_view_if_needed()
    remove.click()
    x4, p4 = settled(lab)
    np.testing.assert_array_equal(x4, x2)  # the clicked knot is gone, no other moved
    np.testing.assert_array_equal(p4, p2)
    page.locator(".cdfsketch-undo").click()
    np.testing.assert_array_equal(settled(lab)[0], x3)
    page.locator(".cdfsketch-redo").click()
    np.testing.assert_array_equal(settled(lab)[0], x2)
    # type an exact value into the table
    _x, p = knots(lab)
    target = round(float(0.5 * (p[2] + p[3])), 4)
    cell = page.locator(".cdfsketch-knot-p-2 input")
    cell.scroll_into_view_if_needed()
    cell.fill(str(target))
    cell.press("Enter")
    assert settled(lab)[1][2] == pytest.approx(target)
    page.locator(".cdfsketch-undo").click()
    assert settled(lab)[1][2] == pytest.approx(p[2])
    page.locator(".cdfsketch-redo").click()
    assert settled(lab)[1][2] == pytest.approx(target)


def test_screenshot_is_not_blank(lab):
    from PIL import Image

    ARTIFACTS.mkdir(exist_ok=True)
    path = ARTIFACTS / "editor.png"
    editor = lab.page.locator(".cdfsketch-editor").first
    editor.scroll_into_view_if_needed()
    editor.screenshot(path=str(path))
    img = np.asarray(Image.open(path).convert("L"), dtype=float)
    assert img.shape[0] > 300 and img.shape[1] > 600
    assert img.std() > 10  # a blank or single-colour image has ~0 spread
