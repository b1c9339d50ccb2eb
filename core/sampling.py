"""Sample sizes and margins of error for evaluators who survey a sample, not everyone.

Three questions, one formula family:

- *How many responses do I need?* :func:`sample_size` — Cochran's n0 = z² p (1 − p) / e²,
  then the finite population correction n = n0 / (1 + (n0 − 1) / N). With z² = 3.841 this is
  algebraically the Krejcie & Morgan (1970) formula (METHODS §8).
- *How precise are my percentages with the responses I got?* :func:`margin_of_error` — the
  same relation solved for e.
- *What range is a given percentage likely to lie in?* :func:`wilson_interval` — the Wilson
  (1927) score interval, which stays inside 0–100 % and behaves well for small groups and
  percentages near 0 or 100, where the textbook "± z·√(p(1−p)/n)" does not.

Rounding rule: the exact formula value is kept; :attr:`SampleSize.recommended` rounds it
*up* (never fewer responses than the formula asks for, as most texts advise), and
:attr:`SampleSize.nearest` rounds to the nearest whole number, which is how the published
Krejcie & Morgan table was rounded (e.g. N = 15 gives 14.47, listed as 14).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import Any

from scipy.stats import norm

from core.errors import PlaincountError
from core.project import Changes, Project
from core.tables.result import TableResult

DEFAULT_MARGIN = 0.05
DEFAULT_CONFIDENCE = 0.95
DEFAULT_PROPORTION = 0.5
# Values just above a whole number by floating-point error must not round up to the next one.
_CEIL_SLACK = 1e-9


def z_value(confidence: float) -> float:
    """The two-sided standard-normal quantile for ``confidence`` (1.959964 at 95 %)."""
    _check_share(confidence, "The confidence level")
    return float(norm.ppf(1 - (1 - confidence) / 2))


@dataclass(frozen=True)
class SampleSize:
    """The answer to "how many responses do I need?" with every assumption it rests on."""

    population: int | None
    margin: float
    confidence: float
    proportion: float
    z: float
    n0: float  # for a very large population
    exact: float  # after the finite population correction
    nearest: int  # rounded to the nearest whole number (the Krejcie & Morgan table rule)
    recommended: int  # rounded up: the number to aim for

    def to_json(self) -> dict[str, Any]:
        data = asdict(self)
        data["explanation"] = plain_explanation(self)
        return data


@dataclass(frozen=True)
class MarginOfError:
    """The margin of error that ``n`` responses give for a percentage."""

    n: int
    population: int | None
    confidence: float
    proportion: float
    z: float
    margin: float  # as a share: 0.041 means ± 4.1 percentage points
    fpc: float  # the finite population correction factor applied (1.0 without a population)

    @property
    def points(self) -> float:
        return 100.0 * self.margin

    def to_json(self) -> dict[str, Any]:
        data = asdict(self)
        data["points"] = self.points
        data["explanation"] = plain_explanation(self)
        return data


@dataclass(frozen=True)
class Interval:
    """A Wilson score interval for x of n, as shares (0–1)."""

    x: float
    n: int
    confidence: float
    population: int | None
    estimate: float
    low: float
    high: float
    n_effective: float  # n after the finite population correction (n itself without one)

    @property
    def plus_minus_points(self) -> float:
        """Half the interval's width in percentage points, for captions ("± 4.1 points").

        The Wilson interval is not symmetric around the estimate, so this is a summary of
        its width; the limits themselves are exact.
        """
        return 50.0 * (self.high - self.low)

    def to_json(self) -> dict[str, Any]:
        data = asdict(self)
        data["plus_minus_points"] = self.plus_minus_points
        return data


def sample_size(
    population: int | None,
    margin: float = DEFAULT_MARGIN,
    confidence: float = DEFAULT_CONFIDENCE,
    proportion: float = DEFAULT_PROPORTION,
) -> SampleSize:
    """Responses needed to estimate a percentage within ``± margin`` at ``confidence``.

    Parameters
    ----------
    population
        Size of the group the survey is about (N); None for a population so large that the
        correction does not matter.
    margin
        Margin of error as a share (0.05 = ± 5 percentage points).
    confidence
        Confidence level as a share (0.95).
    proportion
        Expected proportion; 0.5 is the cautious choice, giving the largest sample.

    Examples
    --------
    >>> sample_size(9000).nearest  # Krejcie & Morgan's worked example
    368
    """
    _check_population(population)
    _check_share(margin, "The margin of error")
    _check_share(proportion, "The expected proportion")
    z = z_value(confidence)
    n0 = z * z * proportion * (1 - proportion) / (margin * margin)
    exact = n0 if population is None else n0 / (1 + (n0 - 1) / population)
    return SampleSize(
        population=population,
        margin=margin,
        confidence=confidence,
        proportion=proportion,
        z=z,
        n0=n0,
        exact=exact,
        nearest=int(round(exact)),
        recommended=int(math.ceil(exact - _CEIL_SLACK)),
    )


def margin_of_error(
    n: int,
    population: int | None = None,
    confidence: float = DEFAULT_CONFIDENCE,
    proportion: float = DEFAULT_PROPORTION,
) -> MarginOfError:
    """The margin of error that ``n`` responses give (the sample-size formula solved for e).

    e = z · √(p(1 − p) / n) · √((N − n) / (N − 1)); the second factor is the finite population
    correction and is 0 when everyone responded (no sampling error at all).
    """
    _check_population(population)
    _check_share(proportion, "The expected proportion")
    if not isinstance(n, int) or isinstance(n, bool) or n < 1:
        raise PlaincountError("The number of responses must be a whole number of at least 1.")
    if population is not None and n > population:
        raise PlaincountError(
            f"{n:,} responses is more than the population of {population:,}; check both numbers."
        )
    z = z_value(confidence)
    fpc = 1.0
    if population is not None:
        fpc = math.sqrt((population - n) / (population - 1)) if population > 1 else 0.0
    margin = z * math.sqrt(proportion * (1 - proportion) / n) * fpc
    return MarginOfError(
        n=n,
        population=population,
        confidence=confidence,
        proportion=proportion,
        z=z,
        margin=margin,
        fpc=fpc,
    )


def effective_n(n: int, population: int | None) -> float:
    """The sample size with the finite population correction folded in.

    Sampling n of N without replacement has variance p(1 − p)/n · (N − n)/(N − 1) (Cochran
    1977, from memory). A simple random sample of n_eff = n (N − 1) / (N − n) drawn *with*
    replacement has the same variance, so any interval built for that case can be used with
    n_eff in place of n. This is the usual way of carrying a design effect into binomial
    intervals (Korn & Graubard 1998 use n / deff; from memory). When n = N there is no
    sampling error: n_eff is infinite.
    """
    if population is None:
        return float(n)
    if n >= population:
        return math.inf
    return n * (population - 1) / (population - n)


def wilson_interval(
    x: float,
    n: int,
    confidence: float = DEFAULT_CONFIDENCE,
    population: int | None = None,
) -> Interval:
    """Wilson (1927) score interval for the proportion ``x / n``.

    (p̂ + z²/(2m) ± z·√(p̂(1 − p̂)/m + z²/(4m²))) / (1 + z²/m), with m = n, or with
    m = :func:`effective_n` when the population size is known (finite population correction).
    When every member of the population answered, the interval is the percentage itself.
    """
    _check_population(population)
    if not isinstance(n, int) or isinstance(n, bool) or n < 1:
        raise PlaincountError("An interval needs at least one response.")
    if x < 0 or x > n:
        raise PlaincountError(f"The count {x} must lie between 0 and the base {n}.")
    if population is not None and n > population:
        raise PlaincountError(
            f"A base of {n:,} is more than the population of {population:,}; check both numbers."
        )
    z = z_value(confidence)
    p = x / n
    m = effective_n(n, population)
    if math.isinf(m):
        low = high = p
    else:
        z2 = z * z
        centre = p + z2 / (2 * m)
        spread = z * math.sqrt(p * (1 - p) / m + z2 / (4 * m * m))
        denom = 1 + z2 / m
        low = max(0.0, (centre - spread) / denom)
        high = min(1.0, (centre + spread) / denom)
        # Exact limits at the edges (rounding can leave 1e-17 instead of 0).
        if x == 0:
            low = 0.0
        if x == n:
            high = 1.0
    return Interval(
        x=x,
        n=n,
        confidence=confidence,
        population=population,
        estimate=p,
        low=low,
        high=high,
        n_effective=m,
    )


def interval_caption(interval: Interval) -> str:
    """Caption text for one interval: "± 4.1 points (95 % Wilson interval 25.5–36.6 %)"."""
    return (
        f"± {interval.plus_minus_points:.1f} points ({_pct(interval.confidence)} Wilson "
        f"interval {100 * interval.low:.1f}–{100 * interval.high:.1f} %)"
    )


def plain_explanation(answer: SampleSize | MarginOfError) -> str:
    """A few plain sentences saying what the number means and what it assumes."""
    if isinstance(answer, SampleSize):
        who = (
            f"a population of {answer.population:,}"
            if answer.population is not None
            else "a very large population"
        )
        text = (
            f"To estimate a percentage within ± {100 * answer.margin:g} percentage points "
            f"with {_pct(answer.confidence)} confidence in {who}, aim for "
            f"{answer.recommended:,} completed responses"
        )
        if answer.population is not None:
            text += f" (the formula gives {answer.exact:.2f}; rounded up)."
        else:
            text += f" (the formula gives {answer.n0:.2f}; rounded up)."
        text += (
            f" This assumes the answers split {100 * answer.proportion:g} / "
            f"{100 * (1 - answer.proportion):g}"
            + (", the most cautious assumption" if answer.proportion == 0.5 else "")
            + ", and that respondents are a random sample: people who choose not to answer "
            "can differ from those who do, which no sample size corrects."
        )
        if answer.population is not None and answer.nearest != answer.recommended:
            text += (
                f" Published tables (Krejcie & Morgan 1970) round to the nearest whole number "
                f"and list {answer.nearest:,}."
            )
        return text
    who = (
        f"out of a population of {answer.population:,}"
        if answer.population is not None
        else "from a very large population"
    )
    if answer.margin == 0:
        return (
            f"All {answer.n:,} members of the population responded, so percentages have no "
            "sampling error (they can still be affected by how people answered)."
        )
    return (
        f"With {answer.n:,} responses {who}, a percentage near "
        f"{100 * answer.proportion:g} % is within about ± {answer.points:.1f} percentage "
        f"points of the population's value, with {_pct(answer.confidence)} confidence, "
        "if respondents are like a random sample. Percentages nearer 0 or 100 % are more "
        "precise; percentages of small groups much less so."
    )


# ----------------------------------------------------------------- the wave's design
@dataclass(frozen=True)
class WaveDesign:
    """Whether a wave reached the whole population or a sample of it, and the population size.

    Stored in the wave's settings (``population``: True for everyone, the default;
    ``population_size``: N when known).
    """

    whole_population: bool
    population_size: int | None

    def to_json(self) -> dict[str, Any]:
        return asdict(self)


def wave_design(project: Project, wave_id: int) -> WaveDesign:
    settings = project.wave(wave_id).settings
    size = settings.get("population_size")
    return WaveDesign(
        whole_population=bool(settings.get("population", True)),
        population_size=int(size) if size is not None else None,
    )


def set_wave_design(
    project: Project, wave_id: int, whole_population: bool, population_size: int | None = None
) -> Changes:
    """Record whether the wave surveyed everyone or a sample (and of how many people)."""
    _check_population(population_size)
    wave = project.wave(wave_id)
    if population_size is not None and population_size < wave.n_rows and not whole_population:
        raise PlaincountError(
            f"The population ({population_size:,}) cannot be smaller than the "
            f"{wave.n_rows:,} responses in this wave."
        )
    return project.update_wave_settings(
        wave_id, population=bool(whole_population), population_size=population_size
    )


def intervals_note(project: Project, wave_id: int, confidence: float = DEFAULT_CONFIDENCE) -> str:
    """The caption sentence about margins of error for tables of this wave."""
    return design_note(wave_design(project, wave_id), confidence)


def design_note(design: WaveDesign, confidence: float = DEFAULT_CONFIDENCE) -> str:
    """What margins of error mean for a wave of this design, or why there are none."""
    if design.whole_population:
        return (
            "No margins of error are shown: this wave was sent to the whole population, so "
            "its percentages have no sampling error; they describe the respondents themselves "
            "rather than estimate a larger group. Differences are real for this population, "
            "though still not proof of what caused them."
        )
    text = (
        f"Ranges are {_pct(confidence)} Wilson score intervals, treating respondents as a "
        "random sample"
    )
    if design.population_size:
        text += (
            f" of a population of {design.population_size:,} (with the finite population "
            "correction)"
        )
    return text + "; they do not cover errors from who chose not to respond."


def result_intervals(
    result: TableResult, design: WaveDesign, confidence: float = DEFAULT_CONFIDENCE
) -> dict[str, Any]:
    """Wilson intervals (in percent) for every shown percentage of a table result.

    Returns ``{"intervals": ..., "note": str, "widest": (keys, Interval) | None}``.
    ``intervals`` mirrors ``data["percents"]``: ``{level: [low, high]}`` for a frequency or
    choose-all table, ``{group: {level: [low, high]}}`` for a cross-tabulation, with None where
    the count or its base is hidden. ``widest`` names the widest interval (its keys into
    ``intervals``), for captions. For a whole-population wave ``intervals`` is empty and the
    note says why.
    """
    data = result.data
    note = design_note(design, confidence)
    if design.whole_population:
        return {"intervals": {}, "note": note, "widest": None}
    n_pop = design.population_size
    widest: list[Any] = [None]

    def one(keys: tuple[str, ...], x: Any, base: Any) -> list[float] | None:
        if x is None or not base or x > base:
            return None
        if n_pop is not None and base > n_pop:
            raise PlaincountError(
                f"A base of {base:,} is larger than the population of {n_pop:,} set for this "
                "wave; correct the population size."
            )
        iv = wilson_interval(x, int(base), confidence, n_pop)
        if widest[0] is None or iv.high - iv.low > widest[0][1].high - widest[0][1].low:
            widest[0] = (keys, iv)
        return [100 * iv.low, 100 * iv.high]

    counts = data.get("counts") or {}
    out: dict[str, Any] = {}
    if data.get("groups") and all(isinstance(counts.get(g), dict) for g in data["groups"]):
        kind = data.get("percent_base", getattr(result.spec, "percent", "row"))
        for g in data["groups"]:
            row = {}
            for lv, x in counts[g].items():
                if kind == "row":
                    base = (data.get("group_bases") or {}).get(g)
                elif kind == "column":
                    base = (data.get("level_totals") or {}).get(lv)
                else:
                    base = data.get("total")
                row[lv] = one((g, lv), x, base)
            out[g] = row
    else:
        base = data.get("base") if data.get("base") is not None else result.n_valid
        out = {lv: one((lv,), x, base) for lv, x in counts.items() if not isinstance(x, dict)}
    return {"intervals": out, "note": note, "widest": widest[0]}


def _pct(share: float) -> str:
    return f"{100 * share:g} %"


def _check_share(value: float, what: str) -> None:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise PlaincountError(f"{what} must be a number, such as 0.05.") from None
    if math.isnan(v) or v <= 0 or v >= 1:
        hint = " (write 5 % as 0.05)" if v >= 1 else ""
        raise PlaincountError(f"{what} must lie strictly between 0 and 1{hint}; got {value}.")


def _check_population(population: int | None) -> None:
    if population is None:
        return
    if not isinstance(population, int) or isinstance(population, bool) or population < 1:
        raise PlaincountError("The population size must be a whole number of at least 1.")
