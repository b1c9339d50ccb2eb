"""Consistency rules between variables, written by the evaluator (see :mod:`core.rules`)."""

from __future__ import annotations

import numpy as np

from core.checks.flag import Context, Flag, Suggestion
from core.errors import RuleError
from core.rules import Rule, StoredRule, broken, validate_rule

CHECK = "consistency"


def check(ctx: Context) -> list[Flag]:
    flags: list[Flag] = []
    codebook = ctx.working.codebook
    values, reasons = ctx.working.values, ctx.working.reasons
    for item in ctx.settings.rules:
        if isinstance(item, StoredRule):
            if not item.active:
                continue
            if item.rule is None:
                ctx.notes.append(f"Rule {item.id} was not applied: {item.problem}")
                continue
            rule, number = item.rule, item.id
        else:
            rule, number = item, item.id
        if not ctx.wants(rule.variables):
            continue
        name = f"Rule {number}" if number is not None else "A rule"
        try:
            rule = validate_rule(rule, codebook)
            mask = broken(rule, values, reasons, codebook) & ctx.keep
        except RuleError as exc:
            ctx.notes.append(f"{name} was not applied: {exc}")
            continue
        flags += _flags(ctx, rule, number, name, np.flatnonzero(mask))
    return flags


def _flags(ctx: Context, rule: Rule, number: int | None, name: str, rows) -> list[Flag]:  # noqa: ANN001
    out = []
    text = rule.to_text()
    for row in rows:
        shown = {v: ctx.shown(row, v) for v in rule.variables}
        facts = "; ".join(
            f"{v} is {'missing' if val is None else repr(val) if isinstance(val, str) else val}"
            for v, val in shown.items()
        )
        message = f'{name} does not hold: "{text}". Here {facts}.'
        out.append(
            ctx.flag(
                CHECK,
                row,
                rule.variables,
                shown,
                "error",
                message,
                Suggestion(
                    None,
                    None,
                    "Check the source and correct the answer that is "
                    "wrong, or set it to missing if the source cannot tell.",
                ),
                {"rule_id": number, "rule": text},
            )
        )
    return out
