"""A small invented project for the outline and export tests (built through the public API)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from core.codebook import Codebook, Variable
from core.project import Project

SATISFACTION = ("Very dissatisfied", "Dissatisfied", "Neutral", "Satisfied", "Very satisfied")
TRACKS = ("Electrical", "HVAC", "Welding")


def raw_table(n: int = 120, seed: int = 7) -> pd.DataFrame:
    """Invented answers: a track, a 5-point satisfaction item, an age, a comment."""
    rng = np.random.default_rng(seed)
    track = rng.choice(TRACKS, size=n, p=[0.5, 0.3, 0.2])
    sat = rng.choice(SATISFACTION, size=n, p=[0.05, 0.1, 0.2, 0.4, 0.25]).astype(object)
    sat[rng.choice(n, size=6, replace=False)] = None  # a few skipped
    age = rng.integers(18, 64, size=n).astype(object)
    comments = np.array(["Great teachers", '=HYPERLINK("x")', "More tools", None], dtype=object)
    return pd.DataFrame(
        {
            "resp_id": [f"R{i:04d}" for i in range(1, n + 1)],
            "track": track.astype(object),
            "satisfaction": sat,
            "age": [str(a) for a in age],
            "best_part": comments[rng.integers(0, 4, size=n)],
            "postcode": rng.choice(["04101", "04102", "04103"], size=n).astype(object),
        }
    )


def codebook() -> Codebook:
    return Codebook(
        [
            Variable("resp_id", "Respondent", kind="identifier", position=0),
            Variable(
                "track", "Which track are you in?", kind="categorical", levels=TRACKS, position=1
            ),
            Variable(
                "satisfaction",
                "Overall, how satisfied are you with the course?",
                kind="likert",
                levels=SATISFACTION,
                position=2,
            ),
            Variable("age", "How old are you?", kind="numeric", range=(16, 80), position=3),
            Variable("best_part", "What was the best part?", kind="text", position=4),
            Variable(
                "postcode",
                "Home postcode",
                kind="categorical",
                levels=("04101", "04102", "04103"),
                personal=True,
                position=5,
            ),
        ]
    )


def make_project(folder: Path, name: str = "outline.plaincount") -> Project:
    project = Project.create(folder / name, "Harbor Point test")
    inst = project.add_instrument("Participant survey", codebook())
    raw = raw_table()
    project.add_wave(inst.id, "2026", "survey_2026.csv", raw.to_csv(index=False).encode(), raw)
    return project
