"""Pareto utilities against brute-force definitions and hand-computable hypervolumes."""

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from optimag.search.pareto import (
    RunningFront,
    dominated_by_any,
    hypervolume,
    knee_index,
    nondominated_mask,
)


def brute_force_front(points):
    """Definition of Pareto dominance (minimisation), checked pair by pair."""
    n = len(points)
    keep = np.ones(n, dtype=bool)
    for i, j in itertools.product(range(n), range(n)):
        if i != j and np.all(points[j] <= points[i]) and np.any(points[j] < points[i]):
            keep[i] = False
    return keep


@given(arrays(np.float64, st.tuples(st.integers(1, 40), st.integers(1, 4)),
              elements=st.integers(0, 6).map(float)))
@settings(max_examples=200, deadline=None)
def test_nondominated_mask_matches_definition(points):
    np.testing.assert_array_equal(nondominated_mask(points), brute_force_front(points))


@given(arrays(np.float64, st.tuples(st.integers(1, 60), st.integers(2, 3)),
              elements=st.integers(0, 8).map(float)), st.integers(1, 7))
@settings(max_examples=100, deadline=None)
def test_running_front_equals_front_of_all(points, n_batches):
    running = RunningFront(points.shape[1])
    for chunk in np.array_split(np.arange(len(points)), n_batches):
        running.offer(points[chunk], {"row": chunk})
    expected = np.flatnonzero(brute_force_front(points))
    assert sorted(running.payload["row"].tolist()) == expected.tolist()


def test_dominated_by_any_simple():
    front = np.array([[1.0, 2.0], [2.0, 1.0]])
    pts = np.array([[1.0, 2.0], [3.0, 3.0], [0.5, 5.0], [2.0, 1.5]])
    np.testing.assert_array_equal(dominated_by_any(pts, front), [False, True, False, True])


def test_hypervolume_2d_hand_value():
    # Union of rectangles to (4, 4): (1,3)->3*1, (2,2)->..., staircase area = 3+2*... by hand:
    # x in [1,2): height 4-3=1; [2,3): 4-2=2; [3,4): 4-1=3 -> 1 + 2 + 3 = 6.
    pts = np.array([[1.0, 3.0], [2.0, 2.0], [3.0, 1.0]])
    assert hypervolume(pts, [4.0, 4.0]) == pytest.approx(6.0, rel=1e-12)


def test_hypervolume_3d_single_box_and_union():
    assert hypervolume([[1.0, 1.0, 1.0]], [2.0, 3.0, 4.0]) == pytest.approx(1 * 2 * 3)
    # Two boxes [0,2]x[0,1]x[0,1] and [0,1]x[0,2]x[0,1] relative to ref (2,2,1) overlap in a
    # unit square: union area 3, depth 1 (inclusion-exclusion by hand).
    assert hypervolume([[0, 1, 0], [1, 0, 0]], [2, 2, 1]) == pytest.approx(3.0)


def test_hypervolume_matches_monte_carlo_4d():
    rng = np.random.default_rng(3)
    pts = rng.random((12, 4))
    ref = np.ones(4)
    samples = rng.random((200_000, 4))
    covered = dominated_by_any(samples, pts) | np.any(
        np.all(pts[None, :, :] <= samples[:, None, :], axis=2), axis=1
    )
    assert hypervolume(pts, ref) == pytest.approx(covered.mean(), abs=0.005)


def test_knee_is_the_balanced_point():
    pts = np.array([[0.0, 10.0], [1.0, 1.0], [10.0, 0.0]])
    assert knee_index(pts) == 1
