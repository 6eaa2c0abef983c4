"""A study's design space as optuna parameters, and the designs they name.

`OptunaProblem` draws a trial's parameters (`suggest`), turns parameters into designs
(`decode`, in `decoding`), builds the design space a batch is evaluated in (catalogue cores
plus one row per custom core drawn, `materialise`) and scores a batch with one
`model.evaluate` call (`evaluate`).

Out-of-range parameter values are mapped, not rejected, the same way whenever a trial is
read back: a stack above the core's ``max_stack`` is clipped to it, a gap option on a core
that cannot be gapped becomes "no gap", custom cores have a stack of 1, and a custom
core's window breadth is clipped so the set stays within ``max_height_mm``.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np
import optuna

from optimag import model, tolerance
from optimag.search import custom_core as geometry
from optimag.search.optuna_search import custom, decoding
from optimag.search.optuna_search.decoding import TrialTable
from optimag.search.optuna_search.neighbours import Neighbours

if TYPE_CHECKING:
    from optimag.catalog import Catalog
    from optimag.study import Study

__all__ = ["OptunaProblem", "TrialTable"]


class OptunaProblem:
    """A study's design space as optuna parameters, and back.

    Parameters of a trial:

    * ``core_source`` — ``"catalogue"`` or ``"custom"`` (only when both are searched);
    * ``core`` — position of the catalogue core in the cores sorted by area product
      Ae x window area, so a small step is a small change of size;
    * ``stack``, ``material`` and, with a gap grid, ``gap_mm``;
    * with ``decoders`` (default): ``turns_position`` and ``winding_position`` in [0, 1];
      without: ``turns``, ``wire`` (position in the wires sorted by copper area) and
      ``parallel``;
    * with a custom core: ``custom_<dimension>_mm`` for each dimension with a range.

    Every parameter is drawn in every trial, so the search space stays the same for all
    trials and the samplers model them jointly.

    The decoders (decoder-based constraint handling) turn the two positions into turns
    and a winding that the drawn core admits:

    * turns: the magnetic constraints (`model.MAGNETIC_CONSTRAINTS`) hold on a narrow band
      of turns (a gapless powder or ring core meets the inductance at one or two turn
      counts only); ``turns_position`` picks the turn count at that relative position in
      the band;
    * winding: the (wire, parallel) pairs sorted by copper area per turn; the winding
      constraints (`model.WINDING_CONSTRAINTS`: fit, fill, height, footprint, volume) select the
      pairs the core and turns admit; ``winding_position`` picks one at that relative
      position.

    Where nothing is admissible the position is applied to the whole range instead, the
    trial is infeasible and its violations steer the sampler away.
    """

    def __init__(self, study: Study, catalog: Catalog,
                 space: model.DesignSpace | None = None, decoders: bool = True):
        self.study = study
        self.catalog = catalog
        self.space = space if space is not None else model.build_design_space(study, catalog)
        self.objectives = list(study.search.objectives)
        self.custom = getattr(study, "custom_core", None)
        self.decoders = decoders
        cores, wires = self.space.cores, self.space.wires
        with_catalogue = self.custom is None or self.custom.include_catalogue_cores
        viable = self._cores_within_size_limits() if with_catalogue else np.empty(0, int)
        self.excluded_cores = [str(cores.ids[i]) for i in range(len(cores.ids))
                               if with_catalogue and i not in set(viable.tolist())]
        size = cores.ae_m2[viable] * cores.window_area_m2[viable]
        self.core_order = viable[np.argsort(size, kind="stable")]
        if with_catalogue and len(self.core_order) == 0:
            raise ValueError("no core to search: the catalogue filter left none")
        self.core_sources = (["catalogue"] if with_catalogue else []) + (
            ["custom"] if self.custom is not None else [])
        self.wire_order = np.argsort(wires.copper_area_m2, kind="stable")
        wire_grid, parallel_grid = (g.ravel() for g in np.meshgrid(
            np.arange(len(wires.ids)), self.space.parallels, indexing="ij"))
        order = np.argsort(wires.copper_area_m2[wire_grid] * parallel_grid, kind="stable")
        self.winding_wire, self.winding_parallel = wire_grid[order], parallel_grid[order]
        self.material_index = {str(m): i for i, m in enumerate(self.space.materials.ids)}
        self.dimension_ranges = self.custom.dimension_ranges_m() if self.custom else {}
        self.neighbours = Neighbours(self)

    def _cores_within_size_limits(self) -> np.ndarray:
        """Catalogue cores that can meet the height, footprint and volume limits at all.

        The wound box grows with the stack, the turns, the strands in parallel and the
        conductor build, so the smallest box a core can have is that of its smallest
        stack wound with one turn of the thinnest-building conductor. A core whose
        smallest box already breaks a limit cannot be part of a feasible design and is
        left out of the sampled cores (the exhaustive search counts such designs as
        eliminated by that limit). If no core is left, all are kept so the run can still
        report its nearest misses.
        """
        space = self.space
        n_core, n_wire = len(space.cores.ids), len(space.wires.ids)
        core, wire = (g.ravel() for g in np.meshgrid(
            np.arange(n_core), np.arange(n_wire), indexing="ij"))
        ones = np.ones_like(core)
        layout = model.winding_layout_stage(
            space, core, ones * int(space.stacks[0]), ones * int(space.turns[0]), wire,
            ones * int(space.parallels[0]),
        )
        fits = np.ones(len(core), dtype=bool)
        for name in ("height", "footprint", "volume"):
            fits &= ~(layout[f"violation_{name}"] > 0)
        viable = np.flatnonzero(fits.reshape(n_core, n_wire).any(axis=1))
        return viable if viable.size else np.arange(n_core)

    # --- naming -------------------------------------------------------------------------

    @property
    def study_name(self) -> str:
        """Name of the optuna study: the study's name, suffixed when it has a custom
        core (its search space differs)."""
        if self.custom is None:
            return self.study.name
        return f"{self.study.name}-custom-{self.custom.family}"

    @property
    def dimension_names(self) -> list[str]:
        return list(self.dimension_ranges)

    def describe(self) -> dict:
        """What the integer parameters mean (kept with the optuna study)."""
        return {
            "core": [str(self.space.cores.ids[i]) for i in self.core_order],
            "wire": [str(self.space.wires.ids[i]) for i in self.wire_order],
            "decoders": self.decoders,
            "cores_left_out_by_size_limits": self.excluded_cores,
        }

    # --- sampling -----------------------------------------------------------------------

    def suggest(self, trial: optuna.Trial) -> None:
        """Draw every parameter of ``trial``."""
        space = self.space
        if len(self.core_sources) > 1:
            trial.suggest_categorical("core_source", self.core_sources)
        if len(self.core_order):
            trial.suggest_int("core", 0, len(self.core_order) - 1)
        trial.suggest_int("stack", int(space.stacks[0]), int(space.stacks[-1]))
        trial.suggest_categorical("material", [str(m) for m in space.materials.ids])
        if space.gap_grid_m is not None:
            trial.suggest_categorical(
                "gap_mm", [float(g) for g in self.study.search.gap_grid_mm])
        if len(space.gap_kinds) > 1:
            trial.suggest_categorical("gap_kind", list(space.gap_kinds))
        if self.decoders:
            trial.suggest_float("turns_position", 0.0, 1.0)
            trial.suggest_float("winding_position", 0.0, 1.0)
        else:
            trial.suggest_int("turns", int(space.turns[0]), int(space.turns[-1]))
            trial.suggest_int("wire", 0, len(self.wire_order) - 1)
            trial.suggest_int("parallel", int(space.parallels[0]), int(space.parallels[-1]))
        step = self.custom.step_mm if self.custom else None
        for name, (low, high) in self.dimension_ranges.items():
            low_mm, high_mm = low * 1e3, high * 1e3
            if high_mm > low_mm:
                # The grid must divide the range; optuna would otherwise shrink `high`.
                grid = step if step and (high_mm - low_mm) / step >= 1 else None
                if grid is not None and not math.isclose(
                    round((high_mm - low_mm) / grid) * grid, high_mm - low_mm, rel_tol=1e-9
                ):
                    grid = None
                trial.suggest_float(f"{custom.CUSTOM_PARAM_PREFIX}{name}_mm", low_mm, high_mm,
                                    step=grid)

    # --- decoding -----------------------------------------------------------------------

    # --- decoding -----------------------------------------------------------------------

    def decode(self, numbers: Sequence[int], params: Sequence[dict]) -> TrialTable:
        """Turn trial parameters into designs (index arrays), with the decoders and the
        mappings of the module docstring applied. Deterministic: the same parameters give
        the same design whenever they are read."""
        return decoding.decode(self, numbers, params)

    def catalogue_core(self, params: dict) -> int:
        """Catalogue core index of a trial, -1 for a custom core."""
        source = params.get("core_source", self.core_sources[0])
        return -1 if source == "custom" else int(self.core_order[params["core"]])

    def design_keys(self, table: TrialTable) -> list[tuple]:
        """A hashable key per decoded design (equal keys: the same design)."""
        dims = np.round(np.nan_to_num(table.custom_dims_m, nan=-1.0) * 1e9).astype(np.int64)
        columns = [table.catalogue_core, table.stack, table.material, table.turns,
                   table.gap_option, table.wire, table.parallel, *dims.T]
        return list(zip(*(c.tolist() for c in columns), strict=True))

    def unseen_neighbour(self, row: TrialTable, seen: set) -> TrialTable | None:
        """The nearest design to the one-row ``row`` not in ``seen`` (`Neighbours.unseen`)."""
        return self.neighbours.unseen(row, seen)

    # --- custom cores -------------------------------------------------------------------

    def custom_geometry(self, dims_m: np.ndarray) -> geometry.CoreGeometry:
        """Effective parameters of custom cores, one per row of ``dims_m``."""
        return custom.custom_geometry(self.custom, self.dimension_names, dims_m)

    def custom_records(self, table: TrialTable) -> dict[str, dict]:
        """Dimensions and effective parameters of the custom cores in ``table`` (trade
        units), keyed by core id."""
        rows = np.flatnonzero(table.is_custom)
        return custom.custom_records(self.custom, self.dimension_names, table.number[rows],
                                     table.custom_dims_m[rows])

    # --- evaluation ---------------------------------------------------------------------

    def materialise(self, table: TrialTable) -> tuple[model.DesignSpace, model.Candidates]:
        """A design space holding the catalogue cores plus one core row per custom trial
        of ``table``, and the candidates of ``table`` indexing it."""
        core = table.catalogue_core.copy()
        space = self.space
        custom_rows = np.flatnonzero(table.is_custom)
        if custom_rows.size:
            ids = [custom.custom_core_id(self.custom.family, int(n))
                   for n in table.number[custom_rows]]
            extra = custom.custom_core_arrays(self.custom, self.dimension_names,
                                              table.custom_dims_m[custom_rows], ids)
            space = dataclasses.replace(space, cores=custom.concat_cores(space.cores, extra))
            core[custom_rows] = len(self.space.cores.ids) + np.arange(custom_rows.size)
        candidates = model.Candidates(
            core=core, stack=table.stack, material=table.material, turns=table.turns,
            gap_option=table.gap_option, wire=table.wire, parallel=table.parallel,
        )
        return space, candidates

    def evaluate(self, table: TrialTable) -> tuple[np.ndarray, np.ndarray]:
        """Objectives (n, n_objectives) and violations (n, n_constraints) of a batch,
        with one `model.evaluate` call."""
        space, candidates = self.materialise(table)
        metrics = model.evaluate(space, candidates)
        objectives = model.objective_matrix(metrics, self.objectives)
        violations = model.violations_matrix(metrics)
        if self.study.search.robust:
            # Robust search: a nominally feasible design is told its worst violation over
            # every tolerance corner, so only designs meeting every limit at every corner
            # count as feasible.
            rows = np.flatnonzero(metrics["feasible"])
            if rows.size:
                violations[rows] = np.maximum(violations[rows], tolerance.worst_corner_violations(
                    space, candidates.take(rows), metrics["gap_m"][rows], self.study.tolerance
                ))
        # Optuna refuses NaN and infinite objectives: a thermal runaway has no finite loss
        # figure, and its constraint already marks it infeasible.
        objectives = np.where(np.isfinite(objectives), objectives, np.finfo(float).max / 1e6)
        violations = np.where(np.isnan(violations), 1.0, violations)
        return objectives, violations
