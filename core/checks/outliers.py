"""Outliers on numeric variables: Tukey's fences or the modified z-score (evaluator's choice).

Tukey (1977), *Exploratory Data Analysis*: values beyond Q1 - 1.5 IQR or Q3 + 1.5 IQR are
"outside", beyond 3 IQR "far out". Quartiles here are sample quantiles of a stated
Hyndman & Fan (1996) type, by default type 7 (numpy's ``method="linear"``), and every message
says which. Iglewicz & Hoaglin (1993), *How to Detect and Handle Outliers*, §3.3:
M = 0.6745 (x - median) / MAD with the raw median absolute deviation; |M| > 3.5 is a
potential outlier. When more than half the answers are equal, MAD = 0 and M is undefined:
the check then says "not computable" instead of dividing by zero (METHODS.md §2-3).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from core.checks.flag import Context, Flag, Suggestion, show_number
from core.checks.settings import QUANTILE_TYPES
from core.ledger import Action

CHECK = "outlier"
Z_CONSTANT = 0.6745  # Φ⁻¹(0.75) rounded as Iglewicz & Hoaglin print it


@dataclass(frozen=True)
class Fences:
    """Quartiles, IQR and the inner and outer fences of one variable."""

    q1: float
    q3: float
    iqr: float
    inner_lo: float
    inner_hi: float
    outer_lo: float
    outer_hi: float
    method: str
    quantile_type: int


def tukey_fences(
    x: np.ndarray,
    method: str = "linear",
    inner: float = 1.5,
    outer: float = 3.0,
    quartiles: tuple[float, float] | None = None,
) -> Fences:
    """Tukey's fences from quartiles computed with numpy ``method=`` (type 7 by default).

    ``quartiles`` passes (Q1, Q3) already computed with the same method.
    """
    if quartiles is None:
        data = np.asarray(x, dtype=float)
        data = data[~np.isnan(data)]
        q1, q3 = (float(q) for q in np.quantile(data, [0.25, 0.75], method=method))
    else:
        q1, q3 = quartiles
    iqr = q3 - q1
    return Fences(
        q1,
        q3,
        iqr,
        q1 - inner * iqr,
        q3 + inner * iqr,
        q1 - outer * iqr,
        q3 + outer * iqr,
        method,
        QUANTILE_TYPES[method],
    )


def tukey_labels(x: np.ndarray, fences: Fences) -> np.ndarray:
    """Per value: "" (inside), "outside" (beyond an inner fence) or "far out" (beyond an
    outer fence). Missing values get ""."""
    data = np.asarray(x, dtype=float)
    out = np.full(len(data), "", dtype=object)
    with np.errstate(invalid="ignore"):
        outside = (data < fences.inner_lo) | (data > fences.inner_hi)
        far = (data < fences.outer_lo) | (data > fences.outer_hi)
    out[outside] = "outside"
    out[far] = "far out"
    return out


@dataclass(frozen=True)
class ModifiedZ:
    """Modified z-scores of one variable, or why they cannot be computed."""

    median: float
    mad: float
    scores: np.ndarray | None  # None when not computable
    computable: bool
    message: str


def modified_z(x: np.ndarray, threshold: float = 3.5) -> ModifiedZ:
    """M_i = 0.6745 (x_i - median) / MAD (raw MAD), NaN kept as NaN.

    With MAD = 0 (more than half the answers equal) the score is undefined; the result then
    has ``computable=False`` and a plain message, never a division by zero.
    """
    data = np.asarray(x, dtype=float)
    answered = data[~np.isnan(data)]
    median = float(np.median(answered))
    mad = float(np.median(np.abs(answered - median)))
    if mad == 0:
        return ModifiedZ(
            median,
            mad,
            None,
            False,
            "not computable: more than half of the answers are the same value, so the "
            "median absolute deviation is 0",
        )
    scores = Z_CONSTANT * (data - median) / mad
    return ModifiedZ(median, mad, scores, True, f"potential outlier when |M| > {threshold:g}")


def check(ctx: Context) -> list[Flag]:
    settings = ctx.settings
    flags: list[Flag] = []
    for var, x in ctx.numeric_columns():
        if settings.outlier_method == "tukey":
            flags += _tukey(ctx, var.name, x, settings)
        else:
            flags += _modified_z(ctx, var.name, x, settings)
    return flags


def _suggestion() -> Suggestion:
    return Suggestion(Action.KEEP, None, "Check the source; keep it as is if it is real.")


def _tukey(ctx: Context, name: str, x: np.ndarray, settings) -> list[Flag]:  # noqa: ANN001
    q = ctx.quantiles(name, settings.quantile_method)
    f = tukey_fences(
        x,
        settings.quantile_method,
        settings.tukey_inner,
        settings.tukey_outer,
        quartiles=(q[0.25], q[0.75]),
    )
    if f.iqr == 0:
        ctx.notes.append(
            f"Tukey's fences were not used on {name}: the middle half of its answers are "
            f"all {show_number(f.q1)} (interquartile range 0), so every other value would "
            "count as an outlier."
        )
        return []
    labels = tukey_labels(x, f)
    how = (
        f"quartiles Q1 = {show_number(f.q1)}, Q3 = {show_number(f.q3)}, IQR = "
        f"{show_number(f.iqr)} (Hyndman & Fan type {f.quantile_type})"
    )
    out = []
    for row in np.flatnonzero(labels != ""):
        value = float(x[row])
        far = labels[row] == "far out"
        high = value > f.q3
        mult = settings.tukey_outer if far else settings.tukey_inner
        fence = (
            (f.outer_hi if high else f.outer_lo) if far else (f.inner_hi if high else f.inner_lo)
        )
        message = (
            f"{name} is {show_number(value)}: {labels[row]}, beyond the fence at "
            f"{show_number(fence)} ({show_number(mult)} x IQR {'above Q3' if high else 'below Q1'}"
            f"; {how})."
        )
        out.append(
            ctx.flag(
                CHECK,
                row,
                [name],
                value,
                "warning" if far else "note",
                message,
                _suggestion(),
                {
                    "method": "tukey",
                    "label": labels[row],
                    "q1": f.q1,
                    "q3": f.q3,
                    "iqr": f.iqr,
                    "fence": fence,
                    "quantile_type": f.quantile_type,
                },
            )
        )
    return out


def _modified_z(ctx: Context, name: str, x: np.ndarray, settings) -> list[Flag]:  # noqa: ANN001
    z = modified_z(x, settings.z_threshold)
    if not z.computable or z.scores is None:
        ctx.notes.append(f"Modified z-scores of {name} are {z.message}.")
        return []
    out = []
    with np.errstate(invalid="ignore"):
        hits = np.flatnonzero(np.abs(z.scores) > settings.z_threshold)
    for row in hits:
        value, score = float(x[row]), float(z.scores[row])
        message = (
            f"{name} is {show_number(value)}: modified z-score {score:.2f}, beyond "
            f"±{show_number(settings.z_threshold)} (median {show_number(z.median)}, median "
            f"absolute deviation {show_number(z.mad)}; Iglewicz & Hoaglin)."
        )
        out.append(
            ctx.flag(
                CHECK,
                row,
                [name],
                value,
                "warning",
                message,
                _suggestion(),
                {"method": "modified_z", "score": score, "median": z.median, "mad": z.mad},
            )
        )
    return out
