"""Settings of the cleaning checks: a small frozen record kept in the project settings.

Every number here is shown in the data-treatment appendix, so a reader can see which cut-off
produced which flag.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, fields, replace
from typing import Any

from core.checks.flag import CHECK_IDS
from core.errors import PlaincountError
from core.project import Changes, Project

OUTLIER_METHODS = {
    "tukey": "Tukey's fences (1.5 and 3 times the interquartile range)",
    "modified_z": "modified z-score (Iglewicz & Hoaglin, cut-off 3.5)",
}

# numpy's quantile methods and the Hyndman & Fan (1996) sample-quantile type each computes
# (numpy.quantile docstring; METHODS.md §2).
QUANTILE_TYPES = {
    "inverted_cdf": 1,
    "averaged_inverted_cdf": 2,
    "closest_observation": 3,
    "interpolated_inverted_cdf": 4,
    "hazen": 5,
    "weibull": 6,
    "linear": 7,
    "median_unbiased": 8,
    "normal_unbiased": 9,
}


@dataclass(frozen=True)
class CheckSettings:
    """Cut-offs and choices of the cleaning checks.

    Parameters
    ----------
    outlier_method : "tukey" (default) or "modified_z"; the evaluator chooses.
    quantile_method : numpy ``method=`` for quartiles; "linear" is Hyndman & Fan type 7, the
        default of numpy, pandas and scipy (METHODS.md §2). Stated in every outlier message.
    tukey_inner, tukey_outer : fence multipliers of the IQR ("outside" and "far out").
    z_threshold : |modified z| above which a value is a potential outlier (3.5, Iglewicz &
        Hoaglin 1993).
    min_answers : fewest answers a variable needs before outliers or wandering zeros are
        looked for (common practice, no source: quartiles of a handful of values say little).
    straightline_min_items : a battery needs at least this many items (k) for straight-lining.
    speeder_fraction : completion time strictly under this fraction of the median is flagged
        (0.5 is often quoted by practitioners; METHODS.md §15). Shown in the report.
    start_variable, finish_variable : date columns for completion time; found by name when
        not given.
    suggested_ranges : also check numeric items without a codebook range against the
        suggested defaults of :func:`core.checks.ranges.suggest_ranges`.
    agree_cut : mean position on the scale (0 = first level, 1 = last) at or beyond which a
        respondent counts as agreeing (``>= agree_cut``) or disagreeing (``<= 1 - agree_cut``)
        in the reversed-scale check.
    enabled : the check ids to run.
    rules : parsed consistency rules to apply (loaded from the project, not stored here).
    """

    outlier_method: str = "tukey"
    quantile_method: str = "linear"
    tukey_inner: float = 1.5
    tukey_outer: float = 3.0
    z_threshold: float = 3.5
    min_answers: int = 8
    straightline_min_items: int = 5
    speeder_fraction: float = 0.5
    start_variable: str | None = None
    finish_variable: str | None = None
    suggested_ranges: bool = True
    agree_cut: float = 0.75
    enabled: tuple[str, ...] = CHECK_IDS
    rules: tuple[Any, ...] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "enabled", tuple(self.enabled))
        object.__setattr__(self, "rules", tuple(self.rules))
        if self.outlier_method not in OUTLIER_METHODS:
            raise PlaincountError(
                f"Unknown outlier method {self.outlier_method!r}; use "
                + " or ".join(repr(m) for m in OUTLIER_METHODS)
                + "."
            )
        if self.quantile_method not in QUANTILE_TYPES:
            raise PlaincountError(
                f"Unknown quartile method {self.quantile_method!r}; use one of: "
                + ", ".join(QUANTILE_TYPES)
                + "."
            )
        if not 0 < self.speeder_fraction < 1:
            raise PlaincountError(
                "The speeder fraction must lie between 0 and 1 (for example 0.5 for half of "
                "the median completion time)."
            )
        if self.straightline_min_items < 2:
            raise PlaincountError("Straight-lining needs batteries of at least 2 items.")
        if not 0 < self.tukey_inner < self.tukey_outer:
            raise PlaincountError(
                "The inner fence multiplier must be positive and smaller than the outer one."
            )
        if self.z_threshold <= 0:
            raise PlaincountError("The modified z-score cut-off must be positive.")
        if not 0.5 < self.agree_cut <= 1:
            raise PlaincountError("The agreement cut-off must lie above 0.5 and at most 1.")
        unknown = set(self.enabled) - set(CHECK_IDS)
        if unknown:
            raise PlaincountError(
                f"Unknown checks: {', '.join(sorted(unknown))}; use: {', '.join(CHECK_IDS)}."
            )

    @property
    def quantile_type(self) -> int:
        """The Hyndman & Fan type of :attr:`quantile_method`."""
        return QUANTILE_TYPES[self.quantile_method]

    def to_json(self) -> dict[str, Any]:
        data = asdict(self)
        data.pop("rules")
        data["enabled"] = list(self.enabled)
        return data

    @classmethod
    def from_json(cls, data: dict[str, Any] | None) -> CheckSettings:
        data = dict(data or {})
        known = {f.name for f in fields(cls)} - {"rules"}
        unknown = set(data) - known
        if unknown:
            raise PlaincountError(f"Unknown check settings: {', '.join(sorted(unknown))}.")
        if "enabled" in data:
            data["enabled"] = tuple(data["enabled"])
        return cls(**data)

    def describe(self) -> list[str]:
        """The settings in plain sentences, for the report and the CLI."""
        method = OUTLIER_METHODS[self.outlier_method]
        if self.outlier_method == "tukey":
            method = (
                f"Tukey's fences: {show(self.tukey_inner)} times the interquartile range "
                f"beyond the quartiles is 'outside', {show(self.tukey_outer)} times is 'far "
                f"out'; quartiles by Hyndman & Fan type {self.quantile_type} "
                f"(numpy method '{self.quantile_method}')"
            )
        else:
            method = (
                f"the modified z-score of Iglewicz & Hoaglin (0.6745 x distance from the "
                f"median / median absolute deviation), potential outlier above "
                f"{show(self.z_threshold)}"
            )
        return [
            f"Outliers: {method}; variables with fewer than {self.min_answers} answers are "
            "not checked.",
            f"Straight-lining: the same answer on every item of a rating battery of at least "
            f"{self.straightline_min_items} items.",
            f"Speeders: completion time strictly under {show(self.speeder_fraction * 100)}% "
            "of the median completion time.",
        ]


def show(x: float) -> str:
    return str(int(x)) if float(x) == int(x) else f"{x:g}"


def load_settings(project: Project) -> CheckSettings:
    """The project's saved check settings (defaults where nothing is saved)."""
    return CheckSettings.from_json(project.settings().get("checks") or {})


def save_settings(project: Project, settings: CheckSettings) -> Changes:
    """Store the settings in the project (one committed change)."""
    return project.update_settings(checks=settings.to_json())


def settings_for_wave(
    project: Project, wave_id: int, settings: CheckSettings | None = None
) -> CheckSettings:
    """``settings`` (or the saved ones) with the active consistency rules of the wave's
    instrument filled in, as :func:`core.checks.run_checks` expects them."""
    from core.rules import active_rules  # local import: core.rules imports core.checks.flag

    def compute() -> CheckSettings:
        base = settings if settings is not None else load_settings(project)
        wave = project.wave(wave_id)
        return replace(base, rules=tuple(active_rules(project, wave.instrument_id)))

    # Cached per project version: reading rules parses each against the codebook.
    return project.cached(("check-settings", wave_id, settings), compute)
