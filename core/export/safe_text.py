"""Formula-injection neutralisation for CSV and workbook exports.

A spreadsheet program treats a cell that begins with ``=``, ``+``, ``-`` or ``@`` (and, in
some programs, tab, carriage return, line feed or NUL) as a formula. Survey answers and level
labels are typed by strangers, so every *text* cell that an export writes passes through
:func:`neutralise`, which puts a single quote in front of such a cell (OWASP "CSV Injection";
OWASP ASVS 5.0 requirement 1.2.10; MITRE CWE-1236 — see METHODS.md §12).

Genuine numbers must not be damaged: a count of -5 written as ``'-5`` would stop being a
number. So the type decides: numbers are validated (:func:`as_number`) and written as numbers;
everything else is text and is neutralised.
"""

from __future__ import annotations

import csv
import io
import math
import re
from collections.abc import Iterable
from numbers import Real
from pathlib import Path
from typing import Any

# OWASP's list (=, +, -, @, tab, CR, LF) plus NUL from ASVS 1.2.10.
DANGEROUS_FIRST = ("=", "+", "-", "@", "\t", "\r", "\n", "\0")

# A plain decimal number as an export would print it: optional minus, digits, optional
# fraction. No leading "+" (a spreadsheet reads "+1" as a formula), no exponent, and no
# leading zeros (so codes such as "007" stay text and keep their zeros).
_NUMBER_TEXT = re.compile(r"-?(?:0|[1-9]\d*)(?:\.\d+)?")


def neutralise(text: str) -> str:
    """Return ``text`` with a leading ``'`` if a spreadsheet could read it as a formula."""
    if text and text.startswith(DANGEROUS_FIRST):
        return "'" + text
    return text


def as_number(value: Any) -> int | float | None:
    """The value as a number if it genuinely is one, else None.

    Real ints and floats (not booleans, not NaN or infinity) are numbers; so is text made
    only of an optional minus sign and decimal digits, such as ``"-5"`` or ``"12.5"``. Text
    such as ``"-1+1"``, ``"+1"`` or ``"1e3"`` is not: it is written as (neutralised) text.
    """
    if isinstance(value, bool):
        return None
    if isinstance(value, Real):
        number = float(value)
        if not math.isfinite(number):
            return None
        return int(value) if isinstance(value, int) else number
    if isinstance(value, str) and _NUMBER_TEXT.fullmatch(value):
        number = float(value)
        if "." in value:
            return number
        return int(value)
    return None


def safe_cell(value: Any) -> int | float | str:
    """One cell ready for a CSV or workbook writer: a validated number or neutralised text."""
    if value is None:
        return ""
    number = as_number(value)
    if number is not None:
        return number
    return neutralise(str(value))


def csv_text(rows: Iterable[Iterable[Any]]) -> str:
    """Rows as CSV text: numbers bare, text quoted (embedded quotes doubled), all neutralised.

    ``csv.QUOTE_NONNUMERIC`` quotes every field that is not a Python number, which is the
    OWASP advice (wrap in quotes, prefix ``'``, double embedded quotes) for text while
    leaving validated numbers as numbers.
    """
    buffer = io.StringIO()
    writer = csv.writer(buffer, quoting=csv.QUOTE_NONNUMERIC, lineterminator="\r\n")
    for row in rows:
        writer.writerow([safe_cell(v) for v in row])
    return buffer.getvalue()


def write_csv(path: str | Path, rows: Iterable[Iterable[Any]]) -> Path:
    """Write rows as UTF-8 CSV with a byte-order mark (so spreadsheet programs detect UTF-8)."""
    path = Path(path)
    path.write_text(csv_text(rows), encoding="utf-8-sig", newline="")
    return path
