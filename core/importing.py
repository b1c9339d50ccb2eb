"""Import a survey export into a project as a new wave, with its codebook.

All the slow work (reading, converting, inferring) happens before anything is written; the
wave, the original file's bytes and the instrument's codebook are then stored in one
transaction (:meth:`core.project.Project.add_wave`). A cancelled or failed import therefore
leaves the project exactly as it was.

When the instrument already has a codebook, columns with a known name keep their entry and
only new columns are inferred and appended. ``column_map`` (source column name -> codebook
name) and ``level_maps`` (codebook name -> {answer text in this file -> level}) let a later
wave with renamed columns or reworded answers line up with the existing codebook. When the
instrument already has a codebook, :func:`core.wavematch.match_wave` proposes both maps (the
given ones override it) and its report is kept in the import report under ``"match"``.
"""

from __future__ import annotations

import os
import re
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from core.codebook import Codebook, Variable
from core.errors import ImportFailed, PlaincountError
from core.inference import infer_codebook, kind_summary
from core.progress import Progress, ensure_progress
from core.project import Project, Wave, table_to_parquet
from core.readers import read_source
from core.wavematch import MatchReport, match_wave


@dataclass(frozen=True)
class ImportResult:
    """The stored wave, the instrument's codebook after the import, and what happened."""

    wave: Wave
    codebook: Codebook
    report: dict[str, Any]


class _Scaled(Progress):
    """Maps a sub-task's 0..total onto a slice of the caller's progress bar."""

    def __init__(self, outer: Progress, lo: int, hi: int) -> None:
        super().__init__()
        self._outer, self._lo, self._hi = outer, lo, hi
        self._cancel = outer._cancel

    def update(self, done: int, total: int, label: str = "") -> None:
        share = done / total if total else 0.0
        self._outer.update(self._lo + int((self._hi - self._lo) * share), 100, label)


def import_file(
    project: Project,
    path: str | os.PathLike[str],
    *,
    instrument: str = "Participant survey",
    wave: str | None = None,
    sheet: str | int | None = None,
    header_rows: int | None = None,
    encoding: str | None = None,
    delimiter: str | None = None,
    codebook: Codebook | None = None,
    progress: Progress | None = None,
    column_map: dict[str, str] | None = None,
    level_maps: dict[str, dict[str, str]] | None = None,
) -> ImportResult:
    """Read ``path`` and store it as wave ``wave`` of ``instrument`` (created if new).

    ``codebook`` supplies entries to use for matching columns (for example a codebook file
    from last year); entries the instrument already has are kept otherwise, and only
    columns that neither names are inferred. Returns the stored wave, the instrument's
    codebook and the import report (the reader's report plus the kinds inferred).
    """
    progress = ensure_progress(progress)
    path = Path(path)
    instrument = (instrument or "").strip()
    if not instrument:
        raise ImportFailed("Name the instrument (questionnaire) this file belongs to.")
    existing_inst = next((i for i in project.instruments() if i.name == instrument), None)
    labels = [w.label for w in project.waves(existing_inst.id)] if existing_inst else []
    label = (wave or "").strip() or default_wave_label(path, labels)
    if label in labels:
        raise ImportFailed(
            f"{instrument!r} already has a wave labelled {label!r}. Choose another label "
            "(for example the year or 'exit')."
        )

    try:
        data = path.read_bytes()
    except FileNotFoundError:
        raise ImportFailed(f"There is no file at {path}.") from None
    except IsADirectoryError:
        raise ImportFailed(f"{path} is a folder, not a file.") from None
    except OSError as exc:
        raise ImportFailed(f"{path.name} cannot be read: {exc.strerror or exc}.") from None

    source = read_source(
        path,
        sheet=sheet,
        header_rows=header_rows,
        encoding=encoding,
        delimiter=delimiter,
        progress=_Scaled(progress, 0, 60),
        data=data,
    )
    frame, questions = source.frame, dict(source.questions)
    report: dict[str, Any] = dict(source.report)
    base = project.codebook(existing_inst.id) if existing_inst else Codebook()
    if len(base):
        # A later wave: match its columns and answers to the codebook (the given maps win).
        match = match_wave(base, frame, questions, column_map=column_map, level_maps=level_maps)
        column_map = match.column_map
        given = {n: {a: lv for a, lv in m.items() if lv} for n, m in (level_maps or {}).items()}
        level_maps = {**match.level_maps, **{n: m for n, m in given.items() if m}}
        report["match"] = match.to_json()
    if column_map:
        frame, questions, renamed = _rename(frame, questions, column_map)
        report["renamed_columns"] = renamed
        # Entries given for a column that is stored under a codebook name: that entry wins.
        if codebook is not None:
            codebook = Codebook(v for v in codebook if v.name not in column_map)
    # Compress the raw table (as stored: columns already renamed) on another thread while
    # the codebook is inferred: the two together take about as long as the slower of them.
    pool = ThreadPoolExecutor(max_workers=1)
    blob_job = pool.submit(table_to_parquet, frame)
    pool.shutdown(wait=False)

    if codebook is not None:
        for var in codebook:
            base = base.with_variable(var)
    known = [c for c in frame.columns if c in base]
    for name in known:
        # A known variable without question text takes it from this file's second header row.
        if not base[name].question and questions.get(name):
            base = base.with_variable(base[name].updated({"question": questions[name]}))
    new_cols = [c for c in frame.columns if c not in base]
    first_position = max((v.position for v in base), default=0) + 1
    inferred = infer_codebook(
        frame[new_cols],
        {c: q for c, q in questions.items() if c in new_cols},
        progress=_Scaled(progress, 60, 90),
        first_position=first_position,
    )
    merged = Codebook([*base, *_no_group_clash(inferred, base)])
    if level_maps:
        merged = _with_level_maps(merged, level_maps)

    report["instrument"] = instrument
    report["wave"] = label
    report["reused_variables"] = known
    report["new_variables"] = new_cols
    report["kinds"] = kind_summary(Codebook(merged[c] for c in frame.columns))
    report["personal_variables"] = [c for c in frame.columns if merged[c].personal]
    report["notes"] = list(report.get("notes", [])) + _inference_notes(report)
    if "match" in report:
        report["notes"] += _match_notes(report["match"])

    progress.update(90, 100, "Saving to the project")
    progress.check()  # the last moment a cancel is honoured: nothing has been written yet
    created = None
    if existing_inst is None:
        created = project.add_instrument(instrument)
        inst_id = created.id
    else:
        inst_id = existing_inst.id
    try:
        stored = project.add_wave(
            inst_id,
            label,
            path.name,
            data,
            frame,
            import_report=report,
            codebook=merged,
            raw_blob=blob_job.result(),
        )
    except BaseException:
        if created is not None:
            _remove_empty_instrument(project, created.id)
        raise
    carried = _carry_rules(project, stored) if labels else []
    if carried:
        report["carried_rules"] = carried
        report["notes"] = [
            *report["notes"],
            f"{len(carried)} “every value like this” decision(s) of earlier waves were copied "
            "into this wave's cleaning record.",
        ]
    progress.update(100, 100, "Imported")
    return ImportResult(stored, project.codebook(inst_id), report)


def default_wave_label(path: Path, taken: list[str]) -> str:
    """A year in the file name ("survey_2026.xlsx" -> "2026"), else the file's stem."""
    years = re.findall(r"(?<!\d)(19\d{2}|20\d{2})(?!\d)", path.stem)
    base = years[-1] if years else path.stem
    label, k = base, 2
    while label in taken:
        label = f"{base} ({k})"
        k += 1
    return label


def _rename(
    frame: Any, questions: dict[str, str], column_map: dict[str, str]
) -> tuple[Any, dict[str, str], list[dict[str, str]]]:
    mapping = {src: dst for src, dst in column_map.items() if src in frame.columns and src != dst}
    targets = [mapping.get(c, c) for c in frame.columns]
    dupes = sorted({t for t in targets if targets.count(t) > 1})
    if dupes:
        raise ImportFailed(
            "The column matching would give two columns the same name: " + ", ".join(dupes) + "."
        )
    frame = frame.rename(columns=mapping)
    questions = {mapping.get(k, k): v for k, v in questions.items()}
    return frame, questions, [{"from": s, "to": d} for s, d in mapping.items()]


def _no_group_clash(inferred: Codebook, base: Codebook) -> list[Variable]:
    """New variables whose inferred group name is already used get a fresh group name."""
    used = {v.group for v in base if v.group}
    rename: dict[str, str] = {}
    out = []
    for var in inferred:
        if var.group and var.group in used:
            if var.group not in rename:
                k = 2
                while f"{var.group}_{k}" in used:
                    k += 1
                rename[var.group] = f"{var.group}_{k}"
            var = var.updated({"group": rename[var.group]})
        out.append(var)
    return out


def _with_level_maps(codebook: Codebook, level_maps: dict[str, dict[str, str]]) -> Codebook:
    for name, mapping in level_maps.items():
        var = codebook.get(name)
        if var is None:
            raise ImportFailed(f"A level mapping names {name!r}, which is not in the codebook.")
        unknown = sorted(set(mapping.values()) - set(var.levels))
        if var.levels and unknown:
            raise ImportFailed(
                f"A level mapping for {name} points to levels it does not have: "
                + ", ".join(repr(u) for u in unknown)
                + "."
            )
        codebook = codebook.with_variable(
            var.updated({"value_labels": {**var.value_labels, **mapping}})
        )
    return codebook


def _remove_empty_instrument(project: Project, instrument_id: int) -> None:
    """Undo the instrument made for a wave that could not be stored."""
    try:
        with project.transaction() as conn:
            (count,) = conn.execute(
                "SELECT COUNT(*) FROM waves WHERE instrument_id = ?", (instrument_id,)
            ).fetchone()
            if count == 0:
                conn.execute("DELETE FROM instruments WHERE id = ?", (instrument_id,))
    except PlaincountError:
        pass


def _carry_rules(project: Project, wave: Wave) -> list[dict[str, Any]]:
    """A later wave: the instrument's "every value like this" decisions apply to it too
    (copied into its ledger with their origin; single-cell corrections are not)."""
    from core.cleaning import rules_for_next_wave
    from core.waves import reapply_rules

    if not any(i["kind"] == "recode" for i in rules_for_next_wave(project, wave.instrument_id)):
        return []
    return reapply_rules(project, wave.id, flags=False).copied


def _match_notes(match: dict[str, Any]) -> list[str]:
    return MatchReport.from_json(match).summary()


def _inference_notes(report: dict[str, Any]) -> list[str]:
    notes = []
    kinds = report.get("kinds", {})
    if kinds:
        parts = ", ".join(f"{n} {k}" for k, n in kinds.items())
        notes.append(f"Question types recognised: {parts}. Check them in the codebook.")
    if report.get("reused_variables") and report.get("new_variables"):
        notes.append(
            f"{len(report['reused_variables'])} column(s) use the existing codebook; "
            f"{len(report['new_variables'])} new column(s) were added to it."
        )
    if report.get("personal_variables"):
        notes.append(
            "Personal data (kept out of exports by default): "
            + ", ".join(report["personal_variables"])
            + "."
        )
    return notes
