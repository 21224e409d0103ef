"""A review: the candidates for one input, the data they are judged against, and the decision.

:class:`Review` needs no widgets and no figures (numpy and the core, plus
scipy through :func:`cdfsketch.fit.compare` when data are given). Every value
is checked where it enters — candidate names, the review's name and units,
who decided and why — against the one limit table, so whatever a review
holds can later be saved. The decision is a read-only record.

A review can also say whether the choice changes the model's answer: give it
a :func:`cdfsketch.consequences` result over its candidates
(``consequences=``), or the model and its inputs (``model=``, ``inputs=``,
``vary=``, ``size=``) to run one on its own candidates. Only the result is
kept, never the model. Once there is one, a decision also records what the
run found for the chosen candidate (``decision["consequences"]``, from
:meth:`~cdfsketch.outcomes.Consequences.decision_record`), and the chosen spec
carries it in ``provenance.decision``.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping, Sequence
from datetime import UTC, datetime
from typing import Any

import numpy as np

from .._frozen import freeze, thaw
from .._limits import MAX_NAME_CHARS, MAX_TEXT_CHARS, MAX_UNITS_CHARS
from .._progress import check_progress
from .._validate import fail, number, quote, text
from ..empirical import ECDF, as_data
from ..loading import validate_spec
from ..outcomes import Consequences
from ..spec import data_fingerprint
from .candidates import ReviewCandidate, as_candidate, check_unique
from .consequence_run import check_result, output_units_for, run_for_review, setup_consequences
from .palette import Style, style
from .table import finite_or_none

__all__ = ["Review"]


class Review:
    """Candidates for one input, the data they are judged against, and the decision.

    Parameters
    ----------
    data : array_like, optional
        Observations (NaN dropped with a warning). Without data there is no
        ECDF, band, histogram or comparison table.
    candidates : sequence
        Sketches (judgements, pools), fit Candidates and ECDFs (the
        resampled data), named by their ``.name`` (an ECDF is "resampled
        data"); names must be unique.
    level : float
        Coverage of the simultaneous DKW band.
    units, name : str
        Units of the quantity and its name (the chosen spec's name).
    holdout : float or None
        Fraction of the data held out by :func:`cdfsketch.fit.compare`.
    rng : optional
        Seed for the holdout split and refits (``np.random.default_rng``).
    progress : None, False or callable
        Progress of scoring the candidates against the data (see
        :func:`cdfsketch.fit.compare`) and of a consequence run.
    consequences : Consequences, optional
        A :func:`cdfsketch.consequences` result whose candidates carry exactly
        the review's candidate names (run it with ``names=list(review.names)``
        or with candidates named alike); see :meth:`attach_consequences`.
    model : callable, optional
        The user's vectorised model; with ``inputs``, ``vary`` and ``size`` the
        review runs :func:`cdfsketch.consequences` on its own candidates, seeded
        by ``rng`` (see :meth:`run_consequences`).
    inputs : InputSet or mapping of name to Sketch, optional
        The model's inputs.
    vary : str, optional
        The input the candidates are for.
    size : int, optional
        Draws per candidate.
    consequence_options : mapping, optional
        Further keywords of :func:`cdfsketch.consequences` (``tolerance``,
        ``thresholds``, ``quantiles``, ``judge``, ``design``, …).
    output_units : str or mapping, optional
        Units of the model's outputs (one for all, or per output); an output
        named like the varied input has the review's units by default.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> a = Sketch([0, 4, 10], [0, 0.5, 1], name="expert A", units="h")
    >>> b = Sketch([0, 6, 12], [0, 0.5, 1], name="expert B", units="h")
    >>> r = Review(None, [a, b], units="h", name="repair time")
    >>> r.names
    ('expert A', 'expert B')
    >>> _ = r.choose("expert B", by="review group", rationale="matches the logs",
    ...              when="2026-01-05T10:00:00+00:00")
    >>> r.chosen_spec()["provenance"]["decision"]["chosen"]
    'expert B'

    Whether the choice changes a model's answer (an invented cost model):

    >>> rate = Sketch([50, 70], [0, 1], name="rate", units="EUR/h")
    >>> r = Review(None, [a, b], units="h", model=lambda d: {"cost": d["hours"] * d["rate"]},
    ...            inputs={"hours": a, "rate": rate}, vary="hours", size=20_000, rng=1,
    ...            output_units="EUR", consequence_options={"tolerance": 10.0})
    >>> r.consequences.verdicts()["cost"]
    'the choice changes this output by more than the tolerance you set'
    >>> d = r.choose("expert A", by="review group", rationale="matches the logs")
    >>> spec = r.chosen_spec()
    >>> spec["provenance"]["decision"]["consequences"]["largest_difference"]["output"]
    'cost'
    """

    def __init__(
        self,
        data: Any = None,
        candidates: Sequence[Any] = (),
        *,
        level: float = 0.95,
        units: str = "",
        name: str = "",
        holdout: float | None = 0.3,
        rng: Any = None,
        progress: Any = None,
        consequences: Consequences | None = None,
        model: Callable[[Mapping[str, np.ndarray]], Any] | None = None,
        inputs: Any = None,
        vary: str | None = None,
        size: int | None = None,
        consequence_options: Mapping[str, Any] | None = None,
        output_units: str | Mapping[str, str] | None = None,
    ) -> None:
        self.units = text(units, field="units", max_len=MAX_UNITS_CHARS)
        self.name = text(name, field="name", max_len=MAX_NAME_CHARS)
        check_progress(progress)
        self.level = number(
            level, field="level", low=0, high=1, low_open=True, high_open=True,
            example="level=0.95",
        )  # fmt: skip
        if isinstance(candidates, str | bytes) or not isinstance(candidates, Iterable):
            raise fail(
                "candidates must be a list of Sketches, fit Candidates or ECDFs",
                type(candidates).__name__,
                "Pass a list, e.g. [expert_a, expert_b, *fit_candidates(data)].",
                field="candidates",
                value=candidates,
            )
        items = list(candidates)
        if not items:
            raise fail(
                "candidates must hold at least one candidate",
                "an empty list",
                "Pass the sketches, fits or ECDF to review.",
                field="candidates",
            )
        self.candidates: tuple[ReviewCandidate, ...] = tuple(
            as_candidate(c, i, self.units) for i, c in enumerate(items)
        )
        check_unique(self.candidates)
        self._styles = {c.name: style(i) for i, c in enumerate(self.candidates)}
        self.data: np.ndarray | None = None
        self._ecdf: ECDF | None = None
        self._fingerprint: Any = None
        self._table: Any = None
        if data is not None:
            # the review's own read-only copy: the caller's array stays theirs (and writable)
            own = as_data(data)
            if own is data or own.base is not None:  # the caller's memory (array, Series, buffer)
                own = own.copy()
            own.setflags(write=False)
            self.data = own
            self._fingerprint = freeze(data_fingerprint(self.data))
            from ..metrics import compare

            table = compare(
                self.data,
                [c.source for c in self.candidates],
                holdout=holdout,
                level=self.level,
                rng=rng,
                progress=progress,
            )
            for row, c in zip(table.rows, self.candidates, strict=True):
                row["name"] = c.name
            self._table = table
            self._ecdf = ECDF(self.data)  # after the comparison: lower peak memory on big data
        self.decision: Any = None
        self._consequences: Consequences | None = None
        self._output_units: Any = freeze({})
        self._progress = progress
        setup_consequences(
            self, consequences, model=model, inputs=inputs, vary=vary, size=size, rng=rng,
            options=consequence_options, output_units=output_units,
        )  # fmt: skip

    # ------------------------------------------------------------ look-ups
    @property
    def names(self) -> tuple[str, ...]:
        """The candidates' names, in order."""
        return tuple(c.name for c in self.candidates)

    def candidate(self, name: str) -> ReviewCandidate:
        """The candidate called ``name``."""
        for c in self.candidates:
            if c.name == name:
                return c
        raise KeyError(
            f"No candidate named {quote(name)}; the candidates are {quote(list(self.names))}."
        )

    def style(self, name: str) -> Style:
        """Colour, dash and marker of a candidate: fixed by its position, for the review's life."""
        self.candidate(name)
        return self._styles[name]

    @property
    def has_table(self) -> bool:
        """Whether there is a comparison table (there are data)."""
        return self._table is not None

    def table(self) -> Any:
        """The :class:`~cdfsketch.fit.ComparisonTable` (needs data)."""
        if self._table is None:
            raise fail(
                "A comparison table needs data",
                "a review without data, so there is no comparison table",
                "Pass data= to judge the candidates against observations.",
                field="data",
            )
        return self._table

    @property
    def ecdf(self) -> ECDF:
        """The data's ECDF (needs data)."""
        if self._ecdf is None:
            raise fail("An ECDF needs data", "none", "Pass data= to the review.", field="data")
        return self._ecdf

    @property
    def data_range(self) -> tuple[float, float]:
        """Smallest and largest observation (needs data)."""
        x = self.ecdf.x
        return float(x[0]), float(x[-1])

    @property
    def fingerprint(self) -> Any:
        """The data's digest and size (:func:`cdfsketch.data_fingerprint`), or None."""
        return self._fingerprint

    @property
    def consequences(self) -> Consequences | None:
        """The consequence run over the candidates (a read-only result), or None."""
        return self._consequences

    @property
    def output_units(self) -> Any:
        """Output → its units (read-only; empty without a consequence run)."""
        return self._output_units

    def attach_consequences(self, result: Consequences, *, output_units: Any = None) -> Any:
        """Keep a :func:`cdfsketch.consequences` result over this review's candidates.

        Parameters
        ----------
        result : Consequences
            Its candidates must carry exactly the review's names (order free).
        output_units : str or mapping, optional
            Units of the outputs (one for all, or output → units).

        Returns
        -------
        Consequences
            ``result``. A decision already recorded gains the run's record.
        """
        checked = check_result(result, self.names)
        self._output_units = output_units_for(output_units, checked, self.units)
        self._consequences = checked
        if self.decision is not None:
            self.decision = freeze(
                {**self.decision, "consequences": checked.decision_record(self.decision["chosen"])}
            )
        return checked

    def run_consequences(
        self,
        model: Callable[[Mapping[str, np.ndarray]], Any] | None,
        inputs: Any,
        *,
        vary: str,
        size: int,
        rng: Any = None,
        output_units: Any = None,
        **options: Any,
    ) -> Any:
        """Run :func:`cdfsketch.consequences` on this review's candidates and keep the result.

        Each candidate goes through the model as its sketch form (what a
        decision writes as the spec), under its review name.

        Parameters
        ----------
        model : callable or None
            The vectorised model (None: the output is the varied input itself).
        inputs : InputSet or mapping of name to Sketch
            The model's inputs.
        vary : str
            The input the candidates are for.
        size : int
            Draws per candidate.
        rng : optional
            The root of the run's streams (``np.random.default_rng`` takes it).
        output_units : str or mapping, optional
            Units of the outputs.
        **options
            Further keywords of :func:`cdfsketch.consequences` (``tolerance``,
            ``thresholds``, ``quantiles``, ``judge``, ``design``, …).

        Returns
        -------
        Consequences
        """
        result = run_for_review(
            model,
            inputs,
            candidates=[c.sketch for c in self.candidates],
            names=self.names,
            vary=vary,
            size=size,
            rng=rng,
            progress=self._progress,
            options=options,
        )
        return self.attach_consequences(result, output_units=output_units)

    @property
    def chosen(self) -> str | None:
        """Name of the chosen candidate, or None."""
        return None if self.decision is None else self.decision["chosen"]

    # ------------------------------------------------------------ decision
    def _metrics(self, name: str) -> dict[str, Any]:
        if self._table is None:
            return {}
        row = next(r for r in self._table.rows if r["name"] == name)
        return {k: finite_or_none(v) for k, v in row.items() if k != "name"}

    def choose(
        self, name: str, *, by: str, rationale: str, when: str | datetime | None = None
    ) -> Any:
        """Record that the group chose ``name``, who decided, when and why.

        With a consequence run, the decision also keeps what it found for
        ``name`` (``decision["consequences"]``: the chosen candidate's output
        figures, the largest difference to another candidate and the sentence
        "We checked that the choice matters by X on output Y …").

        Parameters
        ----------
        name : str
            One of :attr:`names`.
        by : str
            Who decided (a person or a group).
        rationale : str
            Why, in words.
        when : str or datetime, optional
            When (UTC); default now. A naive datetime is taken as UTC.

        Returns
        -------
        FrozenDict
            The decision (also in :attr:`decision`), read-only.
        """
        text(name, field="name", max_len=MAX_NAME_CHARS)
        if name not in self.names:
            raise KeyError(
                f"No candidate named {quote(name)} to choose; the candidates are "
                f"{quote(list(self.names))}."
            )
        text(by, field="by", max_len=MAX_NAME_CHARS, empty=False)
        text(rationale, field="rationale", max_len=MAX_TEXT_CHARS, empty=False)
        stamp = _utc_stamp(when)
        chosen = self.candidate(name)
        others = [c for c in self.candidates if c.name != name]
        competitors = [{"name": c.name, **self._metrics(c.name)} for c in others]
        if self._table is None:
            for item, c in zip(competitors, others, strict=True):
                item["kind"] = c.kind
        checked: dict[str, Any] = {}
        if self._consequences is not None:
            checked["consequences"] = self._consequences.decision_record(name)
        self.decision = freeze(
            {
                "chosen": name,
                "kind": chosen.kind,
                "by": by,
                "when": stamp,
                "rationale": rationale,
                "level": self.level,
                "data": self._fingerprint,
                "metrics": self._metrics(name),
                "competitors": competitors,
                "how_written": chosen.note,
                **checked,
            }
        )
        return self.decision

    def chosen_spec(self) -> dict[str, Any]:
        """The chosen candidate's spec, with the decision in ``provenance.decision``.

        A fit is written as its sketch form, the resampled data as its exact
        step CDF. The spec's name is the review's ``name`` (else the
        candidate's), its units the review's (else the candidate's);
        ``provenance.data`` is the data's fingerprint; with a consequence run,
        ``provenance.decision.consequences`` says what the choice changes on
        the model's outputs. The spec passes :func:`cdfsketch.validate_spec`.
        """
        if self.decision is None:
            raise fail(
                "A chosen spec needs a decision",
                "nothing chosen yet",
                "Record the decision first: choose(name, by='...', rationale='...').",
                field="decision",
            )
        c = self.candidate(self.decision["chosen"])
        sk = c.sketch.replace(name=self.name or c.name, units=self.units or c.sketch.units)
        extra: dict[str, Any] = {"decision": thaw(self.decision)}
        if self._fingerprint is not None:
            extra["data"] = thaw(self._fingerprint)
        spec = sk.to_spec(**extra)
        validate_spec(spec)
        return spec


def _utc_stamp(when: str | datetime | None) -> str:
    """``when`` as an ISO 8601 UTC time to the second (now by default)."""
    if when is None:
        return datetime.now(UTC).isoformat(timespec="seconds")
    if isinstance(when, datetime):
        stamp = when if when.tzinfo else when.replace(tzinfo=UTC)
    elif isinstance(when, str):
        try:
            stamp = datetime.fromisoformat(when)
        except ValueError:
            raise fail(
                "when must be an ISO 8601 time",
                quote(when),
                "Pass e.g. when='2026-01-05T10:00:00+00:00' or a datetime.",
                field="when",
                value=when,
            ) from None
        stamp = stamp if stamp.tzinfo else stamp.replace(tzinfo=UTC)
    else:
        raise fail(
            "when must be an ISO 8601 string or a datetime",
            f"{type(when).__name__} {quote(when)}",
            "Pass e.g. when='2026-01-05T10:00:00+00:00'.",
            field="when",
            value=when,
        )
    return stamp.astimezone(UTC).isoformat(timespec="seconds")
