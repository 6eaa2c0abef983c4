"""Design records (the short-list's build-sheet data) and the run folder's tables.

A record is built from the model's figures for one candidate, in trade units, with the
inputs those figures were computed from, so that a reader can re-derive them by hand.
"""

from __future__ import annotations

import json
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

from optimag import model
from optimag.constants import COPPER_RESISTIVITY_20C
from optimag.errors import ValidityRangeWarning
from optimag.physics import coreloss, magnetic, winding

PARETO_COLUMNS = [
    "design_id",
    "core",
    "family",
    "material",
    "material_kind",
    "stack",
    "turns",
    "gap_mm",
    "wire",
    "wire_kind",
    "parallel",
    "volume_cm3",
    "total_loss_W",
    "cost",
    "mass_g",
    "temperature_C",
    "peak_flux_T",
    "fill_factor",
    "core_loss_W",
    "winding_dc_loss_W",
    "winding_ac_loss_W",
    "inductance_uH",
    "inductance_at_peak_uH",
    "knee",
]

#: Text columns of pareto.csv (read back as strings).
PARETO_TEXT_COLUMNS = (
    "design_id", "core", "family", "material", "material_kind", "wire", "wire_kind",
)

#: Fields every short-list record carries (shortlist.json).
SHORTLIST_RECORD_FIELDS = (
    "design_id", "rank", "knee", "core", "family", "material", "material_kind", "stack",
    "turns", "gap_mm", "wire", "wire_kind", "parallel", "layers", "fill_factor",
    "inductance_uH", "inductance_at_peak_uH", "peak_current_A", "peak_flux_T",
    "flux_swing_T", "core_loss_W", "winding_dc_loss_W", "winding_ac_loss_W", "total_loss_W",
    "temperature_C", "volume_cm3", "mass_g", "cost", "operating_point", "dcm",
    "per_operating_point", "inputs", "margins", "inductance_curve", "winding", "box_mm",
)

_FAMILY_NAMES = {v: k for k, v in model.FAMILY_CODES.items()}
_MATERIAL_NAMES = {v: k for k, v in model.MATERIAL_KIND_CODES.items()}
_WIRE_NAMES = {v: k for k, v in model.WIRE_KIND_CODES.items()}

#: Points of the inductance-versus-current curve, from zero to 1.5 x peak current.
CURVE_POINTS = 41


def _r(value: float, digits: int = 6) -> float:
    """Round for display in exported files (figures keep 6 significant digits)."""
    value = float(value)
    if not np.isfinite(value) or value == 0:
        return value
    return float(f"{value:.{digits}g}")


def inductance_curve(
    space: model.DesignSpace,
    candidates: model.Candidates,
    i: int,
    metrics: dict,
    peak_current_A: float,
    temperature_C: float,
) -> dict:
    """Incremental inductance from zero to 1.5 x peak current for candidate ``i``.

    Powder: the roll-off law. Gapped ferrite: constant until the narrowest section reaches
    Bsat at the part's temperature, then the core is taken as fully saturated (relative
    permeability 1), leaving the gap and the core path in air — a hard-saturation
    approximation (common practice, no source).
    """
    c, m = space.cores, space.materials
    core, mat = candidates.core[i], candidates.material[i]
    stack = float(candidates.stack[i])
    turns = float(candidates.turns[i])
    currents = np.linspace(0.0, 1.5 * peak_current_A, CURVE_POINTS)
    ae, le = c.ae_m2[core] * stack, c.le_m[core]
    if m.kind[mat] == 1:
        values = magnetic.powder_inductance(
            turns,
            currents,
            le,
            ae,
            m.mu_i[mat],
            m.rolloff_a[mat],
            m.rolloff_b[mat],
            m.rolloff_c[mat],
        )
    else:
        l0 = metrics["inductance_H"][i]
        bsat = magnetic.bsat_at_temperature(temperature_C, m.bsat_25C_T[mat], m.bsat_100C_T[mat])
        amin = c.amin_m2[core] * stack
        current_at_bsat = bsat * turns * amin / l0
        gap = metrics["gap_m"][i]
        req = space.requirements
        leg_w, leg_d = model.gapped_leg_sides(space, np.array([core]), np.array([stack]))
        r_gap = magnetic.gap_reluctance(
            gap, ae, c.breadth_m[core], leg_w[0], leg_d[0], model=req.fringing
        )
        l_saturated = magnetic.inductance(turns, magnetic.core_reluctance(le, ae, 1.0) + r_gap)
        values = np.where(currents <= current_at_bsat, l0, l_saturated)
    return {
        "current_A": [_r(v) for v in currents],
        "inductance_uH": [_r(v * 1e6) for v in np.broadcast_to(values, currents.shape)],
    }


def design_records(
    space: model.DesignSpace,
    candidates: model.Candidates,
    metrics: dict[str, np.ndarray],
    design_ids: list[str],
) -> list[dict]:
    """Full records (see the run-folder format in DEVELOPERS.md) for evaluated candidates."""
    c, m, w = space.cores, space.materials, space.wires
    op, req = space.operating, space.requirements
    records = []
    for i, design_id in enumerate(design_ids):
        core, mat, wire = candidates.core[i], candidates.material[i], candidates.wire[i]
        stack = int(candidates.stack[i])
        turns = int(candidates.turns[i])
        parallel = int(candidates.parallel[i])
        temps = metrics["temperature_C"][i]
        runaway = metrics["runaway"][i]
        hot = int(np.argmax(np.where(runaway, np.inf, temps)))
        l0 = metrics["inductance_H"][i]
        peak_current = metrics["peak_current_A"][i]
        per_point = []
        for k, name in enumerate(op.names):
            per_point.append(
                {
                    "name": name,
                    "time_share": _r(op.share[k]),
                    "core_loss_W": _r(metrics["core_loss_W"][i, k]),
                    "winding_dc_loss_W": _r(metrics["winding_dc_loss_W"][i, k]),
                    "winding_ac_loss_W": _r(metrics["winding_ac_loss_W"][i, k]),
                    "total_loss_W": _r(metrics["point_loss_W"][i, k]),
                    "peak_flux_T": _r(metrics["peak_flux_T"][i, k]),
                    "flux_swing_T": _r(metrics["flux_swing_T"][i, k]),
                    "peak_current_A": _r(peak_current[k]),
                    "temperature_C": _r(temps[k]) if not runaway[k] else None,
                    "dcm": bool(op.dcm[k]),
                }
            )
        temperature = float(temps[hot])
        rdc_hot = metrics["dc_resistance_20C_ohm"][i] * float(
            winding.copper_resistivity(temperature) / COPPER_RESISTIVITY_20C
        )
        winding_layout = {
            "kind": _WIRE_NAMES[int(w.kind[wire])],
            "conductor_outer_mm": _r(w.outer_m[wire] * 1e3),
            "foil_thickness_mm": _r(w.foil_thickness_m[wire] * 1e3) if w.kind[wire] == 2 else None,
            "conductors_per_layer": int(metrics["conductors_per_layer"][i]),
            "layers": int(metrics["layers"][i]),
            "turns": turns,
            "parallel": parallel,
            "window_breadth_mm": _r(c.breadth_m[core] * 1e3),
            "window_width_mm": _r(c.window_width_m[core] * 1e3),
            "bobbin_wall_mm": _r(c.bobbin_wall_m[core] * 1e3),
            "build_mm": _r(metrics["build_m"][i] * 1e3),
        }
        bsat_hot = magnetic.bsat_at_temperature(
            req.max_temperature_C, m.bsat_25C_T[mat], m.bsat_100C_T[mat]
        )
        record = {
            "design_id": design_id,
            "core": str(c.ids[core]),
            "family": _FAMILY_NAMES[int(c.family[core])],
            "material": str(m.ids[mat]),
            "material_kind": _MATERIAL_NAMES[int(m.kind[mat])],
            "stack": stack,
            "turns": turns,
            "gap_mm": _r(metrics["gap_m"][i] * 1e3),
            "wire": str(w.ids[wire]),
            "wire_kind": _WIRE_NAMES[int(w.kind[wire])],
            "parallel": parallel,
            "layers": int(metrics["layers"][i]),
            "fill_factor": _r(metrics["fill_factor"][i]),
            "inductance_uH": _r(l0 * 1e6),
            "inductance_at_peak_uH": _r(metrics["inductance_at_peak_H"][i] * 1e6),
            "peak_current_A": _r(peak_current[hot]),
            "peak_flux_T": _r(metrics["peak_flux_T"][i, hot]),
            "flux_swing_T": _r(metrics["flux_swing_T"][i, hot]),
            "core_loss_W": _r(metrics["core_loss_W"][i, hot]),
            "winding_dc_loss_W": _r(metrics["winding_dc_loss_W"][i, hot]),
            "winding_ac_loss_W": _r(metrics["winding_ac_loss_W"][i, hot]),
            "total_loss_W": _r(metrics["total_loss_W"][i]),
            "hottest_point_loss_W": _r(metrics["point_loss_W"][i, hot]),
            "temperature_C": _r(temperature),
            "volume_cm3": _r(metrics["volume_cm3"][i]),
            "mass_g": _r(metrics["mass_g"][i]),
            "cost": _r(metrics["cost"][i]),
            "operating_point": op.names[hot],
            "dcm": bool(op.dcm[hot]),
            "feasible": bool(metrics["feasible"][i]),
            "per_operating_point": per_point,
            "inputs": {
                "Ae_mm2": _r(c.ae_m2[core] * stack * 1e6),
                "le_mm": _r(c.le_m[core] * 1e3),
                "Ve_mm3": _r(c.ve_m3[core] * stack * 1e9),
                "mu_r": _r(m.mu_i[mat]),
                "window_breadth_mm": _r(c.breadth_m[core] * 1e3),
                "mlt_mm": _r(metrics["mlt_m"][i] * 1e3),
                "copper_area_mm2": _r(metrics["copper_area_m2"][i] * 1e6),
                "dc_resistance_mOhm": _r(rdc_hot * 1e3),
                "frequency_kHz": _r(op.frequency_Hz / 1e3),
                "dc_current_A": _r(op.dc_A[hot]),
                "ripple_A": _r(metrics["ripple_A"][i, hot]),
                "duty": _r(op.rise[hot]),
                "steinmetz_k": _r(m.k[mat]),
                "steinmetz_alpha": _r(m.alpha[mat]),
                "steinmetz_beta": _r(m.beta[mat]),
                "core_loss_temperature_factor": _r(metrics["core_loss_temperature_factor"][i, hot]),
            },
            "margins": {
                "flux_T": _r(metrics["worst_flux_T"][i]),
                "flux_limit_T": _r(metrics["flux_limit_T"][i]),
                "bsat_at_limit_temperature_T": _r(bsat_hot),
                "temperature_C": _r(temperature),
                "temperature_limit_C": _r(req.max_temperature_C),
                "fill_factor": _r(metrics["fill_factor"][i]),
                "fill_limit": _r(req.max_fill_factor),
                "inductance_at_peak_fraction": _r(
                    metrics["inductance_at_peak_H"][i] / req.inductance_H
                ),
                "inductance_at_peak_limit": _r(req.min_fraction_at_peak),
            },
            "inductance_curve": inductance_curve(
                space, candidates, i, metrics, float(peak_current.max()), temperature
            ),
            "winding": winding_layout,
            "box_mm": {
                "length": _r(metrics["box_length_m"][i] * 1e3),
                "width": _r(metrics["box_width_m"][i] * 1e3),
                "height": _r(metrics["box_height_m"][i] * 1e3),
            },
        }
        record["model_notes"] = _model_notes(space, candidates, metrics, i)
        if not record["feasible"]:
            viol = model.violations_matrix({k: v[i : i + 1] for k, v in metrics.items()})[0]
            worst = int(np.argmax(viol))
            record["worst_constraint"] = model.CONSTRAINTS[worst]
            record["worst_violation"] = _r(viol[worst])
        records.append(record)
    return records


def _model_notes(space, candidates, metrics, i) -> list[str]:
    """Where this design's figures rest on a model used outside its stated range."""
    m, c, op = space.materials, space.cores, space.operating
    mat, core = candidates.material[i], candidates.core[i]
    notes = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityRangeWarning)
        inside = coreloss.steinmetz_validity_check(
            op.frequency_Hz, metrics["peak_flux_T"][i], m.f_min_Hz[mat], m.f_max_Hz[mat],
            m.b_max_T[mat],
        )
    if not np.all(inside):
        notes.append(
            f"core loss: the Steinmetz fit of {m.ids[mat]} holds for "
            f"{m.f_min_Hz[mat] / 1e3:g}-{m.f_max_Hz[mat] / 1e3:g} kHz and up to "
            f"{m.b_max_T[mat]:g} T; this design runs at {op.frequency_Hz / 1e3:g} kHz and "
            f"{float(np.max(metrics['peak_flux_T'][i])):.3f} T peak"
        )
    gap = metrics["gap_m"][i]
    if gap > 0 and space.requirements.fringing == "mclyman" and gap > c.breadth_m[core]:
        notes.append("gap fringing: gap longer than the winding breadth, beyond the range "
                     "of McLyman's fringing factor")
    wire = candidates.wire[i]
    depth = winding.skin_depth(op.frequency_Hz, winding.copper_resistivity(100.0))
    if space.wires.kind[wire] == 1 and space.wires.strand_diameter_m[wire] > depth:
        notes.append("litz: strands thicker than the skin depth at the switching frequency; "
                     "the strand-level proximity factor underestimates the AC loss")
    return notes


def records_frame(records: list[dict]) -> pd.DataFrame:
    """Flat table of records (nested parts dropped), columns as in `PARETO_COLUMNS`."""
    flat = [{k: v for k, v in r.items() if not isinstance(v, dict | list)} for r in records]
    frame = pd.DataFrame(flat)
    return frame


def write_tables(run_dir: Path, pareto: pd.DataFrame, shortlist_records: list[dict]) -> None:
    """Write pareto.csv and the short-list as csv, xlsx and json into ``run_dir``."""
    pareto.to_csv(run_dir / "pareto.csv", index=False)
    shortlist = records_frame(shortlist_records)
    shortlist.to_csv(run_dir / "shortlist.csv", index=False)
    with pd.ExcelWriter(run_dir / "shortlist.xlsx", engine="openpyxl") as writer:
        shortlist.to_excel(writer, sheet_name="shortlist", index=False)
        per_point = pd.DataFrame(
            [
                {"design_id": r["design_id"], **p}
                for r in shortlist_records
                for p in r["per_operating_point"]
            ]
        )
        per_point.to_excel(writer, sheet_name="operating_points", index=False)
    (run_dir / "shortlist.json").write_text(
        json.dumps({"designs": shortlist_records}, indent=1, allow_nan=False), encoding="utf-8"
    )
