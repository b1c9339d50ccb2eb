"""Work across waves: carry cleaning rules forward, compare waves, follow the same people.

* :func:`reapply_rules` copies the "for every value like this" decisions of earlier waves
  into a new wave's ledger (each with a reason saying where it came from) and runs the
  checks with the codebook's ranges and the instrument's consistency rules. Single-cell
  corrections belong to one respondent in one wave and are never carried over.
* :func:`compare_waves` puts one question's answers in two or more waves side by side:
  counts, percentages, each wave's base and the change in percentage points, with small
  counts hidden by the same rule as any other table, and wording changes named in the notes.
* :func:`match_respondents` links respondents of two waves by their identifier (entry and
  exit, or this year and last) and describes how the people who were found in both waves
  differ from those who were not.
* :func:`transition_table` counts, for an ordered question, how the matched respondents'
  answers moved between the waves: up, the same, or down, and the share who improved.

Differences between waves describe the respondents; they are not proof of a cause.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from core.errors import PlaincountError, TableError
from core.kinds import Kind
from core.project import Changes, Project, Wave
from core.tables.captions import short_title, suppression_note
from core.tables.result import Cell, TableResult
from core.tables.spec import TableSpec
from core.tables.suppression import Suppression, suppress
from core.wavematch import MatchReport
from core.working import WorkingData, working_data

CAUSE_CAUTION = (
    "Differences between waves describe the people who answered each time; they are not "
    "proof that the program (or anything else) caused them."
)
DIFFERENT_PEOPLE = (
    "The waves may include different people: a change can come from who answered as much "
    "as from a change in the people themselves."
)
MATCH_CAUTION = (
    "Matched and unmatched respondents are compared descriptively: the differences show who "
    "was found in both waves, not why, and are not proof of a cause."
)
COMPLEMENT = "–"


# ---------------------------------------------------------------------------- rules
@dataclass(frozen=True)
class RuleReapplication:
    """What :func:`reapply_rules` carried into a wave, and the flags the wave now has."""

    wave: str
    copied: list[dict[str, Any]]
    skipped: list[dict[str, Any]]
    consistency_rules: list[str]
    ranges: dict[str, list[float]]
    flags: dict[str, int]
    changes: Changes = field(default_factory=Changes)

    def to_json(self) -> dict[str, Any]:
        return {
            "wave": self.wave,
            "copied": self.copied,
            "skipped": self.skipped,
            "consistency_rules": self.consistency_rules,
            "ranges": self.ranges,
            "flags": self.flags,
        }


def reapply_rules(project: Project, wave_id: int, *, flags: bool = True) -> RuleReapplication:
    """Re-apply the instrument's cleaning rules to one wave (usually the newest).

    Range limits live in the codebook and consistency rules belong to the instrument, so
    both already apply to every wave; the "for every value like this" recodes (ledger
    entries of scope "rule") of other waves are copied into this wave's ledger as one
    undoable step, each with a reason naming the wave it came from. Single-cell decisions
    (corrections, set to missing, reversals, exclusions) are never copied: they were about
    one respondent's answer in another wave. With ``flags`` False the checks are not run
    (``flags`` in the result is then empty).
    """
    from core.cleaning import apply_rules_to_wave, flags_for, rules_for_next_wave
    from core.ledger import entries_for

    wave = project.wave(wave_id)
    items = rules_for_next_wave(project, wave.instrument_id)
    before = {e.id for e in entries_for(project, wave_id)}
    ids, changes = apply_rules_to_wave(project, wave_id)
    new_entries = [e for e in entries_for(project, wave_id) if e.id in ids and e.id not in before]
    columns = set(project.raw_table(wave_id).columns)
    copied = [
        {
            "entry_id": e.id,
            "variables": list(e.variables),
            "old_value": e.old_value,
            "new_value": e.new_value,
            "reason": e.reason,
        }
        for e in new_entries
    ]
    done = {(tuple(c["variables"]), str(c["old_value"])) for c in copied}
    skipped = []
    for item in items:
        if item["kind"] != "recode" or item["wave"] == wave.label:
            continue
        names = tuple(v for v in item["variables"] if v in columns)
        if (names, str(item["old_value"])) in done:
            continue
        why = "already in force in this wave" if names else "this wave has none of its variables"
        skipped.append({**item, "why": why})
    codebook = project.codebook(wave.instrument_id)
    ranges = {v.name: list(v.range) for v in codebook if v.range is not None and v.name in columns}
    counts: dict[str, int] = {}
    for flag in flags_for(project, wave_id).flags if flags else ():
        counts[flag.check] = counts.get(flag.check, 0) + 1
    return RuleReapplication(
        wave=wave.label,
        copied=copied,
        skipped=skipped,
        consistency_rules=[i["text"] for i in items if i["kind"] == "consistency"],
        ranges=ranges,
        flags=counts,
        changes=changes,
    )


# ---------------------------------------------------------------------------- comparison
def _waves_for(project: Project, spec: TableSpec, labels: Sequence[str]) -> list[Wave]:
    from core.tables.build import resolve_wave

    labels = [str(w).strip() for w in labels if str(w).strip()]
    if len(labels) < 2:
        raise TableError("Name at least two waves to compare, for example 2026,2027.")
    if len(set(labels)) != len(labels):
        raise TableError("Each wave can be compared only once; a wave is named twice.")
    waves = [resolve_wave(project, spec.with_changes(wave=w, compare_waves=())) for w in labels]
    if len({w.instrument_id for w in waves}) != 1:
        raise TableError("Waves can be compared only within one questionnaire; name it.")
    return waves


def wording_notes(project: Project, waves: Sequence[Wave], variable: str) -> list[str]:
    """Sentences naming changes in the question or its answers between the waves compared.

    Read from each later wave's import report (the match made when it was imported).
    """
    notes: list[str] = []
    for wave in waves[1:]:
        data = wave.import_report.get("match")
        if not data:
            continue
        report = MatchReport.from_json(data)
        for c in report.columns:
            if c.target != variable:
                continue
            if c.status == "renamed":
                notes.append(
                    f"In wave {wave.label} the file called this question {c.column}; it was "
                    f"matched to {variable} ({c.reason})."
                )
            if c.question_changed:
                notes.append(
                    f"Wording changed: in wave {wave.label} the question read “{c.question}” "
                    f"(the codebook has “{c.old_question}”). Compare these waves with care."
                )
        for m in report.levels:
            if m.variable == variable and m.applied:
                notes.append(
                    f"Wording changed: in wave {wave.label} the answer “{m.answer}” was offered "
                    f"instead of “{m.level}” and is counted as “{m.level}”. Compare this answer "
                    "with care."
                )
    return notes


def compare_waves(project: Project, spec: TableSpec, waves: Sequence[str]) -> TableResult:
    """One question's answers in several waves, side by side, with the change in points.

    Each wave is tabulated from its own working data with the spec's missing-data treatment.
    Counts are hidden by the project's small-cell rule across the whole comparison (a
    percentage or change next to a hidden count is hidden too). The change in percentage
    points runs from the first wave named to the last.

    Returns a :class:`TableResult` with ``table_type`` "waves" and data
    ``{"waves", "levels", "counts", "percents", "change_pp", "bases", "min_cell"}``.
    """
    from core.tables.build import table_kind

    if spec.by:
        raise TableError(
            "A wave comparison cannot also be broken down by another question; compare the "
            "waves first, or tabulate each wave with its break-down."
        )
    found = _waves_for(project, spec, waves)
    labels = [w.label for w in found]
    codebook = project.codebook(found[0].instrument_id)
    family, target = table_kind(codebook, spec.variable)
    var = codebook.get(target)
    if family not in ("categorical", "likert") or var is None:
        raise TableError(
            f"{spec.variable} cannot be compared across waves here: wave comparisons count "
            "the answers of one question with answer categories (a category, rating-scale or "
            "ordered question). Compare a battery item by item, and numbers by their "
            "statistics in each wave's table."
        )
    for wave in found:
        if var.name not in project.raw_table(wave.id).columns:
            raise TableError(f"{var.name} was not asked in wave {wave.label}: nothing to compare.")
    k = spec.min_cell if spec.min_cell is not None else int(project.settings().get("min_cell", 5))
    plain = spec.with_changes(compare_waves=(), min_cell=0, by=(), chart=None)
    per_wave = [_wave_table(project, plain.with_changes(wave=w.label), w) for w in found]
    levels = list(var.levels)
    counts = np.array(
        [[int(r.data["counts"].get(lv) or 0) for r in per_wave] for lv in levels], dtype=float
    )
    bases = [int(r.data.get("base", r.n_valid)) for r in per_wave]
    sup = suppress(counts, k, row_totals=False, col_totals=True, protect_totals=False)
    data: dict[str, Any] = {
        "waves": labels,
        "levels": levels,
        "counts": {},
        "percents": {},
        "change_pp": {},
        "bases": {},
        "ordered": var.kind.ordered,
        "min_cell": k,
        "percent_base": per_wave[0].data.get("percent_base", "those who answered"),
    }
    for j, (label, r) in enumerate(zip(labels, per_wave)):
        data["counts"][label] = {
            lv: None if sup.cells[i, j] else int(counts[i, j]) for i, lv in enumerate(levels)
        }
        data["percents"][label] = {
            lv: None if sup.cells[i, j] else r.data["percents"].get(lv)
            for i, lv in enumerate(levels)
        }
        # A group smaller than the threshold is itself a small count: its base is hidden too.
        data["bases"][label] = bases[j] if bases[j] == 0 or bases[j] >= k or k <= 1 else None
    first, last = labels[0], labels[-1]
    for lv in levels:
        a, b = data["percents"][first][lv], data["percents"][last][lv]
        data["change_pp"][lv] = None if a is None or b is None else round(b - a, 6)

    columns = ["Answer"]
    for label in labels:
        columns += [f"{label} count", f"{label} %"]
    columns.append(f"Change {first} to {last} (points)")
    rows: list[list[Cell]] = []
    roles: list[str] = []
    for i, lv in enumerate(levels):
        row = [Cell(lv, "text")]
        for j, label in enumerate(labels):
            row.append(_count_cell(counts[i, j], sup, i, j, k))
            p = data["percents"][label][lv]
            hidden = sup.cells[i, j]
            row.append(
                Cell(None, "percent", suppressed=True, text="")
                if hidden
                else Cell(p, "percent", flag=_unstable(bases[j], project))
            )
        pp = data["change_pp"][lv]
        row.append(
            Cell(None, "pp", suppressed=True, text="") if pp is None else Cell(float(pp), "pp")
        )
        rows.append(row)
        roles.append("level")
    total = [Cell("Total (base)", "text")]
    for label in labels:
        b = data["bases"][label]
        total += [
            Cell(b, "count")
            if b is not None
            else Cell(None, "count", suppressed=True, text=f"<{k}"),
            Cell(100.0 if b else None, "percent"),
        ]
    total.append(Cell(None, "text"))
    rows.append(total)
    roles.append("total")

    notes = _combined_notes(labels, per_wave)
    notes.append(suppression_note(k, sup.primary, sup.secondary))
    notes.extend(wording_notes(project, found, var.name))
    instrument = project.instrument(found[0].instrument_id).name
    notes.append(f"Source: {instrument}, waves {_and(labels)}.")
    notes.append(
        f"Change in percentage points is the {last} percentage minus the {first} percentage."
    )
    notes += [CAUSE_CAUTION, DIFFERENT_PEOPLE]
    title = f"{short_title(var.label)} — waves {_and(labels)}"
    base = "; ".join(
        f"{label}: n = {b:,}" if b is not None else f"{label}: n < {k}"
        for label, b in data["bases"].items()
    )
    who = "All respondents" if data["percent_base"] == "all respondents" else "Answered"
    return TableResult(
        spec=spec,
        table_type="waves",
        kind=var.kind.value,
        title=title,
        base=f"{who} — {base}",
        n_valid=sum(r.n_valid for r in per_wave),
        n_missing=sum(r.n_missing for r in per_wave),
        columns=columns,
        rows=rows,
        row_roles=roles,
        notes=[n for n in notes if n],
        data=data,
        wave=", ".join(labels),
        instrument=instrument,
    )


def _wave_table(project: Project, spec: TableSpec, wave: Wave) -> TableResult:
    """One wave's own table of the question (unsuppressed: suppression is applied across
    the comparison), with its missing-data, treatment and cleaning notes."""
    from core.tables.build import table_for_working, table_variables
    from core.tables.captions import cleaning_notes

    working = working_data(project, wave.id)
    settings = {
        **project.settings(),
        "wave": wave.label,
        "instrument": project.instrument(wave.instrument_id).name,
        "population": bool(wave.settings.get("population", True)),
        "cleaning_notes": cleaning_notes(project, wave.id, table_variables(working.codebook, spec)),
    }
    return table_for_working(working, spec, settings)


def _count_cell(n: float, sup: Suppression, i: int, j: int, k: int) -> Cell:
    if sup.cells[i, j]:
        return Cell(
            None, "count", suppressed=True, text=f"<{k}" if sup.is_small(i, j) else COMPLEMENT
        )
    return Cell(int(n), "count")


def _unstable(base: int, project: Project) -> str | None:
    limit = int(project.settings().get("unstable_base", 30))
    return "unstable" if 0 < base < limit else None


def _and(items: Sequence[str]) -> str:
    items = list(items)
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _combined_notes(labels: list[str], results: list[TableResult]) -> list[str]:
    """Each wave's own notes (missing data, treatment, cleaning), said once when shared."""
    skip = ("Source:", "Small-cell protection", "Counts from 1 to")
    seen: list[str] = []
    for label, r in zip(labels, results):
        for note in r.notes:
            if not note or note.startswith(skip) or note.startswith("% agreeing"):
                continue
            shared = all(note in other.notes for other in results)
            text = note if shared else f"Wave {label}: {note}"
            if text not in seen:
                seen.append(text)
    return seen


# ---------------------------------------------------------------------------- respondents
def _wave_by_label(project: Project, label: str, instrument: str | int | None) -> Wave:
    return project.find_wave(str(label), instrument)


def _people(working: WorkingData) -> tuple[pd.Series, int]:
    """Analysed rows' respondent ids (first submission of each id) and duplicates left out."""
    if working.codebook.identifier() is None:
        raise PlaincountError(
            "Respondents can be matched across waves only by an identifier; mark the "
            "identifier column in the codebook first."
        )
    values, _ = working.analysed()
    ids = working.respondent_ids.loc[values.index].astype(str)
    first = ~ids.duplicated(keep="first")
    return ids[first], int((~first).sum())


@dataclass(frozen=True)
class RespondentMatch:
    """Respondents of two waves linked by identifier, and how the unmatched differ."""

    wave_a: str
    wave_b: str
    n_a: int
    n_b: int
    matched: int
    pct_of_a: float | None
    pct_of_b: float | None
    duplicates: dict[str, int]
    comparison: list[dict[str, Any]]
    compared_in: str
    min_cell: int
    notes: list[str]

    def to_json(self) -> dict[str, Any]:
        return {
            "waves": [self.wave_a, self.wave_b],
            "respondents": {self.wave_a: self.n_a, self.wave_b: self.n_b},
            "matched": self.matched,
            "pct_of_a": self.pct_of_a,
            "pct_of_b": self.pct_of_b,
            "duplicates_left_out": self.duplicates,
            "compared_in": self.compared_in,
            "min_cell": self.min_cell,
            "comparison": self.comparison,
            "notes": self.notes,
        }


def shared_variables(project: Project, wave_a: Wave, wave_b: Wave) -> list[str]:
    """Variables with answers in both waves that can be summarised (numbers, categories)."""
    codebook = project.codebook(wave_b.instrument_id)
    cols_a = set(project.raw_table(wave_a.id).columns)
    cols_b = set(project.raw_table(wave_b.id).columns)
    kinds = (Kind.NUMERIC, Kind.CATEGORICAL, Kind.LIKERT, Kind.ORDINAL)
    return [
        v.name
        for v in codebook
        if v.kind in kinds and v.name in cols_a and v.name in cols_b and not v.personal
    ]


def match_respondents(
    project: Project,
    wave_a: str,
    wave_b: str,
    *,
    instrument: str | int | None = None,
    variables: Sequence[str] | None = None,
    compared_in: str = "a",
    min_cell: int | None = None,
) -> RespondentMatch:
    """Link respondents of two waves by identifier and compare matched with unmatched.

    The match rate is given both ways: the share of wave A's respondents found in wave B
    (who stayed, for entry and exit) and the share of wave B's found in wave A (who
    returned). The comparison describes, within one wave (``compared_in`` "a" or "b"), the
    matched and the unmatched respondents on the variables both waves share: the mean of
    each number and the % choosing each answer of each category question, with small
    counts hidden. A respondent id submitted twice in one wave counts once (its first
    submission); excluded respondents are left out.
    """
    wa = _wave_by_label(project, wave_a, instrument)
    wb = _wave_by_label(project, wave_b, instrument)
    if wa.id == wb.id:
        raise PlaincountError("Choose two different waves to match respondents across.")
    if wa.instrument_id != wb.instrument_id and instrument is None:
        pass  # matching across questionnaires (intake form and exit survey) is allowed
    work_a, work_b = working_data(project, wa.id), working_data(project, wb.id)
    ids_a, dup_a = _people(work_a)
    ids_b, dup_b = _people(work_b)
    both = set(ids_a) & set(ids_b)
    k = min_cell if min_cell is not None else int(project.settings().get("min_cell", 5))
    if compared_in not in ("a", "b"):
        raise PlaincountError("compared_in is 'a' (the first wave) or 'b' (the second).")
    work, ids = (work_a, ids_a) if compared_in == "a" else (work_b, ids_b)
    names = list(variables) if variables is not None else shared_variables(project, wa, wb)
    is_matched = ids.isin(both)
    rows = _group_rows(work, ids.index, is_matched.to_numpy(), names, k)
    label = wa.label if compared_in == "a" else wb.label
    other = wb.label if compared_in == "a" else wa.label
    n_m = int(is_matched.sum())
    n_u = int((~is_matched).sum())
    notes = [
        f"Respondents are matched on the identifier {work_b.codebook.identifier().name}: "
        f"{len(both):,} appear in both waves.",
        f"The comparison is within wave {label}: {n_m:,} respondents also found in wave "
        f"{other} against {n_u:,} not found there.",
    ]
    if dup_a or dup_b:
        notes.append(
            "An identifier submitted more than once in a wave is counted once (its first "
            f"submission): {dup_a} left out in wave {wa.label}, {dup_b} in wave {wb.label}."
        )
    if 0 < min(n_m, n_u) < int(project.settings().get("unstable_base", 30)):
        notes.append(
            "One of the groups is small: its percentages and means can change a lot with one "
            "or two people."
        )
    notes.append(
        f"Counts from 1 to {k - 1} are hidden, with the percentages made from them."
        if k > 1
        else "Small-cell protection is off."
    )
    notes.append(MATCH_CAUTION)
    return RespondentMatch(
        wave_a=wa.label,
        wave_b=wb.label,
        n_a=len(ids_a),
        n_b=len(ids_b),
        matched=len(both),
        pct_of_a=_pct(len(both), len(ids_a)),
        pct_of_b=_pct(len(both), len(ids_b)),
        duplicates={wa.label: dup_a, wb.label: dup_b},
        comparison=rows,
        compared_in=label,
        min_cell=k,
        notes=notes,
    )


def _pct(n: int, base: int) -> float | None:
    return round(100.0 * n / base, 1) if base else None


def _group_rows(
    work: WorkingData, index: pd.Index, matched: np.ndarray, names: Sequence[str], k: int
) -> list[dict[str, Any]]:
    values = work.values.loc[index]
    rows: list[dict[str, Any]] = []
    for name in names:
        var = work.codebook.get(name)
        if var is None or name not in values.columns:
            raise PlaincountError(f"There is no variable called {name!r} in both waves.")
        col = values[name]
        if var.kind is Kind.NUMERIC:
            x = pd.to_numeric(col, errors="coerce").to_numpy(dtype=float)
            out = {"variable": name, "level": None, "statistic": "mean"}
            for key, mask in (("matched", matched), ("unmatched", ~matched)):
                got = x[mask & ~np.isnan(x)]
                small = 0 < len(got) < k
                out[f"n_{key}"] = None if small else len(got)
                out[key] = None if small or not len(got) else round(float(got.mean()), 3)
            a, b = out["matched"], out["unmatched"]
            out["difference"] = None if a is None or b is None else round(a - b, 3)
            rows.append(out)
            continue
        if not var.kind.has_levels:
            continue
        codes = col.cat.codes.to_numpy() if isinstance(col.dtype, pd.CategoricalDtype) else None
        if codes is None:
            continue
        table = np.array(
            [
                [np.sum((codes == i) & matched), np.sum((codes == i) & ~matched)]
                for i in range(len(var.levels))
            ],
            dtype=float,
        )
        sup = suppress(table, k, row_totals=False, col_totals=True, protect_totals=False)
        bases = table.sum(axis=0)
        for i, lv in enumerate(var.levels):
            out = {"variable": name, "level": lv, "statistic": "percent"}
            for j, key in enumerate(("matched", "unmatched")):
                hidden = bool(sup.cells[i, j]) or 0 < bases[j] < k
                out[f"n_{key}"] = None if hidden else int(table[i, j])
                out[key] = None if hidden else _pct_f(table[i, j], bases[j])
            a, b = out["matched"], out["unmatched"]
            out["difference"] = None if a is None or b is None else round(a - b, 3)
            rows.append(out)
    return rows


def _pct_f(n: float, base: float) -> float | None:
    return round(100.0 * float(n) / float(base), 3) if base else None


# ---------------------------------------------------------------------------- transitions
@dataclass(frozen=True)
class Transition:
    """How matched respondents' answers to one ordered question moved between two waves.

    ``counts[from_level][to_level]`` counts respondents (None where hidden). Moving "up"
    means towards the last level of the codebook's order; ``improved`` counts the moves in
    the better direction (up, or down for a negatively worded item).
    """

    variable: str
    title: str
    waves: tuple[str, str]
    levels: list[str]
    counts: dict[str, dict[str, int | None]]
    row_totals: dict[str, int | None]
    col_totals: dict[str, int | None]
    n_matched: int
    n_pairs: int
    moved_up: int | None
    stayed: int | None
    moved_down: int | None
    improved: int | None
    improved_pct: float | None
    better: str
    min_cell: int
    notes: list[str]
    small_cells: tuple[tuple[str, str], ...] = ()

    def to_json(self) -> dict[str, Any]:
        return {
            "variable": self.variable,
            "title": self.title,
            "waves": list(self.waves),
            "levels": self.levels,
            "counts": self.counts,
            "row_totals": self.row_totals,
            "col_totals": self.col_totals,
            "n_matched": self.n_matched,
            "n_pairs": self.n_pairs,
            "moved_up": self.moved_up,
            "stayed": self.stayed,
            "moved_down": self.moved_down,
            "improved": self.improved,
            "improved_pct": self.improved_pct,
            "better": self.better,
            "min_cell": self.min_cell,
            "notes": self.notes,
        }

    def text_rows(self) -> list[list[str]]:
        """A display table: one row per answer in the first wave, one column per answer in
        the second, with totals."""
        hidden = f"<{self.min_cell}"
        header = [f"{self.waves[0]} \\ {self.waves[1]}", *self.levels, "Total"]
        out = [header]
        for a in self.levels:
            cells = [
                _show(self.counts[a][b], hidden if (a, b) in self.small_cells else COMPLEMENT)
                for b in self.levels
            ]
            out.append([a, *cells, _show(self.row_totals[a], hidden)])
        totals = [_show(self.col_totals[b], hidden) for b in self.levels]
        out.append(["Total", *totals, f"{self.n_pairs:,}"])
        return out


def _show(n: int | None, hidden: str) -> str:
    return hidden if n is None else f"{n:,}"


def transition_table(
    project: Project,
    variable: str,
    wave_a: str,
    wave_b: str,
    *,
    instrument: str | int | None = None,
    min_cell: int | None = None,
) -> Transition:
    """Levels x levels counts of matched respondents' answers in two waves.

    Only respondents found in both waves (by identifier) who answered the question both
    times are counted. Counts from 1 to the small-cell threshold minus one are hidden, with
    enough others that they cannot be worked out from the totals; the up / same / down
    counts are hidden when they are small themselves.
    """
    wa = _wave_by_label(project, wave_a, instrument)
    wb = _wave_by_label(project, wave_b, instrument)
    if wa.id == wb.id:
        raise PlaincountError("Choose two different waves for a transition table.")
    codebook = project.codebook(wb.instrument_id)
    var = codebook.get(variable)
    if var is None:
        raise PlaincountError(f"There is no variable called {variable!r}.")
    if not var.kind.ordered:
        raise PlaincountError(
            f"{variable} is a {var.kind.label.lower()} question: moving up or down needs "
            "ordered answers (a rating scale or ordered categories)."
        )
    levels = list(var.levels)
    work_a, work_b = working_data(project, wa.id), working_data(project, wb.id)
    for work, w in ((work_a, wa), (work_b, wb)):
        if variable not in work.values.columns or variable not in project.raw_table(w.id):
            raise PlaincountError(f"{variable} was not asked in wave {w.label}.")
    other = work_a.codebook.get(variable)
    if other is None or tuple(other.levels) != tuple(levels):
        raise PlaincountError(
            f"{variable} has different answers in the two questionnaires; a transition table "
            "needs the same ordered answers in both waves."
        )
    ids_a, _ = _people(work_a)
    ids_b, _ = _people(work_b)
    code_a = pd.Series(
        work_a.values.loc[ids_a.index, variable].cat.codes.to_numpy(), index=ids_a.to_numpy()
    )
    code_b = pd.Series(
        work_b.values.loc[ids_b.index, variable].cat.codes.to_numpy(), index=ids_b.to_numpy()
    )
    both = code_a.index.intersection(code_b.index)
    a = code_a.loc[both].to_numpy()
    b = code_b.loc[both].to_numpy()
    answered = (a >= 0) & (b >= 0)
    a, b = a[answered], b[answered]
    m = len(levels)
    matrix = np.zeros((m, m), dtype=np.int64)
    np.add.at(matrix, (a, b), 1)
    up, same, down = int((b > a).sum()), int((b == a).sum()), int((b < a).sum())
    better = "down" if var.keying == "negative" else "up"
    improved = down if better == "down" else up
    k = min_cell if min_cell is not None else int(project.settings().get("min_cell", 5))
    sup = suppress(matrix, k, row_totals=True, col_totals=True, protect_totals=True)
    counts = {
        levels[i]: {levels[j]: None if sup.cells[i, j] else int(matrix[i, j]) for j in range(m)}
        for i in range(m)
    }
    small_cells = tuple(
        (levels[i], levels[j]) for i in range(m) for j in range(m) if sup.is_small(i, j)
    )
    rows_t = {levels[i]: None if sup.row_totals[i] else int(matrix[i].sum()) for i in range(m)}
    cols_t = {levels[j]: None if sup.col_totals[j] else int(matrix[:, j].sum()) for j in range(m)}

    # The up / same / down counts are sums of cells; shown beside hidden cells they could
    # give one away (the same count minus the shown diagonal). Hide them when they would.
    reveal = sup.any and _sums_reveal(matrix, sup, k)

    def small(n: int) -> int | None:
        return None if reveal or 0 < n < k else n

    n_pairs = int(matrix.sum())
    notes = [
        f"{len(both):,} respondents appear in both waves (matched on "
        f"{codebook.identifier().name}); {n_pairs:,} of them answered {variable} both times.",
        "Rows are the answer in wave "
        f"{wa.label}, columns the answer in wave {wb.label}. Moving up means towards "
        f"“{levels[-1]}”.",
    ]
    if reveal:
        notes.append(
            "How many moved up, stayed or moved down is hidden: with the hidden counts it "
            "would let a small count be worked out."
        )
    if better == "down":
        notes.append(
            f"{variable} is worded negatively, so moving down (towards “{levels[0]}”) counts "
            "as improving."
        )
    notes.append(suppression_note(k, sup.primary, sup.secondary))
    notes.append(CAUSE_CAUTION)
    return Transition(
        variable=variable,
        title=short_title(var.label),
        waves=(wa.label, wb.label),
        levels=levels,
        counts=counts,
        row_totals=rows_t,
        col_totals=cols_t,
        n_matched=len(both),
        n_pairs=n_pairs,
        moved_up=small(up),
        stayed=small(same),
        moved_down=small(down),
        improved=small(improved),
        improved_pct=None if small(improved) is None else _pct(improved, n_pairs),
        better=better,
        min_cell=k,
        notes=[n for n in notes if n],
        small_cells=small_cells,
    )


def _sums_reveal(matrix: np.ndarray, sup: Suppression, k: int) -> bool:
    """Would publishing the up / same / down sums pin down a hidden cell?

    Each hidden cell is minimised and maximised by linear programming under every shown
    number (row and column totals, the three sums) with the bounds a reader knows; a range
    narrower than one means its value could be worked out.
    """
    from scipy.optimize import linprog

    m = matrix.shape[0]
    cells = [(int(i), int(j)) for i, j in np.argwhere(sup.cells)]
    if not cells:
        return False
    index = {c: n for n, c in enumerate(cells)}
    a_eq, b_eq = [], []

    def line(members: list[tuple[int, int]], total: float) -> None:
        coeffs = np.zeros(len(cells))
        known = 0.0
        for c in members:
            if c in index:
                coeffs[index[c]] = 1.0
            else:
                known += float(matrix[c])
        if coeffs.any():
            a_eq.append(coeffs)
            b_eq.append(total - known)

    for i in range(m):
        if not sup.row_totals[i]:
            line([(i, j) for j in range(m)], float(matrix[i].sum()))
    for j in range(m):
        if not sup.col_totals[j]:
            line([(i, j) for i in range(m)], float(matrix[:, j].sum()))
    for test in (np.greater, np.equal, np.less):
        members = [(i, j) for i in range(m) for j in range(m) if test(j, i)]
        line(members, float(sum(matrix[c] for c in members)))
    bounds = []
    for c in cells:
        if sup.is_small(*c):
            bounds.append((0.0, k - 1.0))
        elif matrix[c] >= k:
            bounds.append((float(k), None))
        else:
            bounds.append((0.0, None))
    for n in range(len(cells)):
        cost = np.zeros(len(cells))
        cost[n] = 1.0
        lo = linprog(cost, A_eq=np.array(a_eq), b_eq=np.array(b_eq), bounds=bounds)
        hi = linprog(-cost, A_eq=np.array(a_eq), b_eq=np.array(b_eq), bounds=bounds)
        if lo.status == 0 and hi.status == 0 and (-hi.fun) - lo.fun < 1.0 - 1e-9:
            return True
    return False


# ---------------------------------------------------------------------------- kept results
def outline_for_wave(
    project: Project, wave: str, compare_with: str | None = None
) -> list[tuple[Any, TableResult | None, str]]:
    """Every kept result recomputed for ``wave`` (or as a comparison ``compare_with`` ->
    ``wave``): (outline item, result or None, plain message if it could not be computed).

    The outline itself is not changed; keep a recomputed result to add it to the report.
    """
    from core import outline

    out: list[tuple[Any, TableResult | None, str]] = []
    for item in outline.items(project):
        spec = item.spec.with_changes(wave=wave)
        if compare_with is not None:
            spec = spec.with_changes(compare_waves=(compare_with, wave), chart="waves", by=())
        try:
            out.append((item, outline.compute(project, spec), ""))
        except PlaincountError as exc:
            out.append((item, None, str(exc)))
    return out
