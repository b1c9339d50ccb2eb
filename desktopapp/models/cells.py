"""How one cell of working data reads in the window: text, missing reason, colours."""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pandas as pd
from PySide6.QtGui import QColor

from core.checks.flag import show_number

# A corrected cell: a warm background and a small corner mark in the accent colour.
EDITED_BACKGROUND = QColor("#FFF0C2")
EDITED_MARK = QColor("#B34700")
# A flagged cell in the respondent's row.
FLAGGED_BACKGROUND = QColor("#FBD9CF")
# Excluded respondents: greyed out.
EXCLUDED_BACKGROUND = QColor("#ECECEC")
EXCLUDED_TEXT = QColor("#8A8A8A")
MUTED_TEXT = QColor("#7A7A7A")

# Short words for why a cell is missing, shown in the cell itself (muted).
REASON_WORDS = {
    "skipped": "left blank",
    "declined": "declined",
    "not_applicable": "not applicable",
    "dont_know": "don't know",
    "set_missing": "set missing",
    "invalid": "not valid",
}


def value_text(value: Any) -> str:
    """An answer as a person reads it (no '.0' on whole numbers, dates without midnight)."""
    if value is None:
        return ""
    if isinstance(value, tuple):
        return "; ".join(str(v) for v in value)
    if isinstance(value, (float, np.floating)):
        f = float(value)
        return "" if math.isnan(f) else show_number(f)
    if isinstance(value, (np.integer, int)) and not isinstance(value, bool):
        return str(int(value))
    if isinstance(value, (pd.Timestamp, np.datetime64)):
        stamp = pd.Timestamp(value)
        if pd.isna(stamp):
            return ""
        if stamp == stamp.normalize():
            return f"{stamp:%Y-%m-%d}"
        return f"{stamp:%Y-%m-%d %H:%M}"
    if not isinstance(value, str):
        try:
            if pd.isna(value):
                return ""
        except (TypeError, ValueError):
            pass
    return str(value)


def missing_text(reason: str, raw: str | None) -> str:
    """What a missing cell shows: the reason in words; an unreadable answer with its text."""
    word = REASON_WORDS.get(reason, reason.replace("_", " "))
    if reason == "invalid" and raw:
        return f"{raw} ({word})"
    if reason in ("declined", "not_applicable", "dont_know") and raw:
        return f"{word} ({raw})"
    return word
