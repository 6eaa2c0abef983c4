"""The near-front pool: the first non-dominated layers of the feasible designs, checked
against non-dominated sorting of every feasible design computed outright (the layered
definition of Deb et al., "A fast and elitist multiobjective genetic algorithm: NSGA-II",
IEEE Trans. Evol. Comput. 6(2), 2002, section III-A, applied by brute force)."""

from __future__ import annotations

import numpy as np

from optimag import model
from optimag.catalog import load_catalog
from optimag.search import exhaustive
from optimag.search.pareto import NearFrontPool, layer_numbers
from optimag.study import load_study
from tests.search.conftest import write_tiny_study
from tests.search.test_exhaustive import _every_candidate


def _brute_layers(points: np.ndarray) -> np.ndarray:
    """Layer of each point: 1 + the deepest layer of the points that dominate it (a
    dominator comes earlier in lexicographic order, so one pass in that order)."""
    no_worse = np.all(points[:, None, :] <= points[None, :, :], axis=2)
    better = np.any(points[:, None, :] < points[None, :, :], axis=2)
    dominates = no_worse & better  # [j, i]: j dominates i
    layers = np.zeros(len(points), dtype=int)
    for i in np.lexsort(points.T[::-1]):
        above = dominates[:, i]
        if above.any():
            layers[i] = layers[above].max() + 1
    return layers


def test_layer_numbers_match_the_definition():
    rng = np.random.default_rng(3)
    points = np.round(rng.random((300, 3)), 1)  # ties included
    assert np.array_equal(layer_numbers(points), _brute_layers(points))


def test_pool_keeps_exactly_the_first_layers_whatever_the_batches():
    rng = np.random.default_rng(5)
    points = rng.random((3000, 2))
    truth = _brute_layers(points)
    for batch in (50, 400, 3000):
        pool = NearFrontPool(2, cap=200)
        for start in range(0, len(points), batch):
            rows = slice(start, start + batch)
            pool.offer(points[rows], {"row": np.arange(len(points))[rows]})
        halves = NearFrontPool(2, cap=200)
        for part in (slice(0, 1700), slice(1700, None)):
            piece = NearFrontPool(2, cap=200)
            piece.offer(points[part], {"row": np.arange(len(points))[part]})
            piece.prune()
            halves.merge(piece)
        for kept in (pool, halves):
            kept.prune()
            assert len(kept) <= 200
            expected = np.flatnonzero(truth < kept.layers)
            assert sorted(kept.payload["row"]) == sorted(expected)


def test_exhaustive_pool_is_the_first_layers_of_every_feasible_design(tmp_path, monkeypatch):
    monkeypatch.setattr(exhaustive, "NEAR_FRONT_CAP", 40)
    study = load_study(write_tiny_study(tmp_path))
    space = model.build_design_space(study, load_catalog(study.catalog.path))
    objectives = list(study.search.objectives)
    outcome = exhaustive.explore_exhaustive(space, objectives, chunk_size=500)
    every = _every_candidate(space)
    candidates = model.Candidates(**{
        name: every[:, k] for k, name in enumerate(
            ("core", "stack", "material", "turns", "gap_option", "wire", "parallel"))})
    metrics = model.evaluate(space, candidates)
    ok = metrics["feasible"]
    assert ok.sum() == outcome.feasible > 40
    values = model.objective_matrix(metrics, objectives)[ok]
    truth = _brute_layers(values)
    pool = outcome.pool
    assert pool.layers is not None and len(pool) <= 40
    assert len(pool) == np.count_nonzero(truth < pool.layers)
    kept = {tuple(np.round(v, 9)) for v in pool.objectives}
    assert kept == {tuple(np.round(v, 9)) for v in values[truth < pool.layers]}
