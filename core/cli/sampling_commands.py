"""Commands about sampling and response: ``sample-size`` and ``rates``."""

from __future__ import annotations

import argparse

from core.cli.common import emit_json, print_rows
from core.response_rates import CODE_LABELS, Dispositions, outcome_rates, rates_json
from core.sampling import margin_of_error, plain_explanation, sample_size


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "sample-size",
        help="responses needed for a margin of error (and the margin a number of responses gives)",
        description=(
            "Cochran's sample size with the finite population correction. The answer is "
            "rounded up; the nearest whole number (as in the published Krejcie & Morgan "
            "table) is shown too."
        ),
    )
    p.add_argument(
        "--population",
        type=int,
        help="size of the population surveyed (N); leave out for a very large population",
    )
    p.add_argument("--margin", type=float, default=0.05, help="margin of error (default 0.05)")
    p.add_argument("--confidence", type=float, default=0.95, help="confidence level (default 0.95)")
    p.add_argument(
        "--proportion",
        type=float,
        default=0.5,
        help="expected proportion (default 0.5, the most cautious)",
    )
    p.add_argument(
        "--responses",
        type=int,
        help="also show the margin of error that this many responses gives",
    )
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_sample_size)

    r = sub.add_parser(
        "rates",
        help="AAPOR response, cooperation, refusal and contact rates from disposition counts",
    )
    for flag, code in (
        ("--completes", "I"),
        ("--partials", "P"),
        ("--refusals", "R"),
        ("--noncontacts", "NC"),
        ("--other", "O"),
        ("--unknown-household", "UH"),
        ("--unknown-other", "UO"),
    ):
        r.add_argument(
            flag, type=int, required=True, metavar=code, help=f"{CODE_LABELS[code]} ({code})"
        )
    r.add_argument("--ineligible", type=int, default=0, metavar="NE", help="known ineligible (NE)")
    r.add_argument(
        "--e",
        type=float,
        dest="e",
        help="share of unknown-eligibility cases taken as eligible (default: "
        "(I+P+R+NC+O)/(I+P+R+NC+O+NE))",
    )
    r.add_argument("--json", action="store_true", help="print the result as JSON")
    r.set_defaults(func=_rates)


def _sample_size(args: argparse.Namespace) -> int:
    answer = sample_size(args.population, args.margin, args.confidence, args.proportion)
    moe = None
    if args.responses is not None:
        moe = margin_of_error(args.responses, args.population, args.confidence, args.proportion)
    if args.json:
        emit_json(
            {
                "sample_size": answer.to_json(),
                "margin_of_error": moe.to_json() if moe is not None else None,
            }
        )
        return 0
    rows = [
        ["Population", f"{answer.population:,}" if answer.population else "very large"],
        ["Margin of error", f"± {100 * answer.margin:g} points"],
        ["Confidence", f"{100 * answer.confidence:g} %"],
        ["Expected proportion", f"{answer.proportion:g}"],
        ["Formula value", f"{answer.exact:.2f}"],
        ["Responses needed (rounded up)", f"{answer.recommended:,}"],
        ["Nearest whole number", f"{answer.nearest:,}"],
    ]
    print_rows(rows)
    print()
    print(plain_explanation(answer))
    if moe is not None:
        print()
        print(f"Margin of error with {moe.n:,} responses: ± {moe.points:.1f} points")
        print(plain_explanation(moe))
    return 0


def _rates(args: argparse.Namespace) -> int:
    d = Dispositions(
        I=args.completes,
        P=args.partials,
        R=args.refusals,
        NC=args.noncontacts,
        O=args.other,
        UH=args.unknown_household,
        UO=args.unknown_other,
        NE=args.ineligible,
    )
    data = rates_json(d, args.e)
    if args.json:
        emit_json(data)
        return 0
    print(f"e = {data['e']:.4f} ({data['e_source']})")
    print()
    rows = [["Rate", "Value", "Formula"]]
    for name, rate in outcome_rates(d, data["e"]).items():
        rows.append([name, rate.percent_text, rate.formula])
    print_rows(rows)
    print()
    for name, rate in outcome_rates(d, data["e"]).items():
        print(f"{name}: {rate.definition}")
    return 0
