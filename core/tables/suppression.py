"""Small-cell protection: hide counts that could identify people, and enough others besides.

Primary suppression hides every count from 1 up to the threshold minus one (zeros stay
visible, as in the US CMS cell-size policy, METHODS.md section 11). Complementary suppression
then hides further cells so that no hidden count can be worked out by subtracting the shown
cells from a shown row or column total.

How the complementary step decides: treat every line of the table whose total is published
(a row with its row total, a column with its column total) as an equation. Hidden cells are
the unknowns; each hidden cell lies on at most two lines. Draw a graph with one node per
line and one edge per hidden cell (a line without a published total is a free end, merged
into a single node ``FREE``). A hidden cell's value is fixed by the equations exactly when its
edge is a bridge of that graph (removing it disconnects its two lines); when the edge lies on
a cycle, adding +e and -e alternately around the cycle keeps every line total, so the cell
can take a range of values. For each bridge in turn, the loop below hides the cheapest path
of shown cells (smallest total count, found by Dijkstra's algorithm) that closes a cycle
through it, until no bridge is left. The test suite checks the result with a
linear programme (the interval of every hidden cell has width > 0).
"""

from __future__ import annotations

import heapq
from collections import defaultdict
from dataclasses import dataclass

import numpy as np

FREE = ("free", -1)


@dataclass(frozen=True)
class Suppression:
    """Which cells of a table to hide. Arrays follow the table's shape (rows x columns)."""

    cells: np.ndarray  # bool, r x c
    row_totals: np.ndarray  # bool, r
    col_totals: np.ndarray  # bool, c
    grand: bool
    primary: int
    secondary: int
    threshold: int
    # Cells known to be below the threshold (shown as "<k"), zeros of a small group included.
    small: np.ndarray | None = None  # bool, r x c

    def is_small(self, i: int, j: int) -> bool:
        return bool(self.small is not None and self.small[i, j])

    @property
    def any(self) -> bool:
        return bool(self.primary or self.secondary)


def no_suppression(shape: tuple[int, int], threshold: int = 0) -> Suppression:
    r, c = shape
    return Suppression(
        np.zeros((r, c), dtype=bool),
        np.zeros(r, dtype=bool),
        np.zeros(c, dtype=bool),
        False,
        0,
        0,
        threshold,
    )


def suppress(
    counts: np.ndarray,
    threshold: int,
    *,
    row_totals: bool = True,
    col_totals: bool = True,
    protect_totals: bool = True,
    row_weights: np.ndarray | None = None,
) -> Suppression:
    """Decide which counts to hide in a table of counts with (optionally) its totals.

    Parameters
    ----------
    counts
        The interior counts, rows x columns (a one-way table is one column).
    threshold
        Counts from 1 to ``threshold - 1`` are hidden; 0 or 1 turns suppression off.
    row_totals, col_totals
        Whether the table shows a total for each row / each column (and so publishes that
        line's equation). With both, the grand total is shown too.
    protect_totals
        Whether small totals are hidden too (a group of three people is itself a small
        count). When False, totals are always shown and only interior cells are hidden.
    row_weights
        Weights (rows x columns) of a further published number per row, such as Borda
        points = sum of points per place x count per place. The check then includes these
        equations too, so a hidden count cannot be solved from them either.

    Returns
    -------
    Suppression
        Masks for the interior, the row totals, the column totals and the grand total.
    """
    counts = np.asarray(counts, dtype=float)
    if counts.ndim == 1:
        counts = counts[:, None]
    r, c = counts.shape
    if threshold <= 1 or counts.size == 0:
        return no_suppression((r, c), threshold)
    ext = np.zeros((r + 1, c + 1))
    ext[:r, :c] = counts
    ext[:r, c] = counts.sum(axis=1)
    ext[r, :c] = counts.sum(axis=0)
    ext[r, c] = counts.sum()
    interior = np.zeros((r + 1, c + 1), dtype=bool)
    interior[:r, :c] = True
    exists = np.zeros((r + 1, c + 1), dtype=bool)
    exists[:r, :c] = True
    if row_totals:
        exists[:r, c] = True
    if col_totals:
        exists[r, :c] = True
    if row_totals and col_totals:
        exists[r, c] = True

    def row_node(i: int) -> tuple[str, int]:
        # A row line is an equation only if its total is shown.
        constrained = (i < r and row_totals) or (i == r and row_totals and col_totals)
        return ("row", i) if constrained else FREE

    def col_node(j: int) -> tuple[str, int]:
        constrained = (j < c and col_totals) or (j == c and row_totals and col_totals)
        return ("col", j) if constrained else FREE

    hideable = exists if protect_totals else exists & interior
    hidden = hideable & (ext > 0) & (ext < threshold)
    # In a line whose total is itself small (a group of fewer than k people) every cell is
    # small, zeros included: hide them all, so "<k" cells and a "<k" total pin nothing down.
    for i in np.flatnonzero(hidden[:, c]):
        hidden[i, :] |= hideable[i, :]
    for j in np.flatnonzero(hidden[r, :]):
        hidden[:, j] |= hideable[:, j]
    small_line = np.zeros_like(hidden)
    small_line[np.flatnonzero(hidden[:, c] & hideable[:, c]), :] = True
    small_line[:, np.flatnonzero(hidden[r, :] & hideable[r, :])] = True
    primary = int(hidden.sum())
    if primary == 0:
        return no_suppression((r, c), threshold)
    primary_mask = hidden.copy()
    for _ in range(exists.size):  # each pass hides at least one more cell, so this ends
        _close_bridges(hidden, hideable, ext, interior, row_node, col_node)
        # The bridge rule treats hidden cells as free; a reader also knows that a "<k" cell
        # lies in 1..k-1 and that other hidden cells are 0 or at least k. Check with those
        # bounds too, and widen the pattern where they pin a cell down.
        exposed = exposed_cells(
            ext,
            exists,
            hidden,
            primary_mask,
            threshold,
            row_node,
            col_node,
            small_line,
            row_weights,
        )
        if not exposed:
            break
        if not _extend(exposed[0], hidden, hideable, ext, interior):
            break
    secondary = int(hidden.sum()) - primary
    return Suppression(
        cells=hidden[:r, :c].copy(),
        row_totals=hidden[:r, c].copy() if row_totals else np.zeros(r, dtype=bool),
        col_totals=hidden[r, :c].copy() if col_totals else np.zeros(c, dtype=bool),
        grand=bool(hidden[r, c]) if row_totals and col_totals else False,
        primary=primary,
        secondary=secondary,
        threshold=threshold,
        small=(primary_mask & (small_line | (ext > 0)))[:r, :c].copy(),
    )


def _close_bridges(hidden, hideable, ext, interior, row_node, col_node) -> None:
    for _ in range(hidden.size):
        bridge = _find_bridge(hidden, row_node, col_node)
        if bridge is None:
            return
        path = _cheapest_path(bridge, hidden, hideable, ext, interior, row_node, col_node)
        if not path:
            # No path closes a cycle: hide every shown cell of both lines (safe).
            i, j = bridge
            hidden[i, :] |= hideable[i, :]
            hidden[:, j] |= hideable[:, j]
        else:
            for cell in path:
                hidden[cell] = True


def _extend(cell, hidden, hideable, ext, interior) -> bool:
    """Hide the cheapest shown non-zero cell on one of ``cell``'s lines; False if none."""
    i, j = cell
    best = None
    for ci, cj in np.argwhere(hideable & ~hidden):
        if ci != i and cj != j:
            continue
        key = (ext[ci, cj] <= 0, not interior[ci, cj], ext[ci, cj], int(ci), int(cj))
        if best is None or key < best:
            best = key
    if best is None:
        return False
    hidden[best[3], best[4]] = True
    return True


def exposed_cells(
    ext: np.ndarray,
    exists: np.ndarray,
    hidden: np.ndarray,
    primary: np.ndarray,
    threshold: int,
    row_node,
    col_node,
    small_line: np.ndarray | None = None,
    row_weights: np.ndarray | None = None,
) -> list[tuple[int, int]]:
    """Hidden cells whose possible values, given every shown number, span less than 1.

    Each hidden cell is minimised and maximised by linear programming subject to the
    published line totals, with the bounds a reader can infer: 1..threshold-1 for a
    small-count cell (0..threshold-1 inside a group smaller than the threshold), at least
    ``threshold`` for other hidden cells (at least 0 for a hidden zero). A span below 1
    means the whole-number value is known.
    """
    from scipy.optimize import linprog

    cells = [tuple(int(v) for v in x) for x in np.argwhere(hidden)]
    if not cells:
        return []
    index = {cell: k for k, cell in enumerate(cells)}
    r, c = ext.shape[0] - 1, ext.shape[1] - 1
    rows_a, rhs = [], []
    lines = [("row", i) for i in range(r + 1)] + [("col", j) for j in range(c + 1)]
    for kind, k in lines:
        node = row_node(k) if kind == "row" else col_node(k)
        if node == FREE:
            continue
        if kind == "row":
            members = [((k, j), 1.0) for j in range(c)] + [((k, c), -1.0)]
        else:
            members = [((i, k), 1.0) for i in range(r)] + [((r, k), -1.0)]
        coeffs = np.zeros(len(cells))
        known = 0.0
        for cell, sign in members:
            if not exists[cell]:
                continue
            if cell in index:
                coeffs[index[cell]] += sign
            else:
                known += sign * ext[cell]
        if coeffs.any():
            rows_a.append(coeffs)
            rhs.append(-known)
    bounds = []
    for cell in cells:
        if primary[cell] and small_line is not None and small_line[cell]:
            bounds.append((0.0, threshold - 1.0))
        elif primary[cell]:
            bounds.append((1.0, threshold - 1.0))
        elif ext[cell] >= threshold:
            bounds.append((float(threshold), None))
        else:
            bounds.append((0.0, None))
    if row_weights is not None:
        weights = np.asarray(row_weights, dtype=float)
        for i in range(r):
            coeffs = np.zeros(len(cells))
            known = 0.0
            for j in range(c):
                if (i, j) in index:
                    coeffs[index[(i, j)]] = weights[i, j]
                else:
                    known += weights[i, j] * ext[i, j]
            if coeffs.any():
                rows_a.append(coeffs)
                rhs.append(float(weights[i] @ ext[i, :c]) - known)
    if len(rows_a) <= 1 and row_weights is None:
        return _exposed_on_one_line(cells, rows_a, rhs, bounds)
    a_eq = np.array(rows_a) if rows_a else None
    b_eq = np.array(rhs) if rows_a else None
    exposed = []
    for k, cell in enumerate(cells):
        cost = np.zeros(len(cells))
        cost[k] = 1.0
        lo = linprog(cost, A_eq=a_eq, b_eq=b_eq, bounds=bounds, method="highs")
        hi = linprog(-cost, A_eq=a_eq, b_eq=b_eq, bounds=bounds, method="highs")
        if lo.status == 3 or hi.status == 3:  # unbounded: certainly not pinned down
            continue
        if lo.status != 0 or hi.status != 0:
            continue
        if (-hi.fun) - lo.fun < 1.0 - 1e-9:
            exposed.append(cell)
    return exposed


def _exposed_on_one_line(cells, rows_a, rhs, bounds) -> list[tuple[int, int]]:
    """The same check in closed form when a single equation links the hidden cells."""
    lo = np.array([b[0] for b in bounds], dtype=float)
    # (Tables with one equation - one-way tables - are checked here without an LP solver.)
    hi = np.array([np.inf if b[1] is None else b[1] for b in bounds], dtype=float)
    if not rows_a:
        return [cell for cell, a, b in zip(cells, lo, hi) if b - a < 1.0 - 1e-9]
    coeffs, total = rows_a[0], rhs[0]
    exposed = []
    on = coeffs != 0
    # Each equation here has coefficients +1 or -1; write it as sum(s_i x_i) = total.
    s_lo = np.where(coeffs > 0, lo, -hi)
    s_hi = np.where(coeffs > 0, hi, -lo)

    def rest(values: np.ndarray, k: int) -> float:
        # Sum over the other cells of the line, careful with unbounded (infinite) ends.
        others = np.delete(values, k)[np.delete(on, k)]
        return (
            float(others.sum())
            if np.isfinite(others).all()
            else float(others[~np.isfinite(others)][0])
        )

    for k, cell in enumerate(cells):
        if not on[k]:
            if hi[k] - lo[k] < 1.0 - 1e-9:
                exposed.append(cell)
            continue
        rest_lo, rest_hi = rest(s_lo, k), rest(s_hi, k)
        term_lo = max(s_lo[k], total - rest_hi)
        term_hi = min(s_hi[k], total - rest_lo)
        if term_hi - term_lo < 1.0 - 1e-9:
            exposed.append(cell)
    return exposed


def _edges(hidden: np.ndarray, row_node, col_node) -> list[tuple[tuple[int, int], tuple, tuple]]:
    return [((int(i), int(j)), row_node(int(i)), col_node(int(j))) for i, j in np.argwhere(hidden)]


def _component(start: tuple, adj: dict, skip: tuple[int, int]) -> set:
    seen = {start}
    stack = [start]
    while stack:
        node = stack.pop()
        for cell, other in adj[node]:
            if cell == skip or other in seen:
                continue
            seen.add(other)
            stack.append(other)
    return seen


def _adjacency(edges) -> dict:
    adj: dict = defaultdict(list)
    for cell, a, b in edges:
        adj[a].append((cell, b))
        adj[b].append((cell, a))
    return adj


def _find_bridge(hidden: np.ndarray, row_node, col_node) -> tuple[int, int] | None:
    """A hidden cell whose value the published totals determine, or None."""
    edges = _edges(hidden, row_node, col_node)
    adj = _adjacency(edges)
    for cell, a, b in edges:
        if a == b:  # both lines free: nothing constrains this cell
            continue
        if b not in _component(a, adj, cell):
            return cell
    return None


def _cheapest_path(bridge, hidden, hideable, ext, interior, row_node, col_node):
    """Shown cells to hide so that ``bridge`` lies on a cycle, losing as little as possible.

    Dijkstra from one end of the bridge to the other over all hideable cells except the
    bridge itself: hidden cells cost nothing, shown cells cost their value (totals a little
    more, zeros a lot, since a hidden zero can only move upwards).
    """
    i, j = bridge
    start, goal = row_node(i), col_node(j)
    adj: dict = defaultdict(list)
    big = float(ext.max()) + 1.0
    for ci, cj in np.argwhere(hideable):
        cell = (int(ci), int(cj))
        if cell == bridge:
            continue
        if hidden[cell]:
            cost = 0.0
        else:
            value = float(ext[cell])
            cost = value if value > 0 else 1000.0 * big
            if not interior[cell]:
                cost += big  # keep totals visible when an interior cell will do
        a, b = row_node(cell[0]), col_node(cell[1])
        adj[a].append((b, cell, cost))
        adj[b].append((a, cell, cost))
    dist = {start: 0.0}
    back: dict = {}
    heap = [(0.0, 0, start)]
    tick = 1
    while heap:
        d, _, node = heapq.heappop(heap)
        if node == goal:
            break
        if d > dist.get(node, float("inf")):
            continue
        for other, cell, cost in adj[node]:
            nd = d + cost
            if nd < dist.get(other, float("inf")):
                dist[other] = nd
                back[other] = (node, cell)
                heapq.heappush(heap, (nd, tick, other))
                tick += 1
    if goal not in back:
        return None
    cells = []
    node = goal
    while node != start:
        node, cell = back[node]
        if not hidden[cell]:
            cells.append(cell)
    return cells
