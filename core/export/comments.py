"""Open-ended comments as a listing a report can quote, with the caution that goes with it.

Comments are not tabulated: they are quoted. They are also the part of a survey most likely
to identify a respondent (a job, a place, an event), so exports leave them out unless the
evaluator includes them explicitly, and every listing carries :data:`COMMENT_CAUTION`.
"""

from __future__ import annotations

import pandas as pd

from core.codebook import Variable
from core.errors import TableError
from core.kinds import Kind
from core.project import Project
from core.tables.build import resolve_wave
from core.tables.result import Cell, TableResult
from core.tables.spec import TableSpec
from core.working import working_data

COMMENT_CAUTION = (
    "Comments can identify the people who wrote them (a job, a place, an event): read each "
    "one and remove identifying details before sharing."
)


def is_comment_variable(project: Project, spec: TableSpec) -> bool:
    """True when ``spec`` asks for an open-ended text question (a listing, not a table)."""
    wave = resolve_wave(project, spec)
    var = project.codebook(wave.instrument_id).get(spec.variable)
    return var is not None and var.kind is Kind.TEXT


def comments_result(project: Project, spec: TableSpec) -> TableResult:
    """Every non-empty comment to ``spec.variable`` from analysed respondents, in data order.

    Excluded respondents are left out as in every table; break-downs are refused, because a
    comment listed under a small group points at the person who wrote it.
    """
    if spec.by:
        raise TableError("Comments are listed, not broken down: remove the break-down.")
    wave = resolve_wave(project, spec)
    working = working_data(project, wave.id)
    var: Variable = working.codebook[spec.variable]
    if var.kind is not Kind.TEXT:
        raise TableError(f"{var.name} is not an open-ended question.")
    values, _ = working.analysed()
    texts = [
        " ".join(str(v).split())
        for v in values[var.name]
        if v is not None and not (isinstance(v, float) and pd.isna(v)) and str(v).strip()
    ]
    n_all = len(values)
    instrument = project.instrument(wave.instrument_id).name
    return TableResult(
        spec=spec,
        table_type="comments",
        kind=str(Kind.TEXT),
        title=var.label,
        base=f"Base: {len(texts):,} comments from {n_all:,} respondents.",
        n_valid=len(texts),
        n_missing=n_all - len(texts),
        columns=["Comment"],
        rows=[[Cell(t)] for t in texts],
        row_roles=["level"] * len(texts),
        notes=[COMMENT_CAUTION, f"Source: {instrument}, wave {wave.label}."],
        data={"comments": texts},
        wave=wave.label,
        instrument=instrument,
    )
