"""Commands across waves: ``transitions``, ``respondents`` and ``carry-rules``."""

from __future__ import annotations

import argparse

from core.cli.common import emit_json, opened, print_rows
from core.errors import PlaincountError


def register(sub: argparse._SubParsersAction) -> None:
    t = sub.add_parser(
        "transitions",
        help="how matched respondents' answers to an ordered question moved between two waves",
    )
    t.add_argument("project", help="project file")
    t.add_argument("variable", help="a rating-scale or ordered-category question")
    t.add_argument("--waves", required=True, metavar="W1,W2", help="the two waves, first to last")
    t.add_argument("--instrument", help="instrument name (when several have these waves)")
    t.add_argument(
        "--min-cell", type=int, metavar="N", help="hide counts below N (default: project)"
    )
    t.add_argument("--json", action="store_true", help="print the result as JSON")
    t.set_defaults(func=_transitions)

    r = sub.add_parser(
        "respondents",
        help="match respondents of two waves by identifier; compare matched and unmatched",
    )
    r.add_argument("project", help="project file")
    r.add_argument("--waves", required=True, metavar="W1,W2", help="the two waves")
    r.add_argument("--instrument", help="instrument name (when several have these waves)")
    r.add_argument(
        "--within",
        choices=("first", "second"),
        default="first",
        help="compare matched with unmatched people within the first wave (who stayed; "
        "default) or the second (who came back)",
    )
    r.add_argument(
        "--variables", metavar="VAR,VAR,...", help="variables to compare (default: all shared)"
    )
    r.add_argument(
        "--min-cell", type=int, metavar="N", help="hide counts below N (default: project)"
    )
    r.add_argument("--json", action="store_true", help="print the result as JSON")
    r.set_defaults(func=_respondents)

    c = sub.add_parser(
        "carry-rules",
        help="re-apply earlier waves' 'every value like this' decisions to a wave; show flags",
    )
    c.add_argument("project", help="project file")
    c.add_argument("--wave", help="the wave to bring up to date (default: the latest)")
    c.add_argument("--instrument", help="instrument name")
    c.add_argument("--json", action="store_true", help="print the result as JSON")
    c.set_defaults(func=_carry_rules)


def _two(text: str) -> tuple[str, str]:
    parts = [p.strip() for p in text.split(",") if p.strip()]
    if len(parts) != 2:
        raise PlaincountError("--waves takes two wave labels separated by a comma, e.g. 2026,2027.")
    return parts[0], parts[1]


def _transitions(args: argparse.Namespace) -> int:
    from core.waves import transition_table

    a, b = _two(args.waves)
    with opened(args.project) as project:
        t = transition_table(
            project, args.variable, a, b, instrument=args.instrument, min_cell=args.min_cell
        )
    if args.json:
        emit_json(t.to_json())
        return 0
    print(f"{t.title} — wave {a} to wave {b}")
    print()
    print_rows(t.text_rows())
    print()
    hidden = f"<{t.min_cell}"
    for label, n in (("Moved up", t.moved_up), ("Stayed", t.stayed), ("Moved down", t.moved_down)):
        print(f"{label}: {hidden if n is None else f'{n:,}'}")
    share = "hidden" if t.improved_pct is None else f"{t.improved_pct:.1f}%"
    print(f"Improved ({t.better}): {share} of {t.n_pairs:,} who answered both times")
    print()
    for note in t.notes:
        print(f"- {note}")
    return 0


def _respondents(args: argparse.Namespace) -> int:
    from core.waves import match_respondents

    a, b = _two(args.waves)
    names = [v.strip() for v in (args.variables or "").split(",") if v.strip()] or None
    with opened(args.project) as project:
        m = match_respondents(
            project,
            a,
            b,
            instrument=args.instrument,
            variables=names,
            compared_in="a" if args.within == "first" else "b",
            min_cell=args.min_cell,
        )
    if args.json:
        emit_json(m.to_json())
        return 0
    print(f"Respondents in wave {m.wave_a}: {m.n_a:,}; in wave {m.wave_b}: {m.n_b:,}.")
    print(
        f"Found in both: {m.matched:,} ({_pct(m.pct_of_a)} of wave {m.wave_a}, "
        f"{_pct(m.pct_of_b)} of wave {m.wave_b})."
    )
    print()
    hidden = f"<{m.min_cell}"
    rows = [["variable", "answer / statistic", "matched", "unmatched", "difference"]]
    for r in m.comparison:
        what = r["level"] if r["statistic"] == "percent" else "mean"
        unit = "%" if r["statistic"] == "percent" else ""
        rows.append(
            [
                r["variable"],
                what,
                _num(r["matched"], unit, hidden),
                _num(r["unmatched"], unit, hidden),
                "" if r["difference"] is None else f"{r['difference']:+.1f}",
            ]
        )
    print(f"Within wave {m.compared_in}:")
    print_rows(rows)
    print()
    for note in m.notes:
        print(f"- {note}")
    return 0


def _pct(p: float | None) -> str:
    return "–" if p is None else f"{p:.1f}%"


def _num(x: float | None, unit: str, hidden: str) -> str:
    return hidden if x is None else f"{x:.1f}{unit}"


def _carry_rules(args: argparse.Namespace) -> int:
    from core.waves import reapply_rules

    with opened(args.project) as project:
        wave = project.find_wave(args.wave, args.instrument)
        report = reapply_rules(project, wave.id)
    if args.json:
        emit_json(report.to_json())
        return 0
    if report.copied:
        print(f"Copied {len(report.copied)} decision(s) into wave {report.wave}:")
        for c in report.copied:
            print(f"  {', '.join(c['variables'])}: {c['old_value']!r} -> {c['new_value']!r}")
            print(f"    {c['reason']}")
    else:
        print(f"No decision to copy into wave {report.wave}.")
    for s in report.skipped:
        print(f"Not copied ({s['why']}): {', '.join(s['variables'])} {s['old_value']!r}")
    if report.consistency_rules:
        print(f"Consistency rules checked: {len(report.consistency_rules)}.")
    if report.ranges:
        print(f"Plausible ranges checked: {', '.join(report.ranges)}.")
    flags = ", ".join(f"{k} {n}" for k, n in sorted(report.flags.items())) or "none"
    print(f"Flags in wave {report.wave}: {flags}.")
    return 0
