"""Model registries: the study's [model] choices are the registered names, a model
registered from Python is used by the design model, and the README's example runs."""

import os
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from optimag import model
from optimag.catalog import load_catalog
from optimag.errors import InputError
from optimag.physics import ac_resistance, coreloss, fringing, thermal
from optimag.registry import Registry, study_registries
from optimag.search.exhaustive import magnetic_grid
from optimag.study import parse_study
from tests.search.conftest import write_tiny_study

ROOT = Path(__file__).resolve().parents[1]
DEMO_STUDY = ROOT / "studies" / "cargo-bike-buck.toml"


def _study(**choices):
    text = DEMO_STUDY.read_text(encoding="utf-8") + "\n[model]\n" + "".join(
        f'{key} = "{value}"\n' for key, value in choices.items())
    return parse_study(text, DEMO_STUDY)


@pytest.fixture
def registered():
    """Register models for one test and remove them afterwards."""
    added = []

    def add(registry, name, entry, **kwargs):
        registry.register(name, entry, **kwargs)
        added.append((registry, name))

    yield add
    for registry, name in added:
        registry.unregister(name)


def test_the_study_offers_exactly_the_registered_names():
    registries = study_registries()
    assert registries["fringing"].study_names() == (
        "leg_edges", "mclyman", "muhlethaler", "ideal")
    assert registries["thermal"].study_names() == (
        "faces", "convection", "mclyman", "ferrite_rth")
    assert "faces_laminar" in thermal.CONDUCTANCE_MODELS  # the band's, not the study's
    assert registries["core_loss"].study_names() == ("igse",)
    assert registries["ac_resistance"].study_names() == ("dowell",)
    for key in registries:
        with pytest.raises(InputError, match=rf"model\.{key}"):
            _study(**{key: "not_registered"})
    with pytest.raises(InputError, match=r"model\.thermal"):
        _study(thermal="faces_laminar")


def test_registration_is_checked():
    family = Registry("test", "model.test", fringing._gap_model_entry)
    with pytest.raises(TypeError, match="GapModel"):
        family.register("bad", lambda gap, geometry: gap)
    family.register("leg", fringing.GAP_RELUCTANCE_MODELS["leg_edges"])
    with pytest.raises(ValueError, match="already registered"):
        family.register("leg", fringing.GAP_RELUCTANCE_MODELS["ideal"])
    with pytest.raises(ValueError, match="word"):
        family.register("two words", fringing.GAP_RELUCTANCE_MODELS["ideal"])
    with pytest.raises(KeyError, match="unknown test model 'nope'"):
        family["nope"]
    with pytest.raises(TypeError, match="ThermalModel"):
        thermal.CONDUCTANCE_MODELS.register("bare", thermal.conductance_faces)


def _space(study):
    return model.build_design_space(study, load_catalog(study.catalog.path))


def test_registered_core_loss_and_ac_models_reach_the_figures(registered):
    """A scaled copy of each built-in model scales exactly the figures it feeds."""

    def double_igse(*args, **kwargs):
        return 2.0 * coreloss.igse_loss_density_triangle(*args, **kwargs)

    def ac_times_1_5(frequency_Hz, resistivity_ohm_m, winding):
        return 1.5 * ac_resistance.layered_ac_factor(frequency_Hz, resistivity_ohm_m, winding)

    registered(coreloss.CORE_LOSS_MODELS, "double_igse", double_igse)
    registered(ac_resistance.AC_RESISTANCE_MODELS, "ac_times_1_5", ac_times_1_5)
    base = _space(_study())
    ours = _space(_study(core_loss="double_igse", ac_resistance="ac_times_1_5"))
    mag = {k: v[:400] for k, v in magnetic_grid(base).items()}
    args = (mag["core"], mag["stack"], mag["material"], mag["turns"], mag["gap_option"])
    first, second = model.magnetic_stage(base, *args), model.magnetic_stage(ours, *args)
    iron = first["core_loss_reference_W"] - first["relaxation_W"]
    assert np.all(iron > 0)
    np.testing.assert_allclose(
        second["core_loss_reference_W"] - second["relaxation_W"], 2.0 * iron, rtol=1e-12)

    n_wire = len(base.wires.ids)
    wire = np.arange(n_wire)
    core, stack, turns = (np.full(n_wire, v) for v in (6, 1, 12))
    parallel = np.ones(n_wire, dtype=np.int64)
    layout = model.winding_layout_stage(base, core, stack, turns, wire, parallel)
    lo = model.winding_loss_stage(base, turns, wire, parallel, layout, core)
    hi = model.winding_loss_stage(ours, turns, wire, parallel, layout, core)
    np.testing.assert_allclose(hi["harmonic_resistance_lo_ohm"],
                               1.5 * lo["harmonic_resistance_lo_ohm"], rtol=1e-12)
    np.testing.assert_allclose(hi["winding_ac_unit_hi_W"], 1.5 * lo["winding_ac_unit_hi_W"],
                               rtol=1e-12)
    np.testing.assert_array_equal(hi["winding_dc_lo_W"], lo["winding_dc_lo_W"])


def test_a_registered_gap_and_thermal_model_are_used(registered, tmp_path):
    """Re-registering built-in entries under new names gives the built-in figures (a
    thermal model of one's own applies in still free air, as the whole-part laws)."""
    registered(fringing.GAP_RELUCTANCE_MODELS, "my_edges",
               fringing.GAP_RELUCTANCE_MODELS["leg_edges"])
    registered(thermal.CONDUCTANCE_MODELS, "my_convection",
               thermal.CONDUCTANCE_MODELS["convection"])
    path = write_tiny_study(tmp_path)
    text = path.read_text(encoding="utf-8")
    base = _space(parse_study(text + '[model]\nthermal = "convection"\n', path))
    ours = _space(parse_study(
        text + '[model]\nfringing = "my_edges"\nthermal = "my_convection"\n', path))
    mag = magnetic_grid(base)
    rows = np.arange(0, len(mag["core"]), max(1, len(mag["core"]) // 60))
    candidates = model.Candidates.from_arrays(
        core=mag["core"][rows], stack=mag["stack"][rows], material=mag["material"][rows],
        turns=mag["turns"][rows], gap_option=mag["gap_option"][rows], wire=3, parallel=1)
    first, second = model.evaluate(base, candidates), model.evaluate(ours, candidates)
    for key in ("gap_m", "weighted_loss_W", "worst_hotspot_temperature_C"):
        np.testing.assert_array_equal(second[key], first[key])


def test_the_readme_example_runs():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text[text.index("## Your own models"):]
    block = re.search(r"```python\n(.*?)```", section, re.S).group(1)
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    done = subprocess.run([sys.executable, "-c", block], cwd=ROOT, env=env,
                          capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    before, after = map(float, re.findall(r"([0-9.]+) W", done.stdout))
    assert after > before
