"""The invented demo: two waves of a participant survey with known, planted problems.

Every name, number and answer here is invented. The generator is seeded, so the same seed
gives the same data, the same workbook bytes and the same manifest. The manifest lists every
planted problem (wave, 1-based data row, respondent, variables, value and the checks that
should find it) and the missing-data patterns, so tests of the cleaning and missing-data
code can measure what they find against what was planted.
"""

from __future__ import annotations

import io
import json
import zipfile
from dataclasses import dataclass
from datetime import datetime, timedelta
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from openpyxl import Workbook
from openpyxl.styles import Alignment, Font
from openpyxl.writer.excel import ExcelWriter

from core.errors import PlaincountError
from core.progress import Progress
from core.project import Project

SEED = 2026
WAVES = ("2026", "2027")
INSTRUMENT = "Participant survey"
FILE_NAMES = {
    "2026": "participant_survey_2026.xlsx",
    "2027": "participant_survey_2027.xlsx",
}
MANIFEST_NAME = "manifest.json"
PROJECT_NAME = "harbor_point_demo.plaincount"
SHEET_NAME = "Responses"
ROWS = {"2026": 380, "2027": 410}
RETURNING_SHARE = 0.60  # share of 2027 respondents who also answered in 2026
MULTISELECT_DELIMITER = "; "
# Fixed timestamp for the workbook's document properties and zip entries: byte-identical files.
_FIXED_STAMP = datetime(2026, 1, 1, 0, 0, 0)

AGREE = (
    "Strongly disagree",
    "Disagree",
    "Neither agree nor disagree",
    "Agree",
    "Strongly agree",
)
FREQUENCY = ("Never", "Rarely", "Sometimes", "Often", "Always")
SATISFACTION = (
    "Very dissatisfied",
    "Dissatisfied",
    "Neither satisfied nor dissatisfied",
    "Satisfied",
    "Very satisfied",
)
INCOME = (
    "Under $20,000",
    "$20,000 to $39,999",
    "$40,000 to $59,999",
    "$60,000 to $79,999",
    "$80,000 or more",
)
DECLINED = "Prefer not to say"
COHORTS = ("Fall", "Spring", "Summer")
TRACKS = ("Electrical", "HVAC", "Welding", "Solar install")
GENDERS = ("Woman", "Man", "Nonbinary", "Self-describe", "Prefer not to say")
YES_NO = ("Yes", "No")
BARRIERS = ("Transportation", "Childcare", "Work schedule", "Cost of tools", "Internet access")
NO_BARRIER = "None"
RANK_OPTIONS = {
    "rank_transit": "Transit pass",
    "rank_tools": "Tool allowance",
    "rank_paidwork": "Paid work experience",
    "rank_childcare": "Childcare support",
    "rank_tutoring": "Tutoring",
}
AGREE_ITEMS = tuple(f"agree_{i}" for i in range(1, 9))
NEGATIVE_ITEMS = ("agree_3", "agree_6")
POSITIVE_ITEMS = tuple(i for i in AGREE_ITEMS if i not in NEGATIVE_ITEMS)
USE_ITEMS = ("use_tutoring", "use_coaching", "use_tool_library")

_AGREE_STEM = "Thinking about the bridge course, how much do you agree? - "
_USE_STEM = "How often did you use each support? - "
_RANK_STEM = "Rank the supports by how much they helped you, 1 = most - "

# Column order and full question text: the instrument, as the second header row shows it.
QUESTIONS: dict[str, str] = {
    "resp_id": "Respondent ID",
    "started_at": "Start time",
    "finished_at": "End time",
    "cohort": "Which cohort did you start with?",
    "track": "Which trade track are you in?",
    "age": "What is your age in years?",
    "gender": "What is your gender?",
    "credits_term": "How many college credits are you taking this term?",
    "hours_work_week": "About how many hours a week do you work for pay?",
    "years_experience": "How many years of work experience do you have in the trades?",
    "household_income_band": "What was your household's total income last year?",
    "agree_1": _AGREE_STEM + "The course content was relevant to the trade I want to enter.",
    "agree_2": _AGREE_STEM + "The instructors explained new skills clearly.",
    "agree_3": _AGREE_STEM + "The workload felt unmanageable.",
    "agree_4": _AGREE_STEM + "The hands-on shop time prepared me for an apprenticeship.",
    "agree_5": _AGREE_STEM + "I felt welcome in my cohort.",
    "agree_6": _AGREE_STEM + "I often felt lost in class.",
    "agree_7": _AGREE_STEM + "I know what steps to take to enter a registered apprenticeship.",
    "agree_8": _AGREE_STEM + "I would recommend the course to a friend.",
    "use_tutoring": _USE_STEM + "Tutoring",
    "use_coaching": _USE_STEM + "Career coaching",
    "use_tool_library": _USE_STEM + "Tool library",
    **{name: _RANK_STEM + option for name, option in RANK_OPTIONS.items()},
    "barriers": "Which of these made it harder to take part? (choose all that apply)",
    "completed": "Have you completed the bridge course?",
    "credential_earned": "Did you earn the industry credential for your track?",
    "employed_in_field": "Are you now employed in your trade?",
    "overall_satisfaction": "Overall, how satisfied are you with the Trades Bridge program?",
    "best_part": "What was the best part of the program?",
    "change_one_thing": "If you could change one thing about the program, what would it be?",
}
COLUMNS = tuple(QUESTIONS)

# What changed in wave 2027: one column renamed (same question) and one level label reworded.
RENAMED_2027 = {"hours_work_week": "work_hours_week"}
REWORDED_2027 = {"Sometimes": "Now and then"}

# Questionnaire units in order (the ranking question is one unit of five columns). Skips rise
# over the last third: from the ranking question to the end.
_UNITS = (
    "cohort",
    "track",
    "age",
    "gender",
    "credits_term",
    "hours_work_week",
    "years_experience",
    "household_income_band",
    *AGREE_ITEMS,
    *USE_ITEMS,
    "ranking",
    "barriers",
    "completed",
    "credential_earned",
    "employed_in_field",
    "overall_satisfaction",
    "best_part",
    "change_one_thing",
)
FATIGUE_FROM = "ranking"
_BASE_SKIP = 0.012  # chance of leaving any one early item blank
_FATIGUE_SKIP = (0.02, 0.06)  # per-item skip chance at the start and end of the last third
_BREAKOFF = 0.08  # share of respondents who stop answering somewhere in the last third
_COMMENT_SKIP = 0.10  # open comments are left blank more often than closed items
_INCOME_SKIP = {"Man": 0.34}  # the content pattern: men skip the income question far more
_INCOME_SKIP_OTHER = 0.04
_INCOME_DECLINE = 0.02
_PARTIAL_RANKING = 0.06  # share who rank only their top three supports

# Demo codebook settings applied after import (partial entries, as ``codebook --apply`` takes).
CODEBOOK_SETTINGS: list[dict[str, Any]] = [
    {"name": "resp_id", "kind": "identifier"},
    {"name": "age", "range": [16, 80]},
    {"name": "credits_term", "range": [0, 24]},
    {"name": "hours_work_week", "range": [0, 80]},
    {"name": "years_experience", "range": [0, 50]},
    *({"name": item, "keying": "positive"} for item in POSITIVE_ITEMS),
    *({"name": item, "keying": "negative"} for item in NEGATIVE_ITEMS),
]

# ----------------------------------------------------------------------------- comments
# Invented open-ended answers, by the tone of the respondent's overall rating.
_BEST = {
    "positive": (
        "The hands-on shop time. I learned more in the lab than anywhere else.",
        "Wiring a real panel with Ms. Okafor checking every connection.",
        "My cohort. We helped each other through the math.",
        "The welding booth hours, I finally get consistent beads.",
        "Learning to read blueprints.",
        "The site visit to the joint apprenticeship training center.",
        "Coaching sessions that helped me plan my apprenticeship application.",
        "The tool library. I could not have afforded the meters myself.",
        "Getting my safety card in the first month.",
        "Instructors who treated us like adults.",
        "Practice interviews with local contractors.",
        "Small classes, lots of one-on-one help from Mr. Lindqvist.",
        "Seeing the solar array we installed go live on the roof.",
        "The refrigerant handling unit in HVAC.",
        "The math refresher at the start made everything after it easier.",
        "Tutoring on Tuesday nights.",
        "Finally feeling like I belong in a trade.",
        "Building a full circuit from scratch.",
    ),
    "neutral": (
        "The shop time was okay.",
        "Some of the labs.",
        "Meeting people who work in the trades.",
        "The credential, mostly.",
        "Hard to say, parts of it were useful.",
        "The tool library.",
        "Getting the safety card.",
        "A few of the guest speakers.",
        "The practice tests.",
    ),
    "negative": (
        "Not much, to be honest.",
        "The stipend.",
        "Honestly just the certificate at the end.",
        "A couple of the lab days.",
        "The other students, not the class.",
        "Leaving early on Fridays.",
        "Nothing stands out.",
    ),
}
_CHANGE = {
    "positive": (
        "More shop hours and less lecture.",
        "Start the apprenticeship applications earlier in the term.",
        "Keep the tool library open on weekends.",
        "Nothing major, maybe more parking.",
        "Add an evening section for people who work days.",
        "More practice with the code book.",
        "Post the schedule for the whole term on day one.",
        "A bigger lab, we sometimes waited for a station.",
        "More site visits.",
        "Longer program, I wanted more time in the booth.",
        "Pair us with a mentor from the trade.",
    ),
    "neutral": (
        "More practice tests.",
        "Clearer grading.",
        "Better chairs in the classroom.",
        "Invite more contractors to talk to us.",
        "Not sure.",
        "Shorter lectures.",
        "Send reminders before class changes.",
    ),
    "negative": (
        "The pace. Too much crammed into sixteen weeks.",
        "Instructors cancelled class too often.",
        "Tell us about schedule changes before the day of class.",
        "The math section moved way too fast.",
        "Help with transportation, I missed class because of the bus.",
        "Childcare on site. I almost dropped out.",
        "Stop moving us to a different room every week.",
        "More support for people who work full time.",
        "The shop equipment kept breaking down.",
    ),
}
_SECOND = {
    "positive": ("", "", "", " Thank you!", " It built my confidence.", " Would do it again."),
    "neutral": ("", "", "", " Overall fine."),
    "negative": ("", "", "", " Really frustrating.", " I expected more."),
}
_GLOWING_BEST = (
    "Everything! This program changed my life. The instructors were amazing and I loved "
    "every class.",
    "Absolutely the best experience I have had in school. I felt supported every single day.",
    "Loved it all: the teachers, my cohort, the shop. Best decision I ever made.",
    "Honestly all of it! Amazing instructors, a wonderful cohort, and I loved every minute.",
)
_GLOWING_CHANGE = (
    "Nothing at all, keep it exactly like it is!",
    "Honestly nothing. Make it longer so more people can enjoy it!",
    "I can't think of a thing. It was perfect, thank you so much!",
    "Nothing. Every part of it was excellent, thank you!",
)


@dataclass(frozen=True)
class DemoData:
    """The generated waves (answer frames in file column order) and their manifest."""

    waves: dict[str, pd.DataFrame]
    questions: dict[str, dict[str, str]]
    manifest: dict[str, Any]


# ----------------------------------------------------------------------------- people
def _people(rng: np.random.Generator, n: int, first_number: int) -> pd.DataFrame:
    """Stable traits of invented participants (kept when someone returns the next year)."""
    gender = rng.choice(GENDERS, size=n, p=[0.37, 0.54, 0.04, 0.01, 0.04])
    age = np.clip(np.rint(rng.normal(33, 10, n)), 18, 62).astype(int)
    # Prior trade experience: mostly a few years, never more than the years since 18.
    weights = np.array([16, 17, 15, 13, 11, 9, 7, 5, 4, 3], dtype=float)
    years = rng.choice(np.arange(10), size=n, p=weights / weights.sum())
    years = np.minimum(years, age - 18)
    income = np.clip(np.rint(rng.normal(1.3, 1.0, n) + (age - 33) / 25), 0, 4).astype(int)
    ids = [f"HP-{first_number + i:05d}" for i in range(n)]
    return pd.DataFrame(
        {
            "resp_id": ids,
            "gender": gender,
            "age": age,
            "years_experience": years,
            "track": rng.choice(TRACKS, size=n, p=[0.34, 0.24, 0.24, 0.18]),
            "income": income,
            "z": rng.normal(0, 1, n),  # how well the course went for them
            "u": rng.normal(0, 1, n),  # how much they used the supports
        }
    )


def _scale(values: np.ndarray, labels: tuple[str, ...]) -> list[str]:
    idx = np.clip(np.rint(values), 1, len(labels)).astype(int) - 1
    return [labels[i] for i in idx]


def _tone(level: str | None) -> str:
    if level in SATISFACTION[3:]:
        return "positive"
    if level in SATISFACTION[:2]:
        return "negative"
    return "neutral"


def _comment(rng: np.random.Generator, bank: dict[str, tuple[str, ...]], tone: str) -> str:
    first = bank[tone][rng.integers(len(bank[tone]))]
    second = _SECOND[tone][rng.integers(len(_SECOND[tone]))]
    return first + second


# ----------------------------------------------------------------------------- answers
def _answers(rng: np.random.Generator, people: pd.DataFrame, year: int) -> pd.DataFrame:
    """Complete answers (no gaps yet) for one wave, plausibly correlated."""
    n = len(people)
    z = people["z"].to_numpy()
    u = people["u"].to_numpy()
    out: dict[str, Any] = {"resp_id": people["resp_id"].tolist()}

    cohort = rng.choice(COHORTS, size=n, p=[0.38, 0.36, 0.26])
    # The survey runs in the last two weeks of each cohort's course.
    end_month = {"Spring": 5, "Summer": 8, "Fall": 12}
    starts = []
    for c in cohort:
        day0 = datetime(year, end_month[c], 1)
        offset = timedelta(
            days=int(rng.integers(0, 14)),
            hours=int(rng.integers(8, 21)),
            minutes=int(rng.integers(0, 60)),
            seconds=int(rng.integers(0, 60)),
        )
        starts.append(day0 + offset)
    median_s = 13.5 * 60
    duration = np.clip(rng.lognormal(np.log(median_s), 0.35, n), 0.6 * median_s, 3 * median_s)
    out["started_at"] = starts
    out["finished_at"] = [s + timedelta(seconds=int(d)) for s, d in zip(starts, duration)]
    out["cohort"] = cohort.tolist()
    out["track"] = people["track"].tolist()
    out["age"] = people["age"].astype(int).tolist()
    out["gender"] = people["gender"].tolist()
    credits = rng.choice(
        np.arange(6, 19),
        size=n,
        p=np.array([8, 2, 3, 9, 4, 3, 20, 4, 6, 10, 5, 2, 6]) / 82,
    )
    out["credits_term"] = credits.astype(int).tolist()
    works = rng.random(n) > 0.22
    hours = np.where(works, np.clip(np.rint(rng.normal(27 - credits / 2, 10, n)), 4, 60), 0)
    out["hours_work_week"] = hours.astype(int).tolist()
    out["years_experience"] = people["years_experience"].astype(int).tolist()
    out["household_income_band"] = [INCOME[i] for i in people["income"]]

    # Agreement battery: one common factor (how the course went) plus item noise; the two
    # negatively worded items run the other way.
    means = {
        "agree_1": 4.0,
        "agree_2": 3.9,
        "agree_3": 2.5,
        "agree_4": 3.9,
        "agree_5": 4.1,
        "agree_6": 2.4,
        "agree_7": 3.6,
        "agree_8": 4.0,
    }
    for item in AGREE_ITEMS:
        loading = 0.75
        x = loading * z + np.sqrt(1 - loading**2) * rng.normal(0, 1, n)
        sign = -1 if item in NEGATIVE_ITEMS else 1
        out[item] = _scale(means[item] + sign * 0.95 * x, AGREE)
    for item, mean in zip(USE_ITEMS, (2.6, 3.0, 3.3)):
        out[item] = _scale(mean + 1.0 * (0.7 * u + 0.7 * rng.normal(0, 1, n)), FREQUENCY)

    barrier_p = np.array([0.36, 0.20, 0.40, 0.28, 0.10])
    chosen = rng.random((n, len(BARRIERS))) < barrier_p
    barriers = []
    for row in chosen:
        picked = [b for b, c in zip(BARRIERS, row) if c]
        barriers.append(MULTISELECT_DELIMITER.join(picked) if picked else NO_BARRIER)
    out["barriers"] = barriers

    # Ranking: supports someone needed (a childcare or transport barrier) help more.
    base = np.array([0.6, 0.5, 0.8, -0.2, 0.1])
    util = base + rng.normal(0, 0.9, (n, 5))
    util[:, 0] += 1.2 * chosen[:, 0]
    util[:, 3] += 1.8 * chosen[:, 1]
    util[:, 4] += 0.6 * (u > 0.5)
    ranks = np.argsort(np.argsort(-util, axis=1), axis=1) + 1
    for j, name in enumerate(RANK_OPTIONS):
        out[name] = ranks[:, j].astype(int).tolist()

    completed = rng.random(n) < np.clip(0.78 + 0.06 * z, 0.5, 0.95)
    credential = completed & (rng.random(n) < 0.82)
    employed = rng.random(n) < np.clip(0.55 + 0.1 * z, 0.2, 0.9)
    out["completed"] = ["Yes" if c else "No" for c in completed]
    out["credential_earned"] = ["Yes" if c else "No" for c in credential]
    out["employed_in_field"] = [
        ("Yes" if e else "No") if c else "N/A" for c, e in zip(completed, employed)
    ]
    sat = _scale(3.9 + 0.95 * (0.8 * z + 0.6 * rng.normal(0, 1, n)), SATISFACTION)
    out["overall_satisfaction"] = sat
    out["best_part"] = [_comment(rng, _BEST, _tone(s)) for s in sat]
    out["change_one_thing"] = [_comment(rng, _CHANGE, _tone(s)) for s in sat]
    frame = pd.DataFrame(out)[list(COLUMNS)].astype(object)
    return frame


def _tidy_battery(frame: pd.DataFrame) -> None:
    """Remove chance straight-lining and chance contradictions so only planted ones remain.

    Runs before any gaps are made, so every agreement item is answered here.
    """
    codes = np.array([[AGREE.index(v) + 1 for v in frame[item]] for item in AGREE_ITEMS]).T
    straight = (codes == codes[:, :1]).all(axis=1)
    # Nudge one positively worded item by one step, away from the end of the scale.
    col = AGREE_ITEMS.index("agree_2")
    pos_cols = [AGREE_ITEMS.index(i) for i in POSITIVE_ITEMS]
    neg_cols = [AGREE_ITEMS.index(i) for i in NEGATIVE_ITEMS]
    p = codes[:, pos_cols].mean(axis=1)
    n = codes[:, neg_cols].mean(axis=1)
    nudged = codes[:, col].copy()
    nudged[straight] = np.where(codes[straight, col] > 1, codes[straight, col] - 1, 2)
    frame["agree_2"] = [AGREE[c - 1] for c in nudged]
    # Agreeing (or disagreeing) with both kinds of item: turn the negative items around.
    both = ((p >= 3.5) & (n >= 3.5)) | ((p <= 2.5) & (n <= 2.5))
    fixed = np.clip(6 - np.round(p), 1, 5).astype(int)
    for c, item in zip(neg_cols, NEGATIVE_ITEMS):
        frame[item] = [
            AGREE[f - 1] if b else AGREE[v - 1] for f, b, v in zip(fixed, both, codes[:, c])
        ]


def _apply_gaps(rng: np.random.Generator, frame: pd.DataFrame) -> np.ndarray:
    """Blank cells: a few skips early, rising skips and break-offs late, income by gender.

    Returns a boolean array of respondents who stopped answering before the end.
    """
    n = len(frame)
    fatigue_at = _UNITS.index(FATIGUE_FROM)
    late = len(_UNITS) - fatigue_at
    stop = np.full(n, len(_UNITS))
    broke_off = rng.random(n) < _BREAKOFF
    stop[broke_off] = fatigue_at + rng.integers(0, late, broke_off.sum())
    age_declined = rng.random(n) < 0.025
    for pos, unit in enumerate(_UNITS):
        if pos < fatigue_at:
            p = np.full(n, _BASE_SKIP)
        else:
            share = (pos - fatigue_at) / max(late - 1, 1)
            p = np.full(n, _FATIGUE_SKIP[0] + share * (_FATIGUE_SKIP[1] - _FATIGUE_SKIP[0]))
        if unit in ("best_part", "change_one_thing"):
            p = p + _COMMENT_SKIP
        if unit == "household_income_band":
            p = np.array([_INCOME_SKIP.get(g, _INCOME_SKIP_OTHER) for g in frame["gender"]])
        blank = (rng.random(n) < p) | (stop <= pos)
        cols = list(RANK_OPTIONS) if unit == "ranking" else [unit]
        for col in cols:
            frame.loc[blank, col] = None
        if unit == "age":
            frame.loc[age_declined & ~blank, "age"] = -99
        if unit == "household_income_band":
            declined = ~blank & (rng.random(n) < _INCOME_DECLINE)
            frame.loc[declined, unit] = DECLINED
    # Some rank only their top three: ranks 4 and 5 are left blank.
    partial = (rng.random(n) < _PARTIAL_RANKING) & frame["rank_transit"].notna().to_numpy()
    for name in RANK_OPTIONS:
        col = frame[name]
        frame.loc[partial & col.isin([4, 5]).to_numpy(), name] = None
    return stop < len(_UNITS)


# ----------------------------------------------------------------------------- planting
class _Planter:
    """Chooses distinct clean rows for planted problems and records each in the manifest."""

    def __init__(self, rng: np.random.Generator, frame: pd.DataFrame, wave: str) -> None:
        self.rng = rng
        self.frame = frame
        self.wave = wave
        self.used: set[int] = set()
        self.problems: list[dict[str, Any]] = []
        self.hours = "work_hours_week" if "work_hours_week" in frame else "hours_work_week"

    def pick(self, eligible: pd.Series | None = None) -> int:
        ok = ~self.frame["_breakoff"].to_numpy()
        if eligible is not None:
            ok &= eligible.to_numpy()
        ok &= ~self.frame.index.isin(sorted(self.used))
        candidates = np.flatnonzero(ok)
        if not len(candidates):
            raise PlaincountError("The demo generator ran out of rows to plant problems in.")
        row = int(candidates[self.rng.integers(len(candidates))])
        self.used.add(row)
        return row

    def record(
        self,
        row: int,
        problem: str,
        variables: list[str],
        value: Any,
        checks: list[str],
        **extra: Any,
    ) -> None:
        self.problems.append(
            {
                "id": f"{self.wave}-{len(self.problems) + 1:02d}",
                "wave": self.wave,
                "problem": problem,
                "row": row + 1,
                "resp_id": self.frame.at[row, "resp_id"],
                "variables": variables,
                "value": value,
                "expected_checks": checks,
                **extra,
            }
        )

    def set(self, row: int, values: dict[str, Any]) -> None:
        for col, val in values.items():
            self.frame.at[row, col] = val

    def numeric(
        self,
        column: str,
        value: int,
        problem: str,
        checks: list[str],
        note: str,
        eligible: pd.Series | None = None,
        **extra: Any,
    ) -> int:
        answered = self.frame[column].notna() & (self.frame[column] != -99)
        ok = answered if eligible is None else answered & eligible
        meant = extra.get("suggested")
        if meant is not None:
            # Prefer a respondent whose true answer was the value the typo stands for.
            typed = ok & self.frame[column].eq(meant)
            ok = typed if (typed & ~self.frame["_breakoff"]).any() else ok
        row = self.pick(ok)
        self.set(row, {column: value})
        self.record(row, problem, [column], value, checks, note=note, **extra)
        return row

    def reversed_scale(self, glow: int) -> None:
        eligible = self.frame["best_part"].notna() & self.frame["change_one_thing"].notna()
        row = self.pick(eligible)
        values: dict[str, Any] = {it: "Strongly disagree" for it in POSITIVE_ITEMS}
        values.update({it: "Strongly agree" for it in NEGATIVE_ITEMS})
        comments = {
            "overall_satisfaction": "Very satisfied",
            "best_part": _GLOWING_BEST[glow % len(_GLOWING_BEST)],
            "change_one_thing": _GLOWING_CHANGE[glow % len(_GLOWING_CHANGE)],
        }
        self.set(row, {**values, **comments})
        self.record(
            row,
            "reversed_scale",
            list(AGREE_ITEMS),
            values,
            ["reversed_scale"],
            context=comments,
            note=(
                "Every positively worded item is 'Strongly disagree' and both negatively "
                "worded items 'Strongly agree', while the comments and the overall rating "
                "are glowing: the respondent most likely read the scale backwards."
            ),
        )

    def straight_line(self, level: str) -> None:
        row = self.pick()
        values = dict.fromkeys(AGREE_ITEMS, level)
        self.set(row, values)
        # Agreeing (or disagreeing) with both kinds of item may also look reversed.
        also = [] if level == AGREE[2] else ["reversed_scale"]
        self.record(
            row,
            "straightlining",
            list(AGREE_ITEMS),
            values,
            ["straightlining"],
            also_possible=also,
            note=f"All eight agreement items answered '{level}'.",
        )

    def speeder(self, median_s: float, fraction: float) -> None:
        row = self.pick()
        start = self.frame.at[row, "started_at"]
        finish = start + timedelta(seconds=int(median_s * fraction))
        self.set(row, {"finished_at": finish})
        self.record(
            row,
            "speeder",
            ["started_at", "finished_at"],
            {"started_at": start.isoformat(), "finished_at": finish.isoformat()},
            ["speeder"],
            duration_seconds=int(median_s * fraction),
            note=f"Finished in {fraction:.0%} of the typical (median) time.",
        )

    def contradiction(self) -> None:
        row = self.pick(self.frame["completed"] == "No")
        self.set(row, {"credential_earned": "Yes"})
        values = {"completed": "No", "credential_earned": "Yes"}
        self.record(
            row,
            "contradiction",
            ["completed", "credential_earned"],
            values,
            ["consistency"],
            rule="if completed is No then credential_earned must not be Yes",
            note="Says the credential was earned although the course is not completed.",
        )


def _insert_duplicates(
    rng: np.random.Generator, frame: pd.DataFrame, changed: bool
) -> tuple[pd.DataFrame, list[dict[str, Any]]]:
    """Append resubmissions: one identical copy, and (if ``changed``) one with one new answer."""
    ok = ~frame["_breakoff"].to_numpy() & frame["overall_satisfaction"].notna().to_numpy()
    candidates = np.flatnonzero(ok[: len(frame) // 2])
    sources = rng.choice(candidates, size=2 if changed else 1, replace=False)
    order = list(range(len(frame)))
    plans = []
    copies = []
    for k, src in enumerate(sorted(int(s) for s in sources)):
        copy = frame.loc[src].copy()
        detail: dict[str, Any] = {}
        if k == 1:
            old = copy["overall_satisfaction"]
            new = SATISFACTION[SATISFACTION.index(old) + 1 if old != SATISFACTION[4] else 3]
            copy["overall_satisfaction"] = new
            detail = {"variable": "overall_satisfaction", "first": old, "second": new}
        copies.append(copy)
        # The resubmission lands a little later in the export than the first one.
        at = int(rng.integers(src + 5, min(src + 60, len(frame))))
        plans.append((at, src, len(frame) + k, detail))
    # Insert from the back so earlier positions stay valid.
    for at, _src, new_index, _detail in sorted(plans, key=lambda p: -p[0]):
        order.insert(at, new_index)
    extra = pd.DataFrame(copies, columns=frame.columns).astype(object)
    extra.index = range(len(frame), len(frame) + len(copies))
    out = pd.concat([frame.astype(object), extra]).loc[order].reset_index(drop=True)
    out["_breakoff"] = out["_breakoff"].astype(bool)
    out["_dup"] = False
    records = []
    for _at, src, _new_index, detail in plans:
        rid = frame.at[src, "resp_id"]
        where = np.flatnonzero((out["resp_id"] == rid).to_numpy())
        out.loc[where, "_dup"] = True
        records.append({"resp_id": rid, "rows": [int(w) for w in where], "changed": detail})
    return out, records


def _record_duplicates(planter: _Planter, dups: list[dict[str, Any]]) -> None:
    for dup in dups:
        first, second = dup["rows"]
        planter.used.update(dup["rows"])
        if dup["changed"]:
            planter.record(
                second,
                "duplicate_changed",
                ["resp_id", dup["changed"]["variable"]],
                dup["resp_id"],
                ["duplicate_id"],
                first_row=first + 1,
                changed=dup["changed"],
                note="The same respondent submitted twice; one answer differs.",
            )
        else:
            planter.record(
                second,
                "duplicate_identical",
                ["resp_id"],
                dup["resp_id"],
                ["duplicate_id", "duplicate_row"],
                first_row=first + 1,
                note="The same submission appears twice, identical in every column.",
            )


def _median_seconds(frame: pd.DataFrame) -> float:
    spans = [(f - s).total_seconds() for s, f in zip(frame["started_at"], frame["finished_at"])]
    return float(np.median(spans))


def _wave_frame(
    rng: np.random.Generator, people: pd.DataFrame, year: int
) -> tuple[pd.DataFrame, np.ndarray]:
    frame = _answers(rng, people, year)
    _tidy_battery(frame)
    breakoff = _apply_gaps(rng, frame)
    frame["_breakoff"] = breakoff
    frame = frame.sort_values("started_at", kind="stable").reset_index(drop=True)
    return frame, breakoff


def _plant_2026(rng: np.random.Generator, frame: pd.DataFrame) -> tuple[pd.DataFrame, list]:
    frame, dups = _insert_duplicates(rng, frame, changed=True)
    p = _Planter(rng, frame, "2026")
    _record_duplicates(p, dups)
    clean = ~frame["_dup"]
    p.numeric(
        "credits_term",
        120,
        "wandering_zero",
        ["wandering_zero", "range", "outlier"],
        "Entered 120 where 12 was meant (a wandering zero).",
        clean,
        suggested=12,
    )
    p.numeric(
        "hours_work_week",
        400,
        "wandering_zero",
        ["wandering_zero", "range", "outlier"],
        "Entered 400 where 40 was meant (a wandering zero).",
        clean,
        suggested=40,
    )
    p.numeric(
        "age",
        7,
        "impossible_value",
        ["range"],
        "An age of 7 is impossible for an adult program.",
        clean,
    )
    p.numeric(
        "hours_work_week",
        190,
        "impossible_value",
        ["range", "outlier"],
        "190 hours is more than the 168 hours in a week.",
        clean,
        also_possible=["wandering_zero"],
    )
    older = clean & (pd.to_numeric(frame["age"], errors="coerce") >= 40)
    row = p.numeric(
        "years_experience",
        38,
        "real_outlier",
        ["outlier"],
        "Real: an older participant with a long career in the trades. Keep it.",
        older,
        keep=True,
    )
    p.set(row, {"age": 61})
    p.problems[-1]["context"] = {"age": 61}
    for k in range(3):
        p.reversed_scale(k)
    for level in ("Agree", "Neither agree nor disagree", "Strongly agree"):
        p.straight_line(level)
    median_s = _median_seconds(frame)
    for fraction in (0.14, 0.19, 0.23, 0.27):
        p.speeder(median_s, fraction)
    p.contradiction()
    return p.frame, p.problems


def _plant_2027(rng: np.random.Generator, frame: pd.DataFrame) -> tuple[pd.DataFrame, list]:
    frame, dups = _insert_duplicates(rng, frame, changed=False)
    p = _Planter(rng, frame, "2027")
    _record_duplicates(p, dups)
    clean = ~frame["_dup"]
    p.numeric(
        "credits_term",
        150,
        "wandering_zero",
        ["wandering_zero", "range", "outlier"],
        "Entered 150 where 15 was meant (a wandering zero).",
        clean,
        suggested=15,
    )
    p.numeric(
        p.hours,
        170,
        "impossible_value",
        ["range", "outlier"],
        "170 hours is more than the 168 hours in a week.",
        clean,
        also_possible=["wandering_zero"],
    )
    p.reversed_scale(3)
    for level in ("Neither agree nor disagree", "Agree"):
        p.straight_line(level)
    median_s = _median_seconds(frame)
    for fraction in (0.16, 0.22, 0.26):
        p.speeder(median_s, fraction)
    p.contradiction()
    return p.frame, p.problems


# ----------------------------------------------------------------------------- patterns
def _blank(series: pd.Series) -> pd.Series:
    return series.isna() | series.map(lambda v: isinstance(v, str) and not v.strip())


def _patterns(waves: dict[str, pd.DataFrame]) -> dict[str, Any]:
    """Measured missing-data patterns per wave (blank cells and declined codes)."""
    income: dict[str, Any] = {}
    fatigue: dict[str, Any] = {}
    low: dict[str, Any] = {}
    for label, frame in waves.items():
        inc = frame["household_income_band"]
        missing = _blank(inc) | inc.eq(DECLINED)
        by_gender = {}
        for g in ("Woman", "Man"):
            mask = frame["gender"].eq(g)
            by_gender[g] = round(100 * float(missing[mask].mean()), 1)
        others = ~frame["gender"].isin(["Woman", "Man"])
        by_gender["Other or not given"] = round(100 * float(missing[others].mean()), 1)
        income[label] = {
            "pct_missing": round(100 * float(missing.mean()), 1),
            "pct_skipped": round(100 * float(_blank(inc).mean()), 1),
            "pct_declined": round(100 * float(inc.eq(DECLINED).mean()), 1),
            "pct_missing_by_gender": by_gender,
        }
        items = [c for c in frame.columns if c not in ("resp_id", "started_at", "finished_at")]
        fatigue[label] = {
            "pct_skipped_by_item": {
                c: round(100 * float(_blank(frame[c]).mean()), 1) for c in items
            },
        }
        early = items[: items.index("rank_transit")]
        low[label] = {
            "items_under_5_pct": sum(1 for c in early if 100 * float(_blank(frame[c]).mean()) < 5),
            "early_items": len(early),
        }
    return {
        "income_missing_by_gender": {
            "variable": "household_income_band",
            "by": "gender",
            "description": (
                "Household income is missing (blank, or 'Prefer not to say') far more often "
                "for men than for women: a content pattern, not random gaps."
            ),
            "missing_codes": {DECLINED: "declined"},
            "waves": income,
        },
        "survey_fatigue": {
            "description": (
                "Skips rise over the last third of the questionnaire, from the ranking "
                "question to the end: more items are left blank and some respondents stop "
                "answering part-way (break-offs); open comments are skipped most."
            ),
            "starts_at": "rank_transit",
            "waves": fatigue,
        },
        "low_missing_early": {
            "description": "Before the ranking question, most items are under 5 % missing.",
            "waves": low,
        },
        "declined_codes": {
            "age": {"-99": "declined"},
            "household_income_band": {DECLINED: "declined"},
            "gender": {DECLINED: "declined"},
            "employed_in_field": {"N/A": "not_applicable"},
        },
    }


def expected_codebook() -> list[dict[str, Any]]:
    """What a careful evaluator would record for each 2026 column (for inference tests).

    ``levels`` are in their natural order for ordered kinds (Likert, ordinal); for
    categorical kinds the order carries no meaning. Groups are given as lists of members
    (``groups`` in the manifest), because a group's name is the codebook's own choice.
    """
    kinds: dict[str, tuple[str, tuple[str, ...], dict[str, str]]] = {
        "resp_id": ("identifier", (), {}),
        "started_at": ("date", (), {}),
        "finished_at": ("date", (), {}),
        "cohort": ("categorical", COHORTS, {}),
        "track": ("categorical", TRACKS, {}),
        "age": ("numeric", (), {"-99": "declined"}),
        "gender": ("categorical", GENDERS[:4], {DECLINED: "declined"}),
        "credits_term": ("numeric", (), {}),
        "hours_work_week": ("numeric", (), {}),
        "years_experience": ("numeric", (), {}),
        "household_income_band": ("ordinal", INCOME, {DECLINED: "declined"}),
        **{item: ("likert", AGREE, {}) for item in AGREE_ITEMS},
        **{item: ("likert", FREQUENCY, {}) for item in USE_ITEMS},
        **{name: ("ranking", (), {}) for name in RANK_OPTIONS},
        "barriers": ("multiselect", (*BARRIERS, NO_BARRIER), {}),
        "completed": ("categorical", YES_NO, {}),
        "credential_earned": ("categorical", YES_NO, {}),
        "employed_in_field": ("categorical", YES_NO, {"N/A": "not_applicable"}),
        "overall_satisfaction": ("likert", SATISFACTION, {}),
        "best_part": ("text", (), {}),
        "change_one_thing": ("text", (), {}),
    }
    keying = {
        **dict.fromkeys(POSITIVE_ITEMS, "positive"),
        **dict.fromkeys(NEGATIVE_ITEMS, "negative"),
    }
    out = []
    for name in COLUMNS:
        kind, levels, codes = kinds[name]
        entry: dict[str, Any] = {
            "name": name,
            "question": QUESTIONS[name],
            "kind": kind,
            "levels": list(levels),
            "missing_codes": dict(codes),
            "keying": keying.get(name),
        }
        if name in RANK_OPTIONS:
            entry["option"] = RANK_OPTIONS[name]
        if name == "barriers":
            entry["delimiter"] = MULTISELECT_DELIMITER.strip()
        out.append(entry)
    return out


EXPECTED_GROUPS = {
    "agreement battery": list(AGREE_ITEMS),
    "use of supports": list(USE_ITEMS),
    "ranking of supports": list(RANK_OPTIONS),
}


# ----------------------------------------------------------------------------- public API
def generate(seed: int = SEED) -> DemoData:
    """Generate both waves and the manifest in memory (nothing is written).

    The same seed always gives the same frames and manifest.
    """
    rng = np.random.default_rng(seed)
    n26 = ROWS["2026"] - 2  # two resubmissions bring the file to ROWS rows
    n27 = ROWS["2027"] - 1
    people26 = _people(rng, n26, 10001)
    frame26, _ = _wave_frame(rng, people26, 2026)
    frame26, problems26 = _plant_2026(rng, frame26)

    # Returning participants: drawn from 2026 respondents with no planted problem.
    planted = {p["resp_id"] for p in problems26}
    pool = people26[~people26["resp_id"].isin(sorted(planted))].reset_index(drop=True)
    n_back = round(RETURNING_SHARE * n27)
    back = pool.iloc[np.sort(rng.choice(len(pool), n_back, replace=False))].copy()
    back["age"] = back["age"] + 1
    back["years_experience"] = np.minimum(back["years_experience"] + rng.integers(0, 2, n_back), 9)
    back["z"] = 0.6 * back["z"] + 0.8 * rng.normal(0, 1, n_back)
    new = _people(rng, n27 - n_back, 20001)
    people27 = pd.concat([back, new], ignore_index=True)
    people27 = people27.iloc[rng.permutation(len(people27))].reset_index(drop=True)
    frame27, _ = _wave_frame(rng, people27, 2027)
    frame27 = frame27.rename(columns=RENAMED_2027)
    for item in USE_ITEMS:
        frame27[item] = frame27[item].replace(REWORDED_2027)
    frame27, problems27 = _plant_2027(rng, frame27)

    waves = {
        "2026": frame26[[c for c in frame26.columns if not c.startswith("_")]],
        "2027": frame27[[c for c in frame27.columns if not c.startswith("_")]],
    }
    questions = {
        "2026": dict(QUESTIONS),
        "2027": {RENAMED_2027.get(k, k): v for k, v in QUESTIONS.items()},
    }
    ids26 = set(waves["2026"]["resp_id"])
    ids27 = set(waves["2027"]["resp_id"])
    manifest = {
        "scenario": "Harbor Point Trades Bridge, Saltmarsh Community College (invented)",
        "note": "Every name, number and answer in these files is invented for the demo.",
        "seed": seed,
        "instrument": INSTRUMENT,
        "files": dict(FILE_NAMES),
        "header_rows": 2,
        "sheet": SHEET_NAME,
        "multiselect_delimiter": MULTISELECT_DELIMITER,
        "waves": {
            label: {
                "file": FILE_NAMES[label],
                "rows": len(frame),
                "columns": frame.shape[1],
                "unique_respondents": int(frame["resp_id"].nunique()),
            }
            for label, frame in waves.items()
        },
        "overlap": {
            "returning_respondents": len(ids26 & ids27),
            "pct_of_2027_respondents": round(100 * len(ids26 & ids27) / len(ids27), 1),
        },
        "wave_changes": [
            {
                "wave": "2027",
                "change": "renamed_column",
                "old": old,
                "new": new_name,
                "question": QUESTIONS[old],
                "note": "Same question text; only the column name changed.",
            }
            for old, new_name in RENAMED_2027.items()
        ]
        + [
            {
                "wave": "2027",
                "change": "reworded_level",
                "variables": list(USE_ITEMS),
                "old": old,
                "new": new_level,
                "note": "Same scale point, new wording.",
            }
            for old, new_level in REWORDED_2027.items()
        ],
        "codebook_settings": CODEBOOK_SETTINGS,
        "expected_codebook": expected_codebook(),
        "expected_groups": EXPECTED_GROUPS,
        "problems": problems26 + problems27,
        "patterns": _patterns(waves),
    }
    return DemoData(waves=waves, questions=questions, manifest=_jsonable(manifest))


def _jsonable(data: Any) -> Any:
    """Plain JSON types only (numpy scalars become Python numbers)."""
    return json.loads(json.dumps(data, default=_json_default))


def _json_default(obj: Any) -> Any:
    if isinstance(obj, np.integer):
        return int(obj)
    if isinstance(obj, np.floating):
        return float(obj)
    if isinstance(obj, datetime):
        return obj.isoformat()
    raise TypeError(f"Not JSON-able: {type(obj).__name__}")


def workbook_bytes(frame: pd.DataFrame, questions: dict[str, str]) -> bytes:
    """One sheet, two header rows (short names, then question text), dates as date cells.

    The bytes depend only on the data: document dates and zip entry times are fixed.
    """
    wb = Workbook()
    ws = wb.active
    ws.title = SHEET_NAME
    ws.append(list(frame.columns))
    ws.append([questions[c] for c in frame.columns])
    for values in frame.itertuples(index=False):
        ws.append([_cell(v) for v in values])
    bold = Font(bold=True)
    for cell in ws[1]:
        cell.font = bold
    for cell in ws[2]:
        cell.alignment = Alignment(wrap_text=True, vertical="top")
    for col in ("B", "C"):
        for cell in ws[col][2:]:
            cell.number_format = "yyyy-mm-dd hh:mm:ss"
        ws.column_dimensions[col].width = 20
    ws.freeze_panes = "B3"
    wb.properties.creator = "Plaincount demo generator"
    wb.properties.created = _FIXED_STAMP
    wb.properties.modified = _FIXED_STAMP
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as archive:
        ExcelWriter(wb, archive).write_data()
    return _fixed_zip(buf.getvalue())


def _cell(value: Any) -> Any:
    if value is None or (isinstance(value, float) and np.isnan(value)):
        return None
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, pd.Timestamp):
        return value.to_pydatetime()
    return value


def _fixed_zip(data: bytes) -> bytes:
    """Rewrite a zip with a fixed time on every entry, so equal content gives equal bytes."""
    out = io.BytesIO()
    with zipfile.ZipFile(io.BytesIO(data)) as src, zipfile.ZipFile(out, "w") as dst:
        for info in src.infolist():
            fixed = zipfile.ZipInfo(info.filename, date_time=_FIXED_STAMP.timetuple()[:6])
            fixed.compress_type = zipfile.ZIP_DEFLATED
            fixed.external_attr = 0o644 << 16
            dst.writestr(fixed, src.read(info.filename))
    return out.getvalue()


def write_demo_files(folder: str | Path, seed: int = SEED) -> dict[str, Any]:
    """Write both survey workbooks and ``manifest.json`` into ``folder``; return the manifest.

    The folder is created if needed. A file of the same name that holds something else is
    never overwritten: the evaluator's own files are safe. Re-writing identical demo files
    (same seed) is allowed, because the output is byte-for-byte reproducible.
    """
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise PlaincountError(f"{folder} is a file, not a folder.")
    data = generate(seed)
    contents: dict[str, bytes] = {
        FILE_NAMES[label]: workbook_bytes(frame, data.questions[label])
        for label, frame in data.waves.items()
    }
    text = json.dumps(data.manifest, ensure_ascii=False, indent=1) + "\n"
    contents[MANIFEST_NAME] = text.encode("utf-8")
    clashes = [
        name
        for name, blob in contents.items()
        if (folder / name).exists() and (folder / name).read_bytes() != blob
    ]
    if clashes:
        raise PlaincountError(
            f"{folder} already holds {', '.join(clashes)} with other contents; they were "
            "left as they are. Choose an empty folder for the demo."
        )
    try:
        folder.mkdir(parents=True, exist_ok=True)
        for name, blob in contents.items():
            (folder / name).write_bytes(blob)
    except OSError as exc:
        raise PlaincountError(
            f"Could not write the demo files into {folder}: {exc.strerror or exc}."
        ) from None
    return data.manifest


def build_demo_project(
    folder: str | Path, seed: int = SEED, progress: Progress | None = None
) -> Path:
    """Build ``harbor_point_demo.plaincount`` in ``folder`` from the two demo workbooks.

    The workbooks (and manifest) are written first if they are not there yet. Both waves are
    imported into the instrument "Participant survey" and the demo codebook settings (plausible
    ranges, keying of the agreement items, the identifier) are applied, so the project opens
    ready to clean. Returns the project's path. An existing project is never replaced, and a
    failed build leaves no half-made project behind.
    """
    from core.importing import import_file  # imported here: generating files needs no importer

    folder = Path(folder)
    path = folder / PROJECT_NAME
    if path.exists():
        raise PlaincountError(
            f"{path} already exists; it was left as it is. Delete it or choose another folder."
        )
    if not all((folder / name).exists() for name in (*FILE_NAMES.values(), MANIFEST_NAME)):
        write_demo_files(folder, seed)
    project = Project.create(path, name="Harbor Point Trades Bridge (demo)")
    try:
        with project:
            first = import_file(
                project,
                folder / FILE_NAMES["2026"],
                instrument=INSTRUMENT,
                wave="2026",
                header_rows=2,
                progress=progress,
            )
            instrument_id = first.wave.instrument_id
            codebook, _changed = project.codebook(instrument_id).applied(CODEBOOK_SETTINGS)
            project.set_codebook(instrument_id, codebook, label="Apply the demo codebook settings")
            # The 2027 export renamed one column and reworded one scale label; the import
            # matches both to this codebook by itself (core.wavematch).
            import_file(
                project,
                folder / FILE_NAMES["2027"],
                instrument=INSTRUMENT,
                wave="2027",
                header_rows=2,
                progress=progress,
            )
    except BaseException:
        path.unlink(missing_ok=True)
        for suffix in ("-wal", "-shm"):
            path.with_name(path.name + suffix).unlink(missing_ok=True)
        raise
    return path
