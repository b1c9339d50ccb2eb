"""Small invented surveys for the cleaning tests (not collected by pytest)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from core.codebook import Codebook, Variable
from core.kinds import Kind
from core.project import Project

AGREE = ("Strongly disagree", "Disagree", "Neither agree nor disagree", "Agree", "Strongly agree")


def make_project(
    folder: Path, frame: pd.DataFrame, variables: list[Variable], label: str = "2026"
) -> tuple[Project, int]:
    """A fresh project holding one wave of ``frame`` with this codebook."""
    Path(folder).mkdir(parents=True, exist_ok=True)
    project = Project.create(Path(folder) / f"clean-{label}.plaincount")
    inst = project.add_instrument("Participant survey", Codebook(variables))
    wave = project.add_wave(inst.id, label, "invented.csv", b"invented", frame)
    return project, wave.id


def survey(n: int = 40, seed: int = 7) -> tuple[pd.DataFrame, list[Variable]]:
    """An invented wave with one planted problem of each kind (rows are 0-based here).

    - row 3: age 7 (range); row 5: credits 120 (wandering zero); row 6: hours 190 (range)
    - row 8: completed No but credential Yes (consistency)
    - row 10: "Agree" on every agreement item (straight-lining; agrees with both kinds)
    - row 12: glowing comment, reversed agreement answers (reversed scale)
    - row 14: finished in 60 s (speeder); row 15: age "twelve" (invalid)
    - row n-1: copy of row 1 (duplicate id and identical row)
    """
    rng = np.random.default_rng(seed)
    m = n - 1
    start = pd.Timestamp("2026-05-01 09:00") + pd.to_timedelta(rng.integers(0, 5000, m), "min")
    finish = start + pd.to_timedelta(rng.integers(480, 900, m), "s")
    ages = rng.integers(20, 60, m).astype(object)
    frame = pd.DataFrame(
        {
            "resp_id": [f"R{i:03d}" for i in range(1, m + 1)],
            "started_at": start,
            "finished_at": finish,
            "age": ages,
            "credits_term": rng.integers(9, 16, m).astype(float),
            "hours_work_week": rng.integers(10, 41, m).astype(float),
            "completed": rng.choice(["Yes", "No"], m),
            "credential_earned": "No",
        }
    )
    frame.loc[frame["completed"] == "Yes", "credential_earned"] = "Yes"
    # Agreement battery: mildly positive people; items 3 and 6 negatively worded.
    base = rng.integers(3, 5, m)  # Neither (3) or Agree (4), 1-based positions
    for j in range(1, 7):
        jitter = rng.integers(-1, 2, m)
        pos = np.clip(base + jitter, 1, 5)
        if j in (3, 6):
            pos = 6 - pos
        frame[f"agree_{j}"] = [AGREE[p - 1] for p in pos]
    frame["best_part"] = rng.choice(["The shop time.", "Meeting people.", "The tutoring."], m)
    frame.loc[3, "age"] = 7
    frame.loc[5, "credits_term"] = 120.0
    frame.loc[6, "hours_work_week"] = 190.0
    frame.loc[8, ["completed", "credential_earned"]] = ["No", "Yes"]
    for j in range(1, 7):
        frame.loc[10, f"agree_{j}"] = "Agree"
        frame.loc[12, f"agree_{j}"] = "Strongly agree" if j in (3, 6) else "Strongly disagree"
    frame.loc[12, "best_part"] = "Loved it! The instructors were amazing and so helpful."
    frame.loc[14, "finished_at"] = frame.loc[14, "started_at"] + pd.Timedelta(seconds=60)
    frame.loc[15, "age"] = "twelve"
    frame = pd.concat([frame, frame.iloc[[1]]], ignore_index=True)
    frame["age"] = frame["age"].astype(str)
    variables = [
        Variable("resp_id", kind=Kind.IDENTIFIER),
        Variable("started_at", "Start time", kind=Kind.DATE),
        Variable("finished_at", "End time", kind=Kind.DATE),
        Variable("age", "What is your age?", kind=Kind.NUMERIC),
        Variable("credits_term", "Credits this term", kind=Kind.NUMERIC),
        Variable("hours_work_week", "Hours of paid work a week", kind=Kind.NUMERIC),
        Variable("completed", kind=Kind.CATEGORICAL, levels=("Yes", "No")),
        Variable("credential_earned", kind=Kind.CATEGORICAL, levels=("Yes", "No")),
        *[
            Variable(
                f"agree_{j}",
                kind=Kind.LIKERT,
                levels=AGREE,
                group="agree",
                keying="negative" if j in (3, 6) else "positive",
            )
            for j in range(1, 7)
        ],
        Variable("best_part", "What was the best part?", kind=Kind.TEXT),
    ]
    return frame, variables
