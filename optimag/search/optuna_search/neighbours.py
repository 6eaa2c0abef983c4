"""The nearest design not yet evaluated: what a trial evaluates when its parameters decode
to a design the study already holds (a converging genetic sampler otherwise spends most
of its trials on copies of the designs it has found)."""

from __future__ import annotations

import dataclasses
from collections.abc import Iterator
from typing import TYPE_CHECKING

import numpy as np

from optimag import model

if TYPE_CHECKING:
    from optimag.search.optuna_search.decoding import TrialTable
    from optimag.search.optuna_search.problem import OptunaProblem


def outward(start: int, size: int) -> Iterator[int]:
    """Indices start, start+1, start-1, start+2, ... within [0, size)."""
    yield start
    for step in range(1, size):
        for index in (start + step, start - step):
            if 0 <= index < size:
                yield index


class Neighbours:
    """Finds unseen neighbours of a problem's designs, keeping the admissible turns and
    windings of catalogue cores (they repeat from trial to trial)."""

    def __init__(self, problem: OptunaProblem):
        self.problem = problem
        self.turn_cache: dict[tuple, np.ndarray] = {}
        self.winding_cache: dict[tuple, np.ndarray] = {}
        self.exhausted: set[tuple] = set()
        # `exhausted` holds for one `seen` set (one study); another study starts afresh.
        self.exhausted_seen: set | None = None

    def admissible_turns(self, space: model.DesignSpace, key: tuple, cacheable: bool
                         ) -> np.ndarray:
        """Turn counts meeting the magnetic constraints of (core, stack, material, gap)
        ``key`` (every turn count when none does)."""
        choices = self.turn_cache.get(key) if cacheable else None
        if choices is None:
            core, stack, material, gap = key
            grid = space.turns
            ones = np.ones(len(grid), dtype=np.int64)
            mag = model.magnetic_stage(space, core * ones, stack * ones, material * ones,
                                       grid, gap * ones)
            ok = np.ones(len(grid), dtype=bool)
            for name in model.MAGNETIC_CONSTRAINTS:
                ok &= ~(mag[f"violation_{name}"] > 0)
            choices = grid[ok] if ok.any() else grid
            if cacheable:
                self.turn_cache[key] = choices
        return choices

    def admissible_windings(self, space: model.DesignSpace, key: tuple, cacheable: bool
                            ) -> np.ndarray:
        """Positions in the problem's (wire, parallel) order meeting the winding
        constraints of (core, stack, turns) ``key`` (all of them when none does)."""
        choices = self.winding_cache.get(key) if cacheable else None
        if choices is None:
            core, stack, turns = key
            wires, parallels = self.problem.winding_wire, self.problem.winding_parallel
            ones = np.ones(len(wires), dtype=np.int64)
            layout = model.winding_layout_stage(space, core * ones, stack * ones,
                                                turns * ones, wires, parallels)
            ok = np.ones(len(wires), dtype=bool)
            for name in model.WINDING_CONSTRAINTS:
                ok &= ~(layout[f"violation_{name}"] > 0)
            choices = np.flatnonzero(ok) if ok.any() else np.arange(len(wires))
            if cacheable:
                self.winding_cache[key] = choices
        return choices

    def unseen(self, row: TrialTable, seen: set) -> TrialTable | None:
        """The nearest design to the one-row ``row`` that is not in ``seen``, changing
        only the winding and, if every admissible winding is taken, the turns; None when
        the whole admissible neighbourhood has been evaluated.

        Order: windings at growing distance (in the copper-area order of admissible
        pairs) at the same turns, then the next admissible turn counts up and down.
        """
        problem = self.problem
        space, candidates = problem.materialise(row)
        core, stack = int(candidates.core[0]), int(candidates.stack[0])
        material, gap = int(candidates.material[0]), int(candidates.gap_option[0])
        cacheable = not row.is_custom[0]
        key = (core, stack, material, gap)
        if self.exhausted_seen is not seen:
            self.exhausted, self.exhausted_seen = set(), seen
        if cacheable and key in self.exhausted:
            return None
        turn_choices = self.admissible_turns(space, key, cacheable)
        start = int(np.argmin(np.abs(turn_choices - row.turns[0])))
        current = np.flatnonzero((problem.winding_wire == row.wire[0])
                                 & (problem.winding_parallel == row.parallel[0]))
        # Key layout of `design_keys`: (core, stack, material, turns, gap, wire, parallel,
        # custom dimensions...).
        key_now = problem.design_keys(row)[0]
        head, gap_key, tail = key_now[:3], key_now[4], key_now[7:]
        for t_index in outward(start, len(turn_choices)):
            turns = int(turn_choices[t_index])
            choices = self.admissible_windings(space, (core, stack, turns), cacheable)
            anchor = int(np.argmin(np.abs(choices - (current[0] if current.size else 0))))
            for w_index in outward(anchor, len(choices)):
                pick = int(choices[w_index])
                wire = int(problem.winding_wire[pick])
                parallel = int(problem.winding_parallel[pick])
                if (*head, turns, gap_key, wire, parallel, *tail) not in seen:
                    return dataclasses.replace(
                        row, turns=np.array([turns]), wire=np.array([wire]),
                        parallel=np.array([parallel]),
                    )
        if cacheable:
            # Every neighbour is in `seen`, which only grows: it stays exhausted.
            self.exhausted.add(key)
        return None
