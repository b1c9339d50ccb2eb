"""Little's test of "missing completely at random" (MCAR) over a set of numeric items.

Little (1988) compares the mean of the observed values in every missing-data pattern with the
overall maximum-likelihood mean. If the gaps are unrelated to any answer, those pattern means
differ only by chance, and the weighted sum of squared differences follows a chi-square
distribution. The mean and covariance are estimated by the EM algorithm under multivariate
normality (ML covariance, dividing by n), as in the published description.

Source: Little, R. J. A. (1988), "A test of missing completely at random for multivariate
data with missing values", JASA 83(404): 1198-1202 (METHODS.md section 4).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy import stats

from core.errors import PlaincountError
from core.kinds import Kind

# Kinds whose answers can be read as numbers: numbers as they are, ordered levels by their
# place on the scale (1, 2, 3, ...). The reading() text says that this is an assumption.
MCAR_KINDS = (Kind.NUMERIC, Kind.LIKERT, Kind.ORDINAL)


@dataclass(frozen=True)
class MCARResult:
    """Outcome of Little's test; ``p_value`` is None when nothing is missing (df = 0)."""

    statistic: float
    df: int
    p_value: float | None
    patterns: int
    n_used: int
    variables: tuple[str, ...] = ()
    iterations: int = 0
    converged: bool = True
    n_rows: int = 0
    notes: tuple[str, ...] = field(default_factory=tuple)

    def reading(self, alpha: float = 0.05) -> str:
        """A plain-language interpretation, with what the test cannot say."""
        items = ", ".join(self.variables) if self.variables else "the chosen items"
        head = (
            f"Little's test of 'missing completely at random' over {items} "
            f"({self.n_used} respondents with at least one answer, {self.patterns} "
            f"missing-data pattern{'s' if self.patterns != 1 else ''}): "
        )
        limits = (
            " Limits: the test cannot tell whether the gaps depend on other answers "
            "(missing at random) or on the missing answers themselves (missing not at "
            "random); it assumes the items are roughly normally distributed, and rating "
            "scales were scored 1, 2, 3, ... as if they were numbers; with few respondents "
            "it misses real patterns, and with many it flags trivial ones."
        )
        if self.p_value is None:
            return head + "nothing is missing in these items, so there is nothing to test."
        figures = f"d² = {self.statistic:.2f}, df = {self.df}, p = {_p_text(self.p_value)}. "
        if self.p_value < alpha:
            body = (
                "The gaps are unlikely to be purely random: respondents who skipped some of "
                "these items differ, on the answers they did give, from those who did not. "
                "Results that use only complete answers may be biased; say so in the report "
                "and compare the groups before trusting a single figure."
            )
        else:
            body = (
                "There is no clear evidence against purely random gaps. This does not prove "
                "the gaps are random: the test only looks at the answers that were given, "
                "and a large p-value can simply reflect too little data."
            )
        return head + figures + body + limits

    def to_json(self) -> dict[str, object]:
        return {
            "statistic": self.statistic,
            "df": self.df,
            "p_value": self.p_value,
            "patterns": self.patterns,
            "n_used": self.n_used,
            "variables": list(self.variables),
            "iterations": self.iterations,
            "converged": self.converged,
            "reading": self.reading(),
        }


def _p_text(p: float) -> str:
    return "< 0.001" if p < 0.001 else f"{p:.3f}"


def em_mean_cov(
    data: np.ndarray, tol: float = 1e-10, max_iter: int = 10_000
) -> tuple[np.ndarray, np.ndarray, int, bool]:
    """Maximum-likelihood mean and covariance of multivariate-normal data with gaps (EM).

    ``data`` is n x p with NaN for missing cells and no all-missing rows. The covariance
    divides by n (ML), which Little's statistic requires. Iteration stops when no mean or
    covariance entry moves by more than ``tol`` (relative to its size); a tight tolerance
    keeps the statistic independent of the stopping rule (METHODS.md appendix B.5).
    """
    n, p = data.shape
    observed = ~np.isnan(data)
    mu = np.nanmean(data, axis=0)
    sigma = np.diag(np.nanvar(data, axis=0))
    masks, inverse = np.unique(observed, axis=0, return_inverse=True)
    groups = [np.flatnonzero(inverse.ravel() == k) for k in range(len(masks))]
    converged = False
    iteration = 0
    for iteration in range(1, max_iter + 1):  # noqa: B007 - the count is reported
        sum_x = np.zeros(p)
        sum_xx = np.zeros((p, p))
        for mask, rows in zip(masks, groups):
            block = data[rows]
            o = np.flatnonzero(mask)
            m = np.flatnonzero(~mask)
            filled = block.copy()
            if m.size:
                s_oo = sigma[np.ix_(o, o)]
                s_mo = sigma[np.ix_(m, o)]
                coef = np.linalg.solve(s_oo, s_mo.T).T  # S_MO S_OO^-1
                filled[:, m] = mu[m] + (block[:, o] - mu[o]) @ coef.T
                cond = sigma[np.ix_(m, m)] - coef @ s_mo.T
                sum_xx[np.ix_(m, m)] += len(rows) * cond
            sum_x += filled.sum(axis=0)
            sum_xx += filled.T @ filled
        new_mu = sum_x / n
        new_sigma = sum_xx / n - np.outer(new_mu, new_mu)
        change = max(
            np.max(np.abs(new_mu - mu) / (np.abs(mu) + 1.0)),
            np.max(np.abs(new_sigma - sigma) / (np.abs(sigma) + 1.0)),
        )
        mu, sigma = new_mu, new_sigma
        if change < tol:
            converged = True
            break
    return mu, sigma, iteration, converged


def little_mcar(frame: pd.DataFrame, tol: float = 1e-10) -> MCARResult:
    """Little's MCAR test over the numeric columns of ``frame`` (NaN = missing).

    Rows with every value missing are counted as a pattern but contribute nothing: they have
    no observed mean to compare.
    """
    if frame.shape[1] < 2:
        raise PlaincountError("Little's test needs at least two items; choose more.")
    try:
        data = frame.apply(pd.to_numeric, errors="raise").to_numpy(dtype=float)
    except (ValueError, TypeError):
        raise PlaincountError(
            "Little's test works on numbers and rating scales only; one of the chosen items "
            "holds text."
        ) from None
    names = tuple(str(c) for c in frame.columns)
    observed = ~np.isnan(data)
    all_masks = np.unique(observed, axis=0)
    n_patterns = len(all_masks)
    keep = observed.any(axis=1)
    used = data[keep]
    if len(used) < 3:
        raise PlaincountError("Little's test needs at least three respondents with answers.")
    for j, name in enumerate(names):
        col = used[:, j]
        col = col[~np.isnan(col)]
        if len(col) < 2:
            raise PlaincountError(
                f"{name} has fewer than two answers, so Little's test cannot use it."
            )
        if np.ptp(col) == 0:
            raise PlaincountError(
                f"Every answer to {name} is the same, so Little's test cannot use it; leave it out."
            )
    p = used.shape[1]
    try:
        mu, sigma, iterations, converged = em_mean_cov(used, tol=tol)
    except np.linalg.LinAlgError:
        raise PlaincountError(
            "The chosen items are too closely related (one is a copy or sum of others), so "
            "Little's test cannot be computed; leave one of them out."
        ) from None
    obs_used = ~np.isnan(used)
    masks, inverse = np.unique(obs_used, axis=0, return_inverse=True)
    d2 = 0.0
    sum_pj = 0
    for k, mask in enumerate(masks):
        rows = used[inverse.ravel() == k]
        o = np.flatnonzero(mask)
        diff = rows[:, o].mean(axis=0) - mu[o]
        try:
            d2 += len(rows) * float(diff @ np.linalg.solve(sigma[np.ix_(o, o)], diff))
        except np.linalg.LinAlgError:
            raise PlaincountError(
                "The chosen items are too closely related for Little's test; leave one out."
            ) from None
        sum_pj += len(o)
    df = sum_pj - p
    notes: list[str] = []
    if not converged:
        notes.append("The estimation did not settle fully; treat the figures as approximate.")
    p_value = float(stats.chi2.sf(d2, df)) if df > 0 else None
    return MCARResult(
        statistic=float(d2),
        df=int(df),
        p_value=p_value,
        patterns=int(n_patterns),
        n_used=int(len(used)),
        variables=names,
        iterations=iterations,
        converged=converged,
        n_rows=int(len(data)),
        notes=tuple(notes),
    )


def mcar_frame(working: object, variables: Sequence[str]) -> pd.DataFrame:
    """The chosen items of working data as numbers (levels scored 1..k), excluded rows left out.

    Raises a plain error for unknown items or kinds that cannot be read as numbers.
    """
    values, _ = working.analysed()  # type: ignore[attr-defined]
    codebook = working.codebook  # type: ignore[attr-defined]
    out: dict[str, pd.Series] = {}
    for name in variables:
        var = codebook[name]
        if var.name not in values.columns:
            raise PlaincountError(f"{name} has no data in this wave.")
        if var.kind not in MCAR_KINDS:
            raise PlaincountError(
                f"{name} is a {var.kind.label.lower()} question; Little's test needs numbers "
                "or rating scales."
            )
        col = values[var.name]
        if var.kind.has_levels:
            codes = pd.Series(
                pd.Categorical(col, categories=list(var.levels)).codes, index=col.index
            )
            out[name] = codes.where(codes >= 0).astype(float) + 1.0
        else:
            out[name] = pd.to_numeric(col, errors="coerce").astype(float)
    return pd.DataFrame(out)


def little_mcar_for(working: object, variables: Sequence[str]) -> MCARResult:
    """Little's test over chosen items of a wave's working data."""
    names = list(dict.fromkeys(v.strip() for v in variables if v and v.strip()))
    return little_mcar(mcar_frame(working, names))
