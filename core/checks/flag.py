"""Flags (one finding of a check) and what each check run shares: the context and helpers.

A flag names the respondent both by raw-table position (``row``, 0-based, which the ledger
uses) and by the value of the wave's identifier (``respondent``, or the 1-based row number
when the wave has no identifier), so a view can jump to the row and a person can read it.
"""

from __future__ import annotations

import datetime as _dt
import math
import threading
import weakref
from collections.abc import Iterable, Iterator, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from core.decoding import cell_texts, format_number
from core.kinds import Kind, MissingReason
from core.ledger import Action

SEVERITIES = ("error", "warning", "note")

# Check ids (shared contract) in the order a flag list shows them, with plain labels.
CHECK_LABELS: dict[str, str] = {
    "invalid": "Not a valid answer",
    "range": "Outside the plausible range",
    "wandering_zero": "Wandering zero",
    "outlier": "Outlier",
    "consistency": "Consistency rule broken",
    "duplicate_id": "Same identifier more than once",
    "duplicate_row": "Identical answer rows",
    "straightlining": "Straight-lining",
    "reversed_scale": "Reversed scale",
    "speeder": "Speeder",
}
CHECK_IDS: tuple[str, ...] = tuple(CHECK_LABELS)


@dataclass(frozen=True)
class Suggestion:
    """What the check proposes: a decision (``action``) with its value, and why in words.

    ``action`` is None when the check can only say "look at the source"; ``value`` is the
    corrected value for :attr:`Action.CORRECT`, the battery (group name) for
    :attr:`Action.REVERSE`, and None otherwise.
    """

    action: Action | None
    value: Any = None
    text: str = ""

    def to_json(self) -> dict[str, Any]:
        return {
            "action": None if self.action is None else str(self.action),
            "value": json_value(self.value),
            "text": self.text,
        }


@dataclass(frozen=True)
class Flag:
    """One finding of one check on one respondent (and one or more variables).

    Parameters
    ----------
    check : one of :data:`CHECK_IDS`.
    row : 0-based position in the wave's raw table (what ledger decisions use).
    respondent : the identifier's value, or the 1-based row number as text.
    variables : the variables the finding is about (in codebook order).
    value : the flagged value as shown to the evaluator (raw text for unreadable cells).
    severity : "error" (cannot be right), "warning" (probably wrong) or "note" (look at it).
    message : the finding in plain words.
    suggestion : a proposed decision, or None.
    decided_by : id of a ledger decision in force that answers this flag (for example "kept
        as is"), or None while the flag is open.
    detail : numbers behind the finding (fences, scores, indicators) for views and JSON.
    """

    check: str
    row: int
    respondent: str
    variables: tuple[str, ...]
    value: Any = field(hash=False)  # may be a dict (consistency): not part of the hash
    severity: str
    message: str
    suggestion: Suggestion | None = field(default=None, hash=False)
    decided_by: int | None = None
    detail: Mapping[str, Any] = field(default_factory=dict, compare=False, hash=False)

    @property
    def key(self) -> tuple[str, int, tuple[str, ...]]:
        """Identity of a finding across re-runs: the same check, row and variables."""
        return (self.check, self.row, self.variables)

    @property
    def label(self) -> str:
        return CHECK_LABELS.get(self.check, self.check)

    def to_json(self) -> dict[str, Any]:
        """The documented JSON shape (docs/cli-json.md, ``flags``)."""
        return {
            "check": self.check,
            "respondent": self.respondent,
            "row": self.row + 1,
            "variables": list(self.variables),
            "value": json_value(self.value),
            "severity": self.severity,
            "message": self.message,
            "suggestion": None if self.suggestion is None else self.suggestion.to_json(),
            "decided_by": self.decided_by,
            "detail": {k: json_value(v) for k, v in self.detail.items()},
        }


def json_value(value: Any) -> Any:
    """Plain JSON-able Python for numpy scalars, timestamps, tuples and NaN."""
    if value is None:
        return None
    if isinstance(value, (list, tuple)):
        return [json_value(v) for v in value]
    if isinstance(value, dict):
        return {str(k): json_value(v) for k, v in value.items()}
    if isinstance(value, (np.bool_, bool)):
        return bool(value)
    if isinstance(value, (np.integer,)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        f = float(value)
        if math.isnan(f):
            return None
        return int(f) if f == int(f) and abs(f) < 1e15 else f
    if isinstance(value, (pd.Timestamp, _dt.datetime, _dt.date)):
        return value.isoformat()
    if isinstance(value, pd.Timedelta):
        return value.total_seconds()
    return value


def show_number(x: float) -> str:
    """A number as a person reads it: no '.0' on whole numbers, at most 4 significant decimals."""
    if x == int(x) and abs(x) < 1e15:
        return str(int(x))
    return f"{x:.4g}" if abs(x) < 1e6 else format_number(x)


# Results computed from unedited columns, keyed on (kind, wave, codebook, columns) and
# checked against the raw table object, so a closed project's entries are never reused.
_COLUMN_CACHE: dict[tuple[Any, ...], tuple[weakref.ref, Any]] = {}
_CACHE_LOCK = threading.Lock()


@dataclass
class Context:
    """What every check of one run shares: the working data, settings and which rows count.

    ``only`` restricts a run to checks that involve these variables (refresh after one
    decision); ``notes`` collects plain sentences about checks that could not be computed.
    """

    working: Any  # core.working.WorkingData (not imported: avoids an import cycle)
    settings: Any  # core.checks.settings.CheckSettings
    only: frozenset[str] | None = None
    notes: list[str] = field(default_factory=list)

    def __post_init__(self) -> None:
        n = self.working.n_rows
        keep = np.ones(n, dtype=bool)
        if self.working.excluded:
            keep[[r for r in self.working.excluded if 0 <= r < n]] = False
        self.keep = keep
        self._ids = self.working.respondent_ids.to_numpy(dtype=object)
        self._raw_texts: dict[str, np.ndarray] = {}

    @property
    def touched(self) -> frozenset[str]:
        """Variables the ledger changed in some cell (their columns differ from decoding)."""
        if not hasattr(self, "_touched"):
            self._touched = frozenset(name for _, name in self.working.edits)
        return self._touched

    def cached(self, kind: str, names: Iterable[str], compute: Any) -> Any:
        """Memoise ``compute()`` on columns no decision has changed.

        Such columns are exactly the decoded raw table, which depends only on the raw table
        and the codebook, so the result can be reused across ledger versions (a decision
        elsewhere does not recompute it). Anything touching an edited column is computed
        afresh.
        """
        names = tuple(names)
        raw = self.working.raw
        if raw is None or any(n in self.touched for n in names):
            return compute()
        key = (kind, self.working.wave_id, names, self._definitions(names))
        with _CACHE_LOCK:
            hit = _COLUMN_CACHE.get(key)
            if hit is not None and hit[0]() is raw:
                return hit[1]
        value = compute()
        with _CACHE_LOCK:
            if len(_COLUMN_CACHE) > 4096:
                _COLUMN_CACHE.clear()
            _COLUMN_CACHE[key] = (weakref.ref(raw), value)
        return value

    def _definitions(self, names: tuple[str, ...]) -> tuple[str, ...]:
        # A decoded column depends on its own codebook entry and, for one-column-per-option
        # questions, on its group's entries; nothing else.
        book = self.working.codebook
        if not hasattr(self, "_groups"):
            self._groups = book.groups()
        out = []
        for name in names:
            var = book.get(name)
            if var is None:
                out.append(name)
                continue
            members = self._groups.get(var.group, [var]) if var.group else [var]
            out.append("|".join(repr(m) for m in members))
        return tuple(out)

    def numbers(self, name: str) -> np.ndarray:
        """A numeric column as floats, NaN where missing or excluded (memoised per run)."""
        memo = self.__dict__.setdefault("_numbers", {})
        if name not in memo:
            x = self.working.values[name].to_numpy(dtype=float, na_value=np.nan).copy()
            answered = self.working.reasons[name].isna().to_numpy() & self.keep
            x[~answered] = np.nan
            memo[name] = x
        return memo[name]

    def quantiles(self, name: str, method: str) -> dict[float, float]:
        """The 5th, 25th, 50th and 75th percentiles of :meth:`numbers` (one pass, memoised);
        used by the outlier and wandering-zero checks alike."""
        memo = self.__dict__.setdefault("_quantiles", {})
        key = (name, method)
        if key not in memo:
            x = self.numbers(name)
            x = x[~np.isnan(x)]
            probs = (0.05, 0.25, 0.5, 0.75)
            qs = np.quantile(x, probs, method=method) if len(x) else [np.nan] * 4
            memo[key] = {p: float(q) for p, q in zip(probs, qs)}
        return memo[key]

    def wants(self, names: Iterable[str]) -> bool:
        """Whether a check over these variables belongs to this run."""
        return self.only is None or any(n in self.only for n in names)

    def numeric_variables(self) -> Iterator[Any]:
        """The numeric variables with a column in the data that this run covers."""
        values = self.working.values
        for var in self.working.codebook:
            if var.kind is not Kind.NUMERIC or var.name not in values.columns:
                continue
            if self.wants([var.name]):
                yield var

    def numeric_columns(self) -> Iterator[tuple[Any, np.ndarray]]:
        """(variable, :meth:`numbers`) for numeric variables with enough answers to judge
        what is unusual (``settings.min_answers``); the outlier-like checks read these."""
        for var in self.numeric_variables():
            x = self.numbers(var.name)
            if int((~np.isnan(x)).sum()) >= self.settings.min_answers:
                yield var, x

    def respondent(self, row: int) -> str:
        return str(self._ids[row])

    def raw_text(self, row: int, name: str) -> str | None:
        """The cell as imported (text), or None if blank or there is no raw table."""
        raw = self.working.raw
        if raw is None or name not in raw.columns:
            return None
        if name not in self._raw_texts:
            self._raw_texts[name] = cell_texts(raw[name])
        return self._raw_texts[name][row]

    def shown(self, row: int, name: str) -> Any:
        """The cell's current value as the evaluator would read it."""
        values, reasons = self.working.values, self.working.reasons
        reason = reasons[name].iat[row] if name in reasons.columns else None
        if reason is not None and not pd.isna(reason):
            if reason == MissingReason.SET_MISSING.value or reason == MissingReason.SKIPPED.value:
                return None
            return self.raw_text(row, name)
        value = values[name].iat[row]
        if isinstance(value, tuple):
            return "; ".join(value)
        if isinstance(value, (float, np.floating)):
            return None if math.isnan(value) else json_value(value)
        if value is None or (not isinstance(value, str) and pd.isna(value)):
            return None
        return value

    def flag(
        self,
        check: str,
        row: int,
        variables: Iterable[str],
        value: Any,
        severity: str,
        message: str,
        suggestion: Suggestion | None = None,
        detail: Mapping[str, Any] | None = None,
    ) -> Flag:
        return Flag(
            check=check,
            row=int(row),
            respondent=self.respondent(int(row)),
            variables=tuple(variables),
            value=value,
            severity=severity,
            message=message,
            suggestion=suggestion,
            detail=dict(detail or {}),
        )
