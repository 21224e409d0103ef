"""Kernel-side tests of the Editor: no browser; the knot Scatter gets the browser's messages."""

from __future__ import annotations

import html

import numpy as np
import pytest
import traitlets
from bqplot.traits import array_to_json
from scipy import stats
from statsmodels.distributions.empirical_distribution import ECDF as ECDFsm

import cdfsketch
from cdfsketch import BoundedTail, ExponentialTail, InputError, Sketch
from cdfsketch.elicit import from_quantiles
from cdfsketch.review import palette
from cdfsketch.widgets._editor_state import GAP_P, GAP_X, TAIL_MIN
from cdfsketch.widgets._editor_table import DEFAULT_TAIL_MASS
from cdfsketch.widgets.editor import Editor


def synced(mark, **arrays: np.ndarray) -> None:
    """Apply a state update as the browser sends it (bqplot's binary array serialisation)."""
    mark.set_state({k: array_to_json(np.asarray(v, dtype=float), mark) for k, v in arrays.items()})


def drag(ed: Editor, knot: int, points: list[tuple[float, float]]) -> None:
    """One gesture on ``knot``, with the messages bqplot 0.13's Scatter sends.

    The movable scatter holds the unlocked knots only: ``i`` is the knot's place in it.
    """
    k = ed.knots
    i = int(np.searchsorted(ed.plots.movable, knot))
    x0, y0 = float(k.x[i]), float(k.y[i])
    k._handle_custom_msgs(None, {"event": "drag_start", "point": {"x": x0, "y": y0}, "index": i})
    for x, y in points:
        msg = {"event": "drag", "origin": {"x": x0, "y": y0}, "point": {"x": x, "y": y}, "index": i}
        k._handle_custom_msgs(None, msg)
    x, y = points[-1]
    # on release the front end first syncs the raw pointer position, then sends drag_end
    synced(k, x=np.r_[k.x[:i], x, k.x[i + 1 :]], y=np.r_[k.y[:i], y, k.y[i + 1 :]])
    k._handle_custom_msgs(None, {"event": "drag_end", "point": {"x": x, "y": y}, "index": i})


def same_cdf(a: Sketch, b: Sketch) -> bool:
    """Same knots, interpolation and tails (provenance differs once saved)."""
    return (
        np.array_equal(a.x, b.x)
        and np.array_equal(a.p, b.p)
        and a.interpolation == b.interpolation
        and (a.lower_tail, a.upper_tail) == (b.lower_tail, b.upper_tail)
    )


@pytest.fixture
def hours() -> np.ndarray:
    return np.random.default_rng(7).gamma(3.0, 2.0, 400)


@pytest.fixture
def five() -> Sketch:
    return Sketch([0, 2, 5, 9, 14], [0, 0.3, 0.6, 0.9, 1], name="repair", units="h")


def html_of(ed: Editor) -> str:
    """Every piece of HTML the editor shows, joined."""
    out, todo = [], [ed]
    while todo:
        wid = todo.pop()
        if hasattr(wid, "children"):
            todo.extend(wid.children)
        elif type(wid).__name__ == "HTML":
            out.append(wid.value)
    return "\n".join(out)


# ---------------------------------------------------------------- state


def test_views_are_derived_from_the_sketch(five):
    ed = Editor(sketch=five)
    ed.sketch = five.move_knot(2, x=6.0, p=0.7)
    assert ed.knots.x.tolist() == [0, 2, 6, 9, 14]
    assert ed.knots.y.tolist() == [0, 0.3, 0.7, 0.9, 1]
    # the drawn CDF is the sketch's CDF at the drawn x
    np.testing.assert_allclose(ed.plots.cdf_line.y, ed.sketch.cdf(ed.plots.cdf_line.x))
    np.testing.assert_allclose(ed.plots.pdf_line.y, ed.sketch.pdf(ed.plots.pdf_line.x))
    # the readout equals the sketch's own numbers
    assert ed.readout["mean"] == pytest.approx(ed.sketch.mean())
    assert ed.readout["quantiles"][0.5] == pytest.approx(ed.sketch.ppf(0.5))
    assert ed.table._rows[2][0].value == "6" and ed.table._rows[2][1].value == "0.7000"
    assert ed.state.sketch is ed.sketch


def test_sketch_trait_is_an_instance_of_sketch_and_keeps_locks(five):
    ed = Editor(sketch=five)
    with pytest.raises(traitlets.TraitError, match="expected a Sketch, not the list"):
        ed.sketch = [0, 1]
    ed.lock(2)
    with pytest.raises(traitlets.TraitError, match="Knot 2 is locked"):
        ed.sketch = five.move_knot(2, x=6.0)
    ed.sketch = five.move_knot(1, x=3.0)  # another knot moves; the lock stays
    assert ed.locked == {2} and ed.sketch.x[1] == 3.0


def test_needs_data_or_sketch():
    with pytest.raises(ValueError, match="needs data, a sketch, or both"):
        Editor()


def test_selection_lives_in_one_place(five):
    ed = Editor(sketch=five)
    ed.selected = 3
    assert ed.state.selected == 3 and list(ed.knots.selected) == [3]
    assert ed.controls.pick.value == 3
    ed.controls.pick.value = 1  # choosing in the dropdown selects too
    assert ed.selected == 1 and list(ed.knots.selected) == [1]
    with pytest.raises(ValueError, match="selected must be an integer"):
        ed.selected = 9


def test_locks_are_state_and_undo_steps(five):
    ed = Editor(sketch=five)
    drag(ed, 1, [(3.0, 0.4)])
    ed.lock(1)
    assert ed.locked == {1}
    ed.undo()  # undoes the lock first: the knot does not move while it is locked
    assert ed.locked == frozenset() and ed.sketch.x[1] == 3.0
    ed.undo()
    assert ed.sketch.x[1] == 2.0
    ed.redo()
    ed.redo()
    assert ed.locked == {1} and ed.sketch.x[1] == 3.0


def test_undo_redo_and_selection_buttons_are_disabled_when_they_cannot_act(five):
    ed = Editor(sketch=five)
    c = ed.controls
    assert c.undo.disabled and c.redo.disabled and c.remove.disabled and c.lock.disabled
    ed.selected = 2
    assert not c.remove.disabled and c.lock.description == "lock"
    ed.lock(2)
    assert c.remove.disabled and c.lock.description == "unlock" and not c.undo.disabled
    ed.undo()
    assert not c.redo.disabled


# ---------------------------------------------------------------- dragging


def test_drag_clamps_with_a_visible_gap_and_moves_no_other_knot(five):
    ed = Editor(sketch=five)
    lo, hi = ed.plots.domain
    drag(ed, 2, [(3.0, 0.5), (50.0, 0.99), (50.0, 1.5)])
    s = ed.sketch
    # clamped a visible gap short of knot 3 (stated: GAP_X of the axis span, GAP_P in p)
    assert s.x[2] == pytest.approx(9 - GAP_X * (hi - lo)) and s.p[2] == pytest.approx(0.9 - GAP_P)
    np.testing.assert_array_equal(np.delete(s.x, 2), [0, 2, 9, 14])
    np.testing.assert_array_equal(np.delete(s.p, 2), [0, 0.3, 0.9, 1])
    # the clamped position is written back to the scatter, and no density spike appears
    np.testing.assert_array_equal(ed.knots.x, s.x)
    np.testing.assert_array_equal(ed.knots.y, s.p)
    assert "cut" not in ed.plots.density_note.value
    cdfsketch.check_knots(s.x, s.p)


def test_the_clamped_position_is_drawn_during_a_drag(five):
    ed = Editor(sketch=five)
    k = ed.knots
    k._handle_custom_msgs(None, {"event": "drag_start", "point": {"x": 5, "y": 0.6}, "index": 2})
    msg = {"event": "drag", "point": {"x": 40.0, "y": 0.7}, "index": 2}
    k._handle_custom_msgs(None, msg)
    ring = ed.plots.clamped
    assert ring.visible and ring.x[0] < 9 and ring.y[0] == 0.7  # where the knot really is
    k._handle_custom_msgs(None, {"event": "drag_end", "point": {"x": 40.0, "y": 0.7}, "index": 2})
    assert not ring.visible


def test_drag_is_one_undo_step_and_live_during_the_gesture(five):
    ed = Editor(sketch=five)
    seen = []
    ed.observe(lambda ch: seen.append(ch["new"]), names="sketch")
    drag(ed, 1, [(1.0, 0.2), (1.5, 0.25), (3.0, 0.4)])
    assert len(seen) >= 3  # the trait follows the pointer during the gesture
    assert ed.sketch.x[1] == 3.0
    ed.undo()
    assert ed.sketch == five
    ed.redo()
    assert ed.sketch.x[1] == 3.0 and ed.sketch.p[1] == 0.4


def test_a_drag_never_removes_a_tail_that_holds_mass(five):
    s = five.replace(p=[0.0, 0.3, 0.6, 0.9, 0.97], upper_tail=cdfsketch.ExponentialTail(scale=24))
    ed = Editor(sketch=s)
    drag(ed, 4, [(14.0, 1.2)])  # above p = 1
    assert ed.sketch.tail_mass[1] == pytest.approx(TAIL_MIN)
    assert ed.sketch.upper_tail == cdfsketch.ExponentialTail(scale=24)
    upper = ed._tails[1]
    assert upper.kind.value == "exp-stated" and upper.mass.value == pytest.approx(TAIL_MIN)
    assert ed.knots.y[4] <= 1.0  # drawn inside the plot


def test_locked_knot_does_not_move_by_any_path(five):
    ed = Editor(sketch=five).lock(1)
    assert 1 not in ed.plots.movable  # not draggable at all: it cannot follow the pointer
    assert ed.plots.locked_knots.x.tolist() == [2.0]
    drag(ed, 2, [(0.5, 0.1)])  # a neighbour stops short of it
    assert ed.sketch.x[1] == 2 and ed.sketch.x[2] > 2
    fx, fp = ed.table._rows[1]
    assert fx.disabled and fp.disabled and fx.description == "1 locked"
    assert "\N{LOCK}" not in html_of(ed)  # a text mark, no emoji
    ed.controls.pick.value = 1
    ed.remove_selected()
    assert "locked" in ed.message.value and len(ed.sketch) == 5


# ---------------------------------------------------------------- table and controls


def test_table_edit_and_bad_values_show_an_error(five):
    ed = Editor(sketch=five)
    fx, fp = ed.table._rows[1]
    fp.value = "0.35"
    assert ed.sketch.p[1] == 0.35
    fp.value = "0.8"  # above the next knot's p=0.6: refused, shown, cell put back
    assert ed.sketch.p[1] == 0.35
    shown = html.unescape(ed.message.value)
    assert "p must lie between its neighbours' 0 and 0.6000; got 0.8000" in shown
    assert "project_knots()" not in ed.message.value  # speaks the notebook user's terms
    assert fp.value == "0.3500"  # the formatted value, not 17 digits
    fx.value = "abc"
    assert "must be a finite number" in ed.message.value and ed.sketch.x[1] == 2
    assert fx.value == "2"


def test_tail_controls(five):
    s = five.replace(p=[0.1, 0.3, 0.6, 0.9, 0.95])
    ed = Editor(sketch=s)
    lower, upper = ed._tails
    lower.kind.value = "bounded-uniform"
    assert isinstance(ed.sketch.lower_tail, BoundedTail) and ed.sketch.lower_tail.limit < 0
    lower.value.value = 3.0  # a limit above the first knot: refused with the core's message
    assert "limit below the first knot" in ed.message.value
    assert ed.sketch.lower_tail.limit < 0
    upper.kind.value = "exp-stated"
    upper.value.value = 4.0
    assert ed.sketch.upper_tail == ExponentialTail(scale=4.0)
    assert ed.readout["tail_mass"] == pytest.approx((0.1, 0.05))
    assert "stated" in ed.readout["tail_model"][1]
    assert upper.value.description == "scale (h)"
    upper.value.value = -1.0
    assert "&gt; 0; got -1" in ed.message.value and ed.sketch.upper_tail.scale == 4.0
    upper.mass.value = 0.02
    assert ed.sketch.p[-1] == pytest.approx(0.98)
    upper.kind.value = "none"  # the tail is removed from the same control
    assert ed.sketch.p[-1] == 1.0 and upper.value.layout.visibility == "hidden"


def test_a_sketch_without_tails_says_so_and_gets_a_tail_from_the_controls(hours):
    ed = Editor(hours, units="h")
    assert ed.sketch.tail_mass == (0.0, 0.0)
    assert any("no upper tail" in w for w in ed.readout["warnings"])
    assert ed.readout["tail_model"][1].startswith("none: ends at")
    upper = ed._tails[1]
    assert upper.kind.value == "none"  # no "scale 0" for an empty tail
    upper.kind.value = "exp-derived"
    assert ed.sketch.tail_mass[1] == pytest.approx(DEFAULT_TAIL_MASS)
    assert not any("no upper tail" in w for w in ed.readout["warnings"])


def test_interpolation_add_remove_reset(five):
    ed = Editor(sketch=five)
    ed.controls.interp.value = "pchip"
    assert ed.sketch.interpolation == "pchip"
    ed.selected = 1
    ed.add_knot()
    assert len(ed.sketch) == 6 and ed.sketch.x[2] == 3.5 and ed.selected == 2
    ed.remove_selected()
    assert len(ed.sketch) == 5
    # a click on the canvas arrives as the pointer's point appended to the knots (bqplot's
    # "add" click interaction); the kernel inserts it exactly there and rewrites the scatter
    s = ed.sketch
    synced(ed.knots, x=np.r_[s.x, 7.0], y=np.r_[s.p, 0.8])
    assert ed.sketch.x.tolist() == [0, 2, 5, 7, 9, 14] and ed.sketch.p[3] == 0.8
    assert ed.selected == 3
    np.testing.assert_array_equal(ed.knots.x, ed.sketch.x)
    np.testing.assert_array_equal(ed.knots.y, ed.sketch.p)
    # a click whose p lies outside the neighbours' is refused and said (nothing interpolated)
    synced(ed.knots, x=np.r_[ed.sketch.x, 8.0], y=np.r_[ed.sketch.p, 0.5])
    assert len(ed.sketch) == 6 and "must have p between" in ed.message.value
    np.testing.assert_array_equal(ed.knots.x, ed.sketch.x)  # the stray point is gone
    ed.reset()
    assert ed.sketch == five
    ed.undo()
    assert 7.0 in ed.sketch.x.tolist()


def test_click_on_a_knot_selects_it_without_moving_it(five):
    ed = Editor(sketch=five)
    k = ed.knots
    # press and release without a move: drag_start then drag_end, at the pixel-rounded place
    pt = {"x": 5.0000000001, "y": 0.6000000001}
    k._handle_custom_msgs(None, {"event": "drag_start", "point": pt, "index": 2})
    synced(k, x=np.r_[five.x[:2], pt["x"], five.x[3:]], y=np.r_[five.p[:2], pt["y"], five.p[3:]])
    k._handle_custom_msgs(None, {"event": "drag_end", "point": pt, "index": 2})
    assert ed.sketch == five and ed.selected == 2 and not ed.can_undo
    np.testing.assert_array_equal(k.x, five.x)  # the view snaps back to the exact knot
    assert list(k.selected) == [2]


def test_remove_keeps_two_knots():
    ed = Editor(sketch=Sketch([0, 1], [0, 1]))
    ed.selected = 0
    ed.remove_selected()
    assert "at least 2 knots" in ed.message.value and len(ed.sketch) == 2


# ---------------------------------------------------------------- messages and overlays


def test_every_message_and_overlay_belongs_to_a_state(five, tmp_path):
    ed = Editor(sketch=five)
    ed.remove_selected()
    assert "Select a knot first" in ed.message.value
    ed.selected = 1  # a new state: the old message goes
    assert ed.message.value == ""
    ed.save(tmp_path / "a.json")
    assert "saved" in ed.controls.snippet.value
    ed.preview_sample(500, rng=1)
    assert ed.plots.sample_line.visible and "sample of 500" in ed.plots.legend.value
    drag(ed, 1, [(3.0, 0.4)])
    assert ed.controls.snippet.value == "" and not ed.plots.sample_line.visible
    assert "sample of" not in ed.plots.legend.value
    # a knot dragged far out widens the x axis; a reset brings it back
    domain = ed.plots.domain
    drag(ed, 4, [(60.0, 1.0)])
    assert ed.plots.domain[1] > domain[1]
    ed.reset()
    assert ed.plots.domain == domain


def test_a_failed_save_then_a_save_leaves_one_message(five, tmp_path):
    ed = Editor(sketch=five)
    ed.controls.path.value = str(tmp_path / "missing" / "s.json")
    ed.controls.save.click()
    assert "Could not save" in ed.message.value and ".part" not in ed.message.value
    ed.controls.path.value = str(tmp_path / "s.json")
    ed.controls.save.click()
    assert ed.message.value == "" and "saved" in ed.controls.snippet.value


def test_candidate_overlay_is_named_and_goes_with_its_start(hours):
    from cdfsketch.fit import fit_family

    cand = fit_family("gamma", hours)
    ed = Editor(hours, Sketch([0, 30], [0, 1]))
    ed.start_from(cand)
    assert ed.plots.candidate_line.visible
    assert "started from: gamma" in ed.plots.legend.value
    ed.start_from("opened")
    assert not ed.plots.candidate_line.visible and "started from" not in ed.plots.legend.value


# ---------------------------------------------------------------- HTML, numbers, floors


def test_html_escapes_quotes_and_uses_no_inline_styles():
    from cdfsketch.widgets._editor_html import tag

    out = tag("td", "it's <b>", cls="a'b", title='say "hi"')
    assert out == '<td class="a&#x27;b" title="say &quot;hi&quot;">it&#x27;s &lt;b&gt;</td>'
    s = Sketch([0, 1, 2], [0, 0.5, 1], name='O\'Brien "pump"', units="h'")
    ed = Editor(sketch=s)
    text = html_of(ed)
    assert "style='" not in text and 'style="' not in text  # looks come from CSS classes
    assert "O&#x27;Brien &quot;pump&quot;" in text


def test_numbers_are_shown_to_the_data_resolution():
    x = np.round(np.random.default_rng(1).gamma(3.0, 2.0, 300), 1)  # recorded to 0.1 h
    ed = Editor(x, units="h")
    assert ed.data.resolution == 0.1
    drag(ed, 1, [(float(ed.sketch.x[1]) + 0.123456789, float(ed.sketch.p[1]))])
    cell = ed.table._rows[1][0].value
    assert len(cell.split(".")[-1]) <= 1  # 0.1 h: one decimal, not 9-10 digits
    assert "-0" not in ed._readout_html.value
    assert len(ed.plots.ax_d.tick_values) <= 6  # few density ticks


def test_mass_below_the_data_floor_is_flagged_and_default_limits_stay_above_it(hours):
    s = Sketch([1.0, 5.0, 20.0], [0.05, 0.5, 1.0], units="h")
    ed = Editor(hours, s)
    assert ed.readout["mass_below_floor"] > 0  # exponential lower tail reaches below 0 h
    assert any("below 0" in w for w in ed.readout["warnings"])
    ed._tails[0].kind.value = "bounded-uniform"
    assert ed.sketch.lower_tail.limit >= 0.0
    assert ed.readout["mass_below_floor"] == 0


def test_candidates_are_sorted_by_score_and_unfit_families_marked(hours):
    from cdfsketch.fit import fit_family
    from cdfsketch.widgets._editor_controls import candidate_options

    cands = [fit_family(f, hours) for f in ("normal", "gamma", "lognormal")]
    opts = candidate_options(cands, floor=0.0)
    assert opts[0][0].split(" ")[1] in ("gamma", "lognormal")
    assert "ΔAIC 0" in opts[0][0]
    assert opts[-1][0].startswith("fit: normal") and "below 0" in opts[-1][0]
    ed = Editor(hours, candidates=cands)
    assert [v for _l, v in ed.controls.start.options][2:] == [v for _l, v in opts]


# ---------------------------------------------------------------- saving


def test_autosave_writes_specs_that_load(tmp_path, hours):
    path = tmp_path / "spec.json"
    ed = Editor(hours, autosave=path, units="h")
    first = cdfsketch.load(path)
    assert same_cdf(first, ed.sketch)
    drag(ed, 1, [(float(ed.sketch.x[1]) + 0.3, float(ed.sketch.p[1]) + 0.01)])
    again = cdfsketch.load(path)
    assert same_cdf(again, ed.sketch) and not same_cdf(again, first)
    spec = cdfsketch.spec.read_spec(path.read_text())
    assert spec["provenance"]["method"].startswith("edited in the cdfsketch Editor")
    assert spec["provenance"]["data"]["n"] == hours.size
    cdfsketch.validate_spec(spec)  # the shipped JSON Schema too


def test_save_and_snippet(tmp_path, five):
    ed = Editor(sketch=five.replace(name="Pump repair time (invented)"))
    assert ed.controls.path.value == "pump_repair_time_invented.json"  # a safe slug
    target = ed.save(tmp_path / "s.json", author="A. Analyst", rationale="from the log")
    assert same_cdf(cdfsketch.load(target), five)
    prov = cdfsketch.spec.read_spec(target.read_text())["provenance"]
    assert prov["author"] == "A. Analyst" and prov["rationale"] == "from the log"
    ns: dict = {}
    exec(Editor.snippet(target), ns)  # the snippet shown in the widget runs as is
    assert ns["values"].shape == (10_000,)
    assert "cdfsketch.load" in ed.controls.snippet.value
    with pytest.raises(ValueError, match=r"must end in \.json"):
        ed.save(tmp_path / "s.txt")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["s.json"]  # no stray temp file


def test_author_and_rationale_fields_reach_the_spec(tmp_path, hours):
    from cdfsketch.fit import fit_family

    ed = Editor(hours, units="h")
    ed.start_from(fit_family("lognormal", hours))
    c = ed.controls
    c.path.value = str(tmp_path / "x.json")
    c.author.value = "B. Analyst"
    c.rationale.value = "lognormal start, tail kept"
    c.save.click()
    prov = cdfsketch.spec.read_spec((tmp_path / "x.json").read_text())["provenance"]
    assert prov["author"] == "B. Analyst" and prov["rationale"].startswith("lognormal")
    assert prov["method"] == "edited in the cdfsketch Editor, started from candidate fit lognormal"


# ---------------------------------------------------------------- readout


def test_readout_ks_and_excursion_match_references(hours):
    s = Sketch(np.quantile(hours, [0, 0.25, 0.5, 0.75, 1]), [0, 0.25, 0.5, 0.75, 1])
    ed = Editor(hours, s)
    r = ed.readout
    # reference: scipy.stats.ks_1samp (Kolmogorov–Smirnov statistic) against the sketch's CDF
    assert not s.atoms
    d = stats.ks_1samp(hours, s.cdf).statistic
    assert r["tolerance"] == 0  # 400 distinct points: the fast path is exact
    assert r["ks"] == pytest.approx(d, abs=1e-12)
    assert r["excursion"] == pytest.approx(ed.data.band.excursion(s.cdf), abs=1e-12)


def test_fast_readout_within_stated_tolerance():
    x = np.random.default_rng(3).normal(10, 2, 50_000)
    s = Sketch([2, 8, 10, 12, 18], [0, 0.15, 0.5, 0.85, 1], interpolation="pchip")
    ed = Editor(x, s)
    r = ed.readout
    assert r["tolerance"] > 0  # decimated: d ≤ exact ≤ d + tolerance
    exact = stats.ks_1samp(x, s.cdf).statistic  # reference: scipy.stats.ks_1samp
    assert r["ks"] <= exact + 1e-12 <= r["ks"] + r["tolerance"] + 1e-12
    ex = ed.data.band.excursion(s.cdf)
    assert r["excursion"] <= ex + 1e-12 <= r["excursion"] + r["tolerance"] + 1e-12


def test_holdout_log_score_against_scipy_on_the_one_split():
    from cdfsketch.holdout import holdout_split

    x = np.random.default_rng(4).uniform(0, 10, 300)
    ed = Editor(x, Sketch([0, 10], [0, 1]), holdout=0.3, rng=2)
    # reference: scipy.stats.uniform(0, 10).logpdf is log(0.1) on (0, 10)
    assert ed.readout["logscore"] == pytest.approx(stats.uniform(0, 10).logpdf(5.0))
    assert ed.readout["holdout_points"] == 90 and ed.readout["n_outside"] == 0
    _train, test = holdout_split(300, fraction=0.3, rng=2)  # the same points compare() holds out
    np.testing.assert_array_equal(ed.data.held, np.sort(x[test]))


def test_live_holdout_on_large_data_is_a_subsample_of_the_one_split():
    from cdfsketch.holdout import holdout_split
    from cdfsketch.widgets._editor_data import HOLDOUT_LIVE

    x = np.random.default_rng(6).gamma(2.0, 3.0, 3 * HOLDOUT_LIVE)
    ed = Editor(x, Sketch([0, 10, 80], [0, 0.8, 1]), holdout=0.4, rng=9)
    _train, test = holdout_split(x.size, fraction=0.4, rng=9)  # what compare() holds out
    assert ed.data.held.size == HOLDOUT_LIVE < ed.data.held_size == test.size
    assert np.isin(ed.data.held, x[test]).all() and ed.readout["holdout_subsampled"]
    assert ed.data.range == (x.min(), x.max()) and x.flags.writeable  # the data untouched


def test_hide_held_out_draws_the_training_part_and_scores_the_unseen_rest():
    from cdfsketch.holdout import holdout_split

    x = np.random.default_rng(5).gamma(2.0, 3.0, 400)  # invented, seeded
    s = Sketch([0, 5, 12, 40], [0, 0.5, 0.85, 1])
    ed = Editor(x, s, holdout=0.25, rng=7, hide_held_out=True)
    train, test = holdout_split(x.size, fraction=0.25, rng=7)  # the one split compare() uses
    # the plot's ECDF is the training part's: statsmodels' ECDF of x[train] is the reference
    ref = ECDFsm(x[train])
    np.testing.assert_allclose(ed.data.ecdf.p, ref(ed.data.ecdf.x), rtol=0, atol=1e-15)
    assert ed.data.n_shown == train.size == 300 and not np.isin(x[test], ed.data.ecdf.x).any()
    # the score: mean log density at the unseen points (the definition, by hand)
    assert ed.readout["logscore"] == pytest.approx(float(np.mean(np.log(s.pdf(x[test])))))
    assert (
        "holdout (hidden)" in ed._readout_html.value
        and "training data, 300 of 400" in ed.plots.legend.value
    )
    shown = Editor(x, s, holdout=0.25, rng=7)  # default: every point drawn, score marked
    assert shown.data.n_shown == 400 and "holdout (in view)" in shown._readout_html.value
    assert shown.readout["logscore"] == ed.readout["logscore"]  # the same held-out points
    with pytest.raises(InputError, match=r"hide_held_out must be True or False; got int 1"):
        Editor(x, s, hide_held_out=1)


def test_hidden_held_out_points_stay_out_of_fits_and_splits_must_work():
    x = np.random.default_rng(8).gamma(2.0, 3.0, 200)  # invented, seeded
    ed = Editor(x, holdout=0.3, rng=4, hide_held_out=True)
    ed._fit_candidates()
    assert ed._candidates and {c.n for c in ed._candidates} == {140}  # the training part only
    with pytest.raises(InputError, match=r"at least 2 points for training and 1 held out"):
        Editor(np.arange(3.0), holdout=0.9, hide_held_out=True)
    with pytest.raises(
        InputError, match=r"hide_held_out=True needs points held out; got holdout=None"
    ):
        Editor(x, holdout=None, hide_held_out=True)


def test_automatic_start_is_a_handful_of_knots_with_a_finite_score(hours):
    ed = Editor(hours)
    assert 3 <= len(ed.sketch) <= 7
    assert np.isfinite(ed.readout["logscore"])
    bimodal = np.round(
        np.r_[
            np.random.default_rng(2).normal(30, 5, 3000),
            np.random.default_rng(3).normal(70, 3, 2000),
        ]
    )
    ed2 = Editor(bimodal)
    assert len(ed2.sketch) <= 7 and ed2.readout["ks"] < 0.08


def test_knots_outside_band_are_marked(hours):
    s = Sketch([0, 5, 40], [0, 0.05, 1])  # F(5)=0.05 is far below the ECDF there
    ed = Editor(hours, s)
    assert ed.readout["knots_outside_band"] == 1
    assert ed.knots.colors[1] == palette.KNOT_OUTSIDE_BAND
    assert ed.knots.colors[0] == palette.KNOT


def test_without_data_from_quantiles():
    s = from_quantiles({0.05: 2.0, 0.5: 6.0, 0.95: 20.0})
    ed = Editor(sketch=s)
    assert "ks" not in ed.readout
    drag(ed, 1, [(float(s.x[1]) + 0.5, float(s.p[1]))])
    assert ed.sketch.x[1] == pytest.approx(float(s.x[1]) + 0.5)
    draws = ed.preview_sample(2000, rng=1)
    assert draws.shape == (2000,) and ed.plots.sample_line.visible
    with pytest.raises(ValueError, match="size must be an integer ≥ 1"):
        ed.preview_sample(0)


def test_start_from_candidate_and_auto(hours):
    from cdfsketch.fit import fit_family

    cand = fit_family("gamma", hours)
    ed = Editor(hours, Sketch([0, 30], [0, 1]))
    ed.start_from(cand)
    assert "from candidate fit gamma" in ed.sketch.provenance["method"]
    ed.start_from("auto")
    assert ed.readout["excursion"] <= 0  # the automatic start stays inside the band here
    with pytest.raises(ValueError, match="start_from takes"):
        ed.start_from(42)


def test_density_axis_is_cut_below_a_near_vertical_stretch():
    from cdfsketch.widgets._editor_view import density_top

    flat = np.full(200, 0.1)
    top, cut = density_top(flat, 0.12)
    assert not cut and top == pytest.approx(0.12 * 1.12)
    spiky = flat.copy()
    spiky[100] = 2.4e5  # one knot pair almost on top of each other
    top, cut = density_top(spiky, 0.12)
    assert cut and top < 1.0


def test_tail_fields_show_rounded_values_and_keep_the_exact_ones(five):
    s = five.replace(p=[0.0, 0.3, 0.6, 0.9, 0.95], upper_tail=ExponentialTail(scale=24.123456789))
    ed = Editor(sketch=s)
    upper = ed._tails[1]
    assert upper.value.value == 24.12  # four significant digits shown
    upper.mass.value = 0.04  # another field edited: the stated scale is kept exactly
    assert ed.sketch.upper_tail.scale == 24.123456789 and ed.sketch.p[-1] == pytest.approx(0.96)
