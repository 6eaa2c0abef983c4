"""Data step of the run report: pure functions from a run folder to tables.

Everything the page shows is computed here, as pandas DataFrames or small dataclasses,
so it can be tested without a browser. The renderers in `figures` and `html` only
format and draw what these functions return.

Geometry of the winding drawing (all lengths in mm), following the model's layout:
``window_breadth_mm`` (y, along the leg) × ``window_width_mm`` (x, across the build,
x = 0 at the bobbin surface on the centre-leg side) is the space the conductors are
laid in. A bobbin of wall ``bobbin_wall_mm`` lies outside that space: a tube between
it and the centre leg and a flange at each end. Conductors go from the centre leg
outwards, layer after layer, and along the breadth inside each layer.
"""

from __future__ import annotations

import itertools
import json
import math
import re
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from optimag import files, model, records
from optimag.errors import InputError, Problem


def _objective(column: str) -> tuple[str, str, str | None]:
    unit = records.figure(column).unit
    return column, records.figure(column).label, None if unit == "currency" else unit


#: Objective name -> (pareto.csv column, axis title, unit; None means the run's currency),
#: all from the record schema.
OBJECTIVES: dict[str, tuple[str, str, str | None]] = {
    name: _objective(column) for name, column in model.OBJECTIVE_COLUMNS.items()
}

PARETO_TEXT_COLUMNS = records.PARETO_TEXT_COLUMNS
#: Numeric pareto.csv columns that are empty for some designs (yield: analysed ones only).
PARETO_OPTIONAL_COLUMNS = ("yield_fraction", "energy_cost", "lifetime_cost")
PARETO_NUMBER_COLUMNS = tuple(
    c for c in records.PARETO_COLUMNS
    if c not in PARETO_TEXT_COLUMNS and c != "knee" and c not in PARETO_OPTIONAL_COLUMNS
)
PARETO_COLUMNS = tuple(records.PARETO_COLUMNS)
RECORD_FIELDS = records.RECORD_FIELDS
MARGIN_FIELDS = records.MARGIN_FIELDS
WINDING_FIELDS = records.WINDING_FIELDS
#: Record fields a front design off the short-list may lack (rank; the Monte Carlo yield
#: when only the short-list was analysed).
UNRANKED_OPTIONAL = ("rank", "yield_fraction", "yield_driver", "tolerance")
#: Columns of near_front.json (besides one per objective).
NEAR_FRONT_COLUMNS = (
    "core", "material", "wire", "stack", "turns", "parallel", "hotspot_temperature_C",
    "box_height_mm", "footprint_mm2", "volume_cm3", "weighted_loss_W", "design_id", "layer",
)
#: Record fields added after runs were written that the report can do without.
LATER_FIELDS = ("energy_cost", "lifetime_cost")
RUN_FIELDS = (
    "version",
    "study_name",
    "study_title",
    "strategy",
    "catalog_hash",
    "objectives",
    "counts",
    "operating_points",
    "limits",
    "currency",
)

#: Short-list columns shown side by side on parallel axes, with axis titles (the
#: schema's words; the cost title gets the run's currency when drawn).
PARALLEL_AXES: dict[str, str] = {
    column: records.header(column)
    for column in (
        "turns", "gap_mm", "fill_factor", "peak_flux_T", "hotspot_temperature_C",
        "weighted_loss_W", "volume_cm3", "cost",
    )
}

#: What each elimination reason means, in the report's words.
CONSTRAINT_MEANING: dict[str, str] = {
    "inductance": "target inductance not reachable within its tolerance",
    "saturation": "peak flux density above the allowed share of saturation",
    "inductance_at_peak": "too much inductance lost at peak current",
    "material_range": "material used outside the frequency or flux range of its loss fit",
    "window_fit": "winding does not fit the window",
    "fill_factor": "window fill above the allowed fill factor",
    "height": "taller than the allowed height",
    "footprint": "board area larger than allowed",
    "volume": "boxed volume larger than allowed",
    "mass": "heavier than allowed",
    "temperature": "temperature above the limit",
    "thermal_runaway": "no stable operating temperature (loss grows faster than cooling)",
    "loss_budget": "total loss above the budget",
}

#: Tolerance when checking that loss components add up to the stated total.
LOSS_SUM_RELATIVE_TOLERANCE = 1e-3
LOSS_SUM_ABSOLUTE_TOLERANCE_W = 1e-6
#: Slack when checking that drawn conductors stay inside the window [mm], plus a
#: relative part because exported lengths are rounded to 6 significant digits.
GEOMETRY_TOLERANCE_MM = 1e-6
GEOMETRY_RELATIVE_TOLERANCE = 1e-5

_FOLDER_STAMP = re.compile(r"-(\d{8}-\d{6})(?:\.(\d{3}))?(?:-\d+)?$")


@dataclass(frozen=True)
class RunData:
    """Everything read from one run folder."""

    folder: Path
    meta: dict[str, Any]
    pareto: pd.DataFrame
    shortlist: list[dict[str, Any]]
    study_text: str
    started: datetime | None = None
    #: Records of every front design (``front.json``; runs without it: the short-list).
    front_records: list[dict[str, Any]] = field(default_factory=list)
    #: The feasible designs near the front, columnar (``near_front.json``), or None.
    near_front: dict[str, Any] | None = None

    @property
    def objectives(self) -> list[str]:
        return list(self.meta["objectives"])

    @property
    def currency(self) -> str:
        return str(self.meta.get("currency", ""))

    @property
    def near_misses(self) -> list[dict[str, Any]]:
        return list(self.meta.get("near_misses") or [])

    @property
    def field_checks(self) -> dict[str, dict[str, Any]]:
        """Field checks (``verify-<id>.json`` written by ``optimag verify``) by design id."""
        checks = {}
        for path in sorted(self.folder.glob("verify-*.json")):
            try:
                content = json.loads(path.read_text(encoding="utf-8"))
            except (OSError, ValueError):
                continue
            if isinstance(content, dict) and "design_id" in content and "plot" in content:
                checks[str(content["design_id"])] = content
        return checks

    @property
    def reference_designs(self) -> list[dict[str, Any]]:
        """Records of the study's given designs (``[[reference_designs]]``)."""
        return list(self.meta.get("reference_designs") or [])


@dataclass(frozen=True)
class PairView:
    """One two-objective projection of the front."""

    x: str
    y: str
    x_column: str
    y_column: str
    x_title: str
    y_title: str
    #: Designs not dominated within this pair of objectives, ordered by x.
    front_ids: tuple[str, ...] = field(default_factory=tuple)


def objective_title(objective: str, currency: str) -> str:
    """Axis title with unit, e.g. ``Total loss [W]`` or ``Cost [EUR]``."""
    _, title, unit = OBJECTIVES[objective]
    unit = currency if unit is None else unit
    return f"{title} [{unit}]" if unit else title


def _problem(path: Path, fieldname: str, message: str) -> Problem:
    return Problem(str(path), None, fieldname, message)


def _read_json(path: Path, problems: list[Problem]) -> Any:
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        problems.append(_problem(path, "", "file missing; is this a run folder?"))
    except json.JSONDecodeError as err:
        problems.append(Problem(str(path), err.lineno, "", f"not valid JSON: {err.msg}"))
    return None


def _check_record(record: Any, path: Path, position: int, problems: list[Problem],
                  ranked: bool = True) -> None:
    if not isinstance(record, dict):
        problems.append(_problem(path, f"designs[{position}]", "not an object"))
        return
    name = f"designs[{position}]"
    missing = [key for key in RECORD_FIELDS if key not in record
               and key not in LATER_FIELDS and (ranked or key not in UNRANKED_OPTIONAL)]
    if missing:
        problems.append(_problem(path, name, f"missing fields: {', '.join(missing)}"))
        return
    for group, required in (("margins", MARGIN_FIELDS), ("winding", WINDING_FIELDS)):
        gone = [key for key in required if key not in (record[group] or {})]
        if gone:
            problems.append(_problem(path, f"{name}.{group}", f"missing: {', '.join(gone)}"))
    curve = record["inductance_curve"] or {}
    if len(curve.get("current_A", [])) != len(curve.get("inductance_uH", [])) or not curve.get(
        "current_A"
    ):
        problems.append(
            _problem(path, f"{name}.inductance_curve", "current_A and inductance_uH differ")
        )


def folder_time(folder: Path) -> datetime | None:
    """When a run started: from the folder's time stamp (``<study>-YYYYmmdd-HHMMSS`` with
    optional ``.mmm`` milliseconds and ``-N`` counter), else run.json's modification time."""
    match = _FOLDER_STAMP.search(folder.name)
    if match:
        try:
            stamp = datetime.strptime(match.group(1), "%Y%m%d-%H%M%S")
            if match.group(2):
                stamp = stamp.replace(microsecond=int(match.group(2)) * 1000)
            return stamp
        except ValueError:
            pass
    run_file = folder / "run.json"
    if run_file.exists():
        return datetime.fromtimestamp(run_file.stat().st_mtime, tz=UTC).replace(tzinfo=None)
    return None


def load_run(run_dir: Path | str) -> RunData:
    """Read a run folder written by ``optimag explore``.

    Every problem found (missing file, missing column, unknown objective, incomplete
    design record) is collected and raised together as one `InputError`.
    """
    folder = Path(run_dir)
    problems: list[Problem] = []
    if not folder.is_dir():
        raise InputError([_problem(folder, "", "run folder not found")])

    meta = _read_json(folder / "run.json", problems)
    if meta is not None:
        if not isinstance(meta, dict):
            problems.append(_problem(folder / "run.json", "", "top level is not an object"))
            meta = None
        else:
            missing = [key for key in RUN_FIELDS if key not in meta]
            if missing:
                problems.append(
                    _problem(folder / "run.json", "", f"missing keys: {', '.join(missing)}")
                )
            unknown = [o for o in meta.get("objectives", []) if o not in OBJECTIVES]
            if unknown or not meta.get("objectives"):
                problems.append(
                    _problem(
                        folder / "run.json",
                        "objectives",
                        f"need one or more of {', '.join(OBJECTIVES)}; "
                        f"got {meta.get('objectives')}",
                    )
                )

    pareto_path = folder / "pareto.csv"
    pareto = pd.DataFrame(columns=list(PARETO_COLUMNS))
    if pareto_path.exists():
        pareto = pd.read_csv(
            pareto_path, dtype=dict.fromkeys(PARETO_TEXT_COLUMNS, str), keep_default_na=False
        )
        files.restore_frame(pareto, PARETO_TEXT_COLUMNS)
        # Runs written before the energy cost existed lack its columns: NaN there.
        for name in ("energy_cost", "lifetime_cost"):
            if name not in pareto.columns:
                pareto[name] = float("nan")
        gone = [c for c in PARETO_COLUMNS if c not in pareto.columns]
        if gone:
            problems.append(_problem(pareto_path, "", f"missing columns: {', '.join(gone)}"))
    elif not (isinstance(meta, dict) and meta.get("near_misses")):
        problems.append(_problem(pareto_path, "", "file missing"))

    shortlist: list[dict[str, Any]] = []
    shortlist_path = folder / "shortlist.json"
    if shortlist_path.exists() or not pareto.empty:
        loaded = _read_json(shortlist_path, problems)
        if loaded is not None:
            designs = loaded.get("designs") if isinstance(loaded, dict) else None
            if not isinstance(designs, list):
                problems.append(_problem(shortlist_path, "designs", "expected a list"))
            else:
                for position, record in enumerate(designs):
                    _check_record(record, shortlist_path, position, problems)
                shortlist = designs

    front_records: list[dict[str, Any]] = []
    front_path = folder / "front.json"
    if front_path.exists():
        loaded = _read_json(front_path, problems)
        designs = loaded.get("designs") if isinstance(loaded, dict) else None
        if loaded is not None and not isinstance(designs, list):
            problems.append(_problem(front_path, "designs", "expected a list"))
        elif designs is not None:
            for position, record in enumerate(designs):
                _check_record(record, front_path, position, problems, ranked=False)
            front_records = designs

    near_front = None
    near_path = folder / "near_front.json"
    if near_path.exists():
        near_front = _read_json(near_path, problems)
        columns = near_front.get("columns") if isinstance(near_front, dict) else None
        if near_front is not None and not isinstance(columns, dict):
            problems.append(_problem(near_path, "columns", "expected an object of columns"))
        elif columns is not None:
            gone = [c for c in NEAR_FRONT_COLUMNS if c not in columns]
            if gone:
                problems.append(_problem(near_path, "columns", f"missing: {', '.join(gone)}"))
            elif len({len(v) for v in columns.values()}) > 1:
                problems.append(_problem(near_path, "columns", "columns differ in length"))

    if problems:
        raise InputError(problems)

    study_path = folder / "study.toml"
    study_text = study_path.read_text(encoding="utf-8") if study_path.exists() else ""
    return RunData(
        folder=folder,
        meta=meta,
        pareto=pareto,
        shortlist=shortlist,
        study_text=study_text,
        started=folder_time(folder),
        front_records=front_records or list(shortlist),
        near_front=near_front,
    )


def _as_bool(values: pd.Series) -> pd.Series:
    text = values.astype(str).str.strip().str.lower()
    return text.isin(("true", "1", "yes"))


def pareto_table(run: RunData) -> pd.DataFrame:
    """Front designs with clean types, ordered by the first objective.

    Text columns stay strings, the numeric columns become floats (``turns``,
    ``stack`` and ``parallel`` integers) and ``knee`` a bool.
    """
    table = run.pareto.loc[:, list(PARETO_COLUMNS)].copy()
    for name in PARETO_TEXT_COLUMNS:
        table[name] = table[name].astype(str)
    for name in PARETO_NUMBER_COLUMNS:
        table[name] = pd.to_numeric(table[name], errors="raise").astype(float)
    for name in PARETO_OPTIONAL_COLUMNS:
        table[name] = pd.to_numeric(table[name], errors="coerce").astype(float)
    for name in ("turns", "stack", "parallel"):
        table[name] = table[name].round().astype(int)
    table["knee"] = _as_bool(table["knee"]) if len(table) else table["knee"].astype(bool)
    first = OBJECTIVES[run.objectives[0]][0]
    return table.sort_values([first, "design_id"], kind="stable").reset_index(drop=True)


def reference_table(run: RunData) -> pd.DataFrame:
    """The study's reference designs with the front's columns (for marking them on the
    trade-off plots) and ``meets_all`` telling whether each meets every constraint."""
    columns = [c for c in PARETO_COLUMNS if c != "knee"]
    rows = [{c: ref.get(c) for c in columns} | {"meets_all": not ref.get("violated")}
            for ref in run.reference_designs]
    table = pd.DataFrame(rows, columns=[*columns, "meets_all"])
    for name in PARETO_NUMBER_COLUMNS:
        if name in table:
            table[name] = pd.to_numeric(table[name], errors="coerce").astype(float)
    return table


def non_dominated(points: np.ndarray) -> np.ndarray:
    """Mask of the points no other point dominates, all coordinates minimised.

    ``points`` has shape (n, 2). A point dominates another when it is no worse in both
    coordinates and better in one; identical points do not dominate each other.
    Sort-and-sweep, O(n log n).
    """
    values = np.asarray(points, dtype=float)
    if values.ndim != 2 or values.shape[1] != 2:
        raise ValueError(f"expected shape (n, 2), got {values.shape}")
    if not np.all(np.isfinite(values)):
        raise ValueError("objective values must be finite")
    count = len(values)
    mask = np.zeros(count, dtype=bool)
    if count == 0:
        return mask
    order = np.lexsort((values[:, 1], values[:, 0]))
    xs, ys = values[order, 0], values[order, 1]
    running_min = np.minimum.accumulate(ys)
    prev_min = np.concatenate(([np.inf], running_min[:-1]))
    # Index of the first point that set the running minimum, to tell a true
    # dominator (smaller x, same y) from an exact duplicate.
    new_min = ys < prev_min
    setter = np.maximum.accumulate(np.where(new_min, np.arange(count), 0))
    prev_setter = np.concatenate(([0], setter[:-1]))
    dominated = (prev_min < ys) | ((prev_min == ys) & (xs[prev_setter] < xs))
    mask[order] = ~dominated
    return mask


def pair_views(run: RunData, table: pd.DataFrame | None = None) -> list[PairView]:
    """Every pair of the run's objectives, in the run's order, with its 2-D front."""
    front = pareto_table(run) if table is None else table
    views = []
    for x, y in itertools.combinations(run.objectives, 2):
        x_column, y_column = OBJECTIVES[x][0], OBJECTIVES[y][0]
        ids: tuple[str, ...] = ()
        if len(front):
            mask = non_dominated(front[[x_column, y_column]].to_numpy())
            chosen = front.loc[mask].sort_values([x_column, y_column], kind="stable")
            ids = tuple(chosen["design_id"])
        views.append(
            PairView(
                x=x,
                y=y,
                x_column=x_column,
                y_column=y_column,
                x_title=objective_title(x, run.currency),
                y_title=objective_title(y, run.currency),
                front_ids=ids,
            )
        )
    return views


def shortlist_table(run: RunData) -> pd.DataFrame:
    """One row per short-listed design, ordered by rank (the knee comes first)."""
    columns = [
        "rank",
        "design_id",
        "knee",
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
        "layers",
        "fill_factor",
        "inductance_uH",
        "inductance_at_peak_uH",
        "peak_current_A",
        "peak_flux_T",
        "temperature_C",
        "hotspot_temperature_C",
        "core_loss_W",
        "winding_dc_loss_W",
        "winding_ac_loss_W",
        "winding_gap_loss_W",
        "total_loss_W",
        "weighted_loss_W",
        "volume_cm3",
        "mass_g",
        "cost",
        "operating_point",
        "dcm",
    ]
    # Records written before the hot spot existed: their temperature stands in for it;
    # records before the gap-loss model have no gap loss.
    rows = [{c: r.get(c, r.get("temperature_C")) if c == "hotspot_temperature_C" else r.get(c)
             for c in columns} for r in run.shortlist]
    table = pd.DataFrame(rows, columns=columns)
    table["knee"] = table["knee"].astype(bool)
    table["dcm"] = table["dcm"].astype(bool)
    return table.sort_values("rank", kind="stable").reset_index(drop=True)


def _number(value: float, digits: int = 3) -> str:
    return f"{value:.{digits}g}"


#: Figures the build sheet lists, in order (labels, units and precision from the schema).
BUILD_SHEET_FIELDS = (
    "core", "family", "stack", "material", "material_kind", "gap_method",
    "gap_centre_leg_mm", "gap_outer_leg_mm", "al_value_nH", "turns", "wire", "wire_kind",
    "parallel", "layers", "fill_factor", "winding_length_m", "lead_allowance_mm",
    "wire_length_m", "copper_mass_g", "dc_resistance_20C_mOhm", "dc_resistance_mOhm",
    "box_length_mm", "box_width_mm", "box_height_mm", "volume_cm3", "inductance_uH",
    "inductance_at_peak_uH", "peak_current_A", "peak_flux_T", "temperature_C",
    "hotspot_temperature_C", "temperature_band_low_C", "temperature_band_high_C",
    "thermal_model", "cooling_mode", "thermal_in_range", "weighted_loss_W", "mass_g",
    "cost", "area_product_cm4", "area_product_required_cm4",
)


def build_sheet_table(record: dict[str, Any], currency: str) -> pd.DataFrame:
    """The build sheet's item/value table for one design (values as display strings),
    then its parts list as ``order: item`` lines."""
    rows = []
    for name in BUILD_SHEET_FIELDS:
        if name not in record:
            continue
        label = records.header(name, currency)
        if name == "dc_resistance_mOhm":
            label = f"{label} ({_number(float(record['temperature_C']))} °C)"
        rows.append((label, records.display(name, record[name])))
        if name == "layers":
            per_layer = int(record["winding"]["conductors_per_layer"])
            rows.append(("Conductors per layer", f"{per_layer}"))
    for part in record.get("parts") or []:
        quantity = part["quantity"]
        shown = records.display("wire_length_m", quantity) if part["item"] == "wire" else (
            f"{int(quantity)}")
        rows.append((f"Order: {part['item']}", f"{shown} · {part['description']}"))
    return pd.DataFrame(rows, columns=["item", "value"])


def _geometry_slack(*lengths_mm: float) -> float:
    """Slack for fit checks: exported lengths carry 6 significant digits."""
    return GEOMETRY_TOLERANCE_MM + GEOMETRY_RELATIVE_TOLERANCE * max(lengths_mm)


def winding_drawing_shapes(record: dict[str, Any]) -> pd.DataFrame:
    """Shapes of the winding-window drawing, to scale, in millimetres.

    Returns one row per shape with columns ``x0, y0, x1, y1`` (bounding box),
    ``kind`` (``window``, ``bobbin``, ``round``, ``litz`` or ``foil``), ``layer``
    (0 = next to the centre leg; -1 for window and bobbin) and ``turn`` (-1 likewise).
    Round and litz conductors are circles of the conductor's outer diameter; foil is
    a rectangle of the foil thickness spanning the winding breadth.

    Raises
    ------
    ValueError
        When the record's conductors do not fit its own winding space, or its layer
        count disagrees with turns × parallel at the stated conductors per layer.
    """
    winding = record["winding"]
    kind = str(winding["kind"])
    breadth = float(winding["window_breadth_mm"])
    width = float(winding["window_width_mm"])
    wall = float(winding["bobbin_wall_mm"] or 0.0)
    pitch = float(winding["conductor_outer_mm"])
    per_layer = int(winding["conductors_per_layer"])
    layers = int(winding["layers"])
    turns = int(winding["turns"])
    parallel = int(winding["parallel"])
    conductors = turns * parallel
    name = record.get("design_id", "design")
    if min(breadth, width, pitch) <= 0 or per_layer < 1 or conductors < 1 or wall < 0:
        raise ValueError(f"{name}: winding dimensions must be positive")
    needed_layers = math.ceil(conductors / per_layer)
    if needed_layers != layers:
        raise ValueError(
            f"{name}: {conductors} conductors at {per_layer} per layer need "
            f"{needed_layers} layers, the record says {layers}"
        )
    if kind == "foil":
        thickness = float(winding["foil_thickness_mm"] or 0.0)
        if not 0 < thickness <= pitch * (1 + GEOMETRY_RELATIVE_TOLERANCE):
            raise ValueError(f"{name}: foil thickness must be in (0, pitch]")
    elif per_layer * pitch > breadth + _geometry_slack(breadth, pitch * per_layer):
        raise ValueError(
            f"{name}: {per_layer} conductors of {pitch} mm need "
            f"{per_layer * pitch:.3f} mm, the window offers {breadth:.3f} mm"
        )
    if layers * pitch > width + _geometry_slack(width, layers * pitch):
        raise ValueError(
            f"{name}: {layers} layers of {pitch} mm do not fit the {width:.3f} mm window width"
        )

    rows: list[tuple[float, float, float, float, str, int, int]] = [
        (-wall, -wall, width, breadth + wall, "window", -1, -1)
    ]
    if wall > GEOMETRY_TOLERANCE_MM:
        rows += [
            (-wall, -wall, 0.0, breadth + wall, "bobbin", -1, -1),
            (0.0, -wall, width, 0.0, "bobbin", -1, -1),
            (0.0, breadth, width, breadth + wall, "bobbin", -1, -1),
        ]
    index = np.arange(conductors)
    layer = index // per_layer
    slot = index % per_layer
    x0 = layer * pitch
    if kind == "foil":
        x1 = x0 + thickness
        y0 = np.zeros(conductors)
        y1 = np.full(conductors, breadth)
    else:
        x1 = x0 + pitch
        y0 = slot * pitch
        y1 = y0 + pitch
    # Rounded exports may overshoot by a hair; keep the picture inside its frame.
    x1 = np.minimum(x1, width)
    y1 = np.minimum(y1, breadth)
    shape_kind = kind if kind in ("round", "litz", "foil") else "round"
    frame = pd.DataFrame(rows, columns=["x0", "y0", "x1", "y1", "kind", "layer", "turn"])
    drawn = pd.DataFrame(
        {
            "x0": x0.astype(float),
            "y0": y0.astype(float),
            "x1": x1.astype(float),
            "y1": y1.astype(float),
            "kind": shape_kind,
            "layer": layer,
            "turn": index // parallel,
        }
    )
    return pd.concat([frame, drawn], ignore_index=True)


def loss_breakdown(record: dict[str, Any]) -> pd.DataFrame:
    """Loss split into core, DC winding, AC winding and gap loss in the winding for each
    operating point.

    Long format: one row per (operating point, component) with ``operating_point``,
    ``time_share``, ``component``, ``loss_W`` and the point's ``total_loss_W``.

    Raises
    ------
    ValueError
        When a point's components do not add up to its stated total.
    """
    rows = []
    for point in record["per_operating_point"]:
        parts = {
            "Core": float(point["core_loss_W"]),
            "Winding DC": float(point["winding_dc_loss_W"]),
            "Winding AC": float(point["winding_ac_loss_W"]),
            # Records before the gap-loss model have no such part.
            "Winding gap": float(point.get("winding_gap_loss_W", 0.0)),
        }
        total = float(point["total_loss_W"])
        mismatch = abs(sum(parts.values()) - total)
        if mismatch > LOSS_SUM_RELATIVE_TOLERANCE * abs(total) + LOSS_SUM_ABSOLUTE_TOLERANCE_W:
            raise ValueError(
                f"{record['design_id']} at {point['name']}: components add up to "
                f"{sum(parts.values()):.6g} W but the total says {total:.6g} W"
            )
        for component, loss in parts.items():
            rows.append(
                {
                    "operating_point": str(point["name"]),
                    "time_share": float(point["time_share"]),
                    "component": component,
                    "loss_W": loss,
                    "total_loss_W": total,
                }
            )
    return pd.DataFrame(
        rows, columns=["operating_point", "time_share", "component", "loss_W", "total_loss_W"]
    )


def margin_table(record: dict[str, Any]) -> pd.DataFrame:
    """Each checked quantity against its limit.

    Columns: ``quantity``, ``value``, ``limit``, ``unit``, ``sense`` (``max`` when the
    value must stay at or below the limit, ``min`` when at or above), ``share``
    (value / limit), ``headroom`` (distance to the limit as a fraction of it, positive
    when inside), ``within`` (bool), and ``band_low`` / ``band_high`` (the ends of the
    value's uncertainty band, NaN where none: the hot spot's spread between the
    applicable thermal models, ``temperature_band_C``).

    The temperature checked is the hot spot (``hotspot_temperature_C``; records written
    before it existed fall back to ``temperature_C``).
    """
    margins = record["margins"]
    hot = record.get("hotspot_temperature_C", record["temperature_C"])
    rows = [
        ("Peak flux density", record["peak_flux_T"], margins["flux_limit_T"], "T", "max"),
        ("Hot-spot temperature", hot, margins["temperature_limit_C"], "°C", "max"),
        ("Window fill", record["fill_factor"], margins["fill_limit"], "", "max"),
        (
            "Inductance kept at peak",
            margins["inductance_at_peak_fraction"],
            margins["inductance_at_peak_limit"],
            "",
            "min",
        ),
    ]
    table = pd.DataFrame(rows, columns=["quantity", "value", "limit", "unit", "sense"])
    table["value"] = table["value"].astype(float)
    table["limit"] = table["limit"].astype(float)
    share = table["value"] / table["limit"]
    upper = table["sense"] == "max"
    table["share"] = share
    table["headroom"] = np.where(upper, 1.0 - share, share - 1.0)
    table["within"] = np.where(
        upper, table["value"] <= table["limit"], table["value"] >= table["limit"]
    )
    band = record.get("temperature_band_C") or [None, None]
    low, high = (np.nan if v is None else float(v) for v in band)
    table["band_low"] = np.where(table["quantity"] == "Hot-spot temperature", low, np.nan)
    table["band_high"] = np.where(table["quantity"] == "Hot-spot temperature", high, np.nan)
    return table


def elimination_table(run: RunData) -> pd.DataFrame:
    """Candidates removed per constraint, largest first, with their share of all; in an
    infeasible run also ``alone``: the candidates failing only that constraint (-1 where
    not counted)."""
    counts = run.meta["counts"]
    total = int(counts.get("total", 0))
    eliminated = counts.get("eliminated") or {}
    alone = (run.meta.get("diagnosis") or {}).get("fails_alone") or {}
    rows = [
        {
            "constraint": str(name),
            "meaning": CONSTRAINT_MEANING.get(str(name), ""),
            "removed": int(removed),
            "share": (int(removed) / total) if total > 0 else 0.0,
            "alone": int(alone.get(name, -1)),
        }
        for name, removed in eliminated.items()
    ]
    table = pd.DataFrame(rows, columns=["constraint", "meaning", "removed", "share", "alone"])
    return table.sort_values(["removed", "constraint"], ascending=[False, True]).reset_index(
        drop=True
    )


#: Operating-point keys the report shows, in order, with their column heading; a column
#: appears when some point gives it (a DC-DC study's points give the first three).
POINT_COLUMNS = {
    "input_V": "Input [V]", "output_V": "Output [V]", "load_A": "Load [A]",
    "line_V_rms": "Line RMS [V]", "power_W": "Power [W]", "dc_link_V": "DC link [V]",
    "grid_V_rms": "Grid RMS [V]", "grid_A_rms": "Grid RMS [A]",
    "power_factor": "Power factor", "line_frequency_Hz": "Line [Hz]",
    "current_waveform": "Current waveform",
}
_LINE_KEYS = ("line_V_rms", "dc_link_V")


def operating_points_table(run: RunData) -> pd.DataFrame:
    """The study's operating points: name, the keys they give (`POINT_COLUMNS`; the line
    frequency and power factor only for line-cycle points), time share."""
    points = run.meta["operating_points"]
    line = any(any(k in p for k in _LINE_KEYS) for p in points)
    given = [key for key in POINT_COLUMNS if any(key in p for p in points)
             and (line or key not in ("line_frequency_Hz", "power_factor"))]
    columns = ["name", *given, "time_share"]
    return pd.DataFrame([{c: point.get(c) for c in columns} for point in points],
                        columns=columns)


_UNIT_SUFFIXES = {
    "mm": "mm",
    "mm2": "mm²",
    "cm3": "cm³",
    "C": "°C",
    "K": "K",
    "W": "W",
    "V": "V",
    "A": "A",
    "uH": "µH",
    "kHz": "kHz",
    "Hz": "Hz",
    "T": "T",
    "g": "g",
    "s": "s",
    "pct": "%",
}


def _flatten(prefix: str, value: Any) -> list[tuple[str, Any]]:
    if isinstance(value, dict):
        out: list[tuple[str, Any]] = []
        for key, inner in value.items():
            out += _flatten(f"{prefix}.{key}" if prefix else str(key), inner)
        return out
    return [(prefix, value)]


def limits_table(run: RunData) -> pd.DataFrame:
    """The study's limits as ``limit``/``unit``/``value`` rows, nested keys dotted."""
    rows = []
    for key, value in _flatten("", run.meta.get("limits") or {}):
        stem, _, suffix = key.rpartition("_")
        unit = _UNIT_SUFFIXES.get(suffix, "") if stem else ""
        label = (stem if unit else key).replace("_", " ").replace(".", " · ")
        if value is None:
            shown: Any = "not set"
        elif isinstance(value, list):
            shown = ", ".join(map(str, value))
        else:
            shown = value
        rows.append({"limit": label, "unit": unit, "value": shown})
    return pd.DataFrame(rows, columns=["limit", "unit", "value"])


def near_miss_table(run: RunData) -> pd.DataFrame:
    """Designs that came closest when nothing met every limit."""
    columns = [
        "design_id",
        "core",
        "material",
        "turns",
        "wire",
        "worst_constraint",
        "worst_violation",
    ]
    return pd.DataFrame(
        [{c: miss.get(c) for c in columns} for miss in run.near_misses], columns=columns
    )


def custom_comparison_table(run: RunData) -> pd.DataFrame:
    """Catalogue designs on the volume-loss front against the smallest custom-core design
    with the same or lower loss (optuna runs with a custom core); empty otherwise."""
    columns = [
        "catalogue_core", "weighted_loss_W", "catalogue_volume_cm3", "custom_core",
        "custom_volume_cm3", "volume_ratio",
    ]
    comparison = run.meta.get("custom_vs_catalogue") or {}
    rows = comparison.get("rows") or []
    return pd.DataFrame([{c: row.get(c) for c in columns} for row in rows], columns=columns)


def hand_sizing_table(run: RunData) -> pd.DataFrame:
    """The hand procedure's design per ferrite material (run.json ``hand_sizing``) with
    its objectives and where it stands against the front; empty when the run has none."""
    columns = [
        "design_id", "material", "area_product_required_cm4", "first_core", "core", "stack",
        "area_product_cm4", "turns", "gap_mm", "wire", "parallel", "volume_cm3",
        "weighted_loss_W", "cost", "mass_g", "feasible", "worst_constraint",
        "front_designs_beating_it", "standing",
    ]
    rows = []
    for entry in (run.meta.get("hand_sizing") or {}).get("designs") or []:
        rec = entry["record"]
        beaten = int(entry.get("front_designs_beating_it") or 0)
        if not rec.get("feasible", False):
            standing = f"breaks {entry.get('worst_constraint') or rec.get('worst_constraint')}"
        elif beaten:
            standing = f"{beaten} front design(s) beat it on every objective"
        elif entry.get("same_as_front_design"):
            standing = f"on the front: the search's {entry['same_as_front_design']}"
        elif not entry.get("turns_in_search_range", True):
            standing = "no front design beats it (its turns lie outside the searched range)"
        else:
            standing = "meets the front: no front design beats it"
        row = {c: rec.get(c) for c in columns}
        first = f"{entry.get('first_core')}"
        if int(entry.get("first_stack") or 1) > 1:
            first += f" ×{int(entry['first_stack'])}"
        row.update(first_core=first, worst_constraint=entry.get("worst_constraint"),
                   front_designs_beating_it=beaten, standing=standing)
        rows.append(row)
    return pd.DataFrame(rows, columns=columns)


def header_facts(run: RunData) -> list[tuple[str, str]]:
    """Label/value pairs for the page header (strings, not yet escaped)."""
    meta = run.meta
    started = run.started.strftime("%Y-%m-%d %H:%M") if run.started else "unknown"
    facts = [
        ("Run", started),
        ("Tool version", str(meta.get("version", ""))),
        ("Catalogue", str(meta.get("catalog_hash", ""))[:12]),
        ("Search", str(meta.get("strategy", ""))),
        ("Objectives", " · ".join(run.objectives)),
    ]
    if meta.get("wall_time_s") is not None:
        facts.append(("Wall time", f"{float(meta['wall_time_s']):.1f} s"))
    if meta.get("candidates_per_s") is not None:
        facts.append(("Throughput", f"{float(meta['candidates_per_s']):,.0f} designs/s"))
    return facts


def field_check_lines(result: dict[str, Any]) -> list[tuple[str, str]]:
    """A field check's figures (``optimag verify``) as (label, text) lines."""
    model_f = result["fringing_factor_model"]
    return [
        ("Inductance, model", f"{result['inductance_model_uH']:.4g} µH"),
        ("Inductance, field solution", f"{result['inductance_fem_uH']:.4g} µH"),
        ("Model against field solution", f"{100 * result['inductance_error']:+.1f} %"),
        ("Fringing factor, model", "—" if model_f is None else f"{model_f:.3f}"),
        ("Fringing factor, field solution", f"{result['fringing_factor_fem']:.3f}"),
        ("Depth correction (3-D gap)", f"{result['depth_factor']:.3f}"),
        ("|B| next to the gap, field solution / 1-D",
         f"{result['field_fem_mT'][0]:.3g} / {result['field_one_d_mT'][0]:.3g} mT"),
        ("∫|B|² over the winding, field solution / 1-D",
         f"{result['winding_b2_fem_over_one_d']:.2f}"),
        ("∫|B|² over the winding, gap-loss model / field solution",
         f"{result['winding_b2_closed_form_over_fem']:.2f}"),
        ("Solve time", f"{result['solve_time_s']:.1f} s"),
    ]
