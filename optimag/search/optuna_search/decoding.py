"""Trial parameters to designs: the mappings and the turns and winding decoders.

See `OptunaProblem` for what the parameters and the decoders mean. Every function here
is deterministic: the same parameters give the same design whenever they are read.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from optimag import model
from optimag.codes import MaterialKind
from optimag.search.optuna_search.custom import CUSTOM_PARAM_PREFIX, clip_height

if TYPE_CHECKING:
    from optimag.search.optuna_search.problem import OptunaProblem

#: Rows of the (trial x turns) magnetic grid evaluated at once when decoding turns.
DECODE_ROWS = 200_000


@dataclass(frozen=True)
class TrialTable:
    """Decoded trials, one row each (custom dimensions NaN for catalogue cores)."""

    number: np.ndarray
    catalogue_core: np.ndarray  # index into the catalogue cores, -1 for a custom core
    stack: np.ndarray
    material: np.ndarray
    turns: np.ndarray
    gap_option: np.ndarray
    wire: np.ndarray
    parallel: np.ndarray
    custom_dims_m: np.ndarray  # (n, n_dims)

    def __len__(self) -> int:
        return len(self.number)

    def take(self, index) -> TrialTable:
        return TrialTable(**{f.name: getattr(self, f.name)[index]
                             for f in dataclasses.fields(self)})

    @property
    def is_custom(self) -> np.ndarray:
        return self.catalogue_core < 0


def concat_tables(parts: Sequence[TrialTable]) -> TrialTable:
    """The rows of ``parts``, one after the other."""
    return TrialTable(**{
        f.name: np.concatenate([getattr(p, f.name) for p in parts])
        for f in dataclasses.fields(TrialTable)
    })


def replace_windings(table: TrialTable, rows: dict[int, dict]) -> TrialTable:
    """``table`` with the turns, wire and parallel strands of row ``k`` replaced by
    ``rows[k]`` (a mapping with those three keys)."""
    turns, wire, parallel = table.turns.copy(), table.wire.copy(), table.parallel.copy()
    for k, row in rows.items():
        turns[k], wire[k], parallel[k] = row["turns"], row["wire"], row["parallel"]
    return dataclasses.replace(table, turns=turns, wire=wire, parallel=parallel)


def decode(problem: OptunaProblem, numbers: Sequence[int],
           params: Sequence[dict]) -> TrialTable:
    """Designs (index arrays) of the trials numbered ``numbers`` with ``params``, in
    chunks that bound the decoders' grids."""
    n = len(params)
    per_chunk = max(1, DECODE_ROWS // max(len(problem.space.turns), len(problem.winding_wire)))
    if n <= per_chunk:
        return _decode(problem, numbers, params)
    return concat_tables([_decode(problem, numbers[lo:lo + per_chunk],
                                  params[lo:lo + per_chunk])
                          for lo in range(0, n, per_chunk)])


def _decode(problem: OptunaProblem, numbers: Sequence[int],
            params: Sequence[dict]) -> TrialTable:
    space, study = problem.space, problem.study
    n = len(params)
    column = lambda key: np.array([p[key] for p in params])  # noqa: E731
    catalogue_core = np.array([problem.catalogue_core(p) for p in params], dtype=np.int64)
    stack = column("stack").astype(np.int64).reshape(n)
    material = np.array([problem.material_index[p["material"]] for p in params],
                        dtype=np.int64)
    gap_option = np.zeros(n, dtype=np.int64)
    if space.gap_grid_m is not None:
        grid_mm = [float(g) for g in study.search.gap_grid_mm]
        gap_option = np.array([grid_mm.index(float(p["gap_mm"])) for p in params],
                              dtype=np.int64)
    if len(space.gap_kinds) > 1:
        kind = np.array([space.gap_kinds.index(p["gap_kind"]) for p in params],
                        dtype=np.int64)
        gap_option = kind * space.n_gap_values + gap_option
    custom = catalogue_core < 0
    safe_core = np.where(custom, 0, catalogue_core)
    stack = np.where(custom, 1, np.minimum(stack, space.cores.max_stack[safe_core]))
    cuttable = model.gap_allowed(space, safe_core, material)
    if problem.custom is not None:
        # Custom cores are ferrite E or pot shapes: gappable with a ferrite material.
        cuttable = np.where(custom, space.materials.kind[material] == MaterialKind.FERRITE,
                             cuttable)
    gap_option = np.where(cuttable, gap_option, 0)
    dims = np.full((n, len(problem.dimension_ranges)), np.nan)
    for j, (name, (low, _high)) in enumerate(problem.dimension_ranges.items()):
        key = f"{CUSTOM_PARAM_PREFIX}{name}_mm"
        dims[:, j] = [p.get(key, low * 1e3) * 1e-3 for p in params]
    dims[~custom] = np.nan
    if problem.custom is not None and custom.any():
        dims[custom] = clip_height(problem.custom, problem.dimension_ranges, dims[custom])
    if problem.decoders:
        turns = np.zeros(n, dtype=np.int64)
        wire = parallel = turns
    else:
        turns = column("turns").astype(np.int64).reshape(n)
        wire = problem.wire_order[column("wire").astype(np.int64).reshape(n)]
        parallel = column("parallel").astype(np.int64).reshape(n)
    table = TrialTable(
        number=np.asarray(numbers, dtype=np.int64).reshape(n),
        catalogue_core=catalogue_core, stack=stack, material=material, turns=turns,
        gap_option=gap_option, wire=wire, parallel=parallel, custom_dims_m=dims,
    )
    if not problem.decoders or n == 0:
        return table
    table = decode_turns(problem, table, column("turns_position").astype(float).reshape(n))
    return decode_winding(problem, table,
                          column("winding_position").astype(float).reshape(n))


def pick_position(admissible: np.ndarray, position: np.ndarray) -> np.ndarray:
    """Column index at relative ``position`` among the admissible columns of each row
    (among all columns where a row has none)."""
    admissible = np.where(admissible.any(axis=1, keepdims=True), admissible, True)
    count = admissible.sum(axis=1)
    wanted = np.minimum(np.floor(position * count), count - 1).astype(np.int64)
    rank = np.cumsum(admissible, axis=1) - 1
    return np.argmax(admissible & (rank == wanted[:, None]), axis=1)


def decode_turns(problem: OptunaProblem, table: TrialTable,
                 position: np.ndarray) -> TrialTable:
    """``table`` with the turn count at ``position`` in the band of turns meeting the
    magnetic constraints (`model.MAGNETIC_CONSTRAINTS`) of each row's core."""
    space, candidates = problem.materialise(table)
    grid = space.turns
    n, m = len(table), len(grid)
    rows = np.repeat(np.arange(n), m)
    mag = model.magnetic_stage(
        space, candidates.core[rows], candidates.stack[rows], candidates.material[rows],
        np.tile(grid, n), candidates.gap_option[rows],
    )
    admissible = np.ones(n * m, dtype=bool)
    for name in model.MAGNETIC_CONSTRAINTS:
        admissible &= ~(mag[f"violation_{name}"] > 0)
    turns = grid[pick_position(admissible.reshape(n, m), position)]
    return dataclasses.replace(table, turns=turns.astype(np.int64))


def decode_winding(problem: OptunaProblem, table: TrialTable,
                   position: np.ndarray) -> TrialTable:
    """``table`` with the (wire, parallel) pair at ``position`` among the pairs (in
    copper-area order) meeting the winding constraints (`model.WINDING_CONSTRAINTS`)."""
    space, candidates = problem.materialise(table)
    n, m = len(table), len(problem.winding_wire)
    rows = np.repeat(np.arange(n), m)
    layout = model.winding_layout_stage(
        space, candidates.core[rows], candidates.stack[rows], candidates.turns[rows],
        np.tile(problem.winding_wire, n), np.tile(problem.winding_parallel, n),
    )
    admissible = np.ones(n * m, dtype=bool)
    for name in model.WINDING_CONSTRAINTS:
        admissible &= ~(layout[f"violation_{name}"] > 0)
    pick = pick_position(admissible.reshape(n, m), position)
    return dataclasses.replace(
        table, wire=problem.winding_wire[pick].astype(np.int64),
        parallel=problem.winding_parallel[pick].astype(np.int64),
    )
