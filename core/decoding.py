"""Turn a raw table into decoded values plus a parallel 'why missing' code per cell.

The raw table keeps every cell as imported; what a text *means* (a number, a level, a
missing code) is decided here, from the codebook, never by the file reader.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from core.codebook import Codebook, Variable
from core.kinds import Kind, MissingReason

# Decoded cells that hold text that is not a valid answer for the variable's kind.
INVALID = "invalid"
REASON_CATEGORIES = [r.value for r in MissingReason] + [INVALID]

TRUTHY = {"1", "1.0", "yes", "y", "true", "checked", "selected", "x", "✓", "on"}
FALSY = {"0", "0.0", "no", "n", "false", "unchecked", "off"}


def cell_text(column: pd.Series) -> pd.Series:
    """Each raw cell as the text a codebook refers to (``5.0`` -> ``"5"``); None if blank."""
    return pd.Series(cell_texts(column), index=column.index, dtype=object)


def cell_texts(column: pd.Series) -> np.ndarray:
    """Object array of stripped cell texts, None where the cell is blank."""
    if pd.api.types.is_datetime64_any_dtype(column):
        formatted = column.dt.strftime("%Y-%m-%d %H:%M:%S").str.replace(
            " 00:00:00", "", regex=False
        )
        arr = formatted.to_numpy(dtype=object, na_value=None)
        return arr
    if pd.api.types.is_bool_dtype(column):
        return np.array(
            [None if v is None else str(v).upper() for v in column.astype(object)], dtype=object
        )
    if pd.api.types.is_numeric_dtype(column):
        values = column.to_numpy(dtype=float, na_value=np.nan)
        return np.array([None if math.isnan(x) else format_number(x) for x in values], dtype=object)
    out = np.empty(len(column), dtype=object)
    for i, v in enumerate(column.to_numpy(dtype=object, na_value=None)):
        if v is None or (isinstance(v, float) and math.isnan(v)):
            out[i] = None
        else:
            text = str(v).strip()
            out[i] = text if text else None
    return out


def format_number(x: float) -> str:
    """Shortest text for a number: integers without '.0', others by repr."""
    if x == int(x) and abs(x) < 1e15:
        return str(int(x))
    return repr(float(x))


def decode_variable(
    var: Variable, raw: pd.Series, texts: pd.Series | None = None
) -> tuple[pd.Series, pd.Series]:
    """Decode one column into (values, reasons).

    ``values`` is float for numeric and ranking kinds (and 0/1 per-option choose-all-that-apply
    columns), an ordered or unordered Categorical for kinds with levels, a tuple of chosen
    options for delimited choose-all-that-apply, datetime for dates, and text otherwise.
    ``reasons`` is a Categorical of :data:`REASON_CATEGORIES`, missing where answered.
    """
    key = cell_texts(raw) if texts is None else np.asarray(texts, dtype=object)
    n = len(key)
    reasons = np.full(n, None, dtype=object)
    blank = np.array([t is None for t in key], dtype=bool)
    reasons[blank] = MissingReason.SKIPPED.value
    if var.missing_codes:
        lookup = _code_lookup(var)
        codes = np.array([lookup(t) for t in key], dtype=object)
        coded = np.array([c is not None for c in codes], dtype=bool) & ~blank
        reasons[coded] = codes[coded]
    answered = pd.isna(reasons)
    kind = var.kind
    if kind in (Kind.NUMERIC, Kind.RANKING):
        if pd.api.types.is_numeric_dtype(raw) and not pd.api.types.is_bool_dtype(raw):
            nums = raw.to_numpy(dtype=float, na_value=np.nan).copy()
        else:
            nums = pd.to_numeric(pd.Series(key, dtype=object), errors="coerce").to_numpy(
                dtype=float, na_value=np.nan, copy=True
            )
        bad = answered & np.isnan(nums)
        reasons[bad] = INVALID
        nums[~pd.isna(reasons)] = np.nan
        values: pd.Series = pd.Series(nums, index=raw.index)
    elif kind.has_levels:
        index_of = {level: i for i, level in enumerate(var.levels)}
        codes_arr = np.array(
            [index_of.get(var.value_labels.get(t, t), -1) if t is not None else -1 for t in key],
            dtype=np.int64,
        )
        bad = answered & (codes_arr == -1)
        reasons[bad] = INVALID
        codes_arr[~pd.isna(reasons)] = -1
        cat = pd.Categorical.from_codes(
            codes_arr, categories=list(var.levels), ordered=kind.ordered
        )
        values = pd.Series(cat, index=raw.index)
    elif kind is Kind.MULTISELECT and var.delimiter:
        values, bad = _decode_delimited(var, key, answered, raw.index)
        reasons[bad] = INVALID
    elif kind is Kind.MULTISELECT:
        low = [t.lower() if t is not None else None for t in key]
        option = (var.option or "").lower()
        chosen = np.array(
            [t is not None and (t in TRUTHY or bool(option and t == option)) for t in low],
            dtype=bool,
        )
        not_chosen = np.array([t is None or t in FALSY for t in low], dtype=bool)
        nums = np.where(chosen, 1.0, 0.0)
        # For one-column-per-option questions a blank means "not chosen"; whether the whole
        # question was skipped is decided across the group (see decode_table).
        reasons[blank] = None
        bad = pd.isna(reasons) & ~chosen & ~not_chosen
        reasons[bad] = INVALID
        nums[~pd.isna(reasons)] = np.nan
        values = pd.Series(nums, index=raw.index)
    elif kind is Kind.DATE:
        if pd.api.types.is_datetime64_any_dtype(raw):
            dates = raw.copy()
        else:
            dates = pd.to_datetime(
                pd.Series(key, index=raw.index, dtype=object), errors="coerce", format="mixed"
            )
        bad = answered & dates.isna().to_numpy()
        reasons[bad] = INVALID
        values = dates.where(pd.isna(reasons))
    else:
        kept = np.where(pd.isna(reasons), key, None)
        values = pd.Series(kept, index=raw.index, dtype=object)
    reason_series = pd.Series(
        pd.Categorical(reasons, categories=REASON_CATEGORIES), index=raw.index
    )
    return values, reason_series


def _code_lookup(var: Variable):  # noqa: ANN202 - small private closure
    lowered = {k.strip().lower(): v.value for k, v in var.missing_codes.items()}

    def lookup(text: str | None) -> str | None:
        if text is None:
            return None
        hit = lowered.get(text.lower())
        if hit is None:
            try:
                hit = lowered.get(format_number(float(text)))
            except ValueError:
                return None
        return hit

    return lookup


def _decode_delimited(
    var: Variable, key: np.ndarray, answered: np.ndarray, index: pd.Index
) -> tuple[pd.Series, np.ndarray]:
    delim = var.delimiter or ";"
    order = {level.lower(): i for i, level in enumerate(var.levels)}
    out = np.empty(len(key), dtype=object)
    bad = np.zeros(len(key), dtype=bool)
    for i, (text, ok) in enumerate(zip(key, answered)):
        if not ok or text is None:
            out[i] = None
            continue
        parts = [p.strip() for p in str(text).split(delim) if p.strip()]
        known = [p for p in parts if p.lower() in order]
        if len(known) != len(parts) or not parts:
            bad[i] = True
            out[i] = None
            continue
        picked = sorted(
            {var.levels[order[p.lower()]] for p in known}, key=lambda x: order[x.lower()]
        )
        out[i] = tuple(picked)
    return pd.Series(out, index=index, dtype=object), bad


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
        none_chosen = ~chosen_any
        for c in cols:
            r = reasons[c].astype(object).to_numpy(copy=True)
            skip = none_chosen & pd.isna(r)
            r[skip] = MissingReason.SKIPPED.value
            v = values[c].to_numpy().copy()
            v[skip] = np.nan
            values[c] = pd.Series(v, index=values[c].index)
            reasons[c] = pd.Series(
                pd.Categorical(r, categories=REASON_CATEGORIES), index=values[c].index
            )
