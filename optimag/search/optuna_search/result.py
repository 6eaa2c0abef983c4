"""From the trials to a result: read them back (`harvest`) and assemble the run's
`ExploreResult` (`build_result`) as the exhaustive search does, fed with the optuna front."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
import optuna
from optuna.trial import TrialState

from optimag import model
from optimag.search.exhaustive import CANDIDATE_FIELDS, ExhaustiveOutcome
from optimag.search.optuna_search.attrs import ATTR_DESIGN, ATTR_VIOLATIONS
from optimag.search.optuna_search.custom import custom_comparison
from optimag.search.optuna_search.decoding import TrialTable, replace_windings
from optimag.search.optuna_search.problem import OptunaProblem
from optimag.search.pareto import RunningFront

if TYPE_CHECKING:
    from optimag.search.optuna_search.loop import RunCounts
    from optimag.search.run import ExploreResult

__all__ = ["Harvest", "build_result", "harvest", "trial_violations"]


@dataclass
class Harvest:
    """Every COMPLETE trial, decoded, with its objectives and constraint values."""

    table: TrialTable
    objectives: np.ndarray
    violations: np.ndarray

    @property
    def feasible(self) -> np.ndarray:
        return ~(self.violations > 0).any(axis=1)


def trial_violations(trial: optuna.trial.FrozenTrial) -> list[float]:
    """A trial's violations in `model.CONSTRAINTS` order: its ``optimag.violations``
    user attribute, or for a trial stored by an older optimag its optuna constraints
    (one per constraint, by position); 1.0 for a missing one."""
    stored = trial.user_attrs.get(ATTR_VIOLATIONS)
    if stored is not None:
        return stored
    constraints = trial.constraints
    return [constraints.get(str(i), 1.0) for i in range(len(model.CONSTRAINTS))]


def harvest(source: optuna.Study | Sequence[optuna.trial.FrozenTrial],
            problem: OptunaProblem) -> Harvest:
    """Decode every COMPLETE trial of a study (read back from its storage), or the given
    trials, into the designs evaluated, with their objectives and violations."""
    if isinstance(source, optuna.Study):
        trials = source.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
    else:
        trials = list(source)
    n_con = len(model.CONSTRAINTS)
    objectives = np.array([t.values for t in trials], dtype=float).reshape(
        len(trials), len(problem.objectives))
    violations = np.array([trial_violations(t) for t in trials], dtype=float
                          ).reshape(len(trials), n_con)
    table = problem.decode([t.number for t in trials], [t.params for t in trials])
    moved = {k: t.user_attrs[ATTR_DESIGN] for k, t in enumerate(trials)
             if ATTR_DESIGN in t.user_attrs}
    if moved:
        table = replace_windings(table, moved)
    return Harvest(table, objectives, violations)


def _front(objectives: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """Rows (of ``rows``) on the Pareto front of ``objectives[rows]``."""
    front = RunningFront(objectives.shape[1])
    if rows.size:
        front.offer(objectives[rows], {"row": rows})
    return front.payload.get("row", np.empty(0, dtype=np.int64))


def build_result(ostudy: optuna.Study, problem: OptunaProblem, top: int, counts: RunCounts,
                 settings: dict) -> ExploreResult:
    """The `ExploreResult` of the study's COMPLETE trials (the exhaustive search's
    assembly, fed with the optuna front)."""
    from optimag.search.diagnosis import Diagnosis, diagnose_rows
    from optimag.search.run import _assemble

    crop = harvest(ostudy, problem)
    table = crop.table
    # A design told more than once (trials that decoded to the same design when no unseen
    # neighbour was left) enters the front once.
    first_of_design = np.zeros(len(table), dtype=bool)
    if len(table):
        _, first = np.unique(
            np.array(problem.design_keys(table), dtype=np.int64), axis=0, return_index=True
        )
        first_of_design[first] = True
    feasible_rows = np.flatnonzero(crop.feasible & first_of_design)
    combined = _front(crop.objectives, feasible_rows)
    custom_front = catalogue_front = np.empty(0, dtype=np.int64)
    if problem.custom is not None:
        custom_front = _front(crop.objectives, feasible_rows[table.is_custom[feasible_rows]])
        catalogue_front = _front(crop.objectives, feasible_rows[~table.is_custom[feasible_rows]])
    near = np.empty(0, dtype=np.int64)
    diagnosis = None
    if feasible_rows.size == 0 and len(table):
        # Each custom trial is a core of its own.
        core_key = np.where(table.is_custom, len(problem.space.cores.ids) + np.arange(len(table)),
                            table.catalogue_core)
        alone, near = diagnose_rows(core_key, crop.violations)
        diagnosis = Diagnosis(fails_alone=alone, near_misses=None,
                              near_miss_violation=np.empty(0), scope="evaluated trials",
                              candidates=len(table))

    needed = np.unique(np.concatenate([combined, custom_front, catalogue_front, near]))
    sub = table.take(needed)
    space, candidates = problem.materialise(sub)
    position = {int(r): k for k, r in enumerate(needed)}

    front = RunningFront(len(problem.objectives))
    if combined.size:
        pick = np.array([position[int(r)] for r in combined])
        front.offer(crop.objectives[combined], {
            f: getattr(candidates, f)[pick] for f in CANDIDATE_FIELDS})
    eliminated = dict.fromkeys(model.CONSTRAINTS, 0)
    first = model.first_violated(crop.violations) if len(table) else np.empty(0, dtype=int)
    for index, name in enumerate(model.CONSTRAINTS):
        eliminated[name] = int(np.count_nonzero(first == index))
    near_candidates = None
    near_violation = np.empty(0)
    if near.size:
        near_candidates = candidates.take(np.array([position[int(r)] for r in near]))
        near_violation = crop.violations[near].max(axis=1)
    outcome = ExhaustiveOutcome(
        front=front, total=len(table), feasible=int(np.count_nonzero(crop.feasible)),
        eliminated=eliminated, near_misses=near_candidates,
        near_miss_violation=near_violation, wall_time_s=counts.wall_time_s,
        interrupted=counts.interrupted, stage_sizes={},
    )
    result = _assemble(problem.study, problem.catalog, space, problem.objectives, outcome, top,
                       catalogue_space=problem.space, diagnosis=diagnosis)

    record = result.record
    record["strategy"] = "optuna"
    record["candidates_per_s"] = round(counts.told / max(counts.wall_time_s, 1e-9), 1)
    record["optuna"] = {
        **settings,
        "complete_trials": len(table),
        "trials_this_run": counts.told,
        "stale_trials_failed": counts.failed_stale,
        "trials_per_s": record["candidates_per_s"],
        "repeated_designs_replaced": counts.duplicates,
        "decoders": problem.decoders,
        "cores_left_out_by_size_limits": problem.excluded_cores,
        "optuna_version": optuna.__version__,
    }
    if problem.custom is not None:
        on_front = table.take(np.unique(np.concatenate([combined, custom_front])))
        cores = problem.custom_records(on_front)
        record["custom_cores"] = cores
        for rec in result.shortlist_records + result.near_miss_records:
            if rec.get("core") in cores:
                rec["custom_core"] = cores[rec["core"]]
        pick = lambda rows: candidates.take(  # noqa: E731
            np.array([position[int(r)] for r in rows], dtype=np.int64))
        record["custom_vs_catalogue"] = custom_comparison(
            space, pick(catalogue_front), pick(custom_front))
    return result

