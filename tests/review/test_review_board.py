"""ReviewBoard and Review, kernel side: candidates, toggles, hover read-out, decision, spec.

Data: the Nile river flows (statsmodels.datasets.nile, shipped offline, n=100,
min 456, max 1370 — statsmodels 0.15). The expert sketches are invented.
"""

from __future__ import annotations

import json
from datetime import UTC, datetime

import numpy as np
import pandas as pd
import pytest

import cdfsketch
from cdfsketch import Sketch, validate_spec
from cdfsketch.elicit import from_quantiles
from cdfsketch.empirical import ECDF
from cdfsketch.review import FIT_KNOTS, Review

HOSTILE = ["<img src=x onerror=alert(1)>", "</script><script>alert(1)</script>"]


@pytest.fixture(scope="module")
def experts() -> list[Sketch]:
    a = from_quantiles({0.1: 650, 0.5: 880, 0.9: 1150}, name="expert A", units="1e8 m3")
    b = from_quantiles(
        {0.05: 600, 0.5: 930, 0.95: 1250}, name=HOSTILE[0], units="1e8 m3", interpolation="pchip"
    )
    return [a, b]


@pytest.fixture(scope="module")
def fits(nile: np.ndarray) -> list:
    from cdfsketch.fit import fit_candidates

    return list(fit_candidates(nile, families=["normal", "gamma"], mixtures=[], kde=False, rng=0))


@pytest.fixture
def board(nile, experts, fits):
    pooled = cdfsketch.pool(experts, name="pool")
    return cdfsketch.ReviewBoard(
        nile, [*experts, pooled, *fits, ECDF(nile)], units="1e8 m3", name="Nile flow", rng=3
    )


def test_candidates_named_and_kinded(board, nile) -> None:
    assert board.names == ("expert A", HOSTILE[0], "pool", "normal", "gamma", "resampled data")
    kinds = [c.kind for c in board.review.candidates]
    assert kinds == ["sketch", "sketch", "sketch", "fit", "fit", "data"]
    assert board.review.candidate("pool").note == "linear pool"  # the sketch's own method
    # one CDF line per candidate, a PDF line per continuous one
    assert [line.labels[0] for line in board.cdf_lines.values()] == list(board.names)
    assert set(board.pdf_lines) == set(board.names) - {"resampled data"}
    # the only candidate with atoms is the resampled data: too many to spike (its histogram
    # shows them); its CDF has every step
    assert set(board.spikes) == set()
    assert len(board.review.candidate("resampled data").atoms) == np.unique(nile).size
    # one shared x scale for both panels
    assert all(m.scales["x"] is board.x_scale for m in board.pdf_figure.marks)
    assert all(m.scales["x"] is board.x_scale for m in board.cdf_figure.marks)
    assert "1e8 m3" in board.cdf_figure.axes[0].label
    assert board.pdf_figure.axes[1].label == "density (per 1e8 m3)"


def test_legend_is_outside_the_plots_and_styles_are_stable(board) -> None:
    # no bqplot legend inside a plot: the toggles beside the plots are the legend
    for fig in (board.cdf_figure, board.pdf_figure):
        assert not any(getattr(m, "display_legend", False) for m in fig.marks)
    assert board.side not in (board.cdf_figure, board.pdf_figure)
    before = {n: (board.cdf_lines[n].colors, board.cdf_lines[n].line_style) for n in board.names}
    board.choose("pool", by="g", rationale="r")
    board.toggles["normal"].value = False
    board.choose("gamma", by="g", rationale="r")
    after = {n: (board.cdf_lines[n].colors, board.cdf_lines[n].line_style) for n in board.names}
    assert after == before  # the chosen candidate is thicker, never recoloured
    assert board.cdf_lines["gamma"].stroke_width > board.cdf_lines["pool"].stroke_width
    styles = {(board.review.style(n).colour, board.review.style(n).dash) for n in board.names}
    assert len(styles) == len(board.names)


def test_flags_mass_below_zero_for_non_negative_data() -> None:
    data = np.random.default_rng(5).gamma(2.0, 2.0, 200)  # invented, all > 0
    ok = Sketch([0, 3, 20], [0, 0.5, 1], name="inside")
    below = Sketch([-2, 3, 20], [0, 0.5, 1], name="below")
    board = cdfsketch.ReviewBoard(data, [ok, below], units="h", holdout=None)
    # linear between knots: F(0) = 0.5 · 2/5 = 20 %
    assert "below 0, where the data never go: below 20 %" in board.flags_view.value
    assert "inside" not in board.flags_view.value
    unit = np.random.default_rng(6).beta(2, 5, 200)  # invented fractions in [0, 1]
    over = Sketch([0, 0.3, 1.2], [0, 0.5, 1], name="over")
    text = cdfsketch.ReviewBoard(unit, [over], holdout=None).flags_view.value
    assert "above 1, where the data never go: over" in text


def test_resampled_data_is_the_ecdf(nile, board) -> None:
    # Reference: scipy.stats.ecdf (the empirical CDF) at every data value and between them.
    from scipy.stats import ecdf

    ref = ecdf(nile).cdf
    c = board.review.candidate("resampled data")
    x = np.r_[np.unique(nile), np.unique(nile)[:-1] + 0.5, 400.0, 1400.0]
    np.testing.assert_allclose(c.sketch.cdf(x), ref.evaluate(x), rtol=0, atol=1e-15)
    masses = {a.x: a.mass for a in c.atoms}
    vals, counts = np.unique(nile, return_counts=True)
    np.testing.assert_allclose([masses[v] for v in vals], counts / nile.size, rtol=1e-12)


def test_fit_sketch_form_close_to_scipy(nile, board, fits) -> None:
    # Reference: scipy.stats.norm with the maximum-likelihood fit (mean, population sd).
    from scipy.stats import norm

    c = board.review.candidate("normal")
    assert c.sketch.x.size == FIT_KNOTS
    grid = np.linspace(400, 1400, 501)
    ref = norm(nile.mean(), nile.std())
    np.testing.assert_allclose(c.cdf(grid), ref.cdf(grid), rtol=0, atol=1e-9)
    err = np.max(np.abs(c.sketch.cdf(grid) - ref.cdf(grid)))
    assert err < 1e-3
    assert "201 knots" in c.note
    stated = c.sketch.provenance["extra"]["max_abs_cdf_error"]  # measured by reknot
    assert err <= stated + 1e-12  # the stated error bounds what we see on this grid


def test_toggles_hide_marks_and_readout(board) -> None:
    assert all(board.visible.values())
    board.toggles["gamma"].value = False
    assert board.cdf_lines["gamma"].visible is False
    assert board.pdf_lines["gamma"].visible is False
    assert board.markers["gamma"].visible is False
    assert [r["name"] for r in board.readout_at(900.0)] == [n for n in board.names if n != "gamma"]
    board.show_readout(900.0)
    assert "gamma" not in board.readout.value  # only visible candidates are listed
    board.set_visible("resampled data", False)
    assert board.cdf_lines["resampled data"].visible is False
    board.set_visible("gamma", True)
    assert board.cdf_lines["gamma"].visible is True
    with pytest.raises(KeyError, match="No candidate named 'nope'"):
        board.set_visible("nope", False)
    with pytest.raises(ValueError, match="visible must be True or False"):
        board.set_visible("gamma", 1)


def test_hover_readout_values(nile, board) -> None:
    # hovering is the hover strip's bar under the pointer: no click, the bar's index gives x
    from scipy.stats import norm

    from cdfsketch.widgets.review import HOVER_BARS

    lo, hi = board.x_scale.min, board.x_scale.max
    i = 100
    board._on_hover(board.hover_strips[0], {"event": "hover", "data": {"index": i}})
    x = lo + (hi - lo) * i / (HOVER_BARS - 1)
    text = board.readout.value
    assert f"x = {cdfsketch._numfmt.significant(x, 4)} 1e8 m3" in text
    assert board.guides[0].x.tolist() == [x, x] and board.guides[1].visible
    board.show_readout(900.0)
    text = board.readout.value
    assert "x = 900 1e8 m3" in text
    rows = {r["name"]: r for r in board.readout_at(900.0)}
    ref = norm(nile.mean(), nile.std())
    assert rows["normal"]["p"] == pytest.approx(ref.cdf(900.0), abs=1e-9)
    assert rows["normal"]["density"] == pytest.approx(ref.pdf(900.0), rel=1e-9)
    assert f"{ref.cdf(900.0):.3f}" in text
    assert rows["resampled data"]["p"] == np.mean(nile <= 900.0)
    assert rows["resampled data"]["density"] is None
    # user text is escaped in the read-out
    assert HOSTILE[0] not in text and "&lt;img src=x onerror=alert(1)&gt;" in text
    with pytest.raises(ValueError, match="x must be a finite number"):
        board.readout_at(float("nan"))


def test_choose_records_provenance(nile, board) -> None:
    when = datetime(2026, 3, 4, 9, 30, tzinfo=UTC)
    board.choose("gamma", by="review group", rationale=HOSTILE[1], when=when)
    assert board.chosen == "gamma"
    # the chosen line keeps its colour, is thick, and the legend says chosen
    line = board.cdf_lines["gamma"]
    assert line.colors == [board.review.style("gamma").colour] and line.stroke_width > 3
    assert "(chosen)" in board._legend_labels[board.names.index("gamma")].value
    assert board.cdf_lines["normal"].stroke_width < 3
    spec = board.chosen_spec()
    validate_spec(spec)
    d = spec["provenance"]["decision"]
    assert d["chosen"] == "gamma" and d["by"] == "review group" and d["rationale"] == HOSTILE[1]
    assert d["when"] == "2026-03-04T09:30:00+00:00"
    assert d["level"] == 0.95
    assert d["data"] == cdfsketch.data_fingerprint(nile)
    assert spec["provenance"]["data"] == cdfsketch.data_fingerprint(nile)
    assert [c["name"] for c in d["competitors"]] == [n for n in board.names if n != "gamma"]
    table = {r["name"]: r for r in board.table().rows}
    for comp in d["competitors"]:
        assert comp["ks"] == pytest.approx(table[comp["name"]]["ks"])
    assert d["metrics"]["ks"] == pytest.approx(table["gamma"]["ks"])
    # the spec is the fit's sketch form, named after the quantity
    assert spec["name"] == "Nile flow" and spec["units"] == "1e8 m3"
    assert len(spec["knots"]["x"]) == FIT_KNOTS
    assert spec["provenance"]["method"] == "from candidate fit gamma"
    loaded = cdfsketch.load(json.dumps(spec))
    np.testing.assert_allclose(
        loaded.cdf([700, 900]), board.review.candidate("gamma").sketch.cdf([700, 900])
    )
    # decisions are escaped in the widget
    assert "<script>" not in board.decision_view.value


def test_choose_data_and_sketch(nile, board) -> None:
    board.choose("resampled data", by="group", rationale="use the record as it is")
    spec = board.chosen_spec()
    validate_spec(spec)
    s = cdfsketch.load(spec)
    assert len(s.atoms) == np.unique(nile).size
    draws = s.sample(2000, rng=1)
    assert set(np.unique(draws)) <= set(nile)
    board.choose(HOSTILE[0], by="group", rationale="x")
    spec = board.chosen_spec()
    validate_spec(spec)
    assert spec["provenance"]["decision"]["chosen"] == HOSTILE[0]
    assert spec["provenance"]["method"] == "from stated quantiles"  # the sketch's own provenance


def test_when_defaults_to_now_utc(board) -> None:
    before = datetime.now(UTC).replace(microsecond=0)
    d = board.choose("pool", by="g", rationale="r")
    stamp = datetime.fromisoformat(d["when"])
    assert stamp.tzinfo is not None and stamp.utcoffset().total_seconds() == 0
    assert before <= stamp <= datetime.now(UTC)


def test_record_button_uses_form(board) -> None:
    board.choice.value = "normal"
    board.decided_by.value = ""
    board.rationale.value = "why"
    board.record.click()
    assert board.chosen is None
    assert "by must not be empty" in board.decision_view.value
    board.decided_by.value = "x" * 501
    board.record.click()
    assert "by must be at most 500 characters" in board.decision_view.value
    board.decided_by.value = "the group"
    board.record.click()
    assert board.chosen == "normal"


def _column(table_html: str, column: int) -> list[str]:
    """The text of one column of an HTML table, in order (stdlib html.parser)."""
    from html.parser import HTMLParser

    rows: list[list[str]] = []

    class Cells(HTMLParser):
        cell: list[str] | None = None

        def handle_starttag(self, tag, attrs):
            if tag == "tr":
                rows.append([])
            elif tag in ("td", "th"):
                self.cell = []

        def handle_endtag(self, tag):
            if tag in ("td", "th") and self.cell is not None:
                rows[-1].append("".join(self.cell).strip())
                self.cell = None

        def handle_data(self, data):
            if self.cell is not None:
                self.cell.append(data)

    Cells().feed(table_html)
    return [r[column] for r in rows[1:]]


def test_table_answers_the_review_questions(board) -> None:
    from cdfsketch._numfmt import significant

    html_ = board.table_view.value
    labels = ("Distance to the data", "Error on held-out data (1e8 m3)", "Parameters",
              "Chance above the largest value (%)", "lower is better")  # fmt: skip
    for label in labels:
        assert label in html_
    raw = {r["name"]: r for r in board.table().rows}
    ks = sorted(raw[n]["ks"] for n in board.names)
    board.sort_column.value = "close"
    assert _column(board.table_view.value, 1) == [significant(v, 3) for v in ks]
    board.sort_descending.value = True
    assert _column(board.table_view.value, 1) == [significant(v, 3) for v in ks[::-1]]
    names = [c.split("\n")[0] for c in _column(board.table_view.value, 0)]
    assert any(HOSTILE[0] in n for n in names)  # the parser unescapes: the text is the raw name
    assert HOSTILE[0] not in board.table_view.value  # ...and the markup holds it escaped
    # the tail column: P(X > largest observation), in %; the raw scores stay in the table
    gamma = board.review.candidate("gamma")
    want = 100 * float(gamma.model.sf(board.review.data_range[1]))
    row = next(r for r in board._pres["rows"] if r["name"] == "gamma")
    assert row["cells"]["tail"]["text"] == significant(want, 3)
    assert row["cells"]["params"]["text"] == "2"
    assert {"ks", "crps_holdout", "ad", "cvm", "w1"} <= set(board.table().columns)


def test_nothing_chosen_yet(board) -> None:
    with pytest.raises(ValueError, match="needs a decision; got nothing chosen yet"):
        board.chosen_spec()


def test_without_data() -> None:
    a = Sketch([0, 4, 10], [0, 0.5, 1], name="a")
    b = Sketch([0, 6, 12], [0, 0.5, 1], name="b")
    board = cdfsketch.ReviewBoard(candidates=[a, b])
    with pytest.raises(ValueError, match="a review without data, so there is no comparison table"):
        board.table()
    board.choose("b", by="x", rationale="y")
    spec = board.chosen_spec()
    validate_spec(spec)
    assert spec["provenance"]["decision"]["data"] is None
    assert spec["provenance"]["decision"]["competitors"] == [{"name": "a", "kind": "sketch"}]


def test_bad_inputs_by_message(nile) -> None:
    a = Sketch([0, 4, 10], [0, 0.5, 1], name="a")
    with pytest.raises(
        ValueError, match=r"candidates\[1\] and candidates\[0\] are both called 'a'"
    ):
        Review(None, [a, a.replace(x=[0, 5, 10])])
    with pytest.raises(ValueError, match=r"candidates\[0\] must have a name"):
        Review(None, [Sketch([0, 1], [0, 1])])
    with pytest.raises(ValueError, match=r"candidates\[1\] must be a Sketch, a fit Candidate"):
        Review(None, [a, "gamma"])
    with pytest.raises(ValueError, match="candidates must hold at least one candidate"):
        Review(None, [])
    with pytest.raises(ValueError, match="candidates must be a list"):
        Review(None, "a")
    with pytest.raises(ValueError, match=r"level must be a finite number in \(0, 1\)"):
        Review(None, [a], level=1.5)
    with pytest.raises(ValueError, match=r"must be in the review's units 'h'; got 'min'"):
        Review(None, [a.replace(units="min")], units="h")
    with pytest.raises(ValueError, match="two distinct values"):
        Review([1.0, 1.0], [a])
    with pytest.raises(ValueError, match="Kaplan–Meier"):
        Review(None, [ECDF([1.0, 2.0, 3.0], censored=[False, True, False])])
    r = Review(None, [a])
    with pytest.raises(KeyError, match="No candidate named 'b' to choose"):
        r.choose("b", by="x", rationale="y")
    with pytest.raises(ValueError, match="rationale must not be empty"):
        r.choose("a", by="x", rationale="  ")
    with pytest.raises(ValueError, match="by must be a str"):
        r.choose("a", by=None, rationale="y")
    with pytest.raises(ValueError, match="when must be an ISO 8601 time"):
        r.choose("a", by="x", rationale="y", when="yesterday")


class _Named:
    """A stand-in candidate with any name (fit candidates take the family's name)."""

    def __init__(self, name: str) -> None:
        self.inner = Sketch([0, 4, 10], [0, 0.5, 1], name="stand-in")
        self.name = name
        self.support = self.inner.support

    def cdf(self, x):
        return self.inner.cdf(x)

    def ppf(self, u):
        return self.inner.ppf(u)


def test_limits_checked_where_values_enter(tmp_path) -> None:
    # issue 16: a value a review accepts can always be saved; limits from cdfsketch._limits
    from cdfsketch._limits import MAX_NAME_CHARS, MAX_UNITS_CHARS
    from cdfsketch.review import save_html

    a = Sketch([0, 4, 10], [0, 0.5, 1], name="a")
    with pytest.raises(ValueError, match=f"name must be at most {MAX_NAME_CHARS} characters"):
        Review(None, [a], name="n" * (MAX_NAME_CHARS + 1))
    with pytest.raises(ValueError, match=f"units must be at most {MAX_UNITS_CHARS} characters"):
        Review(None, [a], units="u" * (MAX_UNITS_CHARS + 1))
    with pytest.raises(ValueError, match="units must be text that can be saved as UTF-8"):
        Review(None, [a], units="\ud800")
    with pytest.raises(ValueError, match=r"candidates\[1\].name must be at most 500"):
        Review(None, [a, _Named("x" * 1_000_000)])
    r = Review(None, [a], name="n" * MAX_NAME_CHARS, units="u" * MAX_UNITS_CHARS)
    with pytest.raises(ValueError, match="name must be at most 500 characters") as info:
        r.choose("x" * 1_000_000, by="g", rationale="r")
    assert len(str(info.value)) < 300  # the message quotes a count, not the value
    with pytest.raises(ValueError, match="rationale must be text that can be saved as UTF-8"):
        r.choose("a", by="g", rationale="\ud800")
    r.choose("a", by="g" * MAX_NAME_CHARS, rationale="r" * 10_000)
    assert save_html(r, tmp_path / "at-the-limits.html").stat().st_size > 0
    assert [p.name for p in tmp_path.iterdir()] == ["at-the-limits.html"]


def test_the_review_data_are_read_only_and_the_callers_array_is_not() -> None:
    mine = np.array([1.0, 2.0, 2.5, 4.0, 7.0])
    r = Review(mine, [Sketch([0, 4, 10], [0, 0.5, 1], name="a")], holdout=None)
    with pytest.raises(ValueError, match="read-only"):
        r.data[0] = 99.0
    mine[0] = 0.5  # the caller's array is theirs to change; the review keeps its values
    assert mine[0] == 0.5 and r.data[0] == 1.0
    series = pd.Series(np.arange(1.0, 201.0))  # a pandas view and a raw buffer likewise
    buffer = memoryview(bytearray(np.arange(1.0, 201.0).tobytes())).cast("d")
    for theirs in (series, buffer):
        r = Review(theirs, [Sketch([0, 4, 300], [0, 0.5, 1], name="a")], holdout=None)
        if isinstance(theirs, pd.Series):
            theirs.iloc[0] = 1e6
        else:
            theirs[0] = -5.0
        assert r.data[0] == 1.0


def test_decision_is_read_only() -> None:
    r = Review(None, [Sketch([0, 4, 10], [0, 0.5, 1], name="a")])
    d = r.choose("a", by="g", rationale="r")
    with pytest.raises(TypeError, match="read-only"):
        d["chosen"] = "b"
    with pytest.raises(TypeError, match="read-only"):
        r.decision["by"] = "someone else"
    spec = r.chosen_spec()
    spec["provenance"]["decision"]["by"] = "changed"  # the spec is the caller's copy
    assert r.decision["by"] == "g"


def test_inline_styles_survive_parsing(board) -> None:
    # issue 13 item 2: a font list with quotes must not end a style attribute early
    from html.parser import HTMLParser

    styles: list[str] = []

    class Styles(HTMLParser):
        def handle_starttag(self, tag, attrs):
            styles.extend(v for k, v in attrs if k == "style" and v)

    for w in board.children[:2]:
        Styles().feed(w.value)
    assert any("Segoe UI" in s and s.rstrip().endswith("line-height:1.35") for s in styles)


def test_data_near_the_float64_limit(tmp_path) -> None:
    # issue 16: data spanning ±1.7e308 once made the board fail ("x must not contain NaN")
    import warnings

    from cdfsketch.review import save_html

    x = np.r_[-1.7e308, np.linspace(-1e307, 1e307, 20), 1.7e308]
    s = Sketch([-1e100, 0, 1e100], [0, 0.5, 1], name="a")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # scoring's own overflow notes
        board = cdfsketch.ReviewBoard(x, [s], holdout=None)
    lo, hi = board.x_scale.min, board.x_scale.max
    assert np.isfinite([lo, hi]).all() and lo < -1e308 and hi > 1e308
    board.show_readout(0.0)
    assert "x = 0" in board.readout.value
    assert save_html(board.review, tmp_path / "edge.html").stat().st_size > 0
