"""The result of a consequence run: figures, standard errors, differences, verdicts.

An immutable value. Its tables are built for a *reference* candidate (the
chosen one; the first by default): every difference is "candidate minus
reference" on the same draws. Everything it hands out — :meth:`table`,
:meth:`summary_records`, :meth:`output_curves`, :meth:`decision_record` — is
plain Python (str, int, float, None, lists, dicts) ready for ``json.dumps``.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from .._frozen import freeze, thaw
from .._numfmt import figure
from .._validate import fail, quote
from .verdict import judge, overall, sentence

__all__ = ["Consequences"]


def _plain(v: Any) -> Any:
    """A float that JSON can carry (NaN and ±inf become None)."""
    f = float(v)
    return f if math.isfinite(f) else None


def qlabel(p: float) -> str:
    """Column name of a quantile, e.g. ``q0.9``."""
    return f"q{p:g}"


def tlabel(t: float) -> str:
    """Column name of an exceedance probability, e.g. ``p_above_100``."""
    return f"p_above_{t:g}"


class Consequences:
    """Candidates for one input pushed through a model, with common random numbers.

    Made by :func:`cdfsketch.consequences`; not constructed by hand.

    Attributes
    ----------
    vary : str
        The input whose candidates were compared.
    candidates : tuple of str
        The candidates' labels, in the order given.
    outputs : tuple of str
        The model's outputs (``"output"`` for a model returning one array; the
        varied input's name for the identity model).
    size : int
        Draws per candidate (the same draws for all of them).
    design : str
        The sampling design.
    quantiles : tuple of float
        The quantile levels reported.
    thresholds : mapping
        Output → the thresholds whose exceedance probability is reported.
    tolerance : mapping
        Output → the tolerance the verdicts use (0 when none was set: then any
        difference the draws can detect counts).
    judge : tuple of str
        The statistics the verdicts weigh (``"mean"``, ``"q0.9"``, …).
    reference : str
        The default reference candidate.
    method : mapping
        How the figures were computed (engine, block layout, quantile method
        and its error bound, confidence level, seed entropy).
    """

    __slots__ = (
        "_stats",
        "candidates",
        "design",
        "judge",
        "method",
        "outputs",
        "quantiles",
        "reference",
        "size",
        "thresholds",
        "tolerance",
        "vary",
    )

    def __init__(
        self,
        *,
        vary: str,
        candidates: Sequence[str],
        outputs: Sequence[str],
        size: int,
        design: str,
        quantiles: Sequence[float],
        thresholds: Mapping[str, Sequence[float]],
        tolerance: Mapping[str, float],
        judge: Sequence[str],
        reference: str,
        method: Mapping[str, Any],
        stats: Mapping[str, Mapping[str, Any]],
    ) -> None:
        for key, value in {
            "vary": vary,
            "candidates": tuple(candidates),
            "outputs": tuple(outputs),
            "size": int(size),
            "design": design,
            "quantiles": tuple(float(q) for q in quantiles),
            "thresholds": freeze({o: [float(t) for t in ts] for o, ts in thresholds.items()}),
            "tolerance": freeze({o: float(t) for o, t in tolerance.items()}),
            "judge": tuple(judge),
            "reference": reference,
            "method": freeze(dict(method)),
            "_stats": freeze({o: dict(s) for o, s in stats.items()}),
        }.items():
            object.__setattr__(self, key, value)

    def __setattr__(self, key: str, value: Any) -> None:
        raise AttributeError("A consequence result is read-only; run consequences() again.")

    def __repr__(self) -> str:
        head = (
            f"Consequences(vary={self.vary!r}, candidates={list(self.candidates)}, "
            f"size={self.size}, reference={self.reference!r})"
        )
        lines = [head]
        for o, text in self.verdicts().items():
            lines.append(f"  {o}: {text}")
        return "\n".join(lines)

    # ------------------------------------------------------------ lookups
    def _index(self, candidate: Any, field: str = "reference") -> int:
        if candidate is None:
            return self.candidates.index(self.reference)
        if isinstance(candidate, int) and not isinstance(candidate, bool):
            if -len(self.candidates) <= candidate < len(self.candidates):
                return candidate % len(self.candidates)
        elif isinstance(candidate, str) and candidate in self.candidates:
            return self.candidates.index(candidate)
        raise fail(
            f"{field} must name one of the candidates {list(self.candidates)} (or give its index)",
            quote(candidate),
            f"Pass e.g. {field}={self.candidates[0]!r}.",
            field=field,
            value=candidate,
        )

    def _output(self, output: Any) -> str:
        if output is None:
            return self.outputs[0]
        if isinstance(output, str) and output in self.outputs:
            return output
        raise fail(
            f"output must be one of {list(self.outputs)}",
            quote(output),
            f"Pass e.g. output={self.outputs[0]!r}.",
            field="output",
            value=output,
        )

    # ------------------------------------------------------------ figures
    def _row(self, o: str, c: int, r: int) -> dict[str, Any]:
        s = self._stats[o]
        n = s["n"]
        z = self.method["z"]
        var, pvar = s["var"], s["pair_var"]
        row: dict[str, Any] = {
            "candidate": self.candidates[c],
            "output": o,
            "reference": self.candidates[r],
            "n": n,
            "mean": _plain(s["mean"][c]),
            "mean_se": _plain(math.sqrt(var[c] / n)),
            "sd": _plain(math.sqrt(var[c])),
            "diff_mean": _plain(s["mean"][c] - s["mean"][r]),
            "diff_mean_se": _plain(math.sqrt(pvar[r][c] / n)),
            "crn_gain": (
                _plain((var[c] + var[r]) / pvar[r][c]) if c != r and pvar[r][c] > 0 else None
            ),
        }
        judged = []
        if "mean" in self.judge:
            judged.append((row["diff_mean"], row["diff_mean_se"]))
        sec = np.asarray(s["sec_q"])
        for k, p in enumerate(self.quantiles):
            lab = qlabel(p)
            row[lab] = _plain(s["q"][c][k])
            row[f"{lab}_se"] = _plain(s["q_se"][c][k])
            row[f"diff_{lab}"] = _plain(s["q"][c][k] - s["q"][r][k])
            d_sec = sec[:, c, k] - sec[:, r, k]
            se = (
                float(np.std(d_sec, ddof=1) / math.sqrt(d_sec.size)) if d_sec.size > 1 else math.nan
            )
            row[f"diff_{lab}_se"] = _plain(se)
            if lab in self.judge:
                judged.append((row[f"diff_{lab}"], row[f"diff_{lab}_se"]))
        row["quantile_error_bound"] = _plain(s["q_bound"])
        for k, t in enumerate(self.thresholds[o]):
            lab = tlabel(t)
            p_hat = s["exceed"][c][k] / n
            row[lab] = _plain(p_hat)
            row[f"{lab}_se"] = _plain(math.sqrt(p_hat * (1 - p_hat) / n))
            row[f"diff_{lab}"] = _plain(s["pair_exceed_mean"][r][c][k])
            row[f"diff_{lab}_se"] = _plain(math.sqrt(s["pair_exceed_var"][r][c][k] / n))
        if c == r:
            row["verdict_code"], row["verdict"], row["draws_needed"] = (
                "reference",
                "reference",
                None,
            )
        else:
            tol = self.tolerance[o]
            code, need = overall(
                [
                    judge(math.nan if d is None else d, math.nan if e is None else e, tol, n, z)
                    for d, e in judged
                ]
            )
            row["verdict_code"], row["verdict"], row["draws_needed"] = (
                code,
                sentence(code, need),
                need,
            )
        return row

    def table(self, reference: Any = None) -> list[dict[str, Any]]:
        """One plain dict per (candidate, output); differences are candidate − ``reference``.

        Columns: ``candidate``, ``output``, ``reference``, ``n``, ``mean``,
        ``mean_se``, ``sd``, ``diff_mean``, ``diff_mean_se``, ``crn_gain``
        (variance of the difference with independent streams over its variance
        with common random numbers: how many times fewer draws the pairing
        needs for the same standard error), per quantile ``q0.9``, ``q0.9_se``,
        ``diff_q0.9``, ``diff_q0.9_se``, ``quantile_error_bound``, per
        threshold ``p_above_T``, ``p_above_T_se``, ``diff_p_above_T``,
        ``diff_p_above_T_se``, and ``verdict`` (in words), ``verdict_code``
        (``"changes"``, ``"within"``, ``"cannot tell"`` or ``"reference"``),
        ``draws_needed``. Missing
        values are ``None``.
        """
        r = self._index(reference)
        return [self._row(o, c, r) for o in self.outputs for c in range(len(self.candidates))]

    def summary_records(self, reference: Any = None) -> list[dict[str, Any]]:
        """The table as JSON-ready records (as :meth:`table`; the stable name for displays)."""
        return self.table(reference)

    def to_pandas(self, reference: Any = None) -> Any:
        """The table as a :class:`pandas.DataFrame` (needs pandas)."""
        import pandas as pd

        return pd.DataFrame.from_records(self.table(reference))

    def verdicts(self, reference: Any = None) -> dict[str, str]:
        """Output → the verdict in words over all candidates against ``reference``."""
        r = self._index(reference)
        out: dict[str, str] = {}
        for o in self.outputs:
            rows = [self._row(o, c, r) for c in range(len(self.candidates)) if c != r]
            codes = [(row["verdict_code"], row["draws_needed"]) for row in rows]
            out[o] = sentence(*overall(codes)) if codes else "only one candidate"
        return out

    def output_curves(self, points: int = 201, output: Any = None) -> dict[str, dict[str, list]]:
        """Per candidate, the output's CDF as ``{"x": [...], "p": [...]}`` (plain lists).

        ``p`` runs from 0 to 1 in ``points`` even steps; ``x`` is the output's
        quantile there (from all draws in memory, from the histogram on Dask).
        """
        from .._validate import integer

        k = integer(points, field="points", low=2, high=100_000, example="points=201")
        o = self._output(output)
        s = self._stats[o]
        if np.asarray(s["curve_x"]).shape[1] == 0:
            raise fail(
                "output_curves needs the output's distribution",
                "a run on Dask with quantiles=() (no histogram was made)",
                "Run again with quantiles, e.g. quantiles=(0.5, 0.9).",
                field="quantiles",
            )
        grid = np.linspace(0.0, 1.0, k)
        out = {}
        for c, label in enumerate(self.candidates):
            x, p = np.asarray(s["curve_x"][c]), np.asarray(s["curve_p"][c])
            xs = np.interp(grid, p, x)
            out[label] = {"x": [float(v) for v in xs], "p": [float(v) for v in grid]}
        return out

    def decision_record(self, chosen: Any) -> dict[str, Any]:
        """What the spec's provenance keeps: the chosen one's figures, the largest difference.

        Differences are the other candidates minus ``chosen`` on the same
        draws; "largest" is the largest in units of the chosen candidate's sd
        across outputs, means and quantiles.
        """
        r = self._index(chosen, "chosen")
        rows = self.table(r)
        mine = {row["output"]: row for row in rows if row["candidate"] == self.candidates[r]}
        stats = ["mean", *(qlabel(p) for p in self.quantiles)]
        best: dict[str, Any] | None = None
        for row in rows:
            if row["candidate"] == self.candidates[r]:
                continue
            sd = mine[row["output"]]["sd"] or 1.0
            for st in stats:
                d = row[f"diff_{st}"]
                if d is None:
                    continue
                if best is None or abs(d) / sd > best["_scaled"]:
                    best = {
                        "_scaled": abs(d) / sd,
                        "output": row["output"],
                        "statistic": st,
                        "candidate": row["candidate"],
                        "difference": d,
                        "se": row[f"diff_{st}_se"],
                        "verdict": row["verdict"],
                    }
        skip = {"candidate", "output", "reference", "crn_gain", "verdict", "verdict_code"}
        figures = {
            o: {
                k: v
                for k, v in row.items()
                if k not in skip and k != "draws_needed" and not k.startswith("diff_")
            }
            for o, row in mine.items()
        }
        record: dict[str, Any] = {
            "check": "consequences",
            "vary": self.vary,
            "chosen": self.candidates[r],
            "candidates": list(self.candidates),
            "size": self.size,
            "design": self.design,
            "tolerance": dict(thaw(self.tolerance)),
            "figures": figures,
            "verdicts": self.verdicts(r),
            "method": thaw(self.method),
        }
        if best is None:
            record["largest_difference"] = None
            record["statement"] = f"Only {self.candidates[r]!r} was run through the model."
        else:
            best.pop("_scaled")
            record["largest_difference"] = best
            record["statement"] = (
                f"We checked that the choice matters by {figure(best['difference'])} "
                f"(± {figure(best['se'])}) on output {best['output']!r} ({best['statistic']}, "
                f"{best['candidate']!r} minus the chosen {self.candidates[r]!r}; {self.size:,} "
                f"draws, common random numbers): {best['verdict']}."
            )
        return record
