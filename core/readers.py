"""Read a survey export (spreadsheet or delimited text) into a raw table, losing nothing.

Spreadsheets (.xlsx, .xlsm, .xlsb, .xls, .ods) are read with python-calamine, which parses
the whole sheet in compiled code; openpyxl is only a fallback for workbooks calamine cannot
read. Cells go straight to one array per column: numbers where every filled cell is a
number, dates where every filled cell is a date or time stamp, and otherwise text exactly as
written (numbers in a text column are written without a spurious ``.0``). CSV and TSV files
are read with every cell as text, so "None", "NA", "null", "007" and "2019" stay as written;
whether a text means "missing" is the codebook's decision, never the reader's. Blank cells
become missing (None).

Header rows are detected (one row of names, or a row of short names followed by a row of
full question texts); blank and duplicate names are made unique; fully empty rows and
columns are dropped. Everything the reader decided is written into the report.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import math
import re
import zipfile
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pacsv

from core import encodings
from core.decoding import format_number
from core.errors import ImportFailed
from core.progress import Progress, ensure_progress

SPREADSHEET_SUFFIXES = (".xlsx", ".xlsm", ".xlsb", ".xls", ".ods")
TEXT_SUFFIXES = (".csv", ".tsv", ".tab", ".txt")
SUPPORTED = ", ".join(SPREADSHEET_SUFFIXES + TEXT_SUFFIXES)

DELIMITERS = {",": "comma", ";": "semicolon", "\t": "tab", "|": "vertical bar"}
HEADER_SCAN_ROWS = 30
MAX_LISTED = 50  # row numbers listed in a report; the count is always complete

_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
_ENCRYPTED_STREAM = "EncryptedPackage".encode("utf-16-le")
_ZIP_MAGIC = b"PK\x03\x04"
_EMPTY_ZIP = b"PK\x05\x06"
_BINARY_MAGIC = {
    b"%PDF": "a PDF document",
    b"\x89PNG": "a PNG image",
    b"\xff\xd8\xff": "a JPEG image",
    b"GIF8": "a GIF image",
    b"\x1f\x8b": "a gzip-compressed file",
    b"7z\xbc\xaf": "a 7-Zip archive",
    b"Rar!": "a RAR archive",
    b"SQLite format 3": "a database file (for example a Plaincount project)",
    b"MZ": "a program file",
    b"\x7fELF": "a program file",
}
# Part names inside a zip that tell what kind of document it is.
_ZIP_KINDS = {
    "word/document.xml": "a Word document",
    "ppt/presentation.xml": "a presentation",
}
# A workbook's XML parts never need a document type declaration; one that has it may hide
# an entity-expansion attack ("billion laughs"), so such files are refused unread.
_DTD = re.compile(rb"<!\s*(DOCTYPE|ENTITY)", re.IGNORECASE)
_MAX_UNZIPPED = 4 * 1024**3  # 4 GiB: far above any real survey export
_MAX_RATIO = 200  # compression ratio beyond which a part is a zip bomb, not a sheet


@dataclass
class SourceTable:
    """A raw table as read from a file.

    ``frame`` has unique column names and one column per source column: float64, datetime64
    or text (missing where the cell was blank). ``questions`` maps a column name to its full
    question text when the file has a second header row. ``report`` says what the reader
    decided (format, encoding, delimiter, sheet, header rows, renamed headers, dropped rows
    and columns, size).
    """

    frame: pd.DataFrame
    questions: dict[str, str] = field(default_factory=dict)
    report: dict[str, Any] = field(default_factory=dict)


# ---------------------------------------------------------------------------- public API
def read_source(
    path: str | Path,
    *,
    sheet: str | int | None = None,
    header_rows: int | None = None,
    encoding: str | None = None,
    delimiter: str | None = None,
    progress: Progress | None = None,
    data: bytes | None = None,
) -> SourceTable:
    """Read the whole table from ``path`` (or from ``data``, the file's bytes, if given).

    ``sheet`` is a sheet name or its 1-based position; ``header_rows`` (0, 1 or 2) overrides
    header detection; ``encoding`` and ``delimiter`` override detection for text files.
    Raises :class:`~core.errors.ImportFailed` with a plain explanation for unreadable input.
    """
    return _read(path, sheet, header_rows, encoding, delimiter, progress, data, nrows=None)


def preview(
    path: str | Path,
    *,
    sheet: str | int | None = None,
    header_rows: int | None = None,
    encoding: str | None = None,
    delimiter: str | None = None,
    nrows: int = 50,
) -> SourceTable:
    """The first ``nrows`` data rows, read the same way as :func:`read_source`."""
    return _read(path, sheet, header_rows, encoding, delimiter, None, None, nrows=nrows)


def list_sheets(path: str | Path) -> list[str]:
    """Names of the worksheets of a workbook, in workbook order; [] for a text file."""
    path = Path(path)
    data = _read_bytes(path)
    fmt = detect_format(data, path)
    if fmt == "text":
        return []
    book = _open_workbook(data, fmt, path.name)
    try:
        return _worksheet_names(book)
    finally:
        book.close()


def detect_format(data: bytes, path: str | Path) -> str:
    """``"xlsx"``, ``"xlsb"``, ``"ods"``, ``"xls"`` or ``"text"``, from the bytes themselves.

    The content decides, not the name, so a workbook renamed ``.csv`` still opens; files that
    are no table at all are refused with a message saying what they are.
    """
    path = Path(path)
    name = path.name
    suffix = path.suffix.lower()
    if not data:
        raise ImportFailed(f"{name} is empty (0 bytes): there is nothing to import.")
    if data.startswith(_OLE_MAGIC):
        if _ENCRYPTED_STREAM in data:
            raise ImportFailed(
                f"{name} is protected with a password, so its contents are encrypted. Open it "
                "in the program that made it, remove the password (or save an unprotected "
                "copy), and import that copy."
            )
        return "xls"
    if data.startswith(_EMPTY_ZIP):
        raise ImportFailed(f"{name} is an empty archive: it holds no workbook.")
    if data.startswith(_ZIP_MAGIC):
        return _zip_format(data, name)
    for magic, what in _BINARY_MAGIC.items():
        if data.startswith(magic):
            raise ImportFailed(f"{name} is {what}, not a table. Import a spreadsheet or CSV file.")
    if suffix in SPREADSHEET_SUFFIXES and not _is_text(data):
        raise ImportFailed(
            f"{name} is named like a workbook but is not one Plaincount can read: the file "
            "may be damaged. Open it in the program that made it and save it again."
        )
    if encodings.looks_binary(data):
        raise ImportFailed(
            f"{name} holds binary data, not text, so it is not a CSV or TSV export (perhaps "
            "another kind of file was renamed). Import the original spreadsheet or CSV file."
        )
    if suffix and suffix not in SPREADSHEET_SUFFIXES + TEXT_SUFFIXES:
        head = data[:2048].lstrip().lower()
        if not head or head[:1] in (b"{", b"[", b"<"):
            raise ImportFailed(
                f"{name} is not a table Plaincount can import. Supported files: {SUPPORTED}."
            )
    return "text"


# ---------------------------------------------------------------------------- dispatch
def _read(
    path: str | Path,
    sheet: str | int | None,
    header_rows: int | None,
    encoding: str | None,
    delimiter: str | None,
    progress: Progress | None,
    data: bytes | None,
    nrows: int | None,
) -> SourceTable:
    path = Path(path)
    progress = ensure_progress(progress)
    if header_rows is not None and header_rows not in (0, 1, 2):
        raise ImportFailed("The number of header rows must be 0, 1 or 2.")
    if data is None:
        data = _read_bytes(path)
    progress.update(0, 100, f"Reading {path.name}")
    fmt = detect_format(data, path)
    if fmt == "text":
        grid = _text_grid(data, path, encoding, delimiter, nrows, header_rows)
    else:
        grid = _sheet_grid(data, fmt, path.name, sheet, nrows, header_rows)
    progress.update(40, 100, "Converting columns")
    table = _assemble(grid, header_rows, progress, path.name)
    if fmt == "text":
        fmt = "tsv" if grid.report.get("delimiter") == "\t" else "csv"
    table.report = {
        "source": path.name,
        "format": fmt,
        "size_bytes": len(data),
        **grid.report,
        **table.report,
    }
    progress.update(60, 100, "Read")
    return table


def _read_bytes(path: Path) -> bytes:
    if not path.exists():
        raise ImportFailed(f"There is no file at {path}.")
    if path.is_dir():
        raise ImportFailed(f"{path} is a folder, not a file.")
    try:
        return path.read_bytes()
    except OSError as exc:
        raise ImportFailed(f"{path.name} cannot be read: {exc.strerror or exc}.") from None


def _is_text(data: bytes) -> bool:
    head = data[:4096]
    if encodings.looks_binary(head):
        return False
    try:
        head.decode("utf-8")
        return True
    except UnicodeDecodeError as exc:
        return exc.start > len(head) - 4  # only a character cut at the sample's end


def _zip_format(data: bytes, name: str) -> str:
    try:
        archive = zipfile.ZipFile(io.BytesIO(data))
        names = set(archive.namelist())
    except (zipfile.BadZipFile, EOFError, ValueError):
        raise ImportFailed(
            f"{name} is damaged: the workbook archive is incomplete or broken (perhaps the "
            "download or copy was cut short). Get a fresh copy of the file."
        ) from None
    with archive:
        for part, what in _ZIP_KINDS.items():
            if part in names:
                raise ImportFailed(f"{name} is {what}, not a table.")
        if "xl/workbook.xml" in names:
            fmt = "xlsx"
        elif "xl/workbook.bin" in names:
            fmt = "xlsb"
        elif "content.xml" in names and "mimetype" in names:
            fmt = "ods"
        else:
            raise ImportFailed(
                f"{name} is a zip archive but holds no workbook; it may be damaged or another "
                "kind of file."
            )
        _check_archive(archive, name)
    return fmt


def _check_archive(archive: zipfile.ZipFile, name: str) -> None:
    """Refuse zip bombs and XML with entity declarations before any parser sees them."""
    total = 0
    for info in archive.infolist():
        total += info.file_size
        ratio = info.file_size / info.compress_size if info.compress_size else 0
        if ratio > _MAX_RATIO and info.file_size > 50 * 1024**2:
            raise ImportFailed(
                f"{name} contains a part that would unpack to "
                f"{info.file_size / 1024**2:,.0f} MB from a tiny compressed size, as an "
                "attack file does; it was not opened."
            )
        if total > _MAX_UNZIPPED:
            raise ImportFailed(f"{name} would unpack to more than 4 GB; it was not opened.")
    for info in archive.infolist():
        if not info.filename.endswith((".xml", ".rels")):
            continue
        try:
            with archive.open(info) as part:
                head = part.read(4096)
        except (zipfile.BadZipFile, EOFError, OSError, ValueError, NotImplementedError):
            raise ImportFailed(
                f"{name} is damaged: part {info.filename} cannot be unpacked. Get a fresh copy."
            ) from None
        if _DTD.search(head):
            raise ImportFailed(
                f"{name} contains XML with entity declarations ({info.filename}), which real "
                "workbooks never need and which can be used to exhaust memory. The file was "
                "refused unread; save a clean copy from the program that made it."
            )


# ---------------------------------------------------------------------------- grids
@dataclass
class _Grid:
    """Header candidates and per-column data before names are fixed.

    ``head`` is the first rows as Python values (for header detection); ``columns`` holds
    one converted array per source column for the rows after ``head_used``; ``start_row``
    and ``start_col`` are the 1-based source position of the first cell.
    """

    head: list[list[Any]]
    width: int
    text_source: bool
    # Filled by the format reader: a callable that, given the number of header rows, returns
    # (columns, row_numbers) for the data part.
    data_for: Any
    start_row: int = 1
    start_col: int = 1
    report: dict[str, Any] = field(default_factory=dict)


def _open_workbook(data: bytes, fmt: str, name: str) -> Any:
    from python_calamine import CalamineWorkbook, PasswordError

    try:
        return CalamineWorkbook.from_filelike(io.BytesIO(data))
    except PasswordError:
        raise ImportFailed(
            f"{name} is protected with a password. Remove the password in the program that "
            "made it (or save an unprotected copy) and import that copy."
        ) from None
    except Exception as exc:  # calamine raises several error types for broken files
        if fmt in ("xlsx",):
            return _OpenpyxlBook(data, name, exc)
        raise ImportFailed(_damaged(name, exc)) from None


def _damaged(name: str, exc: BaseException) -> str:
    detail = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    return (
        f"{name} is damaged or is not a workbook Plaincount can read ({detail[:160]}). Open it "
        "in the program that made it and save it again, or export it as CSV."
    )


def _worksheet_names(book: Any) -> list[str]:
    if isinstance(book, _OpenpyxlBook):
        return book.sheet_names
    try:
        meta = book.sheets_metadata
        return [m.name for m in meta if str(m.typ).endswith("WorkSheet")]
    except Exception:
        return list(book.sheet_names)


def _pick_sheet(book: Any, sheet: str | int | None, name: str) -> tuple[str, list[str]]:
    names = _worksheet_names(book)
    if not names:
        raise ImportFailed(f"{name} has no worksheets.")
    if sheet is None:
        return names[0], names
    if isinstance(sheet, str) and sheet in names:
        return sheet, names
    text = str(sheet).strip()
    if text.isdigit() and 1 <= int(text) <= len(names):
        return names[int(text) - 1], names
    lowered = {n.lower(): n for n in names}
    if text.lower() in lowered:
        return lowered[text.lower()], names
    raise ImportFailed(
        f"{name} has no sheet {sheet!r}. Its sheets are: " + ", ".join(repr(n) for n in names) + "."
    )


def _sheet_rows(book: Any, sheet: str, nrows: int | None) -> tuple[list[list[Any]], int, int]:
    """Rows of the used area of a sheet and the 1-based row and column of its first cell."""
    if isinstance(book, _OpenpyxlBook):
        return book.rows(sheet, nrows)
    ws = book.get_sheet_by_name(sheet)
    rows = ws.to_python(skip_empty_area=True, nrows=nrows)
    start = ws.start or (0, 0)
    return rows, int(start[0]) + 1, int(start[1]) + 1


def _sheet_grid(
    data: bytes,
    fmt: str,
    name: str,
    sheet: str | int | None,
    nrows: int | None,
    header_rows: int | None,
) -> _Grid:
    book = _open_workbook(data, fmt, name)
    try:
        chosen, names = _pick_sheet(book, sheet, name)
        want = None if nrows is None else nrows + HEADER_SCAN_ROWS
        try:
            rows, row0, col0 = _sheet_rows(book, chosen, want)
            if sheet is None and not rows:
                # The first sheet is empty: take the first one with data, and say so.
                for other in names:
                    rows, row0, col0 = _sheet_rows(book, other, want)
                    if rows:
                        chosen = other
                        break
        except ImportFailed:
            raise
        except Exception as exc:
            raise ImportFailed(_damaged(name, exc)) from None
    finally:
        book.close()
    if not rows:
        raise ImportFailed(
            f"{name} has no data: the sheet {chosen!r} is empty."
            if len(names) == 1 or sheet is not None
            else f"{name} has no data on any of its sheets."
        )
    width = max(len(r) for r in rows)
    head = [list(r) for r in rows[:HEADER_SCAN_ROWS]]

    def data_for(skip: int) -> tuple[list[Any], np.ndarray]:
        body = rows[skip:]
        if nrows is not None:
            body = body[:nrows]
        numbers = np.arange(row0 + skip, row0 + skip + len(body))
        if not body:
            return [_convert_cells(np.array([], dtype=object)) for _ in range(width)], numbers
        grid = np.empty((len(body), width), dtype=object)
        grid[:] = body  # one C-level copy of the cell references
        by_column = np.ascontiguousarray(grid.T)  # each column contiguous: fast to scan
        del grid
        return [_convert_cells(by_column[j]) for j in range(width)], numbers

    report = {"sheet": chosen, "sheets": names, "encoding": None, "delimiter": None}
    return _Grid(head, width, False, data_for, row0, col0, report)


class _OpenpyxlBook:
    """The fallback reader for .xlsx files calamine refuses (openpyxl uses defusedxml)."""

    def __init__(self, data: bytes, name: str, first_error: BaseException) -> None:
        import openpyxl

        try:
            self._book = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
        except Exception:
            raise ImportFailed(_damaged(name, first_error)) from None
        self.sheet_names = list(self._book.sheetnames)

    def rows(self, sheet: str, nrows: int | None) -> tuple[list[list[Any]], int, int]:
        ws = self._book[sheet]
        out: list[list[Any]] = []
        for i, row in enumerate(ws.iter_rows(values_only=True)):
            if nrows is not None and i >= nrows:
                break
            out.append(["" if v is None else v for v in row])
        while out and all(v == "" for v in out[-1]):
            out.pop()
        width = max((len(r) for r in out), default=0)
        out = [r + [""] * (width - len(r)) for r in out]
        return out, 1, 1

    def close(self) -> None:
        self._book.close()


def _text_grid(
    data: bytes,
    path: Path,
    encoding: str | None,
    delimiter: str | None,
    nrows: int | None,
    header_rows: int | None,
) -> _Grid:
    name = path.name
    detected = encoding is None
    if encoding is None:
        enc = encodings.detect(data)
    else:
        try:
            enc = encodings.canonical(encoding)
        except LookupError:
            raise ImportFailed(f"Unknown text encoding {encoding!r}.") from None
    try:
        if enc == "utf-8":
            utf8 = data
            if not detected:
                data.decode("utf-8")
        elif enc == "utf-8-sig":
            utf8 = data[3:] if data.startswith(b"\xef\xbb\xbf") else data
            if not detected:
                utf8.decode("utf-8")
        else:
            utf8 = data.decode(enc).encode("utf-8")
    except UnicodeDecodeError as exc:
        raise ImportFailed(
            f"{name} cannot be read as {encodings.label(enc)} (byte {exc.start + 1} does not "
            "fit). Choose another encoding."
        ) from None
    if not re.search(rb"[^\s\x00]", utf8):
        raise ImportFailed(f"{name} contains no data: only empty lines.")
    sample = utf8[:131072].decode("utf-8", errors="ignore")
    _refuse_non_table(sample, name)
    # Some spreadsheets write a first line "sep=;" naming the separator.
    hint = re.match(r"sep=(.)\r?\n", sample)
    if hint:
        utf8 = utf8[len(hint.group(0).encode("utf-8")) :]
        sample = sample[len(hint.group(0)) :]
        if delimiter is None:
            delimiter = hint.group(1)
    if delimiter is not None:
        delim = {"tab": "\t", "\\t": "\t", "comma": ",", "semicolon": ";"}.get(delimiter, delimiter)
        if len(delim) != 1:
            raise ImportFailed("The delimiter must be a single character (or 'tab').")
        sniffed = False
    else:
        delim = sniff_delimiter(sample, path.suffix.lower())
        sniffed = True
    table = _arrow_csv(utf8, delim, nrows)
    if table.num_columns <= 3 and table.num_rows and _looks_like_prose(sample, delim):
        raise ImportFailed(
            f"{name} does not look like a table: it reads as running text (sentences), not rows "
            "and columns. Import a spreadsheet or a CSV/TSV export."
        )
    head_table = table.slice(0, HEADER_SCAN_ROWS)
    head_cols = [c.to_pylist() for c in head_table.columns]
    head = [["" if v is None else v for v in row] for row in zip(*head_cols)]
    width = table.num_columns

    def data_for(skip: int) -> tuple[list[Any], np.ndarray]:
        body = table.slice(skip)
        if nrows is not None:
            body = body.slice(0, nrows)
        cols = [_Col(c, "text") for c in body.columns]
        return cols, np.arange(1 + skip, 1 + skip + body.num_rows)

    report = {
        "sheet": None,
        "sheets": [],
        "encoding": enc,
        "encoding_label": encodings.label(enc),
        "encoding_detected": detected,
        "delimiter": delim,
        "delimiter_label": DELIMITERS.get(delim, repr(delim)),
        "delimiter_detected": sniffed,
    }
    return _Grid(head, width, True, data_for, 1, 1, report)


def _refuse_non_table(sample: str, name: str) -> None:
    head = sample.lstrip("\ufeff \t\r\n")[:200].lower()
    if head.startswith(("<!doctype html", "<html", "<?xml", "<table")):
        raise ImportFailed(
            f"{name} is a web page or XML document, not a CSV table. Export the data as CSV or "
            "as a workbook instead."
        )
    if head.startswith(("{", "[{", "[\n", "[ ")):
        raise ImportFailed(f"{name} holds JSON data, not a table. Export the data as CSV instead.")


def _looks_like_prose(sample: str, delim: str) -> bool:
    """Running sentences (a letter, a note) rather than rows: a document, not a table.

    The first line is a sentence rather than column names (a field of many words, and the
    line ends like a sentence), and most lines end with a full stop.
    """
    lines = [ln.strip() for ln in sample.splitlines() if ln.strip()][:50]
    if not lines:
        return False
    try:
        first = next(csv.reader([lines[0]], delimiter=delim))
    except (csv.Error, StopIteration):
        return False
    most_words = max((len(f.split()) for f in first), default=0)
    if most_words <= 6 or not lines[0].endswith((".", "!", ",", ";")):
        return False  # a header of long question texts does not end like a sentence
    if len(lines) == 1:
        return lines[0].endswith((".", "!"))
    ended = sum(ln.endswith((".", "!", ":")) for ln in lines) / len(lines)
    return ended >= 0.6


def sniff_delimiter(sample: str, suffix: str = "") -> str:
    """The separator that splits the first lines into the same number of fields most often."""
    lines = [ln for ln in sample.splitlines()[:200] if ln.strip()]
    if len(lines) > 1 and not sample.endswith(("\n", "\r")):
        lines = lines[:-1]  # the sample may cut the last line short
    order = ["\t", ",", ";", "|"] if suffix in (".tsv", ".tab") else [",", ";", "\t", "|"]
    best, best_score = order[0], 0.0
    for delim in order:
        try:
            counts = [len(r) for r in csv.reader(lines, delimiter=delim)]
        except csv.Error:
            continue
        if not counts:
            continue
        mode = max(set(counts), key=counts.count)
        if mode < 2:
            continue
        score = counts.count(mode) / len(counts) + 0.001 * min(mode, 50)
        if score > best_score + 1e-9:
            best, best_score = delim, score
    return best


def _arrow_csv(utf8: bytes, delim: str, nrows: int | None) -> pa.Table:
    """Every cell as text; an empty field is missing. Ragged files take the slower path."""
    types = {f"f{i}": pa.large_string() for i in range(4096)}
    opts = {
        "read_options": pacsv.ReadOptions(autogenerate_column_names=True),
        # Line breaks inside quoted cells need the slower serial parse; without quotes
        # there can be none.
        "parse_options": pacsv.ParseOptions(delimiter=delim, newlines_in_values=b'"' in utf8),
        "convert_options": pacsv.ConvertOptions(
            column_types=types,
            strings_can_be_null=True,
            quoted_strings_can_be_null=True,
            null_values=[""],
        ),
    }
    source = utf8
    if nrows is not None:
        source = utf8[: max(1 << 20, 4096 * (nrows + HEADER_SCAN_ROWS))]
    try:
        table = pacsv.read_csv(io.BytesIO(source), **opts)
        if nrows is not None:
            table = table.slice(0, nrows + HEADER_SCAN_ROWS)
        return table
    except pa.ArrowInvalid:
        return _python_csv(source, delim, nrows)


def _python_csv(utf8: bytes, delim: str, nrows: int | None) -> pa.Table:
    """Rows of different lengths: pad short rows with blanks instead of refusing the file."""
    text = utf8.decode("utf-8", errors="replace")
    try:
        rows = []
        for i, row in enumerate(csv.reader(io.StringIO(text, newline=""), delimiter=delim)):
            if nrows is not None and i >= nrows + HEADER_SCAN_ROWS:
                break
            if row:
                rows.append(row)
    except csv.Error as exc:
        raise ImportFailed(f"The file cannot be read as delimited text: {exc}.") from None
    width = max((len(r) for r in rows), default=0)
    cols = [[None] * len(rows) for _ in range(width)]
    for i, row in enumerate(rows):
        for j, v in enumerate(row):
            cols[j][i] = v if v != "" else None
    return pa.table({f"f{j}": pa.array(c, pa.large_string()) for j, c in enumerate(cols)})


# ---------------------------------------------------------------------------- cells
@dataclass
class _Col:
    """One source column's data: an arrow string array or a pandas-ready numpy array."""

    values: Any
    kind: str  # "number", "date" or "text"

    def empty_mask(self) -> np.ndarray:
        if isinstance(self.values, pa.ChunkedArray | pa.Array):
            return pc.is_null(self.values).to_numpy(zero_copy_only=False)
        if self.kind == "number":
            return np.isnan(self.values)
        if self.kind == "date":
            return np.isnat(self.values)
        return pd.isna(self.values)

    def take(self, keep: np.ndarray) -> _Col:
        if isinstance(self.values, pa.ChunkedArray | pa.Array):
            return _Col(self.values.filter(pa.array(keep)), self.kind)
        return _Col(self.values[keep], self.kind)

    def series(self, name: str) -> pd.Series:
        if isinstance(self.values, pa.ChunkedArray | pa.Array):
            return pd.Series(self.values.to_pandas(), name=name)
        if self.kind == "text":
            return pd.Series(self.values, name=name, dtype="str")
        return pd.Series(self.values, name=name)


_NUMBER_TYPES = frozenset({float, int})
_DATE_TYPES = frozenset({dt.datetime, dt.date})


def _convert_cells(cells: np.ndarray) -> _Col:
    """Python cell values of one column (blank = ``""``) to one typed array.

    pyarrow's converter checks the cell types in compiled code, which is what makes a
    100,000-row sheet quick; mixed columns take the plain Python path below.
    """
    arr: pa.Array | None
    blank: np.ndarray | None = None
    try:
        arr = pa.array(cells)  # a full column of numbers, or of text
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        blank = cells == ""
        try:
            arr = pa.array(cells, mask=blank)
        except (pa.ArrowInvalid, pa.ArrowTypeError):
            arr = None
    if arr is not None:
        kind = arr.type
        if pa.types.is_string(kind) or pa.types.is_large_string(kind):
            arr = arr.cast(pa.large_string())
            if blank is None:
                arr = pc.if_else(pc.equal(arr, ""), pa.scalar(None, pa.large_string()), arr)
            return _Col(arr, "text")
        if pa.types.is_floating(kind) or pa.types.is_integer(kind):
            values = arr.cast(pa.float64()).to_numpy(zero_copy_only=False)
            return _Col(values, "number")
        if pa.types.is_timestamp(kind):
            return _Col(arr.cast(pa.timestamp("ns")).to_numpy(zero_copy_only=False), "date")
        if pa.types.is_null(kind):
            return _Col(pa.nulls(len(cells), pa.large_string()), "text")
    return _convert_mixed(cells, cells == "" if blank is None else blank)


def _convert_mixed(cells: np.ndarray, blank: np.ndarray) -> _Col:
    types = set(map(type, cells))
    others = types - {str}
    has_text = str in types and any(c.__class__ is str and c != "" for c in cells)
    if not has_text and others and others <= _NUMBER_TYPES:
        values = cells.copy()
        values[blank] = math.nan
        return _Col(values.astype(float), "number")
    if not has_text and others and others <= _DATE_TYPES:
        values = cells.copy()
        values[blank] = None
        stamps = pd.to_datetime(pd.Series(values, dtype=object), errors="coerce")
        return _Col(stamps.to_numpy(dtype="datetime64[ns]"), "date")
    return _Col(pa.array([_render(c) for c in cells], pa.large_string()), "text")


def _render(value: Any) -> str | None:
    """A non-text cell written as the text a person sees (``12.0`` -> ``"12"``)."""
    cls = value.__class__
    if cls is str:
        return value if value != "" else None
    if cls is float:
        return None if math.isnan(value) else format_number(value)
    if cls is bool:
        return "TRUE" if value else "FALSE"
    if cls is int:
        return str(value)
    if cls is dt.datetime:
        text = value.isoformat(sep=" ")
        return text[:-9] if text.endswith(" 00:00:00") else text
    if isinstance(value, dt.date | dt.time):
        return value.isoformat()
    if isinstance(value, dt.timedelta):
        return str(value)
    return str(value)


def _cell_text(value: Any) -> str:
    text = _render(value)
    return "" if text is None else text.strip()


# ---------------------------------------------------------------------------- headers
def _is_label(value: Any, text_source: bool) -> bool:
    """A cell that can be a column name: text that does not read as a number or date."""
    if value.__class__ is not str or not value.strip():
        return False
    return not (text_source and _NUMBER_OR_DATE.match(value.strip()))


_NUMBER_OR_DATE = re.compile(
    r"^[-+]?(\d+([.,]\d+)*|\.\d+)([eE][-+]?\d+)?%?$|^\d{1,4}[-/.]\d{1,2}[-/.]\d{1,4}"
)


def detect_header_rows(head: list[list[Any]], text_source: bool) -> int:
    """0, 1 or 2 header rows, judged from the first rows of the table.

    One header row: the first non-empty row is all names (no numbers or dates). Two: the
    second row also holds only text, reads like questions (mostly several words) while the
    first reads like short names, and where the data below are numbers or dates the second
    row is still text.
    """
    rows = [r for r in head if any(_cell_text(v) for v in r)]
    if not rows:
        return 1
    first = [v for v in rows[0] if _cell_text(v)]
    if not all(_is_label(v, text_source) for v in first):
        return 0
    if len(rows) < 3:
        return 1
    second = [v for v in rows[1] if _cell_text(v)]
    if not second or not all(_is_label(v, text_source) for v in second):
        return 1
    if question_option_header(rows[0], rows[1]):
        return 2
    if len(second) < 0.5 * len(first):
        return 1
    wordy = sum(len(str(v).split()) >= 2 for v in second) / len(second)
    short_names = sum(len(str(v).split()) <= 2 for v in first) / len(first)
    if wordy < 0.5 or short_names < 0.5:
        return 1
    # A header text does not come back as an answer further down its column.
    body = rows[2:]
    width = max(len(r) for r in rows)
    repeated = sum(
        1
        for j, v in enumerate(rows[1])
        if _cell_text(v) and any(j < len(r) and _cell_text(r[j]) == _cell_text(v) for r in body)
    )
    if repeated > 0.2 * len(second):
        return 1
    # Evidence from the data: a column of numbers or dates under a text cell in row two.
    typed_cols = 0
    text_over_typed = 0
    for j in range(width):
        cells = [r[j] for r in body if j < len(r) and _cell_text(r[j])]
        if not cells:
            continue
        typed = sum(not _is_label(c, text_source) for c in cells) / len(cells)
        if typed >= 0.8:
            typed_cols += 1
            if j < len(rows[1]) and _is_label(rows[1][j], text_source):
                text_over_typed += 1
    if typed_cols:
        return 2 if text_over_typed >= 0.5 * typed_cols else 1
    # All-text data: two header rows only if the second is clearly longer, question text.
    mean_first = np.mean([len(str(v)) for v in first])
    mean_second = np.mean([len(str(v)) for v in second])
    questions = sum(str(v).rstrip().endswith(("?", ":")) for v in second) / len(second)
    return 2 if mean_second >= 2 * mean_first and questions >= 0.3 else 1


_RESPONSE_WORDS = {"response", "open-ended response", "open ended response", "answer", "text"}


def question_option_header(row0: Sequence[Any], row1: Sequence[Any]) -> bool:
    """Question texts on the first row, answer options on the second.

    Some survey platforms export a choose-all-that-apply question as one column per option:
    the question stands once on the first row above its first option, the cells to its
    right are blank, and the second row names each option. Single-answer questions then have
    a blank (or a word such as "Response") on the second row. Data rows never look like
    that: a first data row has values under the named columns.
    """
    width = max(len(row0), len(row1))
    top = [_cell_text(row0[j]) if j < len(row0) else "" for j in range(width)]
    sub = [_cell_text(row1[j]) if j < len(row1) else "" for j in range(width)]
    first = next((j for j, t in enumerate(top) if t), None)
    if first is None:
        return False
    continued = {j for j in range(first + 1, width) if not top[j] and sub[j]}
    if not continued:
        return False
    if any(sub[j] and not top[j] and j not in continued for j in range(width)):
        return False
    singles = [j for j in range(width) if top[j] and j + 1 not in continued]
    quiet = sum(1 for j in singles if not sub[j] or sub[j].lower() in _RESPONSE_WORDS)
    starts = [j for j in range(width) if top[j] and j + 1 in continued]
    return all(sub[j] for j in starts) and (not singles or quiet >= 0.8 * len(singles))


def _question_option_names(row0: Sequence[Any], row1: Sequence[Any], width: int) -> list[str]:
    """One text per column: the question, or "question - option" under a shared question."""
    out: list[str] = []
    current = ""
    for j in range(width):
        top = _cell_text(row0[j]) if j < len(row0) else ""
        sub = _cell_text(row1[j]) if j < len(row1) else ""
        if top:
            current = top
        elif not sub:
            current = ""
        owner = top or current
        if sub and sub.lower() not in _RESPONSE_WORDS and owner:
            out.append(f"{owner} - {sub}")
        else:
            out.append(owner)
    return out


def _column_letter(index: int) -> str:
    """1 -> A, 27 -> AA: the spreadsheet name of a column."""
    letters = ""
    while index > 0:
        index, rem = divmod(index - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


# ---------------------------------------------------------------------------- assembly
def _assemble(grid: _Grid, header_rows: int | None, progress: Progress, name: str) -> SourceTable:
    head = grid.head
    # Leading empty rows (inside a text file, or a sheet's used area) come before the header.
    lead = 0
    while lead < len(head) and not any(_cell_text(v) for v in head[lead]):
        lead += 1
    # Title lines above a wide table ("Participant survey export, March 2026" alone in the
    # first cell) are not the header.
    titles: list[str] = []
    while grid.width >= 3 and lead < min(len(head), 4) and header_rows is None:
        filled = [_cell_text(v) for v in head[lead] if _cell_text(v)]
        below = [r for r in head[lead + 1 :] if any(_cell_text(v) for v in r)]
        if len(filled) != 1 or not below:
            break
        if sum(1 for v in below[0] if _cell_text(v)) < max(2, 0.5 * grid.width):
            break
        titles.append(filled[0])
        lead += 1
        while lead < len(head) and not any(_cell_text(v) for v in head[lead]):
            lead += 1
    detected = header_rows is None
    if header_rows is None:
        header_rows = detect_header_rows(head[lead:], grid.text_source)
    header = head[lead : lead + header_rows]
    skip = lead + header_rows
    columns, numbers = grid.data_for(skip)
    progress.check()
    width = grid.width
    n_rows = len(numbers)
    if n_rows == 0:
        what = "only a header row" if header_rows else "no rows"
        raise ImportFailed(f"{name} has column names but no data rows ({what}).")

    # Fully empty rows and columns.
    empties = [c.empty_mask() for c in columns]
    row_empty = np.logical_and.reduce(empties) if empties else np.zeros(n_rows, dtype=bool)
    col_blank_header = [
        not any(_cell_text(r[j]) for r in header if j < len(r)) for j in range(width)
    ]
    col_empty = [bool(e.all()) and blank for e, blank in zip(empties, col_blank_header)]
    if row_empty.all():
        raise ImportFailed(f"{name} has column names but every data row is empty.")
    dropped_rows = numbers[row_empty]
    keep_rows = ~row_empty
    if row_empty.any():
        columns = [c.take(keep_rows) for c in columns]
    kept: list[int] = [j for j in range(width) if not col_empty[j]]
    dropped_cols = [j for j in range(width) if col_empty[j]]

    # Names (first header row) and question texts (second header row).
    names: list[str] = []
    questions: dict[str, str] = {}
    renamed: list[dict[str, Any]] = []
    taken: set[str] = set()
    by_option = header_rows == 2 and question_option_header(header[0], header[1])
    if by_option:
        combined = _question_option_names(header[0], header[1], width)
        raw_names = [combined[j] for j in kept]
    else:
        raw_names = [
            _cell_text(header[0][j]) if header_rows and j < len(header[0]) else "" for j in kept
        ]
    used = {n for n in raw_names if n}
    for pos, j in enumerate(kept):
        source_col = grid.start_col + j
        original = raw_names[pos]
        new = original
        reason = None
        if not new:
            new = _unique(f"column_{source_col}", taken | used)
            reason = "blank"
        elif new in taken:
            new = _unique(original, taken | used)
            reason = "duplicate"
        taken.add(new)
        names.append(new)
        if reason and header_rows:
            renamed.append(
                {
                    "column": source_col,
                    "letter": _column_letter(source_col),
                    "original": original,
                    "name": new,
                    "reason": reason,
                }
            )
        if by_option:
            if original:
                questions[new] = original
        elif header_rows == 2 and j < len(header[1]):
            text = _cell_text(header[1][j])
            if text:
                questions[new] = text

    series = {}
    kinds = {"number": 0, "date": 0, "text": 0}
    for pos, j in enumerate(kept):
        col = columns[j]
        series[names[pos]] = col.series(names[pos])
        kinds[col.kind] += 1
        if pos % 8 == 0:
            progress.update(40 + int(20 * pos / max(len(kept), 1)), 100, "Converting columns")
    frame = pd.DataFrame(series)
    frame.index = pd.RangeIndex(len(frame))

    report: dict[str, Any] = {
        "title_rows": titles,
        "header_style": "question_option" if by_option else "names",
        "header_rows": header_rows,
        "header_rows_detected": detected,
        "first_data_row": grid.start_row + skip,
        "renamed_headers": renamed,
        "dropped_rows": {
            "count": int(len(dropped_rows)),
            "rows": [int(x) for x in dropped_rows[:MAX_LISTED]],
        },
        "dropped_columns": [
            {"column": grid.start_col + j, "letter": _column_letter(grid.start_col + j)}
            for j in dropped_cols
        ],
        "n_rows": int(len(frame)),
        "n_columns": int(frame.shape[1]),
        "column_types": kinds,
    }
    report["notes"] = _notes(report)
    return SourceTable(frame, questions, report)


def _unique(base: str, taken: set[str]) -> str:
    if base not in taken:
        return base
    k = 2
    while f"{base}_{k}" in taken:
        k += 1
    return f"{base}_{k}"


def _notes(report: dict[str, Any]) -> list[str]:
    """Plain sentences about every decision the reader made."""
    notes = []
    for title in report.get("title_rows", []):
        notes.append(f"A title line above the table was left out: {title!r}.")
    h = report["header_rows"]
    how = "found" if report["header_rows_detected"] else "as you chose"
    if h == 2 and report.get("header_style") == "question_option":
        notes.append(
            f"Two header rows ({how}): questions, then answer options; a column under a "
            "shared question is named 'question - option'."
        )
    elif h == 2:
        notes.append(f"Two header rows ({how}): column names, then the full question text.")
    elif h == 1:
        notes.append(f"One header row of column names ({how}).")
    else:
        notes.append(f"No header row ({how}): columns are named column_1, column_2, ...")
    for item in report["renamed_headers"]:
        if item["reason"] == "blank":
            notes.append(f"Column {item['letter']} had no name; it is called {item['name']}.")
        else:
            notes.append(
                f"Column {item['letter']} repeats the name {item['original']!r}; it is called "
                f"{item['name']}."
            )
    dropped = report["dropped_rows"]
    if dropped["count"]:
        rows = ", ".join(str(r) for r in dropped["rows"][:10])
        more = "" if dropped["count"] <= 10 else ", ..."
        notes.append(f"{dropped['count']} completely empty row(s) left out (rows {rows}{more}).")
    if report["dropped_columns"]:
        letters = ", ".join(c["letter"] for c in report["dropped_columns"][:10])
        notes.append(
            f"{len(report['dropped_columns'])} completely empty column(s) left out ({letters})."
        )
    return notes
