"""``missing``: how much is missing, where, for whom, and Little's MCAR test."""

from __future__ import annotations

import argparse
import math
from typing import Any

from core.cli.common import emit_json, opened, print_rows
from core.errors import PlaincountError
from core.mcar import little_mcar_for
from core.missing import (
    REASONS,
    by_reason,
    dropoff,
    item_summary,
    missing_by_group,
    overview,
    pattern_scan,
    position_trend,
    respondent_summary,
    summary_paragraphs,
    unusual_skips,
)
from core.working import working_data


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "missing",
        help="missing-data diagnostics: per item, drop-off, patterns by group, MCAR test",
    )
    p.add_argument("project", help="project file")
    p.add_argument("--wave", help="wave label (default: the latest wave)")
    p.add_argument(
        "--by",
        metavar="VARIABLE",
        help="break every item's missing answers down by this category question only "
        "(default: scan every category question)",
    )
    p.add_argument(
        "--mcar",
        metavar="VAR,VAR,...",
        help="run Little's MCAR test over these numeric or rating-scale items",
    )
    p.add_argument(
        "--threshold",
        type=float,
        metavar="PCT",
        help="mark items with more than this % missing (default: the project setting, 5)",
    )
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_missing)


def _num(x: Any) -> Any:
    """JSON-safe number: NaN and infinity become null."""
    if x is None:
        return None
    x = float(x)
    return None if math.isnan(x) or math.isinf(x) else x


def _missing(args: argparse.Namespace) -> int:
    with opened(args.project) as project:
        wave = project.find_wave(args.wave)
        threshold = args.threshold
        if threshold is None:
            threshold = float(project.settings().get("missing_threshold", 5.0))
        if not 0 <= threshold <= 100:
            raise PlaincountError("The threshold is a percentage between 0 and 100.")
        working = working_data(project, wave.id)
        items = item_summary(working, threshold)
        drop = dropoff(working)
        odd = unusual_skips(working)
        scan = pattern_scan(working, by=args.by) if args.by else pattern_scan(working)
        mcar = None
        if args.mcar:
            names = [n.strip() for n in args.mcar.split(",") if n.strip()]
            mcar = little_mcar_for(working, names)
        paragraphs = summary_paragraphs(working, threshold)
        breakdowns = []
        if args.by:
            for name, n_missing in zip(items["variable"], items["n_missing"]):
                if name != args.by and n_missing:
                    breakdowns.append(missing_by_group(working, name, args.by))
        if args.json:
            emit_json(
                _json(
                    wave.label,
                    working,
                    threshold,
                    items,
                    drop,
                    odd,
                    scan,
                    mcar,
                    paragraphs,
                    breakdowns,
                )
            )
        else:
            _print(wave.label, threshold, items, drop, scan, mcar, paragraphs, args.by)
    return 0


def _json(label, working, threshold, items, drop, odd, scan, mcar, paragraphs, breakdowns):  # noqa: ANN001, ANN202
    ov = overview(working)
    resp = respondent_summary(working)
    trend = position_trend(working)
    data: dict[str, Any] = {
        "wave": label,
        "threshold": threshold,
        "n_respondents": ov.n_respondents,
        "n_excluded": ov.n_excluded,
        "cells": {
            "n": ov.n_cells,
            "n_missing": ov.n_cells_missing,
            "pct_missing": ov.pct_cells_missing,
            "n_respondents_incomplete": ov.n_rows_incomplete,
            "pct_respondents_incomplete": ov.pct_rows_incomplete,
        },
        "items": [
            {
                "variable": r["variable"],
                "position": int(r["position"]),
                "kind": r["kind"],
                "n_answered": int(r["n_answered"]),
                "n_missing": int(r["n_missing"]),
                "pct_missing": _num(r["pct_missing"]),
                "pct_missing_asked": _num(r["pct_missing_asked"]),
                "by_reason": by_reason(r),
                "above_threshold": bool(r["above_threshold"]),
            }
            for _, r in items.iterrows()
        ],
        "respondents": {
            "n_complete": resp.n_complete,
            "median_share_answered": resp.median_share,
            "distribution": [
                {"band": r["band"], "n": int(r["n_respondents"])}
                for _, r in resp.distribution.iterrows()
            ],
            "near_empty_share": resp.near_empty_share,
            "near_empty": [
                {
                    "row": int(r["row"]) + 1,
                    "respondent": r["respondent"],
                    "share_answered": _num(r["share_answered"]),
                }
                for _, r in resp.near_empty.iterrows()
            ],
        },
        "dropoff": [
            {
                "position": int(r["position"]),
                "variable": r["variable"],
                "n_stopped_here": int(r["n_stopped_here"]),
                "n_still_answering": int(r["n_still_answering"]),
                "pct_unanswered": _num(r["pct_unanswered"]),
            }
            for _, r in drop.table.iterrows()
        ],
        "dropoff_summary": {
            "n_reached_end": drop.n_reached_end,
            "n_stopped_early": drop.n_stopped_early,
            "n_answered_nothing": drop.n_answered_nothing,
            "position_trend": {
                "parts": [
                    {"part": r["part"], "pct_unanswered": _num(r["pct_unanswered"])}
                    for _, r in trend.table.iterrows()
                ],
                "left_out": list(trend.left_out),
                "spearman_rho": trend.rho,
                "p_value": trend.p_value,
                "rising": trend.rising,
            },
        },
        "unusual_skips": [
            {
                "variable": r["variable"],
                "pct_unanswered": _num(r["pct_unanswered"]),
                "neighbour_pct": _num(r["neighbour_pct"]),
            }
            for _, r in odd[odd["unusual"]].iterrows()
        ],
        "patterns": [
            {
                "variable": r["variable"],
                "by": r["by"],
                "pct_missing_by_group": {g: _num(v) for g, v in r["pct_missing_by_group"].items()},
                "n_by_group": r["n_by_group"],
                "chi2": _num(r["chi2"]),
                "df": int(r["df"]),
                "p_value": _num(r["p_value"]),
                "p_adjusted": _num(r["p_adjusted"]),
                "cramers_v": _num(r["cramers_v"]),
                "cochran_ok": bool(r["cochran_ok"]),
            }
            for _, r in scan.iterrows()
        ],
        "summary": paragraphs,
    }
    if breakdowns:
        data["by"] = [b.to_json() for b in breakdowns]
    if mcar is not None:
        data["mcar"] = mcar.to_json()
    return data


def _pct(x: float) -> str:
    return f"{x:.1f}%"


def _print(label, threshold, items, drop, scan, mcar, paragraphs, by):  # noqa: ANN001, ANN202
    print(f"Missing data, wave {label}")
    print()
    for para in paragraphs:
        print(para)
        print()
    # Reasons that occur somewhere in the wave; empty columns only add width.
    reasons = [x for x in REASONS if items[x].sum()]
    rows = [["item", "answered", "missing", "% missing", *reasons, f"> {threshold:g}%"]]
    for _, r in items.iterrows():
        rows.append(
            [
                r["variable"],
                str(int(r["n_answered"])),
                str(int(r["n_missing"])),
                _pct(r["pct_missing"]),
                *[str(int(r[x])) for x in reasons],
                "yes" if r["above_threshold"] else "",
            ]
        )
    print_rows(rows)
    print()
    print("Drop-off (last item answered):")
    rows = [["position", "item", "stopped here", "still answering", "% left unanswered"]]
    for _, r in drop.table.iterrows():
        rows.append(
            [
                str(int(r["position"])),
                r["variable"],
                str(int(r["n_stopped_here"])),
                str(int(r["n_still_answering"])),
                _pct(r["pct_unanswered"]),
            ]
        )
    print_rows(rows)
    print()
    if len(scan):
        title = f"Missing answers by {by}" if by else "Strongest missing-data patterns by group"
        print(title + " (screening aid, strongest first):")
        rows = [["item", "by", "% missing by group", "p", "Cramér's V"]]
        for _, r in scan.head(15 if not by else len(scan)).iterrows():
            groups = ", ".join(f"{g} {_pct(v)}" for g, v in r["pct_missing_by_group"].items())
            p = "< 0.001" if r["p_value"] < 0.001 else f"{r['p_value']:.3f}"
            flag = "" if r["cochran_ok"] else " (small counts)"
            rows.append([r["variable"], r["by"], groups, p + flag, f"{r['cramers_v']:.2f}"])
        print_rows(rows)
        print()
    if mcar is not None:
        print(mcar.reading())
        print()
