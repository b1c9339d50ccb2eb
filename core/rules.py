"""Consistency rules: a small readable rule form, its parser, and the project's rule list.

A rule says what must hold for every respondent, optionally under a condition::

    if completed is "No" then credential_earned is not "Yes"
    if age < 18 then hours_work_week <= 40
    if employed_in_field is one of "Yes", "No" then completed is "Yes"
    track is answered
    if credits_term is missing or credits_term < 6 then cohort is not "Fall"

Conditions are ``VARIABLE is VALUE``, ``is not VALUE``, ``is one of V1, V2``,
``is not one of V1, V2``, ``< <= > >= VALUE`` (numbers, dates and ordered answers),
``is missing`` and ``is answered``; ``must be`` / ``must not be`` read as ``is`` / ``is not``.
Conditions join with ``and`` (binds first) and ``or``; parentheses group. A value is quoted
("Solar install") or written bare when it is one word or a number. The structured form
(:class:`Rule`, :class:`Group`, :class:`Condition`) is what a form in the window builds;
``to_text()`` writes the same rule form back. docs/rules.md is the user's reference.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any, Union

import numpy as np
import pandas as pd

from core.codebook import Codebook, Variable
from core.errors import RuleError
from core.kinds import Kind
from core.project import UNDO_HANDLERS, Changes, Project, now

EQUALITY_OPS = ("is", "is not", "is one of", "is not one of")
ORDER_OPS = ("<", "<=", ">", ">=")
PRESENCE_OPS = ("is missing", "is answered")
OPERATORS = EQUALITY_OPS + ORDER_OPS + PRESENCE_OPS
JOINERS = ("and", "or")
_KEYWORDS = {"if", "then", "and", "or"}
# A bare (unquoted) value ends at these words, so "x is a y is 2" does not read "a y is 2".
_VALUE_STOPS = _KEYWORDS | {"is", "must"}


@dataclass(frozen=True)
class Condition:
    """``variable op values``: one test on one answer (``values`` empty for presence tests)."""

    variable: str
    op: str
    values: tuple[Any, ...] = ()

    def __post_init__(self) -> None:
        if self.op not in OPERATORS:
            raise RuleError(f"Unknown comparison {self.op!r}; use one of: {', '.join(OPERATORS)}.")
        values = tuple(self.values) if isinstance(self.values, (list, tuple)) else (self.values,)
        object.__setattr__(self, "values", values)
        wanted = 0 if self.op in PRESENCE_OPS else None
        if wanted == 0 and values:
            raise RuleError(f"'{self.op}' takes no value.")
        if self.op not in PRESENCE_OPS and not values:
            raise RuleError(f"'{self.variable} {self.op}' needs a value to compare with.")
        if self.op in ("is", "is not", *ORDER_OPS) and len(values) != 1:
            raise RuleError(f"'{self.op}' compares with exactly one value; use 'is one of'.")

    @property
    def variables(self) -> tuple[str, ...]:
        return (self.variable,)

    def to_text(self, nested: bool = False) -> str:
        if self.op in PRESENCE_OPS:
            return f"{self.variable} {self.op}"
        shown = ", ".join(_value_text(v) for v in self.values)
        return f"{self.variable} {self.op} {shown}"


@dataclass(frozen=True)
class Group:
    """Conditions joined by one ``joiner`` ("and" or "or"); groups may nest."""

    joiner: str
    items: tuple[Node, ...]

    def __post_init__(self) -> None:
        if self.joiner not in JOINERS:
            raise RuleError(f"Conditions are joined with 'and' or 'or', not {self.joiner!r}.")
        object.__setattr__(self, "items", tuple(self.items))
        if not self.items:
            raise RuleError("A group of conditions cannot be empty.")

    @property
    def variables(self) -> tuple[str, ...]:
        return _unique(v for item in self.items for v in item.variables)

    def to_text(self, nested: bool = False) -> str:
        parts = []
        for item in self.items:
            text = item.to_text(nested=True)
            if isinstance(item, Group) and item.joiner != self.joiner and len(item.items) > 1:
                text = f"({text})"
            parts.append(text)
        return f" {self.joiner} ".join(parts)


Node = Union[Condition, Group]  # noqa: UP007 - a runtime alias used in dataclass fields


@dataclass(frozen=True)
class Rule:
    """``if when then then``: for every respondent where ``when`` holds, ``then`` must hold.

    ``when`` None means ``then`` must hold for everyone. ``id`` is the rule's number in the
    project (None until stored).
    """

    then: Node
    when: Node | None = None
    id: int | None = field(default=None, compare=False)

    @classmethod
    def build(
        cls,
        when: Sequence[Condition] = (),
        then: Sequence[Condition] = (),
        when_joiner: str = "and",
        then_joiner: str = "and",
    ) -> Rule:
        """A rule from two flat lists of conditions, as a form with two lists builds it."""
        if not then:
            raise RuleError("A rule needs at least one condition after 'then'.")
        then_node: Node = then[0] if len(then) == 1 else Group(then_joiner, tuple(then))
        when_node: Node | None = None
        if when:
            when_node = when[0] if len(when) == 1 else Group(when_joiner, tuple(when))
        return cls(then=then_node, when=when_node)

    @property
    def variables(self) -> tuple[str, ...]:
        names = list(self.when.variables) if self.when is not None else []
        return _unique([*names, *self.then.variables])

    def to_text(self) -> str:
        if self.when is None:
            return self.then.to_text()
        return f"if {self.when.to_text()} then {self.then.to_text()}"

    def __str__(self) -> str:
        return self.to_text()


def _unique(items: Iterable[str]) -> tuple[str, ...]:
    return tuple(dict.fromkeys(items))


def _value_text(value: Any) -> str:
    if isinstance(value, bool):
        return f'"{value}"'
    if isinstance(value, (int, float, np.integer, np.floating)):
        f = float(value)
        return str(int(f)) if f == int(f) else repr(f)
    if isinstance(value, pd.Timestamp):
        text = value.isoformat().replace("T00:00:00", "")
        return f'"{text}"'
    text = str(value)
    return f"'{text}'" if '"' in text else f'"{text}"'


# ---------------------------------------------------------------------- tokenizer and parser
_TOKEN = re.compile(
    r"""\s*(?:
        (?P<str>"[^"]*"|'[^']*'|“[^”]*”|‘[^’]*’)
      | (?P<op><=|>=|!=|=|<|>|\(|\)|,|\[|\])
      | (?P<num>[-+]?(?:\d+\.?\d*|\.\d+)(?![\w.]))
      | (?P<word>[^\s"'“”‘’<>=!(),\[\]]+)
    )""",
    re.VERBOSE,
)


@dataclass(frozen=True)
class _Tok:
    kind: str  # str, op, num, word
    text: str
    pos: int

    @property
    def low(self) -> str:
        return self.text.lower()


def _tokens(text: str) -> list[_Tok]:
    out: list[_Tok] = []
    pos = 0
    stripped = text.rstrip()
    while pos < len(stripped):
        m = _TOKEN.match(stripped, pos)
        if m is None or m.end() == pos:
            bad = stripped[pos:].strip()[:20]
            raise RuleError(f"The rule cannot be read at {bad!r}: unexpected character.")
        kind = m.lastgroup or "word"
        raw = m.group(kind)
        if kind == "str":
            raw = raw[1:-1]
        out.append(_Tok(kind, raw, m.start(kind)))
        pos = m.end()
    return out


class _Parser:
    def __init__(self, text: str) -> None:
        self.text = text
        self.toks = _tokens(text)
        self.i = 0

    # helpers
    def peek(self, ahead: int = 0) -> _Tok | None:
        j = self.i + ahead
        return self.toks[j] if j < len(self.toks) else None

    def at_word(self, *words: str) -> bool:
        tok = self.peek()
        return tok is not None and tok.kind == "word" and tok.low in words

    def take_word(self, word: str) -> bool:
        if self.at_word(word):
            self.i += 1
            return True
        return False

    def where(self) -> str:
        tok = self.peek()
        return "at the end" if tok is None else f"at {tok.text!r}"

    # grammar
    def rule(self) -> Rule:
        if not self.toks:
            raise RuleError(
                "The rule is empty. Write, for example: "
                'if completed is "No" then credential_earned is not "Yes"'
            )
        if self.take_word("if"):
            when = self.expr()
            if not self.take_word("then"):
                raise RuleError(
                    f"Expected 'then' after the condition {self.where()}; a rule reads "
                    "'if CONDITION then CONDITION'."
                )
            then = self.expr()
        else:
            when, then = None, self.expr()
        if self.peek() is not None:
            raise RuleError(
                f"The rule has something left over {self.where()}; join conditions with "
                "'and' or 'or'."
            )
        return Rule(then=then, when=when)

    def expr(self) -> Node:
        items = [self.term()]
        while self.take_word("or"):
            items.append(self.term())
        return items[0] if len(items) == 1 else Group("or", tuple(items))

    def term(self) -> Node:
        items = [self.factor()]
        while self.take_word("and"):
            items.append(self.factor())
        return items[0] if len(items) == 1 else Group("and", tuple(items))

    def factor(self) -> Node:
        tok = self.peek()
        if tok is not None and tok.kind == "op" and tok.text == "(":
            self.i += 1
            node = self.expr()
            close = self.peek()
            if close is None or close.text != ")":
                raise RuleError(f"A '(' is not closed {self.where()}.")
            self.i += 1
            return node
        return self.condition()

    def condition(self) -> Condition:
        tok = self.peek()
        if tok is None:
            raise RuleError("The rule ends where a condition should follow.")
        if tok.kind != "word" or tok.low in _KEYWORDS:
            raise RuleError(f"Expected a variable name {self.where()}.")
        self.i += 1
        name = tok.text
        nxt = self.peek()
        if nxt is None:
            raise RuleError(f"After {name!r} the rule needs a comparison such as 'is \"Yes\"'.")
        if nxt.kind == "op" and nxt.text in ("<", "<=", ">", ">=", "=", "!="):
            self.i += 1
            op = {"=": "is", "!=": "is not"}.get(nxt.text, nxt.text)
            return Condition(name, op, (self.value(),))
        negate = False
        if self.take_word("is"):
            negate = self.take_word("not")
        elif self.take_word("must"):
            negate = self.take_word("not")
            if not self.take_word("be"):
                raise RuleError(f"Expected 'must be' or 'must not be' {self.where()}.")
        else:
            raise RuleError(
                f"Expected 'is', 'is not', 'is one of', '<', '<=', '>', '>=', 'is missing' or "
                f"'is answered' after {name!r} {self.where()}."
            )
        if self.take_word("missing"):
            return Condition(name, "is answered" if negate else "is missing")
        if self.take_word("answered"):
            return Condition(name, "is missing" if negate else "is answered")
        if self.at_word("one") and (nxt2 := self.peek(1)) is not None and nxt2.low == "of":
            self.i += 2
            return Condition(name, "is not one of" if negate else "is one of", self.values())
        return Condition(name, "is not" if negate else "is", (self.value(),))

    def values(self) -> tuple[Any, ...]:
        bracket = None
        tok = self.peek()
        if tok is not None and tok.kind == "op" and tok.text in ("(", "["):
            bracket = ")" if tok.text == "(" else "]"
            self.i += 1
        out = [self.value()]
        while (tok := self.peek()) is not None and tok.kind == "op" and tok.text == ",":
            self.i += 1
            out.append(self.value())
        if bracket is not None:
            tok = self.peek()
            if tok is None or tok.text != bracket:
                raise RuleError(f"A list of values is not closed with {bracket!r} {self.where()}.")
            self.i += 1
        return tuple(out)

    def value(self) -> Any:
        tok = self.peek()
        if tok is None:
            raise RuleError("The rule ends where a value should follow.")
        if tok.kind == "str":
            self.i += 1
            return tok.text
        if tok.kind == "num":
            self.i += 1
            return float(tok.text)
        if tok.kind == "word" and tok.low not in _VALUE_STOPS:
            words = []
            while (
                (t := self.peek()) is not None
                and t.kind in ("word", "num")
                and (t.low not in _VALUE_STOPS)
            ):
                words.append(t.text)
                self.i += 1
            return " ".join(words)
        raise RuleError(f"Expected a value {self.where()}.")


def parse_rule(text: str, codebook: Codebook | None = None) -> Rule:
    """Read a rule written in the rule form; with a codebook, also check names and answers.

    Raises
    ------
    RuleError
        In plain words when the text does not parse, names an unknown variable, or compares
        with an answer the variable does not have.
    """
    if not isinstance(text, str):
        raise RuleError("A rule must be text.")
    rule = _Parser(text.strip()).rule()
    return validate_rule(rule, codebook) if codebook is not None else rule


# ---------------------------------------------------------------------- validation
def validate_rule(rule: Rule, codebook: Codebook) -> Rule:
    """The rule with answers spelled as the codebook spells them; RuleError if it cannot be."""
    when = _validate_node(rule.when, codebook) if rule.when is not None else None
    return Rule(then=_validate_node(rule.then, codebook), when=when, id=rule.id)


def _validate_node(node: Node, codebook: Codebook) -> Node:
    if isinstance(node, Group):
        return Group(node.joiner, tuple(_validate_node(i, codebook) for i in node.items))
    return _validate_condition(node, codebook)


def _validate_condition(cond: Condition, codebook: Codebook) -> Condition:
    var = codebook.get(cond.variable)
    if var is None:
        var = next((v for v in codebook if v.name.lower() == cond.variable.lower()), None)
    if var is None:
        close = difflib.get_close_matches(cond.variable, codebook.names, n=1)
        hint = f" Did you mean {close[0]!r}?" if close else ""
        raise RuleError(
            f"The rule names {cond.variable!r}, which is not a variable of this instrument.{hint}"
        )
    if cond.op in PRESENCE_OPS:
        return Condition(var.name, cond.op)
    if cond.op in ORDER_OPS and not (
        var.kind in (Kind.NUMERIC, Kind.RANKING, Kind.DATE) or var.kind.ordered
    ):
        raise RuleError(
            f"{var.name} is a {var.kind.label.lower()} question, so it cannot be compared "
            f"with '{cond.op}': use 'is' or 'is one of' (only numbers, dates and ordered "
            "answers have an order)."
        )
    values = tuple(_validate_value(var, v) for v in cond.values)
    return Condition(var.name, cond.op, values)


def _validate_value(var: Variable, value: Any) -> Any:
    kind = var.kind
    if kind.has_levels or (kind is Kind.MULTISELECT and var.delimiter):
        text = _as_text(value)
        for level in var.levels:
            if level.lower() == text.lower():
                return level
        label = var.value_labels.get(text)
        if label is not None and label in var.levels:
            return label
        answers = ", ".join(var.levels) or "(none listed in the codebook)"
        raise RuleError(f"{text!r} is not an answer of {var.name}; its answers are: {answers}.")
    if kind in (Kind.NUMERIC, Kind.RANKING, Kind.MULTISELECT):
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            return float(value)
        text = _as_text(value)
        if kind is Kind.MULTISELECT and text.lower() in ("yes", "chosen", "selected"):
            return 1.0
        if kind is Kind.MULTISELECT and text.lower() in ("no", "not chosen"):
            return 0.0
        try:
            return float(text)
        except ValueError:
            raise RuleError(
                f"{var.name} holds numbers, so {text!r} cannot be compared with it."
            ) from None
    if kind is Kind.DATE:
        stamp = pd.to_datetime(_as_text(value), errors="coerce")
        if pd.isna(stamp):
            raise RuleError(
                f"{_as_text(value)!r} is not a date {var.name} can be compared "
                'with; write it as "2026-05-31".'
            )
        return stamp
    return _as_text(value)


def _as_text(value: Any) -> str:
    if isinstance(value, float) and value == int(value):
        return str(int(value))
    return str(value)


# ---------------------------------------------------------------------- evaluation
def evaluate(
    node: Node, values: pd.DataFrame, reasons: pd.DataFrame, codebook: Codebook
) -> np.ndarray:
    """Boolean array: where ``node`` holds. A missing answer fails 'is', 'is one of' and the
    order comparisons, so 'is not' (their negation) holds for it."""
    if isinstance(node, Group):
        parts = [evaluate(i, values, reasons, codebook) for i in node.items]
        return np.logical_and.reduce(parts) if node.joiner == "and" else np.logical_or.reduce(parts)
    var = codebook[node.variable]
    if var.name not in values.columns:
        raise RuleError(f"{var.name} is in the codebook but not in this wave's data.")
    answered = reasons[var.name].isna().to_numpy()
    if node.op == "is missing":
        return ~answered
    if node.op == "is answered":
        return answered
    if node.op in ("is", "is one of", "is not", "is not one of"):
        hit = answered & _equals_any(var, values[var.name], node.values)
        return ~hit if node.op in ("is not", "is not one of") else hit
    return answered & _compare(var, values[var.name], node.op, node.values[0])


def _equals_any(var: Variable, column: pd.Series, wanted: tuple[Any, ...]) -> np.ndarray:
    if var.kind.has_levels:
        levels = list(var.levels)
        codes = column.cat.codes.to_numpy()
        return np.isin(codes, [levels.index(w) for w in wanted if w in levels])
    if var.kind is Kind.MULTISELECT and var.delimiter:
        wanted_set = set(wanted)
        return np.array(
            [isinstance(v, tuple) and bool(wanted_set.intersection(v)) for v in column],
            dtype=bool,
        )
    if var.kind in (Kind.NUMERIC, Kind.RANKING, Kind.MULTISELECT):
        return np.isin(column.to_numpy(dtype=float, na_value=np.nan), np.array(wanted, float))
    if var.kind is Kind.DATE:
        return column.isin(list(wanted)).to_numpy()
    low = column.astype("string").str.lower()
    return low.isin([str(w).lower() for w in wanted]).fillna(False).to_numpy(dtype=bool)


def _compare(var: Variable, column: pd.Series, op: str, value: Any) -> np.ndarray:
    if var.kind.has_levels:
        left = column.cat.codes.to_numpy().astype(float)
        left[left < 0] = np.nan
        right = float(list(var.levels).index(value))
    elif var.kind is Kind.DATE:
        left = column.to_numpy(dtype="datetime64[ns]")
        right = np.datetime64(pd.Timestamp(value).to_datetime64())
    else:
        left = column.to_numpy(dtype=float, na_value=np.nan)
        right = float(value)
    with np.errstate(invalid="ignore"):
        if op == "<":
            out = left < right
        elif op == "<=":
            out = left <= right
        elif op == ">":
            out = left > right
        else:
            out = left >= right
    return np.asarray(out, dtype=bool)


def broken(
    rule: Rule, values: pd.DataFrame, reasons: pd.DataFrame, codebook: Codebook
) -> np.ndarray:
    """Rows where the rule's condition holds but its requirement does not."""
    then = evaluate(rule.then, values, reasons, codebook)
    if rule.when is None:
        return ~then
    return evaluate(rule.when, values, reasons, codebook) & ~then


# ---------------------------------------------------------------------- stored rules
@dataclass(frozen=True)
class StoredRule:
    """A rule as kept in the project's ``rules`` table.

    ``rule`` is the parsed, checked rule, or None when the text no longer fits the codebook
    (a variable was removed or an answer renamed); ``problem`` then says why in plain words.
    """

    id: int
    instrument_id: int
    text: str
    active: bool
    created: str
    rule: Rule | None
    problem: str | None = None

    def to_json(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "instrument_id": self.instrument_id,
            "text": self.text,
            "active": self.active,
            "created": self.created,
            "variables": list(self.rule.variables) if self.rule is not None else [],
            "problem": self.problem,
        }


def add_rule(project: Project, instrument_id: int, rule: str | Rule) -> tuple[int, Changes]:
    """Check a rule against the instrument's codebook and store it; undoable.

    The stored text is the canonical ``to_text()`` form, so the window's form and the
    command line show the same words.
    """
    codebook = project.codebook(instrument_id)
    parsed = parse_rule(rule, codebook) if isinstance(rule, str) else validate_rule(rule, codebook)
    text = parsed.to_text()
    for existing in list_rules(project, instrument_id):
        if existing.text == text:
            raise RuleError(f"This rule is already rule {existing.id}.")
    with project.transaction() as conn:
        cur = conn.execute(
            "INSERT INTO rules(instrument_id, text, active, created) VALUES (?, ?, 1, ?)",
            (instrument_id, text, now()),
        )
        rule_id = int(cur.lastrowid)
        project._record_history(
            conn, "rules", f"Add rule {rule_id}", {"rule_id": rule_id, "active": True}
        )
    return rule_id, project.notify(Changes(instrument_ids=frozenset({instrument_id}), rules=True))


def remove_rule(project: Project, rule_id: int) -> Changes:
    """Switch a rule off (kept in the file, so the report can say it was removed); undoable."""
    rows = project.query("SELECT instrument_id, active FROM rules WHERE id = ?", (rule_id,))
    if not rows:
        raise RuleError(f"There is no rule number {rule_id}.")
    if not rows[0]["active"]:
        raise RuleError(f"Rule {rule_id} has already been removed.")
    with project.transaction() as conn:
        conn.execute("UPDATE rules SET active = 0 WHERE id = ?", (rule_id,))
        project._record_history(
            conn, "rules", f"Remove rule {rule_id}", {"rule_id": rule_id, "active": False}
        )
    return project.notify(Changes(instrument_ids=frozenset({rows[0]["instrument_id"]}), rules=True))


def list_rules(
    project: Project, instrument_id: int | None = None, include_removed: bool = False
) -> list[StoredRule]:
    """The project's rules (of one instrument), oldest first, each checked against its
    instrument's current codebook."""
    sql = "SELECT id, instrument_id, text, active, created FROM rules"
    clauses, params = [], []
    if instrument_id is not None:
        clauses.append("instrument_id = ?")
        params.append(instrument_id)
    if not include_removed:
        clauses.append("active = 1")
    if clauses:
        sql += " WHERE " + " AND ".join(clauses)
    out = []
    for r in project.query(sql + " ORDER BY id", params):
        codebook = project.codebook(r["instrument_id"])
        try:
            parsed: Rule | None = parse_rule(r["text"], codebook)
            problem = None
        except RuleError as exc:
            parsed, problem = None, str(exc)
        if parsed is not None:
            parsed = Rule(then=parsed.then, when=parsed.when, id=r["id"])
        out.append(
            StoredRule(
                r["id"],
                r["instrument_id"],
                r["text"],
                bool(r["active"]),
                r["created"],
                parsed,
                problem,
            )
        )
    return out


def active_rules(project: Project, instrument_id: int) -> list[StoredRule]:
    """Rules in force for an instrument (including any that no longer fit the codebook, so
    the consistency check can say so instead of silently skipping them)."""
    return list_rules(project, instrument_id)


def _undo_rules(project: Project, payload: dict[str, Any], undo: bool) -> Changes:
    active = payload["active"] != undo  # undoing an add switches off; undoing a remove, on
    with project.transaction() as conn:
        conn.execute("UPDATE rules SET active = ? WHERE id = ?", (int(active), payload["rule_id"]))
    return Changes(rules=True)


UNDO_HANDLERS["rules"] = _undo_rules

__all__ = [
    "Condition",
    "Group",
    "OPERATORS",
    "Rule",
    "StoredRule",
    "active_rules",
    "add_rule",
    "broken",
    "evaluate",
    "list_rules",
    "parse_rule",
    "remove_rule",
    "validate_rule",
]
