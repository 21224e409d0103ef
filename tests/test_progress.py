"""Progress on long work: callables, the automatic bar in a Jupyter kernel, pass-through."""

from __future__ import annotations

import sys
import types

import numpy as np
import pytest

from cdfsketch import Sketch, _progress
from cdfsketch.fit import compare, fit_candidates
from cdfsketch.review import Review


@pytest.fixture
def data():
    return np.random.default_rng(21).gamma(2.0, 2.0, 300)  # invented, seeded


def test_compare_reports_each_candidate(data):
    calls = []
    models = [Sketch([0, 5, 30], [0, 0.6, 1], name="judged"), *fit_candidates(data, kde=False)]
    compare(data, models, rng=1, progress=lambda d, t, label: calls.append((d, t, label)))
    assert [c[0] for c in calls] == list(range(1, len(models) + 1))
    assert {c[1] for c in calls} == {len(models)}
    assert calls[0][2] == "judged"


def test_review_passes_progress_on(data):
    calls = []
    Review(data, [Sketch([0, 30], [0, 1], name="flat")], rng=1, progress=lambda *a: calls.append(a))
    assert calls == [(1, 1, "flat")]
    for d in (data, None):  # checked even when there is nothing to score
        with pytest.raises(TypeError, match="progress must be None"):
            Review(d, [Sketch([0, 30], [0, 1], name="flat")], progress="yes")


class ZMQInteractiveShell:  # the class name is what in_notebook() looks for
    pass


def test_automatic_bar_appears_after_a_second_in_a_kernel(monkeypatch):
    import ipywidgets  # noqa: F401  (loaded before IPython is faked below)

    fake = types.ModuleType("IPython")
    fake.get_ipython = ZMQInteractiveShell  # returns an instance
    shown = []
    display_mod = types.ModuleType("IPython.display")
    display_mod.display = shown.append
    monkeypatch.setitem(sys.modules, "IPython", fake)
    monkeypatch.setitem(sys.modules, "IPython.display", display_mod)
    assert _progress.in_notebook()
    clock = iter([0.0, 0.5, 2.0, 2.5, 3.0])
    monkeypatch.setattr(_progress.time, "perf_counter", lambda: next(clock))
    bar = _progress.Progress(None, 3, title="scoring")  # starts at t = 0
    bar(1, "quick")  # t = 0.5: nothing shown yet
    assert shown == []
    bar(2, "slow candidate")  # t = 2.0: the bar appears, at step 2
    assert len(shown) == 1 and shown[0].value == 2 and shown[0].description == "slow candidate"
    bar(3, "last")
    assert shown[0].value == 3  # and the finished bar is closed


def test_no_bar_outside_a_kernel(monkeypatch):
    monkeypatch.setitem(sys.modules, "IPython", None)
    assert not _progress.in_notebook()
    bar = _progress.Progress(None, 2, title="fitting")
    bar(1, "a")
    assert bar.bar is None and not bar.auto
