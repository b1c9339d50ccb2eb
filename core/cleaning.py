"""Cleaning decisions: what a view or the command line does with flags.

Every function here ends in :func:`core.ledger.record` (one transaction, so a batch is all
or nothing and undoes as one step) and returns what changed. Flags are recomputed from the
working data; :func:`refresh_flags` recomputes only the checks a decision can affect.

Decisions per flag: keep as is, correct to a value, set to missing, reverse the respondent's
scale on a battery, exclude the respondent. "For every value like this" decisions
(:func:`recode_all`, scope "rule") and consistency rules re-apply to a future wave
(:func:`rules_for_next_wave`, :func:`apply_rules_to_wave`); single-cell decisions do not.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

import pandas as pd

from core.checks import CheckRun, CheckSettings, Flag, check_run, sort_flags
from core.checks.flag import CHECK_IDS, CHECK_LABELS, Context
from core.checks.settings import settings_for_wave
from core.checks.straightlining import battery_items
from core.errors import PlaincountError
from core.ledger import Action, Decision, LedgerEntry, entries_for, record, surviving
from core.project import Changes, Project
from core.rules import list_rules
from core.working import WorkingData, validate_value, working_data

# ---------------------------------------------------------------------- flags


def flags_for(project: Project, wave_id: int, settings: CheckSettings | None = None) -> CheckRun:
    """Every flag on the wave's working data, with the project's rules and saved settings.

    Cached until the project changes (keyed on the settings too).
    """
    full = settings_for_wave(project, wave_id, settings)
    return project.cached(
        ("flags", wave_id, full), lambda: check_run(working_data(project, wave_id), full)
    )


def refresh_flags(
    project: Project,
    wave_id: int,
    previous: CheckRun,
    changes: Changes,
    settings: CheckSettings | None = None,
) -> CheckRun:
    """Flags after ``changes``, recomputing only the checks that involve changed variables.

    Falls back to a full run when the change is not a ledger change on named variables
    (codebook, rules, settings, exclusions). Per-variable checks (range, outlier, wandering
    zero, invalid) are recomputed on the whole column, since quartiles and medians move.
    """
    full = settings_for_wave(project, wave_id, settings)
    partial_ok = (
        changes.ledger
        and changes.variables
        and not (changes.codebook or changes.rules or changes.settings or changes.structure)
        and (not changes.wave_ids or wave_id in changes.wave_ids)
        and full == previous.settings
    )
    working = working_data(project, wave_id)
    if not partial_ok:
        return project.cached(("flags", wave_id, full), lambda: check_run(working, full))
    changed = frozenset(changes.variables)
    fresh = check_run(working, full, variables=changed)
    redone = {f.key for f in fresh.flags if f.check == "reversed_scale"}
    # Duplicate checks always re-run (a correction can make two rows identical); other
    # flags are stale when they name a changed variable. A battery re-run after a comment
    # changed can repeat a flag that names only the battery: keep the fresh one.
    kept = [
        f
        for f in previous.flags
        if f.check not in ("duplicate_id", "duplicate_row")
        and changed.isdisjoint(f.variables)
        and not (f.check == "reversed_scale" and f.key in redone)
    ]
    # Kept flags keep their decided_by: any decision that could answer one names a changed
    # variable (so that flag was re-run) or excludes a respondent (a full run, above).
    flags = sort_flags([*kept, *fresh.flags])
    notes = [n for n in previous.notes if not any(v in n for v in changed)] + fresh.notes
    return CheckRun(flags, list(dict.fromkeys(notes)), full)


@dataclass(frozen=True)
class FlagGroup:
    """The flags of one check, for a list grouped by check with counts."""

    check: str
    label: str
    flags: tuple[Flag, ...]

    @property
    def count(self) -> int:
        return len(self.flags)

    @property
    def open_count(self) -> int:
        return sum(1 for f in self.flags if f.decided_by is None)


def grouped(flags: Iterable[Flag]) -> list[FlagGroup]:
    """Flags grouped by check in the order of :data:`CHECK_IDS`, with counts."""
    from core.checks import group_flags

    return [FlagGroup(c, label, tuple(fs)) for c, label, fs in group_flags(flags)]


@dataclass(frozen=True)
class CellView:
    """One cell of a respondent's row, as the cleaning view shows it."""

    variable: str
    question: str
    kind: str
    value: Any  # current (working) value as read
    raw: str | None  # the cell as imported
    missing_reason: str | None
    flags: tuple[str, ...]  # check ids flagging this cell
    edits: tuple[LedgerEntry, ...]  # decisions in force that changed it

    @property
    def flagged(self) -> bool:
        return bool(self.flags)

    @property
    def edited(self) -> bool:
        return bool(self.edits)


def respondent_row(working: WorkingData, row: int, flags: Iterable[Flag] = ()) -> list[CellView]:
    """The respondent's whole row, every variable in codebook order, flagged cells marked.

    Whole-row flags (duplicate rows, exclusions by speed) mark no single cell; a view shows
    them above the row.
    """
    if not 0 <= row < working.n_rows:
        raise PlaincountError(f"There is no data row {row + 1} in this wave.")
    ctx = _context(working)
    by_var: dict[str, list[str]] = {}
    for f in flags:
        if f.row == row:
            for v in f.variables:
                by_var.setdefault(v, []).append(f.check)
    out = []
    for var in working.codebook:
        if var.name not in working.values.columns:
            continue
        reason = working.reasons[var.name].iat[row]
        out.append(
            CellView(
                variable=var.name,
                question=var.question,
                kind=str(var.kind),
                value=ctx.shown(row, var.name),
                raw=ctx.raw_text(row, var.name),
                missing_reason=None if pd.isna(reason) else str(reason),
                flags=tuple(dict.fromkeys(by_var.get(var.name, []))),
                edits=tuple(working.edits.get((row, var.name), ())),
            )
        )
    return out


def cell_note(working: WorkingData, row: int, variable: str) -> str | None:
    """A tooltip for an edited cell of the data grid: original value, new value, and the
    decisions that changed it with their reasons; None for an unedited cell."""
    edits = working.edits.get((row, variable))
    if not edits:
        return None
    ctx = _context(working)
    raw = ctx.raw_text(row, variable)
    now = ctx.shown(row, variable)
    lines = [
        f"Original: {raw if raw is not None else '(blank)'}",
        f"Now: {'(missing)' if now is None else now}",
    ]
    for e in edits:
        check = f" ({CHECK_LABELS.get(e.check, e.check).lower()})" if e.check else ""
        who = f", {e.author}" if e.author else ""
        lines.append(f"{e.action.label}{check}: {e.reason} (entry {e.id}, {e.created[:10]}{who})")
    return "\n".join(lines)


def find_row(
    working: WorkingData, respondent: str | None = None, data_row: int | None = None
) -> int:
    """The 0-based row of a respondent, by identifier value and/or 1-based data row.

    Raises a plain error when the identifier is unknown, or appears more than once and no
    data row says which.
    """
    if data_row is not None:
        row = int(data_row) - 1
        if not 0 <= row < working.n_rows:
            raise PlaincountError(
                f"There is no data row {data_row}; this wave has {working.n_rows} rows."
            )
        if respondent is not None and working.respondent_label(row) != str(respondent):
            raise PlaincountError(
                f"Data row {data_row} belongs to respondent {working.respondent_label(row)}, "
                f"not {respondent}."
            )
        return row
    if respondent is None:
        raise PlaincountError("Name the respondent (identifier) or the data row.")
    rows = working.rows_for_respondent(str(respondent))
    if not rows:
        raise PlaincountError(f"No respondent {respondent!r} in this wave.")
    if len(rows) > 1:
        listed = ", ".join(str(r + 1) for r in rows)
        raise PlaincountError(
            f"Respondent {respondent!r} appears {len(rows)} times (data rows {listed}); "
            "say which one with --row."
        )
    return rows[0]


# ---------------------------------------------------------------------- single decisions


def _current(working: WorkingData, row: int, name: str) -> Any:
    return _context(working).shown(row, name)


_LAST_CONTEXT: list[Context] = []


def _context(working: WorkingData) -> Context:
    """A read-only view helper for ``working``, reused across a batch (building one reads
    every respondent id, which adds up over hundreds of flags)."""
    last = _LAST_CONTEXT[0] if _LAST_CONTEXT else None
    if last is None or last.working is not working:
        last = Context(working, CheckSettings())
        _LAST_CONTEXT[:] = [last]
    return last


def _check_variable(working: WorkingData, name: str) -> None:
    if name not in working.codebook or name not in working.values.columns:
        raise PlaincountError(f"This wave has no variable called {name!r}.")


def cell_decision(
    working: WorkingData,
    row: int,
    variable: str,
    reason: str,
    *,
    value: Any = None,
    missing: bool = False,
    keep: bool = False,
    check: str | None = None,
) -> Decision:
    """A decision on one cell: correct to ``value``, set missing, or keep as is."""
    _check_variable(working, variable)
    var = working.codebook[variable]
    old = _current(working, row, variable)
    common = dict(
        variables=(variable,),
        row=row,
        respondent=working.respondent_label(row),
        old_value=old,
        check=check,
    )
    if keep:
        return Decision(Action.KEEP, reason, **common)
    if missing:
        return Decision(Action.SET_MISSING, reason, **common)
    if value is None or (isinstance(value, str) and not value.strip()):
        raise PlaincountError("Give the corrected value, or choose 'set to missing'.")
    validate_value(var, value)
    value = _canonical(var, value)
    return Decision(Action.CORRECT, reason, new_value=value, **common)


def _canonical(var: Any, value: Any) -> Any:
    """Spell a level as the codebook does ("yes" -> "Yes"); numbers as numbers."""
    if var.kind.has_levels:
        for level in var.levels:
            if level.lower() == str(value).strip().lower():
                return level
        return var.value_labels.get(str(value).strip(), value)
    if isinstance(value, str):
        try:
            number = float(value)
        except ValueError:
            return value
        return int(number) if number == int(number) else number
    return value


def reverse_decision(
    working: WorkingData, row: int, group: str, reason: str, check: str | None = None
) -> Decision:
    """Reverse the respondent's scale on every item of a battery (one decision)."""
    items = battery_items(working.codebook, group)
    names = tuple(v.name for v in items if v.name in working.values.columns)
    return Decision(
        Action.REVERSE,
        reason,
        variables=names,
        row=row,
        respondent=working.respondent_label(row),
        old_value={n: _current(working, row, n) for n in names},
        new_value=group,
        check=check,
    )


def exclude_decision(
    working: WorkingData, row: int, reason: str, check: str | None = None
) -> Decision:
    """Leave the respondent out of every analysis (the row stays visible in cleaning)."""
    return Decision(
        Action.EXCLUDE, reason, row=row, respondent=working.respondent_label(row), check=check
    )


def decision_for(
    working: WorkingData,
    flag: Flag,
    action: Action | str | None,
    reason: str,
    *,
    value: Any = None,
    variable: str | None = None,
    group: str | None = None,
) -> Decision:
    """The ledger decision for acting on ``flag``; ``action`` None takes the suggestion.

    ``variable`` picks the cell when the flag names several variables and the action is a
    correction or set-to-missing; ``group`` the battery for a reversal (default: the
    flag's battery).
    """
    if action is None:
        if flag.suggestion is None or flag.suggestion.action is None:
            raise PlaincountError(
                f"The {flag.label.lower()} flag on respondent {flag.respondent} has no "
                "suggested decision; choose one."
            )
        action = flag.suggestion.action
        if action is Action.CORRECT and value is None:
            value = flag.suggestion.value
        if action is Action.REVERSE and group is None:
            group = flag.suggestion.value
    action = Action(action)
    if action is Action.EXCLUDE:
        return exclude_decision(working, flag.row, reason, flag.check)
    if action is Action.REVERSE:
        group = group or flag.detail.get("group")
        if not group:
            raise PlaincountError("Say which battery to reverse.")
        return reverse_decision(working, flag.row, str(group), reason, flag.check)
    if action is Action.KEEP:
        return Decision(
            Action.KEEP,
            reason,
            variables=flag.variables,
            row=flag.row,
            respondent=flag.respondent,
            old_value=flag.value,
            check=flag.check,
        )
    if action in (Action.CORRECT, Action.SET_MISSING):
        name = variable or (flag.variables[0] if len(flag.variables) == 1 else None)
        if name is None:
            raise PlaincountError(
                "This flag is about several variables ("
                + ", ".join(flag.variables)
                + "); say which one to change."
            )
        return cell_decision(
            working,
            flag.row,
            name,
            reason,
            value=value,
            missing=action is Action.SET_MISSING,
            check=flag.check,
        )
    raise PlaincountError(f"'{action.label}' is not a decision on a single flag.")


def decide(
    project: Project,
    wave_id: int,
    flag: Flag,
    action: Action | str | None,
    reason: str,
    **options: Any,
) -> tuple[list[int], Changes]:
    """Record one decision on one flag (see :func:`decision_for` for the options)."""
    working = working_data(project, wave_id)
    return record(project, wave_id, [decision_for(working, flag, action, reason, **options)])


def decide_many(
    project: Project,
    wave_id: int,
    flags: Sequence[Flag],
    action: Action | str | None,
    reason: str,
    **options: Any,
) -> tuple[list[int], Changes]:
    """One decision per flag, recorded in ONE transaction (all or nothing; one undo step).

    ``action`` None takes each flag's own suggestion. Excluding the same respondent twice,
    or reversing the same battery twice, is recorded once.
    """
    working = working_data(project, wave_id)
    decisions: list[Decision] = []
    seen: set[tuple[Any, ...]] = set()
    for flag in flags:
        d = decision_for(working, flag, action, reason, **options)
        key = (
            (d.action, d.row, d.variables)
            if d.action in (Action.EXCLUDE, Action.REVERSE)
            else (d.action, d.row, d.variables, d.check, id(flag))
        )
        if key in seen:
            continue
        seen.add(key)
        decisions.append(d)
    return record(project, wave_id, decisions)


def record_batch(
    project: Project, wave_id: int, decisions: Sequence[Decision], label: str | None = None
) -> tuple[list[int], Changes]:
    """Record prepared decisions in one transaction (all or nothing)."""
    return record(project, wave_id, list(decisions), label=label)


def edit_cell(
    project: Project,
    wave_id: int,
    row: int,
    variable: str,
    reason: str,
    *,
    value: Any = None,
    missing: bool = False,
    keep: bool = False,
    check: str | None = None,
) -> tuple[list[int], Changes]:
    """Correct, set missing, or keep one cell (``row`` is 0-based)."""
    working = working_data(project, wave_id)
    d = cell_decision(
        working, row, variable, reason, value=value, missing=missing, keep=keep, check=check
    )
    return record(project, wave_id, [d])


def reverse_battery(
    project: Project, wave_id: int, row: int, group: str, reason: str, check: str | None = None
) -> tuple[list[int], Changes]:
    working = working_data(project, wave_id)
    return record(project, wave_id, [reverse_decision(working, row, group, reason, check)])


def exclude(
    project: Project, wave_id: int, row: int, reason: str, check: str | None = None
) -> tuple[list[int], Changes]:
    working = working_data(project, wave_id)
    return record(project, wave_id, [exclude_decision(working, row, reason, check)])


# ---------------------------------------------------------------------- rules for every value


def recode_all(
    project: Project,
    wave_id: int,
    variables: Sequence[str],
    old_text: str,
    new_value: Any,
    reason: str,
) -> tuple[list[int], Changes]:
    """'For every value like this': every cell of ``variables`` whose raw text is
    ``old_text`` becomes ``new_value`` (None: set missing). A rule: it re-applies to future
    waves through :func:`apply_rules_to_wave`."""
    working = working_data(project, wave_id)
    if not variables:
        raise PlaincountError("Choose the variables this recode applies to.")
    for name in variables:
        _check_variable(working, name)
        if new_value is not None:
            validate_value(working.codebook[name], new_value)
    d = Decision(
        Action.RECODE_ALL,
        reason,
        variables=tuple(variables),
        old_value=str(old_text).strip(),
        new_value=new_value,
    )
    return record(project, wave_id, [d])


def rules_for_next_wave(project: Project, instrument_id: int) -> list[dict[str, Any]]:
    """What re-applies to a future wave of the instrument: consistency rules, and the
    "every value like this" recodes in force in any of its waves (latest first wins).

    Each item: ``{"kind": "consistency", "id", "text"}`` or ``{"kind": "recode",
    "entry_id", "wave", "variables", "old_value", "new_value", "reason"}``.
    """
    out: list[dict[str, Any]] = [
        {"kind": "consistency", "id": r.id, "text": r.text}
        for r in list_rules(project, instrument_id)
    ]
    seen: dict[tuple[Any, ...], dict[str, Any]] = {}
    for wave in project.waves(instrument_id):
        for e in surviving(entries_for(project, wave.id)):
            if e.action is not Action.RECODE_ALL:
                continue
            seen[(e.variables, str(e.old_value))] = {
                "kind": "recode",
                "entry_id": e.id,
                "wave": wave.label,
                "variables": list(e.variables),
                "old_value": e.old_value,
                "new_value": e.new_value,
                "reason": e.reason,
            }
    return out + list(seen.values())


def apply_rules_to_wave(project: Project, wave_id: int) -> tuple[list[int], Changes]:
    """Re-apply the instrument's recodes from other waves to this wave, in one batch.

    Consistency rules need no step: they belong to the instrument and run on every wave.
    Recodes already in force here, or naming variables this wave lacks, are skipped.
    """
    wave = project.wave(wave_id)
    working = working_data(project, wave_id)
    here = {
        (e.variables, str(e.old_value))
        for e in surviving(entries_for(project, wave_id))
        if e.action is Action.RECODE_ALL
    }
    decisions = []
    for item in rules_for_next_wave(project, wave.instrument_id):
        if item["kind"] != "recode":
            continue
        names = tuple(v for v in item["variables"] if v in working.values.columns)
        if not names or (names, str(item["old_value"])) in here:
            continue
        decisions.append(
            Decision(
                Action.RECODE_ALL,
                f"{item['reason']} (rule from wave {item['wave']})",
                variables=names,
                old_value=item["old_value"],
                new_value=item["new_value"],
            )
        )
    return record(project, wave_id, decisions, label="Apply recodes from earlier waves")


# ---------------------------------------------------------------------- ledger list


def ledger_list(
    project: Project,
    wave_id: int | None = None,
    *,
    variable: str | None = None,
    check: str | None = None,
    reason: str | None = None,
    include_withdrawn: bool = True,
) -> list[tuple[LedgerEntry, bool]]:
    """Ledger entries (no withdrawal rows) with whether each is in force, filtered by
    variable, check id, or words in the reason (case-insensitive)."""
    entries = entries_for(project, wave_id)
    by_wave: dict[int, list[LedgerEntry]] = {}
    for e in entries:
        by_wave.setdefault(e.wave_id, []).append(e)
    live = {e.id for es in by_wave.values() for e in surviving(es)}
    out = []
    for e in entries:
        if e.action is Action.WITHDRAW:
            continue
        active = e.id in live
        if not include_withdrawn and not active:
            continue
        if variable is not None and variable not in e.variables:
            continue
        if check is not None and e.check != check:
            continue
        if reason is not None and reason.lower() not in e.reason.lower():
            continue
        out.append((e, active))
    return out


__all__ = [
    "CHECK_IDS",
    "CellView",
    "FlagGroup",
    "apply_rules_to_wave",
    "cell_decision",
    "cell_note",
    "decide",
    "decide_many",
    "decision_for",
    "edit_cell",
    "exclude",
    "exclude_decision",
    "find_row",
    "flags_for",
    "grouped",
    "ledger_list",
    "recode_all",
    "record_batch",
    "refresh_flags",
    "respondent_row",
    "reverse_battery",
    "reverse_decision",
    "rules_for_next_wave",
]
