"""The review board in JupyterLab (headless Debian Chromium): layout and hover, as a reviewer
meets them at 1400×900 and 1000×700 (issue 13, items 13–15).

The notebook (``_review_helpers.BOARD_CELLS``) builds a board on invented repair times.
Screenshots go to $CDFSKETCH_SHOTS or test-artifacts/ (see conftest).
"""

from __future__ import annotations

import pytest

from ._review_helpers import overlaps, review_lab_fixture, shot  # noqa: F401  (a fixture)

pytestmark = pytest.mark.browser

PLOTS = ".cdfsketch-review-cdf, .cdfsketch-review-pdf, .cdfsketch-review-outcome"
CONTROLS = (
    ", ".join(
        f".cdfsketch-review {c}" for c in ("input", "button", "select", "textarea", ".widget-html")
    )
    + ", .cdfsketch-review-side, .cdfsketch-review-table, .cdfsketch-review-outcome-table"
)


@pytest.mark.parametrize("size", [(1400, 900), (1000, 700)])
def test_board_layout(review_lab, size: tuple[int, int]) -> None:
    page = review_lab.page
    page.set_viewport_size({"width": size[0], "height": size[1]})
    page.evaluate("() => window.dispatchEvent(new Event('resize'))")
    page.wait_for_timeout(1500)  # Lab relayouts, bqplot redraws
    board = page.locator(".cdfsketch-review").first
    page.locator(".cdfsketch-review-cdf").first.scroll_into_view_if_needed()
    page.wait_for_timeout(300)
    assert overlaps(page, PLOTS, CONTROLS) == []
    widths = page.evaluate(
        """() => {
          const t = document.querySelector('.cdfsketch-review-table');
          const inner = t.querySelector('table');
          const b = document.querySelector('.cdfsketch-review');
          return {table: inner.getBoundingClientRect().width, box: t.clientWidth,
                  scroll: t.scrollWidth, board: b.scrollWidth, boardBox: b.clientWidth};
        }"""
    )
    assert widths["table"] <= widths["box"] + 1, widths  # the comparison fits, no scrolling
    assert widths["scroll"] <= widths["box"] + 1, widths
    assert widths["board"] <= widths["boardBox"] + 1, widths
    # the consequence table fits too (issue 12), and its figure stays in its column
    outcome = page.evaluate(
        """() => {
          const t = document.querySelector('.cdfsketch-review-outcome-table');
          const f = document.querySelector('.cdfsketch-review-outcome');
          return {table: t.querySelector('table').getBoundingClientRect().width,
                  box: t.clientWidth, scroll: t.scrollWidth,
                  fig: f.getBoundingClientRect().right,
                  col: f.parentElement.getBoundingClientRect().right};
        }"""
    )
    assert outcome["table"] <= outcome["box"] + 1, outcome
    assert outcome["scroll"] <= outcome["box"] + 1, outcome
    assert outcome["fig"] <= outcome["col"] + 1, outcome
    assert page.locator(".cdfsketch-review-outcome .curve .line").count() >= 9
    # each plot fits its column (nothing clipped at the right edge)
    for fig in (".cdfsketch-review-cdf", ".cdfsketch-review-pdf"):
        fit = page.evaluate(
            """(sel) => { const f = document.querySelector(sel);
                          const c = f.parentElement.getBoundingClientRect();
                          return [f.getBoundingClientRect().right, c.right]; }""",
            fig,
        )
        assert fit[0] <= fit[1] + 1, (fig, fit)
    # the read-out's head is on screen beside (or, when narrow, just under) the CDF panel
    side = page.locator(".cdfsketch-review-readout").first.bounding_box()
    assert side is not None and side["y"] >= 0 and side["y"] + 40 <= size[1], side
    assert board.is_visible()
    shot(page, f"board-{size[0]}x{size[1]}.png")
    page.locator(".cdfsketch-review-table").first.scroll_into_view_if_needed()
    shot(page, f"board-{size[0]}x{size[1]}-table.png")
    page.locator(".cdfsketch-review-consequences").first.scroll_into_view_if_needed()
    shot(page, f"board-{size[0]}x{size[1]}-consequences.png")


def test_hover_updates_readout_without_a_click(review_lab) -> None:
    page = review_lab.page
    page.set_viewport_size({"width": 1400, "height": 900})
    fig = page.locator(".cdfsketch-review-cdf").first
    fig.scroll_into_view_if_needed()
    page.wait_for_timeout(300)
    box = fig.bounding_box()
    readout = page.locator(".cdfsketch-review-readout").first
    seen = []
    for frac in (0.3, 0.6):
        page.mouse.move(box["x"] + frac * box["width"], box["y"] + 0.5 * box["height"], steps=4)
        page.wait_for_function(
            "([el, before]) => el.textContent.includes('x = ') && el.textContent !== before",
            arg=[readout.element_handle(), seen[-1] if seen else ""],
            timeout=10_000,
        )
        seen.append(readout.text_content())
    assert seen[0] != seen[1]
    assert "F(x)" in seen[1]
    shot(page, "board-hover-1400x900.png")
