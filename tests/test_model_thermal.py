"""Model-level thermal checks for every cooling mode: the exact screen, physical orderings,
heat balances recomputed by hand from the physics laws, and the hot spot.

Orderings are physically necessary (more air, a cooler board, thinner compound cannot make
a part hotter); balances use the laws of optimag.physics.thermal, themselves tested against
Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed. (tests/physics).
"""

import dataclasses

import numpy as np
import pytest

from optimag import model
from optimag.catalog import load_catalog
from optimag.physics import heat_paths, thermal
from optimag.search.exhaustive import magnetic_grid
from optimag.study import load_study

MODES = {
    "free_air": {},
    "on_board": {"board_temperature_C": 60.0, "board_copper_area_m2": 600e-6},
    "enclosure": {"enclosure_volume_m3": 800e-6},
    "forced_air": {"air_speed_m_s": 2.0},
    "potted": {
        "potting_conductivity_W_mK": 0.6, "potting_thickness_m": 3e-3, "wall_temperature_C": 50.0,
    },
}


@pytest.fixture(scope="module")
def tiny_space(tmp_path_factory):
    from tests.search.conftest import write_tiny_study as write

    study = load_study(write(tmp_path_factory.mktemp("tiny")))
    return model.build_design_space(study, load_catalog(study.catalog.path))


def _with_cooling(space, max_temperature_C=None, **cooling):
    req = space.requirements
    changes = {"cooling": dataclasses.replace(req.cooling, **cooling)}
    if max_temperature_C is not None:
        changes["max_temperature_C"] = max_temperature_C
    return dataclasses.replace(space, requirements=dataclasses.replace(req, **changes))


def _candidates(space, n, seed=0):
    rng = np.random.default_rng(seed)
    mag = magnetic_grid(space)
    rows = rng.integers(0, len(mag["core"]), n)
    return model.Candidates(
        core=mag["core"][rows], stack=mag["stack"][rows], material=mag["material"][rows],
        turns=mag["turns"][rows], gap_option=mag["gap_option"][rows],
        wire=rng.integers(0, len(space.wires.ids), n), parallel=rng.choice(space.parallels, n),
    )


# Limits tight enough for both outcomes of the screen in each mode.
LIMITS_C = {"free_air": 70.0, "on_board": 70.0, "enclosure": 70.0, "forced_air": 46.0,
            "potted": 53.0}


@pytest.mark.parametrize("mode", list(MODES))
def test_screen_is_exact_and_hot_spot_above_surface(tiny_space, mode):
    space = _with_cooling(tiny_space, LIMITS_C[mode], mode=mode, **MODES[mode])
    cands = _candidates(space, 1500)
    metrics = model.evaluate(space, cands)
    flagged = model.certainly_too_hot(
        space, cands.material, cands.stack, cands.core, metrics, metrics
    )
    assert flagged.any() and (~flagged).any()
    assert np.all(metrics["violation_temperature"][flagged] > 0)
    settled = ~metrics["runaway"]
    hot, surface = metrics["hotspot_temperature_C"], metrics["temperature_C"]
    assert np.all(hot[settled] >= surface[settled])
    assert np.any(hot[settled] > surface[settled] + 0.1)
    assert metrics["outside_thermal_model"].dtype == bool
    # The limit applies to the hot spot.
    worst_hot = np.where(metrics["runaway"].any(axis=1), np.inf, hot.max(axis=1))
    over = worst_hot > space.requirements.max_temperature_C
    np.testing.assert_array_equal(over, metrics["violation_temperature"] > 0)


def _feasible_temperatures(space, cands):
    metrics = model.evaluate(space, cands)
    return metrics["temperature_C"], metrics["runaway"]


def test_orderings_forced_air_board_potting_enclosure(tiny_space):
    cands = _candidates(tiny_space, 800, seed=3)
    base, base_run = _feasible_temperatures(_with_cooling(tiny_space, mode="free_air"), cands)
    ok = ~base_run.any(axis=1)
    # Forced air cools, more air cools more.
    slow, _ = _feasible_temperatures(
        _with_cooling(tiny_space, mode="forced_air", air_speed_m_s=0.5), cands
    )
    fast, _ = _feasible_temperatures(
        _with_cooling(tiny_space, mode="forced_air", air_speed_m_s=3.0), cands
    )
    assert np.all(slow[ok] < base[ok]) and np.all(fast[ok] < slow[ok])
    # A hotter board heats.
    temps = [
        _feasible_temperatures(
            _with_cooling(tiny_space, mode="on_board", board_temperature_C=board,
                          board_copper_area_m2=400e-6), cands,
        )[0][ok]
        for board in (40.0, 60.0, 80.0)
    ]
    assert np.all(temps[0] < temps[1]) and np.all(temps[1] < temps[2])
    # A board at ambient only adds a path: cooler than free air.
    assert np.all(temps[0] < base[ok])
    # Thicker potting heats.
    potted = [
        _feasible_temperatures(
            _with_cooling(tiny_space, mode="potted", potting_conductivity_W_mK=0.6,
                          potting_thickness_m=t, wall_temperature_C=40.0), cands,
        )[0][ok]
        for t in (2e-3, 4e-3, 8e-3)
    ]
    assert np.all(potted[0] < potted[1]) and np.all(potted[1] < potted[2])
    # A smaller box heats, and any closed box is hotter than free air.
    boxes = [
        _feasible_temperatures(
            _with_cooling(tiny_space, mode="enclosure", enclosure_volume_m3=v), cands
        )
        for v in (4000e-6, 500e-6)
    ]
    both = ok & ~boxes[1][1].any(axis=1)
    assert np.all(boxes[0][0][both] > base[both]) and np.all(boxes[1][0][both] > boxes[0][0][both])


def test_heat_balances_by_hand(tiny_space):
    cands = _candidates(tiny_space, 300, seed=5)
    for mode, settings in MODES.items():
        space = _with_cooling(tiny_space, mode=mode, **settings)
        metrics = model.evaluate(space, cands)
        settled = ~metrics["runaway"].any(axis=1)
        i = np.flatnonzero(settled)[:40]
        t = metrics["temperature_C"][i]
        loss = metrics["point_loss_W"][i]
        length, width = metrics["box_length_m"][i, None], metrics["box_width_m"][i, None]
        height = metrics["box_height_m"][i, None]
        ambient = space.requirements.ambient_C
        if mode == "potted":
            # Compound: P = k S (T - T_wall), S of Incropera Table 4.1 (cases 8 and 9).
            s, _ = heat_paths.potting_shape_factor(length, width, height, 3e-3)
            np.testing.assert_allclose(loss, 0.6 * s * (t - 50.0), rtol=1e-6)
            continue
        _, kwargs, _ = model.thermal_setup(space, cands.core[i], cands.stack[i],
                                           {k: v[i] for k, v in metrics.items()})
        air_C = ambient
        if mode == "enclosure":
            box = heat_paths.Enclosure(800e-6)
            air_C = ambient + heat_paths.enclosure_air_rise(loss, ambient, box)
        part = thermal.ThermalContext(
            air_C, 0.0, height, kwargs["emissivity"][:, None], None, length, width,
            settings.get("air_speed_m_s", 0.0),
        )
        shed = thermal.conductance_faces(t - air_C, part) * (t - air_C)
        if mode == "on_board":
            g_board = heat_paths.board_conductance(
                length * width, metrics["copper_area_m2"][i, None], 600e-6
            )
            shed = shed + g_board * (t - 60.0)
        np.testing.assert_allclose(shed, loss, rtol=1e-5, err_msg=mode)


def test_hot_spot_by_hand_for_a_foil_winding(tiny_space):
    cands = _candidates(tiny_space, 2000, seed=7)
    metrics = model.evaluate(tiny_space, cands)
    w, c = tiny_space.wires, tiny_space.cores
    foil = (w.kind[cands.wire] == 2) & ~metrics["runaway"].any(axis=1)
    i = int(np.flatnonzero(foil)[0])
    wire, core = cands.wire[i], cands.core[i]
    # Layers in series (Incropera eq. 3.19), slab with generation (eq. 3.42):
    # dT = P_w b / (2 k A), k = p / (t_cu/k_cu + (p - t_cu)/k_ins), A = MLT x breadth.
    pitch, t_cu = w.outer_m[wire], w.foil_thickness_m[wire]
    k = pitch / (t_cu / 398.0 + (pitch - t_cu) / 0.2)
    area = metrics["mlt_m"][i] * c.breadth_m[core]
    p_w = metrics["winding_dc_loss_W"][i] + metrics["winding_ac_loss_W"][i]
    winding_rise = p_w * metrics["build_m"][i] / (2 * k * area)
    rise = metrics["hotspot_temperature_C"][i] - metrics["temperature_C"][i]
    assert np.all(rise >= winding_rise - 1e-9)
    np.testing.assert_allclose(np.maximum(rise, winding_rise), rise)


def test_out_of_range_is_a_per_candidate_flag(tiny_space):
    """A compound much thicker than the part's smallest side breaks the edge factor's
    condition (Incropera Table 4.1: sides > t/5): every candidate is flagged; a thin one
    flags none of these parts."""
    cands = _candidates(tiny_space, 200, seed=11)
    thick = model.evaluate(_with_cooling(
        tiny_space, mode="potted", potting_conductivity_W_mK=0.6, potting_thickness_m=0.2,
        wall_temperature_C=40.0), cands)
    thin = model.evaluate(_with_cooling(
        tiny_space, mode="potted", potting_conductivity_W_mK=0.6, potting_thickness_m=2e-3,
        wall_temperature_C=40.0), cands)
    assert thick["outside_thermal_model"].all()
    assert not thin["outside_thermal_model"].any()


@pytest.mark.parametrize(
    ("mode", "expected"),
    [("free_air", {"faces", "faces_laminar", "mclyman"}),
     ("on_board", {"faces", "faces_laminar", "board_path_half", "board_path_double"}),
     ("potted", {"faces_edges_corners", "faces_only", "outer_faces"})],
)
def test_band_spans_the_applicable_models_around_the_study_model(tiny_space, mode, expected):
    space = _with_cooling(tiny_space, mode=mode, **MODES[mode])
    cands = _candidates(space, 300, seed=13)
    metrics = model.evaluate(space, cands)
    settled = np.flatnonzero(~metrics["runaway"].any(axis=1))[:60]
    cands = cands.take(settled)
    hot = metrics["worst_hotspot_temperature_C"][settled]
    band = model.temperature_band(space, cands)
    assert np.all(band["low_C"] <= hot + 1e-9) and np.all(hot <= band["high_C"] + 1e-9)
    names = {name for used in band["models"] for name in used}
    assert expected <= names
    assert all(used[0] in {"faces", "faces_edges_corners"} for used in band["models"])
    if mode == "potted":
        # Faces only conducts least, the outer area most: the band's ends.
        only = model.evaluate(model.thermal_alternatives(space)[1][1], cands)
        outer = model.evaluate(model.thermal_alternatives(space)[2][1], cands)
        np.testing.assert_allclose(band["high_C"], only["worst_hotspot_temperature_C"])
        np.testing.assert_allclose(band["low_C"], outer["worst_hotspot_temperature_C"])
