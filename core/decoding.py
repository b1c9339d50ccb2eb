"""Turn a raw table into decoded values plus a parallel 'why missing' code per cell.

The raw table keeps every cell as imported; what a text *means* (a number, a level, a
missing code) is decided here, from the codebook, never by the file reader.

Survey columns repeat a few distinct answers many times, so every decision is made once per
distinct cell text (``pandas.factorize``) and broadcast back: decoding a 100,000-row wave
costs about as much as factorizing it.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
import pandas as pd

from core.codebook import Codebook, Variable
from core.kinds import Kind, MissingReason

# Decoded cells that hold text that is not a valid answer for the variable's kind.
INVALID = "invalid"
REASON_CATEGORIES = [r.value for r in MissingReason] + [INVALID]
_REASON_CODE = {r: i for i, r in enumerate(REASON_CATEGORIES)}
_SKIPPED = _REASON_CODE[MissingReason.SKIPPED.value]
_INVALID = _REASON_CODE[INVALID]

TRUTHY = {"1", "1.0", "yes", "y", "true", "checked", "selected", "x", "✓", "on"}
FALSY = {"0", "0.0", "no", "n", "false", "unchecked", "off"}


def format_number(x: float) -> str:
    """Shortest text for a number: integers without '.0', others by repr."""
    if x == int(x) and abs(x) < 1e15:
        return str(int(x))
    return repr(float(x))


def factorize_cells(column: pd.Series) -> tuple[np.ndarray, list[str]]:
    """(codes, texts): each cell's index into ``texts``, or -1 where the cell is blank.

    Texts are stripped; numbers are written without a spurious ``.0``; date-times as ISO
    text (midnight dropped). Cells that differ only by surrounding spaces share a code.
    """
    codes, uniques = pd.factorize(column, use_na_sentinel=True)
    if pd.api.types.is_datetime64_any_dtype(column):
        stamps = pd.DatetimeIndex(uniques)
        raw_texts = [
            t.replace(" 00:00:00", "") for t in stamps.strftime("%Y-%m-%d %H:%M:%S").tolist()
        ]
    elif pd.api.types.is_bool_dtype(column):
        raw_texts = [str(bool(u)).upper() for u in uniques]
    elif pd.api.types.is_numeric_dtype(column):
        raw_texts = [format_number(float(u)) for u in np.asarray(uniques, dtype=float)]
    else:
        raw_texts = [_text(u) for u in uniques]
    texts: list[str] = []
    index: dict[str, int] = {}
    remap = np.empty(len(raw_texts) + 1, dtype=np.int64)
    remap[-1] = -1  # codes of -1 (blank) index the last slot
    for i, text in enumerate(raw_texts):
        if text is None:
            remap[i] = -1
            continue
        if text not in index:
            index[text] = len(texts)
            texts.append(text)
        remap[i] = index[text]
    return remap[codes], texts


def _text(value: object) -> str | None:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return None
    if isinstance(value, float):
        text = format_number(value)
    else:
        text = str(value).strip()
    return text or None


def cell_texts(column: pd.Series) -> np.ndarray:
    """Object array of stripped cell texts, None where the cell is blank."""
    codes, texts = factorize_cells(column)
    lookup = np.array([*texts, None], dtype=object)
    return lookup[codes]


def cell_text(column: pd.Series) -> pd.Series:
    """Each raw cell as the text a codebook refers to (``5.0`` -> ``"5"``); None if blank."""
    return pd.Series(cell_texts(column), index=column.index, dtype=object)


def decode_variable(var: Variable, raw: pd.Series) -> tuple[pd.Series, pd.Series]:
    """Decode one column into (values, reasons).

    ``values`` is float for numeric and ranking kinds (and 0/1 per-option choose-all-that-apply
    columns), an ordered or unordered Categorical for kinds with levels, a tuple of chosen
    options for delimited choose-all-that-apply, datetime for dates, and text otherwise.
    ``reasons`` is a Categorical of :data:`REASON_CATEGORIES`, missing where answered.
    """
    codes, texts = factorize_cells(raw)
    # Per distinct text: its missing reason code (-1 = an answer).
    lookup = _code_lookup(var)
    reason_u = np.array([_REASON_CODE[r] if (r := lookup(t)) else -1 for t in texts] + [-1])
    kind = var.kind
    if kind is Kind.MULTISELECT and not var.delimiter:
        # One column per option: a blank means "not chosen"; a wholly blank question is
        # marked skipped across the group (see decode_table).
        option = (var.option or "").lower()
        value_u = np.full(len(texts) + 1, 0.0)
        for i, t in enumerate(texts):
            low = t.lower()
            if low in TRUTHY or (option and low == option):
                value_u[i] = 1.0
            elif low not in FALSY and reason_u[i] == -1:
                reason_u[i] = _INVALID
        reason_codes = reason_u[codes]
        nums = value_u[codes]
        nums[reason_codes != -1] = np.nan
        return pd.Series(nums, index=raw.index), _reasons(reason_codes, raw.index)

    reason_u[-1] = _SKIPPED
    if kind in (Kind.NUMERIC, Kind.RANKING):
        if pd.api.types.is_numeric_dtype(raw) and not pd.api.types.is_bool_dtype(raw):
            value_u = np.array([float(t) for t in texts] + [np.nan])
        else:
            value_u = np.array([_to_float(t) for t in texts] + [np.nan])
        _mark_invalid(reason_u, np.isnan(value_u))
        reason_codes = reason_u[codes]
        nums = value_u[codes]
        nums[reason_codes != -1] = np.nan
        values: pd.Series = pd.Series(nums, index=raw.index)
    elif kind.has_levels:
        index_of = {level: i for i, level in enumerate(var.levels)}
        lowered = {level.lower(): i for i, level in enumerate(var.levels)}
        level_u = np.array(
            [
                index_of.get(
                    var.value_labels.get(t, t), lowered.get(var.value_labels.get(t, t).lower(), -1)
                )
                for t in texts
            ]
            + [-1],
            dtype=np.int64,
        )
        _mark_invalid(reason_u, level_u == -1)
        reason_codes = reason_u[codes]
        level_codes = level_u[codes]
        level_codes[reason_codes != -1] = -1
        cat = pd.Categorical.from_codes(
            level_codes, categories=list(var.levels), ordered=kind.ordered
        )
        values = pd.Series(cat, index=raw.index)
    elif kind is Kind.MULTISELECT:
        chosen_u = [_split_options(var, t) for t in texts] + [None]
        _mark_invalid(reason_u, np.array([c is None for c in chosen_u]))
        reason_codes = reason_u[codes]
        out = np.array(chosen_u + [None], dtype=object)[:-1]
        picked = out[codes]
        picked[reason_codes != -1] = None
        values = pd.Series(picked, index=raw.index, dtype=object)
    elif kind is Kind.DATE:
        date_u = pd.to_datetime(pd.Series(texts, dtype=object), errors="coerce", format="mixed")
        _mark_invalid(reason_u, np.append(date_u.isna().to_numpy(), False))
        reason_codes = reason_u[codes]
        if pd.api.types.is_datetime64_any_dtype(raw):
            values = raw.where(reason_codes == -1)
        else:
            stamps = np.append(date_u.to_numpy(dtype="datetime64[ns]"), np.datetime64("NaT"))
            picked = stamps[codes]
            picked[reason_codes != -1] = np.datetime64("NaT")
            values = pd.Series(picked, index=raw.index)
    else:
        reason_codes = reason_u[codes]
        lookup_texts = np.array([*texts, None], dtype=object)
        kept = lookup_texts[codes]
        kept[reason_codes != -1] = None
        values = pd.Series(kept, index=raw.index, dtype=object)
    return values, _reasons(reason_codes, raw.index)


def _reasons(reason_codes: np.ndarray, index: pd.Index) -> pd.Series:
    return pd.Series(
        pd.Categorical.from_codes(reason_codes, categories=REASON_CATEGORIES), index=index
    )


def _mark_invalid(reason_u: np.ndarray, bad_u: np.ndarray) -> None:
    """Distinct texts that are answers but cannot be read become 'invalid'."""
    hit = (reason_u == -1) & bad_u
    reason_u[hit] = _INVALID


def _to_float(text: str) -> float:
    try:
        return float(text)
    except ValueError:
        return math.nan


def _code_lookup(var: Variable) -> Callable[[str | None], str | None]:
    lowered = {k.strip().lower(): v.value for k, v in var.missing_codes.items()}

    def lookup(text: str | None) -> str | None:
        if text is None or not lowered:
            return None
        hit = lowered.get(text.lower())
        if hit is None:
            try:
                hit = lowered.get(format_number(float(text)))
            except (ValueError, OverflowError):
                return None
        return hit

    return lookup


def _split_options(var: Variable, text: str) -> tuple[str, ...] | None:
    """The chosen options of a delimited answer in level order, or None if unreadable."""
    order = {level.lower(): i for i, level in enumerate(var.levels)}
    parts = [p.strip() for p in text.split(var.delimiter or ";") if p.strip()]
    if not parts or any(p.lower() not in order for p in parts):
        return None
    picked = sorted({order[p.lower()] for p in parts})
    return tuple(var.levels[i] for i in picked)


def decode_table(codebook: Codebook, raw: pd.DataFrame) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Decode every codebook variable present in ``raw``; columns follow the codebook order."""
    values: dict[str, pd.Series] = {}
    reasons: dict[str, pd.Series] = {}
    for var in codebook:
        if var.name not in raw.columns:
            continue
        values[var.name], reasons[var.name] = decode_variable(var, raw[var.name])
    _mark_skipped_option_groups(codebook, values, reasons)
    index = raw.index
    return pd.DataFrame(values, index=index), pd.DataFrame(reasons, index=index)


def _mark_skipped_option_groups(
    codebook: Codebook, values: dict[str, pd.Series], reasons: dict[str, pd.Series]
) -> None:
    """A respondent who left every option column of a question blank skipped the question."""
    for members in codebook.groups().values():
        cols = [
            m.name
            for m in members
            if m.kind is Kind.MULTISELECT and not m.delimiter and m.name in values
        ]
        if not cols:
            continue
        chosen_any = np.zeros(len(values[cols[0]]), dtype=bool)
        for c in cols:
            chosen_any |= values[c].to_numpy() == 1.0
        for c in cols:
            r = reasons[c].cat.codes.to_numpy(copy=True)
            skip = ~chosen_any & (r == -1)
            r[skip] = _SKIPPED
            v = values[c].to_numpy(copy=True)
            v[skip] = np.nan
            values[c] = pd.Series(v, index=values[c].index)
            reasons[c] = _reasons(r, values[c].index)


def derive_variables(
    codebook: Codebook, values: pd.DataFrame, reasons: pd.DataFrame
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Add variables grouped from a numeric source (``derived_from`` + ``cut_points``).

    Computed from the source's current values (after cleaning), so a corrected age moves
    into the right age group. A value v falls in group i when cut_points[i-1] <= v <
    cut_points[i]; a missing source value keeps its reason. Returns new frames; the inputs are
    not changed.
    """
    derived = [
        v for v in codebook
        if v.derived_from and v.cut_points and v.derived_from in values.columns
        and len(v.levels) == len(v.cut_points) + 1
    ]
    if not derived:
        return values, reasons
    values = values.copy(deep=False)
    reasons = reasons.copy(deep=False)
    for var in derived:
        source = values[var.derived_from]
        x = pd.to_numeric(source, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
        codes = np.searchsorted(np.asarray(var.cut_points, dtype=float), x, side="right")
        codes = np.where(np.isnan(x), -1, codes)
        values[var.name] = pd.Series(
            pd.Categorical.from_codes(codes, categories=list(var.levels), ordered=True),
            index=values.index,
        )
        reasons[var.name] = reasons[var.derived_from].copy()
    return values, reasons

