"""The comparison table: one row of scores per candidate, with what each column means."""

from __future__ import annotations

import csv
import html
import io
import math
from collections.abc import Iterable, Sequence
from typing import Any

import numpy as np

from .._files import check_output_path, write_text
from .._numfmt import significant
from .._validate import quote

__all__ = ["COLUMNS", "ComparisonTable", "format_cell"]

COLUMNS = (
    "name",
    "kind",
    "n_params",
    "aic",
    "bic",
    "ks",
    "ad",
    "cvm",
    "w1",
    "crps",
    "dkw_excursion",
    "holdout_fit",
    "log_score",
    "n_outside",
    "n_at_atoms",
    "crps_holdout",
    "ks_holdout",
    "ks_holdout_pvalue",
)

_COLUMN_NOTES = {
    "ks": "Kolmogorov–Smirnov distance to all the data (a distance: no p-value, the "
    "candidates were fitted or tuned on these data)",
    "ad": "Anderson–Darling statistic on all the data (distance only)",
    "cvm": "Cramér–von Mises statistic on all the data (distance only)",
    "w1": "1-Wasserstein distance ∫|F - F_n| dx",
    "crps": "mean CRPS on all the data (Gneiting & Raftery 2007)",
    "dkw_excursion": "largest distance outside the DKW band (≤ 0: inside)",
    "holdout_fit": "how the held-out score was made",
    "log_score": "mean log density of the held-out points under the training fit "
    "(-inf if any held-out point has zero density; see n_outside)",
    "n_outside": "held-out points with zero density (outside the support, in a gap, or, for "
    "the resampled data, not equal to a training value)",
    "n_at_atoms": "held-out points scored by an atom's mass (mixed density: counting measure "
    "at atoms, Lebesgue elsewhere; not comparable with a density value)",
    "crps_holdout": "mean CRPS of the held-out points under the training fit",
    "ks_holdout": "KS distance of the held-out points to the training fit",
    "ks_holdout_pvalue": "exact KS p-value (scipy.stats.ks_1samp) of the held-out points "
    "against a continuous candidate refit on the training split only; empty where "
    "not valid",
}


def format_cell(v: Any) -> str:
    """A table cell as shown to people: 6 significant digits (see :mod:`cdfsketch._numfmt`).

    Examples
    --------
    >>> format_cell(0.123456789), format_cell(float("-inf")), format_cell(None), format_cell(3)
    ('0.123457', '−∞', '–', '3')
    """
    if v is None or isinstance(v, float | np.floating):
        return significant(v, 6)
    return str(v)


def _csv_cell(v: Any) -> str:
    """A table cell for a file: full precision, ``inf``/``-inf``, empty for missing."""
    if v is None or (isinstance(v, float | np.floating) and math.isnan(v)):
        return ""
    if isinstance(v, float | np.floating):
        return repr(float(v))
    return str(v)


class ComparisonTable:
    """Rows of metrics, one per candidate; renders as HTML in a notebook.

    Attributes
    ----------
    rows : list of dict
        One dict per candidate, keyed by :attr:`columns`.
    columns : tuple of str
        Column names.
    notes : dict
        What each column means and when its p-value is valid.
    info : dict
        ``n``, ``n_train``, ``n_test``, ``level``, ``eps`` (the DKW half-width).
    """

    def __init__(
        self,
        rows: Iterable[dict[str, Any]],
        *,
        columns: Sequence[str] = COLUMNS,
        info: dict[str, Any] | None = None,
    ) -> None:
        self.columns = tuple(columns)
        self.rows = [dict(r) for r in rows]
        self.notes = {k: v for k, v in _COLUMN_NOTES.items() if k in self.columns}
        self.info = dict(info or {})

    def __len__(self) -> int:
        return len(self.rows)

    def column(self, name: str) -> list[Any]:
        """The values of one column."""
        self._check_column(name)
        return [r[name] for r in self.rows]

    def _check_column(self, name: str) -> None:
        if name not in self.columns:
            raise KeyError(f"No column {quote(name)}; the columns are {list(self.columns)}.")

    def sort_by(self, column: str, *, ascending: bool = True) -> ComparisonTable:
        """A new table sorted by ``column``; missing values (None, NaN) go last.

        Examples
        --------
        >>> t = ComparisonTable([{"name": "a", "ks": 0.3}, {"name": "b", "ks": 0.1}],
        ...                     columns=("name", "ks"))
        >>> [r["name"] for r in t.sort_by("ks").rows]
        ['b', 'a']
        """
        self._check_column(column)

        def missing(v: Any) -> bool:
            return v is None or (isinstance(v, float) and math.isnan(v))

        have = [r for r in self.rows if not missing(r[column])]
        rest = [r for r in self.rows if missing(r[column])]
        have.sort(key=lambda r: r[column], reverse=not ascending)
        return ComparisonTable(have + rest, columns=self.columns, info=self.info)

    def __repr__(self) -> str:
        body = [[format_cell(r[c]) for c in self.columns] for r in self.rows]
        cells = [list(self.columns), *body]
        widths = [max(len(row[j]) for row in cells) for j in range(len(self.columns))]
        lines = ["  ".join(s.ljust(wd) for s, wd in zip(row, widths, strict=True)) for row in cells]
        return "\n".join(lines)

    def _repr_html_(self) -> str:
        head = "".join(
            f'<th title="{html.escape(self.notes.get(c, ""))}">{html.escape(c)}</th>'
            for c in self.columns
        )
        body = "".join(
            "<tr>"
            + "".join(f"<td>{html.escape(format_cell(r[c]))}</td>" for c in self.columns)
            + "</tr>"
            for r in self.rows
        )
        info = ", ".join(
            f"{html.escape(str(k))}={html.escape(str(v))}" for k, v in self.info.items()
        )
        return (
            f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"
            f"<p>{info}. Hover a column name for its meaning; p-values appear only where "
            "valid.</p>"
        )

    def to_pandas(self) -> Any:
        """A ``pandas.DataFrame`` (pandas must be installed; it is not a dependency)."""
        try:
            import pandas as pd
        except ImportError:
            raise ImportError(
                "to_pandas() needs pandas, which is not a dependency of cdfsketch. Install it "
                "with `pip install pandas`, or use .rows / .to_csv()."
            ) from None
        return pd.DataFrame(self.rows, columns=list(self.columns))

    def to_csv(self, path: Any) -> None:
        """Write the table as CSV (full precision, ``inf``/``-inf`` as text, missing empty).

        The file is written atomically: all of it or nothing.
        """
        target = check_output_path(path, suffixes=(".csv",), what="CSV file")
        buf = io.StringIO(newline="")
        out = csv.writer(buf)
        out.writerow(self.columns)
        for r in self.rows:
            out.writerow([_csv_cell(r[c]) for c in self.columns])
        write_text(target, buf.getvalue())
