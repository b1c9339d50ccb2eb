"""Cleaning from the command line: ``flags``, ``edit``, ``ledger`` and ``rules``."""

from __future__ import annotations

import argparse
from dataclasses import replace
from typing import Any

from core import cleaning
from core.checks import CHECK_IDS, CHECK_LABELS, flag_counts
from core.checks.flag import json_value
from core.checks.settings import OUTLIER_METHODS, save_settings, settings_for_wave
from core.cli.common import emit_json, opened, print_rows
from core.errors import PlaincountError
from core.ledger import Action, entries_for, surviving, withdraw
from core.project import Project, Wave
from core.rules import add_rule, list_rules, remove_rule
from core.working import working_data


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("flags", help="run the cleaning checks and list what they flag")
    p.add_argument("project", help="project file")
    p.add_argument("--wave", help="wave label (default: the latest wave)")
    p.add_argument(
        "--check", choices=CHECK_IDS, action="append", help="only this check (repeat for several)"
    )
    p.add_argument(
        "--open", action="store_true", help="leave out flags a decision in force already answers"
    )
    p.add_argument(
        "--outlier-method",
        choices=sorted(OUTLIER_METHODS),
        help="Tukey's fences or the modified z-score (default: project setting)",
    )
    p.add_argument(
        "--speeder-fraction",
        type=float,
        metavar="F",
        help="flag completion times under F x the median (default 0.5)",
    )
    p.add_argument(
        "--min-items",
        type=int,
        metavar="K",
        help="straight-lining needs batteries of at least K items (default 5)",
    )
    p.add_argument(
        "--save", action="store_true", help="keep these settings as the project's check settings"
    )
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_flags)

    p = sub.add_parser("edit", help="record a cleaning decision on one respondent")
    p.add_argument("project", help="project file")
    p.add_argument("--wave", required=True, help="wave label")
    p.add_argument("--respondent", help="the respondent's identifier value")
    p.add_argument(
        "--row",
        type=int,
        metavar="N",
        help="1-based data row (needed when an identifier appears twice)",
    )
    p.add_argument("--variable", help="the variable to change (for --value, --missing, --keep)")
    what = p.add_mutually_exclusive_group(required=True)
    what.add_argument("--value", help="correct the cell to this value")
    what.add_argument(
        "--missing",
        action="store_true",
        help="set the cell to missing (reason: set missing in cleaning)",
    )
    what.add_argument("--keep", action="store_true", help="checked: keep the value as it is")
    what.add_argument(
        "--reverse-battery",
        metavar="GROUP",
        help="reverse the respondent's scale on every item of this battery",
    )
    what.add_argument(
        "--exclude", action="store_true", help="leave the respondent out of every analysis"
    )
    p.add_argument("--reason", required=True, help="why, in plain words (required)")
    p.add_argument("--check", choices=CHECK_IDS, help="the check that prompted the decision")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_edit)

    p = sub.add_parser("ledger", help="list the cleaning decisions (the ledger)")
    p.add_argument("project", help="project file")
    p.add_argument("--wave", help="wave label (default: every wave)")
    p.add_argument("--variable", help="only decisions touching this variable")
    p.add_argument("--check", choices=CHECK_IDS, help="only decisions prompted by this check")
    p.add_argument(
        "--withdraw",
        type=int,
        metavar="ID",
        help="withdraw this decision (appends a withdrawal; needs --reason)",
    )
    p.add_argument("--reason", help="why the decision is withdrawn")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_ledger)

    p = sub.add_parser("rules", help="list, add or remove consistency rules")
    p.add_argument("project", help="project file")
    p.add_argument("--instrument", help="instrument name (default: the only one)")
    p.add_argument(
        "--add",
        metavar="TEXT",
        help='a rule, e.g. \'if completed is "No" then credential_earned is not '
        '"Yes"\' (see docs/rules.md)',
    )
    p.add_argument("--remove", type=int, metavar="ID", help="switch off rule number ID")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_rules)


# ---------------------------------------------------------------------- flags
def _flags(args: argparse.Namespace) -> int:
    with opened(args.project) as project:
        wave = project.find_wave(args.wave)
        settings = settings_for_wave(project, wave.id)
        changes: dict[str, Any] = {}
        if args.outlier_method:
            changes["outlier_method"] = args.outlier_method
        if args.speeder_fraction is not None:
            changes["speeder_fraction"] = args.speeder_fraction
        if args.min_items is not None:
            changes["straightline_min_items"] = args.min_items
        if args.check:
            changes["enabled"] = tuple(args.check)
        settings = replace(settings, **changes)  # validated in __post_init__
        if args.save:
            save_settings(project, replace(settings, rules=()))
        run = cleaning.flags_for(project, wave.id, settings)
        flags = [f for f in run.flags if not (args.open and f.decided_by is not None)]
        if args.json:
            emit_json(
                {
                    "wave": wave.label,
                    "wave_id": wave.id,
                    "settings": settings.to_json(),
                    "counts": flag_counts(flags),
                    "notes": run.notes,
                    "flags": [f.to_json() for f in flags],
                }
            )
            return 0
        if not flags:
            print(f"No flags on wave {wave.label}.")
        for check, label, items in _grouped(flags):
            print(f"{label} ({check}): {len(items)}")
            for f in items:
                mark = f" [decided: entry {f.decided_by}]" if f.decided_by else ""
                print(f"  row {f.row + 1}, {f.respondent}: {f.message}{mark}")
                if f.suggestion is not None and f.suggestion.text:
                    print(f"      suggestion: {f.suggestion.text}")
        for note in run.notes:
            print(f"Note: {note}")
    return 0


def _grouped(flags):  # noqa: ANN001, ANN202 - tiny local helper
    from core.checks import group_flags

    return group_flags(flags)


# ---------------------------------------------------------------------- edit
def _edit(args: argparse.Namespace) -> int:
    with opened(args.project) as project:
        wave = project.find_wave(args.wave)
        working = working_data(project, wave.id)
        row = cleaning.find_row(working, args.respondent, args.row)
        if (args.value is not None or args.missing or args.keep) and not args.variable:
            raise PlaincountError("Say which variable with --variable.")
        if args.exclude:
            ids, _ = cleaning.exclude(project, wave.id, row, args.reason, args.check)
            action = Action.EXCLUDE
        elif args.reverse_battery:
            ids, _ = cleaning.reverse_battery(
                project, wave.id, row, args.reverse_battery, args.reason, args.check
            )
            action = Action.REVERSE
        else:
            ids, _ = cleaning.edit_cell(
                project,
                wave.id,
                row,
                args.variable,
                args.reason,
                value=args.value,
                missing=args.missing,
                keep=args.keep,
                check=args.check,
            )
            action = (
                Action.KEEP
                if args.keep
                else (Action.SET_MISSING if args.missing else Action.CORRECT)
            )
        entry = {e.id: e for e in entries_for(project, wave.id)}[ids[0]]
        if args.json:
            emit_json({"wave": wave.label, "entry": entry.to_json()})
        else:
            print(_describe(entry, action))
    return 0


def _describe(entry, action: Action) -> str:  # noqa: ANN001
    who = f"respondent {entry.respondent} (data row {entry.row + 1})"
    if action is Action.CORRECT:
        what = (
            f"{entry.variables[0]} of {who}: {_show(entry.old_value)} -> {_show(entry.new_value)}"
        )
    elif action is Action.SET_MISSING:
        what = f"{entry.variables[0]} of {who}: {_show(entry.old_value)} -> missing"
    elif action is Action.KEEP:
        what = f"{entry.variables[0]} of {who} kept as {_show(entry.old_value)}"
    elif action is Action.REVERSE:
        what = f"scale of {who} on {entry.new_value} ({len(entry.variables)} items)"
    else:
        what = who
    return f"Recorded entry {entry.id}: {action.label.lower()}: {what}. Reason: {entry.reason}"


def _show(value: Any) -> str:
    value = json_value(value)
    return "missing" if value is None else str(value)


# ---------------------------------------------------------------------- ledger
def _wave_labels(project: Project) -> dict[int, Wave]:
    return {w.id: w for w in project.waves()}


def _ledger(args: argparse.Namespace) -> int:
    with opened(args.project) as project:
        wave = project.find_wave(args.wave) if args.wave else None
        waves = _wave_labels(project)
        if args.withdraw is not None:
            if not args.reason:
                raise PlaincountError("Say why the decision is withdrawn with --reason.")
            target = next((e for e in entries_for(project) if e.id == args.withdraw), None)
            if target is None or target.action is Action.WITHDRAW:
                raise PlaincountError(f"There is no decision number {args.withdraw}.")
            changes = withdraw(project, target.wave_id, [target.id], args.reason)
            if not changes.ledger:
                raise PlaincountError(f"Decision {args.withdraw} is already withdrawn.")
        entries = entries_for(project, wave.id if wave else None)
        live: set[int] = set()
        for wid in {e.wave_id for e in entries}:
            live |= {e.id for e in surviving([e for e in entries if e.wave_id == wid])}
        shown = [
            e
            for e in entries
            if (args.variable is None or args.variable in e.variables)
            and (args.check is None or e.check == args.check)
        ]
        if args.json:
            emit_json(
                {
                    "wave": wave.label if wave else None,
                    "entries": [
                        {**e.to_json(), "wave": waves[e.wave_id].label, "active": e.id in live}
                        for e in shown
                    ],
                }
            )
            return 0
        rows = [
            [
                "id",
                "wave",
                "row",
                "respondent",
                "decision",
                "variables",
                "old",
                "new",
                "check",
                "reason",
                "status",
            ]
        ]
        for e in shown:
            if e.action is Action.WITHDRAW:
                status = (
                    f"withdraws {abs(e.withdraws or 0)}"
                    if (e.withdraws or 0) > 0
                    else (f"redoes {abs(e.withdraws or 0)}")
                )
            else:
                status = "in force" if e.id in live else "withdrawn"
            rows.append(
                [
                    str(e.id),
                    waves[e.wave_id].label,
                    "" if e.row is None else str(e.row + 1),
                    e.respondent or "",
                    e.action.label,
                    ", ".join(e.variables)[:40],
                    ""
                    if e.action in (Action.WITHDRAW, Action.REVERSE)
                    else _show(e.old_value)[:20],
                    _show(e.new_value)[:20]
                    if e.action in (Action.CORRECT, Action.RECODE_ALL)
                    else "",
                    CHECK_LABELS.get(e.check, "") if e.check else "",
                    e.reason[:50],
                    status,
                ]
            )
        if len(rows) == 1:
            print("The ledger is empty: no cleaning decisions yet.")
        else:
            print_rows(rows)
    return 0


# ---------------------------------------------------------------------- rules
def _instrument(project: Project, name: str | None):  # noqa: ANN202
    if name is not None:
        return project.instrument(name)
    instruments = project.instruments()
    if not instruments:
        raise PlaincountError("The project has no instrument yet: import a survey export first.")
    if len(instruments) > 1:
        names = ", ".join(i.name for i in instruments)
        raise PlaincountError(
            f"The project has several instruments ({names}); name one with --instrument."
        )
    return instruments[0]


def _rules(args: argparse.Namespace) -> int:
    with opened(args.project) as project:
        inst = _instrument(project, args.instrument)
        added = removed = None
        if args.add is not None and args.remove is not None:
            raise PlaincountError("Add or remove a rule, not both at once.")
        if args.add is not None:
            added, _ = add_rule(project, inst.id, args.add)
        if args.remove is not None:
            own = {r.id for r in list_rules(project, inst.id, include_removed=True)}
            if args.remove not in own:
                raise PlaincountError(f"{inst.name} has no rule number {args.remove}.")
            remove_rule(project, args.remove)
            removed = args.remove
        rules = list_rules(project, inst.id)
        if args.json:
            emit_json(
                {
                    "instrument": inst.name,
                    "added": added,
                    "removed": removed,
                    "rules": [r.to_json() for r in rules],
                    "next_wave": cleaning.rules_for_next_wave(project, inst.id),
                }
            )
            return 0
        if added is not None:
            print(f"Added rule {added}.")
        if removed is not None:
            print(f"Removed rule {removed}.")
        if not rules:
            print(f"{inst.name} has no consistency rules.")
        for r in rules:
            problem = f"  (not applied: {r.problem})" if r.problem else ""
            print(f"{r.id}: {r.text}{problem}")
    return 0
