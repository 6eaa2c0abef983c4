"""Brute-force time-domain evaluation of an inductor over the line cycle, for the tests.

Independent of the model's instants: the inductor current is built switching period by
switching period (PFC boost: each period solved for the controller's average current, CCM
or DCM, through the design's own flux linkage curve; inverter: sine-triangle PWM of the
bridge integrated in time), the core loss is the piecewise-linear iGSE over each period's
sampled flux, and the winding loss is the sum over the FFT of the whole line-cycle current
of each bin's AC resistance times its mean square. Only the design's L(I) and B(I) curves,
its winding geometry and the Dowell factor are taken from optimag.
"""

from __future__ import annotations

import numpy as np

from optimag import model
from optimag.physics import ac_resistance, coreloss, winding


def design_curves(space, cand, peak_A: float, points: int = 4001):
    """Current grid [A], flux linkage λ(i) = ∫ L_inc di [Wb], flux density B(i) [T]."""
    current = np.linspace(0.0, peak_A, points)
    metrics = model.evaluate(space, cand)
    inductance, flux = model.inductance_versus_current(
        space, cand.core, cand.stack, cand.material, cand.turns, cand.gap_option,
        metrics["gap_m"], current[None, :])
    inductance, flux = inductance[0], flux[0]
    linkage = np.concatenate([[0.0], np.cumsum(0.5 * (inductance[1:] + inductance[:-1])
                                               * np.diff(current))])
    return current, linkage, flux, metrics


def _current_of(linkage_value, curves):
    current, linkage, _ = curves
    sign = np.sign(linkage_value)
    return sign * np.interp(np.abs(linkage_value), linkage, current)


def _flux_of(current_value, curves):
    current, _, flux = curves
    return np.sign(current_value) * np.interp(np.abs(current_value), current, flux)


def pfc_periods(curves, line_V_rms, output_V, power_W, frequency_Hz, line_Hz, samples=24):
    """Per switching period over a half line cycle: times (P, S) [s] from the period's
    start, currents (P, S) [A] at those times, start time of each period [s]."""
    periods = round(frequency_Hz / (2 * line_Hz))
    period = 1.0 / frequency_Hz
    start = np.arange(periods) * period
    angle = 2 * np.pi * line_Hz * (start + period / 2)
    vin = np.sqrt(2) * line_V_rms * np.abs(np.sin(angle))
    target = np.sqrt(2) * power_W / line_V_rms * np.abs(np.sin(angle))
    u = np.linspace(0.0, 1.0, samples)

    def shape(lambda0, d1, d2):
        # Rise for d1, fall for d2 (down to λ0 again), rest flat; vertices on each piece.
        rise = lambda0[:, None] + vin[:, None] * d1[:, None] * period * u
        top = lambda0 + vin * d1 * period
        fall = top[:, None] - (output_V - vin)[:, None] * d2[:, None] * period * u
        flat = np.repeat(fall[:, -1:], samples, axis=1)
        times = np.concatenate([d1[:, None] * u, (d1 + d2 * u[:, None]).T,
                                (d1 + d2)[:, None] + (1 - d1 - d2)[:, None] * u],
                               axis=1) * period
        lam = np.concatenate([rise, fall, flat], axis=1)
        return times, _current_of(lam, curves)

    def average(times, currents):
        return np.trapezoid(currents, times, axis=1) / period

    d_ccm = 1.0 - vin / output_V
    lo, hi = np.zeros(periods), np.full(periods, np.interp(target * 2, curves[0], curves[1]))
    for _ in range(60):  # CCM: the valley's flux linkage so the average meets the target
        mid = 0.5 * (lo + hi)
        too_high = average(*shape(mid, d_ccm, 1 - d_ccm)) > target
        hi = np.where(too_high, mid, hi)
        lo = np.where(too_high, lo, mid)
    lambda0 = 0.5 * (lo + hi)
    dcm = lambda0 <= 1e-12 * np.max(curves[1])
    ratio = vin / (output_V - vin)
    lo, hi = np.zeros(periods), d_ccm.copy()
    for _ in range(60):  # DCM: the on-time so the average meets the target
        mid = 0.5 * (lo + hi)
        too_high = average(*shape(np.zeros(periods), mid, mid * ratio)) > target
        hi = np.where(too_high, mid, hi)
        lo = np.where(too_high, lo, mid)
    d1 = np.where(dcm, 0.5 * (lo + hi), d_ccm)
    d2 = np.where(dcm, d1 * ratio, 1 - d_ccm)
    times, currents = shape(np.where(dcm, 0.0, lambda0), d1, d2)
    return times, currents, start


def inverter_current(curves, dc_link_V, grid_V_rms, grid_A_rms, power_factor, modulation,
                     frequency_Hz, line_Hz, inductance_H, samples=256):
    """Inductor current over one line cycle under sine-triangle PWM: uniform times (T,) [s]
    and currents (T,) [A]. The control signal asks for the grid voltage plus the drop of
    the line-frequency current across the inductance."""
    periods = round(frequency_Hz / line_Hz)
    count = periods * samples
    t = np.arange(count) / (count * line_Hz)
    dt = t[1]
    w = 2 * np.pi * line_Hz
    phi = np.arccos(power_factor)
    grid = np.sqrt(2) * grid_V_rms * np.sin(w * t)
    wanted = np.sqrt(2) * grid_A_rms * np.sin(w * t - phi)
    control = (grid + inductance_H * w * np.sqrt(2) * grid_A_rms * np.cos(w * t - phi)) / dc_link_V
    phase = (t * frequency_Hz) % 1.0
    carrier = np.where(phase < 0.5, 4 * phase - 1, 3 - 4 * phase)  # triangle in [-1, 1]
    if modulation == "bipolar":
        bridge = np.where(control > carrier, dc_link_V, -dc_link_V)
    else:
        leg_a = control > carrier
        leg_b = -control > carrier
        bridge = dc_link_V * (leg_a.astype(float) - leg_b.astype(float))
    # Flux linkage integrates the inductor voltage (bridge minus grid); over a whole line
    # cycle it averages zero (the current and the λ(i) curve are odd).
    linkage = np.cumsum(bridge - grid) * dt
    linkage -= np.mean(linkage)
    assert abs(np.mean(wanted)) < 1e-9 * grid_A_rms
    return t, _current_of(linkage, curves)


def core_loss_W(space, cand, times, currents, curves):
    """Mean over periods of the piecewise-linear iGSE of each period's sampled flux [W]."""
    m, c = space.materials, space.cores
    mat = cand.material[0]
    flux = _flux_of(currents, curves)
    density = coreloss.igse_loss_density_piecewise(
        flux, times, m.k[mat], m.alpha[mat], m.beta[mat])
    return float(np.mean(density) * c.ve_m3[cand.core[0]] * cand.stack[0])


def winding_loss_W(space, cand, metrics, times_uniform, current_uniform, rho,
                   split_Hz=None):
    """Σ over FFT bins of R_ac(f) |c|²/2 plus R_dc mean² [W], round wire (Dowell); with
    ``split_Hz`` the parts below and above that frequency."""
    w, c = space.wires, space.cores
    count = current_uniform.size
    spectrum = np.fft.rfft(current_uniform) / count
    span = times_uniform[1] * count
    freq = np.arange(spectrum.size) / span
    amplitude = 2 * np.abs(spectrum)
    amplitude[0] = np.abs(spectrum[0])
    if count % 2 == 0:
        amplitude[-1] = np.abs(spectrum[-1])
    rdc = float(metrics["dc_resistance_20C_ohm"][0]) * rho / winding.copper_resistivity(20.0)
    factor = ac_resistance.round_wire_ac_factor(
        freq[1:], rho, w.bare_diameter_m[cand.wire[0]], metrics["conductors_per_layer"][0],
        c.breadth_m[cand.core[0]], metrics["layers"][0])
    per_bin = rdc * np.concatenate([[amplitude[0] ** 2], 0.5 * factor * amplitude[1:] ** 2])
    if split_Hz is None:
        return float(per_bin.sum())
    return float(per_bin[freq < split_Hz].sum()), float(per_bin[freq >= split_Hz].sum())


def resample(times_per_period, currents_per_period, starts, span, per_period=128):
    """Periods' piecewise-linear currents on a uniform grid over ``span`` seconds."""
    t = (times_per_period + starts[:, None]).ravel()
    i = currents_per_period.ravel()
    order = np.argsort(t, kind="stable")
    count = len(starts) * per_period
    grid = np.arange(count) * span / count
    return grid, np.interp(grid, t[order], i[order])
