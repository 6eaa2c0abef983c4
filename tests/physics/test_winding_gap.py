"""Gap fringing field and the extra eddy loss it causes in the winding
(optimag.physics.winding): closed forms against independent numerical routes."""

import math

import numpy as np
import pytest
from scipy.integrate import quad, solve_bvp

from optimag.constants import COPPER_RESISTIVITY_20C, MU0
from optimag.physics import gap_field

H = 10e-3  # window height [m]
F = 50.0  # gap MMF [A]


def test_gap_field_is_the_sum_of_its_line_sources():
    """Method of images written out: each source (the gap and its images in the two yokes,
    period h) is a line current F doubled by the leg, H = F/(pi r) (Binns, Lawrenson,
    Trowbridge, from memory); summed term by term in symmetric pairs."""
    x = np.array([0.3e-3, 1e-3, 4e-3, 12e-3])
    y = np.array([0.0, 1.5e-3, -3e-3, 4.9e-3])
    h_x, h_y = gap_field.gap_fringing_field(x, y, H, F)
    z = x + 1j * y
    n = np.arange(1, 200_001)[:, None]
    pairs = (1.0 / (z - 1j * n * H) + 1.0 / (z + 1j * n * H)).sum(axis=0)
    tail = 2.0 * z / (H**2 * (n[-1, 0] + 0.5))  # sum of 2z/(n^2 h^2) beyond the last pair
    direct = F / math.pi * (1.0 / z + pairs + tail)  # H_y - i H_x
    np.testing.assert_allclose(h_y, direct.real, rtol=1e-5, atol=1e-6 * F / H)
    np.testing.assert_allclose(-h_x, direct.imag, rtol=1e-5, atol=1e-6 * F / H)


@pytest.mark.parametrize("x", [0.2e-3, 2e-3, 20e-3])
def test_gap_field_obeys_amperes_law_and_the_iron_boundaries(x):
    # Ampère: from yoke to yoke at any distance the field along the leg sums to the gap MMF
    # (the path closes through the infinitely permeable core across the gap).
    line, _ = quad(lambda y: gap_field.gap_fringing_field(x, y, H, F)[1], -H / 2, H / 2,
                   points=[0.0], limit=200, epsabs=1e-10)
    assert line == pytest.approx(F, rel=1e-7)
    # Normal field at the iron: no field along the leg at its surface, none across the
    # window at the yokes.
    along = gap_field.gap_fringing_field(1e-12, 2e-3, H, F)[1]
    assert along == pytest.approx(0.0, abs=1e-9 * F / H)
    assert gap_field.gap_fringing_field(x, H / 2, H, F)[0] == pytest.approx(0.0, abs=1e-9 * F / H)


@pytest.mark.parametrize(
    ("x", "span", "u"),
    [(0.5e-3, 8e-3, 1.0), (1.2e-3, 10e-3, 0.5), (3e-3, 4e-3, 0.2), (0.8e-3, 6e-3, 0.0)],
)
def test_layer_excess_matches_quadrature(x, span, u):
    """Closed-form layer mean against scipy quad of |H|^2 - H_1D^2 over the layer, with the
    layer's field = gap field - (1 - u) F/h along the leg (the inner layers' return)."""

    def excess(y):
        h_x, h_y = gap_field.gap_fringing_field(x, y, H, F)
        h_y = h_y - (1.0 - u) * F / H
        return (h_x**2 + h_y**2 - (u * F / H) ** 2) / (F / H) ** 2

    integral, _ = quad(excess, -span / 2, span / 2, points=[0.0], limit=400, epsabs=1e-12)
    assert gap_field.gap_fringing_excess(x, span, H, u) == pytest.approx(integral / span, rel=1e-8)


def test_layer_excess_vanishes_far_from_the_gap():
    # Far from the gap the field is the 1-D one: nothing extra.
    assert gap_field.gap_fringing_excess(0.2, 8e-3, H, 0.7) == pytest.approx(0.0, abs=1e-12)
    near = gap_field.gap_fringing_excess(np.array([0.3e-3, 1e-3, 3e-3]), 8e-3, H, 1.0)
    assert np.all(np.diff(near) < 0) and near[-1] > 0


def test_transverse_loss_low_and_high_frequency_limits():
    """Low frequency: pi w^2 mu0^2 d^4 / (128 rho) (E = x dB/dt over the section,
    Lammeraner & Stafl, from memory); high frequency: surface field 2 H sin(theta) on a
    surface resistance 1/(sigma delta): 2 pi a / (sigma delta)."""
    rho, d = COPPER_RESISTIVITY_20C, 0.5e-3
    for f in (50.0, 2e3):
        omega = 2 * math.pi * f
        low = math.pi * omega**2 * MU0**2 * d**4 / (128 * rho)
        assert gap_field.round_conductor_transverse_loss(f, rho, d) == pytest.approx(low, rel=2e-3)
    f = 2e9
    delta = math.sqrt(2 * rho / (2 * math.pi * f * MU0))
    high = 2 * math.pi * (d / 2) * rho / delta
    assert gap_field.round_conductor_transverse_loss(f, rho, d) == pytest.approx(high, rel=2e-2)


@pytest.mark.parametrize("ratio", [1.0, 3.0, 8.0])
def test_transverse_loss_matches_a_numerical_field_solution(ratio):
    """Independent numerical solution: the sin(theta) mode of the diffusion equation
    A'' + A'/r - A/r^2 = j w mu0 sigma A, A(0) = 0, A'(a) + A(a)/a = 2 mu0 H (matching to
    the outside field) by scipy solve_bvp; loss = (pi sigma w^2 / 2) int |A|^2 r dr."""
    rho, d = COPPER_RESISTIVITY_20C, 1e-3
    a = d / 2
    delta = d / ratio
    omega = 2 * rho / (delta**2 * MU0)
    kk = omega * MU0 / rho
    field = 1.0

    def ode(r, y):  # y = [Re A, Im A, Re A', Im A']
        ar, ai, dr, di = y
        return np.vstack([dr, di, -dr / r + ar / r**2 - kk * ai, -di / r + ai / r**2 + kk * ar])

    def bc(y0, y1):
        return np.array([y0[0], y0[1], y1[2] + y1[0] / a - 2 * MU0 * field, y1[3] + y1[1] / a])

    r = np.linspace(a * 1e-4, a, 2000)
    guess = np.vstack([MU0 * field * r, 0 * r, MU0 * field + 0 * r, 0 * r])
    sol = solve_bvp(ode, bc, r, guess, tol=1e-8, max_nodes=200_000)
    assert sol.success
    rr = np.linspace(a * 1e-4, a, 20001)
    values = sol.sol(rr)
    loss = math.pi / (2 * rho) * omega**2 * np.trapezoid((values[0] ** 2 + values[1] ** 2) * rr, rr)
    f = omega / (2 * math.pi)
    assert gap_field.round_conductor_transverse_loss(f, rho, d) == pytest.approx(loss, rel=2e-3)
