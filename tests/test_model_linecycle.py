"""Line-cycle operating points: PFC boost and grid-inverter filter inductors.

Sources:
- Erickson & Maksimović, *Fundamentals of Power Electronics*, 2nd ed., 2001, ch. 18 (PWM
  rectifiers; chapter from memory): an ideal boost PFC with unity power factor draws
  i(θ) = √2 (P/V) |sin θ| from v(θ) = √2 V |sin θ|; its CCM duty ratio is
  d(θ) = 1 − v(θ)/V_o and the ripple envelope Δi(θ) = v(θ) d(θ) / (L f_s).
- Mohan, Undeland, Robbins, *Power Electronics*, 3rd ed., 2003, ch. 8 (sine-triangle PWM
  of a full bridge, bipolar and unipolar voltage switching): bipolar duty
  (1 + v/V_d)/2 at f_s, unipolar output 0 / ±V_d at 2 f_s with duty |v|/V_d, giving
  Δi = (V_d² − v²)/(2 V_d L f_s) and Δi = |v| (V_d − |v|)/(2 V_d L f_s).
- Independent numerical solution: `tests/linecycle_brute.py`, the inductor current built
  switching period by switching period over the line cycle (PFC: each period solved for
  its average current through the design's flux-linkage curve; inverter: the bridge's
  PWM integrated in time), core loss by iGSE over each period's sampled flux, winding loss
  from the FFT of the whole line-cycle current.
The relations are also listed in tests/data/check_values.md.
"""

import numpy as np
import pytest

from optimag import model
from optimag.catalog import load_catalog
from optimag.physics import winding
from optimag.study import parse_study
from tests import linecycle_brute as brute
from tests.search.conftest import DEMO_CATALOG

PFC = """
[study]
name = "pfc-test"
title = "PFC test"

[converter]
topology = "pfc-boost"
switching_frequency_kHz = 100
line_steps = {steps}

[[operating_points]]
name = "full"
line_V_rms = 230.0
output_V = 390.0
power_W = 300.0
time_share = 0.7

[[operating_points]]
name = "light"
line_V_rms = 230.0
output_V = 390.0
power_W = 60.0
time_share = 0.3

[inductor]
inductance_uH = 800.0

[search]
objectives = ["loss", "volume"]
turns_min = 40
turns_max = 120
cores = ["E-shape-33", "ring-38"]
materials = ["fer-lowf", "pwd-60u"]
wires = ["awg-22"]

[catalog]
path = "{catalog}"
"""

INVERTER = """
[study]
name = "inverter-test"
title = "Inverter test"

[converter]
topology = "inverter-filter"
switching_frequency_kHz = 20
modulation = "{modulation}"
line_steps = {steps}

[[operating_points]]
name = "export"
dc_link_V = 400.0
grid_V_rms = 230.0
grid_A_rms = 3.0
power_factor = {pf}
time_share = 1.0

[inductor]
inductance_uH = 3000.0

[search]
objectives = ["loss", "volume"]
turns_min = 40
turns_max = 220
cores = ["E-shape-65"]
materials = ["fer-lowf"]
wires = ["awg-20"]

[catalog]
path = "{catalog}"
"""


def _space(tmp_path, text):
    path = tmp_path / "line.toml"
    path.write_text(text.replace("{catalog}", DEMO_CATALOG.as_posix()), encoding="utf-8")
    study = parse_study(path.read_text(encoding="utf-8"), path)
    return study, model.build_design_space(study, load_catalog(study.catalog.path))


def _candidate(space, core, material, turns):
    return model.Candidates.from_arrays(
        core=int(np.flatnonzero(space.cores.ids == core)[0]), stack=1,
        material=int(np.flatnonzero(space.materials.ids == material)[0]), turns=turns,
        gap_option=0, wire=0, parallel=1)


def _pfc_space(tmp_path, steps=48):
    return _space(tmp_path, PFC.replace("{steps}", str(steps)))


DESIGNS = [("E-shape-33", "fer-lowf", 80), ("ring-38", "pwd-60u", 110)]


@pytest.mark.parametrize("core,material,turns", DESIGNS)
def test_pfc_instants_follow_the_textbook_envelope(tmp_path, core, material, turns):
    """Average current |sin| and, in CCM, Δi(θ) = v d / (L f_s) with the design's own
    incremental inductance at the instant's current (Erickson & Maksimović ch. 18)."""
    study, space = _pfc_space(tmp_path)
    op = space.operating
    cand = _candidate(space, core, material, turns)
    metrics = model.evaluate(space, cand)
    theta = op.angle_rad
    for k, point in enumerate(study.operating_points):
        rows = op.point == k
        vin = np.sqrt(2) * point.line_V_rms * np.sin(theta[rows])
        average = np.sqrt(2) * point.power_W / point.line_V_rms * np.sin(theta[rows])
        np.testing.assert_allclose(op.dc_A[rows], average, rtol=1e-12)
        duty = 1 - vin / point.output_V
        inductance, _ = model.inductance_versus_current(
            space, cand.core, cand.stack, cand.material, cand.turns, cand.gap_option,
            metrics["gap_m"], average[None, :])
        envelope = vin * duty / (inductance[0] * study.frequency_Hz)
        ccm = ~metrics["instant_dcm"][0, rows]
        assert ccm.any()
        np.testing.assert_allclose(metrics["instant_ripple_A"][0, rows][ccm], envelope[ccm],
                                   rtol=1e-9)
        # DCM exactly where the CCM ripple would exceed twice the average current.
        np.testing.assert_array_equal(~ccm, envelope / 2 > average)
    # Light load is discontinuous near the zero crossings; full load is less so.
    light = metrics["instant_dcm"][0, op.point == 1]
    full = metrics["instant_dcm"][0, op.point == 0]
    assert light.sum() >= full.sum()


@pytest.mark.parametrize("core,material,turns", DESIGNS)
def test_pfc_losses_match_brute_force_time_domain(tmp_path, core, material, turns):
    """Core loss and winding loss (DC + AC at 20 °C) of each point within 3 % of the
    period-by-period time-domain evaluation (tolerance: the instants are quasi-static
    midpoints, the brute force holds the line voltage per period and samples the
    nonlinear flux; 3 % is stated, not fitted)."""
    study, space = _pfc_space(tmp_path, steps=48)
    cand = _candidate(space, core, material, turns)
    peak = 1.6 * np.sqrt(2) * 300.0 / 230.0
    current, linkage, flux, metrics = brute.design_curves(space, cand, peak)
    curves = (current, linkage, flux)
    rho = float(winding.copper_resistivity(20.0))
    for k, point in enumerate(study.operating_points):
        times, currents, starts = brute.pfc_periods(
            curves, point.line_V_rms, point.output_V, point.power_W, study.frequency_Hz,
            point.line_frequency_Hz)
        core_bf = brute.core_loss_W(space, cand, times, currents, curves)
        grid, uniform = brute.resample(times, currents, starts, 0.5 / point.line_frequency_Hz)
        winding_bf = brute.winding_loss_W(space, cand, metrics, grid, uniform, rho)
        core_model = metrics["core_loss_reference_W"][0, k]
        winding_model = metrics["winding_dc_lo_W"][0, k] + metrics["winding_ac_lo_W"][0, k]
        assert core_model == pytest.approx(core_bf, rel=0.03), (point.name, "core")
        assert winding_model == pytest.approx(winding_bf, rel=0.03), (point.name, "winding")
        # The peak current and flux at the line peak.
        assert metrics["peak_current_A"][0, k] == pytest.approx(currents.max(), rel=0.01)


def test_pfc_line_walk_converges(tmp_path):
    """The average over the instants converges as the line cycle is cut finer: 24
    instants within 0.5 % of 384 for core and winding loss, 12 within 1 %, and 24 closer
    than 6 (composite midpoint rule)."""
    results = {}
    for steps in (6, 12, 24, 384):
        folder = tmp_path / str(steps)
        folder.mkdir()
        _, space = _pfc_space(folder, steps)
        cand = _candidate(space, "ring-38", "pwd-60u", 110)
        metrics = model.evaluate(space, cand)
        results[steps] = np.array([metrics["core_loss_reference_W"][0],
                                   metrics["winding_ac_lo_W"][0],
                                   metrics["winding_dc_lo_W"][0]]).ravel()
    fine = results[384]
    error = {steps: np.max(np.abs(results[steps] / fine - 1)) for steps in (6, 12, 24)}
    assert error[24] < 0.005
    assert error[12] < 0.01
    assert error[24] < error[6]


def test_pfc_saturation_and_inductance_at_peak_are_at_the_line_peak(tmp_path):
    """The peak current the model checks is the line peak's: √2 P / V plus half the ripple
    there (at θ = 90° the instants' largest peak), and the inductance at peak is the
    design's incremental inductance at it."""
    _, space = _pfc_space(tmp_path, steps=48)
    cand = _candidate(space, "ring-38", "pwd-60u", 110)
    metrics = model.evaluate(space, cand)
    op = space.operating
    rows = op.point == 0
    top = np.argmax(op.angle_rad[rows])
    peak_instant = metrics["instant_peak_A"][0, rows]
    assert np.argmax(peak_instant) == top
    assert metrics["peak_current_A"][0, 0] == peak_instant[top]
    inductance, _ = model.inductance_versus_current(
        space, cand.core, cand.stack, cand.material, cand.turns, cand.gap_option,
        metrics["gap_m"], np.array([[metrics["peak_current_A"][0].max()]]))
    assert metrics["inductance_at_peak_H"][0] == pytest.approx(inductance[0, 0], rel=1e-12)


def _inverter_space(tmp_path, modulation, pf=1.0, steps=64):
    text = (INVERTER.replace("{modulation}", modulation).replace("{steps}", str(steps))
            .replace("{pf}", repr(pf)))
    return _space(tmp_path, text)


@pytest.mark.parametrize("modulation", ["bipolar", "unipolar"])
def test_inverter_ripple_envelope_follows_the_textbook(tmp_path, modulation):
    """Bipolar Δi = (V_d² − v²)/(2 V_d L f_s); unipolar Δi = |v|(V_d − |v|)/(2 V_d L f_s)
    (Mohan, Undeland, Robbins ch. 8), with the design's own inductance at the instant's
    current; never discontinuous (the bridge conducts both ways)."""
    study, space = _inverter_space(tmp_path, modulation, pf=0.8)
    op = space.operating
    cand = _candidate(space, "E-shape-65", "fer-lowf", 200)
    metrics = model.evaluate(space, cand)
    point = study.operating_points[0]
    v = np.sqrt(2) * point.grid_V_rms * np.sin(op.angle_rad)
    i = np.abs(np.sqrt(2) * point.grid_A_rms * np.sin(op.angle_rad - np.arccos(0.8)))
    np.testing.assert_allclose(op.dc_A, i, rtol=1e-12, atol=1e-12)
    inductance, _ = model.inductance_versus_current(
        space, cand.core, cand.stack, cand.material, cand.turns, cand.gap_option,
        metrics["gap_m"], i[None, :])
    vd, fs = point.dc_link_V, study.frequency_Hz
    if modulation == "bipolar":
        envelope = (vd**2 - v**2) / (2 * vd * inductance[0] * fs)
    else:
        envelope = np.abs(v) * (vd - np.abs(v)) / (2 * vd * inductance[0] * fs)
    np.testing.assert_allclose(metrics["instant_ripple_A"][0], envelope, rtol=1e-9)
    assert not metrics["instant_dcm"].any()
    # Near the current's zero crossing the valley goes below zero.
    assert metrics["instant_valley_A"][0].min() < 0


@pytest.mark.parametrize("modulation,pf", [("bipolar", 1.0), ("unipolar", 1.0),
                                           ("unipolar", 0.7)])
def test_inverter_losses_match_brute_force_pwm(tmp_path, modulation, pf):
    """Core and winding loss within 3 % of the sine-triangle PWM bridge integrated in
    time over a whole line cycle (the brute force includes the inductor's own
    line-frequency drop in the control signal; the model neglects it)."""
    study, space = _inverter_space(tmp_path, modulation, pf)
    cand = _candidate(space, "E-shape-65", "fer-lowf", 200)
    point = study.operating_points[0]
    current, linkage, flux, metrics = brute.design_curves(
        space, cand, 2.0 * np.sqrt(2) * point.grid_A_rms)
    curves = (current, linkage, flux)
    t, i = brute.inverter_current(
        curves, point.dc_link_V, point.grid_V_rms, point.grid_A_rms, pf, modulation,
        study.frequency_Hz, point.line_frequency_Hz,
        float(metrics["inductance_H"][0]))
    rho = float(winding.copper_resistivity(20.0))
    # The switching-frequency part (above half the switching frequency) is what the
    # instants model; the line-frequency part is set by the brute force's open-loop
    # control (see below) and checked against R_dc I_rms² of the wanted current.
    low_bf, ac_bf = brute.winding_loss_W(space, cand, metrics, t, i, rho,
                                         split_Hz=0.5 * study.frequency_Hz)
    # Core loss: iGSE over each ripple period's sampled flux (a unipolar bridge's output
    # pattern repeats twice per carrier period).
    per = t.size // round(study.frequency_Hz / point.line_frequency_Hz)
    per //= 2 if modulation == "unipolar" else 1
    times = np.concatenate([t[:per], [t[per]]])[None, :].repeat(t.size // per, 0)
    blocks = np.concatenate([i.reshape(-1, per), np.roll(i, -per).reshape(-1, per)[:, :1]],
                            axis=1)
    core_bf = brute.core_loss_W(space, cand, times, blocks, curves)
    core_model = metrics["core_loss_reference_W"][0, 0]
    assert core_model == pytest.approx(core_bf, rel=0.03)
    assert metrics["winding_ac_lo_W"][0, 0] == pytest.approx(ac_bf, rel=0.03)
    assert metrics["winding_dc_lo_W"][0, 0] == pytest.approx(low_bf, rel=0.1)
    rdc = metrics["dc_resistance_20C_ohm"][0] * rho / winding.copper_resistivity(20.0)
    assert metrics["winding_dc_lo_W"][0, 0] == pytest.approx(
        rdc * point.grid_A_rms**2, rel=1e-9)
    # The brute force's control is open loop (its line-frequency current follows the
    # design's rolled-off λ(i) curve, a few percent above the wanted amplitude), so the
    # peak is compared loosely.
    assert metrics["peak_current_A"][0, 0] == pytest.approx(np.abs(i).max(), rel=0.06)
