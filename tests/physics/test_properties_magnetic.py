"""Property tests of optimag.physics.magnetic: wide random inputs inside the documented
ranges must give finite results, and the gap solver must invert the gap models."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from optimag.physics import fringing, saturation
from optimag.physics import magnetic as mag

finite = {"allow_nan": False, "allow_infinity": False}
areas = st.floats(1e-7, 1e-2, **finite)
window_to_side = st.floats(0.5, 10.0, **finite)
# Gap as a share of the shortest of window and leg side keeps every model in range.
gap_shares = st.floats(0.0, 0.99, **finite)
permeabilities = st.floats(10.0, 1e5, **finite)
turn_counts = st.integers(1, 2000)
aspect = st.floats(0.25, 4.0, **finite)


@settings(max_examples=100, deadline=None)
@given(ae=areas, window_ratio=window_to_side, gap_share=gap_shares, leg_aspect=aspect)
def test_gap_reluctances_finite_and_below_ideal(ae, window_ratio, gap_share, leg_aspect):
    width = np.sqrt(ae * leg_aspect)
    depth = ae / width
    side = np.sqrt(ae)
    window = window_ratio * side
    mcl_gap = gap_share * min(window, side)
    muh_gap = gap_share * min(window, width, depth)
    factor = fringing.fringing_factor_mclyman(mcl_gap, ae, window)
    mcl = fringing.gap_reluctance_mclyman(mcl_gap, ae, window)
    muh = fringing.gap_reluctance_muhlethaler(muh_gap, width, depth, window)
    for value in (factor, mcl, muh):
        assert np.isfinite(value)
    assert factor >= 1.0
    # Fringing widens the flux path, so neither model exceeds the ideal gap.
    assert mcl <= fringing.gap_reluctance_ideal(mcl_gap, ae) * (1 + 1e-12)
    assert muh <= fringing.gap_reluctance_ideal(muh_gap, ae) * (1 + 1e-12)


@settings(max_examples=100, deadline=None)
@given(
    ae=areas,
    window_ratio=window_to_side,
    path_ratio=st.floats(2.0, 30.0, **finite),
    mu_r=permeabilities,
    turns=turn_counts,
    gap_share=st.floats(1e-6, 0.95, **finite),
    model_name=st.sampled_from(sorted(fringing.GAP_RELUCTANCE_MODELS)),
)
def test_gap_for_inductance_inverts_every_model(
    ae, window_ratio, path_ratio, mu_r, turns, gap_share, model_name
):
    side = np.sqrt(ae)
    window = window_ratio * side
    le = path_ratio * side
    gap = gap_share * min(window, side)
    geometry = None
    if model_name == "leg_edges":
        gap *= fringing.LEG_EDGES_MAX_GAP_RATIO
        geometry = fringing.GapGeometry(ae, window, side, side, yoke_thickness_m=0.3 * side)
    forward = {
        "ideal": lambda g: fringing.gap_reluctance_ideal(g, ae),
        "mclyman": lambda g: fringing.gap_reluctance_mclyman(g, ae, window),
        "muhlethaler": lambda g: fringing.gap_reluctance_muhlethaler(g, side, side, window),
        "leg_edges": lambda g: fringing.gap_reluctance_leg_edges(g, geometry),
    }[model_name]
    core = mag.core_reluctance(le, ae, mu_r)
    inductance = mag.inductance(turns, core + forward(gap))
    solved = mag.gap_for_inductance(
        turns, inductance, le, ae, mu_r, window, fringing=model_name, geometry=geometry
    )
    assert np.isfinite(solved)
    reached = core + forward(solved)
    assert abs(reached / (turns**2 / inductance) - 1.0) <= 1e-10


@settings(max_examples=100, deadline=None)
@given(
    turns=turn_counts,
    current=st.floats(-1e3, 1e3, **finite),
    le=st.floats(1e-3, 1.0, **finite),
    ae=areas,
    mu_i=st.floats(5.0, 1000.0, **finite),
    a=st.floats(0.1, 10.0, **finite),
    b=st.floats(0.0, 1.0, **finite),
    c=st.floats(0.2, 5.0, **finite),
)
def test_powder_functions_finite_and_bounded(turns, current, le, ae, mu_i, a, b, c):
    field = turns * current / le
    fraction = saturation.powder_permeability_fraction(field, a, b, c)
    flux = saturation.powder_flux_density(field, mu_i, a, b, c)
    inductance = saturation.powder_inductance(turns, current, le, ae, mu_i, a, b, c)
    for value in (fraction, flux, inductance):
        assert np.isfinite(value)
    assert 0.0 < fraction <= 1.0 / a
    # The incremental permeability only falls, so B never exceeds the linear value.
    linear = mag.MU0 * mu_i * abs(field) / a
    assert abs(flux) <= linear * (1 + 1e-9) + 1e-300
    assert inductance > 0.0 or fraction * turns**2 * ae / le == 0.0


@settings(max_examples=100, deadline=None)
@given(
    turns=turn_counts,
    current=st.floats(-1e3, 1e3, **finite),
    reluctance=st.floats(1e3, 1e10, **finite),
    ae=areas,
    temperature=st.floats(-55.0, 150.0, **finite),
    b25=st.floats(0.2, 2.0, **finite),
    drop=st.floats(-0.5, 1.0, **finite),
)
def test_linear_circuit_and_bsat_finite(turns, current, reluctance, ae, temperature, b25, drop):
    values = (
        mag.inductance(turns, reluctance),
        mag.al_value(reluctance),
        mag.flux_density(turns, current, reluctance, ae),
        mag.core_reluctance(0.1, ae, 2000.0),
        saturation.bsat_at_temperature(temperature, b25, b25 * (1 - drop)),
    )
    for value in values:
        assert np.isfinite(value)
    assert values[-1] >= 0.0


@settings(max_examples=60, deadline=None)
@given(
    ae=areas,
    window_ratio=window_to_side,
    gap_share=st.floats(1e-5, 1.0, **finite),
    round_leg=st.booleans(),
    model_name=st.sampled_from(sorted(fringing.GAP_RELUCTANCE_MODELS)),
)
def test_spacer_gap_solves_back_and_exceeds_the_centre_gap(
    ae, window_ratio, gap_share, round_leg, model_name
):
    # A spacer puts the outer legs' gaps in series with the centre gap: for every model its
    # reluctance is above the centre gap's alone, and the solver inverts it.
    side = np.sqrt(ae)
    window = window_ratio * side
    width = 2.0 * side / np.sqrt(np.pi) if round_leg else side
    common = {
        "round_leg": round_leg, "window_width_m": 0.5 * side, "outer_leg_width_m": 0.4 * side,
        "outer_area_m2": 0.9 * ae, "outer_legs": 1.0 if round_leg else 2.0,
        "yoke_thickness_m": 0.3 * side,
    }
    centre = fringing.GapGeometry(ae, window, width, width, spacer=False, **common)
    spacer = fringing.GapGeometry(ae, window, width, width, spacer=True, **common)
    gap = gap_share * 0.45 * min(window, side)
    one = fringing.gap_reluctance(gap, ae, window, width, width, model_name, geometry=centre)
    both = fringing.gap_reluctance(gap, ae, window, width, width, model_name, geometry=spacer)
    assert np.isfinite(both) and both > one > 0.0
    target = 1.0 / both
    le, mu_r = 5.0 * side, 2000.0
    core = mag.core_reluctance(le, ae, mu_r)
    solved = mag.gap_for_inductance(
        1, 1.0 / (core + both), le, ae, mu_r, window, fringing=model_name, geometry=spacer
    )
    assert solved == pytest.approx(gap, rel=1e-7)
    assert target > 0.0
