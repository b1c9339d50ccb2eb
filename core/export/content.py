"""The report's content as plain blocks, written once and rendered to Word and HTML alike.

Building the report as data (headings, paragraphs, grids, pictures) keeps the two report
formats saying exactly the same thing; :mod:`core.export.docx_report` and
:mod:`core.export.html_report` only decide how each block looks.
"""

from __future__ import annotations

import re
import unicodedata
from collections import Counter
from dataclasses import dataclass, field
from datetime import date
from typing import Any

from core.codebook import Codebook, Variable
from core.decoding import INVALID
from core.disclosure import treatment_appendix
from core.kinds import REASON_LABELS, Kind, MissingReason
from core.ledger import ACTION_LABELS, Action, entries_for, surviving
from core.missing import REASONS, item_summary, summary_paragraphs
from core.project import Project, Wave
from core.response_rates import caption_rate
from core.tables.result import Cell, TableResult
from core.working import working_data

# ----------------------------------------------------------------- blocks


@dataclass(frozen=True)
class Heading:
    level: int  # 1 = part of the report, 2 = one result or one appendix section, 3 = below
    text: str


@dataclass(frozen=True)
class Paragraph:
    text: str
    style: str = "body"  # body, finding, note (base and notes), caution


@dataclass(frozen=True)
class GridCell:
    text: str
    numeric: bool = False
    bold: bool = False
    italic: bool = False


@dataclass(frozen=True)
class Grid:
    """A table with one header row; numeric cells are right-aligned by every renderer."""

    columns: list[str]
    rows: list[list[GridCell]]


@dataclass(frozen=True)
class Picture:
    png: bytes
    alt: str


Block = Heading | Paragraph | Grid | Picture


@dataclass
class Entry:
    """One kept result ready to export: the recomputed table and its drawn chart, if any."""

    number: int  # 1-based position in the outline
    title: str
    finding: str
    result: TableResult
    chart_type: str | None = None
    png: bytes | None = None  # the chart with its caption, as a file of its own
    svg: bytes | None = None
    wave_id: int | None = None
    variables: list[str] = field(default_factory=list)
    # The chart drawn without title and notes, for documents that print them as text
    # (None: use ``png``).
    picture: bytes | None = None

    @property
    def document_png(self) -> bytes | None:
        """The chart image for a document or workbook, which carries the caption as text."""
        return self.picture if self.picture is not None else self.png

    @property
    def stem(self) -> str:
        """File name stem: ``01-satisfaction-with-the-course`` (numbered in outline order)."""
        return f"{self.number:02d}-{slug(self.title)}"


# ----------------------------------------------------------------- small helpers


def slug(text: str, limit: int = 48) -> str:
    """A file-name-safe, lower-case ASCII slug of ``text`` (``result`` if nothing is left)."""
    ascii_text = unicodedata.normalize("NFKD", text).encode("ascii", "ignore").decode()
    words = re.sub(r"[^a-z0-9]+", "-", ascii_text.lower()).strip("-")
    if len(words) > limit:
        words = words[:limit].rsplit("-", 1)[0] or words[:limit]
    return words or "result"


_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f]")


def printable(text: Any) -> str:
    """Text without control characters, which XML-based documents cannot hold."""
    return _CONTROL.sub("", str(text))


def cell_is_numeric(cell: Cell) -> bool:
    """A number, or a hidden small count standing in for one: both right-aligned."""
    return cell.numeric or cell.suppressed


def result_grid(result: TableResult) -> Grid:
    rows = []
    for r, row in enumerate(result.rows):
        role = result.row_roles[r] if r < len(result.row_roles) else "level"
        rows.append(
            [
                GridCell(
                    printable(cell.display),
                    numeric=i > 0 and cell_is_numeric(cell),
                    bold=role == "total",
                    italic=role == "missing",
                )
                for i, cell in enumerate(row)
            ]
        )
    return Grid([printable(c) for c in result.columns], rows)


def plain_grid(columns: list[str], rows: list[list[Any]]) -> Grid:
    """A grid from plain values (appendix tables); numbers are right-aligned."""
    out = []
    for row in rows:
        cells = []
        for value in row:
            numeric = isinstance(value, int | float) and not isinstance(value, bool)
            cells.append(GridCell(_plain(value), numeric=numeric))
        out.append(cells)
    return Grid([printable(c) for c in columns], out)


def _plain(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        if value != value:
            return ""
        return f"{value:,.1f}" if not value.is_integer() else f"{int(value):,}"
    if isinstance(value, int) and not isinstance(value, bool):
        return f"{value:,}"
    if isinstance(value, list | tuple):
        return ", ".join(_plain(v) for v in value)
    return printable(value)


# ----------------------------------------------------------------- results


def result_blocks(entry: Entry) -> list[Block]:
    """One kept result: heading, finding sentence, chart or table, base and notes."""
    blocks: list[Block] = [Heading(2, printable(entry.title))]
    if entry.finding:
        blocks.append(Paragraph(printable(entry.finding), "finding"))
    if entry.document_png is not None:
        alt = entry.title + (f". {entry.finding}" if entry.finding else "")
        blocks.append(Picture(entry.document_png, printable(alt)))
    else:
        blocks.append(result_grid(entry.result))
    if entry.result.base:
        blocks.append(Paragraph(printable(entry.result.base), "note"))
    blocks.extend(Paragraph(printable(n), "note") for n in entry.result.notes)
    return blocks


# ----------------------------------------------------------------- the appendix

TREATMENT_TEXT = {
    "available": (
        "Available cases: each table uses everyone who answered the question(s) it shows, "
        "so the number of respondents can differ from table to table."
    ),
    "complete": (
        "Complete cases: a table uses only respondents who answered every item listed for "
        "it; this can leave out many people and bias results if those who skip differ."
    ),
    "impute": (
        "Single imputation: missing answers were filled in with one estimated value each; "
        "this makes results look more certain than they are."
    ),
    "show-missing": (
        "Missing shown as rows: missing answers are counted and shown by reason "
        "(skipped, declined, not applicable, don't know, set missing in cleaning)."
    ),
}


def reported_variables(codebook: Codebook, spec_vars: list[str]) -> list[Variable]:
    """Codebook entries behind the reported results (groups expanded), in questionnaire order."""
    names: set[str] = set()
    groups = codebook.groups()
    for name in spec_vars:
        if name in groups:
            names.update(v.name for v in groups[name])
        elif name in codebook:
            names.add(name)
    return [v for v in codebook if v.name in names]


def spec_variables(result: TableResult) -> list[str]:
    spec = result.spec
    return [spec.variable, *spec.by, *spec.complete_items]


def treatment_summary(project: Project, waves: list[Wave], entries: list[Entry]) -> list[str]:
    """Short sentences on how the data were treated (the workbook's About sheet)."""
    lines: list[str] = []
    for wave in waves:
        kept = surviving(entries_for(project, wave.id))
        by_action = Counter(e.action for e in kept if e.action is not Action.KEEP)
        excluded = by_action.get(Action.EXCLUDE, 0)
        inst = project.instrument(wave.instrument_id).name
        text = f"{inst}, wave {wave.label}: {wave.n_rows:,} responses imported"
        if by_action:
            parts = ", ".join(
                f"{ACTION_LABELS[a].lower()}: {n}" for a, n in sorted(by_action.items())
            )
            text += f"; {sum(by_action.values())} cleaning decisions in force ({parts})"
        else:
            text += "; no cleaning decisions changed the data"
        if excluded:
            text += f"; {excluded} respondent{'s' if excluded != 1 else ''} left out"
        lines.append(text + ".")
    lines.extend(_treatment_lines(entries))
    lines.append(suppression_sentence(project, entries))
    return lines


def _treatment_lines(entries: list[Entry]) -> list[str]:
    used = sorted({e.result.spec.treatment for e in entries})
    return [TREATMENT_TEXT.get(t, t) for t in used]


def suppression_sentence(project: Project, entries: list[Entry]) -> str:
    settings = project.settings()
    threshold = int(settings.get("min_cell", 5) or 0)
    unstable = int(settings.get("unstable_base", 30) or 0)
    overrides = sorted(
        {e.result.spec.min_cell for e in entries if e.result.spec.min_cell is not None}
        - {threshold}
    )
    if threshold:
        text = (
            f"Small-cell rule: counts below {threshold} are hidden and shown as "
            f"“<{threshold}”, so that no small group of respondents can be identified"
        )
    else:
        text = "Small-cell rule: the project's small-cell protection is turned off"
    if unstable:
        text += (
            f"; percentages of groups with fewer than {unstable} respondents are marked as unstable"
        )
    text += "."
    if overrides:
        shown = ", ".join("off" if m == 0 else f"below {m}" for m in overrides)
        text += f" Some results use their own threshold ({shown}); their notes say so."
    return text


def appendix_blocks(
    project: Project, entries: list[Entry], show_respondents: bool = False
) -> list[Block]:
    """The appendix "How the data were treated", one set of sections per wave reported.

    Cleaning decisions name respondents by data row; their identifiers are shown only with
    ``show_respondents`` (when the evaluator has explicitly included personal data).
    """
    blocks: list[Block] = [Heading(1, "How the data were treated")]
    waves = report_waves(project, entries)
    several = len(waves) > 1
    threshold = float(project.settings().get("missing_threshold", 5.0))
    for wave in waves:
        inst = project.instrument(wave.instrument_id)
        codebook = project.codebook(inst.id)
        suffix = f" ({inst.name}, wave {wave.label})" if several else ""
        wave_entries = [e for e in entries if e.wave_id == wave.id]
        reported = reported_variables(codebook, [v for e in wave_entries for v in e.variables])
        blocks.append(
            Paragraph(
                f"{inst.name}, wave {wave.label}: {wave.n_rows:,} responses imported from "
                f"{wave.source_name} (SHA-256 {wave.source_sha256[:12]}…).",
            )
        )

        # How the data were checked, every ledger decision summarised and listed, exclusions,
        # and the consistency rules and recodes (written by the cleaning module).
        for section in treatment_appendix(project, wave.id, show_respondents=show_respondents):
            blocks.append(Heading(2, printable(section["heading"]) + suffix))
            blocks.extend(Paragraph(printable(p)) for p in section.get("paragraphs", []))
            table = section.get("table")
            if table and table.get("rows"):
                blocks.append(plain_grid(table["columns"], table["rows"]))

        # Missing data by item and the treatments used.
        working = working_data(project, wave.id)
        blocks.append(Heading(2, "Missing data" + suffix))
        blocks.extend(Paragraph(printable(p)) for p in summary_paragraphs(working, threshold))
        summary = item_summary(working)
        names = {v.name for v in reported}
        if len(summary) and names:
            summary = summary[summary["variable"].isin(names)]
            blocks.append(_missing_grid(summary))
        blocks.append(Paragraph("Treatments of missing data used in this report:"))
        blocks.extend(Paragraph(t) for t in _treatment_lines(wave_entries))

        # Suppression rule.
        blocks.append(Heading(2, "Small-cell protection" + suffix))
        blocks.append(Paragraph(suppression_sentence(project, wave_entries)))

        # Response rate, when the evaluator entered the dispositions for this wave.
        rate = caption_rate(project, wave.id)
        if rate:
            blocks.append(Heading(2, "Response rate" + suffix))
            blocks.append(Paragraph(printable(rate)))

        # The codebook of the items reported.
        blocks.append(Heading(2, "Codebook of the reported items" + suffix))
        blocks.append(codebook_grid(reported))
    return blocks


def _missing_grid(summary: Any) -> Grid:
    """Missing data by item: answered, missing, % missing, then each reason that occurs."""
    records = summary.to_dict("records")
    reasons = [r for r in REASONS if any(int(rec.get(r, 0)) for rec in records)]
    columns = ["Item", "Answered", "Missing", "% missing", *[_reason_label(r) for r in reasons]]
    rows = []
    for rec in records:
        pct = float(rec["pct_missing"])
        rows.append(
            [
                GridCell(printable(rec["variable"])),
                GridCell(f"{int(rec['n_answered']):,}", numeric=True),
                GridCell(f"{int(rec['n_missing']):,}", numeric=True),
                GridCell(f"{pct:.1f}%", numeric=True, bold=bool(rec.get("above_threshold"))),
                *[GridCell(f"{int(rec[r]):,}", numeric=True) for r in reasons],
            ]
        )
    return Grid(columns, rows)


def _reason_label(reason: str) -> str:
    try:
        return REASON_LABELS[MissingReason(reason)]
    except ValueError:
        return "Not a valid answer" if reason == INVALID else str(reason)


def codebook_grid(variables: list[Variable]) -> Grid:
    rows = []
    for v in variables:
        answers = ", ".join(v.levels)
        if v.kind is Kind.NUMERIC and v.range is not None:
            answers = f"{v.range[0]:g} to {v.range[1]:g}"
        codes = "; ".join(f"{code} = {reason.label}" for code, reason in v.missing_codes.items())
        keying = "negatively worded" if v.keying == "negative" else ""
        rows.append([v.name, v.question, v.kind.label, answers, codes, keying])
    return plain_grid(["Variable", "Question", "Kind", "Answers", "Missing codes", "Note"], rows)


def report_waves(project: Project, entries: list[Entry]) -> list[Wave]:
    ids = []
    for e in entries:
        if e.wave_id is not None and e.wave_id not in ids:
            ids.append(e.wave_id)
    return [project.wave(i) for i in ids]


def report_instruments(project: Project, waves: list[Wave]) -> list[str]:
    """The names of the instruments these waves belong to, once each, in wave order."""
    instruments: list[str] = []
    for w in waves:
        name = project.instrument(w.instrument_id).name
        if name not in instruments:
            instruments.append(name)
    return instruments


def about_rows(project: Project, entries: list[Entry]) -> list[tuple[str, str]]:
    """Label/value pairs describing an export: project, instruments, waves, date, treatment."""
    waves = report_waves(project, entries)
    instruments = report_instruments(project, waves)
    rows = [
        ("Project", project.name),
        ("Instrument", ", ".join(instruments)),
        ("Wave", ", ".join(w.label for w in waves)),
        ("Exported on", date.today().isoformat()),
    ]
    author = project.settings().get("author") or ""
    if author:
        rows.append(("Prepared by", author))
    rows.append(("Results", str(len(entries))))
    rows.extend(("Data treatment", line) for line in treatment_summary(project, waves, entries))
    return rows
