"""Working data: raw table + codebook + ledger, recomputed on demand and cached by version.

Working data is derived, never saved as truth. Every table, chart, check and export reads it
through :func:`working_data`.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from core.codebook import Codebook, Variable
from core.decoding import (
    REASON_CATEGORIES,
    cell_texts,
    decode_table,
    decode_variable,
    derive_variables,
)
from core.errors import PlaincountError
from core.kinds import Kind, MissingReason
from core.ledger import Action, LedgerEntry, entries_for, surviving
from core.project import Project


@dataclass
class WorkingData:
    """Decoded values and missing reasons of one wave, with the ledger applied.

    Rows keep the raw table's positions (0-based); ``excluded`` rows are left out of
    analyses by :meth:`analysed` but stay visible to the cleaning view. ``edits`` maps
    (row, variable) to the ledger entries that changed the cell.
    """

    wave_id: int
    codebook: Codebook
    values: pd.DataFrame
    reasons: pd.DataFrame
    respondent_ids: pd.Series
    excluded: frozenset[int] = frozenset()
    edits: dict[tuple[int, str], list[LedgerEntry]] = field(default_factory=dict)
    entries: list[LedgerEntry] = field(default_factory=list)
    # The raw table as imported (shared, never modified): checks quote the original text.
    raw: pd.DataFrame | None = field(default=None, repr=False)

    @property
    def n_rows(self) -> int:
        return len(self.values)

    def analysed(self) -> tuple[pd.DataFrame, pd.DataFrame]:
        """(values, reasons) without excluded respondents: what every table uses."""
        if not self.excluded:
            return self.values, self.reasons
        keep = ~self.values.index.isin(list(self.excluded))
        return self.values[keep], self.reasons[keep]

    def variable(self, name: str) -> Variable:
        return self.codebook[name]

    def respondent_label(self, row: int) -> str:
        return str(self.respondent_ids.iloc[row])

    def rows_for_respondent(self, respondent: str) -> list[int]:
        hits = np.flatnonzero(self.respondent_ids.astype(str).to_numpy() == str(respondent))
        return [int(i) for i in hits]


def respondent_ids(codebook: Codebook, raw: pd.DataFrame) -> pd.Series:
    """The identifier column as text, or 1-based row numbers when there is none."""
    ident = codebook.identifier()
    if ident is not None and ident.name in raw.columns:
        texts = cell_texts(raw[ident.name])
        fallback = np.arange(1, len(raw) + 1).astype(str)
        return pd.Series(np.where(pd.isna(texts), fallback, texts), index=raw.index, dtype=object)
    return pd.Series(np.arange(1, len(raw) + 1).astype(str), index=raw.index, dtype=object)


def codebook_fingerprint(codebook: Codebook) -> str:
    """SHA-256 of the codebook's JSON: equal codebooks decode a raw table the same way."""
    return hashlib.sha256(codebook.dumps().encode("utf-8")).hexdigest()


def _decoded_with_ids(
    project: Project, wave_id: int
) -> tuple[pd.DataFrame, pd.DataFrame, pd.Series]:
    """Decoded frames plus respondent ids, memoised on the codebook's content (not version)."""
    wave = project.wave(wave_id)
    codebook = project.codebook(wave.instrument_id)

    def compute() -> tuple[pd.DataFrame, pd.DataFrame, pd.Series]:
        raw = project.raw_table(wave_id)
        values, reasons = decode_table(codebook, raw)
        return values, reasons, respondent_ids(codebook, raw)

    return project.memo(("decoded", wave_id, _stored_digest(project, wave.instrument_id)), compute)


def _stored_digest(project: Project, instrument_id: int) -> str:
    """SHA-256 of the codebook text as stored: the same key as :func:`codebook_fingerprint`
    gives (equal text, equal codebook) without serialising the codebook again on every
    ledger version (which costs more than the rest of a one-decision refresh)."""
    rows = project.query("SELECT codebook FROM instruments WHERE id = ?", (instrument_id,))
    return hashlib.sha256(rows[0][0].encode("utf-8")).hexdigest() if rows else ""


def decoded(project: Project, wave_id: int) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Decoded values and reasons before the ledger.

    Cached on the codebook's content rather than the project version, so recording a
    cleaning decision does not decode the whole wave again. The frames are shared: never
    modify them (copy first).
    """
    values, reasons, _ = _decoded_with_ids(project, wave_id)
    return values, reasons


def working_data(project: Project, wave_id: int) -> WorkingData:
    """The wave's working data (cached until the project changes)."""
    return project.cached(("working", wave_id), lambda: _build(project, wave_id))


def _build(project: Project, wave_id: int) -> WorkingData:
    wave = project.wave(wave_id)
    codebook = project.codebook(wave.instrument_id)
    raw = project.raw_table(wave_id)
    values0, reasons0, ids = _decoded_with_ids(project, wave_id)
    entries = entries_for(project, wave_id)
    return apply_ledger(
        wave_id, codebook, raw, values0, reasons0, surviving(entries), entries, ids=ids
    )


def apply_ledger(
    wave_id: int,
    codebook: Codebook,
    raw: pd.DataFrame,
    values0: pd.DataFrame,
    reasons0: pd.DataFrame,
    decisions: list[LedgerEntry],
    entries: list[LedgerEntry] | None = None,
    ids: pd.Series | None = None,
) -> WorkingData:
    """Replay surviving decisions, in order, over decoded data. Pure: inputs are not changed."""
    touched = {v for d in decisions for v in d.variables if v in values0.columns}
    values = values0.copy(deep=False)
    reasons = reasons0.copy(deep=False)
    for name in touched:  # copy only the columns decisions write to
        values[name] = values0[name].copy()
        reasons[name] = reasons0[name].copy()
    excluded: set[int] = set()
    edits: dict[tuple[int, str], list[LedgerEntry]] = {}
    for d in decisions:
        if d.action is Action.EXCLUDE:
            excluded.add(int(d.row))
            continue
        if d.action is Action.KEEP:
            continue
        for name in d.variables:
            if name not in values.columns:
                continue
            var = codebook[name]
            if d.action is Action.RECODE_ALL:
                rows = _rows_with_raw_text(raw[name], d.old_value)
            else:
                rows = [int(d.row)]
            for row in rows:
                _apply_cell(d, var, values, reasons, row)
                edits.setdefault((row, name), []).append(d)
    # Variables grouped from a numeric one follow its cleaned values.
    values, reasons = derive_variables(codebook, values, reasons)
    return WorkingData(
        wave_id=wave_id,
        codebook=codebook,
        values=values,
        reasons=reasons,
        respondent_ids=ids if ids is not None else respondent_ids(codebook, raw),
        excluded=frozenset(excluded),
        edits=edits,
        entries=list(entries if entries is not None else decisions),
        raw=raw,
    )


def _rows_with_raw_text(column: pd.Series, text: object) -> list[int]:
    wanted = str(text).strip()
    texts = cell_texts(column)
    return [i for i, t in enumerate(texts) if t is not None and t == wanted]


def _apply_cell(
    d: LedgerEntry, var: Variable, values: pd.DataFrame, reasons: pd.DataFrame, row: int
) -> None:
    col = values.columns.get_loc(var.name)
    rcol = reasons.columns.get_loc(var.name)
    if d.action is Action.SET_MISSING or (d.action is Action.RECODE_ALL and d.new_value is None):
        values.iat[row, col] = _missing_for(values[var.name])
        reasons.iat[row, rcol] = MissingReason.SET_MISSING.value
        return
    if d.action is Action.REVERSE:
        current = values.iat[row, col]
        if var.kind.has_levels and not pd.isna(current):
            levels = list(var.levels)
            values.iat[row, col] = levels[len(levels) - 1 - levels.index(current)]
        return
    value, reason = _decode_one(var, str(d.new_value))
    if not pd.isna(reason) and reason == "invalid":
        raise PlaincountError(
            f"{d.new_value!r} is not a valid answer for {var.name} ({var.kind.label.lower()})."
        )
    values.iat[row, col] = value
    reasons.iat[row, rcol] = reason if not pd.isna(reason) else None


_DECODED_VALUES: dict[tuple[str, str], tuple[object, object]] = {}


def _decode_one(var: Variable, text: str) -> tuple[object, object]:
    """Decode one corrected value, memoised: replaying a long ledger decodes each distinct
    (variable definition, text) once instead of once per decision and version."""
    key = (repr(var), text)
    hit = _DECODED_VALUES.get(key)
    if hit is None:
        new_values, new_reasons = decode_variable(var, pd.Series([text]))
        hit = (new_values.iloc[0], new_reasons.iloc[0])
        if len(_DECODED_VALUES) > 10_000:
            _DECODED_VALUES.clear()
        _DECODED_VALUES[key] = hit
    return hit


def _missing_for(column: pd.Series) -> object:
    return np.nan if pd.api.types.is_float_dtype(column) else None


def validate_value(var: Variable, value: object) -> None:
    """Raise a plain error if ``value`` is not a valid answer for ``var``."""
    _, reasons = decode_variable(var, pd.Series([str(value)]))
    if not pd.isna(reasons.iloc[0]) and reasons.iloc[0] == "invalid":
        if var.kind.has_levels:
            allowed = ", ".join(var.levels)
            raise PlaincountError(f"{value!r} is not one of the answers of {var.name}: {allowed}.")
        raise PlaincountError(
            f"{value!r} is not a valid answer for {var.name} ({var.kind.label.lower()})."
        )


__all__ = [
    "REASON_CATEGORIES",
    "WorkingData",
    "apply_ledger",
    "decoded",
    "respondent_ids",
    "validate_value",
    "working_data",
    "Kind",
]
