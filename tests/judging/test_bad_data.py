"""Bad data to every data entry point of judging (issues 15 and 16): each case is a clear
DataError in our words (never numpy's or pandas' message) or a counted warning."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
import scipy.stats as st

from cdfsketch.empirical import ECDF, DataError, DroppedValuesWarning, as_data
from cdfsketch.fit import SmallSampleWarning, fit_candidates
from cdfsketch.metrics import compare

ENTRY_POINTS = {
    "as_data": as_data,
    "ECDF": ECDF,
    "fit_candidates": lambda d: fit_candidates(d, mixtures=(1,), kde=False, rng=0),
    "compare": lambda d: compare(d, [st.norm(2.0, 1.0)], holdout=None),
}


def _gen():
    return (float(v) for v in range(5))


# (case, data factory, outcome, message pattern): outcome "error" or "warn"
CASES = [
    ("NaN", lambda: [1.0, np.nan, 2.0, 3.0, 4.5], "warn", r"Dropped 1 missing value"),
    ("+inf", lambda: [1.0, np.inf, 2.0], "error", r"must be finite; got inf at index 1"),
    ("-inf", lambda: [-np.inf, 1.0, 2.0], "error", r"must be finite; got -inf at index 0"),
    ("empty", lambda: [], "error", r"got none"),
    ("one value", lambda: [3.0], "error", r"two distinct values; got only 3.0"),
    ("all equal", lambda: [2.0] * 5, "error", r"two distinct values; got only 2.0"),
    ("strings", lambda: ["a", "b"], "error", r"must be real numbers; got values of dtype <U1"),
    ("text", lambda: "1 2 3", "error", r"must be numbers; got the text"),
    ("2-D", lambda: np.ones((3, 2)), "error", r"one-dimensional.*shape \(3, 2\)"),
    ("list of lists", lambda: [[1.0, 2.0], [3.0, 4.0]], "error", r"one-dimensional"),
    ("ragged list", lambda: [[1.0, 2.0], [3.0]], "error", r"one value per observation"),
    (
        "Series with NaN",
        lambda: pd.Series([1.0, None, 2.0, 3.5, 4.0]),
        "warn",
        r"Dropped 1 missing",
    ),
    ("booleans", lambda: [True, False, True], "error", r"got booleans"),
    ("complex", lambda: [1 + 2j, 3j], "error", r"got complex numbers"),
    ("object array", lambda: np.array([1, "x"], dtype=object), "error", r"'x' \(str\) at index 1"),
    ("generator", _gen, "error", r"must be a sequence.*got a generator"),
    ("set", lambda: {1.0, 2.0, 3.0}, "error", r"must be a sequence.*got a set"),
    ("dict", lambda: {"a": 1.0, "b": 2.0}, "error", r"must be a sequence.*got a dict"),
    (
        "masked array",
        lambda: np.ma.array([1.0, 1e9, 2.0, 3.0, 4.0], mask=[0, 1, 0, 0, 0]),
        "warn",
        r"Dropped 1 masked",
    ),
    (
        "datetime Series",
        lambda: pd.Series(pd.to_datetime(["2020-01-01", "2020-01-03", "2020-02-01"])),
        "error",
        r"got dates.*durations in the unit you mean",
    ),
    (
        "timedelta array",
        lambda: np.array([1, 2, 3], dtype="timedelta64[h]"),
        "error",
        r"got durations.*np.timedelta64\(1, 'h'\)",
    ),
    (
        "categorical Series",
        lambda: pd.Series([1.0, 2.0, 2.0, 3.0], dtype="category"),
        "error",
        r"got a categorical column",
    ),
]


@pytest.mark.parametrize("entry", list(ENTRY_POINTS))
@pytest.mark.parametrize(("case", "make", "outcome", "pattern"), CASES, ids=[c[0] for c in CASES])
def test_bad_data_table(entry, case, make, outcome, pattern):
    call = ENTRY_POINTS[entry]
    data = make()
    if outcome == "error":
        with pytest.raises(DataError, match=pattern) as err:
            call(data)
        assert err.value.field == "data"
        assert "pandas.to_numeric" not in str(err.value)
    else:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", SmallSampleWarning)
            with pytest.warns(DroppedValuesWarning, match=pattern):
                call(data)


def test_negative_and_extreme_weights():
    with pytest.raises(DataError, match=r"weights\[1\]=-1.0") as err:
        ECDF([1.0, 2.0, 3.0], weights=[1.0, -1.0, 1.0])
    assert err.value.field == "weights" and err.value.index == 1
    # issue 16: sums that overflow, and tiny weights, are normalised safely
    e = ECDF([1, 2, 3], weights=[1e308] * 3)
    np.testing.assert_allclose(e.p, [1 / 3, 2 / 3, 1.0], rtol=1e-15)
    assert np.isin(e.sample(100, rng=0), [1.0, 2.0, 3.0]).all()
    assert len(set(e.sample(200, rng=0).tolist())) == 3
    tiny = ECDF(np.arange(10.0), weights=np.full(10, 1e-200))
    assert tiny.band().eps == pytest.approx(ECDF(np.arange(10.0)).band().eps)
    sub = ECDF([1.0, 2.0], weights=[5e-324, 1e-323])
    np.testing.assert_allclose(sub.p, [1 / 3, 1.0])


@pytest.mark.parametrize(
    "data",
    [
        np.random.default_rng(1).lognormal(0, 0.5, 200) * 1e-300,  # invented, seeded
        np.random.default_rng(2).lognormal(0, 0.5, 200) * 1e-310,  # subnormal
        np.random.default_rng(3).lognormal(0, 0.5, 200) * 1e300,
        1e8 + np.random.default_rng(4).uniform(-5e-7, 5e-7, 200),  # spread 1e-6 around 1e8
    ],
    ids=["near 1e-300", "subnormal", "near 1e300", "spread 1e-6 at 1e8"],
)
def test_fit_candidates_at_the_edges_of_float64(data):
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        cands = fit_candidates(data, rng=0)
    assert len(cands) >= 1
    for c in cands:
        assert np.isfinite(c.loglik), c.name
        assert all(np.isfinite(v) for v in np.ravel(list(_flat(c.params)))), c.name
    for name, reason in cands.skipped.items():
        assert reason, name  # every skipped family says why
    table = compare(data, list(cands)[:3], holdout=None)
    assert all(np.isfinite(r["ks"]) for r in table.rows)


def _flat(params):
    for v in params.values():
        if isinstance(v, str):
            continue
        yield from (v if isinstance(v, tuple) else (v,))


def test_few_values_warn_and_name_the_families():
    with pytest.warns(SmallSampleWarning, match=r"Only 3 data points: too few to judge normal"):
        cands = fit_candidates([1.0, 2.0, 4.0], mixtures=(), kde=False)
    assert "normal" in [c.name for c in cands]
    with warnings.catch_warnings():
        warnings.simplefilter("error", SmallSampleWarning)
        fit_candidates(np.random.default_rng(0).normal(size=200), mixtures=(), kde=False)
