"""Export the report outline to files: workbook, report (Word and HTML), images, CSV.

File names are fixed so next year's run produces the same files (docs/export.md):
``report.docx``, ``report.html``, ``tables.xlsx``, and per kept result numbered in outline
order ``01-<slug>.csv`` and, for results kept as a chart, ``01-<slug>.png`` / ``.svg``.

Files are first written into a hidden folder inside the target folder and moved into place
only when everything has been written, so a cancelled or failed export leaves no half-written
report behind.
"""

from __future__ import annotations

import os
import shutil
import uuid
from collections.abc import Iterable
from datetime import date
from pathlib import Path

from core import outline
from core.codebook import Codebook
from core.errors import PlaincountError
from core.export.comments import COMMENT_CAUTION
from core.export.content import (
    Block,
    Entry,
    Heading,
    Paragraph,
    about_rows,
    appendix_blocks,
    report_instruments,
    report_waves,
    result_blocks,
    spec_variables,
)
from core.export.csv_export import write_result_csv
from core.export.docx_report import write_docx
from core.export.drawing import ChartDrawer
from core.export.html_report import write_html
from core.export.workbook import write_workbook
from core.kinds import Kind
from core.progress import Progress, ensure_progress
from core.project import Project
from core.tables.build import resolve_wave

FORMATS = ("xlsx", "docx", "html", "png", "svg", "csv")
REPORT_DOCX = "report.docx"
REPORT_HTML = "report.html"
WORKBOOK = "tables.xlsx"


class ExportFiles(list[Path]):
    """The files written, in a fixed order, plus warnings the evaluator should read."""

    def __init__(self, paths: Iterable[Path] = (), warnings: list[str] | None = None) -> None:
        super().__init__(paths)
        self.warnings: list[str] = list(warnings or [])


def export_outline(
    project: Project,
    out_dir: str | os.PathLike[str],
    formats: Iterable[str] = FORMATS,
    progress: Progress | None = None,
    *,
    include_personal: bool = False,
    include_comments: bool = False,
    workers: int | None = None,
) -> ExportFiles:
    """Export every kept result in outline order; return the files written and warnings.

    Parameters
    ----------
    formats
        Any of ``xlsx``, ``docx``, ``html``, ``png``, ``svg``, ``csv``.
    progress
        Reports each step and lets the caller cancel (:class:`core.progress.Cancelled`);
        a cancelled export leaves nothing in ``out_dir``.
    include_personal
        Export results about identifiers or variables marked as personal data, and name
        respondents by identifier in the appendix's list of cleaning decisions. Off by
        default: such results are left out with a warning, respondents named by data row.
    include_comments
        Export results about open-ended comments. Off by default, because comments can
        identify respondents; when on, the report carries a caution.
    workers
        Processes drawing charts (None: chosen from the number of charts and cores; 1: all
        in this process). See :mod:`core.export.drawing`.
    """
    chosen = _check_formats(formats)
    progress = ensure_progress(progress)
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise PlaincountError(f"{out} is a file; choose a folder to export into.")
    kept = outline.items(project)
    if not kept:
        raise PlaincountError(
            "The report outline is empty: keep at least one table or chart for the report."
        )
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise PlaincountError(f"The folder {out} cannot be created: {exc.strerror}.") from None

    warnings: list[str] = []
    draw = bool({"png", "svg", "xlsx", "docx", "html"} & set(chosen))
    n_charts = sum(1 for item in kept if item.chart) if draw else 0
    steps = len(kept) + len(chosen)
    documents = bool({"xlsx", "docx", "html"} & set(chosen))  # their pictures: no caption
    with ChartDrawer(
        n_charts, svg="svg" in chosen, workers=workers, png="png" in chosen, picture=documents
    ) as drawer:
        entries = _entries(
            project,
            kept,
            progress,
            steps,
            drawer if draw else None,
            warnings,
            include_personal,
            include_comments,
        )
        progress.update(len(kept), steps, "Drawing the charts")
        drawer.finish(progress)
    if not entries:
        raise PlaincountError(
            "Nothing to export: every kept result was left out. " + " ".join(warnings)
        )
    comments = include_comments and any(_has_kind(project, e, Kind.TEXT) for e in entries)

    staging = out / f".plaincount-export-{uuid.uuid4().hex[:8]}"
    written: list[Path] = []
    try:
        staging.mkdir()
        done = len(kept)
        title, subtitle = _titles(project, entries)
        if "xlsx" in chosen:
            progress.update(done, steps, "Writing the workbook")
            about = about_rows(project, entries)
            written.append(write_workbook(staging / WORKBOOK, entries, about, title))
            done += 1
        if "docx" in chosen or "html" in chosen:
            blocks = _report_blocks(project, entries, comments, include_personal)
            if "docx" in chosen:
                progress.update(done, steps, "Writing the report document")
                written.append(write_docx(staging / REPORT_DOCX, title, subtitle, blocks))
                done += 1
            if "html" in chosen:
                progress.update(done, steps, "Writing the report web page")
                written.append(write_html(staging / REPORT_HTML, title, subtitle, blocks))
                done += 1
        for fmt in ("png", "svg", "csv"):
            if fmt not in chosen:
                continue
            progress.update(done, steps, f"Writing {fmt.upper()} files")
            for e in entries:
                target = staging / f"{e.stem}.{fmt}"
                if fmt == "csv":
                    written.append(write_result_csv(target, e.result))
                elif fmt == "png" and e.png is not None:
                    target.write_bytes(e.png)
                    written.append(target)
                elif fmt == "svg" and e.svg is not None:
                    target.write_bytes(e.svg)
                    written.append(target)
                progress.check()
            done += 1
        progress.check()
    except OSError as exc:
        shutil.rmtree(staging, ignore_errors=True)
        raise PlaincountError(
            f"The export could not be written to {out}: {exc.strerror or exc}. Nothing was "
            "changed in that folder."
        ) from None
    except BaseException:
        shutil.rmtree(staging, ignore_errors=True)
        raise
    try:
        final = _move_into_place(written, out)
    finally:
        shutil.rmtree(staging, ignore_errors=True)
    progress.update(steps, steps, "Done")
    return ExportFiles(final, warnings)


def _move_into_place(written: list[Path], out: Path) -> list[Path]:
    """Move finished files into ``out``; say exactly which could not replace an old copy."""
    final, blocked = [], []
    for path in written:
        dest = out / path.name
        try:
            os.replace(path, dest)
        except OSError:  # typically the old copy is open in another program
            blocked.append(path.name)
            continue
        final.append(dest)
    if blocked:
        raise PlaincountError(
            f"{', '.join(blocked)} could not be replaced in {out}; the file may be open in "
            "another program. Close it and export again. "
            + ("The other files were written." if final else "")
        )
    return final


def _entries(
    project: Project,
    kept: list[outline.OutlineItem],
    progress: Progress,
    steps: int,
    drawer: ChartDrawer | None,
    warnings: list[str],
    include_personal: bool,
    include_comments: bool,
) -> list[Entry]:
    """Recompute every kept result, leave out what must not be exported, start its chart."""
    entries: list[Entry] = []
    for i, item in enumerate(kept):
        progress.update(i, steps, f"Computing “{item.title}”")
        try:
            result = outline.result_for(project, item)
        except PlaincountError as exc:  # e.g. the question was removed from the codebook
            warnings.append(f"“{item.title}” was left out: it cannot be computed now. {exc}")
            continue
        instrument = result.instrument or item.spec.instrument
        codebook = _codebook_for(project, item.spec.variable, instrument)
        variables = spec_variables(result)
        problem = (
            _privacy(codebook, variables, include_personal, include_comments)
            if codebook is not None
            else None
        )
        if problem:
            warnings.append(f"“{item.title}” was left out: {problem}")
            continue
        if item.chart and not item.finding:
            warnings.append(
                f"“{item.title}” is a chart without a finding sentence: a chart in a report "
                "should show a finding."
            )
        entry = Entry(
            number=item.position,  # names keep the outline position even when items are left out
            title=item.title,
            finding=item.finding,
            result=result,
            chart_type=item.chart,
            wave_id=resolve_wave(project, item.spec).id,
            variables=variables,
        )
        if drawer is not None:
            drawer.submit(entry)
        entries.append(entry)
    return entries


def check_outline(
    project: Project, *, include_personal: bool = False, include_comments: bool = False
) -> list[str]:
    """Warnings to show before exporting, without computing any table.

    Charts without a finding sentence, and results that would be left out because they are
    about identifiers, personal data or open-ended comments.
    """
    warnings = []
    for item in outline.items(project):
        codebook = _codebook_for(project, item.spec.variable, item.spec.instrument)
        variables = [item.spec.variable, *item.spec.by, *item.spec.complete_items]
        problem = (
            _privacy(codebook, variables, include_personal, include_comments)
            if codebook is not None
            else None
        )
        if problem:
            warnings.append(f"“{item.title}” will be left out: {problem}")
        elif item.chart and not item.finding:
            warnings.append(
                f"“{item.title}” is a chart without a finding sentence: a chart in a report "
                "should show a finding."
            )
    return warnings


def file_names(project: Project, formats: Iterable[str] = FORMATS) -> list[str]:
    """The file names an export would write (for a preview); privacy exclusions not applied."""
    chosen = _check_formats(formats)
    names = [
        n
        for fmt, n in (("xlsx", WORKBOOK), ("docx", REPORT_DOCX), ("html", REPORT_HTML))
        if fmt in chosen
    ]
    kept = outline.items(project)
    for fmt in ("png", "svg", "csv"):
        if fmt in chosen:
            for k, item in enumerate(kept, start=1):
                if fmt == "csv" or item.chart:
                    stem = Entry(k, item.title, "", None, item.chart).stem  # type: ignore[arg-type]
                    names.append(f"{stem}.{fmt}")
    return names


# ----------------------------------------------------------------- internals


def _check_formats(formats: Iterable[str]) -> list[str]:
    if isinstance(formats, str):
        formats = formats.split(",")
    chosen = [f.strip().lower().lstrip(".") for f in formats if f.strip()]
    unknown = [f for f in chosen if f not in FORMATS]
    if unknown:
        raise PlaincountError(
            f"Unknown export format {', '.join(unknown)}; choose from {', '.join(FORMATS)}."
        )
    if not chosen:
        raise PlaincountError(f"Choose at least one export format: {', '.join(FORMATS)}.")
    return [f for f in FORMATS if f in chosen]


def _privacy(
    codebook: Codebook, names: list[str], include_personal: bool, include_comments: bool
) -> str | None:
    """Why a result must not leave the building by default, or None."""
    groups = codebook.groups()
    variables = []
    for name in names:
        if name in groups:
            variables.extend(groups[name])
        elif name in codebook:
            variables.append(codebook[name])
    if not include_personal:
        personal = [v.name for v in variables if v.kind is Kind.IDENTIFIER or v.personal]
        if personal:
            return (
                f"it shows identifiers or personal data ({', '.join(personal)}). Include "
                "personal data explicitly to export it."
            )
    if not include_comments:
        comments = [v.name for v in variables if v.kind is Kind.TEXT]
        if comments:
            return (
                f"it shows open-ended comments ({', '.join(comments)}), which can identify "
                "the people who wrote them. Include comments explicitly to export them."
            )
    return None


def _codebook_for(project: Project, variable: str, instrument: str | None) -> Codebook | None:
    instruments = (
        [project.instrument(instrument)] if instrument is not None else project.instruments()
    )
    for inst in instruments:
        codebook = project.codebook(inst.id)
        if variable in codebook or variable in codebook.groups():
            return codebook
    return None


def _has_kind(project: Project, entry: Entry, kind: Kind) -> bool:
    codebook = project.codebook(project.wave(entry.wave_id).instrument_id)
    groups = codebook.groups()
    for name in entry.variables:
        members = groups.get(name) or ([codebook[name]] if name in codebook else [])
        if any(v.kind is kind for v in members):
            return True
    return False


def _titles(project: Project, entries: list[Entry]) -> tuple[str, str]:
    waves = report_waves(project, entries)
    instruments = report_instruments(project, waves)
    label = "waves" if len(waves) > 1 else "wave"
    subtitle = (
        f"{', '.join(instruments)}, {label} {', '.join(w.label for w in waves)}. "
        f"Prepared {date.today().isoformat()}"
    )
    author = project.settings().get("author") or ""
    if author:
        subtitle += f" by {author}"
    return project.name, subtitle + "."


def _report_blocks(
    project: Project, entries: list[Entry], comments: bool, show_respondents: bool
) -> list[Block]:
    blocks: list[Block] = [Heading(1, "Results")]
    if comments:
        blocks.append(Paragraph(COMMENT_CAUTION, "caution"))
    for e in entries:
        blocks.extend(result_blocks(e))
    blocks.extend(appendix_blocks(project, entries, show_respondents))
    return blocks
