"""The editor in a real JupyterLab 4 and Notebook 7 in headless Chromium (see conftest.py).

The probe notebook (editor_probe.ipynb) opens an Editor that autosaves its
spec to ``state.json`` on every committed change, and writes the scales'
domains, the locks, the selection and the message to ``probe.json``: those
files are the kernel's state as the tests see it. Tests of a class run in
file order on one page. Screenshots go to ``CDFSKETCH_SHOTS`` (or
test-artifacts/).
"""

from __future__ import annotations

import time

import numpy as np
import pytest

import cdfsketch

pytestmark = pytest.mark.browser

SIZES = ((1400, 900), (1000, 700))


def knots(lab) -> tuple[np.ndarray, np.ndarray]:
    spec = lab.state()
    s = cdfsketch.load(spec)  # must be a valid spec and a valid sketch
    return s.x, s.p


def settled(lab) -> tuple[np.ndarray, np.ndarray]:
    lab.settle()
    return knots(lab)


# the knot scatters: the movable knots are the last scatter drawn in the CDF panel, the
# locked ones are drawn black (the hidden "clamped position" ring is white)
GROUPS_JS = """const knotGroups = () => {
  const f = document.querySelector('.cdfsketch-cdf');
  const groups = [...new Set([...f.querySelectorAll('.object_grp')].map(g => g.parentNode))];
  const fill = g => getComputedStyle(g.querySelector('.dot')).fill;
  return {movable: groups[groups.length - 1],
    locked: groups.find(g => g !== groups[groups.length - 1] && fill(g) === 'rgb(0, 0, 0)')};
};"""

# everything read from the page in one evaluation, so that no scroll can come in between:
# d3's tick offset (ticks are drawn half a pixel off when devicePixelRatio <= 1, for crisp
# lines), per figure the plot area's screen box and its axes' labelled ticks, and the dots
SNAPSHOT_JS = (
    """() => {
  """
    + GROUPS_JS
    + """
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
    dots: [...knotGroups().movable.querySelectorAll('.object_grp .dot')].map(mid)};
}"""
)

# layout checks, in one evaluation: plots and controls never overlap, no button label is
# cut, every knot dot's centre hit-tests to that dot
LAYOUT_JS = (
    """() => {
  """
    + GROUPS_JS
    + """
  const rect = e => e.getBoundingClientRect();
  const ed = document.querySelector('.cdfsketch-editor');
  const plots = [...ed.querySelectorAll('.cdfsketch-cdf, .cdfsketch-pdf')].map(rect);
  const sel = 'button, input, select, textarea, .cdfsketch-readout, .cdfsketch-knot-table, ' +
    '.cdfsketch-message, .cdfsketch-side, .cdfsketch-legend, .cdfsketch-group';
  const overlaps = [];
  for (const c of ed.querySelectorAll(sel)) {
    const r = rect(c);
    if (r.width === 0 || r.height === 0) continue;
    for (const p of plots) {
      const w = Math.min(r.right, p.right) - Math.max(r.left, p.left);
      const h = Math.min(r.bottom, p.bottom) - Math.max(r.top, p.top);
      if (w > 0.5 && h > 0.5) overlaps.push(c.className + ' ' + (c.textContent || '').slice(0, 30));
    }
  }
  const cut = [...ed.querySelectorAll('button')].filter(b => b.offsetWidth > 0 &&
    b.scrollWidth > b.clientWidth + 1).map(b => b.textContent);
  const g = knotGroups();
  const misses = [];
  for (const grp of [g.movable, g.locked].filter(Boolean)) {
    for (const o of grp.querySelectorAll('.object_grp')) {
      const r = rect(o.querySelector('.dot'));
      const hit = document.elementFromPoint(r.x + r.width / 2, r.y + r.height / 2);
      if (!hit || hit.closest('.object_grp') !== o) misses.push(hit ? hit.className.baseVal ||
        hit.className : null);
    }
  }
  const fig = rect(ed.querySelector('.cdfsketch-cdf'));
  return {overlaps, cut, misses, figWidth: fig.width, editorWidth: rect(ed).width,
    knots: ed.querySelectorAll('.cdfsketch-cdf .object_grp').length};
}"""
)


class Geometry:
    """What the page draws, and the CDF panel's scales' domains (from the kernel).

    Both position scales are linear without mark padding (``allow_padding=False``
    in the editor), so a value ``v`` is drawn at ``left + (v - lo) / (hi - lo) · width``
    and ``p`` at ``top + (phi - p) / (phi - plo) · height``: the map the drawn knots,
    the axes' ticks and the density panel's x axis are all checked against.
    """

    def __init__(self, lab) -> None:
        dom = lab.kernel()
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
        rows = [
            (float(t.replace("\u2212", "-").replace(",", "")), cx, cy)
            for cx, cy, t in ax
            if t.strip()  # an unlabelled tick (d3 leaves some empty) names no value
        ]
        out.append(np.array(rows, dtype=float).reshape(-1, 3))
    out = [a for a in out if a.shape[0] >= 2]
    horizontal = [a for a in out if np.ptp(a[:, 1]) > np.ptp(a[:, 2])]
    vertical = [a for a in out if np.ptp(a[:, 1]) < np.ptp(a[:, 2])]
    return horizontal[0], vertical[0]


DOTS_JS = (
    "() => { "
    + GROUPS_JS
    + """ return [...knotGroups().movable.querySelectorAll('.object_grp .dot')].map(e => {
  const r = e.getBoundingClientRect(); return [r.x + r.width / 2, r.y + r.height / 2]; }); }"""
)


def dots(lab) -> np.ndarray:
    """Screen centres of the movable knots (one light evaluation)."""
    return np.array(lab.page.evaluate(DOTS_JS), dtype=float).reshape(-1, 2)


def show_cdf_panel(lab, timeout: float = 10.0) -> None:
    """Scroll the plots to the top of the view and wait until the dots stop moving."""
    lab.page.locator(".cdfsketch-plots").first.evaluate("e => e.scrollIntoView({block: 'start'})")
    end = time.monotonic() + timeout
    last = dots(lab)
    while time.monotonic() < end:
        time.sleep(0.15)
        now = dots(lab)
        if now.shape == last.shape and np.allclose(now, last, atol=0.01):
            return
        last = now


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


def drawn_where_the_kernel_has_them_soon(lab, kx, kp, timeout: float = 20.0) -> None:
    """The view and the kernel agree: checked again until it holds or ``timeout`` s.

    After a burst of gestures the kernel's last corrections can reach a busy
    browser after the kernel has gone quiet, and on a loaded machine the kernel
    can pause longer than the settle interval while it works through queued
    drags: so each retry reads the kernel's state again. A view that never
    agrees with the kernel fails.
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
            kx, kp = settled(lab)
            cdfsketch.check_knots(kx, kp)


def check_layout(page) -> dict:
    """At both sizes: no control over a plot, no cut button label, every knot hit-testable."""
    out = {}
    for width, height in SIZES:
        page.page.set_viewport_size({"width": width, "height": height})
        page.page.wait_for_timeout(600)  # the figures relayout on resize
        show_cdf_panel(page)
        page.page.wait_for_timeout(200)
        res = page.page.evaluate(LAYOUT_JS)
        page.shot(f"opened-{width}x{height}")
        assert res["overlaps"] == [], (width, res["overlaps"])
        assert res["cut"] == [], (width, res["cut"])
        assert res["misses"] == [] and res["knots"] >= 7, (width, res)
        assert res["figWidth"] >= 0.5 * res["editorWidth"]  # the plot takes the width
        out[width] = res
    page.page.set_viewport_size({"width": 1400, "height": 900})
    page.page.wait_for_timeout(400)
    return out


def drag_moves_one_knot(page) -> None:
    show_cdf_panel(page)
    x0, p0 = knots(page)
    gesture(page, 3, 40, -30)
    x1, p1 = settled(page)
    assert x1[3] > x0[3] and p1[3] > p0[3]
    np.testing.assert_array_equal(np.delete(x1, 3), np.delete(x0, 3))  # no other knot moved
    np.testing.assert_array_equal(np.delete(p1, 3), np.delete(p0, 3))
    cdfsketch.check_knots(x1, p1)
    drawn_where_the_kernel_has_them_soon(page, x1, p1)


def click_button(page, css: str) -> None:
    b = page.page.locator(f".cdfsketch-{css}").first
    b.scroll_into_view_if_needed()
    b.click()


class TestJupyterLab:
    def test_layout_at_both_sizes(self, lab):
        check_layout(lab)

    def test_drag_a_knot_moves_it_in_the_kernel(self, lab):
        drag_moves_one_knot(lab)
        lab.shot("after-drag")

    def test_rapid_random_drags_stay_valid_and_drawn_where_the_kernel_has_them(self, lab):
        # 300 gestures in 6 bursts; the view is compared with the kernel after each burst
        rng = np.random.default_rng(11)
        show_cdf_panel(lab)
        kx, kp = settled(lab)
        check_drawn_where_the_kernel_has_them(lab, kx, kp)
        done = 0
        for _burst in range(6):
            show_cdf_panel(lab)
            g = Geometry(lab)  # the plot area; the dots are read again before each gesture
            for _ in range(50):
                g.dots = dots(lab)
                i = int(rng.integers(0, len(g.dots)))
                gesture(lab, i, *rng.normal(0, 60, 2), steps=1, g=g)
                done += 1
            kx, kp = settled(lab)  # loads and checks the autosaved spec
            cdfsketch.check_knots(kx, kp)
            drawn_where_the_kernel_has_them_soon(lab, kx, kp)
        assert done == 300

    def test_add_remove_type_undo_redo_through_the_ui(self, lab):
        page = lab.page
        # back to the sketch the editor opened, whatever earlier tests did
        page.locator(".cdfsketch-start select").select_option(label="as opened")
        click_button(lab, "start-over")
        x0, p0 = settled(lab)
        # the probe's sketch, whatever earlier tests did to it
        assert p0.tolist() == [0.0, 0.1, 0.25, 0.5, 0.75, 0.9, 1.0]
        n0 = x0.size
        click_button(lab, "add")  # no knot selected: the middle of the widest step in p
        x1, _p1 = settled(lab)
        assert x1.size == n0 + 1
        click_button(lab, "remove")  # the added knot is the selected one
        x2, p2 = settled(lab)
        np.testing.assert_array_equal(x2, x0)
        np.testing.assert_array_equal(p2, p0)
        # a click on an empty part of the canvas adds a knot exactly there (x and p): halfway
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
        # select the new knot by clicking it, then "remove"
        k = int(new[0])
        g = Geometry(lab)
        page.mouse.click(*g.dots[k])
        click_button(lab, "remove")
        x4, p4 = settled(lab)
        np.testing.assert_array_equal(x4, x2)  # the clicked knot is gone, no other moved
        np.testing.assert_array_equal(p4, p2)
        click_button(lab, "undo")
        np.testing.assert_array_equal(settled(lab)[0], x3)
        click_button(lab, "redo")
        np.testing.assert_array_equal(settled(lab)[0], x2)
        # type an exact value into the table
        _x, p = knots(lab)
        target = round(float(0.5 * (p[2] + p[3])), 4)
        cell = page.locator(".cdfsketch-knot-p-2 input")
        cell.scroll_into_view_if_needed()
        cell.fill(str(target))
        cell.press("Enter")
        assert settled(lab)[1][2] == pytest.approx(target)
        click_button(lab, "undo")
        assert settled(lab)[1][2] == pytest.approx(p[2])
        click_button(lab, "redo")
        assert settled(lab)[1][2] == pytest.approx(target)

    def test_an_error_shows_in_the_warning_colour_and_goes_with_the_next_change(self, lab):
        page = lab.page
        cell = page.locator(".cdfsketch-knot-p-2 input")
        cell.scroll_into_view_if_needed()
        cell.fill("0.999")  # beyond the next knot's p: refused, said, cell put back
        cell.press("Enter")
        msg = page.locator(".cdfsketch-message .cdfsketch-error")
        msg.wait_for(timeout=10_000)
        colour = msg.evaluate("e => getComputedStyle(e).color")
        assert colour == "rgb(213, 94, 0)"  # palette.KNOT_OUTSIDE_BAND (vermillion)
        assert "must lie between" in msg.inner_text()
        show_cdf_panel(lab)
        for width, height in SIZES:
            page.set_viewport_size({"width": width, "height": height})
            page.wait_for_timeout(500)
            show_cdf_panel(lab)
            lab.shot(f"error-{width}x{height}")
        page.set_viewport_size({"width": 1400, "height": 900})
        page.wait_for_timeout(400)
        click_button(lab, "add")  # the next change clears the message
        settled(lab)
        page.wait_for_function(
            "() => !document.querySelector('.cdfsketch-message .cdfsketch-error')", timeout=10_000
        )
        click_button(lab, "undo")
        settled(lab)

    def test_a_locked_knot_does_not_move(self, lab):
        page = lab.page
        show_cdf_panel(lab)
        g = Geometry(lab)
        page.mouse.click(*g.dots[2])  # select knot 2
        click_button(lab, "lock")
        for _ in range(100):
            if lab.kernel()["locked"] == [2]:
                break
            time.sleep(0.1)
        assert lab.kernel()["locked"] == [2]
        x0, p0 = settled(lab)
        show_cdf_panel(lab)
        locked = np.array(
            page.evaluate(
                """() => { """
                + GROUPS_JS
                + """
          const r = knotGroups().locked.querySelector('.dot').getBoundingClientRect();
          return [r.x + r.width / 2, r.y + r.height / 2]; }"""
            )
        )
        m = page.mouse
        m.move(*locked)
        m.down()
        m.move(locked[0] + 40, locked[1] - 40, steps=4)
        after = np.array(
            page.evaluate(
                """() => { """
                + GROUPS_JS
                + """
          const r = knotGroups().locked.querySelector('.dot').getBoundingClientRect();
          return [r.x + r.width / 2, r.y + r.height / 2]; }"""
            )
        )
        m.up()
        np.testing.assert_allclose(after, locked, atol=0.5)  # it did not follow the pointer
        x1, p1 = settled(lab)
        assert x1[2] == x0[2] and p1[2] == p0[2]
        for width, height in SIZES:
            page.set_viewport_size({"width": width, "height": height})
            page.wait_for_timeout(500)
            show_cdf_panel(lab)
            lab.shot(f"locked-{width}x{height}")
        page.set_viewport_size({"width": 1400, "height": 900})
        check_layout(lab)  # the locked knot hit-tests too

    def test_screenshot_is_not_blank(self, lab):
        from PIL import Image

        editor = lab.page.locator(".cdfsketch-editor").first
        editor.scroll_into_view_if_needed()
        path = lab.shot("editor")
        img = np.asarray(Image.open(path).convert("L"), dtype=float)
        assert img.shape[0] > 300 and img.shape[1] > 600
        assert img.std() > 10  # a blank or single-colour image has ~0 spread


class TestNotebook7:
    def test_layout_at_both_sizes(self, notebook7):
        check_layout(notebook7)

    def test_drag_a_knot_moves_it_in_the_kernel(self, notebook7):
        drag_moves_one_knot(notebook7)
