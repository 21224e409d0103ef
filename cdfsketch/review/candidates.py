"""What a review compares: each candidate as a model with a CDF, and its sketch form.

Every candidate — an expert's sketch, a pool, a fitted family, the resampled
data — is read through ONE function, :func:`_as_model`, into the shared
"something with a CDF" contract (``cdf``, ``sf``, ``pdf``, ``ppf``,
``support``, ``atoms``, ``breakpoints``). The review never asks what a
candidate is in order to evaluate it; it asks only for its sketch form (what
the page draws and what a decision writes as the chosen spec), made in ONE
place, :func:`_sketch_form`.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from .._frozen import thaw
from .._limits import MAX_NAME_CHARS
from .._validate import InputError, fail, quote, text
from ..elicit import reknot
from ..empirical import ECDF
from ..protocol import CDFModel, as_model
from ..sketch import Atom, Sketch

__all__ = ["FIT_KNOTS", "FIT_TAIL_MASS", "ReviewCandidate", "as_candidate", "check_unique"]

#: Knots used when a fitted family is written as a sketch (the page, the chosen spec).
FIT_KNOTS = 201
#: Tail mass beyond the outer knots of such a sketch on an unbounded side.
FIT_TAIL_MASS = 0.001
_DESCRIPTIONS = {"sketch": "judgement (sketch)", "fit": "fitted family", "data": "resampled data"}


def _as_model(obj: Any) -> CDFModel:
    """The candidate as a model with ``cdf, sf, pdf, ppf, support, atoms, breakpoints``.

    The ONE door from what the user passed to what the review evaluates: the
    package's protocol adapter, :func:`cdfsketch.protocol.as_model`.
    """
    return as_model(obj, field="candidates")


def _step_sketch(ecdf: ECDF, where: str) -> Sketch:
    """The ECDF as an exact sketch: two knots (a jump) at every distinct value."""
    if ecdf.censoring:
        raise fail(
            f"{where} must be an uncensored ECDF (the resampled data)",
            "a Kaplan–Meier estimate (censored data)",
            "Pass the uncensored data, or sketch the censored tail and review that sketch.",
            field="candidates",
        )
    xs, ps = np.asarray(ecdf.x, dtype=float), np.asarray(ecdf.p, dtype=float)
    if xs.size < 2:
        raise fail(
            f"{where} must have two distinct values to be resampled as a CDF",
            "a single distinct value",
            "Review it as a sketch with an atom instead.",
            field="candidates",
        )
    x = np.repeat(xs, 2)
    p = np.empty(x.size)
    p[0::2] = np.r_[0.0, ps[:-1]]
    p[1::2] = ps
    p[-1] = 1.0
    return Sketch(
        x,
        p,
        name="resampled data",
        provenance={"method": "ECDF (resampled data)", "extra": {"distinct_values": xs.size}},
    )


def _sketch_form(obj: Any, units: str) -> tuple[Sketch, str]:
    """The candidate as a sketch (drawn on the page, written as the chosen spec), and how.

    The ONE place where a distribution becomes knots for the review: the
    package's one target-to-knots function, :func:`cdfsketch.elicit.reknot`.
    """
    sk = reknot(
        obj, knots=FIT_KNOTS, interpolation="pchip", tail_mass=FIT_TAIL_MASS,
        name=obj.name, units=units,
    )  # fmt: skip
    err = float(sk.provenance["extra"]["max_abs_cdf_error"])
    prov = thaw(sk.provenance)
    prov["method"] = f"from candidate fit {obj.name}"
    prov.setdefault("extra", {}).update(
        {"family": obj.family, "params": thaw(obj.params), "knots_from_fit": int(sk.x.size)}
    )
    note = (
        f"fitted {obj.family} written as a sketch with {sk.x.size} knots "
        f"(monotone cubic; largest |ΔF| from the fit {err:.1e})"
    )
    return sk.replace(provenance=prov), note


@dataclass(frozen=True, eq=False)
class ReviewCandidate:
    """One candidate as the review sees it.

    Attributes
    ----------
    name : str
        Unique name on the board.
    kind : {"sketch", "fit", "data"}
        A judgement (an expert's sketch or a pool of them), a fitted family,
        or the resampled data.
    model : object
        The candidate's own distribution (a fit's exact CDF, not its sketch
        form), with ``cdf``, ``sf``, ``pdf``, ``ppf``, ``support``, ``atoms``
        and ``breakpoints``.
    source : object
        What was given (a Sketch, a fit Candidate or an ECDF).
    sketch : Sketch
        Its sketch form: the sketch itself; for a fit :data:`FIT_KNOTS`
        knots; for an ECDF the exact step CDF. This is what the page draws
        and what :meth:`Review.chosen_spec` writes.
    note : str
        How it was made (a sketch's method; for a fit the knots and the
        largest CDF difference from the fitted family).
    """

    name: str
    kind: str
    model: Any
    source: Any
    sketch: Sketch
    note: str = ""

    @property
    def description(self) -> str:
        """The kind in words, e.g. ``"fitted family"``."""
        return _DESCRIPTIONS[self.kind]

    @property
    def atoms(self) -> tuple[Atom, ...]:
        """Point masses ``(x, mass)`` of the candidate."""
        return tuple(self.model.atoms)

    def cdf(self, x: Any) -> np.ndarray:
        """The candidate's own CDF."""
        return self.model.cdf(x)

    def pdf(self, x: Any) -> np.ndarray:
        """The candidate's density (continuous part; zero for the resampled data)."""
        return self.model.pdf(x)

    def ppf(self, u: Any) -> np.ndarray:
        """The candidate's quantile function."""
        return self.model.ppf(u)


def as_candidate(obj: Any, i: int, units: str) -> ReviewCandidate:
    """Read ``candidates[i]`` (a Sketch, a fit Candidate or an ECDF) for a review."""
    where = f"candidates[{i}]"
    if isinstance(obj, ECDF):
        sk = _step_sketch(obj, where)
        note = f"ECDF of {obj.n} values: each value drawn with its observed frequency"
        return ReviewCandidate("resampled data", "data", _as_model(obj), obj, sk, note)
    if not (hasattr(obj, "cdf") and hasattr(obj, "ppf") and hasattr(obj, "name")):
        raise fail(
            f"{where} must be a Sketch, a fit Candidate (cdfsketch.fit.fit_candidates) or an "
            "ECDF (the resampled data)",
            type(obj).__name__,
            "Wrap other distributions with cdfsketch.from_distribution(dist).",
            field="candidates",
            index=i,
            value=obj,
        )
    name = text(obj.name, field=f"{where}.name", max_len=MAX_NAME_CHARS)
    if not name.strip():
        raise fail(
            f"{where} must have a name (every candidate is chosen by its name)",
            quote(name),
            "Give it one: sketch.replace(name='expert A').",
            field="candidates",
            index=i,
        )
    model = _as_model(obj)
    if isinstance(obj, Sketch):
        if units and obj.units and obj.units != units:
            raise fail(
                f"{where} ({quote(name)}) must be in the review's units {units!r}",
                repr(obj.units),
                f"Convert the sketch to {units!r} (or give matching units).",
                field="units",
                index=i,
            )
        return ReviewCandidate(
            name, "sketch", model, obj, obj, str(obj.provenance.get("method", ""))
        )
    sk, note = _sketch_form(obj, units)
    return ReviewCandidate(name, "fit", model, obj, sk, note)


def check_unique(candidates: tuple[ReviewCandidate, ...]) -> None:
    """Refuse two candidates with one name (a decision names the one it chose)."""
    seen: dict[str, int] = {}
    for i, c in enumerate(candidates):
        if c.name in seen:
            raise InputError(
                f"Candidate names must be unique; candidates[{i}] and candidates[{seen[c.name]}] "
                f"are both called {quote(c.name)}. Rename one (sketch.replace(name=...)); a "
                "decision names the candidate it chose.",
                field="candidates",
                index=i,
                found=c.name,
            )
        seen[c.name] = i
