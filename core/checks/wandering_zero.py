"""Wandering zero or misplaced decimal: 120 typed for 12, 400 for 40.

A value is flagged when it is far above the variable's typical answers (beyond Q3 + 3 IQR,
Tukey's "far out", and at least 3 times the median) while its tenth or
hundredth lies among the usual answers (from the 5th percentile up to Tukey's inner fence
Q3 + 1.5 IQR); when both the tenth and the hundredth do, the one nearer the median (as a
ratio) is suggested. For whole-number variables
the value must end in the dropped zero(s). The thresholds are a rule of thumb of our own
(common practice, no source); the suggestion is the value divided by 10 or 100.
"""

from __future__ import annotations

import numpy as np

from core.checks.flag import Context, Flag, Suggestion, show_number
from core.ledger import Action

CHECK = "wandering_zero"
FACTORS = (10, 100)


def candidates(
    x: np.ndarray, method: str = "linear", quantiles: dict[float, float] | None = None
) -> dict[int, float]:
    """Positions (into ``x``) of likely wandering zeros, with the suggested value.

    ``quantiles`` passes the 5th, 25th, 50th and 75th percentiles already computed.
    """
    data = np.asarray(x, dtype=float)
    answered = data[~np.isnan(data)]
    if len(answered) == 0:
        return {}
    if quantiles is None:
        probs = (0.05, 0.25, 0.5, 0.75)
        quantiles = dict(zip(probs, np.quantile(answered, probs, method=method)))
    p5, q1, median, q3 = (float(quantiles[p]) for p in (0.05, 0.25, 0.5, 0.75))
    whole = bool(np.all(answered == np.round(answered)))
    floor = max(q3 + 3 * (q3 - q1), 3 * median)
    top = q3 + 1.5 * (q3 - q1)
    centre = median if median > 0 else max(q3, 1.0)
    out: dict[int, float] = {}
    with np.errstate(invalid="ignore"):
        high = np.flatnonzero(data > floor)
    for i in high:
        value = float(data[i])
        fits = [
            value / f
            for f in FACTORS
            if not (whole and value % f != 0) and value / f > 0 and p5 <= value / f <= top
        ]
        if fits:
            out[int(i)] = min(fits, key=lambda v: abs(np.log(v / centre)))
    return out


def check(ctx: Context) -> list[Flag]:
    flags: list[Flag] = []
    for var, x in ctx.numeric_columns():
        method = ctx.settings.quantile_method
        for row, smaller in candidates(x, method, ctx.quantiles(var.name, method)).items():
            value = float(x[row])
            factor = round(value / smaller)
            message = (
                f"{var.name} is {show_number(value)}, about {factor} times a typical answer; "
                f"{show_number(smaller)} would be typical (a zero typed too many or a "
                "misplaced decimal point?)."
            )
            flags.append(
                ctx.flag(
                    CHECK,
                    row,
                    [var.name],
                    value,
                    "warning",
                    message,
                    Suggestion(
                        Action.CORRECT,
                        smaller,
                        f"Correct to {show_number(smaller)} after checking the source.",
                    ),
                    {"factor": factor, "suggested": smaller},
                )
            )
    return flags
