"""Exhaustive search: every candidate of the design space, evaluated by factors.

1. The magnetic grid (core, stack, material, turns, gap option) is evaluated at once and
   its failures are counted for every winding they would have been paired with.
2. The winding layouts (core, stack, turns, wire, parallel) are evaluated only for the
   (core, stack, turns) groups with a magnetic survivor; windings that do not fit are
   counted for every magnetic survivor of their group; winding losses are computed for the
   survivors only.
3. Survivors of both are joined within their group and streamed in chunks through the
   loss-temperature stage; a running Pareto front and the elimination counts are all that
   is kept, so memory does not grow with the size of the space.
"""

from __future__ import annotations

import dataclasses
import time
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field

import numpy as np

from optimag import model, tolerance
from optimag.search.pareto import RunningFront
from optimag.spec.tolerance import ToleranceSpec

CANDIDATE_FIELDS = tuple(f.name for f in dataclasses.fields(model.Candidates))

#: Joined candidates per chunk of the final stage (bounds peak memory).
DEFAULT_CHUNK = 200_000

#: Elimination-table name of designs that fail at a tolerance corner (robust search).
ROBUST_CONSTRAINT = "tolerance_corners"

#: Infeasible candidates kept to show when nothing is feasible.
NEAR_MISS_COUNT = 5


@dataclass
class ExhaustiveOutcome:
    """What an exhaustive pass leaves: the front (as candidate indices), the counts, the
    closest infeasible candidates, and timing."""

    front: RunningFront
    total: int
    feasible: int
    eliminated: dict[str, int]
    near_misses: model.Candidates | None
    near_miss_violation: np.ndarray
    wall_time_s: float
    interrupted: bool = False
    stage_sizes: dict[str, int] = field(default_factory=dict)
    #: With a robust search: the front of every nominally feasible design, for comparison.
    nominal_front: RunningFront | None = None


def _grid(*axes: np.ndarray) -> list[np.ndarray]:
    return [a.ravel() for a in np.meshgrid(*axes, indexing="ij")]


def magnetic_grid(space: model.DesignSpace) -> dict[str, np.ndarray]:
    """Flat (core, stack, material, turns, gap_option) combinations that exist: stacks up
    to each core's maximum, and gap options only where a gap can be cut."""
    n_core = len(space.cores.ids)
    n_mat = len(space.materials.ids)
    core, stack, material, turns, gap_option = _grid(
        np.arange(n_core), space.stacks, np.arange(n_mat), space.turns,
        np.arange(space.n_gap_options),
    )
    keep = stack <= space.cores.max_stack[core]
    keep &= (gap_option == 0) | model.gap_allowed(space, core, material)
    return {
        "core": core[keep], "stack": stack[keep], "material": material[keep],
        "turns": turns[keep], "gap_option": gap_option[keep],
    }


def _group_key(space: model.DesignSpace, core, stack, turns) -> np.ndarray:
    n_stack = len(space.stacks)
    n_turns = len(space.turns)
    stack_pos = stack - space.stacks[0]
    turns_pos = turns - space.turns[0]
    return (core * n_stack + stack_pos) * n_turns + turns_pos


def space_size(space: model.DesignSpace) -> int:
    """Number of candidates in the design space (what `explore_exhaustive` covers)."""
    mag = magnetic_grid(space)
    return int(len(mag["core"]) * len(space.wires.ids) * len(space.parallels))


def explore_exhaustive(
    space: model.DesignSpace,
    objectives: list[str],
    chunk_size: int = DEFAULT_CHUNK,
    progress: Callable[[int, int], None] | None = None,
    robust: ToleranceSpec | None = None,
) -> ExhaustiveOutcome:
    """Evaluate every candidate of ``space`` and keep the exact Pareto front over
    ``objectives`` (names of `model.OBJECTIVE_COLUMNS`).

    With ``robust`` (the study's spreads), a feasible candidate enters the front only if it
    also meets every limit at every tolerance corner (`optimag.tolerance.robust_feasible`);
    those that do not are counted under ``tolerance_corners``, and the front of all
    nominally feasible candidates is kept beside it as ``nominal_front``.

    ``progress(done, total)`` is called after each chunk with candidate counts. A
    KeyboardInterrupt stops the pass cleanly: the outcome then holds what was found so far
    and ``interrupted`` is set.
    """
    start = time.perf_counter()
    eliminated = dict.fromkeys(model.CONSTRAINTS, 0)
    front = RunningFront(len(objectives))
    nominal_front = None
    if robust is not None:
        eliminated[ROBUST_CONSTRAINT] = 0
        nominal_front = RunningFront(len(objectives))
    n_wire, n_par = len(space.wires.ids), len(space.parallels)
    windings_per_group = n_wire * n_par

    mag = magnetic_grid(space)
    total = len(mag["core"]) * windings_per_group
    done = 0
    near = _NearMisses()
    interrupted = False
    feasible = 0
    stage_sizes = {"magnetic": len(mag["core"])}
    try:
        # Stage 1: magnetic grid.
        mag_out = model.magnetic_stage(
            space, mag["core"], mag["stack"], mag["material"], mag["turns"], mag["gap_option"]
        )
        mag_viol = np.stack(
            [mag_out[f"violation_{c}"] for c in model.MAGNETIC_CONSTRAINTS], axis=1
        )
        mag_first = model.first_violated(mag_viol)
        for index, name in enumerate(model.MAGNETIC_CONSTRAINTS):
            eliminated[name] += int(np.count_nonzero(mag_first == index)) * windings_per_group
        done += int(np.count_nonzero(mag_first >= 0)) * windings_per_group
        mag_pass = np.flatnonzero(mag_first < 0)
        if progress:
            progress(done, total)

        if mag_pass.size:
            mag_group = _group_key(
                space, mag["core"][mag_pass], mag["stack"][mag_pass], mag["turns"][mag_pass]
            )
            order = np.argsort(mag_group, kind="stable")
            mag_pass, mag_group = mag_pass[order], mag_group[order]
            groups, group_start, group_count = np.unique(
                mag_group, return_index=True, return_counts=True
            )
            # Stage 2 and 3 per batch of groups, so the winding arrays stay small too.
            for batch in _batches_of_groups(group_count, windings_per_group, chunk_size):
                for joined in _process_group_batch(
                    space, mag, mag_out, mag_pass, groups[batch], group_start[batch],
                    group_count[batch], eliminated, chunk_size, stage_sizes,
                ):
                    candidates, metrics, n_processed = joined
                    done += n_processed
                    if candidates is not None:
                        if robust is not None:
                            _screen_corners(space, candidates, metrics, robust, objectives,
                                            eliminated, nominal_front)
                        ok = metrics["feasible"]
                        feasible += int(np.count_nonzero(ok))
                        if np.any(ok):
                            front.offer(
                                model.objective_matrix(metrics, objectives)[ok],
                                {f: getattr(candidates, f)[ok] for f in CANDIDATE_FIELDS},
                            )
                        near.offer(candidates, metrics)
                    if progress:
                        progress(done, total)
    except KeyboardInterrupt:
        interrupted = True

    if not interrupted:
        counted = feasible + sum(eliminated.values())
        if counted != total:
            raise AssertionError(f"candidate accounting is off: {counted} != {total}")
    near_cands, near_viol = near.result()
    if near_cands is None and not interrupted and feasible == 0:
        near_cands, near_viol = _near_misses_from_magnetic(space, mag, mag_out)
    return ExhaustiveOutcome(
        front=front,
        total=total,
        feasible=feasible,
        eliminated=eliminated,
        near_misses=near_cands,
        near_miss_violation=near_viol,
        wall_time_s=time.perf_counter() - start,
        interrupted=interrupted,
        stage_sizes=stage_sizes,
        nominal_front=nominal_front,
    )


def _screen_corners(space, candidates, metrics, spec, objectives, eliminated, nominal_front):
    """Robust search: offer the nominally feasible candidates to the nominal front, then
    mark those that fail at a tolerance corner infeasible (in place)."""
    ok = metrics["feasible"]
    rows = np.flatnonzero(ok)
    if rows.size == 0:
        return
    nominal_front.offer(
        model.objective_matrix(metrics, objectives)[rows],
        {f: getattr(candidates, f)[rows] for f in CANDIDATE_FIELDS},
    )
    robust = tolerance.robust_feasible(
        space, candidates.take(rows), metrics["gap_m"][rows], spec
    )
    failed = rows[~robust]
    eliminated[ROBUST_CONSTRAINT] += int(failed.size)
    ok = ok.copy()
    ok[failed] = False
    metrics["feasible"] = ok


def _batches_of_groups(group_count, windings_per_group, chunk_size) -> Iterator[slice]:
    """Slices of consecutive groups whose candidate count stays near ``chunk_size``."""
    sizes = group_count * windings_per_group
    start, running = 0, 0
    for i, size in enumerate(sizes):
        if running and running + size > chunk_size:
            yield slice(start, i)
            start, running = i, 0
        running += int(size)
    if start < len(sizes):
        yield slice(start, len(sizes))


def _process_group_batch(
    space, mag, mag_out, mag_pass, groups, group_start, group_count, eliminated, chunk_size,
    stage_sizes,
):
    """Winding stage for a batch of (core, stack, turns) groups, then the join and the final
    stage. Yields (candidates, metrics, number of candidates accounted for)."""
    n_wire = len(space.wires.ids)
    first_row = mag_pass[group_start]
    g_core, g_stack = mag["core"][first_row], mag["stack"][first_row]
    g_turns = mag["turns"][first_row]
    gi, wire, parallel = _grid(np.arange(len(groups)), np.arange(n_wire), space.parallels)
    core, stack, turns = g_core[gi], g_stack[gi], g_turns[gi]
    layout = model.winding_layout_stage(space, core, stack, turns, wire, parallel)
    stage_sizes["winding"] = stage_sizes.get("winding", 0) + len(core)
    w_viol = np.stack([layout[f"violation_{c}"] for c in model.WINDING_CONSTRAINTS], axis=1)
    w_first = model.first_violated(w_viol)
    mag_per_wind = group_count[gi]
    accounted = 0
    for index, name in enumerate(model.WINDING_CONSTRAINTS):
        bad = w_first == index
        count = int(mag_per_wind[bad].sum())
        eliminated[name] += count
        accounted += count
    yield None, None, accounted

    w_pass = np.flatnonzero(w_first < 0)
    if w_pass.size == 0:
        return
    layout = {k: v[w_pass] for k, v in layout.items()}
    w_gi = gi[w_pass]
    losses = model.winding_loss_stage(
        space, turns[w_pass], wire[w_pass], parallel[w_pass], layout, core[w_pass]
    )
    layout.update(losses)
    stage_sizes["winding_loss"] = stage_sizes.get("winding_loss", 0) + len(w_pass)

    # Join: every magnetic survivor with every fitting winding of its group.
    w_count = np.bincount(w_gi, minlength=len(groups))
    w_start = np.concatenate([[0], np.cumsum(w_count)[:-1]])  # w_gi is sorted by group
    mag_rows = np.concatenate(
        [np.arange(s, s + n) for s, n in zip(group_start, group_count, strict=True)]
    )
    mag_gi = np.repeat(np.arange(len(groups)), group_count)
    pairs_per_mag = w_count[mag_gi]
    cumulative = np.cumsum(pairs_per_mag)
    lo = 0
    while lo < len(mag_rows):
        hi = int(np.searchsorted(cumulative, (cumulative[lo - 1] if lo else 0) + chunk_size,
                                 side="right"))
        hi = max(hi, lo + 1)
        rows = mag_rows[lo:hi]
        reps = pairs_per_mag[lo:hi]
        total_pairs = int(reps.sum())
        if total_pairs:
            mag_idx = np.repeat(rows, reps)
            row_first = np.repeat(np.cumsum(reps) - reps, reps)
            offset = np.arange(total_pairs) - row_first
            w_idx = w_start[np.repeat(mag_gi[lo:hi], reps)] + offset
            yield _final_stage(space, mag, mag_out, mag_pass[mag_idx], layout, w_idx,
                               wire[w_pass], parallel[w_pass], eliminated, stage_sizes)
        lo = hi


def _final_stage(space, mag, mag_out, mag_row, layout, w_idx, wires, parallels, eliminated,
                 stage_sizes):
    candidates = model.Candidates(
        core=mag["core"][mag_row],
        stack=mag["stack"][mag_row],
        material=mag["material"][mag_row],
        turns=mag["turns"][mag_row],
        gap_option=mag["gap_option"][mag_row],
        wire=wires[w_idx],
        parallel=parallels[w_idx],
    )
    mag_part = {k: v[mag_row] for k, v in mag_out.items() if k not in model.HARMONIC_KEYS}
    wdg_part = {k: v[w_idx] for k, v in layout.items() if k not in model.HARMONIC_KEYS}
    wdg_part.update(model.winding_ac_loss(mag_out, mag_row, layout, w_idx))
    n_all = len(candidates)
    # Exact screen: parts that cannot settle below the temperature limit skip the fixed
    # point; they are counted under "temperature", where the full model puts them too.
    coefficients = model.loss_quadratic(space, candidates.material, mag_part, wdg_part)
    too_hot = model.certainly_too_hot(
        space, candidates.material, candidates.stack, candidates.core, mag_part, wdg_part,
        coefficients,
    )
    eliminated["temperature"] += int(np.count_nonzero(too_hot))
    keep = np.flatnonzero(~too_hot)
    if keep.size < n_all:
        candidates = candidates.take(keep)
        mag_part = {k: v[keep] for k, v in mag_part.items()}
        wdg_part = {k: v[keep] for k, v in wdg_part.items()}
        coefficients = tuple(a[keep] for a in coefficients)
    final = model.combine_stage(
        space, candidates.material, candidates.stack, candidates.core, candidates.turns,
        mag_part, wdg_part, coefficients, wire=candidates.wire,
    )
    metrics = {**mag_part, **wdg_part, **final}
    violations = model.violations_matrix(metrics)
    first = model.first_violated(violations)
    for index, name in enumerate(model.CONSTRAINTS):
        if name in model.FINAL_CONSTRAINTS:
            eliminated[name] += int(np.count_nonzero(first == index))
    metrics["feasible"] = first < 0
    metrics["worst_violation"] = violations.max(axis=1)
    stage_sizes["thermal_screened"] = stage_sizes.get("thermal_screened", 0) + n_all - keep.size
    stage_sizes["final"] = stage_sizes.get("final", 0) + len(candidates)
    return candidates, metrics, n_all


class _NearMisses:
    """The infeasible candidates with the smallest worst violation seen so far."""

    def __init__(self):
        self.candidates: model.Candidates | None = None
        self.violation = np.empty(0)

    def offer(self, candidates: model.Candidates, metrics) -> None:
        bad = ~metrics["feasible"]
        if not np.any(bad):
            return
        violation = metrics["worst_violation"][bad]
        picked = np.argsort(violation, kind="stable")[:NEAR_MISS_COUNT]
        new = candidates.take(np.flatnonzero(bad)[picked])
        if self.candidates is None:
            merged, merged_v = new, violation[picked]
        else:
            merged = model.Candidates(**{
                f: np.concatenate([getattr(self.candidates, f), getattr(new, f)])
                for f in CANDIDATE_FIELDS
            })
            merged_v = np.concatenate([self.violation, violation[picked]])
        keep = np.argsort(merged_v, kind="stable")[:NEAR_MISS_COUNT]
        self.candidates, self.violation = merged.take(keep), merged_v[keep]

    def result(self):
        return self.candidates, self.violation


def _near_misses_from_magnetic(space, mag, mag_out):
    """When no candidate got past the first two stages, pair the least-violating magnetic
    combinations with each wire/parallel choice and keep the closest full candidates."""
    viol = np.stack([mag_out[f"violation_{c}"] for c in model.MAGNETIC_CONSTRAINTS], axis=1)
    worst = viol.max(axis=1)
    picked = np.argsort(worst, kind="stable")[: NEAR_MISS_COUNT * 4]
    if picked.size == 0:
        return None, np.empty(0)
    rows, wire, parallel = _grid(picked, np.arange(len(space.wires.ids)), space.parallels)
    candidates = model.Candidates(
        core=mag["core"][rows], stack=mag["stack"][rows], material=mag["material"][rows],
        turns=mag["turns"][rows], gap_option=mag["gap_option"][rows], wire=wire,
        parallel=parallel,
    )
    metrics = model.evaluate(space, candidates)
    order = np.argsort(metrics["worst_violation"], kind="stable")[:NEAR_MISS_COUNT]
    return candidates.take(order), metrics["worst_violation"][order]
