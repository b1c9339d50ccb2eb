"""Make a table: resolve the wave, apply the missing-data treatment, dispatch by kind.

Each question kind gets the table its data type allows: numbers get descriptive statistics,
categories a frequency table (a cross-tabulation with a break-down), rating scales their
distribution with % agreeing, batteries one row per item, rankings Borda points, and
choose-all-that-apply questions the share choosing each option.
"""

from __future__ import annotations

import json
from dataclasses import replace
from typing import Any

from core.codebook import Codebook, Variable
from core.errors import ProjectError, TableError
from core.kinds import Kind
from core.project import Project
from core.response_rates import caption_rate
from core.sampling import WaveDesign, wave_design
from core.tables.captions import (
    GROUP_CAUTION,
    cleaning_notes,
    source_note,
)
from core.tables.context import Context, by_title
from core.tables.intervals import add_intervals
from core.tables.likert import NEGATIVE_NOTE
from core.tables.result import TableResult
from core.tables.spec import TableSpec
from core.treatments import apply_treatment, treatment_notes
from core.working import WorkingData, working_data

# Table types that can show missing answers as rows (or columns of a cross-tabulation).
ROWS_FOR_MISSING = ("frequency", "likert", "crosstab")


def compute_table(project: Project, spec: TableSpec) -> TableResult:
    """The table ``spec`` asks for, from the current working data of its wave.

    The wave is ``spec.wave`` (a label) of ``spec.instrument``; with no wave, the latest
    wave of the instrument whose codebook holds the variable. Results are cached until the
    project changes.
    """
    wave = resolve_wave(project, spec)
    key = ("table", wave.id, json.dumps(spec.to_json(), sort_keys=True, default=str))
    cached = project.cached(key, lambda: _compute(project, spec, wave))
    # A fresh result object each time: a caller may attach a finding or edit notes without
    # changing the cached copy other views share.
    return replace(
        cached,
        notes=list(cached.notes),
        rows=list(cached.rows),
        row_roles=list(cached.row_roles),
        data=dict(cached.data),
        note_kinds=dict(cached.note_kinds),
    )


def _compute(project: Project, spec: TableSpec, wave: Any) -> TableResult:
    if spec.compare_waves:  # side by side across waves: core.waves
        from core.waves import compare_waves

        return compare_waves(project, spec, spec.compare_waves)
    working = working_data(project, wave.id)
    instrument = project.instrument(wave.instrument_id).name
    variables = table_variables(working.codebook, spec)
    design = wave_design(project, wave.id)
    settings = {
        **project.settings(),
        "wave": wave.label,
        "instrument": instrument,
        "population": design.whole_population,
        "population_size": design.population_size,
        "response_rate": caption_rate(project, wave.id),
        "cleaning_notes": cleaning_notes(project, wave.id, variables),
    }
    return table_for_working(working, spec, settings)


def resolve_wave(project: Project, spec: TableSpec) -> Any:
    """The wave a spec refers to (see :func:`compute_table`)."""
    if spec.instrument is not None:
        return project.find_wave(spec.wave, spec.instrument)
    holders = [
        inst for inst in project.instruments() if _knows(project.codebook(inst.id), spec.variable)
    ]
    if not holders:
        raise TableError(f"No instrument in this project has a question called {spec.variable!r}.")
    candidates = []
    for inst in holders:
        waves = project.waves(inst.id)
        if spec.wave is not None:
            waves = [w for w in waves if w.label == spec.wave]
        if waves:
            candidates.append(waves[-1])
    if not candidates:
        if spec.wave is not None:
            raise ProjectError(
                f"The project has no wave labelled {spec.wave!r} with {spec.variable}."
            )
        raise ProjectError("The project has no data yet: import a survey export first.")
    if len(candidates) > 1 and spec.wave is not None:
        raise ProjectError(
            f"Several instruments have a wave {spec.wave!r} with "
            f"{spec.variable}; name the instrument."
        )
    return candidates[-1]


def _knows(codebook: Codebook, name: str) -> bool:
    return name in codebook or name in codebook.groups()


def table_variables(codebook: Codebook, spec: TableSpec) -> list[str]:
    """Every column a table reads: the variable (or the group's members) and break-downs."""
    var = codebook.get(spec.variable)
    # Place and option columns stand for their whole question group.
    whole_group = (
        var is None
        or var.kind is Kind.RANKING
        or (var.kind is Kind.MULTISELECT and not var.delimiter)
    )
    if whole_group:
        group = spec.variable if var is None else (var.group or spec.variable)
        names = [m.name for m in codebook.members(group)]
    else:
        names = [var.name]
    return [*names, *[b for b in spec.by if b not in names]]


def table_for_working(
    working: WorkingData, spec: TableSpec, settings: dict[str, Any] | None = None
) -> TableResult:
    """The table for ``spec`` from given working data (pure: nothing is read or written).

    ``settings`` holds the project settings (``min_cell``, ``unstable_base``) and optionally
    ``wave``, ``instrument``, ``population`` (bool: the wave went to everyone),
    ``population_size`` (N, for margins of error of a sample), ``response_rate`` (caption
    text of the wave's chosen rate) and ``cleaning_notes`` (sentences).
    """
    settings = dict(settings or {})
    codebook = working.codebook
    values, reasons = working.analysed()
    kind, target = table_kind(codebook, spec.variable)
    cols = table_variables(codebook, spec)
    own = [c for c in cols if c not in spec.by]
    treated = apply_treatment(
        values,
        reasons,
        codebook,
        spec.treatment,
        own,
        spec.by,
        spec.complete_items,
        spec.missing_rows,
    )
    min_cell = spec.min_cell if spec.min_cell is not None else int(settings.get("min_cell", 5))
    ctx = Context(
        codebook=codebook,
        treated=treated,
        spec=spec,
        min_cell=int(min_cell),
        unstable_base=int(settings.get("unstable_base", 30)),
        wave=str(settings.get("wave", "")),
        instrument=str(settings.get("instrument", "")),
        population=bool(settings.get("population", True)),
    )
    result = _dispatch(ctx, kind, target)
    var = codebook.get(target)
    if result.table_type == "crosstab" and var is not None and var.keying == "negative":
        head, sep, tail = result.title.partition(" — by ")
        result.title = f"{head} (negatively worded){sep}{tail}"
        ctx.notes.method.append(NEGATIVE_NOTE)
    if spec.by and " — by " not in result.title:
        result.title = by_title(ctx, result.title)
    notes = ctx.notes
    if treated.show_missing and result.table_type not in ROWS_FOR_MISSING:
        # Statistics, batteries, rankings and choices have no answer rows to add missing
        # ones to: they count those who answered, and the notes say how many did not.
        notes.treatment = [
            "Missing data: this kind of table has no rows for missing answers, so it counts "
            "everyone who answered (available cases); the notes give the missing counts."
        ] + notes.treatment
    else:
        notes.treatment = treatment_notes(treated, codebook) + notes.treatment
    notes.cleaning = list(settings.get("cleaning_notes") or [])
    notes.source.append(source_note(ctx.instrument, ctx.wave))
    if settings.get("response_rate"):
        notes.source.append(f"{settings['response_rate']}.")
    if spec.intervals:
        design = WaveDesign(ctx.population, settings.get("population_size"))
        notes.method += add_intervals(result, design)
    if spec.by and GROUP_CAUTION not in notes.cautions:
        notes.cautions.append(GROUP_CAUTION)
    result.note_kinds = notes.kinds()
    result.notes = list(result.note_kinds)
    result.data.setdefault("min_cell", ctx.min_cell)
    result.data["treatment"] = spec.treatment
    return result


def table_kind(codebook: Codebook, name: str) -> tuple[str, str]:
    """(table family, name it applies to) for a variable or group name."""
    var: Variable | None = codebook.get(name)
    if var is not None:
        if var.kind is Kind.NUMERIC:
            return "numeric", name
        if var.kind is Kind.LIKERT:
            return "likert", name
        if var.kind.has_levels:
            return "categorical", name
        if var.kind is Kind.MULTISELECT:
            if var.delimiter:
                return "multiselect", name
            if var.group:
                return "multiselect", var.group
        if var.kind is Kind.RANKING and var.group:
            return "ranking", var.group
        what = {
            Kind.TEXT: "open-ended text; read or code the comments instead",
            Kind.IDENTIFIER: "an identifier; it is never tabulated",
            Kind.DATE: "a date; tabulate something computed from it instead",
            Kind.RANKING: "one option of a ranking without a question group; set its group",
            Kind.MULTISELECT: (
                "one option column without a question group; set its group in the codebook"
            ),
        }.get(var.kind, var.kind.label.lower())
        raise TableError(f"{name} cannot be tabulated: it is {what}.")
    groups = codebook.groups()
    if name not in groups:
        raise TableError(f"There is no variable or question group called {name!r}.")
    kinds = {m.kind for m in groups[name]}
    if kinds <= {Kind.LIKERT, Kind.ORDINAL} and kinds:
        return "battery", name
    if kinds == {Kind.RANKING}:
        return "ranking", name
    if kinds == {Kind.MULTISELECT}:
        return "multiselect", name
    listed = ", ".join(sorted(k.label.lower() for k in kinds))
    raise TableError(
        f"The question group {name} mixes kinds ({listed}); tabulate its items one by one."
    )


def _dispatch(ctx: Context, kind: str, target: str) -> TableResult:
    from core.tables import crosstab, descriptives, frequency, likert, multiselect, ranking

    if kind == "numeric":
        return descriptives.descriptives_table(ctx, target)
    if kind in ("categorical", "likert") and ctx.spec.by:
        return crosstab.crosstab_table(ctx, target)
    if kind == "likert":
        return likert.likert_table(ctx, target)
    if kind == "categorical":
        return frequency.frequency_table(ctx, target)
    if kind == "battery":
        return likert.battery_table(ctx, target)
    if kind == "ranking":
        return ranking.ranking_table(ctx, target)
    return multiselect.multiselect_table(ctx, target)


def available_tables(codebook: Codebook) -> list[dict[str, str]]:
    """What can be tabulated, in questionnaire order: one entry per question.

    Each entry is ``{"name", "label", "family"}``; a group (battery, ranking, option
    columns) appears once under its group name, before the items of a battery (which can also
    be tabulated one by one). Text, identifiers and dates are left out.
    """
    from core.tables.captions import group_title
    from core.tables.context import variable_title

    out: list[dict[str, str]] = []
    seen: set[str] = set()
    groups = codebook.groups()
    for var in codebook:
        if var.group and var.group not in seen:
            seen.add(var.group)
            try:
                family, _ = table_kind(codebook, var.group)
            except TableError:
                family = ""
            if family and var.group not in codebook:
                members = groups[var.group]
                out.append(
                    {
                        "name": var.group,
                        "family": family,
                        "label": group_title(var.group, [m.question for m in members]),
                    }
                )
        try:
            family, target = table_kind(codebook, var.name)
        except TableError:
            continue
        if target != var.name:
            continue  # an option or place column: its group stands for it
        out.append(
            {"name": var.name, "family": family, "label": variable_title(codebook, var.name)}
        )
    return out


def breakdown_choices(codebook: Codebook) -> list[str]:
    """Variables that can break a table down: those with answer categories."""
    return [v.name for v in codebook if v.kind.has_levels]
