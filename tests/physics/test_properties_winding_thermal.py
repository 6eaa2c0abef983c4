"""Property tests: winding, thermal and geometry functions stay finite on wide inputs.

Inputs span each function's documented range; where a model is deliberately driven beyond
its validity range the ValidityRangeWarning is silenced, since only finiteness is asserted.
"""

import warnings

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from optimag.errors import ValidityRangeWarning
from optimag.physics import ac_resistance as acr
from optimag.physics import geometry as g
from optimag.physics import heat_balance
from optimag.physics import thermal as th
from optimag.physics import winding as w

SIZE = st.integers(min_value=1, max_value=40)
FAST = settings(max_examples=40, deadline=None)


def floats(low: float, high: float):
    return st.floats(min_value=low, max_value=high, allow_nan=False, allow_infinity=False)


def arrays(low: float, high: float, size: int):
    return hnp.arrays(np.float64, size, elements=floats(low, high))


def log_arrays(low_exp: float, high_exp: float, size: int):
    return arrays(low_exp, high_exp, size).map(lambda e: 10.0**e)


def finite(*values) -> bool:
    return all(np.all(np.isfinite(np.asarray(v, dtype=float))) for v in values)


@FAST
@given(data=st.data(), size=SIZE)
def test_winding_functions_finite(data, size):
    temperature = data.draw(arrays(-50.0, 200.0, size))
    frequency = data.draw(log_arrays(0.0, 8.0, size))
    diameter = data.draw(log_arrays(-5.5, -3.0, size))
    breadth = data.draw(log_arrays(-2.5, -1.0, size))
    layers = data.draw(arrays(1.0, 100.0, size))
    delta = data.draw(log_arrays(-8.0, 6.0, size))
    turns = np.ceil(data.draw(arrays(1.0, 500.0, size)))
    parallel = np.ceil(data.draw(arrays(1.0, 20.0, size)))

    rho = w.copper_resistivity(temperature)
    skin = w.skin_depth(frequency, rho)
    assert finite(rho, skin, w.awg_diameter_m(data.draw(arrays(-3.0, 56.0, size))))
    factor = acr.dowell_factor(delta, layers)
    assert finite(factor) and np.all(factor >= 1.0 - 1e-12)

    layout = w.round_layout(turns, parallel, diameter, breadth, 10 * breadth)
    per_layer = np.maximum(layout.conductors_per_layer, 1.0)
    assert finite(layout.conductors_per_layer, layout.layers, layout.build_m)
    # Porosity stays below one by construction of the layout.
    round_factor = acr.round_wire_ac_factor(
        frequency, rho, diameter, per_layer, breadth, layout.layers
    )
    assert finite(round_factor) and np.all(round_factor >= 1.0 - 1e-12)
    foil = w.foil_layout(turns, parallel, diameter, 0.1 * diameter, breadth, breadth, breadth)
    assert finite(
        foil.layers, foil.build_m, acr.foil_ac_factor(frequency, rho, diameter, foil.layers)
    )

    mlt = w.mean_turn_length(4 * breadth, 1e-3, layout.build_m)
    mlt_toroid = w.mean_turn_length_toroid(3 * breadth, breadth, breadth, layout.build_m)
    area = np.pi * diameter**2 / 4 * parallel
    resistance = w.dc_resistance(rho, mlt, turns, area)
    assert finite(mlt, mlt_toroid, resistance, w.fill_factor(area * turns, breadth**2))

    with warnings.catch_warnings():
        # Thick strands at high harmonics leave Sullivan's range; finiteness still holds.
        warnings.simplefilter("ignore", ValidityRangeWarning)
        litz = acr.litz_ac_factor(frequency, rho, parallel, turns, diameter, breadth)
        litz_direct = acr.litz_factor(parallel, turns, diameter, breadth, skin)
    assert finite(litz, litz_direct)

    harmonics = data.draw(arrays(0.0, 100.0, (size, 3)))
    dc, ac = w.winding_loss_split(resistance, temperature, harmonics, np.ones((size, 3)))
    total = w.winding_loss(resistance, temperature, harmonics, np.ones((size, 3)))
    assert finite(dc, ac, total) and np.all(total >= 0.0)


@FAST
@given(data=st.data(), size=SIZE)
def test_thermal_functions_finite(data, size):
    surface = data.draw(log_arrays(-5.0, -1.0, size))
    height = data.draw(log_arrays(-3.0, -0.5, size))
    ve = data.draw(log_arrays(-8.0, -3.0, size))
    # With a1, a2 >= 0 and T >= 0 degC the loss stays positive, as documented.
    ambient = data.draw(arrays(0.0, 85.0, size))
    a0 = data.draw(log_arrays(-4.0, 2.0, size))
    a1 = data.draw(arrays(0.0, 1.0, size))
    a2 = data.draw(arrays(0.0, 0.01, size))
    loss = data.draw(log_arrays(-4.0, 2.0, size))
    rise = data.draw(arrays(0.0, 300.0, size))

    with warnings.catch_warnings():
        # Wide inputs reach beyond every empirical law's range on purpose.
        warnings.simplefilter("ignore", ValidityRangeWarning)
        assert finite(
            th.temperature_rise_mclyman(loss, surface),
            th.thermal_resistance_ferrite_core(ve),
            th.natural_convection_coefficient(rise, height),
            th.radiation_coefficient(ambient + rise, ambient, 0.9),
        )
        for model in th.CONDUCTANCE_MODELS:
            sides = {"length_m": np.sqrt(surface) / 2, "width_m": np.sqrt(surface) / 3}
            result = heat_balance.loss_temperature_fixed_point(
                ambient, (a0, a1, a2), surface, height, model=model, ve_m3=ve, **sides
            )
            assert finite(result.temperature_C, result.loss_W, result.conductance_W_K)
            settled = ~result.runaway
            assert np.all(result.temperature_C[settled] >= ambient[settled] - 1e-9)
            assert finite(heat_balance.temperature_rise(loss, surface, height, model, ve_m3=ve,
                                                        **sides))


@FAST
@given(data=st.data(), size=SIZE)
def test_geometry_functions_finite(data, size):
    length = data.draw(log_arrays(-3.0, -0.7, size))
    width = data.draw(log_arrays(-3.0, -0.7, size))
    height = data.draw(log_arrays(-3.0, -0.7, size))
    # Builds below a third of the toroid hole (ID = length) keep the box model in range.
    build = data.draw(arrays(0.0, 1.0, size)) * np.minimum(width, length) / 3
    stack = np.ceil(data.draw(arrays(1.0, 6.0, size)))

    boxes = [
        g.wound_box_e_type(length, width, height, width / 2, stack, 1e-3, build),
        g.wound_box_pot(length, height, stack),
        g.wound_box_toroid(length + width, length, height, stack, build),
    ]
    for box in boxes:
        assert finite(*box, g.box_volume(*box), g.footprint(*box[:2]), g.surface_area_box(*box))
    mass = g.copper_mass(stack * 10, length, width * 1e-3)
    core = g.core_mass(length * width * height, 4800.0, stack)
    assert finite(mass, core, g.part_cost(1.0, stack, 1.5, mass, 12.0, stack * 10, 0.01))
