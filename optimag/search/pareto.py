"""Pareto dominance, exact non-dominated filtering, hypervolume and knee selection.

All objectives are minimised. Objective matrices have shape (n_points, n_objectives).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray, IndexArray

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
        # The members are mutually non-dominated and none of the newcomers is dominated by a
        # member or another newcomer: the new front is the members no newcomer dominates,
        # then the newcomers (in that order).
        stay = ~dominated_by_any(self.objectives, objectives)
        self.objectives = np.concatenate([self.objectives[stay], objectives])
        if self.payload:
            self.payload = {
                key: np.concatenate([self.payload[key][stay], payload[key]]) for key in payload
            }
        else:
            self.payload = payload


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


def layer_numbers(points: ArrayLike, stop_after: int | None = None,
                  max_layers: int | None = None) -> IndexArray:
    """Non-dominated sorting: layer 0 is the front, layer 1 the front of the rest, ...

    Points are visited in lexicographic order, where no point can be dominated by a later
    one; each joins the first layer none of whose members dominates it (efficient
    non-dominated sort, Zhang et al., IEEE Trans. Evol. Comput. 19(2), 2015). Blocks of
    points are compared with each layer at once. Layers from ``max_layers`` on, and those
    started after ``stop_after`` points have a layer, are not kept: their points get -1.
    """
    points = np.asarray(points, dtype=float)
    count = len(points)
    layers = np.full(count, -1, dtype=np.int64)
    if count == 0:
        return layers
    order = np.lexsort(points.T[::-1])
    members: list[list[np.ndarray]] = []  # per layer: blocks of its points
    placed = 0
    limit = max_layers if max_layers is not None else count
    block = 256
    for start in range(0, count, block):
        rows = order[start : start + block]
        chunk = points[rows]
        # Lowest layer of earlier blocks that leaves each point undominated.
        base = np.full(len(rows), -1, dtype=np.int64)
        pending = np.arange(len(rows))
        for k, blocks in enumerate(members):
            if not pending.size:
                break
            layer_points = np.concatenate(blocks) if len(blocks) > 1 else blocks[0]
            if len(blocks) > 1:
                members[k] = [layer_points]
            hit = dominated_by_any(chunk[pending], layer_points)
            base[pending[~hit]] = k
            pending = pending[hit]
        base[pending] = len(members)
        # Within the block: a point is at least one layer below any earlier point of the
        # block that dominates it.
        no_worse = np.all(chunk[:, None, :] <= chunk[None, :, :], axis=2)
        better = np.any(chunk[:, None, :] < chunk[None, :, :], axis=2)
        dominates = np.triu(no_worse & better, k=1)  # [q, p]: q (earlier) dominates p
        assigned = base.copy()
        for p in range(1, len(rows)):
            above = dominates[:p, p]
            if above.any():
                assigned[p] = max(assigned[p], int(assigned[:p][above].max()) + 1)
        keep = assigned < limit
        for k in np.unique(assigned[keep]):
            while len(members) <= k:
                members.append([])
            members[int(k)].append(chunk[assigned == k])
        layers[rows[keep]] = assigned[keep]
        placed += int(np.count_nonzero(keep))
        if stop_after is not None and placed > stop_after:
            # No later point can join a layer started so far below the current count:
            # cap the layers at those holding the first stop_after points.
            counts = np.bincount(layers[layers >= 0])
            limit = min(limit, int(np.searchsorted(np.cumsum(counts), stop_after)) + 1)
            members = members[:limit]
            layers[layers >= limit] = -1
            placed = int(np.count_nonzero(layers >= 0))
    return layers


class NearFrontPool:
    """The first few non-dominated layers of every point offered, at most ``cap`` points
    (whole layers only; the first layer is kept whatever its size).

    A point's layer among a subset is never deeper than among the whole set, so a point
    dropped at a prune (layer k or deeper there) is at layer k or deeper overall; the pool
    prunes to the same or fewer layers each time, and so ends holding exactly the first
    ``layers`` layers of everything offered. Once pruned, an offered point that a member
    of the deepest layer kept dominates is at least one layer deeper, beyond the pool, and
    is not taken in at all (this keeps prunes rare).
    """

    def __init__(self, n_objectives: int, cap: int = 20_000):
        self.cap = cap
        self.objectives = np.empty((0, n_objectives))
        self.payload: dict[str, np.ndarray] = {}
        #: Layers held (None: every point offered is still held).
        self.layers: int | None = None
        #: Members of the deepest layer held at the last prune (the screen of `offer`).
        self._deepest = np.empty((0, n_objectives))

    def __len__(self) -> int:
        return len(self.objectives)

    def offer(self, objectives: ArrayLike, payload: dict[str, np.ndarray]) -> None:
        objectives = np.asarray(objectives, dtype=float)
        if len(objectives) and len(self._deepest):
            near = ~dominated_by_any(objectives, self._deepest)
            objectives = objectives[near]
            payload = {k: np.asarray(v)[near] for k, v in payload.items()}
        if len(objectives) == 0:
            return
        self.objectives = np.concatenate([self.objectives, objectives])
        if self.payload:
            self.payload = {k: np.concatenate([v, np.asarray(payload[k])])
                            for k, v in self.payload.items()}
        else:
            self.payload = {k: np.asarray(v) for k, v in payload.items()}
        if len(self.objectives) > 2 * self.cap:
            self.prune()

    def merge(self, other: NearFrontPool) -> None:
        """Take in another pool's points (as if they had been offered here)."""
        self.offer(other.objectives, other.payload)
        if other.layers is not None:
            self.prune(other.layers)

    def prune(self, at_most: int | None = None) -> None:
        """Keep the first layers that fit in ``cap`` points (and at most ``at_most``
        layers, and no more than any earlier prune kept)."""
        if not len(self.objectives):
            return
        layers = layer_numbers(self.objectives, stop_after=self.cap,
                               max_layers=self.layers)
        held = layers[layers >= 0]
        counts = np.bincount(held)
        fitting = int(np.searchsorted(np.cumsum(counts), self.cap, side="right"))
        keep_layers = max(1, fitting)
        for bound in (at_most, self.layers):
            if bound is not None:
                keep_layers = min(keep_layers, bound)
        everything = keep_layers >= len(counts) and np.all(layers >= 0)
        if everything and self.layers is None and at_most is None:
            return  # everything fits: nothing dropped, no layer bound yet
        keep = (layers >= 0) & (layers < keep_layers)
        self._deepest = self.objectives[layers == keep_layers - 1]
        self.objectives = self.objectives[keep]
        self.payload = {k: v[keep] for k, v in self.payload.items()}
        self.layers = keep_layers
