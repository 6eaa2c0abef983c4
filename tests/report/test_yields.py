"""Report data steps for production scatter (optimag.report.yields)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from optimag.report import yields
from optimag.report.data import RunData


def _record(limit_l=20.0, limit_t=100.0):
    return {"tolerance": {
        "samples": 100, "seed": 3, "yield_fraction": 0.8,
        "yield_by_constraint": {"saturation": 0.8, "temperature": 0.95, "inductance": 1.0},
        "yield_loss_by_spread": {"gap": 0.01, "bsat": 0.15, "ambient": 0.04},
        "histograms": {
            "inductance_at_peak_uH": {"edges": [18, 19, 20, 21, 22], "counts": [1, 2, 3, 4],
                                      "limit": limit_l},
            "hotspot_temperature_C": {"edges": [90, 95, 100, 105], "counts": [5, 3, 2],
                              "limit": limit_t},
        },
    }}


def test_histogram_marks_the_bins_beyond_each_limit():
    low = yields.histogram_frame(_record(), "inductance_at_peak_uH")
    assert list(low["beyond"]) == [True, True, False, False]  # inductance must reach it
    assert np.isclose(low["share"].sum(), 1.0)
    hot = yields.histogram_frame(_record(), "hotspot_temperature_C")
    assert list(hot["beyond"]) == [False, False, True]  # temperature must stay below it


def test_histogram_of_a_design_not_analysed_is_empty():
    assert yields.histogram_frame({}, "hotspot_temperature_C").empty


def test_spreads_ranked_by_the_yield_they_lose():
    ranking = yields.spread_ranking(_record())
    assert list(ranking["spread"]) == ["bsat", "ambient", "gap"]
    assert ranking["words"][0] == yields.SPREAD_WORDS["bsat"]


def test_limits_listed_from_the_least_met():
    assert list(yields.constraint_yields(_record())["constraint"]) == [
        "saturation", "temperature", "inductance"]


def test_robust_comparison_only_for_robust_runs():
    import pandas as pd

    front = pd.DataFrame({"volume_cm3": [1.0, 2.0], "weighted_loss_W": [2.0, 1.0],
                          "cost": [1.0, 1.0]})
    objectives = ["volume", "loss", "cost"]

    def run(robust):
        return RunData(folder=Path("."), meta={"robust": robust, "objectives": objectives},
                       pareto=pd.DataFrame(), shortlist=[], study_text="")

    plain = run({"enabled": False})
    robust = run({"enabled": True, "objectives": objectives,
                  "nominal_front": [[0.5, 1.5, 1.0], [1.5, 0.6, 1.0], [3.0, 0.5, 1.0]]})
    assert yields.robust_comparison(plain, front).empty
    table = yields.robust_comparison(robust, front)
    assert (table["front"] == "nominal").sum() == 3
    assert (table["front"] == "robust").sum() == 2
    assert list(table[table["front"] == "robust"]["x"]) == [1.0, 2.0]
