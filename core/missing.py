"""Missing-data diagnostics: how much is missing, why, where in the questionnaire, and for whom.

Every function takes a wave's working data and returns a plain DataFrame or a small
dataclass, so the window, the command line and the report can show the same figures.
Respondents excluded in cleaning are left out (``working.analysed()``).

Vocabulary used throughout:

* *missing* — any cell without a usable answer, whatever the reason.
* *not applicable* — missing by design (the question did not apply). Shares of gaps
  "among those asked" leave these rows out of both the count and the base.
* *left unanswered* — the respondent's own gaps: skipped, declined or don't know. Process
  patterns (drop-off, unusual skips) use these, because cleaning decisions and invalid text
  say nothing about how the questionnaire worked.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy import stats

from core.codebook import Variable
from core.decoding import REASON_CATEGORIES
from core.errors import PlaincountError
from core.kinds import Kind, MissingReason
from core.working import WorkingData

REASONS: tuple[str, ...] = tuple(REASON_CATEGORIES)
REASON_TEXT = {
    "skipped": "left blank",
    "declined": "declined to answer",
    "not_applicable": "not applicable",
    "dont_know": "don't know",
    "set_missing": "set missing in cleaning",
    "invalid": "not a valid answer",
}
# Codes in the matrix returned by reason_codes(): 0 answered, then 1 + index in REASONS.
ANSWERED = 0
_NA_CODE = 1 + REASONS.index(MissingReason.NOT_APPLICABLE.value)
_UNANSWERED_CODES = tuple(
    1 + REASONS.index(r.value)
    for r in (MissingReason.SKIPPED, MissingReason.DECLINED, MissingReason.DONT_KNOW)
)

# Columns that describe the response rather than ask a question.
NON_ITEM_KINDS = (Kind.IDENTIFIER, Kind.DATE)
# Grouping variables the pattern scan tries.
GROUPING_KINDS = (Kind.CATEGORICAL, Kind.ORDINAL)

DEFAULT_THRESHOLD = 5.0
THRESHOLD_SOURCE = (
    "A common rule of thumb treats 5 % missing or less as unlikely to matter (usually "
    "attributed to Schafer 1999 and cited through Dong & Peng 2013, SpringerPlus 2:222); it "
    "is a rule of thumb, not a test. "
    "The share depends on its base: a few percent of answers missing can still mean a large "
    "share of respondents with at least one gap, and whether the gaps are related to who the "
    "respondents are matters more than how many there are."
)
SCREENING_NOTE = (
    "This is a screening aid: a small p-value says the share missing differs between groups "
    "more than chance alone would easily produce. It does not say why, and it is not proof "
    "that belonging to a group causes the gaps."
)


# --------------------------------------------------------------------------- building blocks
def item_variables(working: WorkingData, include_text: bool = True) -> list[Variable]:
    """The question items of a wave in questionnaire order (no identifiers or timestamps)."""
    out = []
    for var in working.codebook:
        if var.name not in working.values.columns or var.kind in NON_ITEM_KINDS:
            continue
        if not include_text and var.kind is Kind.TEXT:
            continue
        out.append(var)
    return out


def _positions(working: WorkingData) -> dict[str, int]:
    """1-based place of each variable in the questionnaire (the codebook order)."""
    return {name: i + 1 for i, name in enumerate(working.codebook.names)}


def reason_codes(working: WorkingData, items: Sequence[Variable]) -> np.ndarray:
    """Analysed respondents x items matrix of small ints: 0 answered, 1 + index in REASONS.

    A cell with no value and no recorded reason counts as skipped, so nothing blank is ever
    counted as answered.
    """
    values, reasons = working.analysed()
    n = len(values)
    out = np.zeros((n, len(items)), dtype=np.int8)
    for j, var in enumerate(items):
        col = reasons[var.name]
        dtype = col.dtype
        if isinstance(dtype, pd.CategoricalDtype) and tuple(dtype.categories) == REASONS:
            codes = col.cat.codes.to_numpy()  # decoded reasons: already in REASONS order
        else:
            codes = pd.Categorical(col.astype(object), categories=list(REASONS)).codes
        codes = codes.astype(np.int16) + 1
        blank = values[var.name].isna().to_numpy()
        codes[(codes == 0) & blank] = 1 + REASONS.index(MissingReason.SKIPPED.value)
        out[:, j] = codes
    return out


def _analysed_rows(working: WorkingData) -> pd.Index:
    return working.analysed()[0].index


def _require_items(working: WorkingData, include_text: bool = True) -> list[Variable]:
    items = item_variables(working, include_text)
    if not items:
        raise PlaincountError("This wave has no question items to examine.")
    return items


# --------------------------------------------------------------------------- per item
def item_summary(working: WorkingData, threshold: float = DEFAULT_THRESHOLD) -> pd.DataFrame:
    """One row per item: answered, missing by reason, % missing and the threshold marker.

    ``pct_missing`` counts every reason over all analysed respondents. ``pct_missing_asked``
    leaves "not applicable" out of both count and base (those respondents were never meant
    to answer), and ``above_threshold`` compares that share with ``threshold`` percent
    (default 5 %, a rule of thumb: see :data:`THRESHOLD_SOURCE`).
    """
    items = _require_items(working)
    codes = reason_codes(working, items)
    pos = _positions(working)
    n = codes.shape[0]
    rows = []
    for j, var in enumerate(items):
        col = codes[:, j]
        by_reason = {r: int(np.count_nonzero(col == 1 + i)) for i, r in enumerate(REASONS)}
        n_missing = int(np.count_nonzero(col != ANSWERED))
        n_asked = n - by_reason["not_applicable"]
        gaps_asked = n_missing - by_reason["not_applicable"]
        pct = 100.0 * n_missing / n if n else 0.0
        pct_asked = 100.0 * gaps_asked / n_asked if n_asked else 0.0
        rows.append(
            {
                "variable": var.name,
                "label": var.label,
                "kind": str(var.kind),
                "position": pos[var.name],
                "n": n,
                "n_answered": n - n_missing,
                "n_missing": n_missing,
                "pct_missing": pct,
                **by_reason,
                "pct_missing_asked": pct_asked,
                "above_threshold": bool(pct_asked > threshold),
            }
        )
    return pd.DataFrame(rows)


def by_reason(row: pd.Series | dict) -> dict[str, int]:
    """The per-reason counts of one :func:`item_summary` row, as a plain dict."""
    return {r: int(row[r]) for r in REASONS}


# --------------------------------------------------------------------------- per respondent
@dataclass(frozen=True)
class RespondentSummary:
    """How much of the questionnaire each respondent answered.

    ``table``: one row per analysed respondent (``row`` is the 0-based raw-table position).
    ``distribution``: respondents per band of share answered. ``near_empty``: respondents who
    answered less than ``near_empty_share`` of the items they were asked.
    """

    table: pd.DataFrame
    distribution: pd.DataFrame
    near_empty: pd.DataFrame
    near_empty_share: float
    n_respondents: int
    n_complete: int
    median_share: float


def respondent_summary(
    working: WorkingData, near_empty_share: float = 0.2, include_text: bool = False
) -> RespondentSummary:
    """Share of items answered per respondent, its distribution, and near-empty responses.

    Open-ended comment boxes are left out by default: they are optional by design, so an
    empty one says little about how completely someone answered. ``near_empty_share`` (default
    one fifth) is our own cut-off for a response too thin to analyse, not a published rule.
    """
    items = _require_items(working, include_text)
    codes = reason_codes(working, items)
    asked = codes != _NA_CODE
    answered = codes == ANSWERED
    n_asked = asked.sum(axis=1)
    n_answered = answered.sum(axis=1)
    share = np.divide(
        n_answered, n_asked, out=np.zeros(len(n_asked), dtype=float), where=n_asked > 0
    )
    rows = _analysed_rows(working)
    table = pd.DataFrame(
        {
            "row": np.asarray(rows, dtype=int),
            "respondent": working.respondent_ids.astype(str).to_numpy()[
                np.asarray(rows, dtype=int)
            ],
            "n_asked": n_asked,
            "n_answered": n_answered,
            "n_missing": n_asked - n_answered,
            "share_answered": share,
        }
    )
    labels = [f"{10 * i}–{10 * i + 9} %" for i in range(10)] + ["100 %"]
    band = np.where(share >= 1.0, 10, np.clip(np.floor(share * 10 + 1e-9), 0, 9)).astype(int)
    counts = np.bincount(band, minlength=11)
    n = len(share)
    distribution = pd.DataFrame(
        {
            "band": labels,
            "n_respondents": counts,
            "pct_respondents": 100.0 * counts / n if n else np.zeros(11),
        }
    )
    near = table[table["share_answered"] < near_empty_share].sort_values(["share_answered", "row"])
    return RespondentSummary(
        table=table,
        distribution=distribution,
        near_empty=near.reset_index(drop=True),
        near_empty_share=near_empty_share,
        n_respondents=n,
        n_complete=int(np.count_nonzero(n_answered == n_asked)),
        median_share=float(np.median(share)) if n else 0.0,
    )


# --------------------------------------------------------------------------- process patterns
@dataclass(frozen=True)
class Dropoff:
    """Where respondents stopped answering, item by item in questionnaire order.

    ``table`` columns: position, variable, n_answered, pct_answered, pct_unanswered (left
    unanswered among those asked), n_stopped_here (respondents whose last answered item is
    this one; at the final item these are the ones who reached the end), n_still_answering
    and pct_still_answering (the survivors curve: respondents who answered this item or a
    later one).
    """

    table: pd.DataFrame
    n_respondents: int
    n_answered_nothing: int
    n_reached_end: int

    @property
    def n_stopped_early(self) -> int:
        """Respondents who answered something but nothing after some item before the last."""
        return self.n_respondents - self.n_reached_end - self.n_answered_nothing


def dropoff(working: WorkingData, include_text: bool = False) -> Dropoff:
    """The drop-off curve over the questionnaire (comment boxes left out by default)."""
    items = _require_items(working, include_text)
    codes = reason_codes(working, items)
    pos = _positions(working)
    n, k = codes.shape
    answered = codes == ANSWERED
    any_answer = answered.any(axis=1)
    # index of the last answered item per respondent; -1 when nothing was answered
    last = np.where(any_answer, k - 1 - np.argmax(answered[:, ::-1], axis=1), -1)
    stopped = np.bincount(last[last >= 0], minlength=k)
    still = stopped[::-1].cumsum()[::-1]
    asked = (codes != _NA_CODE).sum(axis=0)
    unanswered = np.isin(codes, _UNANSWERED_CODES).sum(axis=0)
    n_ans = answered.sum(axis=0)
    table = pd.DataFrame(
        {
            "position": [pos[v.name] for v in items],
            "variable": [v.name for v in items],
            "n_answered": n_ans,
            "pct_answered": 100.0 * n_ans / n if n else 0.0,
            "pct_unanswered": np.divide(
                100.0 * unanswered, asked, out=np.zeros(k), where=asked > 0
            ),
            "n_stopped_here": stopped,
            "n_still_answering": still,
            "pct_still_answering": 100.0 * still / n if n else 0.0,
        }
    )
    return Dropoff(
        table=table,
        n_respondents=int(n),
        n_answered_nothing=int(np.count_nonzero(~any_answer)),
        n_reached_end=int(stopped[-1]) if k else 0,
    )


@dataclass(frozen=True)
class PositionTrend:
    """Whether items later in the questionnaire are left unanswered more often.

    ``table``: one row per part of the questionnaire (first, middle, last third by default)
    with the median (``pct_unanswered``) and mean share left unanswered over its items.
    ``rho``/``p_value``: Spearman rank correlation of item position with share unanswered
    (scipy.stats.spearmanr), a screening figure. Items that :func:`unusual_skips` marks are
    left out (``left_out``): one confusing question should neither make nor hide a trend.
    """

    table: pd.DataFrame
    rho: float | None
    p_value: float | None
    left_out: tuple[str, ...] = ()

    @property
    def rising(self) -> bool:
        if self.rho is None or self.p_value is None or len(self.table) < 2:
            return False
        first, last = self.table["pct_unanswered"].iloc[[0, -1]]
        return bool(self.rho > 0 and self.p_value < 0.05 and last > first)


def position_trend(working: WorkingData, parts: int = 3) -> PositionTrend:
    """Share left unanswered by part of the questionnaire, and its rank correlation."""
    odd = unusual_skips(working)
    table = dropoff(working).table[~odd["unusual"].to_numpy()].reset_index(drop=True)
    left_out = tuple(odd.loc[odd["unusual"], "variable"])
    k = len(table)
    parts = max(1, min(parts, k))
    names = {3: ["first third", "middle third", "last third"], 2: ["first half", "second half"]}
    labels = names.get(parts, [f"part {i + 1}" for i in range(parts)])
    split = np.array_split(np.arange(k), parts)
    rows = []
    for label, idx in zip(labels, split):
        sub = table.iloc[idx]
        rows.append(
            {
                "part": label,
                "first_variable": sub["variable"].iloc[0],
                "last_variable": sub["variable"].iloc[-1],
                "n_items": len(sub),
                "pct_unanswered": float(sub["pct_unanswered"].median()),
                "mean_pct_unanswered": float(sub["pct_unanswered"].mean()),
            }
        )
    rho = p = None
    pct = table["pct_unanswered"].to_numpy()
    if k >= 3 and np.ptp(pct) > 0:
        res = stats.spearmanr(np.arange(k), pct)
        rho, p = float(res.statistic), float(res.pvalue)
    return PositionTrend(table=pd.DataFrame(rows), rho=rho, p_value=p, left_out=left_out)


def unusual_skips(
    working: WorkingData,
    window: int = 2,
    min_excess_pp: float = 5.0,
    min_ratio: float = 2.0,
) -> pd.DataFrame:
    """Items left unanswered far more often than their neighbours (a confusing question?).

    Each item's share left unanswered (among those asked) is compared with the median of
    the ``window`` items on each side. An item is marked ``unusual`` when it exceeds that
    median by at least ``min_excess_pp`` percentage points and is at least ``min_ratio``
    times it. Both cut-offs are our own screening choice, not a published rule.
    """
    table = dropoff(working).table
    pct = table["pct_unanswered"].to_numpy()
    k = len(pct)
    neighbour = np.zeros(k)
    for i in range(k):
        idx = [j for j in range(i - window, i + window + 1) if j != i and 0 <= j < k]
        neighbour[i] = float(np.median(pct[idx])) if idx else 0.0
    excess = pct - neighbour
    ratio = np.divide(pct, neighbour, out=np.full(k, np.inf), where=neighbour > 0)
    ratio[(neighbour == 0) & (pct == 0)] = 1.0
    out = pd.DataFrame(
        {
            "position": table["position"],
            "variable": table["variable"],
            "pct_unanswered": pct,
            "neighbour_pct": neighbour,
            "excess_pp": excess,
            "ratio": ratio,
            "unusual": (excess >= min_excess_pp) & (ratio >= min_ratio),
        }
    )
    return out


# --------------------------------------------------------------------------- content patterns
@dataclass(frozen=True)
class GroupMissing:
    """Missingness of one item broken down by a grouping variable.

    ``table`` lists every group with at least one respondent (n, n_answered, n_missing,
    pct_missing and one column per reason). Respondents for whom the item is "not
    applicable", or whose group is unknown, are left out and counted in the fields below.
    The chi-square test uses ``test_groups`` (groups smaller than ``min_group`` combined, as
    Cochran advises when expected counts are small) and no continuity correction.
    """

    variable: str
    by: str
    table: pd.DataFrame
    chi2: float | None
    df: int | None
    p_value: float | None
    cramers_v: float | None
    min_expected: float | None
    cochran_ok: bool | None
    n_used: int
    n_group_unknown: int
    n_not_applicable: int
    test_groups: tuple[str, ...] = ()
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def pct_missing_by_group(self) -> dict[str, float]:
        return {str(g): float(p) for g, p in zip(self.table["group"], self.table["pct_missing"])}

    def to_json(self) -> dict[str, object]:
        return {
            "variable": self.variable,
            "by": self.by,
            "groups": [
                {
                    "group": str(r["group"]),
                    "n": int(r["n"]),
                    "n_missing": int(r["n_missing"]),
                    "pct_missing": float(r["pct_missing"]),
                }
                for _, r in self.table.iterrows()
            ],
            "pct_missing_by_group": self.pct_missing_by_group,
            "chi2": self.chi2,
            "df": self.df,
            "p_value": self.p_value,
            "cramers_v": self.cramers_v,
            "min_expected": self.min_expected,
            "cochran_ok": self.cochran_ok,
            "n_used": self.n_used,
            "notes": list(self.notes),
        }


OTHER_GROUP = "Smaller groups combined"


def cochran_ok(expected: np.ndarray) -> bool:
    """Cochran (1954): no expected count below 1 and at most 20 % below 5 (METHODS.md §5)."""
    e = np.asarray(expected, dtype=float).ravel()
    return bool(e.min() >= 1.0 and np.count_nonzero(e < 5.0) <= 0.2 * e.size)


def _grouping(working: WorkingData, by: str) -> tuple[Variable, pd.Series]:
    var = working.codebook[by]
    if var.name not in working.values.columns:
        raise PlaincountError(f"{by} has no data in this wave.")
    if not var.kind.has_levels:
        raise PlaincountError(
            f"{by} is a {var.kind.label.lower()} question; break missing data down by a "
            "question with answer categories instead (group numbers into bands first)."
        )
    values, _ = working.analysed()
    return var, values[var.name]


def _test_table(
    n_group: np.ndarray, n_miss: np.ndarray, labels: list[str], min_group: int
) -> tuple[np.ndarray, np.ndarray, list[str], int]:
    """Combine groups smaller than ``min_group``; drop the combined group if still small."""
    if min_group <= 1:
        return n_group, n_miss, labels, 0
    small = n_group < min_group
    if not small.any():
        return n_group, n_miss, labels, 0
    keep = ~small
    g, m, lab = list(n_group[keep]), list(n_miss[keep]), [x for x, k in zip(labels, keep) if k]
    left_out = 0
    if n_group[small].sum() >= min_group:
        g.append(int(n_group[small].sum()))
        m.append(int(n_miss[small].sum()))
        lab.append(OTHER_GROUP)
    else:
        left_out = int(n_group[small].sum())
    return np.array(g), np.array(m), lab, left_out


def _chi_square(n_group: np.ndarray, n_miss: np.ndarray) -> dict[str, object] | None:
    """Pearson chi-square (no Yates correction) of answered/missing x group, or None."""
    if len(n_group) < 2 or n_miss.sum() == 0 or n_miss.sum() == n_group.sum():
        return None
    observed = np.vstack([n_group - n_miss, n_miss])
    res = stats.chi2_contingency(observed, correction=False)
    n = observed.sum()
    # For a 2 x g table min(r, c) - 1 = 1, so Cramér's V = sqrt(X² / n) (METHODS.md §5)
    v = float(np.sqrt(res.statistic / n))
    return {
        "chi2": float(res.statistic),
        "df": int(res.dof),
        "p_value": float(res.pvalue),
        "cramers_v": v,
        "min_expected": float(res.expected_freq.min()),
        "cochran_ok": cochran_ok(res.expected_freq),
    }


def missing_by_group(
    working: WorkingData,
    variable: str,
    by: str,
    min_group: int = 10,
    small_group: int = 30,
    min_cell: int = 5,
) -> GroupMissing:
    """Counts and % missing of ``variable`` for each group of ``by``, with a chi-square test.

    The test is a screening aid with Cochran's expected-count caution. Groups smaller than
    ``min_group`` are combined for the test only; ``small_group`` (default 30) and
    ``min_cell`` (default 5) trigger the cautions about unstable percentages and groups small
    enough to identify people.
    """
    item = working.codebook[variable]
    if item.name not in working.values.columns:
        raise PlaincountError(f"{variable} has no data in this wave.")
    if item.name == by:
        raise PlaincountError("Choose a grouping question other than the item itself.")
    gvar, groups = _grouping(working, by)
    codes = reason_codes(working, [item])[:, 0]
    known = groups.notna().to_numpy()
    applicable = codes != _NA_CODE
    use = known & applicable
    cat = pd.Categorical(groups.astype(object), categories=list(gvar.levels))
    gcodes = cat.codes
    rows = []
    n_levels = len(gvar.levels)
    n_group = np.bincount(gcodes[use], minlength=n_levels)
    n_miss = np.bincount(gcodes[use & (codes != ANSWERED)], minlength=n_levels)
    for i, level in enumerate(gvar.levels):
        if n_group[i] == 0:
            continue
        in_group = use & (gcodes == i)
        row = {
            "group": level,
            "n": int(n_group[i]),
            "n_answered": int(n_group[i] - n_miss[i]),
            "n_missing": int(n_miss[i]),
            "pct_missing": 100.0 * n_miss[i] / n_group[i],
        }
        for j, reason in enumerate(REASONS):
            if reason != MissingReason.NOT_APPLICABLE.value:
                row[reason] = int(np.count_nonzero(in_group & (codes == 1 + j)))
        rows.append(row)
    reason_cols = [r for r in REASONS if r != MissingReason.NOT_APPLICABLE.value]
    table = pd.DataFrame(
        rows, columns=["group", "n", "n_answered", "n_missing", "pct_missing", *reason_cols]
    )
    present = n_group > 0
    labels = [lv for lv, p in zip(gvar.levels, present) if p]
    t_group, t_miss, t_labels, left_out = _test_table(
        n_group[present], n_miss[present], labels, min_group
    )
    test = _chi_square(t_group, t_miss)
    notes = [SCREENING_NOTE]
    if test is None:
        notes.append("No test: it needs at least two groups and both answered and missing cells.")
    else:
        notes.append(
            "Chi-square test of independence without continuity correction, "
            f"X² = {test['chi2']:.2f}, df = {test['df']}, {_p_eq(test['p_value'])}, "
            f"Cramér's V = {test['cramers_v']:.2f}."
        )
        if not test["cochran_ok"]:
            notes.append(
                "Caution: some expected counts are small (Cochran's rule: none below 1 and "
                "at most 20 % below 5), so the p-value is only approximate."
            )
    if OTHER_GROUP in t_labels:
        notes.append(f"Groups of fewer than {min_group} respondents were combined for the test.")
    if left_out:
        notes.append(
            f"{left_out} respondent(s) in groups of fewer than {min_group} were left out of "
            "the test."
        )
    if len(table) and (table["n"] < small_group).any():
        notes.append(
            f"Percentages of groups smaller than {small_group} respondents are unstable: "
            "one or two people change them a lot."
        )
    if min_cell and len(table) and (table["n"] < min_cell).any():
        notes.append(
            f"Some groups have fewer than {min_cell} respondents and could identify people; "
            "do not report them as they are."
        )
    n_unknown = int(np.count_nonzero(~known & applicable))
    n_na = int(np.count_nonzero(~applicable))
    if n_na:
        notes.append(f"{n_na} respondent(s) for whom {variable} does not apply are left out.")
    if n_unknown:
        notes.append(f"{n_unknown} respondent(s) who did not answer {by} are left out.")
    return GroupMissing(
        variable=item.name,
        by=gvar.name,
        table=table,
        chi2=None if test is None else test["chi2"],
        df=None if test is None else test["df"],
        p_value=None if test is None else test["p_value"],
        cramers_v=None if test is None else test["cramers_v"],
        min_expected=None if test is None else test["min_expected"],
        cochran_ok=None if test is None else test["cochran_ok"],
        n_used=int(np.count_nonzero(use)),
        n_group_unknown=n_unknown,
        n_not_applicable=n_na,
        test_groups=tuple(t_labels),
        notes=tuple(notes),
    )


def grouping_variables(working: WorkingData, max_groups: int = 8) -> list[Variable]:
    """Categorical and ordered-category questions with 2..max_groups answer levels."""
    return [
        v
        for v in working.codebook
        if v.kind in GROUPING_KINDS
        and v.name in working.values.columns
        and 2 <= len(v.levels) <= max_groups
    ]


def pattern_scan(
    working: WorkingData,
    max_groups: int = 8,
    by: str | Iterable[str] | None = None,
    items: Iterable[str] | None = None,
    min_group: int = 10,
) -> pd.DataFrame:
    """Every item against every grouping variable, strongest missingness patterns first.

    A screening aid. For each pair, respondents with the item not applicable or the group
    unknown are left out, groups smaller than ``min_group`` are combined, and a chi-square
    test (no continuity correction) of answered/missing x group is run. Rows are ranked by
    whether the test meets Cochran's rule (reliable ones first), then by Cramér's V. The
    ``p_adjusted`` column applies the Benjamini-Hochberg false-discovery-rate correction
    (scipy.stats.false_discovery_control) because many tests are run at once.
    """
    if by is None:
        by_vars = grouping_variables(working, max_groups)
    else:
        names = [by] if isinstance(by, str) else list(by)
        by_vars = [_grouping(working, name)[0] for name in names]
    all_items = item_variables(working)
    if items is not None:
        wanted = set(items)
        all_items = [v for v in all_items if v.name in wanted]
    codes = reason_codes(working, all_items)
    values, _ = working.analysed()
    columns = [
        "variable",
        "by",
        "n_used",
        "cramers_v",
        "chi2",
        "df",
        "p_value",
        "p_adjusted",
        "min_expected",
        "cochran_ok",
        "spread_pp",
        "pct_missing_by_group",
        "n_by_group",
    ]
    rows = []
    for gvar in by_vars:
        gcodes = pd.Categorical(
            values[gvar.name].astype(object), categories=list(gvar.levels)
        ).codes
        known = gcodes >= 0
        n_levels = len(gvar.levels)
        for j, item in enumerate(all_items):
            if item.name == gvar.name:
                continue
            col = codes[:, j]
            use = known & (col != _NA_CODE)
            n_group = np.bincount(gcodes[use], minlength=n_levels)
            n_miss = np.bincount(gcodes[use & (col != ANSWERED)], minlength=n_levels)
            present = n_group > 0
            if n_miss.sum() == 0 or present.sum() < 2:
                continue
            labels = [lv for lv, p in zip(gvar.levels, present) if p]
            t_group, t_miss, t_labels, _ = _test_table(
                n_group[present], n_miss[present], labels, min_group
            )
            test = _chi_square(t_group, t_miss)
            if test is None:
                continue
            pct = {lab: 100.0 * m / g for lab, g, m in zip(t_labels, t_group, t_miss)}
            rows.append(
                {
                    "variable": item.name,
                    "by": gvar.name,
                    "n_used": int(t_group.sum()),
                    **{k: test[k] for k in ("cramers_v", "chi2", "df", "p_value")},
                    "p_adjusted": np.nan,
                    "min_expected": test["min_expected"],
                    "cochran_ok": test["cochran_ok"],
                    "spread_pp": max(pct.values()) - min(pct.values()),
                    "pct_missing_by_group": pct,
                    "n_by_group": {lab: int(g) for lab, g in zip(t_labels, t_group)},
                }
            )
    out = pd.DataFrame(rows, columns=columns)
    if len(out):
        out["p_adjusted"] = stats.false_discovery_control(out["p_value"].to_numpy())
        out = out.sort_values(
            ["cochran_ok", "cramers_v", "p_value"], ascending=[False, False, True]
        ).reset_index(drop=True)
    return out


# --------------------------------------------------------------------------- patterns
def missing_patterns(frame: pd.DataFrame | WorkingData) -> pd.DataFrame:
    """Rows grouped into missing-data patterns, most common first.

    ``frame`` is a DataFrame whose empty cells (NaN/None) are missing, or working data (its
    question items, excluded respondents left out). One boolean column per variable (True =
    missing in this pattern), then ``n_rows``, ``pct_rows`` and ``n_missing_items``.
    """
    if isinstance(frame, WorkingData):
        items = item_variables(frame)
        codes = reason_codes(frame, items)
        mask = pd.DataFrame(codes != ANSWERED, columns=[v.name for v in items])
    else:
        mask = frame.isna()
    cols = list(mask.columns)
    if not len(mask):
        return pd.DataFrame(columns=[*cols, "n_rows", "pct_rows", "n_missing_items"])
    counts = mask.value_counts(sort=False).rename("n_rows").reset_index()
    counts["pct_rows"] = 100.0 * counts["n_rows"] / len(mask)
    counts["n_missing_items"] = counts[cols].sum(axis=1).astype(int)
    counts = counts.sort_values(["n_rows", "n_missing_items"], ascending=[False, True])
    return counts.reset_index(drop=True)


@dataclass(frozen=True)
class Overview:
    """Whole-wave totals: the two bases of "% missing" side by side."""

    n_respondents: int
    n_excluded: int
    n_items: int
    n_cells: int
    n_cells_missing: int
    n_rows_incomplete: int
    by_reason: dict[str, int]

    @property
    def pct_cells_missing(self) -> float:
        return 100.0 * self.n_cells_missing / self.n_cells if self.n_cells else 0.0

    @property
    def pct_rows_incomplete(self) -> float:
        return 100.0 * self.n_rows_incomplete / self.n_respondents if self.n_respondents else 0.0


def overview(frame: pd.DataFrame | WorkingData) -> Overview:
    """Cells missing and respondents with at least one gap (working data or a plain frame)."""
    if isinstance(frame, WorkingData):
        items = item_variables(frame)
        codes = reason_codes(frame, items)
        excluded = len(frame.excluded)
        reasons = {r: int(np.count_nonzero(codes == 1 + i)) for i, r in enumerate(REASONS)}
        mask = codes != ANSWERED
    else:
        mask = frame.isna().to_numpy()
        excluded = 0
        reasons = {}
    return Overview(
        n_respondents=int(mask.shape[0]),
        n_excluded=excluded,
        n_items=int(mask.shape[1]),
        n_cells=int(mask.size),
        n_cells_missing=int(mask.sum()),
        n_rows_incomplete=int(mask.any(axis=1).sum()),
        by_reason=reasons,
    )


# --------------------------------------------------------------------------- report text
def _p(p: float | None) -> str:
    if p is None:
        return "n/a"
    return "< 0.001" if p < 0.001 else f"{p:.3f}"


def _p_eq(p: float | None) -> str:
    text = _p(p)
    return "p " + text if text.startswith("<") else "p = " + text


def _pct(x: float) -> str:
    return f"{x:.1f} %"


def _listing(parts: list[str], limit: int = 8) -> str:
    if len(parts) > limit:
        return ", ".join(parts[:limit]) + f" and {len(parts) - limit} more"
    if len(parts) <= 1:
        return "".join(parts)
    return ", ".join(parts[:-1]) + " and " + parts[-1]


def summary_paragraphs(working: WorkingData, threshold: float = DEFAULT_THRESHOLD) -> list[str]:
    """Plain-language paragraphs about the wave's missing data, for the window and report."""
    items = item_summary(working, threshold)
    ov = overview(working)
    paras: list[str] = []
    if ov.n_respondents == 0:
        return [
            "No respondents are left to analyse in this wave"
            + (f" ({ov.n_excluded} excluded in cleaning)." if ov.n_excluded else ".")
        ]
    excl = (
        f" ({ov.n_excluded} respondent(s) excluded in cleaning are left out)"
        if ov.n_excluded
        else ""
    )
    reason_bits = [
        f"{n} {REASON_TEXT[r]}" for r, n in sorted(ov.by_reason.items(), key=lambda x: -x[1]) if n
    ]
    paras.append(
        f"{ov.n_respondents} respondents and {ov.n_items} question items{excl}. "
        f"{ov.n_cells_missing} of {ov.n_cells} answers are missing ({_pct(ov.pct_cells_missing)})"
        + (f": {_listing(reason_bits)}" if reason_bits else "")
        + f". {ov.n_rows_incomplete} respondents ({_pct(ov.pct_rows_incomplete)}) left at least "
        "one item without an answer. The two percentages count different things (answers "
        "versus people); state which one a sentence uses."
    )
    over = items[items["above_threshold"]].sort_values("pct_missing_asked", ascending=False)
    if len(over):
        names = [f"{r.variable} ({_pct(r.pct_missing_asked)})" for r in over.itertuples()]
        paras.append(
            f"{len(over)} item(s) have more than {threshold:g} % missing among the "
            f"respondents they applied to: {_listing(names)}. " + THRESHOLD_SOURCE
        )
    else:
        paras.append(
            f"No item has more than {threshold:g} % missing among the respondents it "
            "applied to. " + THRESHOLD_SOURCE
        )
    na_items = items[items["not_applicable"] > 0]
    if len(na_items):
        paras.append(
            "Some answers are missing by design because the question did not apply "
            f"({_listing(list(na_items['variable']))}); they are not counted as gaps above."
        )
    resp = respondent_summary(working)
    if len(resp.near_empty):
        paras.append(
            f"{len(resp.near_empty)} response(s) answered fewer than "
            f"{resp.near_empty_share:.0%} of the items they were asked (near-empty); consider "
            "whether they should count as responses at all, and record the decision."
        )
    drop = dropoff(working)
    if drop.n_stopped_early:
        tab = drop.table.iloc[:-1]
        top = tab.sort_values("n_stopped_here", ascending=False).iloc[0]
        paras.append(
            f"{drop.n_reached_end} respondents answered the last item. For the other "
            f"{drop.n_stopped_early + drop.n_answered_nothing}, the last item they answered "
            f"was most often {top['variable']} ({int(top['n_stopped_here'])} respondents)."
            + (
                f" {drop.n_answered_nothing} answered no item at all."
                if drop.n_answered_nothing
                else ""
            )
            + " Some simply skipped the last item; a run of stops in one place suggests "
            "respondents gave up there."
        )
    trend = position_trend(working)
    if trend.rising:
        t = trend.table
        paras.append(
            "Items later in the questionnaire were left unanswered more often: "
            f"typically {_pct(t['pct_unanswered'].iloc[0])} of respondents per item in the "
            f"{t['part'].iloc[0]} against {_pct(t['pct_unanswered'].iloc[-1])} in the "
            f"{t['part'].iloc[-1]} (medians; Spearman rho = {trend.rho:.2f}, "
            f"{_p_eq(trend.p_value)}). This often signals fatigue with a long questionnaire."
        )
    odd = unusual_skips(working)
    odd = odd[odd["unusual"]]
    if len(odd):
        names = [
            f"{r.variable} ({_pct(r.pct_unanswered)} against {_pct(r.neighbour_pct)} nearby)"
            for r in odd.itertuples()
        ]
        paras.append(
            "Left unanswered far more often than the questions around them: "
            f"{_listing(names)}. The wording, the answer options or the topic may be the "
            "reason; worth a look before the next wave."
        )
    scan = pattern_scan(working)
    strong = scan[(scan["p_adjusted"] < 0.05) & scan["cochran_ok"]] if len(scan) else scan
    if len(strong):
        bits = []
        for r in strong.head(3).itertuples():
            # name the extremes among groups big enough for a stable percentage
            sizes = r.n_by_group
            big = {g: v for g, v in r.pct_missing_by_group.items() if sizes[g] >= 30}
            groups = sorted((big or r.pct_missing_by_group).items(), key=lambda x: -x[1])
            spread = f"{groups[0][0]} {_pct(groups[0][1])}, {groups[-1][0]} {_pct(groups[-1][1])}"
            bits.append(f"{r.variable} by {r.by} ({spread}; {_p_eq(r.p_value)})")
        paras.append(
            "Missing answers differ clearly between groups for "
            f"{_listing(bits)}. " + SCREENING_NOTE + " Tables that use only those who "
            "answered may under-represent the groups with more gaps."
        )
    elif len(scan):
        paras.append(
            "No item's share missing differed clearly between the groups of any category "
            "question (after allowing for the number of comparisons)."
        )
    return paras
