"""Workers: more processes adding trials to one stored study (`optimag worker`)."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING

import optuna

from optimag.errors import InputError, Problem, StorageError
from optimag.search.fingerprint import (
    fingerprint_changes,
    fingerprint_content,
    study_fingerprint,
)
from optimag.search.optuna_search.attrs import (
    ATTR_BATCH,
    ATTR_CATALOG_HASH,
    ATTR_FINGERPRINT,
    ATTR_FINGERPRINT_CONTENT,
    ATTR_SAMPLER,
    ATTR_STUDY_PATH,
    ATTR_STUDY_TEXT,
    ATTR_TARGET,
)
from optimag.search.optuna_search.loop import RunCounts, run_trials
from optimag.search.optuna_search.problem import OptunaProblem
from optimag.search.optuna_search.sampler import make_sampler
from optimag.search.optuna_search.storage import (
    complete_count,
    open_storage,
    require_existing,
    shown_storage,
    storage_errors,
)
from optimag.search.optuna_search.studies import memory_study

if TYPE_CHECKING:
    import argparse

__all__ = ["load_problem_from_storage", "run_worker", "worker_command"]


def load_problem_from_storage(
    ostudy: optuna.Study, study_file: str | Path | None = None
) -> OptunaProblem:
    """Rebuild the study, catalogue and problem of an optuna study from its user attrs
    (or from ``study_file``), checking that the catalogue is the one the study used."""
    from optimag.catalog import load_catalog
    from optimag.study import load_study, parse_study

    attrs = ostudy.user_attrs
    if ATTR_STUDY_TEXT not in attrs:
        raise InputError([Problem(ostudy.study_name, None, "",
                                  "this optuna study was not created by optimag")])
    if study_file is not None:
        study = load_study(Path(study_file))
    else:
        study = parse_study(attrs[ATTR_STUDY_TEXT], attrs[ATTR_STUDY_PATH])
    catalog = load_catalog(study.catalog.path)
    if str(catalog.content_hash) != attrs.get(ATTR_CATALOG_HASH):
        raise InputError([Problem(
            str(study.catalog.path), None, "",
            f"catalogue differs from the one the optuna study '{ostudy.study_name}' was "
            "started with (content hash mismatch)",
        )])
    problem = OptunaProblem(study, catalog)
    if problem.study_name != ostudy.study_name:
        raise InputError([Problem(
            str(study.path), None, "",
            f"study file describes '{problem.study_name}', not '{ostudy.study_name}'",
        )])
    stored = attrs.get(ATTR_FINGERPRINT)
    if stored is not None and stored != study_fingerprint(study, catalog):
        changes = fingerprint_changes(attrs.get(ATTR_FINGERPRINT_CONTENT),
                                      fingerprint_content(study, catalog))
        raise StorageError(
            f"the optuna study '{ostudy.study_name}' was started under another study or "
            f"optimag version (changed: {', '.join(changes[:8])}); run the worker with the "
            "study and version it was started with, or re-score the stored trials with "
            "`optimag explore STUDY --strategy optuna --storage URL --re-evaluate` first")
    return problem


def run_worker(
    storage: str,
    study_name: str,
    study_file: str | Path | None = None,
    trials: int | None = None,
    batch_size: int | None = None,
    seed: int | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> RunCounts:
    """Join the optuna study ``study_name`` in ``storage`` and add trials until it holds
    ``trials`` COMPLETE trials (default: the target its creator recorded).

    The worker samples with the study's sampler kind; ``seed`` defaults to None because
    workers sharing one seed would propose the same designs.
    """
    optuna.logging.set_verbosity(optuna.logging.WARNING)
    require_existing(storage)
    with storage_errors(storage):
        disk = optuna.load_study(study_name=study_name, storage=open_storage(storage))
        attrs = disk.user_attrs
        problem = load_problem_from_storage(disk, study_file)
        target = int(trials if trials is not None else attrs.get(ATTR_TARGET, 0))
        batch = int(batch_size or attrs.get(ATTR_BATCH, problem.study.search.batch_size))
        sampler_name = attrs.get(ATTR_SAMPLER, problem.study.search.sampler)
        ostudy = memory_study(problem, make_sampler(sampler_name, seed))
        return run_trials(ostudy, problem, target, batch, progress=progress, disk=disk)


def worker_command(args: argparse.Namespace) -> int:
    """``optimag worker``: run `run_worker` and say what it did. Exit status 0 when the
    study holds its target, 2 on bad input."""
    import sys

    try:
        counts = run_worker(args.storage, args.study, study_file=args.study_file,
                            trials=args.trials, batch_size=args.batch_size)
    except InputError as error:
        for problem in error.problems:
            print(str(problem), file=sys.stderr)
        return 2
    except KeyError:
        print(f"no optuna study named '{args.study}' in {shown_storage(args.storage)}",
              file=sys.stderr)
        return 2
    with storage_errors(args.storage):
        disk = optuna.load_study(study_name=args.study, storage=open_storage(args.storage))
    print(f"worker added {counts.told} trials in {counts.wall_time_s:.1f} s; the study "
          f"'{args.study}' now holds {complete_count(disk)} complete trials")
    return 0
