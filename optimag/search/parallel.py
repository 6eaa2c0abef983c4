"""The exhaustive search on many processes or machines, on a Dask cluster.

The space's (core, stack, turns) groups are cut into tasks of whole (core, stack) units
(every turns count of one core and stack stays in one task), about equal in candidates and
several per worker, so a worker that finishes early takes the next. Each task walks its
groups exactly as one process would (`exhaustive.search_groups`, with the same blocks and
chunks) and returns its part: the Pareto front of its groups, its elimination counts, its
closest misses. The parts are merged in group order (`exhaustive.merge_parts`): a point
dominated over the whole space is dominated by a member of some part's front, so the merged
front, counts and misses are those of one process walking the whole space.

An infeasible study's diagnosis (`optimag.search.diagnosis`) is spread over the same tasks
and merged exactly the same way.

``workers`` > 1 starts a cluster of that many worker processes on this machine (one thread
each) for the run; ``scheduler`` uses a running cluster (``dask scheduler`` and ``dask
worker ADDRESS`` on each machine, optimag installed on every one of them).
"""

from __future__ import annotations

import itertools
import logging
import os
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import Any

import numpy as np

from optimag import model
from optimag.errors import ClusterError
from optimag.search import exhaustive
from optimag.search.exhaustive import ExhaustiveOutcome, SearchPart, SearchPlan
from optimag.study.tolerance import ToleranceSpec

#: Spaces with at least this many candidates are searched on every core of the machine
#: when the user names no worker count: starting a local cluster costs a few seconds (new
#: processes import numpy, scipy and optimag), which a smaller space does not repay.
PARALLEL_MIN_CANDIDATES = 20_000_000

#: Tasks per worker: enough for a worker that finishes early to take over the rest.
TASKS_PER_WORKER = 8

#: Candidates per task, at least (a smaller task spends more on its set-up than it saves).
MIN_TASK_CANDIDATES = 100_000

#: Seconds to wait for a named scheduler to answer.
CONNECT_TIMEOUT_S = 10


def default_workers(candidates: int) -> int:
    """Worker processes for a space of ``candidates`` when the user names none: every core
    of the machine from `PARALLEL_MIN_CANDIDATES` on, else 1 (searched in this process)."""
    if candidates >= PARALLEL_MIN_CANDIDATES:
        return max(1, os.cpu_count() or 1)
    return 1


def task_ranges(space: model.DesignSpace, tasks: int) -> list[tuple[int, int]]:
    """Group ranges ``(first, stop)`` of at most ``tasks`` tasks covering the space in
    order, each made of whole (core, stack) units and about equal in candidates."""
    bounds, candidates = exhaustive.core_stack_units(space)
    if not len(candidates):
        return []
    cumulative = np.cumsum(candidates)
    total = int(cumulative[-1])
    tasks = max(1, min(int(tasks), len(candidates)))
    # Unit i closes a task when the running count first reaches the task's share.
    targets = total * np.arange(1, tasks) / tasks
    cuts = np.unique(np.searchsorted(cumulative, targets, side="left") + 1)
    edges = np.unique(np.concatenate([[0], cuts[cuts < len(candidates)], [len(candidates)]]))
    return [(int(bounds[a]), int(bounds[b])) for a, b in itertools.pairwise(edges)
            if bounds[b] > bounds[a]]


def task_count(candidates: int, workers: int) -> int:
    """Tasks for a space of ``candidates`` on ``workers``: `TASKS_PER_WORKER` each, fewer
    when a task would fall below `MIN_TASK_CANDIDATES`."""
    by_size = max(1, candidates // MIN_TASK_CANDIDATES)
    return int(max(1, min(TASKS_PER_WORKER * max(workers, 1), by_size)))


@contextmanager
def cluster(workers: int = 1, scheduler: str | None = None) -> Iterator[Any]:
    """A Dask client for the run: on the cluster at ``scheduler`` (an address such as
    ``tcp://10.0.0.5:8786``), else on a new local cluster of ``workers`` processes with one
    thread each, closed at the end. Raises ClusterError when the scheduler cannot be
    reached or has no worker."""
    from distributed import Client, LocalCluster

    if scheduler:
        try:
            client = Client(scheduler, timeout=CONNECT_TIMEOUT_S)
        except (OSError, TimeoutError, ValueError) as error:
            raise ClusterError(
                f"cannot reach the Dask scheduler at {scheduler} ({error}); start one with "
                "`dask scheduler` and its workers with `dask worker ADDRESS`") from None
        try:
            if not client.scheduler_info().get("workers"):
                client.wait_for_workers(1, timeout=CONNECT_TIMEOUT_S)
        except (OSError, TimeoutError) as error:
            client.close()
            raise ClusterError(f"the Dask scheduler at {scheduler} has no worker ({error}); "
                               "start some with `dask worker ADDRESS`") from None
        try:
            yield client
        finally:
            client.close()
        return
    local = LocalCluster(n_workers=max(1, int(workers)), threads_per_worker=1,
                         processes=True, dashboard_address=None,
                         scheduler_kwargs={"dashboard": False},
                         silence_logs=logging.ERROR)
    client = Client(local)
    try:
        yield client
    finally:
        client.close()
        local.close()


def _worker_count(client) -> int:
    return max(1, len(client.scheduler_info().get("workers", {})))


def _search_task(bounds: tuple[int, int], space: model.DesignSpace, objectives: list[str],
                 walk: SearchPlan, robust: ToleranceSpec | None) -> SearchPart:
    return exhaustive.search_groups(space, objectives, walk, bounds[0], bounds[1],
                                    robust=robust)


def explore_on_cluster(
    space: model.DesignSpace,
    objectives: list[str],
    client,
    search_plan: SearchPlan | None = None,
    robust: ToleranceSpec | None = None,
    progress: Callable[[int, int], None] | None = None,
    tasks: int | None = None,
) -> ExhaustiveOutcome:
    """`exhaustive.explore_exhaustive` on the Dask ``client``'s cluster: the same front,
    counts and closest misses. ``tasks`` (default `task_count`) sets how finely the space
    is cut. ``progress(done, total)`` is called as tasks finish. A KeyboardInterrupt
    cancels the tasks left and returns what the finished ones found (``interrupted``)."""
    start = time.perf_counter()
    walk = search_plan or exhaustive.plan(space)
    ranges = task_ranges(space, tasks or task_count(walk.candidates, _worker_count(client)))
    parts, interrupted = _run_tasks(
        client, _search_task, ranges, progress, walk.candidates,
        space=space, objectives=list(objectives), walk=walk, robust=robust,
    )
    merged = exhaustive.merge_parts([p for p in parts if p is not None], len(objectives))
    return exhaustive.finish_search(space, merged, walk.candidates,
                                    time.perf_counter() - start, interrupted=interrupted)


def _run_tasks(client, function, ranges, progress, total, space, **kwargs):
    """Run ``function(bounds, space, **kwargs)`` for every range on the cluster; the parts
    in range order (None for a task not finished) and whether the run was interrupted."""
    from distributed import as_completed

    if not ranges:
        return [], False
    shared = client.scatter(space, broadcast=True, hash=False)
    futures = client.map(function, ranges, space=shared, pure=False, **kwargs)
    position = {future.key: i for i, future in enumerate(futures)}
    parts: list[Any] = [None] * len(futures)
    done = 0
    try:
        for future in as_completed(futures):
            part = future.result()
            parts[position[future.key]] = part
            done += getattr(part, "done", 0)
            if progress:
                progress(done, total)
    except KeyboardInterrupt:
        client.cancel(futures)
        return parts, True
    except BaseException:
        client.cancel(futures)
        raise
    return parts, False


def _diagnose_task(bounds: tuple[int, int], space: model.DesignSpace, walk: SearchPlan,
                   keep: int):
    from optimag.search.diagnosis import diagnose_groups

    return diagnose_groups(space, walk, bounds[0], bounds[1], keep)


def diagnose_on_cluster(space: model.DesignSpace, client,
                        search_plan: SearchPlan | None = None, tasks: int | None = None):
    """`diagnosis.diagnose_exhaustive` on the Dask ``client``'s cluster: the same
    fails-alone counts and nearest misses (`diagnosis.Diagnosis`)."""
    from optimag.search.diagnosis import (
        NEAR_MISS_CORES,
        finish_diagnosis,
        merge_diagnosis_parts,
    )

    walk = search_plan or exhaustive.plan(space)
    ranges = task_ranges(space, tasks or task_count(walk.candidates, _worker_count(client)))
    parts, interrupted = _run_tasks(client, _diagnose_task, ranges, None, walk.candidates,
                                    space=space, walk=walk, keep=NEAR_MISS_CORES)
    if interrupted:
        raise KeyboardInterrupt
    return finish_diagnosis(space, merge_diagnosis_parts(parts, NEAR_MISS_CORES), walk,
                            NEAR_MISS_CORES)
