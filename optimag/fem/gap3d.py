"""3-D field of a gapped rectangular leg with ideal iron (magnetic scalar potential).

With iron of infinite permeability every iron body is an equipotential of the magnetic
scalar potential and the air between them obeys Laplace's equation. One octant is meshed
(trilinear hexahedra on a graded tensor grid): x across the window, y along the leg depth
(out of the core into open space), z along the leg with z = 0 the gap's mid-plane, where
the potential is 0 by antisymmetry; the gapped half core is at potential 1. The flux
crossing the mid-plane under each leg is the reaction of the discrete system at the
mid-plane nodes; permeance = flux / potential difference.

What this adds to the planar section (`optimag.fem.cores`) is the fringing round the
leg's edges along the depth (the faces towards the open space in front of and behind the
core): `depth_fringing` compares the leg of its real depth with the same leg continued
without end (symmetry plane at its depth), on the same grid in x and z.

Winding: a centre gap's touching outer legs would short the halves; there the outer
leg's window face carries the potential of a winding spread evenly over the window height
(linear from 0 at the mid-plane to 1 at the yoke).

References
----------
.. [1] P. P. Silvester, R. L. Ferrari, *Finite Elements for Electrical Engineers*,
   3rd ed., Cambridge University Press, 1996 (scalar potential with ideal iron;
   from memory).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np
import pyamg
import scipy.sparse as sp

from optimag.constants import MU0
from optimag.fem.mesh import Box, graded_axis

__all__ = ["GapPermeance", "LegGap", "depth_fringing", "solve_leg_gap"]


@dataclass(frozen=True)
class LegGap:
    """A gapped rectangular leg between two yokes [m].

    Parameters
    ----------
    leg_width_m : width w of the gapped leg across the window
    leg_depth_m : depth d of the leg (stack included)
    window_width_m : from the gapped leg to the outer leg
    outer_width_m : width of one outer leg
    window_height_m : window height of the closed core without gap
    yoke_thickness_m : yoke thickness
    """

    leg_width_m: float
    leg_depth_m: float
    window_width_m: float
    outer_width_m: float
    window_height_m: float
    yoke_thickness_m: float


@dataclass(frozen=True)
class GapPermeance:
    """Permeances of the whole core's gaps (all four quadrants, both halves) [H].

    centre_H : through the gapped (centre) leg's gap, fringing included
    outer_H : through both outer legs' gaps together (0 for a centre gap)
    nodes : number of grid nodes of the solve
    """

    centre_H: float
    outer_H: float
    nodes: int


def _line_matrices(nodes: np.ndarray) -> tuple[sp.csr_matrix, sp.csr_matrix]:
    """1-D linear-element stiffness and mass matrices on the given nodes."""
    h = np.diff(nodes)
    n = nodes.size
    main_k = np.zeros(n)
    main_k[:-1] += 1.0 / h
    main_k[1:] += 1.0 / h
    main_m = np.zeros(n)
    main_m[:-1] += h / 3.0
    main_m[1:] += h / 3.0
    stiffness = sp.diags([-1.0 / h, main_k, -1.0 / h], [-1, 0, 1], format="csr")
    mass = sp.diags([h / 6.0, main_m, h / 6.0], [-1, 0, 1], format="csr")
    return stiffness, mass


def _tensor_laplacian(x: np.ndarray, y: np.ndarray, z: np.ndarray) -> sp.csr_matrix:
    """Stiffness matrix of trilinear (Q1) hexahedra on the tensor grid x * y * z.

    For axis-aligned boxes the Q1 element matrix of the Laplacian factorises, so the
    global matrix is Kx⊗My⊗Mz + Mx⊗Ky⊗Mz + Mx⊗My⊗Kz with the 1-D linear-element
    stiffness K and mass M matrices; node (i, j, k) has index (i * ny + j) * nz + k.
    """
    kx, mx = _line_matrices(x)
    ky, my = _line_matrices(y)
    kz, mz = _line_matrices(z)
    return (
        sp.kron(sp.kron(kx, my), mz) + sp.kron(sp.kron(mx, ky), mz)
        + sp.kron(sp.kron(mx, my), kz)
    ).tocsr()


def solve_leg_gap(
    leg: LegGap,
    gap_m: float,
    gap_kind: Literal["centre", "spacer"] = "centre",
    endless_depth: bool = False,
    resolution: float = 1.0,
) -> GapPermeance:
    """Gap permeances of a rectangular-leg core with ideal iron, by a 3-D solve.

    Parameters
    ----------
    leg : LegGap
        Geometry.
    gap_m : float
        Centre: total gap of the centre leg; spacer: spacer thickness (every leg) [m].
    gap_kind : {"centre", "spacer"}
        How the gap is made.
    endless_depth : bool
        Continue the legs without end in depth (symmetry plane at half the depth): the
        planar limit, no depth-direction fringing.
    resolution : float
        Mesh density factor [1].

    Returns
    -------
    GapPermeance
    """
    w2, d2 = 0.5 * leg.leg_width_m, 0.5 * leg.leg_depth_m
    spacer = gap_kind == "spacer"
    half_gap = 0.5 * gap_m
    lift = half_gap if spacer else 0.0
    z_win = 0.5 * leg.window_height_m + lift
    z_top = z_win + leg.yoke_thickness_m
    x_win = w2 + leg.window_width_m
    x_out = x_win + leg.outer_width_m
    size = max(x_out, z_top, d2)
    margin = 1.5 * size
    x_end = x_out + margin
    y_end = d2 if endless_depth else d2 + margin
    z_end = z_top + margin

    fine = min(gap_m / 2.0, size / 20.0) / resolution
    coarse = size / (4.0 * resolution)
    x = graded_axis([0.0, w2, x_win, x_out, x_end], [w2, x_win, x_out], fine, coarse, 1.5)
    y = graded_axis([0.0, d2, y_end], [] if endless_depth else [d2], fine, coarse, 1.5)
    z = graded_axis([0.0, half_gap, z_win, z_top, z_end], [half_gap, z_win], fine, coarse, 1.5)
    px, py, pz = (g.ravel() for g in np.meshgrid(x, y, z, indexing="ij"))
    value = np.full(px.size, np.nan)
    at_one = (
        Box(0.0, w2, 0.0, d2, half_gap, z_top).contains_closed(px, py, pz)
        | Box(0.0, x_out, 0.0, d2, z_win, z_top).contains_closed(px, py, pz)
    )
    outer = Box(x_win, x_out, 0.0, d2, half_gap if spacer else 0.0, z_win).contains_closed(
        px, py, pz
    )
    value[outer] = 1.0 if spacer else np.clip(pz[outer] / z_win, 0.0, 1.0)
    value[at_one] = 1.0
    tol = 1e-12 * size
    mid_plane = np.abs(pz) < tol
    value[mid_plane & ~(outer & ~np.asarray(spacer))] = 0.0
    fixed = ~np.isnan(value)
    stiffness = _tensor_laplacian(x, y, z)
    potential = np.where(fixed, value, 0.0)
    free = np.nonzero(~fixed)[0]
    system = stiffness[free][:, free].tocsr()
    rhs = -(stiffness[free] @ potential)
    solver = pyamg.smoothed_aggregation_solver(system, symmetry="symmetric")
    potential[free] = solver.solve(rhs, tol=1e-10, accel="cg", maxiter=500)
    # Flux leaving through the mid-plane nodes = reaction there (mu0 * K u).
    reaction = MU0 * (stiffness @ potential)
    mid_nodes = np.nonzero(mid_plane)[0]
    split = w2 + 0.5 * leg.window_width_m
    centre_flux = -reaction[mid_nodes[px[mid_nodes] <= split]].sum()
    outer_flux = -reaction[mid_nodes[px[mid_nodes] > split]].sum() if spacer else 0.0
    # Octant flux per unit potential (0 -> 1 across half the gap); the whole core has four
    # quadrants and a potential difference of 2 between its halves: P = 4 * flux / 2.
    return GapPermeance(2.0 * centre_flux, 2.0 * outer_flux, px.size)


def depth_fringing(
    leg: LegGap,
    gap_m: float,
    gap_kind: Literal["centre", "spacer"] = "centre",
    resolution: float = 1.0,
) -> tuple[float, float]:
    """Extra gap permeance from fringing round the depth-direction edges [H].

    Returns
    -------
    (centre, outer) : float
        Permeance of the leg of its real depth minus that of the endless leg cut to the
        same depth, for the centre leg and for both outer legs together.
    """
    real = solve_leg_gap(leg, gap_m, gap_kind, False, resolution)
    endless = solve_leg_gap(leg, gap_m, gap_kind, True, resolution)
    return real.centre_H - endless.centre_H, real.outer_H - endless.outer_H
