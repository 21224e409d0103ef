"""Kernel-side tests of the Editor: no browser; the knot Scatter gets the browser's messages."""

from __future__ import annotations

import numpy as np
import pytest
import traitlets
from bqplot.traits import array_to_json
from scipy import stats

import cdfsketch
from cdfsketch import BoundedTail, ExponentialTail, Sketch
from cdfsketch.widgets.editor import Editor


def synced(mark, **arrays: np.ndarray) -> None:
    """Apply a state update as the browser sends it (bqplot's binary array serialisation)."""
    mark.set_state({k: array_to_json(np.asarray(v, dtype=float), mark) for k, v in arrays.items()})


def drag(ed: Editor, i: int, points: list[tuple[float, float]]) -> None:
    """One gesture, with the messages bqplot 0.13's Scatter sends (drag_start, drag…, drag_end)."""
    k = ed.knots
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


def test_views_are_derived_from_the_sketch(five):
    ed = Editor(sketch=five)
    ed.sketch = five.move_knot(2, x=6.0, p=0.7)
    assert ed.knots.x.tolist() == [0, 2, 6, 9, 14]
    assert ed.knots.y.tolist() == [0, 0.3, 0.7, 0.9, 1]
    # the drawn CDF is the sketch's CDF at the drawn x
    np.testing.assert_allclose(ed.cdf_line.y, ed.sketch.cdf(ed.cdf_line.x))
    np.testing.assert_allclose(ed.pdf_line.y, ed.sketch.pdf(ed.pdf_line.x))
    # the readout equals the sketch's own numbers
    assert ed.readout["mean"] == pytest.approx(ed.sketch.mean())
    assert ed.readout["quantiles"][0.5] == pytest.approx(ed.sketch.ppf(0.5))
    assert ed.table._rows[2][0].value == 6.0 and ed.table._rows[2][1].value == 0.7


def test_sketch_trait_refuses_other_types(five):
    ed = Editor(sketch=five)
    with pytest.raises(traitlets.TraitError, match=r"must be a cdfsketch\.Sketch; got list"):
        ed.sketch = [0, 1]


def test_needs_data_or_sketch():
    with pytest.raises(ValueError, match="needs data, a sketch, or both"):
        Editor()


def test_drag_clamps_between_neighbours_and_moves_no_other_knot(five):
    ed = Editor(sketch=five)
    drag(ed, 2, [(3.0, 0.5), (50.0, 0.99), (50.0, 1.5)])
    s = ed.sketch
    assert s.x[2] < 9 and s.p[2] == 0.9  # clamped below knot 3, p at most p[3]
    np.testing.assert_array_equal(np.delete(s.x, 2), [0, 2, 9, 14])
    np.testing.assert_array_equal(np.delete(s.p, 2), [0, 0.3, 0.9, 1])
    # the clamped position is written back to the scatter
    np.testing.assert_array_equal(ed.knots.x, s.x)
    np.testing.assert_array_equal(ed.knots.y, s.p)
    cdfsketch.check_knots(s.x, s.p)


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


def test_locked_knot_ignores_drags(five):
    ed = Editor(sketch=five).lock(1)
    drag(ed, 1, [(4.0, 0.5)])
    assert ed.sketch == five
    np.testing.assert_array_equal(ed.knots.x, five.x)  # snapped back in the view


def test_table_edit_and_bad_values_show_an_error(five):
    ed = Editor(sketch=five)
    fx, fp = ed.table._rows[1]
    fp.value = 0.35
    assert ed.sketch.p[1] == 0.35
    fp.value = 0.8  # above the next knot's p=0.6: refused, shown, cell reverted
    assert ed.sketch.p[1] == 0.35
    assert "non-decreasing" in ed.message.value or "p[" in ed.message.value
    assert fp.value == 0.35
    fx.value = float("nan")
    assert "finite" in ed.message.value and ed.sketch.x[1] == 2


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
    upper.value.value = -1.0
    assert "positive" in ed.message.value and ed.sketch.upper_tail.scale == 4.0


def test_interpolation_add_remove_reset(five):
    ed = Editor(sketch=five)
    ed._interp.value = "pchip"
    assert ed.sketch.interpolation == "pchip"
    ed.selected = 1
    ed.add_knot()
    assert len(ed.sketch) == 6 and ed.sketch.x[2] == 3.5 and ed.selected == 2
    ed.remove_selected()
    assert len(ed.sketch) == 5
    # a click on the canvas arrives as the pointer's point appended to the knots (bqplot's
    # "add" click interaction); the kernel inserts it in order and rewrites the scatter
    s = ed.sketch
    synced(ed.knots, x=np.r_[s.x, 7.0], y=np.r_[s.p, 0.8])
    assert ed.sketch.x.tolist() == [0, 2, 5, 7, 9, 14] and ed.sketch.p[3] == 0.8
    assert ed.selected == 3
    np.testing.assert_array_equal(ed.knots.x, ed.sketch.x)
    np.testing.assert_array_equal(ed.knots.y, ed.sketch.p)
    # p below the left neighbour's is clamped up to it (Sketch.with_knot)
    synced(ed.knots, x=np.r_[ed.sketch.x, 8.0], y=np.r_[ed.sketch.p, 0.5])
    assert ed.sketch.x[4] == 8.0 and ed.sketch.p[4] == 0.8
    ed.undo()
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
    ed = Editor(sketch=five)
    target = ed.save(tmp_path / "s.json", author="A. Analyst")
    assert same_cdf(cdfsketch.load(target), five)
    ns: dict = {}
    exec(Editor.snippet(target), ns)  # the snippet shown in the widget runs as is
    assert ns["values"].shape == (10_000,)
    assert "cdfsketch.load" in ed._snippet.value


def test_readout_ks_and_excursion_match_references(hours):
    ed = Editor(hours)
    r = ed.readout
    s = ed.sketch
    # reference: scipy.stats.ks_1samp (Kolmogorov–Smirnov statistic) against the sketch's CDF;
    # the sketch from automatic knots is continuous (no atoms) for these data
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


def test_holdout_log_score_against_scipy():
    x = np.random.default_rng(4).uniform(0, 10, 300)
    ed = Editor(x, Sketch([0, 10], [0, 1]), holdout=0.3, seed=2)
    # reference: scipy.stats.uniform(0, 10).logpdf is log(0.1) on (0, 10)
    assert ed.readout["logscore"] == pytest.approx(stats.uniform(0, 10).logpdf(5.0))
    assert ed.readout["holdout_points"] == 90 and ed.readout["n_outside"] == 0


def test_knots_outside_band_are_marked(hours):
    s = Sketch([0, 5, 40], [0, 0.05, 1])  # F(5)=0.05 is far below the ECDF there
    ed = Editor(hours, s)
    assert ed.readout["knots_outside_band"] == 1
    assert ed.knots.colors[1] == cdfsketch.widgets.palette.KNOT_OUTSIDE_BAND
    assert ed.knots.colors[0] == cdfsketch.widgets.palette.KNOT


def test_without_data_from_quantiles():
    s = Sketch.from_quantiles({0.05: 2.0, 0.5: 6.0, 0.95: 20.0})
    ed = Editor(sketch=s)
    assert "ks" not in ed.readout
    drag(ed, 1, [(float(s.x[1]) + 0.5, float(s.p[1]))])
    assert ed.sketch.x[1] == pytest.approx(float(s.x[1]) + 0.5)
    draws = ed.preview_sample(2000, rng=1)
    assert draws.shape == (2000,) and ed._sample_line.visible
    with pytest.raises(ValueError, match="positive integer"):
        ed.preview_sample(0)


def test_start_from_candidate_and_auto(hours):
    from cdfsketch.fit import fit_family

    cand = fit_family("gamma", hours)
    ed = Editor(hours, Sketch([0, 30], [0, 1]))
    ed.start_from(cand)
    assert "from candidate fit gamma" in ed.sketch.provenance["method"]
    assert ed._candidate_line.visible
    ed.start_from("auto")
    assert ed.readout["excursion"] <= 0  # automatic knots stay inside the band
    with pytest.raises(ValueError, match="start_from takes"):
        ed.start_from(42)


def test_density_axis_is_cut_below_a_near_vertical_stretch():
    from cdfsketch.widgets.editor import _density_top

    flat = np.full(200, 0.1)
    top, cut = _density_top(flat, 0.12)
    assert not cut and top == pytest.approx(0.12 * 1.12)
    spiky = flat.copy()
    spiky[100] = 2.4e5  # one knot pair almost on top of each other
    top, cut = _density_top(spiky, 0.12)
    assert cut and top < 1.0
