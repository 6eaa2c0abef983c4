"""Structured, graded meshes for sections built from axis-aligned rectangles.

Every region boundary is a grid line, so no element is cut by a material interface, and
the grid is refined geometrically towards given points (gap edges) where the field is
singular.
"""

from __future__ import annotations

import itertools
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np

__all__ = ["Box", "Rect", "graded_axis"]


@dataclass(frozen=True)
class Rect:
    """Axis-aligned rectangle [x0, x1] x [y0, y1] [m] (x is r in an axisymmetric section)."""

    x0: float
    x1: float
    y0: float
    y1: float

    def contains(self, x: np.ndarray, y: np.ndarray) -> np.ndarray:
        """Points strictly inside (element centroids are never on a grid line)."""
        return (x > self.x0) & (x < self.x1) & (y > self.y0) & (y < self.y1)

    @property
    def area(self) -> float:
        return (self.x1 - self.x0) * (self.y1 - self.y0)

    @property
    def empty(self) -> bool:
        return self.x1 <= self.x0 or self.y1 <= self.y0


@dataclass(frozen=True)
class Box:
    """Axis-aligned box [x0, x1] x [y0, y1] x [z0, z1] [m]."""

    x0: float
    x1: float
    y0: float
    y1: float
    z0: float
    z1: float

    def contains_closed(self, x: np.ndarray, y: np.ndarray, z: np.ndarray) -> np.ndarray:
        """Points inside or on the surface (with a relative tolerance)."""
        tol = 1e-9 * max(self.x1 - self.x0, self.y1 - self.y0, self.z1 - self.z0)
        return (
            (x >= self.x0 - tol) & (x <= self.x1 + tol)
            & (y >= self.y0 - tol) & (y <= self.y1 + tol)
            & (z >= self.z0 - tol) & (z <= self.z1 + tol)
        )


def graded_axis(
    breaks: Iterable[float],
    refine_at: Sequence[float],
    fine: float,
    coarse: float,
    growth: float = 1.35,
) -> np.ndarray:
    """Grid coordinates through every break point, graded towards refinement points.

    Parameters
    ----------
    breaks : iterable of float
        Coordinates that must be grid lines (region boundaries, domain ends) [m].
    refine_at : sequence of float
        Coordinates near which the spacing falls to `fine` [m].
    fine : float
        Smallest spacing, at the refinement points [m].
    coarse : float
        Largest spacing [m].
    growth : float
        Largest ratio of neighbouring spacings away from a refinement point [1].

    Returns
    -------
    ndarray
        Sorted, unique coordinates [m].

    Notes
    -----
    The target spacing is s(x) = min(coarse, fine + (growth - 1) |x - p|) over the
    refinement points p; each interval between break points is filled by marching with
    s(x) and then stretched to end exactly on the next break point.
    """
    points = np.unique(np.asarray(sorted(breaks), dtype=float))
    refine = np.asarray(refine_at, dtype=float)

    def spacing(x: float) -> float:
        if refine.size == 0:
            return coarse
        return float(min(coarse, fine + (growth - 1.0) * np.min(np.abs(x - refine))))

    out = [points[0]]
    for left, right in itertools.pairwise(points):
        length = right - left
        if length <= 0.0:
            continue
        marks = [left]
        x = left
        while True:
            step = spacing(x)
            # Look ahead so that a step never jumps over a refinement point's fine zone.
            step = min(step, spacing(x + step) * growth)
            if x + step >= right - 0.3 * step:
                break
            x += step
            marks.append(x)
        marks.append(right)
        steps = np.diff(np.asarray(marks))
        steps *= length / steps.sum()
        out.extend((left + np.cumsum(steps)).tolist())
    return np.unique(np.asarray(out))
