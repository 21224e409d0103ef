"""Feedback for checking a judgement: :func:`summary` and :class:`SketchSummary`.

The summary gives an expert what they need to check that a sketch says what
they mean (Garthwaite, Kadane & O'Hagan 2005: feed back implied quantities):
mean, standard deviation, mode, interquartile range, chosen quantiles, the
support, atoms, and where the mass beyond the outer knots goes.

Overconfidence is the best-documented bias in elicitation: stated ranges are
usually too narrow (Teigen & Jørgensen 2005; McBride, Fidler & Burgman 2012
found 80 % intervals caught only 49–65 % of the true values). So whenever the
outer knots come from stated quantiles (``provenance["extra"]
["stated_quantiles"]``, written by :func:`cdfsketch.elicit.from_quantiles`
and :func:`cdfsketch.elicit.from_three_points`), the summary shows how much
mass lies beyond the outermost stated points and which model holds it, and
warns when that model was left at its default rather than stated.

Only numpy is imported here.
"""

from __future__ import annotations

import html
import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from . import _pieces
from ._validate import fail, first_bad
from ._validate import probabilities as _probabilities
from .tails import BoundedTail, ExponentialTail

if TYPE_CHECKING:
    from .sketch import Atom, Sketch

__all__ = ["SketchSummary", "summary"]

_OVERCONFIDENCE = (
    "Stated ranges are usually too narrow (Teigen & Jørgensen 2005; McBride, Fidler & "
    "Burgman 2012: 80 % intervals caught only 49–65 % of true values)."
)


@dataclass(frozen=True)
class BeyondStated:
    """Mass beyond the outermost stated point on one side and what holds it."""

    side: str
    stated_p: float
    stated_x: float
    mass: float
    model: str
    stated: bool


@dataclass(frozen=True)
class SketchSummary:
    """What a sketch implies, for the expert to check (see :func:`summary`)."""

    name: str
    units: str
    mean: float
    sd: float
    mode: float
    mode_interval: tuple[float, float] | None
    iqr: float
    quantiles: tuple[tuple[float, float], ...]
    support: tuple[float, float]
    atoms: tuple[Atom, ...]
    tail_mass: tuple[float, float]
    tail_models: tuple[str, str]
    beyond_stated: tuple[BeyondStated, ...] = ()
    contributors: tuple[tuple[str, float], ...] = ()
    method: str = ""
    warnings: tuple[str, ...] = field(default=())

    def _rows(self) -> list[tuple[str, str]]:
        u = f" {self.units}" if self.units else ""
        rows = [
            ("mean", f"{self.mean:.6g}{u}"),
            ("sd", f"{self.sd:.6g}{u}"),
        ]
        if self.mode_interval is None:
            rows.append(("mode", f"{self.mode:.6g}{u}"))
        else:
            a, b = self.mode_interval
            rows.append(
                ("mode", f"{self.mode:.6g}{u} (highest-density segment {a:.6g} to {b:.6g})")
            )
        rows.append(("interquartile range", f"{self.iqr:.6g}{u}"))
        for p, x in self.quantiles:
            rows.append((f"{100 * p:g} % quantile", f"{x:.6g}{u}"))
        rows.append(("support", f"{self.support[0]:.6g} to {self.support[1]:.6g}"))
        if self.atoms:
            rows.append(("atoms", ", ".join(f"{a.mass:.4g} at {a.x:.6g}" for a in self.atoms)))
        for side, mass, model in zip(
            ("lower", "upper"), self.tail_mass, self.tail_models, strict=True
        ):
            rows.append((f"{side} tail", f"{100 * mass:.3g} % — {model}"))
        for b in self.beyond_stated:
            where = "below" if b.side == "lower" else "above"
            rows.append(
                (
                    f"{where} stated {b.stated_x:.6g} (p={b.stated_p:g})",
                    f"{100 * b.mass:.3g} % — {b.model}" + ("" if b.stated else " [not stated]"),
                )
            )
        for nm, w in self.contributors:
            rows.append((f"contributor {nm}", f"weight {w:.4g}"))
        if self.method:
            rows.append(("method", self.method))
        return rows

    def __str__(self) -> str:
        title = self.name or "sketch"
        rows = self._rows()
        width = max(len(k) for k, _ in rows)
        lines = [f"Summary of {title}"]
        lines += [f"  {k:<{width}}  {v}" for k, v in rows]
        lines += [f"  warning: {w}" for w in self.warnings]
        return "\n".join(lines)

    def _repr_html_(self) -> str:
        esc = html.escape
        title = esc(self.name or "sketch")
        body = "".join(
            f"<tr><th style='text-align:left'>{esc(k)}</th><td>{esc(v)}</td></tr>"
            for k, v in self._rows()
        )
        warn = "".join(f"<li>{esc(w)}</li>" for w in self.warnings)
        warn_html = f"<p><b>Warnings</b></p><ul>{warn}</ul>" if warn else ""
        return f"<div><p><b>Summary of {title}</b></p><table>{body}</table>{warn_html}</div>"


def _mode(sk: Sketch) -> tuple[float, tuple[float, float] | None]:
    pc = sk._pieces
    best_f, best_x, best_iv = -1.0, float("nan"), None
    if sk.interpolation == "linear":
        body = (pc.c[2] == 0) & (pc.c[3] == 0)
        dens = np.where(body, pc.c[1] / pc.h, -1.0)
        j = int(np.argmax(dens))
        if dens[j] > 0:
            a, b = float(pc.xa[j]), float(pc.xa[j] + pc.h[j])
            best_f, best_x, best_iv = float(dens[j]), 0.5 * (a + b), (a, b)
    else:
        c = pc.c
        cand = [np.zeros(pc.h.size), np.ones(pc.h.size)]
        with np.errstate(divide="ignore", invalid="ignore"):
            vertex = np.where(c[3] != 0, -c[2] / (3 * c[3]), 0.0)
        cand.append(np.clip(vertex, 0.0, 1.0))
        for t in cand:
            f = _pieces.dpoly(c, t) / pc.h
            j = int(np.argmax(f))
            if f[j] > best_f:
                best_f, best_x = float(f[j]), float(pc.xa[j] + pc.h[j] * t[j])
    for tail in (pc.lower, pc.upper):
        if tail is not None and tail.mass / tail.scale > best_f * (1 + 1e-12):
            best_f, best_x, best_iv = tail.mass / tail.scale, tail.edge, None
    return best_x, best_iv


def _describe_tail(sk: Sketch, side: int) -> str:
    tail = sk.lower_tail if side == 0 else sk.upper_tail
    if sk.tail_mass[side] <= 0:
        return "none (the outer knot is at p = " + ("0)" if side == 0 else "1)")
    if isinstance(tail, BoundedTail):
        text = f"bounded at {tail.limit:.6g} ({tail.density} density)"
    else:
        assert isinstance(tail, ExponentialTail)
        scale = sk.tail_scales[side]
        how = "stated" if tail.scale is not None else "derived to continue the density"
        text = f"exponential, scale {scale:.4g} ({how})"
    if not sk.tails_given[side]:
        text += ", left at the default"
    return text


def _beyond_stated(sk: Sketch) -> tuple[list[BeyondStated], list[str]]:
    extra = sk.provenance.get("extra") or {}
    stated = extra.get("stated_quantiles")
    if not stated:
        return [], []
    pairs = sorted((float(p), float(x)) for p, x in stated)
    ends_stated = extra.get("ends_stated", [True, True])
    out, notes = [], []
    for side, (p_s, x_s) in ((0, pairs[0]), (1, pairs[-1])):
        right = float(sk.cdf(x_s))
        mass = right if side == 0 else 1.0 - right
        if mass <= 0:
            continue
        outer = float(sk.x[0] if side == 0 else sk.x[-1])
        name = "lower" if side == 0 else "upper"
        if sk.tail_mass[side] > 0 and outer == x_s:
            model = f"the {name} tail: " + _describe_tail(sk, side)
            given = sk.tails_given[side]
        else:
            kind = "solved" if not ends_stated[side] else "stated"
            model = (
                f"knots out to a {kind} end at {outer:.6g}"
                if kind == "solved"
                else f"knots out to the stated bound {outer:.6g}"
            )
            if sk.tail_mass[side] > 0:
                model += f", then the {name} tail: " + _describe_tail(sk, side)
            given = bool(ends_stated[side]) and (sk.tail_mass[side] == 0 or sk.tails_given[side])
        out.append(BeyondStated(name, p_s, x_s, mass, model, given))
        if not given:
            where = "below" if side == 0 else "above"
            notes.append(
                f"{100 * mass:.3g} % of the mass lies {where} the stated point {x_s:.6g} "
                f"(p={p_s:g}) and is held by {model}, which the expert did not state. "
                f"{_OVERCONFIDENCE} Ask what lies {where} {x_s:.6g} and state it "
                f"({name}= a bound, or {name}_tail=...)."
            )
    return out, notes


def _support_ends(sk: Sketch) -> list[str]:
    """A warning for each side where the support stops at a knot with no tail stated.

    A simulation then never draws beyond that knot (for a sketch made from
    data: beyond the smallest or largest observation). A side whose tail was
    stated (``lower_tail=``/``upper_tail=``), or whose bound the expert stated
    (``provenance["extra"]``: ``lower_bound``/``upper_bound`` or
    ``ends_stated``), ends where the user said.
    """
    out = []
    low, high = sk.support
    extra = sk.provenance.get("extra") or {}
    ends_stated = extra.get("ends_stated", (False, False))
    for side, end, where, word in ((0, low, "below", "a lower"), (1, high, "above", "an upper")):
        if sk.tail_mass[side] > 0 or sk.tails_given[side] or not math.isfinite(end):
            continue  # mass beyond, or an end stated on purpose (a tail setting was given)
        if ends_stated[side] or extra.get(f"{word.split()[1]}_bound") is not None:
            continue  # the expert stated this bound (from_quantiles lower=/upper=)
        out.append(
            f"support ends at {end:.6g}: a simulation never draws {where} it; add "
            f"{word} tail to allow {'smaller' if side == 0 else 'larger'} values."
        )
    return out


def summary(sketch: Sketch, *, probabilities: Any = (0.05, 0.25, 0.5, 0.75, 0.95)) -> SketchSummary:
    """What ``sketch`` implies, to check it against the expert's judgement.

    Parameters
    ----------
    sketch : Sketch
        The sketch to summarise.
    probabilities : sequence of float
        Quantiles to report, each strictly inside (0, 1).

    Returns
    -------
    SketchSummary
        ``mean``, ``sd``, ``mode`` (pchip: the argmax of the density; linear:
        the midpoint of the highest-density segment, with ``mode_interval``
        the segment), ``iqr``, ``quantiles`` as ``(p, x)`` pairs, ``support``,
        ``atoms``, ``tail_mass`` and ``tail_models``, ``beyond_stated`` (mass
        beyond the outermost stated quantiles and what holds it) and
        ``warnings`` (counted: ``len(s.warnings)``), among them one for each
        side where the support stops at a knot with no tail stated, as for a
        sketch made from data with no tails. ``str()`` gives text, ``_repr_html_()`` escaped HTML.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> s = summary(Sketch([0, 2, 10], [0, 0.5, 1]), probabilities=(0.5,))
    >>> s.mean, s.mode, s.mode_interval, s.quantiles
    (3.5, 1.0, (0.0, 2.0), ((0.5, 2.0),))
    """
    if not isinstance(getattr(sketch, "_pieces", None), _pieces.Pieces):
        raise TypeError(
            f"summary() needs a Sketch; got {type(sketch).__name__}. Pass a cdfsketch.Sketch "
            "(e.g. one made by cdfsketch.from_quantiles)."
        )
    probs = _probabilities(probabilities, field="probabilities")[0].ravel()
    i = first_bad((probs <= 0) | (probs >= 1))
    if i is not None:
        raise fail(
            "probabilities must lie strictly inside (0, 1)",
            f"probabilities[{i}]={float(probs[i])!r}",
            "Use e.g. (0.05, 0.25, 0.5, 0.75, 0.95).",
            field="probabilities",
            index=i,
        )
    qs = np.asarray(sketch.ppf(probs), dtype=float)
    q25, q75 = (float(v) for v in sketch.ppf(np.array([0.25, 0.75])))
    mode, interval = _mode(sketch)
    tail_models = (_describe_tail(sketch, 0), _describe_tail(sketch, 1))
    beyond, notes = _beyond_stated(sketch)
    warns = list(notes)
    covered = {b.side for b in beyond}
    for side in (0, 1):
        name = "lower" if side == 0 else "upper"
        if sketch.tail_mass[side] > 0 and not sketch.tails_given[side] and name not in covered:
            warns.append(
                f"The {name} tail holds {100 * sketch.tail_mass[side]:.3g} % under the default "
                f"model ({tail_models[side]}); it was not stated. State {name}_tail= "
                "(BoundedTail or ExponentialTail) if you know better."
            )
    warns += _support_ends(sketch)
    prov = sketch.provenance
    contributors = tuple(
        (str(c.get("name", "")), float(c.get("weight", math.nan)))
        for c in prov.get("contributors") or ()
    )
    return SketchSummary(
        name=sketch.name,
        units=sketch.units,
        mean=sketch.mean(),
        sd=sketch.std(),
        mode=mode,
        mode_interval=interval,
        iqr=q75 - q25,
        quantiles=tuple((float(p), float(x)) for p, x in zip(probs, qs, strict=True)),
        support=sketch.support,
        atoms=sketch.atoms,
        tail_mass=sketch.tail_mass,
        tail_models=tail_models,
        beyond_stated=tuple(beyond),
        contributors=contributors,
        method=str(prov.get("method", "")),
        warnings=tuple(warns),
    )
