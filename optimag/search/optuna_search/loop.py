"""The search loop: ask a batch, evaluate it with one model call, tell it, write it.

Only optuna's public ask-and-tell interface is used: ``Study.ask``, ``Trial.suggest_*``,
``Trial.set_user_attr``, ``Trial.set_constraint``, ``Study.tell``, ``Study.get_trials``
and ``Study.add_trials``.
"""

from __future__ import annotations

import contextlib
import time
import uuid
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
import optuna
from optuna.trial import TrialState

from optimag.search.optuna_search.attrs import (
    ATTR_DESIGN,
    ATTR_GENERATION,
    ATTR_VIOLATIONS,
    ATTR_WRITER,
    CONSTRAINT,
    sampler_constraint,
)
from optimag.search.optuna_search.decoding import TrialTable, replace_windings
from optimag.search.optuna_search.problem import OptunaProblem
from optimag.search.optuna_search.result import harvest
from optimag.search.optuna_search.sampler import sampled_generation
from optimag.search.optuna_search.storage import complete_count

__all__ = ["DiskSync", "RunCounts", "run_trials", "tell_trial"]


@dataclass
class RunCounts:
    """What `run_trials` did in this call."""

    asked: int = 0
    told: int = 0
    duplicates: int = 0
    failed_stale: int = 0
    wall_time_s: float = 0.0
    interrupted: bool = False


def run_trials(
    ostudy: optuna.Study,
    problem: OptunaProblem,
    target: int,
    batch_size: int,
    progress: Callable[[int, int], None] | None = None,
    deduplicate: bool = True,
    disk: optuna.Study | None = None,
) -> RunCounts:
    """Ask, evaluate and tell batches until the study has ``target`` COMPLETE trials.

    The COMPLETE count is read from the storage before every batch, so other processes
    working on the same study are taken into account.

    With ``deduplicate``, a trial whose parameters decode to a design already evaluated
    (in the storage when this call started, or by this call) evaluates the nearest
    design not yet evaluated instead (`OptunaProblem.unseen_neighbour`) and keeps it in
    its user attribute ``optimag.design``: a converging genetic sampler otherwise spends
    most of its trials on copies of the designs it has found. A KeyboardInterrupt fails
    the batch in flight and returns with ``interrupted`` set.

    With a ``disk`` study (the storage), ``ostudy`` is an in-memory study: before each
    batch the COMPLETE trials other processes added to ``disk`` are copied in (so the
    sampler learns from them) and the COMPLETE count is read from ``disk``; after it,
    every finished trial is written to ``disk`` whole (`DiskSync`), one storage operation
    per trial instead of one per parameter and attribute. A kill loses at most the
    batch not yet written, and leaves nothing RUNNING in the storage.
    """
    counts = RunCounts()
    start = time.perf_counter()
    sync = DiskSync(ostudy, disk) if disk is not None else None
    seen: set[tuple] = set()
    if deduplicate:
        seen.update(problem.design_keys(harvest(ostudy, problem).table))
    in_flight: list[optuna.Trial] = []
    try:
        while True:
            if sync is not None:
                pulled = sync.pull()
                if deduplicate and pulled:
                    seen.update(problem.design_keys(harvest(pulled, problem).table))
                done = sync.complete
            else:
                done = complete_count(ostudy)
            if progress:
                progress(done, target)
            if done >= target:
                break
            size = min(batch_size, target - done)
            in_flight = [ostudy.ask() for _ in range(size)]
            counts.asked += size
            for trial in in_flight:
                problem.suggest(trial)
            table = problem.decode([t.number for t in in_flight],
                                   [t.params for t in in_flight])
            moved: dict[int, dict] = {}
            if deduplicate:
                table, moved = _replace_repeats(problem, table, seen)
            counts.duplicates += len(moved)
            objectives, violations = problem.evaluate(table)
            for k, trial in enumerate(in_flight):
                tell_trial(ostudy, trial, objectives[k], violations[k], design=moved.get(k),
                           writer=sync.writer if sync is not None else None)
            if sync is not None:
                sync.push([t.number for t in in_flight])
            counts.told += size
            in_flight = []
    except KeyboardInterrupt:
        counts.interrupted = True
        for trial in in_flight:
            # A trial that was already told stays as it is.
            with contextlib.suppress(Exception):
                ostudy.tell(trial, state=TrialState.FAIL)
    counts.wall_time_s = time.perf_counter() - start
    return counts


def _replace_repeats(problem: OptunaProblem, table: TrialTable,
                     seen: set) -> tuple[TrialTable, dict[int, dict]]:
    """``table`` with each design already in ``seen`` replaced by its nearest unseen
    neighbour (where one is left), the replacements by row, and ``seen`` updated."""
    keys = problem.design_keys(table)
    moved: dict[int, dict] = {}
    for k in range(len(table)):
        if keys[k] in seen:
            neighbour = problem.unseen_neighbour(table.take([k]), seen)
            if neighbour is not None:
                moved[k] = {"turns": int(neighbour.turns[0]), "wire": int(neighbour.wire[0]),
                            "parallel": int(neighbour.parallel[0])}
                keys[k] = problem.design_keys(neighbour)[0]
        seen.add(keys[k])
    return (replace_windings(table, moved) if moved else table), moved


def tell_trial(ostudy: optuna.Study, trial: optuna.Trial, objectives: np.ndarray,
               violations: np.ndarray, design: dict | None = None,
               writer: str | None = None) -> None:
    """Tell ``trial`` its objectives, with its violations (user attribute and the one
    sampler constraint, `attrs.CONSTRAINT`), its generation when the sampler keeps one,
    the design evaluated when it differs from the decoded one, and the writer's token."""
    if design is not None:
        trial.set_user_attr(ATTR_DESIGN, design)
    generation = sampled_generation(ostudy.sampler, trial.number)
    if generation is not None:
        trial.set_user_attr(ATTR_GENERATION, generation)
    trial.set_user_attr(ATTR_VIOLATIONS, [float(v) for v in violations])
    if writer is not None:
        trial.set_user_attr(ATTR_WRITER, writer)
    trial.set_constraint(CONSTRAINT, sampler_constraint(violations))
    ostudy.tell(trial, objectives.tolist())


class DiskSync:
    """Keeps an in-memory study and its storage study in step (see `run_trials`).

    Trials this process writes carry its random token (user attribute
    ``optimag.writer``), so reading the storage back adds to memory only the trials of
    other processes and earlier runs.
    """

    def __init__(self, memory: optuna.Study, disk: optuna.Study):
        self.memory, self.disk = memory, disk
        self.writer = uuid.uuid4().hex
        self.known: set[int] = set()  # storage trial numbers already looked at
        self.complete = 0  # COMPLETE trials in the storage at the last `pull`

    def pull(self) -> list[optuna.trial.FrozenTrial]:
        """Copy the storage's COMPLETE trials that memory lacks; returns them."""
        complete = self.disk.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
        self.complete = len(complete)
        new = [t for t in complete if t.number not in self.known]
        self.known.update(t.number for t in new)
        foreign = [t for t in new if t.user_attrs.get(ATTR_WRITER) != self.writer]
        if foreign:
            self.memory.add_trials(foreign)
        return foreign

    def push(self, numbers: Sequence[int]) -> None:
        """Write the finished in-memory trials ``numbers`` to the storage, one write each."""
        wanted = set(numbers)
        trials = self.memory.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
        self.disk.add_trials([t for t in trials if t.number in wanted])
