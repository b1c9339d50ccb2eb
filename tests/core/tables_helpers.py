"""Helpers for the table tests: build a small project from a frame and a codebook."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from core.codebook import Codebook, Variable
from core.project import Project


def make_project(
    folder: Path,
    frame: pd.DataFrame,
    variables: list[Variable],
    *,
    instrument: str = "Participant survey",
    wave: str = "2026",
    name: str = "t.plaincount",
) -> Project:
    project = Project.create(folder / name)
    inst = project.add_instrument(instrument, Codebook(variables))
    project.add_wave(inst.id, wave, "source.csv", frame.to_csv(index=False).encode(), frame)
    return project


def anes96() -> pd.DataFrame:
    """statsmodels' bundled 1996 American National Election Study extract (offline)."""
    import statsmodels.api as sm

    return sm.datasets.anes96.load_pandas().data
