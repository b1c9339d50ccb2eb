"""``plaincount-cli group``: group a number question into categories (age groups, bands).

The new variable is recorded in the codebook (``derived_from`` + ``cut_points``), so it is
recomputed from the cleaned source every time and follows later corrections.
"""

from __future__ import annotations

import argparse

from core.cli.common import emit_json, opened, print_rows
from core.errors import PlaincountError


def register(sub: argparse._SubParsersAction) -> None:
    g = sub.add_parser(
        "group",
        help="group a number question into categories, recorded in the codebook",
    )
    g.add_argument("project", help="project file")
    g.add_argument("variable", help="a number question, e.g. age")
    g.add_argument("--name", help="name of the new variable (default: VARIABLE_group)")
    how = g.add_mutually_exclusive_group(required=True)
    how.add_argument(
        "--cuts", metavar="A,B,...", help="your own cut points; each starts a new group"
    )
    how.add_argument("--equal-width", type=int, metavar="K", help="K groups of equal width")
    how.add_argument(
        "--quantiles", type=int, metavar="K", help="K groups holding about equal numbers"
    )
    g.add_argument("--instrument", help="instrument name (when several have this variable)")
    g.add_argument("--wave", help="wave whose answers set equal-width or quantile cuts")
    g.add_argument("--json", action="store_true", help="print the result as JSON")
    g.set_defaults(func=_group)


def parse_cuts(text: str) -> list[float]:
    """``"25,35,45"`` → [25.0, 35.0, 45.0], with a plain message for anything else."""
    parts = [p.strip() for p in text.split(",") if p.strip()]
    try:
        return [float(p) for p in parts]
    except ValueError:
        raise PlaincountError(
            f"Cut points are numbers separated by commas, such as 25,35,45; not {text!r}."
        ) from None


def _group(args: argparse.Namespace) -> int:
    from core.tables.binning import answered_values, bin_variable, preview_groups

    if args.cuts is not None:
        method, cuts, n_groups = "cuts", parse_cuts(args.cuts), 4
    elif args.equal_width is not None:
        method, cuts, n_groups = "equal", [], args.equal_width
    else:
        method, cuts, n_groups = "quantile", [], args.quantiles
    with opened(args.project) as project:
        var = bin_variable(
            project,
            args.variable,
            method=method,
            cuts=cuts,
            n_groups=n_groups,
            name=args.name,
            instrument=args.instrument,
            wave=args.wave,
        )
        inst = (
            project.instrument(args.instrument)
            if args.instrument
            else next(i for i in project.instruments() if var.name in project.codebook(i.id))
        )
        x = answered_values(project, inst.id, args.variable, args.wave)
        preview = preview_groups(x, "cuts", cuts=var.cut_points)
        wave = project.find_wave(args.wave, inst.id).label if project.waves(inst.id) else None
    data = {
        "name": var.name,
        "source": args.variable,
        "method": method,
        "wave": wave,
        "levels": list(var.levels),
        **preview.to_json(),
    }
    # The codebook may carry its own labels; the counts follow the groups in order.
    for group, label in zip(data["groups"], var.levels):
        group["label"] = label
    if args.json:
        emit_json(data)
        return 0
    print(f"Created {var.name}: {args.variable} in {len(var.levels)} groups.")
    rows = [["group", "count"]] + [[g["label"], f"{g['count']:,}"] for g in data["groups"]]
    print()
    print_rows(rows)
    where = f" in wave {wave}" if wave else ""
    print()
    print(f"{preview.n_answered:,} answered{where}; the window's Edit ▸ Undo takes it back.")
    return 0
