"""Why a study has no feasible design: what each constraint rules out on its own, and the
designs that came closest, one per core.

Two figures explain an infeasible study beside the first-failed count of the search:

* **fails alone** — per constraint, the candidates that violate it and no other one:
  relaxing only that limit would admit exactly that many;
* **nearest misses** — the least-violating candidate of each core, the cores ranked by
  it. Every constraint's violation is normalised by its own limit (``value / limit - 1``
  and the like, `optimag.model`), so a height, a temperature and an inductance compare.

The exhaustive pass (`diagnose_exhaustive`) walks the space in the same blocks as the
search (`optimag.search.exhaustive`) and keeps every count exact: a candidate with two
violations among the magnetic and winding constraints cannot fail anything alone, so only
candidates with at most one of those go on to the loss-temperature stage, a chunk at a
time. The optuna strategy gives the same account over its evaluated trials
(`diagnose_rows`).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from optimag import model
from optimag.search import exhaustive as ex

#: Cores shown among the nearest misses, at most.
NEAR_MISS_CORES = 5

#: How the nearest misses are chosen, in words (run.json, report).
NEAR_MISS_METHOD = (
    "the candidate with the smallest worst normalised violation (each constraint's "
    "excess divided by its own limit) of each core, cores ranked by it"
)


@dataclass
class Diagnosis:
    """What rules a study's candidates out.

    fails_alone : per constraint name, candidates that violate it and no other one
    near_misses : the nearest miss of each of up to `NEAR_MISS_CORES` cores, best first
    near_miss_violation : their worst normalised violation
    scope : what was counted ("every candidate of the space", "evaluated trials")
    candidates : how many candidates the counts cover
    """

    fails_alone: dict[str, int]
    near_misses: model.Candidates | None
    near_miss_violation: np.ndarray
    scope: str
    candidates: int
    wall_time_s: float = 0.0

    def record(self) -> dict:
        """run.json's account of the diagnosis."""
        return {
            "fails_alone": {k: int(v) for k, v in self.fails_alone.items()},
            "fails_alone_meaning": "candidates that violate this constraint and no other: "
            "relaxing only this limit would admit them",
            "scope": self.scope,
            "candidates": int(self.candidates),
            "near_miss_method": NEAR_MISS_METHOD,
            "wall_time_s": round(float(self.wall_time_s), 4),
        }


def alone_counts(violations: np.ndarray) -> np.ndarray:
    """Per column, the rows of ``violations`` (n, C) violated there (> 0) and nowhere else."""
    bad = np.asarray(violations) > 0
    single = bad.sum(axis=1) == 1
    return bad[single].sum(axis=0).astype(np.int64)


def nearest_per_core(core: np.ndarray, violation: np.ndarray, keep: int) -> np.ndarray:
    """Rows holding the smallest ``violation`` of their ``core``, for the ``keep`` cores
    whose best is smallest, best first (NaN never chosen)."""
    violation = np.asarray(violation, dtype=float)
    rows = np.flatnonzero(~np.isnan(violation))
    order = rows[np.lexsort((violation[rows], np.asarray(core)[rows]))]  # by core, best first
    sorted_core = np.asarray(core)[order]
    first = order[np.r_[True, sorted_core[1:] != sorted_core[:-1]]] if order.size else order
    return first[np.argsort(violation[first], kind="stable")[:keep]]


class NearestPerCore:
    """The least-violating candidate of each core, for the ``keep`` best cores seen so far.

    Exact under streaming: a core dropped from the best ``keep`` has ``keep`` cores ahead
    of it whose best can only improve, so it cannot come back with a worse candidate.
    """

    def __init__(self, keep: int = NEAR_MISS_CORES):
        self.keep = keep
        self.candidates: model.Candidates | None = None
        self.violation = np.empty(0)

    def offer(self, candidates: model.Candidates, violation: np.ndarray) -> None:
        """Offer infeasible candidates with their worst normalised violation."""
        violation = np.asarray(violation, dtype=float)
        ok = np.isfinite(violation)
        if not np.any(ok):
            return
        if not np.all(ok):
            candidates, violation = candidates.take(np.flatnonzero(ok)), violation[ok]
        if self.candidates is not None:
            candidates = model.Candidates(**{
                f: np.concatenate([getattr(self.candidates, f), getattr(candidates, f)])
                for f in ex.CANDIDATE_FIELDS
            })
            violation = np.concatenate([self.violation, violation])
        best = nearest_per_core(candidates.core, violation, self.keep)
        self.candidates, self.violation = candidates.take(best), violation[best]

    def result(self) -> tuple[model.Candidates | None, np.ndarray]:
        return self.candidates, self.violation


def diagnose_rows(core: np.ndarray, violations: np.ndarray,
                  keep: int = NEAR_MISS_CORES) -> tuple[dict[str, int], np.ndarray]:
    """Fails-alone counts of evaluated designs with their full violation matrix (n, C) in
    `model.CONSTRAINTS` order (the optuna strategy's trials), and the rows of their
    nearest misses, one per distinct ``core`` key, best first."""
    violations = np.asarray(violations, dtype=float).reshape(len(core), -1)
    alone = alone_counts(violations)
    bad = np.flatnonzero((violations > 0).any(axis=1))
    near = bad[nearest_per_core(np.asarray(core)[bad], violations[bad].max(axis=1), keep)]
    counts = dict.fromkeys(model.CONSTRAINTS, 0)
    if len(core):
        counts.update(zip(model.CONSTRAINTS, alone.tolist(), strict=True))
    return counts, near


@dataclass
class DiagnosisPart:
    """What the diagnosis of a range of groups leaves; parts of disjoint ranges merge
    exactly, in group order (`merge_diagnosis_parts`)."""

    alone: np.ndarray
    near: NearestPerCore
    fallback: NearestPerCore


def diagnose_exhaustive(
    space: model.DesignSpace,
    search_plan: ex.SearchPlan | None = None,
    keep: int = NEAR_MISS_CORES,
) -> Diagnosis:
    """Exact fails-alone counts over every candidate of ``space``, and its nearest misses
    per core, walking the space in the search's blocks (``search_plan``, default
    `exhaustive.plan`).

    Nearest misses are ranked among the candidates evaluated in full: those with at most
    one violation among the magnetic and winding constraints (a candidate with two is never
    taken to the thermal stage). If none is, the least-violating magnetic rows are paired
    with every winding and evaluated. `optimag.search.parallel` spreads the same walk over
    a Dask cluster.
    """
    walk = search_plan or ex.plan(space)
    part = diagnose_groups(space, walk, 0, ex.group_count(space), keep)
    return finish_diagnosis(space, part, walk, keep)


def merge_diagnosis_parts(parts: list[DiagnosisPart],
                          keep: int = NEAR_MISS_CORES) -> DiagnosisPart:
    """One part from parts of disjoint group ranges given in group order: counts added,
    nearest misses offered in order (exact under streaming, `NearestPerCore`)."""
    merged = DiagnosisPart(np.zeros(len(model.CONSTRAINTS), dtype=np.int64),
                           NearestPerCore(keep), NearestPerCore(keep))
    for part in parts:
        merged.alone += part.alone
        for mine, theirs in ((merged.near, part.near), (merged.fallback, part.fallback)):
            if theirs.candidates is not None:
                mine.offer(theirs.candidates, theirs.violation)
    return merged


def finish_diagnosis(space: model.DesignSpace, part: DiagnosisPart, walk: ex.SearchPlan,
                     keep: int = NEAR_MISS_CORES) -> Diagnosis:
    """The diagnosis of the whole space from its merged part."""
    near_cands, near_viol = part.near.result()
    if near_cands is None:
        near_cands, near_viol = _fallback_per_core(space, part.fallback, keep)
    return Diagnosis(
        fails_alone=dict(zip(model.CONSTRAINTS, part.alone.tolist(), strict=True)),
        near_misses=near_cands, near_miss_violation=near_viol,
        scope="every candidate of the space", candidates=walk.candidates,
    )


def diagnose_groups(space: model.DesignSpace, walk: ex.SearchPlan, first_group: int,
                    stop_group: int, keep: int = NEAR_MISS_CORES) -> DiagnosisPart:
    """The diagnosis of groups ``first_group`` to ``stop_group - 1`` (see
    `exhaustive.group_count`), in the blocks and chunks of ``walk``."""
    chunk = walk.chunk
    alone = np.zeros(len(model.CONSTRAINTS), dtype=np.int64)
    near = NearestPerCore(keep)
    fallback = NearestPerCore(keep)
    n_wire, n_par = len(space.wires.ids), len(space.parallels)
    wires_per_slice = max(1, min(n_wire, chunk // max(n_par, 1)))
    wire_slices = [np.arange(lo, min(lo + wires_per_slice, n_wire), dtype=np.int64)
                   for lo in range(0, n_wire, wires_per_slice)]
    groups = ex._Groups(space)
    rows_per_group = max(1, len(space.materials.ids) * space.n_gap_options)
    groups_per_block = max(1, walk.magnetic_block // rows_per_group)
    for first in range(first_group, stop_group, groups_per_block):
        stop = min(first + groups_per_block, stop_group)
        mag = ex._magnetic_rows(space, *groups.decode(first, stop))
        mag_out = model.magnetic_stage(space, mag["core"], mag["stack"], mag["material"],
                                       mag["turns"], mag["gap_option"])
        mag_viol = np.stack(
            [mag_out[f"violation_{c}"] for c in model.MAGNETIC_CONSTRAINTS], axis=1)
        mag_bad = (mag_viol > 0).sum(axis=1)
        if near.candidates is None:
            fallback.offer(_magnetic_candidates(mag), mag_viol.max(axis=1))
        live = np.flatnonzero(mag_bad <= 1)
        if not live.size:
            continue
        block_groups, group_start, group_count = np.unique(
            mag["group"][live], return_index=True, return_counts=True)
        for batch in ex._batches_of_groups(group_count, wires_per_slice * n_par, chunk):
            for wires in wire_slices:
                for candidates, violations in _batch_rows(
                    space, mag, mag_out, mag_viol, mag_bad, live, block_groups[batch],
                    group_start[batch], group_count[batch], wires, chunk,
                ):
                    alone += alone_counts(violations)
                    bad = np.flatnonzero((violations > 0).any(axis=1))
                    near.offer(candidates.take(bad), violations[bad].max(axis=1))
    return DiagnosisPart(alone, near, fallback)


def _batch_rows(space, mag, mag_out, mag_viol, mag_bad, live, groups, group_start,
                group_count, wires, chunk) -> Iterator[tuple[model.Candidates, np.ndarray]]:
    """Candidates of a batch of groups and a slice of wires with at most one violation
    before the thermal stage, evaluated in full, in chunks: (candidates, violations)."""
    mag_rows = np.concatenate(
        [live[s:s + n] for s, n in zip(group_start, group_count, strict=True)])
    mag_gi = np.repeat(np.arange(len(groups)), group_count)
    first_row = mag_rows[np.concatenate([[0], np.cumsum(group_count)[:-1]])]
    gi, wire, parallel = ex._grid(np.arange(len(groups)), wires, space.parallels)
    core, stack, turns = (mag[k][first_row][gi] for k in ("core", "stack", "turns"))
    layout = model.winding_layout_stage(space, core, stack, turns, wire, parallel)
    w_viol = np.stack([layout[f"violation_{c}"] for c in model.WINDING_CONSTRAINTS], axis=1)
    w_bad = (w_viol > 0).sum(axis=1)
    w_live = np.flatnonzero(w_bad <= 1)
    if not w_live.size:
        return
    layout = {k: v[w_live] for k, v in layout.items()}
    layout.update(model.winding_loss_stage(space, turns[w_live], wire[w_live],
                                           parallel[w_live], layout, core[w_live]))
    w_viol, w_bad, w_gi = w_viol[w_live], w_bad[w_live], gi[w_live]
    wire, parallel = wire[w_live], parallel[w_live]
    # Pairs with at most one violation so far: every live magnetic row with a clean
    # winding, and every clean magnetic row with a winding failing once.
    clean_mag = mag_bad[mag_rows] == 0
    for m_sel, w_sel in ((np.ones(len(mag_rows), dtype=bool), w_bad == 0),
                         (clean_mag, w_bad == 1)):
        for m_idx, w_idx in _pairs(mag_rows[m_sel], mag_gi[m_sel], np.flatnonzero(w_sel),
                                   w_gi[w_sel], len(groups), chunk):
            yield _evaluate_pairs(space, mag, mag_out, mag_viol, mag_bad, m_idx, layout,
                                  w_viol, w_bad, w_idx, wire, parallel)


def _pairs(m_rows, m_gi, w_rows, w_gi, n_groups, chunk) -> Iterator[tuple[np.ndarray, ...]]:
    """Every (magnetic row, winding row) of the same group, both sorted by group, in
    chunks of about ``chunk`` pairs."""
    if not m_rows.size or not w_rows.size:
        return
    w_count = np.bincount(w_gi, minlength=n_groups)
    w_start = np.concatenate([[0], np.cumsum(w_count)[:-1]])
    reps_all = w_count[m_gi]
    cumulative = np.cumsum(reps_all)
    lo = 0
    while lo < len(m_rows):
        base = cumulative[lo - 1] if lo else 0
        hi = max(int(np.searchsorted(cumulative, base + chunk, side="right")), lo + 1)
        reps = reps_all[lo:hi]
        total = int(reps.sum())
        if total:
            m_idx = np.repeat(m_rows[lo:hi], reps)
            offset = np.arange(total) - np.repeat(np.cumsum(reps) - reps, reps)
            yield m_idx, w_rows[w_start[np.repeat(m_gi[lo:hi], reps)] + offset]
        lo = hi


def _evaluate_pairs(space, mag, mag_out, mag_viol, mag_bad, m_idx, layout, w_viol, w_bad,
                    w_idx, wires, parallels) -> tuple[model.Candidates, np.ndarray]:
    candidates = model.Candidates(
        core=mag["core"][m_idx], stack=mag["stack"][m_idx], material=mag["material"][m_idx],
        turns=mag["turns"][m_idx], gap_option=mag["gap_option"][m_idx],
        wire=wires[w_idx], parallel=parallels[w_idx],
    )
    mag_part = {k: v[m_idx] for k, v in mag_out.items() if k not in model.HARMONIC_KEYS}
    wdg_part = {k: v[w_idx] for k, v in layout.items() if k not in model.HARMONIC_KEYS}
    wdg_part.update(model.winding_ac_loss(mag_out, m_idx, layout, w_idx,
                                          operating=space.operating))
    n = len(candidates)
    n_final = len(model.FINAL_CONSTRAINTS)
    final_viol = np.full((n, n_final), np.inf)
    # A candidate that already fails once and certainly runs too hot fails twice: its
    # thermal fixed point is not needed (the screen is exact, `model.certainly_too_hot`).
    coefficients = model.loss_quadratic(space, candidates.material, mag_part, wdg_part)
    prior = mag_bad[m_idx] + w_bad[w_idx]
    skip = (prior > 0) & model.certainly_too_hot(
        space, candidates.material, candidates.stack, candidates.core, mag_part, wdg_part,
        coefficients)
    keep = np.flatnonzero(~skip)
    if keep.size:
        sub = candidates.take(keep)
        final = model.combine_stage(
            space, sub.material, sub.stack, sub.core, sub.turns,
            {k: v[keep] for k, v in mag_part.items()},
            {k: v[keep] for k, v in wdg_part.items()},
            tuple(a[keep] for a in coefficients), wire=sub.wire,
        )
        final_viol[keep] = np.stack(
            [final[f"violation_{c}"] for c in model.FINAL_CONSTRAINTS], axis=1)
    violations = np.concatenate([mag_viol[m_idx], w_viol[w_idx], final_viol], axis=1)
    return candidates, violations


def _magnetic_candidates(mag: dict[str, np.ndarray]) -> model.Candidates:
    """Magnetic rows as candidates (wire and parallel left at zero)."""
    zero = np.zeros(len(mag["core"]), dtype=np.int64)
    return model.Candidates(core=mag["core"], stack=mag["stack"], material=mag["material"],
                            turns=mag["turns"], gap_option=mag["gap_option"], wire=zero,
                            parallel=zero)


def _fallback_per_core(space, kept: NearestPerCore,
                       keep: int) -> tuple[model.Candidates | None, np.ndarray]:
    """When no candidate reached the thermal stage: the least-violating magnetic row of
    each core, paired with every winding and evaluated, the best of each core."""
    rows_kept, _ = kept.result()
    if rows_kept is None:
        return None, np.empty(0)
    rows, wire, parallel = ex._grid(np.arange(len(rows_kept)),
                                    np.arange(len(space.wires.ids)), space.parallels)
    candidates = rows_kept.take(rows)
    candidates = dataclasses.replace(candidates, wire=wire, parallel=parallel)
    metrics = model.evaluate(space, candidates)
    near = NearestPerCore(keep)
    near.offer(candidates, metrics["worst_violation"])
    return near.result()
