"""Each design's own converter current at each operating point, CCM or DCM.

Sources: Erickson & Maksimović, *Fundamentals of Power Electronics*, 3rd ed., Springer 2020,
ch. 5 (discontinuous conduction mode): with K = 2 L / (R T_s) and D1 the on-time fraction,
the conversion ratios in DCM are buck M = 2 / (1 + sqrt(1 + 4 K / D1²)), boost
M = (1 + sqrt(1 + 4 D1² / K)) / 2, inverting buck-boost |M| = D1 / sqrt(K); the converter is
in DCM where K < K_crit(D), K_crit = 1 - D (buck), D (1 - D)² (boost), (1 - D)²
(buck-boost), D the CCM duty ratio; the peak current is I_pk = V_on D1 T_s / L and the
inductor's volt-second balance gives D2 = D1 V_on / V_off (from memory). L is each design's
incremental inductance at the point's average current, as the model takes it.
"""

import numpy as np
import pytest

from optimag import model
from optimag.catalog import load_catalog
from optimag.physics import coreloss
from optimag.search.exhaustive import explore_exhaustive, magnetic_grid
from optimag.study import load_study
from optimag.study.waveform import converter_waveform, piecewise_linear_harmonics
from tests.search.conftest import write_tiny_study

# Per topology: (input_V, output_V) and the loads of a heavy and a light point.
CASES = {
    "buck": (24.0, 5.0, 4.0, 0.15),
    "boost": (12.0, 30.0, 1.5, 0.05),
    "buck-boost": (12.0, 15.0, 1.5, 0.06),
}

# Textbook relations (Erickson & Maksimović ch. 5, from memory).
K_CRIT = {
    "buck": lambda d: 1 - d,
    "boost": lambda d: d * (1 - d) ** 2,
    "buck-boost": lambda d: (1 - d) ** 2,
}
ON_TIME_FROM_M = {  # D1 solved from the DCM conversion ratio M(D1, K)
    "buck": lambda m, k: np.sqrt(4 * k / ((2 / m - 1) ** 2 - 1)),
    "boost": lambda m, k: np.sqrt(k * ((2 * m - 1) ** 2 - 1) / 4),
    "buck-boost": lambda m, k: m * np.sqrt(k),
}
CCM_DUTY = {
    "buck": lambda vi, vo: vo / vi,
    "boost": lambda vi, vo: 1 - vi / vo,
    "buck-boost": lambda vi, vo: vo / (vi + vo),
}
ON_OFF_VOLTAGES = {
    "buck": lambda vi, vo: (vi - vo, vo),
    "boost": lambda vi, vo: (vi, vo - vi),
    "buck-boost": lambda vi, vo: (vi, vo),
}


def _space(tmp_path, topology):
    vi, vo, heavy, light = CASES[topology]
    path = write_tiny_study(tmp_path)
    text = path.read_text(encoding="utf-8")
    text = text.replace('topology = "buck"', f'topology = "{topology}"')
    text = text.replace("input_V = 24.0\noutput_V = 5.0\nload_A = 3.0",
                        f"input_V = {vi}\noutput_V = {vo}\nload_A = {heavy}")
    text = text.replace("input_V = 12.0\noutput_V = 5.0\nload_A = 4.0",
                        f"input_V = {vi}\noutput_V = {vo}\nload_A = {light}")
    text = text.replace("[search]\n", "[search]\ngap = \"grid\"\n"
                        "gap_grid_mm = [0.05, 0.1, 0.2, 0.35, 0.5, 0.8, 1.2, 2.0]\n")
    text = text.replace('materials = ["fer-lowf", "fer-midf", "pwd-60u"]',
                        'materials = ["fer-lowf", "fer-midf"]')
    path.write_text(text, encoding="utf-8")
    study = load_study(path)
    return study, model.build_design_space(study, load_catalog(study.catalog.path))


def _inductance_at_dc(space, cands, metrics, k):
    """Incremental inductance of each candidate at operating point k's average current."""
    current = np.full(len(cands), space.operating.dc_A[k])
    inductance, _ = model.inductance_versus_current(
        space, cands.core, cands.stack, cands.material, cands.turns, cands.gap_option,
        metrics["gap_m"], current)
    return inductance


def _all_candidates(space):
    mag = magnetic_grid(space)
    n = len(mag["core"])
    return model.Candidates(**mag, wire=np.zeros(n, dtype=np.int64),
                            parallel=np.ones(n, dtype=np.int64))


@pytest.mark.parametrize("topology", list(CASES))
def test_each_design_follows_the_textbook_dcm_relations(tmp_path, topology):
    study, space = _space(tmp_path, topology)
    cands = _all_candidates(space)
    metrics = model.evaluate(space, cands)
    vi, vo, *_ = CASES[topology]
    f = study.frequency_Hz
    d = CCM_DUTY[topology](vi, vo)
    v_on, v_off = ON_OFF_VOLTAGES[topology](vi, vo)
    ve = space.cores.ve_m3[cands.core] * cands.stack
    for k, point in enumerate(study.operating_points):
        # Each design's own incremental inductance at the point's average current (the
        # ferrite's soft-saturation law, tested in tests/physics) sets its waveform.
        inductance = _inductance_at_dc(space, cands, metrics, k)
        resistance = vo / point.load_A
        kk = 2 * inductance * f / resistance
        expected_dcm = kk < K_CRIT[topology](d)
        np.testing.assert_array_equal(metrics["dcm"][:, k], expected_dcm)
        dcm = np.flatnonzero(expected_dcm)
        if dcm.size == 0:
            continue
        d1 = ON_TIME_FROM_M[topology](vo / vi, kk[dcm])
        d2 = d1 * v_on / v_off
        peak = v_on * d1 / (inductance[dcm] * f)
        np.testing.assert_allclose(metrics["rise_fraction"][dcm, k], d1, rtol=1e-9)
        np.testing.assert_allclose(metrics["fall_fraction"][dcm, k], d2, rtol=1e-9)
        np.testing.assert_allclose(metrics["peak_current_A"][dcm, k], peak, rtol=1e-9)
        np.testing.assert_allclose(metrics["ripple_A"][dcm, k], peak, rtol=1e-9)
        # Flux on the core's B(I) law (linear below the soft roll-off), zero to peak.
        _, peak_flux = model.inductance_versus_current(
            space, cands.core[dcm], cands.stack[dcm], cands.material[dcm], cands.turns[dcm],
            cands.gap_option[dcm], metrics["gap_m"][dcm], peak)
        swing = peak_flux
        np.testing.assert_allclose(metrics["flux_swing_T"][dcm, k], swing, rtol=1e-9)
        # Core loss: piecewise-linear iGSE on the design's own three-segment flux.
        period = 1 / f
        times = np.stack([0 * d1, d1, d1 + d2, 0 * d1 + 1], axis=-1) * period
        flux = np.stack([0 * swing, swing, 0 * swing, 0 * swing], axis=-1)
        mat = cands.material[dcm]
        density = coreloss.igse_loss_density_piecewise(
            flux, times, space.materials.k[mat], space.materials.alpha[mat],
            space.materials.beta[mat],
        )
        np.testing.assert_allclose(
            metrics["core_loss_reference_W"][dcm, k], density * ve[dcm], rtol=1e-9
        )
        # AC winding loss: sum over harmonics of R_n c_n² / 2 with the design's own wave.
        rows = dcm[:: max(1, dcm.size // 25)]
        for i in rows:
            wave = piecewise_linear_harmonics(
                times[np.searchsorted(dcm, i)], [0.0, peak[np.searchsorted(dcm, i)], 0.0, 0.0],
                space.operating.harmonics_A.shape[1],
            )
            for label in ("lo", "hi"):
                expected = 0.5 * np.sum(metrics[f"harmonic_resistance_{label}_ohm"][i] * wave**2)
                assert metrics[f"winding_ac_{label}_W"][i, k] == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize("topology", list(CASES))
def test_designs_cross_the_boundary_by_themselves(tmp_path, topology):
    """At the light point the target inductance is CCM or DCM, but designs on either side
    of the boundary inductance land on their own side."""
    study, space = _space(tmp_path, topology)
    cands = _all_candidates(space)
    metrics = model.evaluate(space, cands)
    vi, vo, _, light = CASES[topology]
    d = CCM_DUTY[topology](vi, vo)
    boundary_l = K_CRIT[topology](d) * (vo / light) / (2 * study.frequency_Hz)
    below = _inductance_at_dc(space, cands, metrics, 1) < boundary_l
    assert below.any() and (~below).any()
    np.testing.assert_array_equal(metrics["dcm"][:, 1], below)


@pytest.mark.parametrize("topology", list(CASES))
def test_below_target_inductance_means_a_larger_peak_and_flux_swing(tmp_path, topology):
    """A design under the target inductance carries a higher peak than the target's waveform
    and, in its own core, a larger flux swing than that waveform would give."""
    study, space = _space(tmp_path, topology)
    cands = _all_candidates(space)
    metrics = model.evaluate(space, cands)
    vi, vo, heavy, light = CASES[topology]
    target = [
        converter_waveform(topology, vi, vo, load, study.frequency_Hz,
                           study.required_inductance_H)
        for load in (heavy, light)
    ]
    low = np.flatnonzero(metrics["inductance_H"] < 0.9 * study.required_inductance_H)
    assert low.size

    def flux(rows, current):
        """Flux density on Ae by each design's own B(I) law (soft saturation)."""
        _, b = model.inductance_versus_current(
            space, cands.core[rows], cands.stack[rows], cands.material[rows],
            cands.turns[rows], cands.gap_option[rows], metrics["gap_m"][rows],
            np.full(rows.size, float(current)))
        return b

    for k, wave in enumerate(target):
        assert np.all(metrics["peak_current_A"][low, k] > wave.peak_A)
        # The design's current spans the target's [valley, peak] and more; B(I) rises.
        within = flux(low, wave.peak_A) - flux(low, max(wave.valley_A, 0.0))
        assert np.all(metrics["flux_swing_T"][low, k] >= within * (1 - 1e-12))
    assert target[1].dcm or np.any(metrics["dcm"][low, 1])
    dcm_low = low[metrics["dcm"][low, 1]]
    assert dcm_low.size
    within = flux(dcm_low, target[1].peak_A) - flux(dcm_low, max(target[1].valley_A, 0.0))
    assert np.all(metrics["flux_swing_T"][dcm_low, 1] > within)


def test_exhaustive_search_matches_flat_evaluation_with_dcm_designs(tmp_path):
    """The factorised search (harmonic sums on joined indices) gives the flat figures."""
    _study, space = _space(tmp_path, "boost")
    outcome = explore_exhaustive(space, ["volume", "loss"])
    front = outcome.front
    assert len(front.objectives) > 0
    cands = model.Candidates(**{f: front.payload[f] for f in front.payload})
    flat = model.evaluate(space, cands)
    np.testing.assert_allclose(flat["weighted_loss_W"], front.objectives[:, 1], rtol=1e-9)
