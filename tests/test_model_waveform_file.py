"""A current waveform file that reproduces a CCM buck triangle gives the buck's figures.

The buck topology builds each design's own triangle from Erickson & Maksimović ch. 2
(ΔI = (V_i − V_o) D / (L f), D = V_o / V_i, at the design's inductance at the average
current); the file path takes the same current as given samples: its flux through the same
large-signal law, the piecewise-linear iGSE over its vertices (Venkatachalam et al. 2002),
its Fourier harmonics for the winding. Both must agree to rounding.
"""

import numpy as np
import pytest

from optimag import model
from optimag.catalog import load_catalog
from optimag.study import load_study
from tests.search.conftest import write_tiny_study

COMPARED = ("core_loss_W", "winding_dc_loss_W", "winding_ac_loss_W", "winding_gap_loss_W",
            "point_loss_W", "temperature_C", "hotspot_temperature_C", "peak_flux_T",
            "flux_swing_T", "peak_current_A", "ripple_A", "dc_current_A")


def _space(path):
    study = load_study(path)
    return study, model.build_design_space(study, load_catalog(study.catalog.path))


@pytest.mark.parametrize("core,material,turns,wire", [
    ("E-shape-20", "fer-lowf", 22, "awg-22"),
    ("ring-21", "pwd-60u", 28, "litz-60x38"),
])
def test_buck_triangle_from_file_gives_the_buck_figures(tmp_path, core, material, turns,
                                                        wire):
    study, space = _space(write_tiny_study(tmp_path))
    cand = model.Candidates.from_arrays(
        core=int(np.flatnonzero(space.cores.ids == core)[0]), stack=1,
        material=int(np.flatnonzero(space.materials.ids == material)[0]), turns=turns,
        gap_option=0, wire=int(np.flatnonzero(space.wires.ids == wire)[0]), parallel=1)
    buck = model.evaluate(space, cand)
    assert not buck["dcm"][0, 1]
    # The design's own triangle at point 1 (12 V -> 5 V, 4 A), three periods sampled.
    period = 1 / study.frequency_Hz
    duty = buck["rise_fraction"][0, 1]
    dc, ripple = buck["dc_current_A"][0, 1], buck["ripple_A"][0, 1]
    t = np.concatenate([np.array([0.0, duty]) + n for n in range(3)] + [[3.0]]) * period
    i = np.concatenate([np.tile([dc - ripple / 2, dc + ripple / 2], 3), [dc - ripple / 2]])
    (tmp_path / "sim.csv").write_text(
        "time_s,current_A\n" + "\n".join(
            f"{float(a)!r},{float(b)!r}" for a, b in zip(t, i, strict=True))
        + "\n", encoding="utf-8")
    path = tmp_path / "tiny.toml"
    text = path.read_text(encoding="utf-8").replace(
        "input_V = 12.0\noutput_V = 5.0\nload_A = 4.0", 'current_waveform = "sim.csv"')
    path.write_text(text, encoding="utf-8")
    _, file_space = _space(path)
    from_file = model.evaluate(file_space, cand)
    for name in COMPARED:
        np.testing.assert_allclose(from_file[name], buck[name], rtol=1e-6, atol=1e-12,
                                   err_msg=name)
    assert from_file["weighted_loss_W"][0] == pytest.approx(buck["weighted_loss_W"][0],
                                                            rel=1e-6)
