"""The hand procedure (area product) beside the search.

References: the energy-storage sizing Ap = L Ipk Irms / (Bmax J Ku) and N = L Ipk / (Bmax A)
(C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed., 2011, ch.
"Inductor design fundamentals"; from memory), the RMS of a triangular ripple on a DC
current sqrt(Idc^2 + Ipp^2 / 12) (elementary integration), and Kg = Ae^2 Wa / MLT,
Kg >= rho L^2 I^2 / (Bmax^2 R Ku) (R. W. Erickson, D. Maksimović, *Fundamentals of Power
Electronics*, 3rd ed., 2020, ch. "Inductor design"; from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from optimag import model
from optimag.search.run import explore


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    from tests.search.conftest import write_tiny_study

    return explore(write_tiny_study(tmp_path_factory.mktemp("hand")), top=6)


def test_converter_rms_matches_the_triangle_formula(result):
    op = result.space.operating
    peak, rms = model.converter_peak_and_rms_A(result.space)
    for k in range(len(op.names)):
        if op.dcm[k]:
            continue
        triangle = math.sqrt(op.dc_A[k] ** 2 + op.ripple_A[k] ** 2 / 12)
        # The harmonic series is truncated: its tail is below 1e-3 of the ripple's RMS.
        assert rms[k] == pytest.approx(triangle, rel=2e-3)
        assert peak[k] == pytest.approx(op.dc_A[k] + op.ripple_A[k] / 2, rel=1e-12)


def test_hand_design_follows_the_procedure(result):
    space = result.space
    c, req = space.cores, space.requirements
    hand = result.record["hand_sizing"]
    assert hand["designs"], "the tiny study has ferrite materials"
    peak, rms = model.converter_peak_and_rms_A(space)
    j = hand["current_density_A_per_mm2"] * 1e6
    ku = hand["window_utilisation"]
    for entry in hand["designs"]:
        rec = entry["record"]
        mat = list(space.materials.ids).index(rec["material"])
        bsat = space.materials.bsat_100C_T[mat]  # tiny study's limit is 100 degC
        b_max = req.flux_margin * bsat
        required = req.inductance_H * peak.max() * rms.max() / (b_max * j * ku)
        assert rec["area_product_required_cm4"] == pytest.approx(required * 1e8, rel=1e-9)
        # The first core is the smallest Ap meeting the requirement.
        first = list(c.ids).index(entry["first_core"])
        first_ap = c.ae_m2[first] * entry["first_stack"] * c.window_area_m2[first]
        assert first_ap >= required
        for core in range(len(c.ids)):
            if c.family[core] == model.FAMILY_CODES["toroid"]:
                continue  # a ring is not gapped by hand
            for stack in space.stacks:
                ap = c.ae_m2[core] * stack * c.window_area_m2[core]
                if stack <= c.max_stack[core] and ap >= required:
                    assert ap >= first_ap
        # Turns: N = ceil(L Ipk / (Bmax Amin)).
        turns = math.ceil(req.inductance_H * peak.max() / (b_max * rec["inputs"]["Amin_mm2"]
                                                           * 1e-6))
        assert rec["turns"] == turns
        # Copper section at least Irms / J, or the thickest round winding the study offers.
        w = space.wires
        thickest = max(w.copper_area_m2[k] * p for k in range(len(w.ids)) if w.kind[k] == 0
                       for p in space.parallels)
        assert rec["wire_kind"] == "round"
        assert rec["inputs"]["copper_area_mm2"] * 1e-6 >= min(rms.max() / j, thickest) * (
            1 - 1e-12)
        assert rec["area_product_cm4"] >= rec["area_product_required_cm4"]
        if entry["meets_every_limit"]:
            assert rec["feasible"]
        # A feasible hand design is on the exact front or beaten by a member of it.
        if rec["feasible"] and entry["turns_in_search_range"]:
            assert entry["front_designs_beating_it"] > 0 or entry["same_as_front_design"]


def test_every_record_carries_ap_and_kg(result):
    space = result.space
    c = space.cores
    for rec in result.shortlist_records:
        core = list(c.ids).index(rec["core"])
        ae = rec["inputs"]["Ae_mm2"] * 1e-6
        wa = c.window_area_m2[core]
        mlt = rec["inputs"]["mlt_mm"] * 1e-3
        assert rec["area_product_cm4"] == pytest.approx(ae * wa * 1e8, rel=1e-12)
        assert rec["geometry_coefficient_cm5"] == pytest.approx(ae**2 * wa / mlt * 1e10,
                                                                rel=1e-12)
        peak, _ = model.converter_peak_and_rms_A(space)
        rho20 = 1 / 58e6  # IEC 60028 (from memory)
        b_max = rec["margins"]["flux_limit_T"]
        kg_required = (rho20 * (space.requirements.inductance_H * peak.max()) ** 2
                       / (b_max**2 * rec["dc_resistance_20C_mOhm"] * 1e-3
                          * space.requirements.max_fill_factor))
        assert rec["geometry_coefficient_required_cm5"] == pytest.approx(kg_required * 1e10,
                                                                         rel=1e-9)
        assert np.isfinite(rec["area_product_required_cm4"])


def test_a_powder_only_study_says_why_there_is_no_hand_design(tmp_path):
    from tests.search.conftest import write_tiny_study

    path = write_tiny_study(tmp_path)
    path.write_text(path.read_text().replace(
        'materials = ["fer-lowf", "fer-midf", "pwd-60u"]', 'materials = ["pwd-60u"]'))
    hand = explore(path, top=3).record["hand_sizing"]
    assert hand["designs"] == []
    assert "no ferrite material" in hand["note"]
