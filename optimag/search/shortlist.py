"""Choosing a short-list that spans the whole Pareto front.

The front is normalised (`optimag.search.pareto.normalised_objectives`), so every
objective counts by its real spread. The short-list then takes, in this order:

1. the knee (`optimag.search.pareto.knee_index`);
2. the best and the worst member in each objective, so the list reaches both ends of every
   objective's range on the front;
3. one representative per cluster of a k-means partition of the normalised front (the
   member nearest each centre, largest clusters first), so the rest of the list follows
   where the front has designs;
4. if places remain, the member farthest from everything chosen so far.

No more than `MAX_PER_GROUP` designs share a (core, material, turns) group while another
group still has a member to offer; only when the front has too few distinct groups does
the cap rise, one design at a time.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray, IndexArray
from optimag.search.pareto import knee_index, normalised_objectives

#: At most this many short-listed designs share a (core, material, turns) group, unless the
#: front has fewer distinct groups than the short-list needs.
MAX_PER_GROUP = 2

#: Lloyd iterations of the k-means partition (it converges well before on fronts of a
#: few thousand points; the result is deterministic either way).
KMEANS_ITERATIONS = 50

#: Name of the method, as written into the run record.
SHORTLIST_METHOD = (
    "knee, then the best and worst design in each objective, then the member nearest each "
    "centre of a k-means partition of the normalised front (largest clusters first), then "
    f"farthest-point fill; at most {MAX_PER_GROUP} designs per (core, material, turns) "
    "unless the front has fewer distinct ones"
)


def kmeans(points: ArrayLike, k: int, first: int = 0,
           iterations: int = KMEANS_ITERATIONS) -> tuple[FloatArray, IndexArray]:
    """Deterministic k-means (Lloyd's algorithm) seeded by farthest-point traversal.

    Lloyd, "Least squares quantization in PCM", IEEE Trans. Inf. Theory 28(2), 1982; the
    seeds are the farthest-point traversal of Gonzalez, "Clustering to minimize the maximum
    intercluster distance", Theor. Comput. Sci. 38, 1985, started at row ``first``.

    Parameters
    ----------
    points : array (n, d)  Points to partition [-]
    k : int  Number of clusters, 1 <= k <= n [-]
    first : int  Row of the first seed [-]
    iterations : int  Maximum Lloyd iterations [-]

    Returns
    -------
    centres : array (k, d)
    labels : array (n,)  Cluster of each point.
    """
    points = np.asarray(points, dtype=float)
    n = len(points)
    if not 1 <= k <= n:
        raise ValueError(f"k must be between 1 and the number of points ({n}), got {k}")
    seeds = [int(first)]
    nearest = np.sum((points - points[first]) ** 2, axis=1)
    for _ in range(1, k):
        nxt = int(np.argmax(nearest))
        seeds.append(nxt)
        nearest = np.minimum(nearest, np.sum((points - points[nxt]) ** 2, axis=1))
    centres = points[seeds].copy()
    labels = np.full(n, -1, dtype=np.int64)
    for _ in range(iterations):
        distance = np.sum((points[:, None, :] - centres[None, :, :]) ** 2, axis=2)
        new_labels = np.argmin(distance, axis=1)
        if np.array_equal(new_labels, labels):
            break
        labels = new_labels
        for j in range(k):
            members = labels == j
            if np.any(members):
                centres[j] = points[members].mean(axis=0)
    return centres, labels


def spread_shortlist(points: ArrayLike, groups: ArrayLike, top: int) -> list[int]:
    """Rows of a Pareto front to short-list (see the module docstring), knee first.

    Parameters
    ----------
    points : array (n, m)  Objective values of the front, all minimised [-]
    groups : array (n,) or (n, g)  A label (or a row of labels) per front row; rows with
        equal labels share a (core, material, turns) group [-]
    top : int  Short-list length; fewer rows are returned only when the front is smaller [-]

    Returns
    -------
    list of int  Distinct row indices, the knee first.
    """
    points = np.asarray(points, dtype=float)
    groups = np.asarray(groups)
    n = len(points)
    if n == 0 or top < 1:
        return []
    want = min(top, n)
    scaled = normalised_objectives(points)
    knee = knee_index(points)
    _, group_id = np.unique(groups, axis=0 if groups.ndim > 1 else None, return_inverse=True)
    group_id = group_id.reshape(-1)
    cap = MAX_PER_GROUP
    chosen: list[int] = []
    per_group = np.zeros(int(group_id.max()) + 1, dtype=np.int64)
    taken = np.zeros(n, dtype=bool)

    def take(row: int) -> bool:
        if taken[row] or per_group[group_id[row]] >= cap or len(chosen) >= want:
            return False
        chosen.append(int(row))
        taken[row] = True
        per_group[group_id[row]] += 1
        return True

    def open_rows() -> BoolArray:
        return ~taken & (per_group[group_id] < cap)

    # The ends of every objective: among the rows tied at an end, the one nearest the knee.
    to_knee = np.sum((scaled - scaled[knee]) ** 2, axis=1)
    ends = [np.flatnonzero(points[:, column] == end)
            for column in range(points.shape[1])
            for end in (points[:, column].min(), points[:, column].max())]

    def take_ends() -> None:
        for rows in ends:
            if np.any(taken[rows]):
                continue
            rows = rows[open_rows()[rows]]
            if rows.size:
                take(int(rows[np.argmin(to_knee[rows])]))

    take(knee)
    take_ends()

    remaining = want - len(chosen)
    if remaining > 0:
        centres, labels = kmeans(scaled, min(remaining, n), first=knee)
        sizes = np.bincount(labels, minlength=len(centres))
        for cluster in np.argsort(-sizes, kind="stable"):
            members = np.flatnonzero((labels == cluster) & open_rows())
            if members.size == 0 or np.any(taken[labels == cluster]):
                continue
            gap = np.sum((scaled[members] - centres[cluster]) ** 2, axis=1)
            take(int(members[np.argmin(gap)]))

    while len(chosen) < want:
        candidates = np.flatnonzero(open_rows())
        if candidates.size == 0:
            cap += 1  # every group with members left is at the cap: too few groups
            take_ends()
            continue
        distance = np.min(
            np.sum((scaled[candidates, None, :] - scaled[None, chosen, :]) ** 2, axis=2), axis=1
        )
        take(int(candidates[np.argmax(distance)]))
    return chosen


def range_coverage(front: ArrayLike, subset: ArrayLike) -> FloatArray:
    """Per objective, the share of the front's range that ``subset`` spans (1 for an
    objective that is constant on the front)."""
    front = np.asarray(front, dtype=float)
    subset = np.asarray(subset, dtype=float)
    span = front.max(axis=0) - front.min(axis=0)
    covered = subset.max(axis=0) - subset.min(axis=0)
    return np.where(span > 0, covered / np.where(span > 0, span, 1.0), 1.0)
