"""Monte Carlo yield and worst-case corners (optimag.tolerance).

References: the standard normal distribution function (scipy.stats.norm, a general-purpose
reference library) for the closed-form probabilities; the binomial standard error
sqrt(p (1 - p) / n) for the Monte Carlo tolerance (any statistics text); the ideal gap
reluctance l_g / (mu0 A) and core reluctance l_e / (mu0 mu_r A) of the magnetic circuit law
(any magnetics text) for the gap at which the inductance reaches a limit.
"""

from __future__ import annotations

import dataclasses
import itertools
from pathlib import Path

import numpy as np
import pytest
from scipy.stats import norm

from optimag import model, tolerance
from optimag.catalog import load_catalog
from optimag.study import load_study
from optimag.study.tolerance import ToleranceSpec

ROOT = Path(__file__).resolve().parents[1]
MU_0 = 4e-7 * np.pi  # H/m, the defined value before the 2019 SI revision

STUDY = """
[study]
name = "scatter-buck"
title = "One design under production scatter"

[converter]
topology = "buck"
switching_frequency_kHz = 100

[[operating_points]]
name = "nominal"
input_V = 24.0
output_V = 5.0
load_A = 3.0
time_share = 1.0

[inductor]
inductance_uH = 47.0
inductance_tolerance_pct = 10
min_fraction_at_peak = 0.7

[limits]
ambient_C = 40
max_temperature_C = 110
flux_margin = 0.9

[search]
turns_min = 30
turns_max = 30
cores = ["E-shape-20"]
materials = ["{material}"]
wires = ["awg-24"]

[model]
fringing = "ideal"

[catalog]
path = "{catalog}"
"""

#: Every spread off, so a test switches on exactly the one it studies.
NO_SCATTER = {
    "gap_ground_mm": 0.0, "gap_spacer_mm": 0.0, "permeability_pct": 0.0,
    "powder_permeability_pct": 0.0, "al_ungapped_pct": 0.0, "bsat_pct": 0.0,
    "steinmetz_k_pct": 0.0, "wire_diameter_pct": 0.0, "ambient_C": 0.0,
}


def one_design(tmp_path, material: str = "fer-midf"):
    path = tmp_path / "scatter.toml"
    path.write_text(STUDY.format(material=material,
                                 catalog=(ROOT / "catalogs" / "demo").as_posix()))
    study = load_study(path)
    space = model.build_design_space(study, load_catalog(study.catalog.path))
    design = model.Candidates.from_arrays(
        core=0, stack=1, material=0, turns=30, gap_option=0, wire=0, parallel=1
    )
    metrics = model.evaluate(space, design)
    return study, space, design, metrics


def spec_with(**spreads) -> ToleranceSpec:
    return ToleranceSpec(**{**NO_SCATTER, **spreads})


def ideal_gap_for(space, inductance_H: float) -> float:
    """Gap [m] at which N^2 / (R_core + R_gap) equals ``inductance_H`` (ideal gap in the
    gapped leg's own face, the E core's centre leg width x depth)."""
    c, m = space.cores, space.materials
    ae, le, mu = c.ae_m2[0], c.le_m[0], m.mu_i[0]
    face = c.leg_width_m[0] * c.leg_depth_m[0]
    return MU_0 * face * (30**2 / inductance_H - le / (MU_0 * mu * ae))


def test_gap_scatter_matches_closed_form_probability(tmp_path):
    _, space, design, metrics = one_design(tmp_path)
    req = space.requirements
    gap0 = float(metrics["gap_m"][0])
    assert gap0 == pytest.approx(ideal_gap_for(space, req.inductance_H), rel=1e-6)
    # L within +-10 %: the gap between the gaps giving 1.1 L and 0.9 L.
    g_lo = ideal_gap_for(space, req.inductance_H * (1 + req.tolerance))
    g_hi = ideal_gap_for(space, req.inductance_H * (1 - req.tolerance))
    sigma = 0.6 * (g_hi - gap0)
    assert gap0 - 5 * sigma > 0  # the clip at zero gap never acts
    spec = spec_with(gap_ground_mm={"spread": 3 * sigma * 1e3, "distribution": "normal"})
    n = 20_000
    result = tolerance.monte_carlo(space, design, metrics["gap_m"], spec, n_samples=n,
                                   sensitivity=False)
    expected = norm.cdf((g_hi - gap0) / sigma) - norm.cdf((g_lo - gap0) / sigma)
    standard_error = np.sqrt(expected * (1 - expected) / n)
    assert 0.3 < expected < 0.9
    assert result.table["yield_inductance"][0] == pytest.approx(expected, abs=4 * standard_error)


def test_uniform_gap_scatter_matches_closed_form_probability(tmp_path):
    _, space, design, metrics = one_design(tmp_path)
    req = space.requirements
    gap0 = float(metrics["gap_m"][0])
    g_hi = ideal_gap_for(space, req.inductance_H * (1 - req.tolerance))
    g_lo = ideal_gap_for(space, req.inductance_H * (1 + req.tolerance))
    half = 2.0 * (g_hi - gap0)
    spec = spec_with(gap_ground_mm={"spread": half * 1e3, "distribution": "uniform"})
    n = 20_000
    result = tolerance.monte_carlo(space, design, metrics["gap_m"], spec, n_samples=n,
                                   sensitivity=False)
    # Uniform on [g0 - h, g0 + h]: P = length of the accepted interval inside it / 2h.
    inside = min(g_hi, gap0 + half) - max(g_lo, gap0 - half)
    expected = inside / (2 * half)
    standard_error = np.sqrt(expected * (1 - expected) / n)
    assert result.table["yield_inductance"][0] == pytest.approx(expected, abs=4 * standard_error)


def test_design_exactly_at_its_inductance_limit_yields_half(tmp_path):
    _, space, design, metrics = one_design(tmp_path)
    # Move the requirement so the nominal part sits exactly on the lower limit.
    req = space.requirements
    at_limit = dataclasses.replace(
        req, inductance_H=float(metrics["inductance_H"][0]) / (1 - req.tolerance)
    )
    space = dataclasses.replace(space, requirements=at_limit)
    spec = spec_with(gap_ground_mm=0.02)
    n = 20_000
    result = tolerance.monte_carlo(space, design, metrics["gap_m"], spec, n_samples=n,
                                   sensitivity=False)
    # A symmetric scatter of a monotonic L(gap): half the parts fall below (binomial 4 sigma).
    assert result.table["yield_inductance"][0] == pytest.approx(0.5, abs=4 * 0.5 / np.sqrt(n))


def test_powder_at_its_peak_limit_yields_half_in_inductance_at_peak(tmp_path):
    _, space, design, metrics = one_design(tmp_path, material="pwd-60u")
    fraction = float(metrics["inductance_at_peak_H"][0]) / space.requirements.inductance_H
    space = dataclasses.replace(space, requirements=dataclasses.replace(
        space.requirements, min_fraction_at_peak=fraction))
    spec = spec_with(powder_permeability_pct=8.0)
    n = 20_000
    result = tolerance.monte_carlo(space, design, metrics["gap_m"], spec, n_samples=n,
                                   sensitivity=False)
    assert result.table["yield_inductance_at_peak"][0] == pytest.approx(
        0.5, abs=4 * 0.5 / np.sqrt(n)
    )


def test_no_scatter_reproduces_the_nominal_design(tmp_path):
    _, space, design, metrics = one_design(tmp_path)
    result = tolerance.monte_carlo(space, design, metrics["gap_m"], spec_with(),
                                   n_samples=200)
    nominal_ok = bool(metrics["feasible"][0])
    assert result.table["yield_fraction"][0] == (1.0 if nominal_ok else 0.0)
    for figure, (metric, factor) in tolerance.FIGURES.items():
        assert result.samples[figure] == pytest.approx(float(metrics[metric][0]) * factor,
                                                       rel=1e-9)
    assert result.table["yield_driver"][0] == "none"


def test_same_seed_same_figures_other_seed_other_figures(tmp_path):
    _, space, design, metrics = one_design(tmp_path)
    spec = ToleranceSpec(seed=7)
    first = tolerance.monte_carlo(space, design, metrics["gap_m"], spec, n_samples=500)
    again = tolerance.monte_carlo(space, design, metrics["gap_m"], spec, n_samples=500)
    other = tolerance.monte_carlo(space, design, metrics["gap_m"], spec, n_samples=500, seed=8)
    assert first.table.equals(again.table)
    hot = "hotspot_temperature_C"
    assert not np.array_equal(first.samples[hot], other.samples[hot])


def test_a_designs_figures_do_not_depend_on_its_companions(tmp_path):
    _, space, design, metrics = one_design(tmp_path)
    pair = model.Candidates.from_arrays(
        core=0, stack=1, material=0, turns=[30, 30], gap_option=0, wire=0, parallel=[1, 1]
    )
    spec = ToleranceSpec()
    alone = tolerance.monte_carlo(space, design, metrics["gap_m"], spec, n_samples=300)
    twice = tolerance.monte_carlo(space, pair, np.repeat(metrics["gap_m"], 2), spec,
                                  n_samples=300)
    assert twice.table.iloc[0].equals(alone.table.iloc[0])
    assert twice.table.iloc[1].equals(alone.table.iloc[0])


def test_sensitivity_names_the_only_active_spread(tmp_path):
    _, space, design, metrics = one_design(tmp_path)
    req = space.requirements
    g_hi = ideal_gap_for(space, req.inductance_H * (1 - req.tolerance))
    spread_mm = 3 * (g_hi - float(metrics["gap_m"][0])) * 1e3
    result = tolerance.monte_carlo(space, design, metrics["gap_m"],
                                   spec_with(gap_ground_mm=spread_mm), n_samples=1000)
    assert result.table["yield_driver"][0] == "gap"
    assert result.table["yield_loss_gap"][0] > 0.05
    for p in tolerance.PARAMETERS:
        if p != "gap":
            assert result.table[f"yield_loss_{p}"][0] == 0.0


def test_corner_is_no_better_than_any_single_extreme(tmp_path):
    _, space, design, metrics = one_design(tmp_path)
    spec = ToleranceSpec()
    own = tolerance.corner_violations(space, design, metrics["gap_m"], spec)
    nominal = model.violations_matrix(metrics)
    # Each constraint's corner is at least as bad as the nominal part for that constraint.
    assert np.all(own >= nominal - 1e-12)


def test_robust_means_feasible_at_every_extreme_combination(tmp_path):
    """Brute force over all 2^P combinations of extremes: a design that `robust_feasible`
    accepts meets every limit at each of them, and one it rejects fails at least one."""
    _, space, design, metrics = one_design(tmp_path)
    spec = ToleranceSpec(ambient_C=3.0, bsat_pct=3.0)
    spreads = tolerance.design_spreads(space, design, metrics["gap_m"], spec)
    combos = np.array(list(itertools.product((-1.0, 1.0), repeat=len(tolerance.PARAMETERS))))
    unit = {p: combos[:, k] for k, p in enumerate(tolerance.PARAMETERS)}
    dev = tolerance._deviations_from_unit(
        spreads, np.zeros(len(combos), dtype=np.int64), unit, space.requirements.ambient_C
    )
    every = tolerance.evaluate_deviations(space, design, metrics["gap_m"], dev)
    brute = bool(every["feasible"].all())
    assert bool(tolerance.robust_feasible(space, design, metrics["gap_m"], spec)[0]) == brute


ROBUST_EXTRA = """
[tolerance]
ambient_C = 5
"""


@pytest.mark.slow
def test_robust_front_is_feasible_at_every_corner(tmp_path):
    from optimag.search.run import explore
    from tests.search.conftest import write_tiny_study

    nominal_path = write_tiny_study(tmp_path)
    robust_path = tmp_path / "robust.toml"
    robust_path.write_text(
        nominal_path.read_text().replace("[search]\n", "[search]\nrobust = true\n")
        + ROBUST_EXTRA
    )
    nominal = explore(nominal_path)
    robust = explore(robust_path)
    assert robust.record["counts"]["eliminated"]["tolerance_corners"] > 0
    assert len(robust.pareto) > 0
    front, metrics = robust.front_candidates, robust.front_metrics
    assert tolerance.robust_feasible(
        robust.space, front, metrics["gap_m"], robust.study.tolerance
    ).all()
    # Every robust front design is nominally feasible, and no robust design dominates the
    # nominal front (the robust set is a subset of the nominal feasible set).
    assert metrics["feasible"].all()
    counts = robust.record["counts"]
    assert counts["feasible"] + sum(counts["eliminated"].values()) == counts["total"]
    assert counts["total"] == nominal.record["counts"]["total"]
    assert counts["feasible"] < nominal.record["counts"]["feasible"]


@pytest.mark.slow
def test_robust_optuna_front_is_feasible_at_every_corner(tmp_path):
    from optimag.search.run import explore
    from tests.search.conftest import write_tiny_study

    path = write_tiny_study(tmp_path)
    path.write_text(path.read_text().replace("[search]\n", "[search]\nrobust = true\n")
                    + ROBUST_EXTRA)
    result = explore(path, strategy="optuna", trials=256, seed=3,
                     storage=f"sqlite:///{tmp_path / 'trials.db'}")
    assert len(result.pareto) > 0
    front, metrics = result.front_candidates, result.front_metrics
    assert tolerance.robust_feasible(
        result.space, front, metrics["gap_m"], result.study.tolerance
    ).all()


@pytest.mark.slow
def test_every_shortlisted_record_carries_its_yield_and_run_json_the_seed(tmp_path):
    from optimag.search.run import explore
    from tests.search.conftest import write_tiny_study

    path = write_tiny_study(tmp_path)
    path.write_text(path.read_text() + "\n[tolerance]\nsamples = 300\nseed = 11\n")
    result = explore(path, top=4)
    account = result.record["tolerance"]
    assert (account["seed"], account["samples"], account["scope"]) == (11, 300, "shortlist")
    assert account["designs"] == len(result.shortlist_records)
    for record in result.shortlist_records:
        part = record["tolerance"]
        assert record["yield_fraction"] == part["yield_fraction"]
        assert 0.0 <= record["yield_fraction"] <= 1.0
        # All limits together cannot be met more often than the least-met one.
        assert record["yield_fraction"] <= min(part["yield_by_constraint"].values()) + 1e-12
        assert set(part["histograms"]) == set(tolerance.FIGURES)
        for figure, hist in part["histograms"].items():
            assert sum(hist["counts"]) <= 300, figure
        assert record["yield_driver"] in (*tolerance.PARAMETERS, "none")
    shortlisted = {r["design_id"] for r in result.shortlist_records}
    analysed = result.pareto[result.pareto["yield_fraction"].notna()]
    assert set(analysed["design_id"]) == shortlisted


def test_a_spacer_gap_takes_the_spacer_spread(tmp_path):
    """The gap of a design gapped by a spacer scatters by the spacer's spread, a ground
    centre leg by the grinding spread (the spreads are the study's; bookkeeping check)."""
    _, space, _, _ = one_design(tmp_path)
    space = dataclasses.replace(space, gap_kinds=("centre", "spacer"))
    designs = model.Candidates.from_arrays(core=0, stack=1, material=0, turns=30,
                                           gap_option=[0, 1], wire=0, parallel=1)
    gap = model.evaluate(space, designs)["gap_m"]
    assert np.all(gap > 0)
    spec = spec_with(gap_ground_mm=0.02, gap_spacer_mm={"spread": 0.05,
                                                         "distribution": "uniform"})
    spreads = tolerance.design_spreads(space, designs, gap, spec)
    np.testing.assert_allclose(spreads.half_width["gap"], [0.02e-3, 0.05e-3])
    assert spreads.normal["gap"].tolist() == [True, False]
