"""The diagnosis of infeasible studies against a per-candidate recount of the whole space."""

import csv
import json

import numpy as np
import pytest

from optimag import model
from optimag.catalog import load_catalog
from optimag.search import diagnosis
from optimag.search import exhaustive as ex
from optimag.search.run import explore
from optimag.study import load_study

HEIGHT = model.CONSTRAINTS.index("height")
#: No demo core in the tiny study is this low, wound: every candidate fails height.
TOO_LOW = {"max_height_mm = 30": "max_height_mm = 6"}


def _space(path):
    study = load_study(path)
    return model.build_design_space(study, load_catalog(study.catalog.path))


def _every_candidate(space) -> model.Candidates:
    mag = ex.magnetic_grid(space)
    rows, wire, parallel = (a.ravel() for a in np.meshgrid(
        np.arange(len(mag["core"])), np.arange(len(space.wires.ids)), space.parallels,
        indexing="ij"))
    return model.Candidates(core=mag["core"][rows], stack=mag["stack"][rows],
                            material=mag["material"][rows], turns=mag["turns"][rows],
                            gap_option=mag["gap_option"][rows], wire=wire, parallel=parallel)


def _recount(violations: np.ndarray) -> dict[str, int]:
    """Fails-alone by definition, one candidate at a time."""
    counts = dict.fromkeys(model.CONSTRAINTS, 0)
    for row in violations:
        failed = [name for name, v in zip(model.CONSTRAINTS, row, strict=True) if v > 0]
        if len(failed) == 1:
            counts[failed[0]] += 1
    return counts


@pytest.mark.parametrize("replace", [{}, TOO_LOW], ids=["tiny", "too-low"])
def test_fails_alone_is_exact_in_any_chunking(make_tiny_study, replace):
    space = _space(make_tiny_study(replace=replace))
    candidates = _every_candidate(space)
    assert len(candidates) == ex.space_size(space)
    brute = _recount(model.violations_matrix(model.evaluate(space, candidates)))
    assert sum(brute.values()) > 0
    for chunk in (97, 1_000_000):
        found = diagnosis.diagnose_exhaustive(space, ex.plan(space, chunk))
        assert found.fails_alone == brute
        assert found.candidates == len(candidates)


def test_nearest_per_core_streams_exactly():
    rng = np.random.default_rng(4)
    core = rng.integers(0, 9, 400)
    violation = rng.random(400)
    cands = model.Candidates.from_arrays(core=core, stack=0, material=0, turns=np.arange(400),
                                         gap_option=0, wire=0, parallel=1)
    kept = diagnosis.NearestPerCore(keep=4)
    for lo in range(0, 400, 37):
        kept.offer(cands.take(np.arange(lo, min(lo + 37, 400))), violation[lo:lo + 37])
    best = {c: violation[core == c].min() for c in np.unique(core)}
    expected = sorted(best.items(), key=lambda item: item[1])[:4]
    got, worst = kept.result()
    assert [int(c) for c in got.core] == [c for c, _ in expected]
    np.testing.assert_array_equal(worst, [v for _, v in expected])
    assert all(violation[t] == w for t, w in zip(got.turns, worst, strict=True))


def test_height_alone_is_blamed_and_the_run_explains_it(make_tiny_study, tmp_path, capsys):
    path = make_tiny_study(replace=TOO_LOW)
    space = _space(path)
    candidates = _every_candidate(space)
    violations = model.violations_matrix(model.evaluate(space, candidates))
    assert np.all(violations[:, HEIGHT] > 0), "the study must rule out everything by height"
    only_height = int(np.count_nonzero((violations > 0).sum(axis=1) == 1))
    assert only_height > 0

    result = explore(path)
    record = result.record
    assert record["counts"]["feasible"] == 0
    alone = record["diagnosis"]["fails_alone"]
    assert alone["height"] == only_height
    assert all(n == 0 for name, n in alone.items() if name != "height")
    misses = result.near_miss_records
    cores = [m["core"] for m in misses]
    assert len(cores) == len(set(cores)) == len(np.unique(candidates.core))
    worst = [m["worst_violation"] for m in misses]
    assert worst == sorted(worst)
    # Each core's miss is its least-violating candidate (here every candidate of every
    # core fails height, so the best of a core is evaluated in full).
    per_core_best = {space.cores.ids[c]: violations[candidates.core == c].max(axis=1).min()
                     for c in np.unique(candidates.core)}
    for miss in misses:
        assert miss["worst_violation"] == pytest.approx(per_core_best[miss["core"]], rel=1e-9)
        assert miss["worst_constraint"] == "height"

    from optimag.cli import main

    run = tmp_path / "run"
    assert main(["explore", str(path), "--out", str(run)]) == 1
    out = capsys.readouterr().out
    assert f"height would admit {only_height:,}" in out
    assert "one per core" in out
    saved = json.loads((run / "run.json").read_text(encoding="utf-8"))
    assert saved["diagnosis"]["fails_alone"]["height"] == only_height
    for name in ("pareto.csv", "shortlist.csv"):
        with open(run / name, encoding="utf-8", newline="") as handle:
            rows = list(csv.reader(handle))
        assert len(rows) == 1 and "core" in rows[0] and "turns" in rows[0], name
    page = (run / "report.html").read_text(encoding="utf-8")
    assert "Fail it alone" in page and f"{only_height:,}" in page


def test_optuna_explains_over_its_trials(make_tiny_study):
    from optimag.search.optuna_search import explore_optuna

    result = explore_optuna(make_tiny_study(replace=TOO_LOW), trials=64, seed=5)
    record = result.record
    diag = record["diagnosis"]
    assert diag["scope"] == "evaluated trials"
    assert diag["candidates"] == record["optuna"]["complete_trials"]
    # Every design fails height, so no other limit can fail alone.
    assert diag["fails_alone"]["height"] > 0
    assert all(n == 0 for name, n in diag["fails_alone"].items() if name != "height")
    cores = [m["core"] for m in result.near_miss_records]
    assert cores and len(cores) == len(set(cores))

