"""The optuna strategy's entry point: `explore_optuna`."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING

from optimag.search.optuna_search.attrs import ATTR_RESCORED
from optimag.search.optuna_search.loop import run_trials
from optimag.search.optuna_search.problem import OptunaProblem
from optimag.search.optuna_search.result import build_result
from optimag.search.optuna_search.sampler import DEFAULT_POPULATION, make_sampler
from optimag.search.optuna_search.storage import (
    fail_stale_trials,
    open_storage,
    shown_storage,
    storage_errors,
    storage_spec,
)
from optimag.search.optuna_search.studies import memory_study, open_optuna_study

if TYPE_CHECKING:
    from optimag.catalog import Catalog
    from optimag.search.run import ExploreResult
    from optimag.study import Study

__all__ = ["explore_optuna"]


def explore_optuna(
    study: Study | str | Path,
    catalog: Catalog | None = None,
    trials: int | None = None,
    seed: int | None = None,
    top: int = 20,
    storage: str | None = None,
    run_dir: str | Path | None = None,
    *,
    sampler: str | None = None,
    batch_size: int | None = None,
    population_size: int = DEFAULT_POPULATION,
    progress: Callable[[int, int], None] | None = None,
    re_evaluate: bool = False,
) -> ExploreResult:
    """Search the study's design space with optuna and return an `ExploreResult`.

    ``trials``, ``seed``, ``sampler`` and ``batch_size`` default to the study's
    ``[search]`` values. ``storage`` is an SQLAlchemy URL or a journal file path (see
    `storage`); without it the study is kept in the run folder (``<run_dir>/optuna.journal``,
    or the ``optuna.db`` of a folder written before the journal), or in memory when
    ``run_dir`` is None. An existing study of the same name in the storage is resumed up
    to ``trials`` COMPLETE trials.
    """
    from optimag.catalog import load_catalog
    from optimag.search.run import check_study_against_catalog
    from optimag.study import load_study

    if not hasattr(study, "search"):
        study = load_study(Path(study))
    if catalog is None:
        catalog = load_catalog(study.catalog.path)
    check_study_against_catalog(study, catalog)
    search = study.search
    trials = int(search.trials if trials is None else trials)
    seed = int(search.seed if seed is None else seed)
    sampler_name = sampler or search.sampler
    batch_size = int(batch_size or search.batch_size)

    problem = OptunaProblem(study, catalog)
    spec = storage_spec(run_dir, storage)
    sampler_object = make_sampler(sampler_name, seed, population_size)
    disk = None
    stale = 0
    with storage_errors(spec):
        if spec is not None:
            disk = open_optuna_study(problem, open_storage(spec), target=trials,
                                     batch_size=batch_size, sampler_name=sampler_name,
                                     re_evaluate=re_evaluate, shown=shown_storage(spec))
            stale = fail_stale_trials(disk)
        ostudy = memory_study(problem, sampler_object)
        counts = run_trials(ostudy, problem, trials, batch_size, progress=progress, disk=disk)
        counts.failed_stale = stale
        settings = {
            "sampler": sampler_name, "seed": seed, "trials": trials,
            "storage": shown_storage(spec), "study_name": problem.study_name,
            "batch_size": batch_size, "population_size": population_size,
        }
        if disk is not None and ATTR_RESCORED in disk.user_attrs:
            settings["re_evaluated"] = disk.user_attrs[ATTR_RESCORED]
        return build_result(disk if disk is not None else ostudy, problem, top, counts,
                            settings)
