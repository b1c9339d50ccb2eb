"""Small-cell suppression: no hidden count can be worked out from what a table shows.

The check is the one METHODS.md section 11 describes: solve the linear system formed by the
published cells and margins and confirm every hidden cell has a feasible interval of width
greater than zero (here: at least one whole number wide), using scipy.optimize.linprog.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import linprog

from core.tables.suppression import suppress

# METHODS.md section 11, worked case (threshold: show counts >= 11).
CASE = np.array([[25, 7, 30], [40, 22, 18]])


def intervals(counts: np.ndarray, sup, threshold: int, reader_bounds: bool, weights=None) -> dict:
    """Min and max of each hidden cell given every shown number of the table.

    With ``reader_bounds`` a "<k" cell is known to lie in 1..k-1 (0..k-1 in a group whose
    total is itself below k) and a "–" cell to be 0 or at least k (relaxed to >= 0 for zeros).
    Without, every hidden cell is only known to be >= 0 (the plain METHODS.md check).
    """
    r, c = counts.shape
    ext = np.zeros((r + 1, c + 1))
    ext[:r, :c] = counts
    ext[:r, c] = counts.sum(1)
    ext[r, :c] = counts.sum(0)
    ext[r, c] = counts.sum()
    hid = np.zeros_like(ext, dtype=bool)
    hid[:r, :c] = sup.cells
    hid[:r, c] = sup.row_totals
    hid[r, :c] = sup.col_totals
    hid[r, c] = sup.grand
    cells = [tuple(x) for x in np.argwhere(hid)]
    idx = {cell: k for k, cell in enumerate(cells)}
    a_eq, b_eq = [], []
    for i in range(r + 1):  # each row: interior cells sum to the row total
        row = np.zeros(len(cells))
        known = 0.0
        for j in range(c + 1):
            sign = -1.0 if j == c else 1.0
            if (i, j) in idx:
                row[idx[(i, j)]] += sign
            else:
                known += sign * ext[i, j]
        a_eq.append(row)
        b_eq.append(-known)
    for j in range(c + 1):
        col = np.zeros(len(cells))
        known = 0.0
        for i in range(r + 1):
            sign = -1.0 if i == r else 1.0
            if (i, j) in idx:
                col[idx[(i, j)]] += sign
            else:
                known += sign * ext[i, j]
        a_eq.append(col)
        b_eq.append(-known)
    if weights is not None:  # a further published number per row, e.g. Borda points
        for i in range(r):
            row = np.zeros(len(cells))
            known = 0.0
            for j in range(c):
                if (i, j) in idx:
                    row[idx[(i, j)]] = weights[i, j]
                else:
                    known += weights[i, j] * ext[i, j]
            a_eq.append(row)
            b_eq.append(float(weights[i] @ counts[i]) - known)
    small_rows = {i for i in range(r) if 0 < ext[i, c] < threshold}
    small_cols = {j for j in range(c) if 0 < ext[r, j] < threshold}
    bounds = []
    for i, j in cells:
        v = ext[i, j]
        if not reader_bounds:
            bounds.append((0, None))
        elif i in small_rows or j in small_cols:
            bounds.append((0, threshold - 1))
        elif 0 < v < threshold:
            bounds.append((1, threshold - 1))
        elif v >= threshold:
            bounds.append((threshold, None))
        else:
            bounds.append((0, None))
    out = {}
    for k, cell in enumerate(cells):
        cost = np.zeros(len(cells))
        cost[k] = 1
        lo = linprog(cost, A_eq=a_eq, b_eq=b_eq, bounds=bounds, method="highs")
        hi = linprog(-cost, A_eq=a_eq, b_eq=b_eq, bounds=bounds, method="highs")
        assert lo.status == 0
        upper = np.inf if hi.status == 3 else -hi.fun
        out[cell] = (lo.fun, upper)
    return out


def test_methods_worked_case_hides_the_rectangle():
    sup = suppress(CASE, 11)
    # The minimal pattern of METHODS.md: A2, A3, B2, B3; margins stay visible.
    assert sup.cells.tolist() == [[False, True, True], [False, True, True]]
    assert not sup.row_totals.any() and not sup.col_totals.any() and not sup.grand
    assert (sup.primary, sup.secondary) == (1, 3)
    spans = intervals(CASE, sup, 11, reader_bounds=False)
    assert spans[(0, 1)] == pytest.approx((0, 29))  # "A2 can be anything in [0, 29]"
    assert all(hi - lo > 0 for lo, hi in spans.values())
    spans = intervals(CASE, sup, 11, reader_bounds=True)
    assert all(hi - lo >= 1 for lo, hi in spans.values())


def test_hiding_the_small_cell_alone_would_fail():
    only = suppress(CASE, 11)
    only_primary = type(only)(
        np.array([[False, True, False], [False, False, False]]),
        np.zeros(2, bool),
        np.zeros(3, bool),
        False,
        1,
        0,
        11,
    )
    spans = intervals(CASE, only_primary, 11, reader_bounds=False)
    assert spans[(0, 1)] == pytest.approx((7, 7))  # A2 = 62 - 25 - 30


def test_threshold_zero_or_one_turns_suppression_off():
    for k in (0, 1):
        sup = suppress(CASE, k)
        assert not sup.cells.any() and sup.primary == 0


def test_zeros_stay_visible_and_one_way_tables():
    sup = suppress(np.array([3, 10, 20, 1, 40]), 5, row_totals=False, protect_totals=False)
    assert sup.cells[:, 0].tolist() == [True, False, False, True, False]
    sup = suppress(np.array([0, 10, 20, 3, 40]), 5, row_totals=False, protect_totals=False)
    assert sup.cells[0, 0] == False  # noqa: E712 - a zero is shown
    assert sup.cells[:, 0].sum() == 2  # 3 and the smallest other count, 10


def test_a_small_group_is_hidden_whole():
    counts = np.array([[24, 21, 13], [21, 17, 10], [1, 0, 2]])
    sup = suppress(counts, 5)
    assert sup.cells[2].all() and sup.row_totals[2]
    assert sup.small[2].all()  # its zero reads "<5" too
    spans = intervals(counts, sup, 5, reader_bounds=True)
    assert all(hi - lo >= 1 for lo, hi in spans.values())


@settings(max_examples=40, deadline=None)
@given(
    st.integers(min_value=2, max_value=5).flatmap(
        lambda r: st.integers(min_value=2, max_value=5).flatmap(
            lambda c: st.lists(
                st.lists(st.integers(min_value=0, max_value=40), min_size=c, max_size=c),
                min_size=r,
                max_size=r,
            )
        )
    ),
    st.sampled_from([3, 5, 11]),
)
def test_no_hidden_cell_is_recoverable_in_random_tables(rows, threshold):
    # Property check (no published source): random small tables, every hidden cell keeps a
    # feasible interval at least one whole number wide.
    counts = np.array(rows)
    sup = suppress(counts, threshold)
    small = (counts > 0) & (counts < threshold)
    assert (sup.cells | ~small).all()  # every small interior count is hidden
    if sup.primary:
        spans = intervals(counts, sup, threshold, reader_bounds=False)
        assert all(hi - lo > 0 for lo, hi in spans.values())
        spans = intervals(counts, sup, threshold, reader_bounds=True)
        assert all(hi - lo >= 1 - 1e-9 for lo, hi in spans.values())


def test_weighted_row_totals_such_as_borda_points_are_checked_too():
    # Invented rank-count table (options x places 1-4 and "not ranked"); the points per
    # option (3, 2, 1, 0 per place) are published beside it.
    counts = np.array([[24, 3, 4, 9, 0], [6, 24, 7, 3, 0], [3, 8, 26, 3, 0], [7, 5, 3, 25, 0]])
    weights = np.tile([3.0, 2.0, 1.0, 0.0, 0.0], (4, 1))
    plain = suppress(counts, 5)
    spans = intervals(counts, plain, 5, reader_bounds=False, weights=weights)
    assert any(hi - lo < 1 for lo, hi in spans.values())  # points would give a count away
    sup = suppress(counts, 5, row_weights=weights)
    spans = intervals(counts, sup, 5, reader_bounds=True, weights=weights)
    assert all(hi - lo >= 1 - 1e-9 for lo, hi in spans.values())
