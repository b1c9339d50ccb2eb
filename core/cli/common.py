"""Helpers shared by the command modules: opening projects, printing results."""

from __future__ import annotations

import json
import sys
from collections.abc import Iterator
from contextlib import contextmanager
from typing import Any

from core.project import Project


@contextmanager
def opened(path: str) -> Iterator[Project]:
    project = Project.open(path)
    try:
        yield project
    finally:
        project.close()


def emit_json(data: Any) -> None:
    json.dump(data, sys.stdout, ensure_ascii=False, indent=2, default=str)
    sys.stdout.write("\n")


def print_rows(rows: list[list[str]]) -> None:
    """Print a small text table with columns padded; numbers right-aligned."""
    if not rows:
        return
    widths = [max(len(str(r[i])) for r in rows if i < len(r)) for i in range(len(rows[0]))]
    for r in rows:
        cells = []
        for i, cell in enumerate(r):
            text = str(cell)
            digits = text.replace(",", "").replace("%", "").replace(".", "")
            numeric = digits.lstrip("+-<").isdigit()
            cells.append(text.rjust(widths[i]) if numeric and i else text.ljust(widths[i]))
        print("  ".join(cells).rstrip())
