"""2-D magnetostatics of a core section: axisymmetric (r, z) or planar (x, y).

The section is a set of rectangular regions, each with a relative permeability and a
current density normal to the section, on a structured graded triangle mesh
(`optimag.fem.mesh`), solved with quadratic Lagrange elements (scikit-fem).

Axisymmetric: the unknown is the flux function psi = r A_phi (flux through the circle of
radius r is 2 pi psi); the weak form is ∫ nu/r grad(psi)·grad(v) dr dz = ∫ J v dr dz
with psi = 0 on the axis. Planar: the unknown is A_z, ∫ nu grad(A)·grad(v) = ∫ J v, per
metre of depth. In both the stored energy is half the source integral ∫ J·A dV, which
gives the inductance.

References
----------
.. [1] P. P. Silvester, R. L. Ferrari, *Finite Elements for Electrical Engineers*,
   3rd ed., Cambridge University Press, 1996, ch. on axisymmetric and planar
   magnetostatic potentials (from memory).
.. [2] T. Gustafsson, G. D. McBain, "scikit-fem: A Python package for finite element
   assembly", Journal of Open Source Software 5(52), 2369, 2020.
   DOI: 10.21105/joss.02369 (from memory).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
from skfem import (
    Basis,
    BilinearForm,
    ElementTriP0,
    ElementTriP2,
    Functional,
    LinearForm,
    MeshTri,
    asm,
    condense,
    solve,
)
from skfem.helpers import dot, grad

from optimag.constants import MU0
from optimag.fem.mesh import Rect

__all__ = ["Region", "SectionSolution", "solve_section"]

Kind = Literal["axisymmetric", "planar"]
Side = Literal["left", "right", "bottom", "top"]


@dataclass(frozen=True)
class Region:
    """A rectangle of one material, optionally carrying a current density.

    Parameters
    ----------
    rect : the rectangle [m]
    mu_r : relative permeability [1]
    current_density_A_m2 : current density normal to the section [A/m^2]
    name : label used to look regions up (``"coil"``, ``"core"``, ...)
    """

    rect: Rect
    mu_r: float = 1.0
    current_density_A_m2: float = 0.0
    name: str = ""


@dataclass
class SectionSolution:
    """A solved section: mesh, basis and potential, with the figures derived from them."""

    kind: Kind
    mesh: MeshTri
    basis: Basis
    potential: np.ndarray
    nu_elements: np.ndarray
    current_elements: np.ndarray
    regions: tuple[Region, ...] = field(repr=False)

    @property
    def source_integral(self) -> float:
        """∫ J·A dV [J]: axisymmetric over the full revolution, planar per metre [J/m].

        Twice the stored magnetic energy of the modelled part.
        """
        basis0 = self.basis.with_element(ElementTriP0())
        current = basis0.interpolate(self.current_elements)
        value = Functional(lambda w: w.J * w.u).assemble(
            self.basis, J=current, u=self.basis.interpolate(self.potential)
        )
        return float(value) * (2.0 * np.pi if self.kind == "axisymmetric" else 1.0)

    def energy(self) -> float:
        """Magnetic energy of the modelled part, ½∫ nu |B|² dV [J] (planar: [J/m])."""
        basis0 = self.basis.with_element(ElementTriP0())
        nu = basis0.interpolate(self.nu_elements)
        u = self.basis.interpolate(self.potential)
        if self.kind == "axisymmetric":
            value = Functional(lambda w: w.nu * dot(grad(w.u), grad(w.u)) / w.x[0]).assemble(
                self.basis, nu=nu, u=u
            )
            return float(np.pi * value)
        value = Functional(lambda w: w.nu * dot(grad(w.u), grad(w.u))).assemble(
            self.basis, nu=nu, u=u
        )
        return float(0.5 * value)

    def potential_at(self, x: np.ndarray, y: np.ndarray) -> np.ndarray:
        """psi = r A_phi (axisymmetric) or A_z (planar) at points [Wb/rad or Wb/m]."""
        points = np.vstack([np.atleast_1d(x), np.atleast_1d(y)]).astype(float)
        return self.basis.probes(points) @ self.potential

    def flux_density(self, x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Flux density (B_x, B_y) or (B_r, B_z) at points [T]."""
        x = np.atleast_1d(np.asarray(x, dtype=float))
        y = np.atleast_1d(np.asarray(y, dtype=float))
        step = 1e-7 * max(np.ptp(self.mesh.p[0]), np.ptp(self.mesh.p[1]))
        d_dx = (self.potential_at(x + step, y) - self.potential_at(x - step, y)) / (2 * step)
        d_dy = (self.potential_at(x, y + step) - self.potential_at(x, y - step)) / (2 * step)
        if self.kind == "axisymmetric":
            return -d_dy / x, d_dx / x
        return d_dy, -d_dx

    def b_squared_integral(self, rect: Rect) -> float:
        """∫ |B|² dV over the elements inside `rect` [T² m³] (planar: per metre [T² m²]).

        `rect` should follow grid lines (a region of the section) so that it is covered
        exactly by whole elements.
        """
        centroid = self.mesh.p[:, self.mesh.t].mean(axis=1)
        inside = np.nonzero(rect.contains(centroid[0], centroid[1]))[0]
        if inside.size == 0:
            return 0.0
        sub = Basis(self.mesh, self.basis.elem, elements=inside)
        u = sub.interpolate(self.potential)
        if self.kind == "axisymmetric":
            value = Functional(lambda w: dot(grad(w.u), grad(w.u)) / w.x[0]).assemble(sub, u=u)
            return float(2.0 * np.pi * value)
        return float(Functional(lambda w: dot(grad(w.u), grad(w.u))).assemble(sub, u=u))


@BilinearForm
def _stiffness_axisymmetric(u, v, w):
    return w.nu / w.x[0] * dot(grad(u), grad(v))


@BilinearForm
def _stiffness_planar(u, v, w):
    return w.nu * dot(grad(u), grad(v))


@LinearForm
def _source(v, w):
    return w.J * v


def solve_section(
    kind: Kind,
    regions: Sequence[Region],
    x_grid: np.ndarray,
    y_grid: np.ndarray,
    zero_potential: Sequence[Side] = ("left", "right", "top"),
) -> SectionSolution:
    """Solve a 2-D magnetostatic section on the tensor grid ``x_grid`` x ``y_grid``.

    Parameters
    ----------
    kind : {"axisymmetric", "planar"}
        Axisymmetric (x = r >= 0, y = z) or planar (per metre of depth).
    regions : sequence of Region
        Material and current regions; later regions override earlier ones where they
        overlap; everything else is air (mu_r = 1, no current).
    x_grid, y_grid : ndarray
        Grid lines [m]; every region edge should be one of them.
    zero_potential : sequence of {"left", "right", "bottom", "top"}
        Domain sides where the potential is 0 (flux lines); the others are symmetry
        planes (field normal to them, natural condition). Axisymmetric sections must
        include "left" (the axis, r = 0).

    Returns
    -------
    SectionSolution
    """
    if kind == "axisymmetric" and ("left" not in zero_potential or x_grid[0] != 0.0):
        raise ValueError("an axisymmetric section starts at r = 0 with psi = 0 on the axis")
    mesh = MeshTri.init_tensor(np.asarray(x_grid, float), np.asarray(y_grid, float))
    basis = Basis(mesh, ElementTriP2())
    centroid = mesh.p[:, mesh.t].mean(axis=1)
    mu_r = np.ones(mesh.t.shape[1])
    current = np.zeros(mesh.t.shape[1])
    for region in regions:
        inside = region.rect.contains(centroid[0], centroid[1])
        mu_r[inside] = region.mu_r
        current[inside] = region.current_density_A_m2
    nu = 1.0 / (MU0 * mu_r)
    basis0 = basis.with_element(ElementTriP0())
    form = _stiffness_axisymmetric if kind == "axisymmetric" else _stiffness_planar
    stiffness = asm(form, basis, nu=basis0.interpolate(nu))
    load = asm(_source, basis, J=basis0.interpolate(current))
    x0, x1 = float(np.min(x_grid)), float(np.max(x_grid))
    y0, y1 = float(np.min(y_grid)), float(np.max(y_grid))
    tol = 1e-12 * max(x1 - x0, y1 - y0)
    tests = {
        "left": lambda p: np.abs(p[0] - x0) < tol,
        "right": lambda p: np.abs(p[0] - x1) < tol,
        "bottom": lambda p: np.abs(p[1] - y0) < tol,
        "top": lambda p: np.abs(p[1] - y1) < tol,
    }
    fixed = np.unique(
        np.concatenate([basis.get_dofs(tests[side]).all() for side in zero_potential])
    )
    potential = solve(*condense(stiffness, load, D=fixed))
    return SectionSolution(kind, mesh, basis, potential, nu, current, tuple(regions))
