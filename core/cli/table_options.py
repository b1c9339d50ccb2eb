"""The table options shared by ``table`` and ``keep``: one set of names, meanings and checks.

A kept table must be the table ``table`` prints for the same options, so both commands add
their options here and build their :class:`TableSpec` here. Defaults are left to
:class:`TableSpec` (an option not given is not passed on).
"""

from __future__ import annotations

import argparse

from core.errors import TableError
from core.tables.spec import (
    BORDA_RULES,
    MISSING_ROWS,
    PERCENT_BASES,
    SD_FORMULAS,
    SORTS,
    TREATMENTS,
    TableSpec,
)


def add_table_options(
    p: argparse.ArgumentParser, *, wave_help: str = "wave label (default: the latest wave)"
) -> None:
    """Add the options that describe a table (not the variable, not the output)."""
    p.add_argument(
        "--by",
        action="append",
        default=[],
        metavar="VARIABLE",
        help="break the table down by this category question (twice to nest)",
    )
    p.add_argument(
        "--percent",
        choices=PERCENT_BASES,
        help="percentages within each group (row, default), within each answer "
        "(column) or of the total",
    )
    p.add_argument("--wave", help=wave_help)
    p.add_argument("--instrument", help="instrument name (when several have this question)")
    p.add_argument(
        "--treatment",
        choices=TREATMENTS,
        help="missing data: available cases (default), complete cases, single "
        "imputation, or missing shown as rows",
    )
    p.add_argument(
        "--complete-items",
        metavar="VAR,VAR,...",
        help="with --treatment complete: the items a respondent must have answered",
    )
    p.add_argument(
        "--missing-rows",
        choices=MISSING_ROWS,
        help="with --treatment show-missing: one row per reason, or one in all",
    )
    p.add_argument(
        "--min-cell",
        type=int,
        metavar="N",
        help="hide counts below N (default: the project setting; 0 = off)",
    )
    p.add_argument(
        "--sd",
        choices=SD_FORMULAS,
        help="standard deviation formula (default population: dividing by n)",
    )
    p.add_argument(
        "--borda",
        choices=BORDA_RULES,
        help="rule for partial rankings (default: unranked options score 0)",
    )
    p.add_argument(
        "--points",
        metavar="P1,P2,...",
        help="Borda points for 1st, 2nd, ... place (default n-1 down to 0)",
    )
    p.add_argument(
        "--sort",
        choices=SORTS,
        help="order answers as in the questionnaire (default) or by frequency / % agreeing",
    )
    p.add_argument(
        "--tests",
        action="store_true",
        help="add a chi-square test and Cramér's V (for samples only)",
    )
    p.add_argument(
        "--intervals",
        action="store_true",
        help="add 95%% margins of error (Wilson score intervals) to the percentages, for a "
        "wave marked as a sample; a whole-population wave gets a note saying why there are none",
    )
    p.add_argument(
        "--show-mean",
        action="store_true",
        help="add the mean of codes to a rating scale (treats answers as equally spaced)",
    )
    p.add_argument(
        "--pct-of-all", action="store_true", help="add a column of percentages of all respondents"
    )


def spec_from_args(args: argparse.Namespace) -> TableSpec:
    """A table spec from :func:`add_table_options` (and ``--chart``/``--compare-waves``)."""
    options: dict[str, object] = {
        "by": tuple(args.by or ()),
        "complete_items": split_list(args.complete_items),
        "tests": args.tests,
        "show_mean": args.show_mean,
        "pct_of_all": args.pct_of_all,
        "intervals": args.intervals,
        "compare_waves": split_list(getattr(args, "compare_waves", None)),
    }
    if args.points:
        try:
            options["borda_points"] = tuple(float(x) for x in split_list(args.points))
        except ValueError:
            raise TableError("--points takes numbers separated by commas, e.g. 3,2,1,0.") from None
    for name in (
        "percent",
        "wave",
        "instrument",
        "treatment",
        "missing_rows",
        "min_cell",
        "sd",
        "borda",
        "sort",
        "chart",
    ):
        value = getattr(args, name, None)
        if value is not None:
            options[name] = value
    return TableSpec(args.variable, **options)


def split_list(text: str | None) -> tuple[str, ...]:
    """``"a, b,,c"`` → ``("a", "b", "c")``: a comma-separated option as a tuple."""
    return tuple(t.strip() for t in (text or "").split(",") if t.strip())
