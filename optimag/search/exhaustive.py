"""Exhaustive search: every candidate of the design space, evaluated by factors.

The space is walked in blocks of (core, stack, turns) groups, so memory stays bounded
whatever its size:

1. For a block of groups, the magnetic grid (its groups x material x gap option) is
   evaluated and its failures are counted for every winding they would have been paired
   with.
2. The winding layouts (core, stack, turns, wire, parallel) are evaluated only for the
   groups with a magnetic survivor, a slice of groups (and, for a large wire table, of
   wires) at a time; windings that do not fit are counted for every magnetic survivor of
   their group; winding losses are computed for the survivors only.
3. Survivors of both are joined within their group and streamed in chunks through the
   loss-temperature stage; a running Pareto front and the elimination counts are all that
   is kept.

`plan` counts the candidates, measures the bytes a row holds in each stage on a few
thousand rows of the space, and sizes the blocks and chunks so the estimated peak memory
stays within a budget, before the search starts.
"""

from __future__ import annotations

import dataclasses
import os
import sys
import time
import tracemalloc
from collections import ChainMap
from collections.abc import Callable, Iterator, Mapping
from dataclasses import dataclass, field

import numpy as np

from optimag import model, tolerance
from optimag.codes import Family, MaterialKind
from optimag.ranges import MEMORY_BUDGET_BYTES
from optimag.search.pareto import NearFrontPool, RunningFront
from optimag.study.tolerance import ToleranceSpec

CANDIDATE_FIELDS = tuple(f.name for f in dataclasses.fields(model.Candidates))

#: Joined candidates per chunk of the final stage, at most (bounds peak memory).
DEFAULT_CHUNK = 200_000

#: Elimination-table name of designs that fail at a tolerance corner (robust search).
ROBUST_CONSTRAINT = "tolerance_corners"

#: Magnetic rows (group x material x gap option) per block of stage 1, at most.
DEFAULT_MAGNETIC_BLOCK = 200_000

#: Rows of the space evaluated, with allocations traced, to measure the bytes a row holds
#: in stage 1 and in stages 2-3; the measurement is scaled by `_PROBE_MARGIN`.
PROBE_ROWS = 1000
_PROBE_MARGIN = 1.5
#: Share of the memory budget the plan fills; the rest covers what the estimate misses.
_PLANNED_SHARE = 0.75

#: Infeasible candidates kept to show when nothing is feasible.
NEAR_MISS_COUNT = 5

#: Feasible designs kept near the front for the report's what-if limits (whole
#: non-dominated layers, at most this many; sorting into layers costs about the square of
#: the designs held, so a few thousand keep it a small share of a search).
NEAR_FRONT_CAP = 3_000

#: Figures the report's what-if limits act on, kept with each near-front design.
NEAR_FRONT_FIGURES = ("worst_hotspot_temperature_C", "box_height_m", "footprint_m2",
                      "volume_cm3", "weighted_loss_W")


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
    #: The first non-dominated layers of the feasible designs (candidate fields and
    #: `NEAR_FRONT_FIGURES`), for the report's what-if limits.
    pool: NearFrontPool | None = None


@dataclass(frozen=True)
class SearchPlan:
    """How an exhaustive search will walk its space, decided before it starts.

    candidates : exact number of candidates in the space
    magnetic_block : magnetic rows per stage-1 block
    chunk : winding rows per stage-2 slice and joined rows per stage-3 chunk
    peak_bytes : estimated peak memory of the process [bytes]
    """

    candidates: int
    magnetic_block: int
    chunk: int
    peak_bytes: int

    def describe(self) -> str:
        """One line for the user: candidate count and estimated peak memory."""
        return (
            f"design space: {self.candidates:,} candidates; estimated peak memory "
            f"{self.peak_bytes / 1e6:,.0f} MB"
        )


def _current_rss_bytes() -> int:
    """Resident memory of this process now [bytes] (Linux /proc; elsewhere the peak so
    far, an overestimate)."""
    try:
        with open("/proc/self/statm", encoding="ascii") as statm:
            return int(statm.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")
    except (OSError, ValueError, IndexError, AttributeError):
        import resource

        scale = 1 if sys.platform == "darwin" else 1024
        return int(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss) * scale


def _traced_peak(work: Callable[[], object]) -> int:
    """Peak bytes newly allocated while ``work`` runs (numpy buffers included)."""
    tracing = tracemalloc.is_tracing()
    if not tracing:
        tracemalloc.start()
    tracemalloc.reset_peak()
    before = tracemalloc.get_traced_memory()[0]
    try:
        work()
        return max(tracemalloc.get_traced_memory()[1] - before, 0)
    finally:
        if not tracing:
            tracemalloc.stop()


def _probe_row_bytes(space: model.DesignSpace) -> tuple[int, int]:
    """Bytes per row held by stage 1 and by stages 2-3, measured on the first rows of the
    space (a full `model.evaluate` stands for stages 2-3: it holds every figure a joined
    row carries). Returns (0, 0) for an empty space."""
    groups = _Groups(space)
    rows_per_group = max(1, len(space.materials.ids) * space.n_gap_options)
    stop = min(groups.count, -(-PROBE_ROWS // rows_per_group))
    if stop == 0 or not len(space.wires.ids):
        return 0, 0
    mag = _magnetic_rows(space, *groups.decode(0, stop))
    n = min(len(mag["core"]), PROBE_ROWS)
    mag = {k: v[:n] for k, v in mag.items()}
    magnetic = _traced_peak(lambda: model.magnetic_stage(
        space, mag["core"], mag["stack"], mag["material"], mag["turns"], mag["gap_option"]))
    spread = np.arange(n)
    candidates = model.Candidates(
        core=mag["core"], stack=mag["stack"], material=mag["material"], turns=mag["turns"],
        gap_option=mag["gap_option"], wire=spread % len(space.wires.ids),
        parallel=space.parallels[spread % len(space.parallels)],
    )
    joined = _traced_peak(lambda: model.evaluate(space, candidates))
    return (int(_PROBE_MARGIN * magnetic / n) + 1, int(_PROBE_MARGIN * joined / n) + 1)


def plan(
    space: model.DesignSpace,
    chunk_size: int = DEFAULT_CHUNK,
    memory_budget: int = MEMORY_BUDGET_BYTES,
) -> SearchPlan:
    """Count the candidates of ``space`` and size the blocks and chunks so the search's
    peak memory stays within ``memory_budget`` [bytes] (chunks never above
    ``chunk_size``): the process's memory now plus a block and a chunk at the bytes per row
    measured on `PROBE_ROWS` rows of the space."""
    base = _current_rss_bytes()
    mag_row, late_row = _probe_row_bytes(space)
    # Half the planned budget left above what the process holds now goes to the stage-1
    # block (kept while its groups go through stages 2 and 3), half to one stage-2/3 chunk.
    share = max(int(_PLANNED_SHARE * memory_budget - base) // 2, 1)
    magnetic_block = int(max(1_000, min(DEFAULT_MAGNETIC_BLOCK, share // max(mag_row, 1))))
    chunk = int(max(1_000, min(chunk_size, share // max(late_row, 1))))
    # A block holds whole groups (materials x gap options rows each); a slice of one group
    # holds at least one wire with every parallel count.
    candidates = space_size(space)
    windings = len(space.wires.ids) * len(space.parallels)
    group_rows = len(space.materials.ids) * space.n_gap_options
    magnetic_rows = min(max(magnetic_block, group_rows), candidates // max(windings, 1))
    slice_rows = min(max(chunk, len(space.parallels)), candidates)
    peak = base + magnetic_rows * mag_row + slice_rows * late_row
    return SearchPlan(
        candidates=candidates, magnetic_block=magnetic_block, chunk=chunk,
        peak_bytes=int(peak),
    )


def _grid(*axes: np.ndarray) -> list[np.ndarray]:
    return [a.ravel() for a in np.meshgrid(*axes, indexing="ij")]


class _Groups:
    """The (core, stack, turns) groups of a space in order (core, then stack, then turns):
    group g of core c is stack ``stacks[i // n_turns]`` and turns ``turns[i % n_turns]``
    with ``i = g - start[c]``; only stacks up to the core's maximum exist."""

    def __init__(self, space: model.DesignSpace):
        self.space = space
        self.n_turns = len(space.turns)
        # space.stacks is a consecutive ascending range, so a core's allowed stacks are a
        # prefix of it.
        self.stacks_per_core = np.searchsorted(
            space.stacks, space.cores.max_stack, side="right"
        ).astype(np.int64)
        per_core = self.stacks_per_core * self.n_turns
        self.end = np.cumsum(per_core)
        self.start = self.end - per_core
        self.count = int(self.end[-1]) if len(self.end) else 0

    def decode(self, first: int, stop: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(core, stack, turns) of groups ``first`` to ``stop - 1``."""
        g = np.arange(first, stop, dtype=np.int64)
        core = np.searchsorted(self.end, g, side="right")
        within = g - self.start[core]
        return (core, self.space.stacks[within // self.n_turns],
                self.space.turns[within % self.n_turns])


def _magnetic_rows(space: model.DesignSpace, core, stack, turns) -> dict[str, np.ndarray]:
    """Magnetic rows of the given groups (group-major, then material, then gap option):
    gap options only where a gap can be cut. ``group`` is the row's position in the
    given group arrays."""
    group, material, gap_option = _grid(
        np.arange(len(core)), np.arange(len(space.materials.ids)),
        np.arange(space.n_gap_options),
    )
    keep = (gap_option == 0) | model.gap_allowed(space, core[group], material)
    group = group[keep]
    return {
        "core": core[group], "stack": stack[group], "material": material[keep],
        "turns": turns[group], "gap_option": gap_option[keep], "group": group,
    }


def magnetic_grid(space: model.DesignSpace) -> dict[str, np.ndarray]:
    """Flat (core, stack, material, turns, gap_option) combinations that exist: stacks up
    to each core's maximum, and gap options only where a gap can be cut. The whole grid at
    once: for tests and small spaces; the search walks it in blocks."""
    groups = _Groups(space)
    rows = _magnetic_rows(space, *groups.decode(0, groups.count))
    del rows["group"]
    return rows


def _options_per_core(space: model.DesignSpace) -> np.ndarray:
    """(material, gap option) rows of one (core, stack, turns) group, per core."""
    ferrite = int(np.count_nonzero(space.materials.kind == MaterialKind.FERRITE))
    others = len(space.materials.ids) - ferrite
    gappable = space.cores.family != Family.TOROID
    return np.where(gappable, ferrite * space.n_gap_options + others,
                    len(space.materials.ids)).astype(np.int64)


def space_size(space: model.DesignSpace) -> int:
    """Number of candidates in the design space (what `explore_exhaustive` covers), counted
    without building the grid (exact, in Python integers)."""
    groups = _Groups(space)
    options = _options_per_core(space)
    magnetic = sum(int(n) * int(o) for n, o in zip(groups.stacks_per_core.tolist(),
                                                   options.tolist(), strict=True))
    return magnetic * groups.n_turns * len(space.wires.ids) * len(space.parallels)


def core_stack_units(space: model.DesignSpace) -> tuple[np.ndarray, np.ndarray]:
    """The (core, stack) units of the space in walking order: the first group of each
    unit, then the end (length units + 1), and the candidates of each unit (every turns
    count of the unit's core and stack, with every material, gap option and winding)."""
    groups = _Groups(space)
    stacks = groups.stacks_per_core
    unit_core = np.repeat(np.arange(len(stacks)), stacks)
    within = np.arange(len(unit_core)) - np.repeat(np.cumsum(stacks) - stacks, stacks)
    first = groups.start[unit_core] + within * groups.n_turns
    bounds = np.append(first, groups.count).astype(np.int64)
    windings = len(space.wires.ids) * len(space.parallels)
    candidates = _options_per_core(space)[unit_core] * groups.n_turns * windings
    return bounds, candidates.astype(np.int64)


@dataclass
class SearchPart:
    """What a walk over a range of (core, stack, turns) groups leaves: its front, counts
    and closest misses. Parts of disjoint ranges merge exactly (`merge_parts`), in group
    order, into what one walk over their union leaves."""

    front: RunningFront
    nominal_front: RunningFront | None
    eliminated: dict[str, int]
    feasible: int
    done: int
    near: _NearMisses
    near_magnetic: _MagneticNearMisses
    stage_sizes: dict[str, int]
    interrupted: bool = False
    pool: NearFrontPool | None = None


def group_count(space: model.DesignSpace) -> int:
    """Number of (core, stack, turns) groups of ``space`` (what `search_groups` walks)."""
    return _Groups(space).count


def explore_exhaustive(
    space: model.DesignSpace,
    objectives: list[str],
    chunk_size: int = DEFAULT_CHUNK,
    progress: Callable[[int, int], None] | None = None,
    robust: ToleranceSpec | None = None,
    search_plan: SearchPlan | None = None,
) -> ExhaustiveOutcome:
    """Evaluate every candidate of ``space`` and keep the exact Pareto front over
    ``objectives`` (names of `model.OBJECTIVE_COLUMNS`).

    With ``robust`` (the study's spreads), a feasible candidate enters the front only if it
    also meets every limit at every tolerance corner (`optimag.tolerance.robust_feasible`);
    those that do not are counted under ``tolerance_corners``, and the front of all
    nominally feasible candidates is kept beside it as ``nominal_front``.

    ``search_plan`` (default `plan(space, chunk_size)`) sizes the blocks and chunks.
    ``progress(done, total)`` is called after each chunk with candidate counts. A
    KeyboardInterrupt stops the pass cleanly: the outcome then holds what was found so far
    and ``interrupted`` is set. `optimag.search.parallel` runs the same walk on many
    processes or machines.
    """
    start = time.perf_counter()
    walk = search_plan or plan(space, chunk_size)
    part = search_groups(space, objectives, walk, 0, group_count(space), robust=robust,
                         progress=progress)
    return finish_search(space, part, walk.candidates, time.perf_counter() - start)


def search_groups(
    space: model.DesignSpace,
    objectives: list[str],
    walk: SearchPlan,
    first_group: int,
    stop_group: int,
    robust: ToleranceSpec | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> SearchPart:
    """Walk groups ``first_group`` to ``stop_group - 1`` (see `group_count`) in the blocks
    and chunks of ``walk``: the part of `explore_exhaustive` that covers them.
    ``progress(done, total)`` counts this range's candidates against the whole space's."""
    chunk = walk.chunk
    eliminated = dict.fromkeys(model.CONSTRAINTS, 0)
    front = RunningFront(len(objectives))
    pool = NearFrontPool(len(objectives), NEAR_FRONT_CAP)
    nominal_front = None
    if robust is not None:
        eliminated[ROBUST_CONSTRAINT] = 0
        nominal_front = RunningFront(len(objectives))
    n_wire, n_par = len(space.wires.ids), len(space.parallels)
    windings_per_group = n_wire * n_par
    # Wires per stage-2 slice: all of them unless one group's windings exceed a chunk.
    wires_per_slice = max(1, min(n_wire, chunk // max(n_par, 1)))
    wire_slices = [np.arange(lo, min(lo + wires_per_slice, n_wire), dtype=np.int64)
                   for lo in range(0, n_wire, wires_per_slice)]
    slice_windings = wires_per_slice * n_par

    groups = _Groups(space)
    rows_per_group = max(1, len(space.materials.ids) * space.n_gap_options)
    groups_per_block = max(1, walk.magnetic_block // rows_per_group)
    total = walk.candidates
    done = 0
    near = _NearMisses()
    near_magnetic = _MagneticNearMisses()
    interrupted = False
    feasible = 0
    stage_sizes = {"magnetic": 0}
    try:
        for first in range(first_group, stop_group, groups_per_block):
            stop = min(first + groups_per_block, stop_group)
            mag = _magnetic_rows(space, *groups.decode(first, stop))
            # Stage 1: magnetic rows of this block of groups.
            mag_out = model.magnetic_stage(
                space, mag["core"], mag["stack"], mag["material"], mag["turns"],
                mag["gap_option"],
            )
            stage_sizes["magnetic"] += len(mag["core"])
            mag_viol = np.stack(
                [mag_out[f"violation_{c}"] for c in model.MAGNETIC_CONSTRAINTS], axis=1
            )
            mag_first = model.first_violated(mag_viol)
            for index, name in enumerate(model.MAGNETIC_CONSTRAINTS):
                eliminated[name] += int(np.count_nonzero(mag_first == index)) * (
                    windings_per_group
                )
            done += int(np.count_nonzero(mag_first >= 0)) * windings_per_group
            if near.candidates is None:
                near_magnetic.offer(mag, mag_viol.max(axis=1))
            mag_pass = np.flatnonzero(mag_first < 0)
            if progress:
                progress(done, total)
            if not mag_pass.size:
                continue
            # Rows are group-major, so the survivors are sorted by group already.
            block_groups, group_start, survivors_per_group = np.unique(
                mag["group"][mag_pass], return_index=True, return_counts=True
            )
            for batch in _batches_of_groups(survivors_per_group, slice_windings, chunk):
                for wires in wire_slices:
                    for candidates, metrics, n_processed in _process_group_batch(
                        space, mag, mag_out, mag_pass, block_groups[batch],
                        group_start[batch], survivors_per_group[batch], wires, eliminated, chunk,
                        stage_sizes,
                    ):
                        done += n_processed
                        if candidates is not None:
                            if robust is not None:
                                _screen_corners(space, candidates, metrics, robust,
                                                objectives, eliminated, nominal_front)
                            ok = metrics["feasible"]
                            feasible += int(np.count_nonzero(ok))
                            if np.any(ok):
                                values = model.objective_matrix(metrics, objectives)[ok]
                                fields = {f: getattr(candidates, f)[ok]
                                          for f in CANDIDATE_FIELDS}
                                front.offer(values, fields)
                                pool.offer(values, fields | {
                                    f: metrics[f][ok] for f in NEAR_FRONT_FIGURES})
                            near.offer(candidates, metrics)
                        if progress:
                            progress(done, total)
    except KeyboardInterrupt:
        interrupted = True
    return SearchPart(
        front=front, nominal_front=nominal_front, eliminated=eliminated, feasible=feasible,
        done=done, near=near, near_magnetic=near_magnetic, stage_sizes=stage_sizes,
        interrupted=interrupted, pool=pool,
    )


def merge_parts(parts: list[SearchPart], n_objectives: int) -> SearchPart:
    """One part from parts of disjoint group ranges, given in group order: fronts merged
    exactly (a point dominated over the union is dominated by a member of some part's
    front), counts added, closest misses kept as one walk keeps them."""
    front = RunningFront(n_objectives)
    robust = any(p.nominal_front is not None for p in parts)
    nominal_front = RunningFront(n_objectives) if robust else None
    eliminated: dict[str, int] = {}
    stage_sizes: dict[str, int] = {}
    near, near_magnetic = _NearMisses(), _MagneticNearMisses()
    pool = NearFrontPool(n_objectives, NEAR_FRONT_CAP)
    for part in parts:
        front.offer(part.front.objectives, part.front.payload)
        if part.pool is not None:
            pool.merge(part.pool)
        if nominal_front is not None and part.nominal_front is not None:
            nominal_front.offer(part.nominal_front.objectives, part.nominal_front.payload)
        for counts, into in ((part.eliminated, eliminated), (part.stage_sizes, stage_sizes)):
            for name, count in counts.items():
                into[name] = into.get(name, 0) + count
        near.merge(part.near)
        near_magnetic.merge(part.near_magnetic)
    if not parts:
        eliminated = dict.fromkeys(model.CONSTRAINTS, 0)
    return SearchPart(
        front=front, nominal_front=nominal_front, eliminated=eliminated,
        feasible=sum(p.feasible for p in parts), done=sum(p.done for p in parts), near=near,
        near_magnetic=near_magnetic, stage_sizes=stage_sizes,
        interrupted=any(p.interrupted for p in parts), pool=pool,
    )


def finish_search(space: model.DesignSpace, part: SearchPart, total: int,
                  wall_time_s: float, interrupted: bool = False) -> ExhaustiveOutcome:
    """The outcome of a search whose parts (merged into ``part``) cover the space of
    ``total`` candidates, or stopped early (``interrupted``, or a part interrupted)."""
    interrupted = interrupted or part.interrupted
    if not interrupted:
        counted = part.feasible + sum(part.eliminated.values())
        if counted != total:
            raise AssertionError(f"candidate accounting is off: {counted} != {total}")
    near_cands, near_viol = part.near.result()
    if near_cands is None and not interrupted and part.feasible == 0:
        near_cands, near_viol = _near_misses_from_magnetic(space, part.near_magnetic)
    return ExhaustiveOutcome(
        front=part.front,
        total=total,
        feasible=part.feasible,
        eliminated=part.eliminated,
        near_misses=near_cands,
        near_miss_violation=near_viol,
        wall_time_s=wall_time_s,
        interrupted=interrupted,
        stage_sizes=part.stage_sizes,
        nominal_front=part.nominal_front,
        pool=_pruned(part.pool),
    )


def _pruned(pool: NearFrontPool | None) -> NearFrontPool | None:
    if pool is not None:
        pool.prune()
    return pool


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
    space, mag, mag_out, mag_pass, groups, group_start, group_count, wires, eliminated,
    chunk_size, stage_sizes,
):
    """Winding stage for a batch of (core, stack, turns) groups and a slice of the wires,
    then the join and the final stage. Yields (candidates, metrics, number of candidates
    accounted for)."""
    first_row = mag_pass[group_start]
    g_core, g_stack = mag["core"][first_row], mag["stack"][first_row]
    g_turns = mag["turns"][first_row]
    gi, wire, parallel = _grid(np.arange(len(groups)), wires, space.parallels)
    core, stack, turns = g_core[gi], g_stack[gi], g_turns[gi]
    # The fit, fill and box decide the winding constraints; the rest of the layout is
    # computed for the windings that pass them only.
    layout = model.winding_fit_stage(space, core, stack, turns, wire, parallel)
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
    layout.update(model.winding_layout_rest(space, core[w_pass], stack[w_pass],
                                            turns[w_pass], wire[w_pass], parallel[w_pass],
                                            layout))
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


class _Gathered(Mapping):
    """The columns of ``source`` at ``rows``, each gathered when first read: stage 3 reads
    a few dozen of the stage outputs, and a chunk's rows are gathered from them once.
    Columns set on it (``update``) are its own; ``skip`` names columns it does not hold."""

    def __init__(self, source: Mapping[str, np.ndarray], rows: np.ndarray,
                 skip: tuple[str, ...] = ()):
        self._source, self._rows, self._skip = source, rows, frozenset(skip)
        self._columns: dict[str, np.ndarray] = {}

    def __getitem__(self, key: str) -> np.ndarray:
        column = self._columns.get(key)
        if column is None:
            if key in self._skip or key not in self._source:
                raise KeyError(key)
            column = self._columns[key] = self._source[key][self._rows]
        return column

    def __iter__(self) -> Iterator[str]:
        own = [k for k in self._columns if k not in self._source]
        return iter([*(k for k in self._source if k not in self._skip), *own])

    def __len__(self) -> int:
        return sum(1 for _ in self)

    def update(self, columns: Mapping[str, np.ndarray]) -> None:
        self._columns.update(columns)

    def take(self, keep: np.ndarray) -> _Gathered:
        """The same columns at the rows ``keep`` of these (columns read so far are sliced,
        the others gathered from the source when read)."""
        taken = _Gathered(self._source, self._rows[keep], tuple(self._skip))
        taken._columns = {k: v[keep] for k, v in self._columns.items()}
        return taken


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
    mag_part = _Gathered(mag_out, mag_row, model.HARMONIC_KEYS)
    wdg_part = _Gathered(layout, w_idx, model.HARMONIC_KEYS)
    wdg_part.update(model.winding_ac_loss(mag_out, mag_row, layout, w_idx,
                                          operating=space.operating))
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
        mag_part = mag_part.take(keep)
        wdg_part = wdg_part.take(keep)
        coefficients = tuple(a[keep] for a in coefficients)
    final = model.combine_stage(
        space, candidates.material, candidates.stack, candidates.core, candidates.turns,
        mag_part, wdg_part, coefficients, wire=candidates.wire,
    )
    # Later names win, as in {**mag_part, **wdg_part, **final}.
    metrics = ChainMap(final, wdg_part, mag_part)
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

    def merge(self, other: _NearMisses) -> None:
        """Take in the misses another walk kept over later groups (same ranking)."""
        if other.candidates is None:
            return
        if self.candidates is None:
            self.candidates, self.violation = other.candidates, other.violation
            return
        merged = model.Candidates(**{
            f: np.concatenate([getattr(self.candidates, f), getattr(other.candidates, f)])
            for f in CANDIDATE_FIELDS
        })
        merged_v = np.concatenate([self.violation, other.violation])
        keep = np.argsort(merged_v, kind="stable")[:NEAR_MISS_COUNT]
        self.candidates, self.violation = merged.take(keep), merged_v[keep]

    def result(self):
        return self.candidates, self.violation


class _MagneticNearMisses:
    """The magnetic rows with the smallest worst violation seen so far, kept for when no
    candidate gets past the first two stages."""

    KEEP = NEAR_MISS_COUNT * 4

    def __init__(self):
        self.rows: dict[str, np.ndarray] | None = None
        self.worst = np.empty(0)

    def offer(self, mag: dict[str, np.ndarray], worst: np.ndarray) -> None:
        picked = np.argsort(worst, kind="stable")[: self.KEEP]
        fields = ("core", "stack", "material", "turns", "gap_option")
        new = {f: mag[f][picked] for f in fields}
        if self.rows is None:
            merged, merged_w = new, worst[picked]
        else:
            merged = {f: np.concatenate([self.rows[f], new[f]]) for f in fields}
            merged_w = np.concatenate([self.worst, worst[picked]])
        keep = np.argsort(merged_w, kind="stable")[: self.KEEP]
        self.rows = {f: v[keep] for f, v in merged.items()}
        self.worst = merged_w[keep]

    def merge(self, other: _MagneticNearMisses) -> None:
        """Take in the rows another walk kept over later groups (same ranking)."""
        if other.rows is None:
            return
        if self.rows is None:
            self.rows, self.worst = other.rows, other.worst
            return
        merged = {f: np.concatenate([self.rows[f], other.rows[f]]) for f in self.rows}
        merged_w = np.concatenate([self.worst, other.worst])
        keep = np.argsort(merged_w, kind="stable")[: self.KEEP]
        self.rows = {f: v[keep] for f, v in merged.items()}
        self.worst = merged_w[keep]


def _near_misses_from_magnetic(space, kept: _MagneticNearMisses):
    """When no candidate got past the first two stages, pair the least-violating magnetic
    combinations with each wire/parallel choice and keep the closest full candidates."""
    if kept.rows is None or not len(kept.worst):
        return None, np.empty(0)
    mag = kept.rows
    picked = np.arange(len(kept.worst))
    rows, wire, parallel = _grid(picked, np.arange(len(space.wires.ids)), space.parallels)
    candidates = model.Candidates(
        core=mag["core"][rows], stack=mag["stack"][rows], material=mag["material"][rows],
        turns=mag["turns"][rows], gap_option=mag["gap_option"][rows], wire=wire,
        parallel=parallel,
    )
    metrics = model.evaluate(space, candidates)
    order = np.argsort(metrics["worst_violation"], kind="stable")[:NEAR_MISS_COUNT]
    return candidates.take(order), metrics["worst_violation"][order]
