"""Read the documented ``TableResult.data`` shapes into what a chart needs.

Charts never recompute statistics: they read the numbers the table already shows, so a chart
and its table cannot disagree. Suppressed cells arrive as ``None`` and stay ``None`` here.
"""

from __future__ import annotations

from typing import Any

from core.errors import PlaincountError
from core.tables.result import TableResult

# What kind of numbers a result holds, as far as drawing is concerned.
LEVELS = "levels"  # frequency table, with or without a break-down
BATTERY = "battery"
RANKING = "ranking"
MULTISELECT = "multiselect"
NUMERIC = "numeric"
WAVES = "waves"
NONE = "none"


def shape_of(result: TableResult) -> str:
    """Which of the documented data shapes ``result.data`` has."""
    data = result.data or {}
    if "waves" in data and "percents" in data:
        return WAVES
    if "items" in data and "percents" in data:
        return BATTERY
    if "rank_counts" in data or "points" in data:
        return RANKING
    if "pct_of_choices" in data or ("options" in data and "percents" in data):
        return MULTISELECT
    if "stats" in data or "box" in data or "histogram" in data:
        return NUMERIC
    if "levels" in data and "counts" in data:
        return LEVELS
    return NONE


def has_groups(result: TableResult) -> bool:
    groups = result.data.get("groups")
    return (
        bool(groups)
        and isinstance(result.data.get("counts"), dict)
        and all(isinstance(result.data["counts"].get(g), dict) for g in groups)
    )


def is_likert(result: TableResult) -> bool:
    data = result.data
    return result.kind == "likert" or "neutral_level" in data or "agree_pct" in data


def is_ordered(result: TableResult) -> bool:
    data = result.data
    if "ordered" in data:
        return bool(data["ordered"])
    return result.kind in ("likert", "ordinal")


def levels(result: TableResult) -> list[str]:
    """Answer levels in display order (for waves, the levels of the first wave listed)."""
    data = result.data
    if "levels" in data:
        return [str(x) for x in data["levels"]]
    if "options" in data and "groups" in data:  # choose-all-that-apply by group
        return [str(x) for x in data["options"]]
    if "waves" in data:
        seen: list[str] = []
        for wave in data["waves"]:
            for level in data.get("percents", {}).get(wave) or {}:
                if level not in seen:
                    seen.append(str(level))
        return seen
    return []


def neutral_index(result: TableResult, level_list: list[str]) -> int | None:
    """Position of the neutral level, or None for a scale without one."""
    neutral = result.data.get("neutral_level")
    if neutral is not None and neutral in level_list:
        return level_list.index(neutral)
    return None


# The percent base that gives shares within each break-down group (groups run down the rows).
WITHIN_GROUP = "row"


def group_percents(result: TableResult) -> dict[str, dict[str, float | None]]:
    """Share of each level within each group, in percent (None where suppressed).

    When the table's percentages are already within each group they are used as they are.
    Otherwise (percentages of an answer or of the total) the share within the group is worked
    out from the counts and the group base, because a clustered or 100 % stacked column must
    compare groups on their own footing. A hidden group base hides the whole group.
    """
    data = result.data
    groups = [str(g) for g in data.get("groups", [])]
    lvls = levels(result)
    percent_base = data.get("percent_base") or getattr(result.spec, "percent", WITHIN_GROUP)
    out: dict[str, dict[str, float | None]] = {}
    for g in groups:
        given = (data.get("percents") or {}).get(g)
        if percent_base == WITHIN_GROUP and isinstance(given, dict):
            out[g] = {lv: _num(given.get(lv)) for lv in lvls}
            continue
        counts = (data.get("counts") or {}).get(g) or {}
        base = (data.get("group_bases") or {}).get(g)
        out[g] = {
            lv: (None if counts.get(lv) is None or not base else 100.0 * counts[lv] / base)
            for lv in lvls
        }
    return out


def any_suppressed(values: Any) -> bool:
    """True when any number in a (nested) mapping or list is ``None``."""
    if values is None:
        return True
    if isinstance(values, dict):
        return any(any_suppressed(v) for v in values.values())
    if isinstance(values, (list, tuple)):
        return any(any_suppressed(v) for v in values)
    return False


def _num(value: Any) -> float | None:
    return None if value is None else float(value)


def number(value: Any) -> float | None:
    """A number from the data, or None where the cell is suppressed."""
    return _num(value)


def require(condition: bool, message: str) -> None:
    if not condition:
        raise PlaincountError(message)
