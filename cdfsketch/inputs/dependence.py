"""Rank dependence between inputs: target checks, nearest correlation, Iman–Conover, copula.

A target is a mapping of name pairs to Spearman rank correlations. The
inputs named in any pair form the *dependent group*, always taken in sorted
name order (so the order in which inputs were given never changes a draw);
the other inputs stay independent and are never touched here.

* :func:`nearest_correlation` — the nearest correlation matrix in the
  Frobenius norm by alternating projections with Dykstra's correction
  (Higham 2002, "Computing the nearest correlation matrix — a problem from
  finance", IMA J. Numer. Anal. 22:329–343). Numpy only.
* :func:`iman_conover` — reorders each column of a block of uniforms so that
  their ranks follow van der Waerden scores with the target correlation
  (Iman & Conover 1982). Each input keeps exactly the values it was drawn
  with; only their pairing changes.
* :func:`gaussian_copula` — normal scores mixed by the factor of
  ``ρ = 2 sin(π ρ_S / 6)`` (the Pearson correlation of a bivariate normal
  whose Spearman correlation is ``ρ_S``), then mapped back to uniforms.

Iman–Conover and the copula load scipy (``scipy.special.ndtri``/``ndtr``)
when first called; the rest is numpy only.

Examples
--------
>>> m = np.array([[1.0, 0.9, 0.7], [0.9, 1.0, 0.3], [0.7, 0.3, 1.0]])
>>> bool(np.linalg.eigvalsh(m).min() < 0)
True
>>> near = nearest_correlation(m)
>>> bool(np.linalg.eigvalsh(near).min() > -1e-9), np.diag(near).tolist()
(True, [1.0, 1.0, 1.0])
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from .._validate import InputError, fail, number, quote, text

__all__ = [
    "check_rank_corr",
    "copula_correlation",
    "gaussian_copula",
    "iman_conover",
    "nearest_correlation",
    "nearest_rank_corr",
    "spearman",
]

#: An eigenvalue above ``-PSD_TOL`` counts as non-negative.
PSD_TOL = 1e-10


# ---------------------------------------------------------------- matrices


def _square(matrix: Any, field: str) -> np.ndarray:
    try:
        a = np.array(matrix, dtype=float)
    except (TypeError, ValueError):
        raise fail(
            f"{field} must be a square matrix of numbers",
            quote(matrix),
            "Pass a list of equal-length rows.",
            field=field,
            value=matrix,
        ) from None
    if a.ndim != 2 or a.shape[0] != a.shape[1] or not np.all(np.isfinite(a)):
        raise fail(
            f"{field} must be a square matrix of finite numbers",
            f"shape {a.shape}",
            "Pass a list of equal-length rows.",
            field=field,
            value=matrix,
        )
    return a


def nearest_correlation(matrix: Any, *, tol: float = 1e-12, max_iter: int = 10_000) -> np.ndarray:
    """The nearest correlation matrix (symmetric, unit diagonal, PSD) to ``matrix``.

    Alternating projections onto the positive semi-definite cone and the
    unit-diagonal set, with Dykstra's correction (Higham 2002, algorithm 3.3,
    unit weights). A matrix that is not symmetric is first replaced by its
    symmetric part.

    Parameters
    ----------
    matrix : array_like, shape (k, k)
        The matrix to repair.
    tol : float, optional
        Stop when successive iterates differ by less than ``tol`` (relative,
        Frobenius norm).
    max_iter : int, optional
        Most iterations.

    Returns
    -------
    ndarray
        The nearest correlation matrix (its smallest eigenvalue may be a
        rounding error below zero).

    Examples
    --------
    >>> nearest_correlation([[1, 1.2], [1.2, 1]]).round(6).tolist()
    [[1.0, 1.0], [1.0, 1.0]]
    """
    a = _square(matrix, "matrix")
    a = (a + a.T) / 2
    y = a.copy()
    ds = np.zeros_like(a)
    for _ in range(max_iter):
        r = y - ds
        w, v = np.linalg.eigh(r)
        x = (v * np.maximum(w, 0.0)) @ v.T
        ds = x - r
        y_new = (x + x.T) / 2
        np.fill_diagonal(y_new, 1.0)
        change = np.linalg.norm(y_new - y) / max(np.linalg.norm(y_new), 1.0)
        y = y_new
        if change < tol:
            break
    return y


def _factor(c: np.ndarray) -> np.ndarray:
    """A matrix ``L`` with ``L Lᵀ = c`` (Cholesky; eigenvalues clipped at 0 if singular)."""
    try:
        return np.linalg.cholesky(c)
    except np.linalg.LinAlgError:
        w, v = np.linalg.eigh((c + c.T) / 2)
        return v * np.sqrt(np.maximum(w, 0.0))


# ---------------------------------------------------------------- targets


def check_rank_corr(
    rank_corr: Mapping[Any, Any] | None, names: Sequence[str]
) -> tuple[dict[tuple[str, str], float], tuple[str, ...], np.ndarray]:
    """Read a Spearman target: canonical pairs, the dependent group, its target matrix.

    Pairs are keyed ``(a, b)`` with ``a < b``; giving both orders is allowed
    only with the same value. A target that is not a valid correlation matrix
    raises :class:`~cdfsketch._validate.InputError` quoting the nearest valid
    one (its attribute ``nearest`` holds it as pairs).

    Examples
    --------
    >>> pairs, group, m = check_rank_corr({("b", "a"): 0.5}, ["a", "b", "c"])
    >>> pairs, group, m.tolist()
    ({('a', 'b'): 0.5}, ('a', 'b'), [[1.0, 0.5], [0.5, 1.0]])
    """
    if rank_corr is None:
        return {}, (), np.eye(0)
    if not isinstance(rank_corr, Mapping):
        raise fail(
            "rank_corr must be a mapping of name pairs to Spearman correlations",
            type(rank_corr).__name__,
            "Pass e.g. rank_corr={('hours', 'cost'): 0.6}.",
            field="rank_corr",
            value=rank_corr,
        )
    known = set(names)
    pairs: dict[tuple[str, str], float] = {}
    for key, value in rank_corr.items():
        if not (isinstance(key, tuple) and len(key) == 2):
            raise fail(
                "rank_corr keys must be pairs of input names",
                quote(key),
                "Write e.g. ('hours', 'cost').",
                field="rank_corr",
                value=key,
            )
        for n in key:
            text(n, field="rank_corr name")
            if n not in known:
                raise fail(
                    "rank_corr must name inputs of the set",
                    quote(n),
                    f"Use one of {quote(sorted(known))}.",
                    field="rank_corr",
                    index=key,
                    value=n,
                )
        a, b = key
        if a == b:
            raise fail(
                "rank_corr pairs must name two different inputs",
                quote(key),
                "An input's correlation with itself is always 1; leave it out.",
                field="rank_corr",
                index=key,
                value=key,
            )
        v = number(value, field=f"rank_corr[{a!r}, {b!r}]", low=-1, high=1, example="0.6")
        canon = (a, b) if a < b else (b, a)
        if canon in pairs and pairs[canon] != v:
            raise fail(
                "rank_corr must be symmetric",
                f"{quote(canon)} given as {pairs[canon]!r} and {v!r}",
                "Give each pair once.",
                field="rank_corr",
                index=canon,
                value=v,
            )
        pairs[canon] = v
    group = tuple(sorted({n for pair in pairs for n in pair}))
    where = {n: i for i, n in enumerate(group)}
    m = np.eye(len(group))
    for (a, b), v in pairs.items():
        m[where[a], where[b]] = m[where[b], where[a]] = v
    if group and np.linalg.eigvalsh(m).min() < -PSD_TOL:
        near = nearest_correlation(m)
        shown = {(a, b): round(float(near[where[a], where[b]]), 4) for (a, b) in sorted(pairs)}
        err = fail(
            "rank_corr must form a valid correlation matrix (positive semi-definite)",
            f"smallest eigenvalue {np.linalg.eigvalsh(m).min():.4g}",
            "The nearest valid target (Higham 2002) is "
            f"{quote(shown, limit=400)}; pass that, or "
            "cdfsketch.inputs.nearest_rank_corr(rank_corr, names).",
            field="rank_corr",
            value=rank_corr,
        )
        err.nearest = shown  # type: ignore[attr-defined]
        raise err
    return pairs, group, m


def nearest_rank_corr(
    rank_corr: Mapping[Any, Any], names: Sequence[str] | None = None
) -> dict[tuple[str, str], float]:
    """The nearest valid Spearman target to ``rank_corr``, as pairs (Higham 2002).

    Examples
    --------
    >>> bad = {("a", "b"): 0.9, ("a", "c"): 0.9, ("b", "c"): -0.9}
    >>> fixed = nearest_rank_corr(bad)
    >>> sorted(fixed) == sorted(bad), round(fixed[("a", "b")], 3)
    (True, 0.5)
    """
    if names is None:
        names = sorted({str(n) for key in rank_corr for n in key})
    raw: dict[tuple[str, str], float] = {}
    for (a, b), v in rank_corr.items():
        raw[(a, b) if a < b else (b, a)] = float(v)
    group = tuple(sorted({n for pair in raw for n in pair}))
    where = {n: i for i, n in enumerate(group)}
    m = np.eye(len(group))
    for (a, b), v in raw.items():
        m[where[a], where[b]] = m[where[b], where[a]] = min(max(v, -1.0), 1.0)
    near = nearest_correlation(m)
    return {(a, b): float(near[where[a], where[b]]) for (a, b) in raw}


# ---------------------------------------------------------------- measuring


def _ranks(x: np.ndarray) -> np.ndarray:
    """Ranks 1..n with ties given their average rank (as ``scipy.stats.rankdata``)."""
    order = np.argsort(x, kind="stable")
    xs = x[order]
    starts = np.flatnonzero(np.r_[True, xs[1:] != xs[:-1]])
    counts = np.diff(np.r_[starts, xs.size])
    out = np.empty(x.size)
    out[order] = np.repeat(starts + (counts + 1) / 2.0, counts)
    return out


def spearman(columns: Sequence[np.ndarray]) -> np.ndarray:
    """Spearman rank correlation matrix of equal-length columns (average ranks for ties).

    Examples
    --------
    >>> spearman([np.array([1.0, 2, 3, 4]), np.array([1.0, 3, 2, 4])]).round(2).tolist()
    [[1.0, 0.8], [0.8, 1.0]]
    """
    cols = [np.asarray(c, dtype=float).ravel() for c in columns]
    if not cols or cols[0].size < 2:
        return np.full((len(cols), len(cols)), np.nan)
    r = np.vstack([_ranks(c) for c in cols])
    with np.errstate(invalid="ignore", divide="ignore"):
        out = np.corrcoef(r)
    return np.atleast_2d(out)


# ---------------------------------------------------------------- imposing


def _scipy_special() -> Any:
    from .._extras import need

    return need("fit", "scipy.special")


def iman_conover(u: np.ndarray, target: np.ndarray) -> np.ndarray:
    """Reorder each row of ``u`` (k inputs × m points): normal scores correlated as ``target``.

    Iman & Conover (1982): van der Waerden scores ``Φ⁻¹(i/(m+1))`` placed in
    the rank order of each row, decorrelated by their own sample
    correlation's Cholesky factor and mixed by ``target``'s (a Pearson matrix
    of the scores: pass :func:`copula_correlation` of a Spearman target to
    meet the Spearman values); each row of ``u`` is then rearranged to follow
    the ranks of the result. A row's values are kept exactly (only their
    order changes). Blocks with fewer than ``k + 2`` points are returned
    unchanged (their scores cannot be decorrelated).

    Examples
    --------
    >>> u = np.random.default_rng(1).random((2, 5000))
    >>> out = iman_conover(u, copula_correlation(np.array([[1, 0.7], [0.7, 1]])))
    >>> bool(np.array_equal(np.sort(out, axis=1), np.sort(u, axis=1)))
    True
    >>> round(float(spearman([out[0], out[1]])[0, 1]), 2)
    0.7
    """
    k, m = u.shape
    if m < k + 2 or k < 2:
        return u.copy()
    special = _scipy_special()
    scores = special.ndtri(np.arange(1, m + 1) / (m + 1.0))
    order_u = np.argsort(u, axis=1)  # rows are contiguous: fast sorts
    s = np.empty_like(u)
    for j in range(k):
        s[j, order_u[j]] = scores
    e = np.corrcoef(s)
    try:
        q = np.linalg.cholesky(e)
    except np.linalg.LinAlgError:
        return u.copy()
    t = _factor(target) @ np.linalg.solve(q, s)
    out = np.empty_like(u)
    for j in range(k):
        out[j, np.argsort(t[j])] = u[j, order_u[j]]
    return out


def copula_correlation(target: np.ndarray) -> np.ndarray:
    """The normal correlation ``2 sin(π ρ_S / 6)`` for a Spearman target (made PSD).

    Examples
    --------
    >>> round(float(copula_correlation(np.array([[1, 0.5], [0.5, 1]]))[0, 1]), 6)
    0.517638
    """
    r = 2.0 * np.sin(np.pi * np.asarray(target, dtype=float) / 6.0)
    np.fill_diagonal(r, 1.0)
    if r.size and np.linalg.eigvalsh(r).min() < -PSD_TOL:
        r = nearest_correlation(r)
    return r


def gaussian_copula(u: np.ndarray, target: np.ndarray) -> np.ndarray:
    """Uniforms (k inputs, m points) through a Gaussian copula with normal correlation ``target``.

    Normal scores ``Φ⁻¹(u)`` are mixed by the lower Cholesky factor of
    ``target`` (pass :func:`copula_correlation` of a Spearman target) and
    mapped back with ``Φ``. The first column
    keeps its values up to the rounding of ``Φ(Φ⁻¹(u))``; the others get new
    values (still uniform), so a Latin hypercube's strata survive only in it.

    Examples
    --------
    >>> u = np.random.default_rng(2).random((2, 20000))
    >>> out = gaussian_copula(u, copula_correlation(np.array([[1, 0.5], [0.5, 1]])))
    >>> round(float(spearman([out[0], out[1]])[0, 1]), 1)
    0.5
    """
    special = _scipy_special()
    return special.ndtr(_factor(target) @ special.ndtri(u))


def as_error(exc: InputError, field: str) -> InputError:
    """``exc`` with its field prefixed (for errors raised while reading a file)."""
    exc.field = f"{field}.{exc.field}" if exc.field else field
    return exc
