"""The exhaustive search on a Dask cluster against the same search in one process: the
same front (points, designs and order), feasible count, elimination counts, stage sizes
and closest misses, on every example study and on the tiny test study."""

import dataclasses
import itertools
import json
from pathlib import Path

import numpy as np
import pytest

from optimag import cli, model
from optimag.catalog import load_catalog
from optimag.search import diagnosis, exhaustive, parallel
from optimag.search.exhaustive import CANDIDATE_FIELDS
from optimag.study import load_study

ROOT = Path(__file__).resolve().parents[2]
EXAMPLE_STUDIES = sorted((ROOT / "studies").glob("*.toml"))
#: An example study's space is thinned to every n-th turns count (same cores, materials,
#: windings and limits) until it has at most this many candidates, to keep CI short.
EXAMPLE_CANDIDATES = 300_000
#: No demo core in the tiny study is this low, wound: every candidate fails height.
TOO_LOW = {"max_height_mm = 30": "max_height_mm = 6"}


def _space(path, most=None):
    study = load_study(path)
    space = model.build_design_space(study, load_catalog(study.catalog.path))
    if most is not None:
        step = -(-exhaustive.space_size(space) // most)
        space = dataclasses.replace(space, turns=space.turns[::step])
    return list(study.search.objectives), space


def _assert_same(one, many):
    assert many.total == one.total
    assert many.feasible == one.feasible
    assert many.eliminated == one.eliminated
    assert many.stage_sizes == one.stage_sizes
    assert not many.interrupted
    np.testing.assert_array_equal(many.front.objectives, one.front.objectives)
    for name in CANDIDATE_FIELDS:
        np.testing.assert_array_equal(many.front.payload[name], one.front.payload[name])
    assert (many.near_misses is None) == (one.near_misses is None)
    if one.near_misses is not None:
        for name in CANDIDATE_FIELDS:
            np.testing.assert_array_equal(getattr(many.near_misses, name),
                                          getattr(one.near_misses, name))
        np.testing.assert_array_equal(many.near_miss_violation, one.near_miss_violation)


@pytest.fixture(scope="module")
def client():
    with parallel.cluster(2) as dask_client:
        yield dask_client


def test_task_ranges_cover_the_space_in_whole_core_stack_units(tiny_study_path):
    _, space = _space(tiny_study_path)
    bounds, candidates = exhaustive.core_stack_units(space)
    assert int(candidates.sum()) == exhaustive.space_size(space)
    for tasks in (1, 3, 7, 1000):
        ranges = parallel.task_ranges(space, tasks)
        assert ranges[0][0] == 0 and ranges[-1][1] == exhaustive.group_count(space)
        assert all(a[1] == b[0] for a, b in itertools.pairwise(ranges))
        assert set(np.ravel(ranges)) <= set(bounds.tolist())
        assert len(ranges) == min(tasks, len(candidates))


def test_parts_merged_in_group_order_equal_one_walk(tiny_study_path):
    """The merge alone, without a cluster: any cut of the groups gives the same outcome."""
    objectives, space = _space(tiny_study_path)
    walk = exhaustive.plan(space, chunk_size=300)
    one = exhaustive.explore_exhaustive(space, objectives, search_plan=walk)
    count = exhaustive.group_count(space)
    for cuts in ([0, count], [0, 1, 5, count // 2, count - 1, count],
                 [*range(0, count, 3), count]):
        parts = [exhaustive.search_groups(space, objectives, walk, a, b)
                 for a, b in itertools.pairwise(cuts)]
        merged = exhaustive.merge_parts(parts, len(objectives))
        _assert_same(one, exhaustive.finish_search(space, merged, walk.candidates, 0.0))


@pytest.mark.slow
@pytest.mark.parametrize("path", EXAMPLE_STUDIES, ids=lambda p: p.stem)
def test_cluster_search_equals_one_process_on_example_studies(client, path):
    objectives, space = _space(path, EXAMPLE_CANDIDATES)
    walk = exhaustive.plan(space)
    one = exhaustive.explore_exhaustive(space, objectives, search_plan=walk)
    many = parallel.explore_on_cluster(space, objectives, client, search_plan=walk)
    assert one.feasible > 0
    _assert_same(one, many)


@pytest.mark.slow
def test_cluster_diagnosis_equals_one_process(client, make_tiny_study):
    _, space = _space(make_tiny_study(replace=TOO_LOW))
    walk = exhaustive.plan(space, chunk_size=400)
    one = diagnosis.diagnose_exhaustive(space, walk)
    many = parallel.diagnose_on_cluster(space, client, walk, tasks=5)
    assert many.fails_alone == one.fails_alone and sum(one.fails_alone.values()) > 0
    for name in CANDIDATE_FIELDS:
        np.testing.assert_array_equal(getattr(many.near_misses, name),
                                      getattr(one.near_misses, name))
    np.testing.assert_array_equal(many.near_miss_violation, one.near_miss_violation)


@pytest.mark.slow
def test_explore_command_on_a_running_cluster(client, tiny_study_path, tmp_path):
    """`optimag explore --scheduler ADDRESS` runs on that cluster and writes the counts and
    front of one process."""
    objectives, space = _space(tiny_study_path)
    one = exhaustive.explore_exhaustive(space, objectives)
    out = tmp_path / "run"
    address = client.scheduler.address
    assert cli.main(["explore", str(tiny_study_path), "--out", str(out),
                     "--scheduler", address]) == 0
    record = json.loads((out / "run.json").read_text(encoding="utf-8"))
    assert record["parallel"] == {"scheduler": address}
    assert record["counts"]["feasible"] == one.feasible
    assert record["counts"]["eliminated"] == one.eliminated
    assert record["counts"]["pareto"] == len(one.front)


def test_default_workers_by_space_size(monkeypatch):
    monkeypatch.setattr(parallel.os, "cpu_count", lambda: 6)
    assert parallel.default_workers(parallel.PARALLEL_MIN_CANDIDATES - 1) == 1
    assert parallel.default_workers(parallel.PARALLEL_MIN_CANDIDATES) == 6


def test_unreachable_scheduler_is_one_line(tiny_study_path, tmp_path, monkeypatch, capsys):
    monkeypatch.setattr(parallel, "CONNECT_TIMEOUT_S", 1)
    code = cli.main(["explore", str(tiny_study_path), "--out", str(tmp_path / "run"),
                     "--scheduler", "tcp://127.0.0.1:9"])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert err.startswith("optimag: cannot reach the Dask scheduler at tcp://127.0.0.1:9")
    assert "Traceback" not in err and len(err.splitlines()) == 1
