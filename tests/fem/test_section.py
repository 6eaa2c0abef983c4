"""2-D section solver against closed forms and by mesh refinement."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad

from optimag.constants import MU0
from optimag.fem import CoreSection, Rect, Region, graded_axis, solve_core_section, solve_section


@pytest.mark.parametrize("kind", ["axisymmetric", "planar"])
def test_endless_solenoid_with_core_matches_ampere(kind: str) -> None:
    # Ungapped core, closed form: an endless solenoid (symmetry planes top and bottom, so
    # B is axial) of thickness t round a rod of permeability mu. Ampère's law gives
    # H_z = NI/H inside and a linear fall across the winding; W = ½∫mu0 mu H² dV and
    # L/N² = 2W/(NI)². Textbook magnetostatics (e.g. D. J. Griffiths, Introduction to
    # Electrodynamics, solenoid example; from memory).
    a, t, height, mu = 5e-3, 1e-3, 4e-3, 50.0
    x = graded_axis([0.0, a, a + t, 10e-3], [], 0.0, 0.5e-3)
    y = graded_axis([0.0, height], [], 0.0, 1e-3)
    density = 1.0 / (t * height)
    regions = [
        Region(Rect(0.0, a + t, 0.0, height), mu_r=mu),
        Region(Rect(a, a + t, 0.0, height), mu_r=mu, current_density_A_m2=density),
    ]
    solution = solve_section(kind, regions, x, y, zero_potential=("left",))

    def field(r: float) -> float:
        return 1.0 / height if r < a else (a + t - r) / (t * height)

    weight = (lambda r: 2.0 * np.pi * r) if kind == "axisymmetric" else (lambda r: 1.0)
    energy = 0.5 * MU0 * mu * height * quad(
        lambda r: field(r) ** 2 * weight(r), 0.0, a + t, points=[a]
    )[0]
    assert solution.source_integral == pytest.approx(2.0 * energy, rel=1e-5)
    # The stored energy from the field agrees with the source integral (W = ½∫J·A).
    assert 2.0 * solution.energy() == pytest.approx(solution.source_integral, rel=1e-9)


def _e_section(half_width: float) -> CoreSection:
    return CoreSection("planar", half_width, 3e-3, 1.5e-3, 8e-3, 1.5e-3, 5e-3, 0.0, 1e6)


def test_planar_gap_grows_as_a_parallel_plate_gap_with_the_leg_width() -> None:
    # Long parallel-plate gap, closed form P = mu0 w d / lg: widening the gapped leg by
    # 2Δ (window and outer leg moved out unchanged) adds exactly mu0 2Δ d / lg, the edges'
    # fringing being the same on both (ideal iron, mu_r = 1e6, so the core adds ~nothing).
    gap, delta = 0.1e-3, 0.5e-3
    narrow = solve_core_section(_e_section(2e-3), gap).inductance_per_turn2_H
    wide = solve_core_section(_e_section(2e-3 + delta), gap).inductance_per_turn2_H
    expected = MU0 * 2.0 * delta * 5e-3 / gap
    assert wide - narrow == pytest.approx(expected, rel=0.01)


@pytest.mark.parametrize("kind", ["axisymmetric", "planar"])
@pytest.mark.parametrize("gap_kind", ["centre", "spacer"])
def test_core_section_converges_under_refinement(kind: str, gap_kind: str) -> None:
    # Independent numerical check: doubling the grid density changes L by < 0.3 %.
    section = CoreSection(kind, 3e-3, 3e-3, 1.5e-3, 7e-3, 1.7e-3, 6e-3, 0.6e-3, 2000.0)
    coarse = solve_core_section(section, 0.5e-3, gap_kind, 0.7).inductance_per_turn2_H
    fine = solve_core_section(section, 0.5e-3, gap_kind, 1.4).inductance_per_turn2_H
    assert coarse == pytest.approx(fine, rel=3e-3)


def test_ungapped_pot_core_close_to_its_magnetic_circuit() -> None:
    # Closed form of the ungapped core as a magnetic circuit (IEC 60205 idea: sections in
    # series, plates integrated radially, ∫dr/(2πrt) = ln(r2/r1)/(2πt)). Corners are not
    # treated by the circuit, so only a few per cent agreement is expected.
    r1, ww, ts, hw, tp, mu = 3e-3, 3e-3, 1.2e-3, 7e-3, 1.7e-3, 2000.0
    section = CoreSection("axisymmetric", r1, ww, ts, hw, tp, 1.0, 0.5e-3, mu)
    fem = solve_core_section(section, 0.0).inductance_per_turn2_H
    r2, r3 = r1 + ww, r1 + ww + ts
    axial = hw + tp
    reluctance = (
        axial / (MU0 * mu * np.pi * r1**2)
        + axial / (MU0 * mu * np.pi * (r3**2 - r2**2))
        + 2.0 * np.log(r2 / r1) / (MU0 * mu * 2.0 * np.pi * tp)
    )
    assert fem == pytest.approx(1.0 / reluctance, rel=0.06)


def test_field_and_energy_density_are_consistent() -> None:
    section = CoreSection("axisymmetric", 3e-3, 3e-3, 1.5e-3, 7e-3, 1.7e-3, 1.0, 0.6e-3, 2000.0)
    result = solve_core_section(section, 0.5e-3)
    solution = result.solution
    # ∫|B|²/(2 mu0) over the air gap equals its stored energy share; check positivity and
    # that the winding sees a field, and that B in the gap is mostly axial.
    gap_rect = Rect(0.0, 3e-3, 0.0, 0.25e-3)
    assert solution.b_squared_integral(gap_rect) > 0.0
    assert solution.b_squared_integral(result.coil) > 0.0
    br, bz = solution.flux_density(np.array([1e-3]), np.array([0.1e-3]))
    assert abs(bz[0]) > 20.0 * abs(br[0])
