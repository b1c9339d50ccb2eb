"""Disclosure: plain-language notes and a data-treatment appendix written from the ledger.

Every figure in a report can be traced to the source because every change is in the ledger;
these functions say in words what was changed and why, per variable (for table notes) and
in full (for the report's appendix). Respondents are named by data row, not by identifier,
so the appendix can be shared (confidentiality by default).
"""

from __future__ import annotations

from collections import Counter, defaultdict
from typing import Any

from core.checks.flag import CHECK_LABELS
from core.checks.settings import load_settings
from core.codebook import Codebook
from core.decoding import cell_texts
from core.ledger import ACTION_LABELS, Action, LedgerEntry, entries_for, surviving
from core.project import Project
from core.rules import list_rules

_VERBS = {
    Action.CORRECT: "corrected",
    Action.SET_MISSING: "set to missing",
    Action.KEEP: "checked and kept as they were",
    Action.REVERSE: "reversed on the scale",
}


def short_label(codebook: Codebook, name: str) -> str:
    """A variable's name as a sentence can carry it: a short label-like question text
    ("Credits this term"), else the name in words ("hours work week")."""
    var = codebook.get(name)
    question = (var.question if var is not None else "").strip()
    if question and len(question) <= 40 and not question.endswith("?"):
        return question[0].lower() + question[1:].rstrip(":. ")
    return name.replace("_", " ")


def _n(count: int, one: str, many: str) -> str:
    return f"{count} {one if count == 1 else many}"


def _check_words(check: str | None) -> str:
    return f" ({CHECK_LABELS.get(check, check).lower()})" if check else ""


def _reasons(entries: list[LedgerEntry]) -> str:
    reasons = list(dict.fromkeys(e.reason.strip().rstrip(".") for e in entries))
    if len(reasons) > 3:
        return "; ".join(reasons[:3]) + f"; and {len(reasons) - 3} other reasons"
    return "; ".join(reasons)


def _live(project: Project, wave_id: int) -> tuple[list[LedgerEntry], list[LedgerEntry]]:
    entries = entries_for(project, wave_id)
    return entries, surviving(entries)


def _codebook(project: Project, wave_id: int) -> Codebook:
    return project.codebook(project.wave(wave_id).instrument_id)


def _recoded_cells(project: Project, wave_id: int, entry: LedgerEntry, name: str) -> int:
    raw = project.raw_table(wave_id)
    if name not in raw.columns:
        return 0
    wanted = str(entry.old_value).strip()
    return int(sum(1 for t in cell_texts(raw[name]) if t is not None and t == wanted))


def variable_notes(project: Project, wave_id: int, variables: list[str]) -> list[str]:
    """Plain sentences about decisions in force that touch these variables.

    For example "2 values of credits this term were corrected (wandering zero): checked
    against the paper form." Exclusions affect every variable, so they are always noted.
    """
    codebook = _codebook(project, wave_id)
    _, live = _live(project, wave_id)
    wanted = list(dict.fromkeys(variables))
    notes: list[str] = []
    for name in wanted:
        label = short_label(codebook, name)
        groups: dict[tuple[Action, str | None], list[LedgerEntry]] = defaultdict(list)
        for e in live:
            if name in e.variables and e.action in _VERBS:
                groups[(e.action, e.check)].append(e)
        for (action, check), items in groups.items():
            count = len(items)
            if action is Action.REVERSE:
                who = _n(count, "respondent", "respondents")
                text = (
                    f"The answers of {who} to {label} were reversed on the scale"
                    f"{_check_words(check)}: {_reasons(items)}."
                )
            else:
                noun = f"{'value' if count == 1 else 'values'} of {label}"
                verb = "was" if count == 1 else "were"
                text = (
                    f"{count} {noun} {verb} {_VERBS[action]}{_check_words(check)}: "
                    f"{_reasons(items)}."
                )
            notes.append(text)
        for e in live:
            if e.action is Action.RECODE_ALL and name in e.variables:
                cells = _recoded_cells(project, wave_id, e, name)
                to = "set to missing" if e.new_value is None else f"recoded to {e.new_value}"
                notes.append(
                    f"Every {e.old_value!s} in {label} ({_n(cells, 'value', 'values')}) was "
                    f"{to}: {e.reason.rstrip('.')}."
                )
    excluded = [e for e in live if e.action is Action.EXCLUDE]
    rows = {e.row for e in excluded}
    if rows:
        notes.append(
            f"{_n(len(rows), 'respondent was', 'respondents were')} left out of every "
            f"analysis: {_reasons(excluded)}."
        )
    return notes


def _value_text(value: Any) -> str:
    if value is None:
        return "(missing)"
    if isinstance(value, dict):
        return "; ".join(f"{k}: {v}" for k, v in value.items())
    if isinstance(value, float) and value == int(value):
        return str(int(value))
    return str(value)


def treatment_appendix(
    project: Project, wave_id: int, show_respondents: bool = False
) -> list[dict[str, Any]]:
    """The data-treatment appendix of a report, as sections.

    Each section is ``{"heading", "paragraphs": [...], "table": {"columns", "rows"} | None}``:
    how the data were checked, a summary of decisions by type, every decision, exclusions,
    rules that re-apply to later waves. Respondents appear by data row unless
    ``show_respondents`` (identifiers are personal data and are not shown by default).
    """
    wave = project.wave(wave_id)
    codebook = _codebook(project, wave_id)
    entries, live = _live(project, wave_id)
    decisions = [e for e in entries if e.action is not Action.WITHDRAW]
    live_ids = {e.id for e in live}
    withdrawn = [e for e in decisions if e.id not in live_ids]
    settings = load_settings(project)
    sections: list[dict[str, Any]] = []

    sections.append(
        {
            "heading": "How the data were checked",
            "paragraphs": [
                f"The raw data of wave {wave.label} ({_n(wave.n_rows, 'row', 'rows')}, source "
                f"file {wave.source_name}) were never changed: every correction is recorded "
                "as a decision with its reason, and the figures are computed from the raw "
                "data with these decisions applied. The raw data's SHA-256 fingerprint is "
                f"{wave.raw_sha256}.",
                "Checks used: plausible ranges, outliers, wandering zeros, consistency rules, "
                "duplicates, straight-lining, reversed scales, speeders and answers that are "
                "not valid for the question.",
                *settings.describe(),
            ],
            "table": None,
        }
    )

    counts = Counter(e.action for e in live)
    summary_rows = [
        [ACTION_LABELS[a], counts[a]]
        for a in (
            Action.CORRECT,
            Action.SET_MISSING,
            Action.REVERSE,
            Action.EXCLUDE,
            Action.RECODE_ALL,
            Action.KEEP,
        )
        if counts[a]
    ]
    by_check = Counter(CHECK_LABELS.get(e.check, e.check) for e in live if e.check)
    paragraphs = [
        f"{_n(len(live), 'decision is', 'decisions are')} in force"
        + (
            f"; {_n(len(withdrawn), 'earlier decision was', 'earlier decisions were')} "
            "withdrawn and are listed for the record."
            if withdrawn
            else "."
        )
    ]
    if by_check:
        paragraphs.append(
            "Decisions prompted by each check: "
            + ", ".join(f"{label.lower()} {n}" for label, n in sorted(by_check.items()))
            + "."
        )
    if not decisions:
        paragraphs = ["No cleaning decisions were recorded: the data are analysed as imported."]
    sections.append(
        {
            "heading": "Summary of cleaning decisions",
            "paragraphs": paragraphs,
            "table": {"columns": ["Decision", "Number"], "rows": summary_rows}
            if summary_rows
            else None,
        }
    )

    rows = []
    for e in decisions:
        who = (
            e.respondent
            if show_respondents
            else (f"row {e.row + 1}" if e.row is not None else "every matching row")
        )
        rows.append(
            [
                e.id,
                who or "",
                ", ".join(e.variables),
                ACTION_LABELS[e.action],
                _value_text(e.old_value) if e.action is not Action.EXCLUDE else "",
                _value_text(e.new_value) if e.action in (Action.CORRECT, Action.RECODE_ALL) else "",
                CHECK_LABELS.get(e.check, e.check or ""),
                e.reason,
                e.created[:10],
                e.author,
                "in force" if e.id in live_ids else "withdrawn",
            ]
        )
    sections.append(
        {
            "heading": "Every decision",
            "paragraphs": ["Each decision in the order it was made, with its reason."]
            if rows
            else ["There are no decisions to list."],
            "table": {
                "columns": [
                    "Entry",
                    "Respondent" if show_respondents else "Data row",
                    "Variables",
                    "Decision",
                    "Old value",
                    "New value",
                    "Check",
                    "Reason",
                    "Date",
                    "Author",
                    "Status",
                ],
                "rows": rows,
            }
            if rows
            else None,
        }
    )

    excluded = [e for e in live if e.action is Action.EXCLUDE]
    sections.append(
        {
            "heading": "Respondents left out of the analysis",
            "paragraphs": [
                f"{_n(len({e.row for e in excluded}), 'respondent was', 'respondents were')} "
                "left out of every table and chart; their answers stay in the project."
                if excluded
                else "No respondent was left out of the analysis."
            ],
            "table": {
                "columns": ["Respondent" if show_respondents else "Data row", "Check", "Reason"],
                "rows": [
                    [
                        e.respondent if show_respondents else f"row {e.row + 1}",
                        CHECK_LABELS.get(e.check, e.check or ""),
                        e.reason,
                    ]
                    for e in excluded
                ],
            }
            if excluded
            else None,
        }
    )

    rules = list_rules(project, wave.instrument_id, include_removed=True)
    recodes = [e for e in live if e.action is Action.RECODE_ALL]
    rule_rows = [[f"Rule {r.id}", r.text, "in force" if r.active else "removed"] for r in rules] + [
        [
            f"Recode {e.id}",
            f"every {e.old_value} in {', '.join(e.variables)} becomes "
            f"{'missing' if e.new_value is None else e.new_value}",
            "in force",
        ]
        for e in recodes
    ]
    sections.append(
        {
            "heading": "Rules",
            "paragraphs": [
                "Consistency rules were checked for every respondent; recodes of every value "
                "like one answer apply to the whole wave. Both re-apply to the next wave of "
                f"{project.instrument(wave.instrument_id).name}."
                if rule_rows
                else "No consistency rules or recodes were set."
            ],
            "table": {"columns": ["Rule", "Text", "Status"], "rows": rule_rows}
            if rule_rows
            else None,
        }
    )
    _ = codebook
    return sections
