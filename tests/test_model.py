"""Model-level checks: the exact thermal screen, stage consistency, and the energy identity."""

import dataclasses

import numpy as np
import pytest

from optimag import model
from optimag.catalog import load_catalog
from optimag.physics import fringing, saturation
from optimag.search.exhaustive import magnetic_grid
from optimag.study import load_study


@pytest.fixture
def tiny_space(tmp_path):
    from tests.search.conftest import write_tiny_study as write

    study = load_study(write(tmp_path))
    return model.build_design_space(study, load_catalog(study.catalog.path))


def _random_candidates(space, n, seed=0):
    rng = np.random.default_rng(seed)
    mag = magnetic_grid(space)
    rows = rng.integers(0, len(mag["core"]), n)
    return model.Candidates(
        core=mag["core"][rows], stack=mag["stack"][rows], material=mag["material"][rows],
        turns=mag["turns"][rows], gap_option=mag["gap_option"][rows],
        wire=rng.integers(0, len(space.wires.ids), n), parallel=rng.choice(space.parallels, n),
    )


def test_thermal_screen_never_removes_a_cool_enough_part(tiny_space):
    """The screen compares the smallest loss with the heat shed at the limit; a part it
    flags must come out over the limit (or in runaway) from the full fixed point."""
    # A tight limit (55 degC in 40 degC ambient) so that both outcomes occur.
    space = dataclasses.replace(
        tiny_space,
        requirements=dataclasses.replace(tiny_space.requirements, max_temperature_C=55.0),
    )
    cands = _random_candidates(space, 4000)
    metrics = model.evaluate(space, cands)
    flagged = model.certainly_too_hot(
        space, cands.material, cands.stack, cands.core, metrics, metrics
    )
    assert flagged.any() and (~flagged).any()
    assert np.all(metrics["violation_temperature"][flagged] > 0)


def test_stored_energy_identity(tiny_space):
    """½ L I² equals ½ N² I² (1/R_total + P_window) for the solved gap (magnetic circuit
    plus the window's own field)."""
    from optimag.physics import magnetic

    cands = _random_candidates(tiny_space, 500, seed=1)
    metrics = model.evaluate(tiny_space, cands)
    c = tiny_space.cores
    ferrite_gapped = (metrics["gap_m"] > 0) & (tiny_space.materials.kind[cands.material] == 0)
    assert ferrite_gapped.any()
    i = np.flatnonzero(ferrite_gapped)
    ae = c.ae_m2[cands.core[i]] * cands.stack[i]
    geometry = model.gap_geometry(tiny_space, cands.core[i], cands.stack[i], cands.gap_option[i])
    r_total = magnetic.core_reluctance(
        c.le_m[cands.core[i]], ae, tiny_space.materials.mu_i[cands.material[i]]
    ) + fringing.gap_reluctance(
        metrics["gap_m"][i], ae, c.breadth_m[cands.core[i]], geometry.leg_width_m,
        geometry.leg_depth_m, tiny_space.requirements.fringing, geometry=geometry,
    )
    r_core = magnetic.core_reluctance(
        c.le_m[cands.core[i]], ae, tiny_space.materials.mu_i[cands.material[i]]
    )
    p_window = model.window_permeance(tiny_space, cands.core[i], cands.stack[i],
                                      cands.gap_option[i], metrics["gap_m"][i], r_core, geometry)
    current = 3.0
    energy_l = 0.5 * metrics["inductance_H"][i] * current**2
    energy_r = 0.5 * cands.turns[i] ** 2 * current**2 * (1.0 / r_total + p_window)
    np.testing.assert_allclose(energy_l, energy_r, rtol=1e-9)
    # The solved gap meets the required inductance (magnetic circuit law, inverted).
    np.testing.assert_allclose(
        metrics["inductance_H"][i], tiny_space.requirements.inductance_H, rtol=1e-9
    )


def test_flat_evaluation_is_row_independent(tiny_space):
    """Evaluating a batch or each row alone gives the same figures (one code path)."""
    cands = _random_candidates(tiny_space, 60, seed=2)
    batch = model.evaluate(tiny_space, cands)
    for i in range(0, 60, 7):
        alone = model.evaluate(tiny_space, cands.take(slice(i, i + 1)))
        for key in ("weighted_loss_W", "volume_cm3", "cost", "mass_g", "worst_violation"):
            assert alone[key][0] == pytest.approx(batch[key][i], rel=1e-9, abs=1e-12)


def test_ripple_follows_each_designs_own_inductance(tiny_space):
    """CCM buck ripple dI = (Vi - Vo) D / (L f), D = Vo/Vi (Erickson & Maksimović ch. 2),
    with L the design's incremental inductance at its DC current (powder roll-off), for the
    designs that stay in CCM by their own inductance."""

    cands = _random_candidates(tiny_space, 3000, seed=4)
    metrics = model.evaluate(tiny_space, cands)
    m, c, op = tiny_space.materials, tiny_space.cores, tiny_space.operating
    powder = np.flatnonzero(m.kind[cands.material] == 1)
    assert powder.size
    points = [(24.0, 5.0), (12.0, 5.0)]  # the tiny study's (input_V, output_V)
    for k, (vi, vo) in enumerate(points):
        assert not op.dcm[k]
        i = powder[~metrics["dcm"][powder, k]]
        assert i.size
        l_dc = saturation.powder_inductance(
            cands.turns[i], op.dc_A[k], c.le_m[cands.core[i]],
            c.ae_m2[cands.core[i]] * cands.stack[i], m.mu_i[cands.material[i]],
            m.rolloff_a[cands.material[i]], m.rolloff_b[cands.material[i]],
            m.rolloff_c[cands.material[i]],
        )
        expected = (vi - vo) * (vo / vi) / (l_dc * op.frequency_Hz)
        np.testing.assert_allclose(metrics["ripple_A"][i, k], expected, rtol=1e-9)


def test_ferrite_rolls_off_on_its_soft_saturation_curve(tiny_space):
    """Ferrite ripple and inductance at peak follow the Fröhlich-Kennelly circuit solution
    (physics.saturation.soft_saturation_operating_point, tested against a root finder) with
    the Bsat of the hottest allowed temperature; the buck ripple is (Vi - Vo) D / (L f)."""
    from optimag.physics import magnetic

    cands = _random_candidates(tiny_space, 3000, seed=5)
    metrics = model.evaluate(tiny_space, cands)
    m, c, op = tiny_space.materials, tiny_space.cores, tiny_space.operating
    req = tiny_space.requirements
    i = np.flatnonzero((m.kind[cands.material] == 0) & (metrics["gap_m"] > 0))
    assert i.size
    ae = c.ae_m2[cands.core[i]] * cands.stack[i]
    geometry = model.gap_geometry(tiny_space, cands.core[i], cands.stack[i],
                                  cands.gap_option[i])
    r_gap = fringing.gap_reluctance(metrics["gap_m"][i], ae, c.breadth_m[cands.core[i]],
                                    geometry.leg_width_m, geometry.leg_depth_m,
                                    model=req.fringing, geometry=geometry)
    le, mu = c.le_m[cands.core[i]], m.mu_i[cands.material[i]]
    # The winding window's own field, in parallel with the core path (linear, air).
    window = cands.turns[i] ** 2 * model.window_permeance(
        tiny_space, cands.core[i], cands.stack[i], cands.gap_option[i], metrics["gap_m"][i],
        magnetic.core_reluctance(le, ae, mu), geometry)
    bsat = saturation.bsat_at_temperature(req.max_temperature_C, m.bsat_25C_T[cands.material[i]],
                                        m.bsat_100C_T[cands.material[i]])
    args = (le, ae, mu, bsat, r_gap)
    for k, (vi, vo) in enumerate([(24.0, 5.0), (12.0, 5.0)]):
        ccm = ~metrics["dcm"][i, k]
        assert ccm.any()
        l_dc = saturation.soft_saturation_operating_point(
            cands.turns[i], op.dc_A[k], *args).inductance_H + window
        expected = (vi - vo) * (vo / vi) / (l_dc * op.frequency_Hz)
        np.testing.assert_allclose(metrics["ripple_A"][i, k][ccm], expected[ccm], rtol=1e-9)
    worst_peak = metrics["peak_current_A"][i].max(axis=1)
    at_peak = saturation.soft_saturation_operating_point(cands.turns[i], worst_peak, *args)
    np.testing.assert_allclose(metrics["inductance_at_peak_H"][i],
                               at_peak.inductance_H + window, rtol=1e-9)
    # Soft saturation: every gapped ferrite design keeps less than L0 at its peak current.
    assert np.all(metrics["inductance_at_peak_H"][i] < metrics["inductance_H"][i])


def test_gap_loss_in_the_winding_is_part_of_the_total(tiny_space):
    """Parts add up: core + winding DC + AC + gap loss = each point's loss; the gap loss is
    zero without a discrete gap (powder, rings) and for foil, and grows when the winding
    is pressed against the gap (thinner bobbin wall)."""
    cands = _random_candidates(tiny_space, 3000, seed=6)
    metrics = model.evaluate(tiny_space, cands)
    parts = (metrics["core_loss_W"] + metrics["winding_dc_loss_W"]
             + metrics["winding_ac_loss_W"] + metrics["winding_gap_loss_W"])
    np.testing.assert_allclose(parts, metrics["point_loss_W"], rtol=1e-12)
    gap = metrics["winding_gap_loss_W"]
    m, w, c = tiny_space.materials, tiny_space.wires, tiny_space.cores
    no_gap = ((m.kind[cands.material] == 1) | (c.family[cands.core] == 2)
              | (w.kind[cands.wire] == 2))
    assert np.all(gap[no_gap] == 0.0)
    gapped = np.flatnonzero(~no_gap & (metrics["gap_m"] > 0))
    assert gapped.size and np.all(gap[gapped] > 0)
    closer = dataclasses.replace(
        tiny_space, cores=dataclasses.replace(c, bobbin_wall_m=c.bobbin_wall_m * 0.25))
    pressed = model.evaluate(closer, cands.take(gapped))["winding_gap_loss_W"]
    assert np.all(pressed.sum(axis=1) > gap[gapped].sum(axis=1))
