"""Spec regressions: loader and provenance cases found in review (each names what it guards)."""

from __future__ import annotations

import json

import pytest

from cdfsketch import BoundedTail, ExponentialTail, KnotError, Sketch, SpecError, load
from cdfsketch.elicit import from_quantiles


def test_default_tails_survive_a_spec_round_trip():
    s = from_quantiles({0.05: 12, 0.5: 20, 0.95: 41})
    t = load(s.to_json())
    assert t.tails_given == s.tails_given == (False, False)
    assert len(t.summary().warnings) == len(s.summary().warnings) > 0
    stated = s.replace(upper_tail=ExponentialTail(5.0))
    assert load(stated.to_json()).tails_given == (False, True)


def test_unstated_bounded_tail_is_refused():
    spec = Sketch([0, 1], [0.1, 1], lower_tail=BoundedTail(-1.0)).to_spec()
    spec["tails"]["lower"]["stated"] = False
    with pytest.raises(SpecError, match="only the default tail"):
        load(spec)


def test_bounded_limit_inside_the_knots_is_refused_even_without_mass():
    with pytest.raises(KnotError, match="limit below the first knot"):
        Sketch([0, 1], [0, 1], lower_tail=BoundedTail(5.0))
    # a limit on the end knot is fine while the tail is empty, and a drag keeps it empty
    s = Sketch([0, 1], [0, 1], lower_tail=BoundedTail(0.0))
    assert s.move_knot(0, p=0.2).p[0] == 0.0


def test_huge_integer_in_a_spec_is_a_spec_error():
    spec = Sketch([0, 1], [0, 1]).to_spec()
    text = json.dumps(spec).replace('"x": [0.0, 1.0]', '"x": [0, 1' + "0" * 400 + "]")
    with pytest.raises(SpecError, match="too large"):
        load(text)


def test_long_names_are_refused_by_load_and_validate_alike():
    from cdfsketch import validate_spec

    spec = Sketch([0, 1], [0, 1]).to_spec()
    spec["name"] = "n" * 501
    with pytest.raises(SpecError, match="at most 500"):
        load(spec)
    with pytest.raises(SpecError):
        validate_spec(spec)


def test_provenance_checked_when_the_sketch_is_made():
    with pytest.raises(SpecError, match="unknown key 'autor'"):
        Sketch([0, 1], [0, 1], provenance={"autor": "x"})
    with pytest.raises(SpecError, match="plain JSON"):
        Sketch([0, 1], [0, 1], provenance={"extra": {"v": float("nan")}})
