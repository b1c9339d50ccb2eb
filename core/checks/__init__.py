"""Cleaning checks: each check reads working data and returns flags; nothing is changed.

:func:`run_checks` runs every enabled check (ids in :data:`CHECK_IDS`) and returns the flags
in a stable order (by check, then row). Decisions on flags go through :mod:`core.cleaning`
into the ledger; a flag answered by a decision in force carries its ledger id in
``decided_by``.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass, field
from operator import attrgetter
from typing import Any

from core.checks import (
    consistency,
    duplicates,
    invalid,
    outliers,
    ranges,
    reversed_scale,
    speeders,
    straightlining,
    wandering_zero,
)
from core.checks.flag import (
    CHECK_IDS,
    CHECK_LABELS,
    SEVERITIES,
    Context,
    Flag,
    Suggestion,
)
from core.checks.settings import (
    CheckSettings,
    load_settings,
    save_settings,
    settings_for_wave,
)
from core.ledger import Action, LedgerEntry, surviving

# Which check ids each module's check() can produce.
_RUNNERS: list[tuple[tuple[str, ...], Callable[[Context], list[Flag]]]] = [
    (("invalid",), invalid.check),
    (("range",), ranges.check),
    (("wandering_zero",), wandering_zero.check),
    (("outlier",), outliers.check),
    (("consistency",), consistency.check),
    (("duplicate_id", "duplicate_row"), duplicates.check),
    (("straightlining",), straightlining.check),
    (("reversed_scale",), reversed_scale.check),
    (("speeder",), speeders.check),
]


@dataclass(frozen=True)
class CheckRun:
    """Flags of one run plus notes about checks that could not be computed."""

    flags: list[Flag]
    notes: list[str] = field(default_factory=list)
    settings: CheckSettings = field(default_factory=CheckSettings)


def run_checks(
    working: Any,
    settings: CheckSettings | None = None,
    variables: Iterable[str] | None = None,
) -> list[Flag]:
    """Every flag the enabled checks raise on ``working`` (a :class:`WorkingData`).

    Parameters
    ----------
    working : the wave's working data; excluded respondents are not checked and do not count
        in medians or quartiles.
    settings : cut-offs and consistency rules; defaults when None (no rules: use
        :func:`settings_for_wave` to load the project's).
    variables : only run checks that involve one of these variables (the refresh after a
        decision on them); None runs everything.
    """
    return check_run(working, settings, variables).flags


def check_run(
    working: Any,
    settings: CheckSettings | None = None,
    variables: Iterable[str] | None = None,
) -> CheckRun:
    """Like :func:`run_checks`, also returning notes ("modified z not computable ...")."""
    settings = settings or CheckSettings()
    only = frozenset(variables) if variables is not None else None
    ctx = Context(working, settings, only)
    flags: list[Flag] = []
    for ids, runner in _RUNNERS:
        if not any(i in settings.enabled for i in ids):
            continue
        flags += [f for f in runner(ctx) if f.check in settings.enabled]
    flags = mark_decided(flags, getattr(working, "entries", []) or [])
    return CheckRun(sort_flags(flags), ctx.notes, settings)


def sort_flags(flags: Iterable[Flag]) -> list[Flag]:
    """By check (in :data:`CHECK_IDS` order), then row, then variables."""
    groups: dict[str, list[Flag]] = {}
    for f in flags:
        groups.setdefault(f.check, []).append(f)
    by_row = attrgetter("row", "variables")  # C-level keys: tens of thousands of flags
    out: list[Flag] = []
    for check in [*CHECK_IDS, *sorted(set(groups) - set(CHECK_IDS))]:
        out += sorted(groups.get(check, ()), key=by_row)
    return out


def mark_decided(flags: list[Flag], entries: list[LedgerEntry]) -> list[Flag]:
    """Set ``decided_by`` on flags that a decision in force answers.

    A decision answers a flag when it was made on the same row for the same check and
    shares a variable with it (or either names no variable), or when it keeps a cell of
    the flag as is without naming a check.
    """
    live = [e for e in surviving(list(entries)) if e.row is not None]
    if not live:
        return flags
    by_row: dict[int, list[LedgerEntry]] = {}
    for e in live:
        by_row.setdefault(int(e.row), []).append(e)
    out = []
    for f in flags:
        hit = None
        for e in by_row.get(f.row, ()):
            shared = not f.variables or not e.variables or set(f.variables) & set(e.variables)
            if shared and (e.check == f.check or (e.check is None and e.action is Action.KEEP)):
                hit = e.id
        out.append(f if hit is None else _with(f, decided_by=hit))
    return out


def _with(flag: Flag, **changes: Any) -> Flag:
    from dataclasses import replace

    return replace(flag, **changes)


def group_flags(flags: Iterable[Flag]) -> list[tuple[str, str, list[Flag]]]:
    """(check id, label, flags) per check that has flags, in :data:`CHECK_IDS` order."""
    groups: dict[str, list[Flag]] = {}
    for f in flags:
        groups.setdefault(f.check, []).append(f)
    return [(c, CHECK_LABELS[c], groups[c]) for c in CHECK_IDS if c in groups]


def flag_counts(flags: Iterable[Flag]) -> dict[str, int]:
    """Number of flags per check id (checks without flags are left out)."""
    return {c: len(fs) for c, _, fs in group_flags(flags)}


__all__ = [
    "CHECK_IDS",
    "CHECK_LABELS",
    "SEVERITIES",
    "CheckRun",
    "CheckSettings",
    "Flag",
    "Suggestion",
    "check_run",
    "flag_counts",
    "group_flags",
    "load_settings",
    "mark_decided",
    "run_checks",
    "save_settings",
    "settings_for_wave",
    "sort_flags",
]
