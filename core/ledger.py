"""The ledger: an append-only record of every cleaning decision on a wave.

Nothing in a raw table is ever overwritten. A decision is a row here; withdrawing it appends
a withdrawal row, so the history is never lost. Working data is the raw table replayed
through the surviving decisions (see :mod:`core.working`).
"""

from __future__ import annotations

import json
import uuid
from dataclasses import dataclass
from enum import StrEnum
from typing import Any

from core.errors import PlaincountError
from core.project import UNDO_HANDLERS, Changes, Project, now


class Action(StrEnum):
    """What a decision does to the working data."""

    KEEP = "keep"  # checked and kept as is (reason required); changes nothing
    CORRECT = "correct"  # one cell gets a new value
    SET_MISSING = "set_missing"  # one cell becomes missing, reason "set missing in cleaning"
    REVERSE = "reverse"  # a respondent's answers on a battery are mirrored on the scale
    EXCLUDE = "exclude"  # a respondent is left out of every analysis
    RECODE_ALL = "recode_all"  # every cell whose raw text equals old_value, in the variables
    WITHDRAW = "withdraw"  # withdraws an earlier entry (undo); the entry stays in the ledger

    @property
    def label(self) -> str:
        return ACTION_LABELS[self]


ACTION_LABELS = {
    Action.KEEP: "Kept as is",
    Action.CORRECT: "Corrected",
    Action.SET_MISSING: "Set to missing",
    Action.REVERSE: "Scale reversed",
    Action.EXCLUDE: "Respondent excluded",
    Action.RECODE_ALL: "Recoded everywhere",
    Action.WITHDRAW: "Withdrawn",
}

# Scopes: a "cell" decision belongs to one wave; a "rule" decision re-applies to future waves.
CELL, RULE = "cell", "rule"


@dataclass(frozen=True)
class Decision:
    """A decision to record; ``row`` is the 0-based position in the wave's raw table."""

    action: Action
    reason: str
    variables: tuple[str, ...] = ()
    row: int | None = None
    respondent: str | None = None
    old_value: Any = None
    new_value: Any = None
    check: str | None = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "action", Action(self.action))
        object.__setattr__(self, "variables", tuple(self.variables))
        if not self.reason or not self.reason.strip():
            raise PlaincountError("Every cleaning decision needs a reason in plain words.")
        needs_row = self.action in (
            Action.CORRECT,
            Action.SET_MISSING,
            Action.REVERSE,
            Action.EXCLUDE,
        )
        if needs_row and self.row is None:
            raise PlaincountError(f"A '{self.action.label}' decision needs a respondent.")
        if self.action in (Action.CORRECT, Action.SET_MISSING) and len(self.variables) != 1:
            raise PlaincountError("A correction applies to exactly one variable.")
        if self.action is Action.CORRECT and self.new_value in (None, ""):
            raise PlaincountError("Give the corrected value, or choose 'set to missing'.")
        if self.action in (Action.REVERSE, Action.RECODE_ALL) and not self.variables:
            raise PlaincountError(f"A '{self.action.label}' decision needs its variables.")

    @property
    def scope(self) -> str:
        return RULE if self.action is Action.RECODE_ALL else CELL


@dataclass(frozen=True)
class LedgerEntry:
    id: int
    wave_id: int
    action: Action
    respondent: str | None
    row: int | None
    variables: tuple[str, ...]
    old_value: Any
    new_value: Any
    check: str | None
    reason: str
    scope: str
    batch: str | None
    withdraws: int | None
    created: str
    author: str

    def to_json(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "wave_id": self.wave_id,
            "action": str(self.action),
            "respondent": self.respondent,
            "row": None if self.row is None else self.row + 1,
            "variables": list(self.variables),
            "old_value": self.old_value,
            "new_value": self.new_value,
            "check": self.check,
            "reason": self.reason,
            "scope": self.scope,
            "batch": self.batch,
            "withdraws": self.withdraws,
            "created": self.created,
            "author": self.author,
        }


def record(
    project: Project, wave_id: int, decisions: list[Decision], label: str | None = None
) -> tuple[list[int], Changes]:
    """Append decisions in one transaction (a batch is all or nothing); undoable as one step."""
    if not decisions:
        return [], Changes()
    project.wave(wave_id)  # raises a plain error if the wave is unknown
    author = project.settings().get("author", "")
    batch = uuid.uuid4().hex if len(decisions) > 1 else None
    stamp = now()
    ids: list[int] = []
    with project.transaction() as conn:
        for d in decisions:
            cur = conn.execute(
                "INSERT INTO ledger(wave_id, action, respondent, row, variables, old_value, "
                "new_value, check_name, reason, scope, batch, withdraws, created, author) "
                "VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?)",
                (
                    wave_id,
                    d.action.value,
                    d.respondent,
                    d.row,
                    json.dumps(list(d.variables)),
                    json.dumps(d.old_value, default=str),
                    json.dumps(d.new_value, default=str),
                    d.check,
                    d.reason.strip(),
                    d.scope,
                    batch,
                    int(d.old_value) if d.action is Action.WITHDRAW else None,
                    stamp,
                    author,
                ),
            )
            ids.append(int(cur.lastrowid))
        text = label or _label(decisions)
        project._record_history(conn, "ledger", text, {"wave_id": wave_id, "ids": ids})
    changes = Changes(
        wave_ids=frozenset({wave_id}),
        variables=frozenset(v for d in decisions for v in d.variables),
        ledger=True,
    )
    return ids, project.notify(changes)


def withdraw(project: Project, wave_id: int, entry_ids: list[int], reason: str) -> Changes:
    """Withdraw decisions by appending withdrawal entries (the originals stay on record)."""
    entries = {e.id: e for e in entries_for(project, wave_id)}
    active = active_ids(project, wave_id)
    targets = [entries[i] for i in entry_ids if i in entries]
    if len(targets) != len(entry_ids):
        raise PlaincountError("Some of these ledger entries do not belong to this wave.")
    live = [t for t in targets if t.id in active]
    decisions = [
        Decision(
            Action.WITHDRAW,
            reason,
            variables=t.variables,
            row=t.row,
            respondent=t.respondent,
            old_value=t.id,
        )
        for t in live
    ]
    if not decisions:
        return Changes()
    _, changes = record(project, wave_id, decisions, label=f"Withdraw {_count(len(live))}")
    return changes


def entries_for(project: Project, wave_id: int | None = None) -> list[LedgerEntry]:
    """Every ledger entry (withdrawals included), oldest first."""
    sql = (
        "SELECT id, wave_id, action, respondent, row, variables, old_value, new_value, "
        "check_name, reason, scope, batch, withdraws, created, author FROM ledger"
    )
    params: tuple[Any, ...] = ()
    if wave_id is not None:
        sql += " WHERE wave_id = ?"
        params = (wave_id,)
    rows = project.query(sql + " ORDER BY id", params)
    out = []
    for r in rows:
        action = Action(r["action"])
        old = json.loads(r["old_value"]) if r["old_value"] is not None else None
        withdraws = r["withdraws"]
        out.append(
            LedgerEntry(
                id=r["id"],
                wave_id=r["wave_id"],
                action=action,
                respondent=r["respondent"],
                row=r["row"],
                variables=tuple(json.loads(r["variables"])),
                old_value=old,
                new_value=json.loads(r["new_value"]) if r["new_value"] is not None else None,
                check=r["check_name"],
                reason=r["reason"],
                scope=r["scope"],
                batch=r["batch"],
                withdraws=withdraws,
                created=r["created"],
                author=r["author"],
            )
        )
    return out


def surviving(entries: list[LedgerEntry]) -> list[LedgerEntry]:
    """Decisions in force: not withdrawals, and not withdrawn (a withdrawal may be re-done)."""
    state: dict[int, bool] = {}
    for e in entries:
        if e.action is Action.WITHDRAW and e.withdraws is not None:
            # A negative target re-activates an entry (redo after undo).
            state[abs(e.withdraws)] = e.withdraws < 0
        else:
            state[e.id] = True
    return [e for e in entries if e.action is not Action.WITHDRAW and state.get(e.id, False)]


def active_ids(project: Project, wave_id: int) -> set[int]:
    return {e.id for e in surviving(entries_for(project, wave_id))}


def _reinstate(project: Project, wave_id: int, ids: list[int]) -> None:
    """Redo after undo: re-activate withdrawn entries by appending a new copy of each."""
    by_id = {e.id: e for e in entries_for(project, wave_id)}
    with project.transaction() as conn:
        for i in ids:
            e = by_id[i]
            # A negative target re-activates the entry.
            _insert_withdrawal(
                conn, project, wave_id, e, -e.id, json.dumps("redo"), "Redone after undo", e.batch
            )


def _append_withdrawals(
    project: Project, wave_id: int, targets: list[int], entries: dict[int, LedgerEntry]
) -> None:
    if not targets:
        return
    with project.transaction() as conn:
        for i in targets:
            e = entries[i]
            _insert_withdrawal(conn, project, wave_id, e, e.id, None, "Undone", None)


def _insert_withdrawal(
    conn: Any,
    project: Project,
    wave_id: int,
    e: LedgerEntry,
    target: int,
    new_value: str | None,
    reason: str,
    batch: str | None,
) -> None:
    """Append the withdrawal row aimed at ``target`` (negative: a redo) copying ``e``'s scope."""
    conn.execute(
        "INSERT INTO ledger(wave_id, action, respondent, row, variables, old_value, "
        "new_value, check_name, reason, scope, batch, withdraws, created, author) "
        "VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?)",
        (
            wave_id,
            Action.WITHDRAW.value,
            e.respondent,
            e.row,
            json.dumps(list(e.variables)),
            json.dumps(e.id),
            new_value,
            None,
            reason,
            e.scope,
            batch,
            target,
            now(),
            project.settings().get("author", ""),
        ),
    )


def _undo_ledger(project: Project, payload: dict[str, Any], undo: bool) -> Changes:
    wave_id, ids = payload["wave_id"], payload["ids"]
    entries = {e.id: e for e in entries_for(project, wave_id)}
    # A step holds decisions (undo withdraws them) or withdrawals (undo re-activates what
    # they withdrew); redo does the opposite. Either way only new rows are appended.
    decided = [i for i in ids if i in entries and entries[i].action is not Action.WITHDRAW]
    withdrawn = [
        int(entries[i].withdraws)
        for i in ids
        if i in entries
        and entries[i].action is Action.WITHDRAW
        and (entries[i].withdraws or 0) > 0
        and int(entries[i].withdraws) in entries
    ]
    live = active_ids(project, wave_id)
    if undo:
        _append_withdrawals(project, wave_id, [i for i in decided if i in live], entries)
        back = [t for t in withdrawn if t not in live]
        if back:
            _reinstate(project, wave_id, back)
    else:
        again = [i for i in decided if i not in live]
        if again:
            _reinstate(project, wave_id, again)
        _append_withdrawals(project, wave_id, [t for t in withdrawn if t in live], entries)
    touched = [*decided, *withdrawn]
    variables = frozenset(v for i in touched if i in entries for v in entries[i].variables)
    return Changes(wave_ids=frozenset({wave_id}), variables=variables, ledger=True)


UNDO_HANDLERS["ledger"] = _undo_ledger


def _count(n: int) -> str:
    return "1 decision" if n == 1 else f"{n} decisions"


def _label(decisions: list[Decision]) -> str:
    actions = {d.action for d in decisions}
    if len(actions) == 1:
        action = next(iter(actions)).label.lower()
        cells = sum(max(1, len(d.variables)) for d in decisions)
        if next(iter(actions)) in (Action.CORRECT, Action.SET_MISSING):
            return f"{action.capitalize()}: {cells} value{'s' if cells != 1 else ''}"
        return f"{action.capitalize()}: {_count(len(decisions))}"
    return f"Record {_count(len(decisions))}"
