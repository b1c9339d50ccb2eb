"""Speeders: respondents who finished in strictly less than a fraction of the median time.

Completion time is the finish date-time minus the start date-time. There is no standard
cut-off; practitioners often use half the median, sometimes 30-40 % (METHODS.md §15). The
fraction is a setting (default 0.5) and the report states it. A finish before the start is
flagged as an error of the clock or the export, not as speed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from core.checks.flag import Context, Flag, Suggestion
from core.codebook import Codebook, Variable
from core.kinds import Kind
from core.ledger import Action

CHECK = "speeder"
_START = ("start", "begin", "began", "opened")
_FINISH = ("finish", "end", "submit", "complet", "done", "closed", "stop")


@dataclass(frozen=True)
class SpeederResult:
    """Median completion time, the cut-off (fraction x median) and who is under it."""

    median: float
    cutoff: float
    fraction: float
    speeders: np.ndarray  # bool per respondent; NaN times are never speeders


def find_speeders(seconds: np.ndarray, fraction: float = 0.5) -> SpeederResult:
    """Flag times strictly under ``fraction`` x the median of the positive times."""
    t = np.asarray(seconds, dtype=float)
    valid = t[~np.isnan(t) & (t > 0)]
    if len(valid) == 0:
        return SpeederResult(float("nan"), float("nan"), fraction, np.zeros(len(t), bool))
    median = float(np.median(valid))
    cutoff = fraction * median
    with np.errstate(invalid="ignore"):
        speeders = (t >= 0) & (t < cutoff)
    return SpeederResult(median, cutoff, fraction, speeders)


def time_variables(
    codebook: Codebook, start: str | None = None, finish: str | None = None
) -> tuple[Variable, Variable] | None:
    """The start and finish date columns: as set, else found by name or question text."""
    dates = [v for v in codebook if v.kind is Kind.DATE]
    by_name = {v.name: v for v in dates}
    s = by_name.get(start) if start else None
    f = by_name.get(finish) if finish else None

    def words(v: Variable) -> str:
        return f"{v.name} {v.question}".lower()

    if s is None:
        s = next((v for v in dates if any(w in words(v) for w in _START)), None)
    if f is None:
        f = next((v for v in dates if v is not s and any(w in words(v) for w in _FINISH)), None)
    if (s is None or f is None) and len(dates) == 2:
        s, f = dates
    if s is None or f is None or s is f:
        return None
    return s, f


def duration_text(seconds: float) -> str:
    seconds = int(round(seconds))
    if seconds < 60:
        return f"{seconds} s"
    minutes, secs = divmod(seconds, 60)
    if minutes < 60:
        return f"{minutes} min {secs} s" if secs else f"{minutes} min"
    hours, minutes = divmod(minutes, 60)
    return f"{hours} h {minutes} min"


def check(ctx: Context) -> list[Flag]:
    s = ctx.settings
    pair = time_variables(ctx.working.codebook, s.start_variable, s.finish_variable)
    if pair is None:
        return []
    start, finish = pair
    values = ctx.working.values
    if start.name not in values.columns or finish.name not in values.columns:
        return []
    if not ctx.wants([start.name, finish.name]):
        return []
    begin = pd.to_datetime(values[start.name], errors="coerce")
    end = pd.to_datetime(values[finish.name], errors="coerce")
    seconds = (end - begin).dt.total_seconds().to_numpy(dtype=float, na_value=np.nan, copy=True)
    seconds[~ctx.keep] = np.nan
    result = find_speeders(seconds, s.speeder_fraction)
    names = [start.name, finish.name]
    flags: list[Flag] = []
    pct = f"{s.speeder_fraction:.0%}"
    for row in np.flatnonzero(result.speeders):
        t = float(seconds[row])
        message = (
            f"Finished in {duration_text(t)}, under {pct} of the median completion time "
            f"({duration_text(result.median)}; cut-off {duration_text(result.cutoff)})."
        )
        flags.append(
            ctx.flag(
                CHECK,
                row,
                names,
                t,
                "warning",
                message,
                Suggestion(
                    Action.EXCLUDE,
                    None,
                    "Exclude only if other signs agree (straight-lining, many blanks); fast "
                    "readers exist.",
                ),
                {
                    "seconds": t,
                    "median": result.median,
                    "cutoff": result.cutoff,
                    "fraction": s.speeder_fraction,
                },
            )
        )
    with np.errstate(invalid="ignore"):
        backwards = np.flatnonzero(seconds < 0)
    for row in backwards:
        flags.append(
            ctx.flag(
                CHECK,
                row,
                names,
                float(seconds[row]),
                "error",
                f"{finish.name} is {duration_text(-float(seconds[row]))} before {start.name}: "
                "the times cannot both be right.",
                Suggestion(
                    None,
                    None,
                    "Check the export's clock or time zone; set the wrong "
                    "time to missing if it cannot be recovered.",
                ),
                {"seconds": float(seconds[row])},
            )
        )
    return flags
