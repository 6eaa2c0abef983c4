"""Relaxation (i²GSE) and DC-bias loss in the model, with the optional material columns.

Sources: J. Mühlethaler, J. Biela, J. W. Kolar, A. Ecklebe, "Improved core-loss calculation
for magnetic components employed in power electronic systems" and "Core losses under the
DC bias condition based on Steinmetz parameters", IEEE Trans. Power Electron. 27(2), 2012
(relations from memory); DCM intervals from Erickson & Maksimović ch. 5.
"""

import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optimag import model, records
from optimag.catalog import load_catalog
from optimag.errors import InputError
from optimag.physics import coreloss
from optimag.search.exhaustive import magnetic_grid
from optimag.study import load_study
from tests.search.conftest import DEMO_CATALOG, write_tiny_study

RELAX = {"relax_k": 2.0e-3, "relax_alpha": 1.2, "relax_beta": 2.1, "relax_tau_us": 4.0,
         "relax_q": 0.8}
BIAS = {"bias_H1_A_m": 20.0, "bias_factor1": 1.2, "bias_H2_A_m": 60.0, "bias_factor2": 1.8}


def _catalog(tmp_path, extra: dict | None):
    folder = tmp_path / "catalog"
    shutil.copytree(DEMO_CATALOG, folder)
    if extra:
        path = folder / "materials.csv"
        table = pd.read_csv(path, dtype=str, keep_default_na=False)
        for column, value in extra.items():
            table[column] = [f"{value:g}" if i == "fer-midf" else ""
                             for i in table["id"]]
        table.to_csv(path, index=False)
    return folder


def _space(tmp_path, extra):
    folder = _catalog(tmp_path, extra)
    path = write_tiny_study(tmp_path)
    text = path.read_text(encoding="utf-8")
    text = text.replace('topology = "buck"', 'topology = "boost"')
    text = text.replace("input_V = 24.0\noutput_V = 5.0\nload_A = 3.0",
                        "input_V = 12.0\noutput_V = 30.0\nload_A = 1.5")
    text = text.replace("input_V = 12.0\noutput_V = 5.0\nload_A = 4.0",
                        "input_V = 12.0\noutput_V = 30.0\nload_A = 0.05")
    text = text.replace(Path(DEMO_CATALOG).as_posix(), folder.as_posix())
    path.write_text(text, encoding="utf-8")
    study = load_study(path)
    return model.build_design_space(study, load_catalog(study.catalog.path))


def _candidates(space):
    mag = magnetic_grid(space)
    n = len(mag["core"])
    return model.Candidates(**mag, wire=np.zeros(n, dtype=np.int64),
                            parallel=np.ones(n, dtype=np.int64))


def test_relaxation_and_bias_enter_the_core_loss(tmp_path):
    plain = _space(tmp_path / "a", None)
    rich = _space(tmp_path / "b", {**RELAX, **BIAS})
    cands = _candidates(plain)
    base = model.evaluate(plain, cands)
    full = model.evaluate(rich, cands)
    mat = rich.materials.ids[cands.material]
    midf = mat == "fer-midf"
    assert midf.any() and (~midf).any()
    # Other materials: unchanged.
    np.testing.assert_allclose(full["core_loss_reference_W"][~midf],
                               base["core_loss_reference_W"][~midf], rtol=1e-12)
    ve = (rich.cores.ve_m3[cands.core] * cands.stack)[:, None]
    h_dc = cands.turns[:, None] * full["dc_current_A"] / rich.cores.le_m[cands.core][:, None]
    bias = np.interp(h_dc, [0.0, 20.0, 60.0], [1.0, 1.2, 1.8])  # held beyond 60 A/m
    relax = coreloss.relaxation_loss_density(
        rich.operating.frequency_Hz, full["flux_swing_T"], full["rise_fraction"],
        full["fall_fraction"], RELAX["relax_k"], RELAX["relax_alpha"], RELAX["relax_beta"],
        RELAX["relax_tau_us"] * 1e-6, RELAX["relax_q"],
    )
    igse = base["core_loss_reference_W"] / ve
    expected = (igse + relax) * bias * ve
    np.testing.assert_allclose(full["core_loss_reference_W"][midf], expected[midf], rtol=1e-9)
    # Relaxation only where the design has a still interval (its own DCM).
    dcm = full["dcm"][midf]
    assert dcm.any()
    assert np.all(full["relaxation_W"][midf][~dcm] == 0.0)
    assert np.all(full["relaxation_W"][midf][dcm] > 0.0)
    assert np.array_equal(full["outside_bias_table"][midf], np.any(h_dc[midf] > 60.0, axis=1))


def test_records_say_what_the_core_loss_leaves_out(tmp_path):
    space = _space(tmp_path, None)
    cands = _candidates(space)
    metrics = model.evaluate(space, cands)
    dcm_row = int(np.flatnonzero(metrics["dcm"].any(axis=1))[0])
    picked = cands.take(np.array([dcm_row]))
    record = records.design_records(space, picked, model.evaluate(space, picked), ["d1"])[0]
    notes = " ".join(record["model_notes"])
    assert "relaxation during the zero-current interval (i²GSE) is not included" in notes
    assert "A/m DC field, outside what the loss fit" in notes


def test_relaxation_columns_go_together(tmp_path):
    folder = _catalog(tmp_path, {"relax_k": 1e-3, "relax_alpha": 1.2})
    with pytest.raises(InputError, match="relaxation parameters go together"):
        load_catalog(folder)
    folder2 = _catalog(tmp_path / "x", {"bias_H1_A_m": 50.0, "bias_factor1": 1.3,
                                        "bias_H2_A_m": 40.0, "bias_factor2": 1.5})
    with pytest.raises(InputError, match="must be above the previous point"):
        load_catalog(folder2)
