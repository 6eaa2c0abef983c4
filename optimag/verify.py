"""Field check of one design of a run: its core, gap and winding window solved with the
finite-element solvers of `optimag.fem`, compared with the model's figures.

`verify_design` reads the design's record from a run folder, solves

* the gapped core section with the winding current (axisymmetric for a round post, planar
  for an E core) and the same section without gap, so the gap's own reluctance is the
  difference;
* for an E core, the 3-D ideal-iron gap at the leg's real and at an endless depth, whose
  ratio corrects the planar gap reluctance for the fringing along the depth;

and reports model versus field-solution inductance, the fringing factor by both, the field
across the winding at the gap's height (field solution, the model's closed-form gap field,
and the 1-D field the AC-loss model assumes) and the field energy over the winding area
that drives the gap loss. Results go to ``verify-<id>.json`` and a flux plot to
``verify-<id>.html`` in the run folder (both written atomically); the report's build sheet
shows them (`optimag.report`).
"""

from __future__ import annotations

import json
import math
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

from optimag.constants import MU0
from optimag.errors import InputError, Problem
from optimag.files import atomic_write_text
from optimag.physics import gap_field, magnetic

#: Points across the winding at which the field is compared.
FIELD_POINTS = 7
#: Grid of the flux plot (points per axis of the solved part).
PLOT_GRID = 90


def find_record(run_dir: Path, design_id: str) -> dict:
    """The record of ``design_id`` among the run's short-list, near misses and reference
    designs; `InputError` naming the file when it is not there."""
    shortlist_path = run_dir / "shortlist.json"
    run_path = run_dir / "run.json"
    problems = []
    designs: list[dict] = []
    for path, key in ((shortlist_path, "designs"), (run_path, "near_misses"),
                      (run_path, "reference_designs")):
        try:
            content = json.loads(path.read_text(encoding="utf-8"))
        except FileNotFoundError:
            problems.append(Problem(str(path), None, "", "not found: is this a run folder?"))
            continue
        except (OSError, ValueError) as error:
            problems.append(Problem(str(path), None, "", f"cannot read: {error}"))
            continue
        designs += list(content.get(key) or []) if isinstance(content, dict) else []
    for record in designs:
        if isinstance(record, dict) and record.get("design_id") == design_id:
            return record
    if not problems:
        known = ", ".join(sorted({str(r.get("design_id")) for r in designs})[:12])
        problems.append(Problem(str(shortlist_path), None, "design_id",
                                f"no design '{design_id}' in this run (known: {known})"))
    raise InputError(problems)


def _core_row(run_dir: Path, record: dict) -> dict:
    from optimag.catalog import load_catalog

    meta = json.loads((run_dir / "run.json").read_text(encoding="utf-8"))
    folder = Path(meta.get("catalog_folder", ""))
    catalog = load_catalog(folder)
    rows = catalog.cores[catalog.cores["id"].astype(str) == record["core"]]
    if rows.empty:
        raise InputError([Problem(str(folder / "cores.csv"), None, "id",
                                  f"core '{record['core']}' of the design is not in the "
                                  "catalogue any more")])
    return rows.iloc[0].to_dict()


def gapped_core(row: dict):
    """The fem solvers' `GappedCore` of a catalogue row. Outer-leg sizes come from the
    catalogue's outer-leg columns where it has them, else from the overall size (E: the
    two outer legs share what the centre leg and both windows leave of the length; pot: the
    skirt is the ring between the window and the outside diameter)."""
    from optimag.fem import GappedCore, gapped_core_from_row

    if "outer_leg_width_mm" in row and "outer_leg_area_mm2" in row:
        return gapped_core_from_row(row)
    family = str(row["family"])
    leg_w, depth = float(row["leg_width_mm"]), float(row["leg_depth_mm"])
    window_w, window_h = float(row["window_width_mm"]), float(row["window_breadth_mm"])
    length, height = float(row["length_mm"]), float(row["height_mm"])
    if family == "E":
        outer_w = max(0.5 * (length - leg_w - 2.0 * window_w), 0.05 * leg_w)
        outer_area = 2.0 * outer_w * depth
    else:
        r_in = 0.5 * leg_w + window_w
        outer_w = max(0.5 * length - r_in, 0.05 * leg_w)
        outer_area = math.pi * ((r_in + outer_w) ** 2 - r_in**2)
    return GappedCore(family, leg_w, depth, window_w, window_h, outer_w, outer_area,
                      0.5 * (height - window_h), float(row.get("bobbin_wall_mm", 0.0) or 0.0))


def verify_design(
    run_dir: Path | str,
    design_id: str,
    progress: Callable[[str, float], None] | None = None,
    resolution: float = 1.0,
) -> dict:
    """Field check of one design; returns the figures written to ``verify-<id>.json``.

    ``progress(step, share_done)`` is called before each solve.
    """
    from optimag.fem import core_section_for, leg_gap_for, solve_core_section, solve_leg_gap

    run_dir = Path(run_dir)
    started = time.perf_counter()
    tell = progress or (lambda step, done: None)
    record = find_record(run_dir, design_id)
    source = f"{run_dir / 'shortlist.json'}"
    if record.get("material_kind") != "ferrite" or record.get("family") not in ("E", "pot") \
            or not float(record.get("gap_mm") or 0.0) > 0.0:
        raise InputError([Problem(source, None, "design_id",
                                  f"{design_id} has no cut gap ({record.get('family')} core, "
                                  f"{record.get('material_kind')}): nothing to check here")])
    tell("reading the catalogue", 0.02)
    row = _core_row(run_dir, record)
    core = gapped_core(row)
    inputs = record["inputs"]
    mu_r = float(inputs["mu_r"])
    stack = int(record["stack"])
    turns = int(record["turns"])
    gap = float(record["gap_mm"]) * 1e-3
    gap_kind = str(record.get("gap_kind") or "centre")
    peak = float(record["peak_current_A"])
    ampere_turns = turns * peak
    section = core_section_for(core, mu_r, stack)

    tell("solving the gapped section", 0.08)
    gapped = solve_core_section(section, gap, gap_kind, resolution, ampere_turns)
    tell("solving the section without gap", 0.45)
    closed = solve_core_section(section, 0.0, "centre", resolution, 1.0)
    r_total_2d = 1.0 / gapped.inductance_per_turn2_H
    r_core_fem = 1.0 / closed.inductance_per_turn2_H
    r_gap_2d = r_total_2d - r_core_fem
    depth_factor = 1.0
    if core.family == "E":
        leg = leg_gap_for(core, stack)
        tell("solving the 3-D gap (real depth)", 0.7)
        real = solve_leg_gap(leg, gap, gap_kind, False, resolution)
        tell("solving the 3-D gap (endless depth)", 0.85)
        endless = solve_leg_gap(leg, gap, gap_kind, True, resolution)

        def reluctance(p) -> float:
            return 1.0 / p.centre_H + (1.0 / p.outer_H if gap_kind == "spacer" else 0.0)

        depth_factor = reluctance(real) / reluctance(endless)
    r_gap_fem = depth_factor * r_gap_2d
    l_fem = turns**2 / (r_core_fem + r_gap_fem)
    l_model = float(record["inductance_uH"]) * 1e-6
    tell("comparing the fields", 0.93)

    # Fringing factor: the gap's reluctance without fringing over its actual one, on the
    # gapped leg's own face (post disc or rectangle).
    if core.family == "pot":
        face = math.pi / 4.0 * (core.leg_width_mm * 1e-3) ** 2
    else:
        face = core.leg_width_mm * 1e-3 * core.leg_depth_mm * 1e-3 * stack
    ideal = gap / (MU0 * face)
    le, ae = float(inputs["le_mm"]) * 1e-3, float(inputs["Ae_mm2"]) * 1e-6
    r_gap_model = turns**2 / l_model - magnetic.core_reluctance(le, ae, mu_r)
    share = r_gap_fem / (r_core_fem + r_gap_fem)

    field = _field_across_winding(gapped, section, ampere_turns, share)
    plot = _flux_plot_data(gapped, section)
    result = {
        "design_id": design_id,
        "core": record["core"],
        "family": core.family,
        "stack": stack,
        "turns": turns,
        "gap_mm": gap * 1e3,
        "gap_kind": gap_kind,
        "mu_r": mu_r,
        "peak_current_A": peak,
        "inductance_model_uH": l_model * 1e6,
        "inductance_fem_uH": l_fem * 1e6,
        "inductance_error": l_model / l_fem - 1.0,
        "fringing_factor_model": ideal / r_gap_model if r_gap_model > 0 else None,
        "fringing_factor_fem": ideal / r_gap_fem,
        "depth_factor": depth_factor,
        "gap_mmf_share": share,
        **field,
        "plot": plot,
        "section": "axisymmetric" if core.family == "pot" else "planar",
        "resolution": resolution,
        "solve_time_s": time.perf_counter() - started,
    }
    atomic_write_text(run_dir / f"verify-{design_id}.json",
                      json.dumps(result, indent=1, allow_nan=False))
    atomic_write_text(run_dir / f"verify-{design_id}.html", flux_plot_html(result))
    tell("done", 1.0)
    return result


def _field_across_winding(gapped, section, ampere_turns: float, share: float) -> dict:
    """|B| across the winding at the gap's height: field solution, the model's closed-form
    gap field with the winding's own 1-D field, and the 1-D field alone; and ∫|B|² over the
    winding area by the field solution and by the closed form."""
    from scipy.integrate import dblquad

    coil = gapped.coil
    post = section.leg_half_width_m
    height = section.window_height_m
    x = np.linspace(coil.x0, coil.x1, FIELD_POINTS + 2)[1:-1]
    y = np.full_like(x, 1e-4 * height)  # just above the mid-plane (the mesh edge)
    bx, by = gapped.solution.flux_density(x, y)
    fem = np.hypot(bx, by)
    gap_mmf = share * ampere_turns
    x0, x1 = coil.x0 - post, coil.x1 - post

    def closed_form(xl, yl):
        h_x, h_y = gap_field.gap_fringing_field(xl, yl, height, gap_mmf)
        h_y = h_y - (xl - x0) / (x1 - x0) * ampere_turns / height
        return MU0 * np.hypot(h_x, h_y)

    one_d = MU0 * np.abs(gap_mmf - (x - post - x0) / (x1 - x0) * ampere_turns) / height
    energy_fem = gapped.solution.b_squared_integral(coil)
    energy_closed, _ = dblquad(lambda yl, xl: closed_form(xl, yl) ** 2, x0, x1, 0.0, coil.y1,
                               epsabs=0.0, epsrel=1e-6)
    energy_1d, _ = dblquad(
        lambda yl, xl: (MU0 * (gap_mmf - (xl - x0) / (x1 - x0) * ampere_turns) / height) ** 2,
        x0, x1, 0.0, coil.y1, epsabs=0.0, epsrel=1e-8,
    )
    if section.kind == "axisymmetric":
        # Per unit length of the closed forms times the circumference at the coil's centre.
        circumference = 2.0 * math.pi * 0.5 * (coil.x0 + coil.x1)
        energy_closed *= circumference
        energy_1d *= circumference
    return {
        "field_distance_mm": [float(v) for v in (x - post) * 1e3],
        "field_fem_mT": [float(v) for v in fem * 1e3],
        "field_closed_form_mT": [float(v) for v in closed_form(x - post, 0.0 * x) * 1e3],
        "field_one_d_mT": [float(v) for v in one_d * 1e3],
        "winding_b2_fem": float(energy_fem),
        "winding_b2_closed_form": float(energy_closed),
        "winding_b2_one_d": float(energy_1d),
        "winding_b2_closed_form_over_fem": float(energy_closed / energy_fem),
        "winding_b2_fem_over_one_d": float(energy_fem / energy_1d),
    }


def _flux_plot_data(gapped, section) -> dict:
    """Potential (flux lines) and |B| on a grid over the solved part, mm."""
    x_end = section.outer_edge_m
    y_end = 0.5 * section.window_height_m + section.yoke_thickness_m + 0.5 * gapped.outer_gap_m
    x = np.linspace(1e-3 * x_end, x_end * 1.15, PLOT_GRID)
    y = np.linspace(1e-3 * y_end, y_end * 1.15, PLOT_GRID)
    xx, yy = np.meshgrid(x, y)
    potential = gapped.solution.potential_at(xx.ravel(), yy.ravel()).reshape(xx.shape)
    bx, by = gapped.solution.flux_density(xx.ravel(), yy.ravel())
    magnitude = np.hypot(bx, by).reshape(xx.shape)
    iron = [r for r in gapped.solution.regions if r.name == "core"]
    return {
        "x_mm": [float(v) for v in x * 1e3],
        "y_mm": [float(v) for v in y * 1e3],
        "potential": [[float(v) for v in row] for row in potential],
        "b_T": [[float(v) for v in row] for row in magnitude],
        "iron_mm": [[r.rect.x0 * 1e3, r.rect.x1 * 1e3, r.rect.y0 * 1e3, r.rect.y1 * 1e3]
                    for r in iron],
        "coil_mm": [gapped.coil.x0 * 1e3, gapped.coil.x1 * 1e3, gapped.coil.y0 * 1e3,
                    gapped.coil.y1 * 1e3],
    }


def flux_plot_html(result: dict) -> str:
    """A self-contained HTML page with the flux plot and the check's figures."""
    from html import escape

    from plotly.io import to_html

    from optimag.report.data import field_check_lines
    from optimag.report.figures import field_check_figure

    body = to_html(field_check_figure(result), include_plotlyjs=True, full_html=False,
                   validate=False)
    rows = "".join(f"<tr><td>{escape(label)}</td><td>{escape(value)}</td></tr>"
                   for label, value in field_check_lines(result))
    return ("<!doctype html><html><head><meta charset='utf-8'><title>Field check "
            f"{result['design_id']}</title></head><body style='font-family:sans-serif'>"
            f"<h2>Field check of {escape(result['design_id'])} ({escape(result['core'])})</h2>"
            f"<table>{rows}</table>{body}</body></html>")
