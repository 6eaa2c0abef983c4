"""A fabricated run folder in the exact format `optimag explore` writes.

Until the real search writes runs, the report is built from this fixture: 12 front
designs over two materials and two core families, three operating points and five
short-listed designs (round wire, litz and foil), with hostile strings in the study
title, a core id and a material name to prove the page escapes them.

The numbers are plausible for a 48 V -> 12 V, 10 A buck at 100 kHz but are made up
for the fixture; only their internal consistency matters (losses add up, conductors
fit their window, the front is non-dominated in volume and loss).
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import pytest

from optimag import model, records

#: Would mark the page if it ever ran; the browser test looks for the attribute.
PWN_IMG = "<img src=x onerror=\"document.body.setAttribute('data-pwned','img')\">"
PWN_SVG = "<svg onload=\"document.body.setAttribute('data-pwned','svg')\"></svg>"
STUDY_TITLE = f"Buck 48 V → 12 V, 10 A & friends {PWN_IMG}"
HOSTILE_CORE = "E32/16/9<script>alert(1)</script>"
HOSTILE_MATERIAL = f"FeSiAl-60 {PWN_SVG}"
FERRITE = "MnZn-HF"

CORES: dict[str, dict[str, Any]] = {
    "E25/13/7": {
        "family": "E",
        "Ae_mm2": 52.0,
        "le_mm": 57.5,
        "Ve_mm3": 2990.0,
        "breadth": 15.6,
        "width": 5.2,
        "wall": 0.7,
        "mlt": 49.0,
        "box": (25.4, 13.0, 14.6),
    },
    HOSTILE_CORE: {
        "family": "E",
        "Ae_mm2": 83.0,
        "le_mm": 74.0,
        "Ve_mm3": 6180.0,
        "breadth": 22.0,
        "width": 6.3,
        "wall": 0.8,
        "mlt": 61.0,
        "box": (32.0, 16.4, 20.0),
    },
    "T33/20/11": {
        "family": "toroid",
        "Ae_mm2": 71.5,
        "le_mm": 81.4,
        "Ve_mm3": 5820.0,
        "breadth": 50.0,
        "width": 5.0,
        "wall": 0.0,
        "mlt": 46.0,
        "box": (36.0, 36.0, 14.5),
    },
    "T40/24/15": {
        "family": "toroid",
        "Ae_mm2": 120.0,
        "le_mm": 98.4,
        "Ve_mm3": 11800.0,
        "breadth": 60.0,
        "width": 6.0,
        "wall": 0.0,
        "mlt": 58.0,
        "box": (43.0, 43.0, 18.5),
    },
}

#: name -> (kind, conductor outer [mm], copper area [mm²], foil thickness [mm] or None)
WIRES: dict[str, tuple[str, float, float, float | None]] = {
    "round 1.0 mm": ("round", 1.06, math.pi / 4 * 1.0**2, None),
    "round 1.25 mm": ("round", 1.32, math.pi / 4 * 1.25**2, None),
    "litz 105×0.1 mm": ("litz", 1.45, 105 * math.pi / 4 * 0.1**2, None),
    "foil 0.15 mm": ("foil", 0.2, 0.15 * 21.0, 0.15),
}

# (core, material, stack, turns, gap_mm, wire, parallel), smallest volume first.
FRONT = [
    ("E25/13/7", FERRITE, 1, 18, 0.62, "litz 105×0.1 mm", 1),
    ("T33/20/11", HOSTILE_MATERIAL, 1, 30, 0.0, "round 1.25 mm", 1),
    (HOSTILE_CORE, FERRITE, 1, 16, 0.48, "foil 0.15 mm", 1),
    ("E25/13/7", HOSTILE_MATERIAL, 1, 26, 0.0, "round 1.0 mm", 1),
    ("E25/13/7", FERRITE, 1, 20, 0.55, "round 1.0 mm", 1),
    (HOSTILE_CORE, FERRITE, 1, 20, 0.70, "round 1.0 mm", 2),
    ("T33/20/11", HOSTILE_MATERIAL, 1, 28, 0.0, "round 1.0 mm", 2),
    (HOSTILE_CORE, HOSTILE_MATERIAL, 1, 24, 0.0, "round 1.0 mm", 1),
    (HOSTILE_CORE, FERRITE, 1, 14, 0.40, "litz 105×0.1 mm", 2),
    ("T40/24/15", HOSTILE_MATERIAL, 1, 26, 0.0, "round 1.25 mm", 1),
    ("T40/24/15", HOSTILE_MATERIAL, 1, 24, 0.0, "round 1.25 mm", 2),
    (HOSTILE_CORE, FERRITE, 2, 12, 0.58, "round 1.0 mm", 2),
]
KNEE_INDEX = 5

OPERATING_POINTS = [
    {"name": "low line", "input_V": 36.0, "output_V": 12.0, "load_A": 10.0, "time_share": 0.2},
    {"name": "nominal", "input_V": 48.0, "output_V": 12.0, "load_A": 10.0, "time_share": 0.6},
    {"name": "high line", "input_V": 60.0, "output_V": 12.0, "load_A": 8.0, "time_share": 0.2},
]
# Per point: (core-loss factor, DC factor, AC factor) relative to the nominal split.
POINT_FACTORS = [(0.8, 1.0, 0.79), (1.0, 1.0, 1.0), (1.25, 0.64, 1.14)]


def _winding(core: dict[str, Any], wire: str, turns: int, parallel: int) -> dict[str, Any]:
    kind, outer, _, foil = WIRES[wire]
    per_layer = 1 if kind == "foil" else math.floor(core["breadth"] / outer)
    layers = math.ceil(turns * parallel / per_layer)
    return {
        "kind": kind,
        "conductor_outer_mm": outer,
        "foil_thickness_mm": foil,
        "conductors_per_layer": per_layer,
        "layers": layers,
        "turns": turns,
        "parallel": parallel,
        "window_breadth_mm": core["breadth"],
        "window_width_mm": core["width"],
        "bobbin_wall_mm": core["wall"],
        "build_mm": round(layers * outer, 4),
    }


def _design(index: int, spec: tuple, rng: np.random.Generator) -> dict[str, Any]:
    core_name, material, stack, turns, gap, wire, parallel = spec
    core = CORES[core_name]
    powder = material != FERRITE
    wire_kind, _, copper_area, _ = WIRES[wire]
    winding = _winding(core, wire, turns, parallel)
    volume = 2.2 + 1.35 * index + 0.2 * rng.random()
    split = np.array([0.38, 0.45, 0.13, 0.04])
    total = 1.05 + 14.0 / (volume + 1.5)
    losses = np.round(total * split, 4)
    fill = turns * parallel * copper_area / (core["breadth"] * core["width"])
    inductance = 33.0 * (1 + 0.04 * (rng.random() - 0.5))
    peak_current = 10.0 + 2.73 / 2
    current = np.linspace(0.0, 1.5 * peak_current, 41)
    if powder:
        curve = inductance / (1 + 0.25 * (current / peak_current) ** 1.8)
    else:
        curve = inductance / (1 + 0.02 * (current / peak_current) ** 10)
    at_peak = float(np.interp(peak_current, current, curve))
    b_sat_hot = 1.0 if powder else 0.40
    peak_flux = (0.55 + 0.1 * rng.random()) if powder else (0.24 + 0.05 * rng.random())
    points = []
    for point, (f_core, f_dc, f_ac) in zip(OPERATING_POINTS, POINT_FACTORS, strict=True):
        core_w, dc_w, ac_w, gap_w = np.round(losses * (f_core, f_dc, f_ac, f_ac), 4)
        point_total = round(float(core_w + dc_w + ac_w + gap_w), 6)
        points.append(
            {
                "name": point["name"],
                "time_share": point["time_share"],
                "core_loss_W": float(core_w),
                "winding_dc_loss_W": float(dc_w),
                "winding_ac_loss_W": float(ac_w),
                "winding_gap_loss_W": float(gap_w),
                "total_loss_W": point_total,
                "peak_flux_T": round(peak_flux * (0.97 + 0.03 * f_dc), 4),
                "flux_swing_T": round(0.1 * f_core, 4),
                "peak_current_A": round(point["load_A"] + 1.2 * f_ac, 3),
                "temperature_C": round(40 + 9.0 * point_total / math.sqrt(volume), 2),
                "hotspot_temperature_C": round(42 + 9.5 * point_total / math.sqrt(volume), 2),
                "dcm": False,
            }
        )
    hottest = max(points, key=lambda p: p["hotspot_temperature_C"])
    weighted = sum(p["time_share"] * p["total_loss_W"] for p in points)
    box_l, box_w, box_h = core["box"]
    rdc20 = round(1.72e-8 * turns * core["mlt"] / copper_area * 1e6, 3)
    inputs = {
        "Ae_mm2": core["Ae_mm2"] * stack,
        "Amin_mm2": round(0.93 * core["Ae_mm2"] * stack, 3),
        "le_mm": core["le_mm"],
        "Ve_mm3": core["Ve_mm3"] * stack,
        "mu_r": 60.0 if powder else 2200.0,
        "window_breadth_mm": core["breadth"],
        "mlt_mm": core["mlt"],
        "copper_area_mm2": round(copper_area * parallel, 4),
        "dc_resistance_mOhm": round(rdc20 * 1.2, 3),
        "frequency_kHz": 100.0,
        "dc_current_A": 10.0,
        "ripple_A": 2.73,
        "duty": 0.25,
        "steinmetz_k": 2.0 if powder else 1.5,
        "steinmetz_alpha": 1.3 if powder else 1.4,
        "steinmetz_beta": 2.2 if powder else 2.5,
        "core_loss_temperature_factor": 1.0,
    }
    for point, spec in zip(points, OPERATING_POINTS, strict=True):
        point["inputs"] = dict(
            inputs, input_V=spec["input_V"], output_V=spec["output_V"], load_A=spec["load_A"]
        )
    gap_text = records.gap_method(core["family"], "powder" if powder else "ferrite", gap)
    wire_length = round(parallel * (turns * core["mlt"] / 1e3 + 0.1), 4)
    record = {
        "design_id": f"D{index + 1:04d}",
        "core": core_name,
        "family": core["family"],
        "material": material,
        "material_kind": "powder" if powder else "ferrite",
        "stack": stack,
        "turns": turns,
        "gap_mm": gap,
        "wire": wire,
        "wire_kind": wire_kind,
        "parallel": parallel,
        "layers": winding["layers"],
        "fill_factor": round(fill, 4),
        "inductance_uH": round(inductance, 3),
        "inductance_at_peak_uH": round(at_peak, 3),
        "peak_current_A": round(peak_current, 3),
        "peak_flux_T": max(p["peak_flux_T"] for p in points),
        "flux_limit_T": round(0.8 * b_sat_hot, 4),
        "flux_swing_T": hottest["flux_swing_T"],
        "core_loss_W": hottest["core_loss_W"],
        "winding_dc_loss_W": hottest["winding_dc_loss_W"],
        "winding_ac_loss_W": hottest["winding_ac_loss_W"],
        "winding_gap_loss_W": hottest["winding_gap_loss_W"],
        "total_loss_W": hottest["total_loss_W"],
        "weighted_loss_W": weighted,
        "temperature_C": hottest["temperature_C"],
        "hotspot_temperature_C": hottest["hotspot_temperature_C"],
        "temperature_band_C": [hottest["hotspot_temperature_C"] - 3.0,
                               hottest["hotspot_temperature_C"] + 5.0],
        "temperature_band_low_C": hottest["hotspot_temperature_C"] - 3.0,
        "temperature_band_high_C": hottest["hotspot_temperature_C"] + 5.0,
        "temperature_band_models": "faces, faces_laminar, mclyman",
        "thermal_model": "faces",
        "cooling_mode": "free_air",
        "thermal_in_range": True,
        "gap_method": gap_text,
        "gap_centre_leg_mm": gap,
        "gap_outer_leg_mm": 0.0,
        "al_value_nH": round(inductance * 1e3 / turns**2, 3),
        "dc_resistance_20C_mOhm": rdc20,
        "dc_resistance_mOhm": hottest["inputs"]["dc_resistance_mOhm"],
        "winding_length_m": round(turns * core["mlt"] / 1e3, 4),
        "lead_allowance_mm": 50.0,
        "wire_length_m": wire_length,
        "copper_mass_g": round(turns * core["mlt"] * copper_area * parallel * 8.89e-3, 3),
        "box_length_mm": box_l,
        "box_width_mm": box_w,
        "box_height_mm": box_h * stack,
        "area_product_cm4": round(core["Ae_mm2"] * stack * core["breadth"] * core["width"]
                                  * 1e-4, 4),
        "area_product_required_cm4": 0.9,
        "geometry_coefficient_cm5": 0.05,
        "geometry_coefficient_required_cm5": 0.04,
        "feasible": True,
        "volume_cm3": round(volume, 3),
        "mass_g": round(3.9 * volume, 2),
        "cost": round(0.55 + 0.09 * volume + (0.8 if wire_kind == "litz" else 0.0), 3),
        # 8 h a day for 10 years at 0.25 per kWh (the study's [cost], invented).
        "energy_cost": weighted * 29_200 / 1000 * 0.25,
        "operating_point": hottest["name"],
        "dcm": False,
        "per_operating_point": points,
        "inputs": dict(hottest["inputs"]),
        "margins": {
            "flux_limit_T": round(0.8 * b_sat_hot, 4),
            "bsat_at_limit_temperature_T": b_sat_hot,
            "temperature_limit_C": 100.0,
            "fill_limit": 0.45,
            "inductance_at_peak_fraction": round(at_peak / inductance, 4),
            "inductance_at_peak_limit": 0.7,
        },
        "inductance_curve": {
            "current_A": [round(float(c), 5) for c in current],
            "inductance_uH": [round(float(v), 5) for v in curve],
        },
        "winding": winding,
        # One front design rests on a material outside its loss fit (study with
        # outside_fit = "flag"), so the marks for flagged designs are drawn.
        "model_flags": "material_fit" if index == 2 else "",
        "model_notes": [model.MODEL_FLAGS["material_fit"]] if index == 2 else [],
    }
    record["lifetime_cost"] = record["cost"] + record["energy_cost"]
    record["parts"] = records.parts_list(record)
    record.update(_yield_fields(rng, at_peak, hottest["temperature_C"]))
    return record


def _yield_fields(rng: np.random.Generator, at_peak: float, temperature: float) -> dict:
    """A Monte Carlo summary shaped as `records.tolerance_part` writes it (invented)."""
    yield_fraction = round(0.6 + 0.4 * float(rng.random()), 3)
    l_samples = at_peak * (1 + 0.05 * rng.standard_normal(400))
    t_samples = temperature + 3.0 * rng.standard_normal(400)
    histograms = {}
    for name, sample, limit in (("inductance_at_peak_uH", l_samples, 0.7 * 33.0),
                                ("hotspot_temperature_C", t_samples, 100.0)):
        counts, edges = np.histogram(sample, bins=records.YIELD_HISTOGRAM_BINS)
        histograms[name] = {"edges": edges.tolist(), "counts": counts.tolist(),
                            "limit": limit}
    return {
        "yield_fraction": yield_fraction,
        "yield_driver": "bsat",
        "tolerance": {
            "samples": 400, "seed": 0, "yield_fraction": yield_fraction,
            "yield_by_constraint": {"saturation": yield_fraction, "temperature": 1.0},
            "percentiles": {
                "inductance_at_peak_uH": {"p5": round(at_peak * 0.92, 3),
                                          "p50": round(at_peak, 3),
                                          "p95": round(at_peak * 1.08, 3)},
                "hotspot_temperature_C": {"p5": temperature - 5, "p50": temperature,
                                  "p95": temperature + 5},
            },
            "yield_loss_by_spread": {"bsat": round(1 - yield_fraction, 3), "gap": 0.0},
            "histograms": histograms,
        },
    }


#: Flat (non-nested) record fields, as the record schema lists them.
FLAT_FIELDS = list(records.SHORTLIST_COLUMNS)
PARETO_FIELDS = list(records.PARETO_COLUMNS)


def make_run_folder(
    base: Path,
    objectives: tuple[str, ...] = ("volume", "loss", "cost"),
    feasible: bool = True,
    shortlist_size: int = 5,
) -> Path:
    """Write a run folder under ``base`` and return its path."""
    folder = base / "runs" / "buck-48v-12v-20250114-093015"
    folder.mkdir(parents=True)
    rng = np.random.default_rng(7)
    designs = [_design(i, spec, rng) for i, spec in enumerate(FRONT)]
    for i, design in enumerate(designs):
        design["knee"] = i == KNEE_INDEX
    first = {"volume": "volume_cm3", "loss": "weighted_loss_W", "cost": "cost",
             "mass": "mass_g"}
    by_first = sorted(designs, key=lambda d: d[first[objectives[0]]])
    ordered = [designs[KNEE_INDEX]] + [d for d in by_first if not d["knee"]]
    shortlist = [dict(d, rank=r + 1) for r, d in enumerate(ordered[:shortlist_size])]

    total = 184_320
    eliminated = {
        "inductance": 96_120,
        "saturation": 31_877,
        "window_fit": 28_410,
        "fill_factor": 9_960,
        "temperature": 7_303,
        "thermal_runaway": 412,
        "height": 5_128,
        "inductance_at_peak": 2_400,
    }
    feasible_count = total - sum(eliminated.values())
    run: dict[str, Any] = {
        "tool": "optimag",
        "version": "0.1.0",
        "study_name": "buck-48v-12v",
        "study_title": STUDY_TITLE,
        "strategy": "exhaustive",
        "catalog_folder": "catalogs/demo",
        "catalog_hash": "3f9a7c2be41d08a6c5e2f7b9d3a1c0e4",
        "model": {
            "fringing": "McLyman",
            "thermal": "natural convection + radiation",
            "core_loss": "iGSE",
            "ac_resistance": "Dowell/Sullivan",
            "harmonics": 15,
        },
        "objectives": list(objectives),
        "counts": {
            "total": total,
            "feasible": feasible_count if feasible else 0,
            "pareto": len(designs) if feasible else 0,
            "eliminated": eliminated,
        },
        "wall_time_s": 41.7,
        "candidates_per_s": total / 41.7,
        "limits": {
            "inductance_uH": 33.0,
            "inductance_tolerance": 0.1,
            "max_temperature_C": 100.0,
            "ambient_C": 40.0,
            "max_height_mm": 22.0,
            "max_fill_factor": 0.45,
            "flux_margin": 0.8,
            "min_inductance_at_peak": 0.7,
        },
        "operating_points": OPERATING_POINTS,
        "currency": "EUR",
        "energy": {"energy_price_per_kWh": 0.25, "operating_hours": 29_200.0},
        "tolerance": {"seed": 0, "samples": 400, "scope": "shortlist", "designs": 5,
                      "wall_time_s": 0.4, "method": "Monte Carlo", "spreads": {}},
        "robust": {"enabled": False},
    }
    if not feasible:
        eliminated["temperature"] += feasible_count
        run["near_misses"] = [
            dict(d, worst_constraint=c, worst_violation=v)
            for d, c, v in zip(
                designs[:3],
                ["temperature", "saturation", "fill_factor"],
                [0.04, 0.11, 0.02],
                strict=True,
            )
        ]
        designs, shortlist = [], []

    (folder / "run.json").write_text(json.dumps(run, indent=2, ensure_ascii=False), "utf-8")
    (folder / "study.toml").write_text(
        f'name = "buck-48v-12v"\ntitle = {json.dumps(STUDY_TITLE, ensure_ascii=False)}\n'
        '[converter]\ntopology = "buck"\nfrequency_kHz = 100\n',
        "utf-8",
    )
    pd.DataFrame([{k: d[k] for k in PARETO_FIELDS} for d in designs], columns=PARETO_FIELDS).to_csv(
        folder / "pareto.csv", index=False
    )
    flat = pd.DataFrame([{k: d[k] for k in FLAT_FIELDS} for d in shortlist], columns=FLAT_FIELDS)
    flat.to_csv(folder / "shortlist.csv", index=False)
    flat.to_excel(folder / "shortlist.xlsx", index=False, sheet_name="shortlist")
    (folder / "shortlist.json").write_text(
        json.dumps({"designs": shortlist}, indent=1, ensure_ascii=False), "utf-8"
    )
    ranks = {d["design_id"]: d["rank"] for d in shortlist}
    front = [dict(d, rank=ranks[d["design_id"]]) if d["design_id"] in ranks else d
             for d in designs]
    (folder / "front.json").write_text(
        json.dumps({"designs": front}, ensure_ascii=False), "utf-8"
    )
    return folder


@pytest.fixture
def run_dir(tmp_path: Path) -> Path:
    return make_run_folder(tmp_path)


@pytest.fixture(scope="session")
def built_report(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """Report of the fixture run, built once per session for the page and browser tests."""
    from optimag.report.html import build_report

    return build_report(make_run_folder(tmp_path_factory.mktemp("built")))


@pytest.fixture(scope="session")
def hostile() -> dict[str, str]:
    """The hostile strings planted in the fixture run."""
    return {
        "img": PWN_IMG,
        "svg": PWN_SVG,
        "title": STUDY_TITLE,
        "core": HOSTILE_CORE,
        "material": HOSTILE_MATERIAL,
    }


@pytest.fixture(scope="session")
def make_run():
    """The fixture-run writer, for tests that need a variant (other objectives, no front)."""
    return make_run_folder
