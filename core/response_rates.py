"""Response, cooperation, refusal and contact rates from final disposition counts.

The rates follow the AAPOR *Standard Definitions* (formulas as in METHODS §9):

- I complete, P partial, R refusal and break-off, NC non-contact, O other eligible
  non-response; UH unknown if household/occupied, UO unknown other; NE known ineligible
  (left out of every denominator).
- e is the estimated share of unknown-eligibility cases that are eligible. By default it is
  the eligible share among cases whose eligibility is known, (I+P+R+NC+O) / (I+P+R+NC+O+NE),
  the default of AAPOR's outcome rate calculator (METHODS §9); the evaluator can enter another.

Each rate comes with its formula and a sentence saying what it measures, because reports
should say which rate they quote. The chosen rate for captions is stored in the wave's
settings with the disposition counts.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, fields
from typing import Any

import numpy as np

from core.errors import PlaincountError
from core.kinds import Kind, MissingReason
from core.project import Changes, Project
from core.working import WorkingData

CODES = ("I", "P", "R", "NC", "O", "UH", "UO", "NE")
CODE_LABELS = {
    "I": "Completes",
    "P": "Partials",
    "R": "Refusals and break-offs",
    "NC": "Non-contacts",
    "O": "Other eligible non-response",
    "UH": "Unknown if household/occupied",
    "UO": "Unknown eligibility, other",
    "NE": "Known ineligible",
}
RATE_NAMES = (
    "RR1", "RR2", "RR3", "RR4", "RR5", "RR6",
    "COOP1", "COOP2", "COOP3", "COOP4",
    "REF1", "REF2", "REF3",
    "CON1", "CON2", "CON3",
)  # fmt: skip
DEFAULT_CAPTION_RATE = "RR2"

# name: (formula, what it measures)
RATE_DEFINITIONS: dict[str, tuple[str, str]] = {
    "RR1": (
        "I / ((I+P) + (R+NC+O) + (UH+UO))",
        "Completes as a share of all eligible and possibly eligible cases; the most "
        "conservative response rate.",
    ),
    "RR2": (
        "(I+P) / ((I+P) + (R+NC+O) + (UH+UO))",
        "Completes and partials as a share of all eligible and possibly eligible cases.",
    ),
    "RR3": (
        "I / ((I+P) + (R+NC+O) + e(UH+UO))",
        "Completes as a share of eligible cases, counting only the estimated eligible share "
        "e of the cases whose eligibility is unknown.",
    ),
    "RR4": (
        "(I+P) / ((I+P) + (R+NC+O) + e(UH+UO))",
        "Completes and partials, with only the estimated eligible share e of unknown cases "
        "in the denominator.",
    ),
    "RR5": (
        "I / ((I+P) + (R+NC+O))",
        "Completes as a share of known eligible cases (assumes no unknown case is eligible).",
    ),
    "RR6": (
        "(I+P) / ((I+P) + (R+NC+O))",
        "Completes and partials as a share of known eligible cases; the most generous "
        "response rate.",
    ),
    "COOP1": (
        "I / ((I+P) + R + O)",
        "Completes as a share of eligible people who were contacted.",
    ),
    "COOP2": (
        "(I+P) / ((I+P) + R + O)",
        "Completes and partials as a share of eligible people who were contacted.",
    ),
    "COOP3": (
        "I / ((I+P) + R)",
        "Completes as a share of contacted people who were able to take part (leaves out "
        "other non-response).",
    ),
    "COOP4": (
        "(I+P) / ((I+P) + R)",
        "Completes and partials as a share of contacted people who were able to take part.",
    ),
    "REF1": (
        "R / ((I+P) + (R+NC+O) + (UH+UO))",
        "Refusals and break-offs as a share of all eligible and possibly eligible cases.",
    ),
    "REF2": (
        "R / ((I+P) + (R+NC+O) + e(UH+UO))",
        "Refusals and break-offs, with only the estimated eligible share e of unknown cases "
        "in the denominator.",
    ),
    "REF3": (
        "R / ((I+P) + (R+NC+O))",
        "Refusals and break-offs as a share of known eligible cases.",
    ),
    "CON1": (
        "((I+P) + R + O) / ((I+P) + (R+NC+O) + (UH+UO))",
        "Cases reached as a share of all eligible and possibly eligible cases.",
    ),
    "CON2": (
        "((I+P) + R + O) / ((I+P) + (R+NC+O) + e(UH+UO))",
        "Cases reached, with only the estimated eligible share e of unknown cases in the "
        "denominator.",
    ),
    "CON3": (
        "((I+P) + R + O) / ((I+P) + (R+NC+O))",
        "Cases reached as a share of known eligible cases.",
    ),
}


@dataclass(frozen=True)
class Dispositions:
    """Final disposition counts of one wave (AAPOR codes)."""

    I: int = 0  # noqa: E741 - the standard's own code letter
    P: int = 0
    R: int = 0
    NC: int = 0
    O: int = 0  # noqa: E741
    UH: int = 0
    UO: int = 0
    NE: int = 0

    def __post_init__(self) -> None:
        for f in fields(self):
            value = getattr(self, f.name)
            if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
                if isinstance(value, float) and value.is_integer():
                    object.__setattr__(self, f.name, int(value))
                    value = int(value)
                else:
                    raise PlaincountError(
                        f"{CODE_LABELS[f.name]} ({f.name}) must be a whole number, not {value!r}."
                    )
            if value < 0:
                raise PlaincountError(
                    f"{CODE_LABELS[f.name]} ({f.name}) cannot be negative ({value})."
                )
            object.__setattr__(self, f.name, int(value))

    @property
    def eligible_known(self) -> int:
        return self.I + self.P + self.R + self.NC + self.O

    @property
    def unknown(self) -> int:
        return self.UH + self.UO

    def to_json(self) -> dict[str, int]:
        return asdict(self)

    @classmethod
    def from_json(cls, data: dict[str, Any]) -> Dispositions:
        unknown = set(data) - set(CODES)
        if unknown:
            raise PlaincountError(
                f"Unknown disposition codes: {', '.join(sorted(unknown))}. Use {', '.join(CODES)}."
            )
        return cls(**{k: data[k] for k in CODES if k in data})


@dataclass(frozen=True)
class Rate:
    """One outcome rate: its value (a share, or None when its denominator is 0) and meaning."""

    name: str
    value: float | None
    formula: str
    definition: str

    @property
    def percent_text(self) -> str:
        return (
            "not defined (no cases in the denominator)"
            if self.value is None
            else (f"{100 * self.value:.1f} %")
        )

    def to_json(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "value": self.value,
            "percent": None if self.value is None else 100 * self.value,
            "formula": self.formula,
            "definition": self.definition,
        }


def default_e(d: Dispositions) -> float:
    """Eligible share among cases of known eligibility: (I+P+R+NC+O) / (I+P+R+NC+O+NE).

    Raises
    ------
    PlaincountError
        When no case has a known eligibility, so there is nothing to estimate e from.
    """
    known = d.eligible_known + d.NE
    if known == 0:
        raise PlaincountError(
            "e cannot be estimated: no case has a known eligibility. Enter e yourself."
        )
    return d.eligible_known / known


def outcome_rates(d: Dispositions, e: float | None = None) -> dict[str, Rate]:
    """All sixteen AAPOR rates, in the standard's order.

    ``e`` defaults to :func:`default_e`. When no case has a known eligibility there is
    nothing to estimate it from; 1.0 is used then, and it changes nothing, because every
    numerator (completes, refusals, contacts) is 0 in that case.
    """
    if e is None:
        e = default_e(d) if (d.eligible_known + d.NE) else 1.0
    try:
        e = float(e)
    except (TypeError, ValueError):
        raise PlaincountError(f"e must be a number between 0 and 1, not {e!r}.") from None
    if math.isnan(e) or not 0.0 <= e <= 1.0:
        raise PlaincountError(f"e is a share and must lie between 0 and 1; got {e}.")
    ip = d.I + d.P
    eligible = ip + d.R + d.NC + d.O
    all_cases = eligible + d.unknown
    e_cases = eligible + e * d.unknown
    contacted = ip + d.R + d.O
    values = {
        "RR1": (d.I, all_cases),
        "RR2": (ip, all_cases),
        "RR3": (d.I, e_cases),
        "RR4": (ip, e_cases),
        "RR5": (d.I, eligible),
        "RR6": (ip, eligible),
        "COOP1": (d.I, contacted),
        "COOP2": (ip, contacted),
        "COOP3": (d.I, ip + d.R),
        "COOP4": (ip, ip + d.R),
        "REF1": (d.R, all_cases),
        "REF2": (d.R, e_cases),
        "REF3": (d.R, eligible),
        "CON1": (contacted, all_cases),
        "CON2": (contacted, e_cases),
        "CON3": (contacted, eligible),
    }
    out = {}
    for name in RATE_NAMES:
        num, den = values[name]
        formula, definition = RATE_DEFINITIONS[name]
        out[name] = Rate(name, num / den if den else None, formula, definition)
    return out


def rates_json(d: Dispositions, e: float | None = None) -> dict[str, Any]:
    """Rates with their inputs, for the command line and reports."""
    e_used = e if e is not None else (default_e(d) if d.eligible_known + d.NE else 1.0)
    return {
        "dispositions": d.to_json(),
        "e": e_used,
        "e_source": "entered" if e is not None else "default (I+P+R+NC+O)/(I+P+R+NC+O+NE)",
        "rates": {name: r.to_json() for name, r in outcome_rates(d, e_used).items()},
    }


# ----------------------------------------------------------------- counting from the data
# Missing reasons that still mean the respondent saw and answered the question.
_ANSWERED_REASONS = {
    MissingReason.DECLINED.value,
    MissingReason.DONT_KNOW.value,
    MissingReason.SET_MISSING.value,  # an answer was given, then judged unusable in cleaning
    "invalid",  # text that is not a valid answer: still an answer
}
# Kinds that are questions put to every respondent (identifiers, dates and open comments are
# not counted: comments are optional by design).
_QUESTION_KINDS = {
    Kind.NUMERIC,
    Kind.CATEGORICAL,
    Kind.LIKERT,
    Kind.ORDINAL,
    Kind.RANKING,
    Kind.MULTISELECT,
}


@dataclass(frozen=True)
class CompletionCount:
    """Completes and partials counted from the answers themselves."""

    completes: int
    partials: int
    breakoffs: int  # answered less than the partial threshold: a break-off (AAPOR R)
    n_respondents: int
    n_questions: int
    threshold: float
    partial_threshold: float
    shares: list[float]  # per respondent, share of applicable questions answered

    def to_json(self) -> dict[str, Any]:
        data = asdict(self)
        data.pop("shares")
        return data


def count_completes(
    working: WorkingData, threshold: float = 0.8, partial_threshold: float = 0.5
) -> CompletionCount:
    """Count completes and partials from the share of questions each respondent answered.

    A respondent who answered at least ``threshold`` of the questions that applied to them
    is a complete; at least ``partial_threshold`` a partial; fewer a break-off. The
    evaluator sets both thresholds; 0.8 and 0.5 are a common convention in survey practice
    (from memory, no source checked). Questions are the codebook's answerable variables, a
    ranking or choose-all question counting once; "declined" and "don't know" count as
    answered, and "not applicable" answers are left out of the respondent's total. Excluded
    respondents (for example duplicate submissions) are not counted.
    """
    if not 0 < threshold <= 1 or not 0 <= partial_threshold <= threshold:
        raise PlaincountError(
            "The thresholds are shares of questions answered: 0 ≤ partial ≤ complete ≤ 1, "
            "and the complete threshold must be above 0."
        )
    values, reasons = working.analysed()
    questions: dict[str, list[str]] = {}
    for var in working.codebook:
        if var.kind not in _QUESTION_KINDS or var.name not in values.columns:
            continue
        key = (
            f"group:{var.group}"
            if var.group and var.kind in (Kind.RANKING, Kind.MULTISELECT)
            else var.name
        )
        questions.setdefault(key, []).append(var.name)
    n = len(values)
    if not questions:
        raise PlaincountError("The codebook has no questions to count answers on.")
    answered = np.zeros((n, len(questions)), dtype=bool)
    applicable = np.ones((n, len(questions)), dtype=bool)
    for j, names in enumerate(questions.values()):
        any_answer = np.zeros(n, dtype=bool)
        all_na = np.ones(n, dtype=bool)
        for name in names:
            reason = reasons[name].astype(object).to_numpy()
            has_value = values[name].notna().to_numpy()
            reason_text = np.array([None if _isna(r) else str(r) for r in reason], dtype=object)
            counted = has_value | np.isin(reason_text, list(_ANSWERED_REASONS))
            any_answer |= counted
            all_na &= reason_text == MissingReason.NOT_APPLICABLE.value
        answered[:, j] = any_answer
        applicable[:, j] = ~all_na | any_answer
    n_applicable = applicable.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(n_applicable > 0, (answered & applicable).sum(axis=1) / n_applicable, 0)
    # A small tolerance so that exactly 80 % (e.g. 40 of 50) is not lost to rounding.
    completes = int((share >= threshold - 1e-12).sum())
    partials = int(((share >= partial_threshold - 1e-12) & (share < threshold - 1e-12)).sum())
    return CompletionCount(
        completes=completes,
        partials=partials,
        breakoffs=n - completes - partials,
        n_respondents=n,
        n_questions=len(questions),
        threshold=threshold,
        partial_threshold=partial_threshold,
        shares=[float(s) for s in share],
    )


def _isna(value: object) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


# ----------------------------------------------------------------- stored with the wave
def save_dispositions(
    project: Project,
    wave_id: int,
    dispositions: Dispositions,
    e: float | None = None,
    caption_rate: str = DEFAULT_CAPTION_RATE,
) -> Changes:
    """Store the wave's disposition counts, e (None: the default) and the rate for captions."""
    if caption_rate not in RATE_NAMES:
        raise PlaincountError(
            f"{caption_rate!r} is not an AAPOR rate; choose one of {', '.join(RATE_NAMES)}."
        )
    outcome_rates(dispositions, e)  # validates e and the counts before anything is stored
    return project.update_wave_settings(
        wave_id,
        dispositions=dispositions.to_json(),
        eligibility_e=e,
        caption_rate=caption_rate,
    )


def wave_dispositions(project: Project, wave_id: int) -> Dispositions | None:
    stored = project.wave(wave_id).settings.get("dispositions")
    return Dispositions.from_json(stored) if stored else None


def wave_rates(project: Project, wave_id: int) -> dict[str, Rate] | None:
    """The wave's rates from its stored dispositions (None when none are entered)."""
    d = wave_dispositions(project, wave_id)
    if d is None:
        return None
    return outcome_rates(d, project.wave(wave_id).settings.get("eligibility_e"))


def caption_rate(project: Project, wave_id: int) -> str | None:
    """Caption text for the wave's chosen rate: "Response rate (AAPOR RR2): 76.0 %".

    None when no dispositions are stored for the wave.
    """
    rates = wave_rates(project, wave_id)
    if rates is None:
        return None
    name = project.wave(wave_id).settings.get("caption_rate") or DEFAULT_CAPTION_RATE
    rate = rates[name]
    label = next(
        word
        for prefix, word in (
            ("COOP", "Cooperation"),
            ("CON", "Contact"),
            ("REF", "Refusal"),
            ("RR", "Response"),
        )
        if name.startswith(prefix)
    )
    return f"{label} rate (AAPOR {name}): {rate.percent_text}"
