"""Optuna search: a multi-objective sampler proposes designs, the model scores them in batches.

Each trial is one design: a core (catalogue or, with a ``[custom_core]`` table, a
made-to-order one with sampled dimensions), stack, material, gap option, turns, wire and
parallel strands. Turns and winding are drawn as positions in what the drawn core admits
(decoders, see `OptunaProblem`). Trials are asked in batches of ``batch_size``, the whole
batch is evaluated by one `model.evaluate` call, and every trial is told its objectives
(all minimised) with its violations: the model's normalised violations in
`model.CONSTRAINTS` order (user attribute ``optimag.violations``), feasible when all are
<= 0, and for the samplers one constraint value (``Trial.set_constraint``) that ranks
infeasible trials by the sum of their positive violations. A trial that decodes to a
design already evaluated evaluates its nearest unseen neighbour instead (`run_trials`).

The package uses optuna's public API only (a test reads its source for private names).

Modules
    ``problem`` (parameters <-> designs, evaluation), ``decoding``, ``neighbours``,
    ``custom`` (custom cores), ``sampler``, ``journal`` and ``storage`` (where trials are
    kept), ``studies`` (the stored study: fingerprint, re-scoring), ``loop`` (ask, evaluate,
    tell, write), ``result`` (trials to an `ExploreResult`), ``explore`` and ``worker``
    (entry points), ``attrs`` (names kept on studies and trials).

Storage and resume
    The sampler works on an in-memory study; the study of record lives in an optuna
    storage (default: the journal file ``optuna.journal`` in the run folder; none when
    there is no run folder; any SQLAlchemy URL with ``storage``) and receives every
    finished batch, one write per trial. Re-running with the same storage resumes: its
    COMPLETE trials are loaded, trials left RUNNING there (by an older or foreign
    process) are marked FAIL and not counted, and only the trials missing to reach the
    target number of COMPLETE trials are asked. A kill loses at most the batch in flight.
    A run folder written before the journal keeps going in its ``optuna.db`` (SQLite).

Workers
    `run_worker` joins an existing study from its storage alone (the study file's text,
    its path and the catalogue's path and hash are kept as study user attributes) and adds
    trials until the study holds the target number of COMPLETE trials, learning from the
    other processes' trials before each batch. Each worker checks the count before each
    batch, so several workers may overshoot the target by at most
    ``(workers - 1) * batch_size`` trials; no trial is lost or numbered twice (the storage
    numbers trials under a lock). Parallel runs are not reproducible; single-process runs
    with a fixed seed are.
"""

from optimag.search.optuna_search.custom import custom_core_id, custom_vs_catalogue
from optimag.search.optuna_search.decoding import TrialTable, pick_position
from optimag.search.optuna_search.explore import explore_optuna
from optimag.search.optuna_search.loop import RunCounts, run_trials
from optimag.search.optuna_search.problem import OptunaProblem
from optimag.search.optuna_search.result import Harvest, build_result, harvest
from optimag.search.optuna_search.sampler import (
    DEFAULT_POPULATION,
    BatchFriendlyNSGAIISampler,
    make_sampler,
)
from optimag.search.optuna_search.storage import (
    complete_count,
    fail_stale_trials,
    folder_storage,
    open_storage,
    shown_storage,
    storage_errors,
    storage_spec,
)
from optimag.search.optuna_search.studies import (
    memory_study,
    open_optuna_study,
    rescore_study,
)
from optimag.search.optuna_search.worker import (
    load_problem_from_storage,
    run_worker,
    worker_command,
)

__all__ = [
    "DEFAULT_POPULATION",
    "BatchFriendlyNSGAIISampler",
    "Harvest",
    "OptunaProblem",
    "RunCounts",
    "TrialTable",
    "build_result",
    "complete_count",
    "custom_core_id",
    "custom_vs_catalogue",
    "explore_optuna",
    "fail_stale_trials",
    "folder_storage",
    "harvest",
    "load_problem_from_storage",
    "make_sampler",
    "memory_study",
    "open_optuna_study",
    "open_storage",
    "pick_position",
    "rescore_study",
    "run_trials",
    "run_worker",
    "shown_storage",
    "storage_errors",
    "storage_spec",
    "worker_command",
]
