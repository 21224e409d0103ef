"""A review: the candidates for one input, the data they are judged against, and the decision.

:class:`Review` needs no widgets and no figures (numpy and the core, plus
scipy through :func:`cdfsketch.fit.compare` when data are given). Every value
is checked where it enters — candidate names, the review's name and units,
who decided and why — against the one limit table, so whatever a review
holds can later be saved. The decision is a read-only record.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from datetime import UTC, datetime
from typing import Any

import numpy as np

from .._frozen import freeze, thaw
from .._limits import MAX_NAME_CHARS, MAX_TEXT_CHARS, MAX_UNITS_CHARS
from .._progress import check_progress
from .._validate import fail, number, quote, text
from ..empirical import ECDF, as_data
from ..loading import validate_spec
from ..spec import data_fingerprint
from .candidates import ReviewCandidate, as_candidate, check_unique
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
        Progress of scoring the candidates against the data; see
        :func:`cdfsketch.fit.compare`.

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
            self.data = as_data(data)
            self.data.setflags(write=False)
            self._ecdf = ECDF(self.data)
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
        self.decision: Any = None

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
            }
        )
        return self.decision

    def chosen_spec(self) -> dict[str, Any]:
        """The chosen candidate's spec, with the decision in ``provenance.decision``.

        A fit is written as its sketch form, the resampled data as its exact
        step CDF. The spec's name is the review's ``name`` (else the
        candidate's), its units the review's (else the candidate's);
        ``provenance.data`` is the data's fingerprint. The spec passes
        :func:`cdfsketch.validate_spec`.
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
