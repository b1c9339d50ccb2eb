"""The codebook: one entry per variable saying what its answers mean.

A codebook is plain data (JSON-able) so it can be stored in the project, exported to a
file, and re-applied to next year's wave or another instrument.
"""

from __future__ import annotations

import json
from collections.abc import Iterable, Iterator
from dataclasses import asdict, dataclass, field, fields, replace
from typing import Any

from core.errors import CodebookError
from core.kinds import CODE_REASONS, Kind, MissingReason

KEYINGS = ("positive", "negative")


@dataclass(frozen=True)
class Variable:
    """One codebook entry.

    ``levels`` are the ordered answer labels for categorical, Likert and ordinal kinds (and
    the options of a delimited choose-all-that-apply question). ``value_labels`` maps a raw
    cell text (for example ``"5"``) to a level label (``"Strongly agree"``) when the export
    stores codes rather than labels. ``option`` is the answer option a single column stands
    for in a ranking or one-column-per-option choose-all-that-apply question.
    ``missing_codes`` maps a raw cell text to the reason it is missing.
    """

    name: str
    question: str = ""
    kind: Kind = Kind.TEXT
    levels: tuple[str, ...] = ()
    value_labels: dict[str, str] = field(default_factory=dict)
    missing_codes: dict[str, MissingReason] = field(default_factory=dict)
    group: str | None = None
    keying: str | None = None
    range: tuple[float, float] | None = None
    personal: bool = False
    option: str | None = None
    delimiter: str | None = None
    position: int = 0
    derived_from: str | None = None
    # For a variable grouped from a numeric one (``derived_from``): the cut points between
    # its groups. A value v falls in group i when cut_points[i-1] <= v < cut_points[i]; the
    # first and last groups are open-ended. ``levels`` name the len(cut_points) + 1 groups.
    cut_points: tuple[float, ...] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "kind", Kind(self.kind))
        object.__setattr__(self, "levels", tuple(str(x) for x in self.levels))
        object.__setattr__(self, "cut_points", tuple(float(x) for x in self.cut_points))
        object.__setattr__(
            self,
            "missing_codes",
            {str(k): MissingReason(v) for k, v in dict(self.missing_codes).items()},
        )
        object.__setattr__(
            self, "value_labels", {str(k): str(v) for k, v in dict(self.value_labels).items()}
        )
        if self.range is not None:
            lo, hi = (float(x) for x in self.range)
            if lo > hi:
                raise CodebookError(
                    f"The plausible range of {self.name} runs from {lo:g} down to {hi:g}; "
                    "the minimum must not be larger than the maximum."
                )
            object.__setattr__(self, "range", (lo, hi))
        if self.keying is not None and self.keying not in KEYINGS:
            raise CodebookError(
                f"Keying of {self.name} must be 'positive', 'negative' or empty, not "
                f"{self.keying!r}."
            )

    @property
    def label(self) -> str:
        """A short human name: the question text if there is one, else the column name."""
        return self.question or self.name

    def to_json(self) -> dict[str, Any]:
        """The documented JSON shape (docs/cli-json.md)."""
        data = asdict(self)
        data["kind"] = str(self.kind)
        data["levels"] = list(self.levels)
        data["missing_codes"] = {k: str(v) for k, v in self.missing_codes.items()}
        data["range"] = list(self.range) if self.range is not None else None
        data["cut_points"] = list(self.cut_points)
        return data

    @classmethod
    def from_json(cls, data: dict[str, Any]) -> Variable:
        known = {f.name for f in fields(cls)}
        unknown = set(data) - known
        if unknown:
            raise CodebookError(f"Unknown codebook keys: {', '.join(sorted(unknown))}.")
        if "name" not in data:
            raise CodebookError("A codebook entry needs a 'name'.")
        return cls(**_coerce_json(data))

    def updated(self, changes: dict[str, Any]) -> Variable:
        """A copy with only the given JSON keys changed (``--apply`` semantics)."""
        if "name" in changes and changes["name"] != self.name:
            raise CodebookError("A variable cannot be renamed by applying a codebook file.")
        unknown = set(changes) - {f.name for f in fields(self)}
        if unknown:
            raise CodebookError(f"Unknown codebook keys: {', '.join(sorted(unknown))}.")
        return replace(self, **_coerce_json(changes))


def _coerce_json(data: dict[str, Any]) -> dict[str, Any]:
    out = dict(data)
    if "kind" in out:
        try:
            out["kind"] = Kind(out["kind"])
        except ValueError:
            kinds = ", ".join(k.value for k in Kind)
            raise CodebookError(f"Unknown kind {out['kind']!r}; use one of: {kinds}.") from None
    if "missing_codes" in out:
        codes = out["missing_codes"] or {}
        reasons = {r.value for r in MissingReason}
        for code, reason in codes.items():
            if reason not in reasons:
                raise CodebookError(
                    f"Missing code {code!r} has an unknown reason {reason!r}; use one of: "
                    + ", ".join(r.value for r in CODE_REASONS)
                    + "."
                )
        out["missing_codes"] = {str(k): MissingReason(v) for k, v in codes.items()}
    if "levels" in out:
        out["levels"] = tuple(out["levels"] or ())
    if "range" in out and out["range"] is not None:
        rng = out["range"]
        if len(rng) != 2:
            raise CodebookError("A range must be [min, max].")
        out["range"] = (float(rng[0]), float(rng[1]))
    return out


class Codebook:
    """An ordered collection of variables, in questionnaire order."""

    def __init__(self, variables: Iterable[Variable] = ()) -> None:
        self._vars: dict[str, Variable] = {}
        for var in variables:
            if var.name in self._vars:
                raise CodebookError(f"The codebook names {var.name!r} twice.")
            self._vars[var.name] = var

    def __iter__(self) -> Iterator[Variable]:
        return iter(self._vars.values())

    def __len__(self) -> int:
        return len(self._vars)

    def __contains__(self, name: object) -> bool:
        return name in self._vars

    def __getitem__(self, name: str) -> Variable:
        try:
            return self._vars[name]
        except KeyError:
            raise CodebookError(f"There is no variable called {name!r}.") from None

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Codebook) and list(self) == list(other)

    @property
    def names(self) -> list[str]:
        return list(self._vars)

    def get(self, name: str) -> Variable | None:
        return self._vars.get(name)

    def with_variable(self, var: Variable) -> Codebook:
        """A new codebook where ``var`` replaces the entry of the same name (or is appended)."""
        items = dict(self._vars)
        items[var.name] = var
        return Codebook(items.values())

    def without(self, name: str) -> Codebook:
        return Codebook(v for v in self if v.name != name)

    def groups(self) -> dict[str, list[Variable]]:
        """Group name to its member variables, in questionnaire order."""
        out: dict[str, list[Variable]] = {}
        for var in self:
            if var.group:
                out.setdefault(var.group, []).append(var)
        return out

    def members(self, group: str) -> list[Variable]:
        found = self.groups().get(group)
        if not found:
            raise CodebookError(f"There is no question group called {group!r}.")
        return found

    def identifier(self) -> Variable | None:
        """The respondent identifier, if the codebook has one."""
        return next((v for v in self if v.kind is Kind.IDENTIFIER), None)

    def to_json(self) -> list[dict[str, Any]]:
        return [v.to_json() for v in self]

    def dumps(self) -> str:
        return json.dumps(self.to_json(), ensure_ascii=False, indent=1)

    @classmethod
    def from_json(cls, data: list[dict[str, Any]]) -> Codebook:
        if not isinstance(data, list):
            raise CodebookError("A codebook file must hold a JSON list of variable entries.")
        return cls(Variable.from_json(item) for item in data)

    @classmethod
    def loads(cls, text: str) -> Codebook:
        try:
            data = json.loads(text)
        except json.JSONDecodeError as exc:
            raise CodebookError(f"The codebook file is not valid JSON: {exc.msg}.") from None
        return cls.from_json(data)

    def applied(self, changes: list[dict[str, Any]]) -> tuple[Codebook, list[str]]:
        """Apply partial entries by name; returns the new codebook and the names changed.

        Entries naming a variable this codebook lacks are skipped and reported, so a
        codebook from another instrument can be applied to the columns both share.
        """
        if not isinstance(changes, list):
            raise CodebookError("A codebook file must hold a JSON list of variable entries.")
        new = Codebook(self)
        changed: list[str] = []
        for item in changes:
            if not isinstance(item, dict) or "name" not in item:
                raise CodebookError("Each codebook entry must be an object with a 'name'.")
            var = new.get(item["name"])
            if var is None:
                continue
            updated = var.updated({k: v for k, v in item.items() if k != "name"})
            if updated != var:
                new = new.with_variable(updated)
                changed.append(var.name)
        return new, changed
