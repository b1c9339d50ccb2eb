"""Commands that bring data in and describe it: ``import`` and ``codebook``."""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

from core.cli.common import emit_json, opened, print_rows
from core.codebook import Codebook
from core.errors import CodebookError, PlaincountError
from core.importing import import_file
from core.progress import Progress
from core.project import Instrument, Project

DEFAULT_INSTRUMENT = "Participant survey"


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("import", help="import a survey export (xlsx, xls, ods, csv, tsv) as a wave")
    p.add_argument("project", help="the project file")
    p.add_argument("file", help="the spreadsheet or CSV/TSV export to import")
    p.add_argument("--sheet", help="sheet name or 1-based position (default: the first with data)")
    p.add_argument(
        "--instrument",
        default=DEFAULT_INSTRUMENT,
        help=f"questionnaire the file belongs to (default: {DEFAULT_INSTRUMENT!r})",
    )
    p.add_argument("--wave", help="wave label, such as the year (default: from the file name)")
    p.add_argument(
        "--header-rows",
        type=int,
        choices=(0, 1, 2),
        help="header rows above the data (default: detected; 2 = names then question text)",
    )
    p.add_argument("--encoding", help="text encoding of a CSV/TSV file (default: detected)")
    p.add_argument("--delimiter", help="column separator of a CSV/TSV file, or 'tab'")
    p.add_argument(
        "--map",
        action="append",
        default=[],
        metavar="COLUMN=NAME",
        help="a later wave: store this file column as codebook entry NAME (COLUMN=COLUMN adds "
        "it as a new question); overrides the automatic match",
    )
    p.add_argument("--json", action="store_true", help="print the import report as JSON")
    p.set_defaults(func=_import)

    c = sub.add_parser("codebook", help="show, export or adjust an instrument's codebook")
    c.add_argument("project", help="the project file")
    c.add_argument("--instrument", help="instrument name (default: the only one)")
    c.add_argument("--json", action="store_true", help="print the codebook as JSON")
    c.add_argument(
        "--apply",
        metavar="FILE.json",
        help="apply codebook entries from a JSON file (only the keys given change)",
    )
    c.add_argument("--export", metavar="FILE.json", help="write the codebook to a JSON file")
    c.set_defaults(func=_codebook)


# ---------------------------------------------------------------------------- import
def _import(args: argparse.Namespace) -> int:
    progress = Progress(on_update=_printer() if not args.json and sys.stderr.isatty() else None)
    with opened(args.project) as project:
        result = import_file(
            project,
            args.file,
            instrument=args.instrument,
            wave=args.wave,
            sheet=args.sheet,
            header_rows=args.header_rows,
            encoding=args.encoding,
            delimiter=args.delimiter,
            progress=progress,
            column_map=_column_map(args.map),
        )
        if sys.stderr.isatty() and not args.json:
            sys.stderr.write("\n")
        wave = result.wave
        instrument = project.instrument(wave.instrument_id)
        if args.json:
            emit_json(
                {
                    "project": str(project.path),
                    "instrument": instrument.name,
                    "instrument_id": instrument.id,
                    "wave": {
                        "id": wave.id,
                        "label": wave.label,
                        "n_rows": wave.n_rows,
                        "n_columns": wave.n_columns,
                        "source_name": wave.source_name,
                        "source_sha256": wave.source_sha256,
                    },
                    "report": result.report,
                }
            )
            return 0
        print(
            f"Imported {wave.source_name} into {project.path.name} as wave {wave.label!r} of "
            f"{instrument.name!r}: {wave.n_rows} rows, {wave.n_columns} columns."
        )
        report = result.report
        if report.get("encoding"):
            how = "detected" if report.get("encoding_detected") else "as given"
            print(f"Encoding: {report['encoding_label']} ({how}).")
        if report.get("delimiter"):
            how = "detected" if report.get("delimiter_detected") else "as given"
            print(f"Separator: {report['delimiter_label']} ({how}).")
        if report.get("sheet"):
            print(f"Sheet: {report['sheet']}.")
        for note in report.get("notes", []):
            print(note)
    return 0


def _column_map(pairs: list[str]) -> dict[str, str] | None:
    out = {}
    for pair in pairs:
        column, sep, name = pair.partition("=")
        if not sep or not column.strip() or not name.strip():
            raise PlaincountError(
                f"--map takes COLUMN=NAME, for example work_hours=hours; not {pair!r}."
            )
        out[column.strip()] = name.strip()
    return out or None


def _printer():  # noqa: ANN202 - small closure for the terminal progress line
    def show(done: int, total: int, label: str) -> None:
        pct = int(100 * done / total) if total else 0
        sys.stderr.write(f"\r{label[:60]:<60} {pct:3d}%")
        sys.stderr.flush()

    return show


# ---------------------------------------------------------------------------- codebook
def pick_instrument(project: Project, name: str | None) -> Instrument:
    """The named instrument, or the only one; a clear message otherwise."""
    if name:
        return project.instrument(name)
    instruments = project.instruments()
    if not instruments:
        raise PlaincountError("The project has no data yet: import a survey export first.")
    if len(instruments) > 1:
        names = ", ".join(repr(i.name) for i in instruments)
        raise PlaincountError(f"The project has several instruments ({names}); name one.")
    return instruments[0]


def _codebook(args: argparse.Namespace) -> int:
    with opened(args.project) as project:
        inst = pick_instrument(project, args.instrument)
        codebook = project.codebook(inst.id)
        if args.apply:
            changes = _load_entries(Path(args.apply))
            codebook, changed, skipped = apply_entries(project, inst, changes, Path(args.apply))
            summary = _apply_summary(changed, skipped)
            print(summary, file=sys.stderr if args.json else sys.stdout)
        if args.export:
            _export(codebook, Path(args.export))
            print(
                f"Wrote the codebook of {inst.name!r} ({len(codebook)} variables) to "
                f"{args.export}.",
                file=sys.stderr if args.json else sys.stdout,
            )
        if args.json:
            emit_json(codebook.to_json())
        elif not args.apply and not args.export:
            _print_codebook(codebook)
    return 0


def apply_entries(
    project: Project, inst: Instrument, changes: list[dict[str, Any]], source: Path
) -> tuple[Codebook, list[str], list[str]]:
    """Apply partial entries to the instrument's codebook as one undoable step."""
    before = project.codebook(inst.id)
    new, changed = before.applied(changes)
    skipped = [str(e.get("name")) for e in changes if e.get("name") not in before]
    if changed:
        project.set_codebook(inst.id, new, label=f"Apply codebook file {source.name}")
    return new, changed, skipped


def _load_entries(path: Path) -> list[dict[str, Any]]:
    try:
        text = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise CodebookError(f"There is no codebook file at {path}.") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise CodebookError(f"{path.name} cannot be read: {exc}.") from None
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise CodebookError(
            f"{path.name} is not valid JSON (line {exc.lineno}, column {exc.colno}: {exc.msg})."
        ) from None
    if isinstance(data, dict) and isinstance(data.get("variables"), list):
        data = data["variables"]
    if not isinstance(data, list):
        raise CodebookError(f"{path.name} must hold a JSON list of codebook entries.")
    return data


def _apply_summary(changed: list[str], skipped: list[str]) -> str:
    parts = []
    if changed:
        parts.append(f"Changed {len(changed)} variable(s): {', '.join(changed)}.")
    else:
        parts.append("Nothing changed: the codebook already says what the file says.")
    if skipped:
        parts.append(f"Skipped (not in this codebook): {', '.join(skipped)}.")
    return " ".join(parts)


def _export(codebook: Codebook, path: Path) -> None:
    tmp = path.with_name(path.name + ".writing")
    try:
        tmp.write_text(codebook.dumps() + "\n", encoding="utf-8")
        tmp.replace(path)
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        raise PlaincountError(f"Could not write {path}: {exc.strerror or exc}.") from None


def _print_codebook(codebook: Codebook) -> None:
    rows = [["#", "variable", "kind", "group", "levels / options", "missing codes", "notes"]]
    for var in codebook:
        levels = " | ".join(var.levels) if var.levels else (var.option or "")
        if len(levels) > 60:
            levels = levels[:57] + "..."
        codes = ", ".join(f"{k}={v.value}" for k, v in var.missing_codes.items())
        notes = []
        if var.personal:
            notes.append("personal")
        if var.keying:
            notes.append(f"{var.keying} keying")
        if var.range is not None:
            notes.append(f"range {var.range[0]:g}-{var.range[1]:g}")
        if var.delimiter:
            notes.append(f"split on {var.delimiter!r}")
        rows.append(
            [
                str(var.position),
                var.name,
                var.kind.label,
                var.group or "",
                levels,
                codes,
                "; ".join(notes),
            ]
        )
    print_rows(rows)
