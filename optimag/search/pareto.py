"""Pareto dominance, exact non-dominated filtering, hypervolume and knee selection.

All objectives are minimised. Objective matrices have shape (n_points, n_objectives).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray

#: Rows compared at once when filtering against a front (bounds the n x f boolean block).
_BLOCK_ROWS = 4096

#: Front members used to screen a large batch before the full comparison.
_SCREEN_SIZE = 16


def dominated_by_any(points: ArrayLike, front: ArrayLike) -> BoolArray:
    """Mark the points that some member of ``front`` dominates.

    ``a`` dominates ``b`` when ``a <= b`` in every objective and ``a < b`` in at least one
    (minimisation). Work is done in blocks so memory stays bounded.
    """
    points = np.asarray(points, dtype=float)
    front = np.asarray(front, dtype=float)
    result = np.zeros(len(points), dtype=bool)
    if len(front) == 0 or len(points) == 0:
        return result
    if len(front) > 2 * _SCREEN_SIZE and len(points) > 4 * _SCREEN_SIZE:
        # Most dominated points are dominated by one of a few spread-out front members:
        # screen with those first, then compare only the rest against the whole front.
        spread = np.linspace(0, len(front) - 1, _SCREEN_SIZE).astype(int)
        screen = front[np.lexsort(front.T[::-1])[spread]]
        result = _dominated_blockwise(points, screen)
        rest = np.flatnonzero(~result)
        result[rest] = _dominated_blockwise(points[rest], front)
        return result
    return _dominated_blockwise(points, front)


def _dominated_blockwise(points: np.ndarray, front: np.ndarray) -> BoolArray:
    result = np.zeros(len(points), dtype=bool)
    block = max(1, _BLOCK_ROWS * 64 // max(len(front), 1))
    for start in range(0, len(points), block):
        chunk = points[start : start + block, None, :]
        no_worse = np.all(front[None, :, :] <= chunk, axis=2)
        better = np.any(front[None, :, :] < chunk, axis=2)
        result[start : start + block] = np.any(no_worse & better, axis=1)
    return result


def nondominated_mask(points: ArrayLike) -> BoolArray:
    """Exact mask of the non-dominated rows of ``points`` (ties are all kept).

    Rows are visited in lexicographic order; the lexicographically smallest remaining row
    cannot be dominated by any remaining row, so it joins the front and removes every row it
    dominates. The loop runs once per front member and each pass is vectorised.
    """
    points = np.asarray(points, dtype=float)
    n = len(points)
    mask = np.zeros(n, dtype=bool)
    if n == 0:
        return mask
    if points.shape[1] == 1:
        return points[:, 0] == points[:, 0].min()
    order = np.lexsort(points.T[::-1])
    remaining = order
    while remaining.size:
        leader = remaining[0]
        mask[leader] = True
        rest = remaining[1:]
        candidates = points[rest]
        lead = points[leader]
        dominated = np.all(lead <= candidates, axis=1) & np.any(lead < candidates, axis=1)
        remaining = rest[~dominated]
    return mask


class RunningFront:
    """The Pareto front of every point offered so far, with a payload row per point.

    Memory is proportional to the front size only, whatever the number of points offered.
    """

    def __init__(self, n_objectives: int):
        self.objectives = np.empty((0, n_objectives))
        self.payload: dict[str, np.ndarray] = {}

    def __len__(self) -> int:
        return len(self.objectives)

    def offer(self, objectives: ArrayLike, payload: dict[str, np.ndarray]) -> None:
        """Merge a batch of points (with payload columns of equal length) into the front."""
        objectives = np.asarray(objectives, dtype=float)
        if len(objectives) == 0:
            return
        keep = ~dominated_by_any(objectives, self.objectives)
        objectives = objectives[keep]
        if len(objectives) == 0:
            return
        payload = {key: np.asarray(value)[keep] for key, value in payload.items()}
        local = nondominated_mask(objectives)
        objectives = objectives[local]
        payload = {key: value[local] for key, value in payload.items()}
        merged = np.concatenate([self.objectives, objectives])
        if self.payload:
            merged_payload = {
                key: np.concatenate([self.payload[key], payload[key]]) for key in payload
            }
        else:
            merged_payload = payload
        final = nondominated_mask(merged)
        self.objectives = merged[final]
        self.payload = {key: value[final] for key, value in merged_payload.items()}


def hypervolume(points: ArrayLike, reference: ArrayLike) -> float:
    """Exact hypervolume dominated by ``points`` and bounded by ``reference`` (minimisation).

    Points not strictly better than the reference in every objective contribute nothing.
    Recursive slicing over the last objective ("hypervolume by slicing objectives",
    While, Hingston, Barone, Huband, IEEE Trans. Evol. Comput. 10(1), 2006); exact and
    fast for the two to four objectives optimag uses.
    """
    points = np.asarray(points, dtype=float)
    reference = np.asarray(reference, dtype=float)
    if points.ndim != 2 or len(points) == 0:
        return 0.0
    inside = np.all(points < reference, axis=1)
    points = points[inside]
    if len(points) == 0:
        return 0.0
    points = points[nondominated_mask(points)]
    return _hypervolume_recursive(points, reference)


def _hypervolume_recursive(points: np.ndarray, reference: np.ndarray) -> float:
    n_obj = points.shape[1]
    if n_obj == 1:
        return float(reference[0] - points[:, 0].min())
    if n_obj == 2:
        order = np.argsort(points[:, 0], kind="stable")
        xs = points[order, 0]
        ys = np.minimum.accumulate(points[order, 1])
        widths = np.diff(np.append(xs, reference[0]))
        return float(np.sum(widths * (reference[1] - ys)))
    order = np.argsort(points[:, -1], kind="stable")
    points = points[order]
    total = 0.0
    levels = np.append(points[:, -1], reference[-1])
    for i in range(len(points)):
        depth = levels[i + 1] - levels[i]
        if depth <= 0:
            continue
        slice_points = points[: i + 1, :-1]
        slice_points = slice_points[nondominated_mask(slice_points)]
        total += depth * _hypervolume_recursive(slice_points, reference[:-1])
    return total


#: An objective whose spread over the front is smaller than this fraction of its best
#: value is scaled as if it spread that much, so differences that are negligible in
#: absolute terms (a cost differing by cents) cannot outweigh real trades in the other
#: objectives (common practice, no source).
NEGLIGIBLE_SPREAD = 0.2

#: Name of the normalisation, as written into the run record.
NORMALISATION_METHOD = (
    "each objective minus its best value on the front, divided by the larger of its spread "
    f"over the front and {NEGLIGIBLE_SPREAD:.0%} of the magnitude of its best value"
)

#: Name of the knee rule, as written into the run record.
KNEE_METHOD = "closest to the ideal point (Euclidean) after normalising the objectives"


def normalised_objectives(points: ArrayLike) -> FloatArray:
    """Objectives scaled for comparing trades across objectives (see `NORMALISATION_METHOD`).

    Each column becomes ``(x - best) / max(spread, NEGLIGIBLE_SPREAD * |best|)``: 0 at the
    best value and 1 at the worst when the front spreads widely; when it spreads less
    than ``NEGLIGIBLE_SPREAD`` of the best value, its whole spread maps to less than 1. A
    column that is constant (and zero) maps to 0.
    """
    points = np.asarray(points, dtype=float)
    if points.ndim != 2:
        raise ValueError("objectives must be a 2-D array (points, objectives)")
    if len(points) == 0:
        return points.copy()
    low = points.min(axis=0)
    span = points.max(axis=0) - low
    scale = np.maximum(span, NEGLIGIBLE_SPREAD * np.abs(low))
    scale[scale == 0] = 1.0
    return (points - low) / scale


def knee_index(points: ArrayLike) -> int:
    """Index of the knee of a front: the point closest to the ideal point after
    `normalised_objectives` (common practice, no source)."""
    points = np.asarray(points, dtype=float)
    if len(points) == 0:
        raise ValueError("an empty front has no knee")
    scaled = normalised_objectives(points)
    distance = np.sqrt(np.sum(scaled**2, axis=1))
    return int(np.argmin(distance))
