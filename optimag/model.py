"""The inductor model: from candidate designs to their figures, constraints and objectives.

A candidate is (core, stack, material, turns, gap, wire, parallel strands). The model is
split along what each quantity depends on, so that a search can evaluate each factor once
over its own small grid, prune, and combine:

* `magnetic_stage` — (core, stack, material, turns, gap): gap, inductance, peak flux,
  flux swing and the core-loss density at every operating point;
* `winding_layout_stage` — (core, stack, turns, wire, parallel): layout, fill, MLT, DC
  resistance, boxed size; `winding_loss_stage` on the windings that fit: DC and AC winding
  loss at two temperatures;
* `combine_stage` — the whole candidate: the loss-temperature fixed point per operating
  point, objectives and the remaining constraints.

`evaluate` runs the three on flat candidate arrays; the exhaustive search runs the same
functions on factor grids, so both paths give the same numbers.

SI units throughout; trade units only in the column names of `design_space_frame` and the
records built by the exporter.
"""

from __future__ import annotations

import dataclasses
import functools
import warnings
from dataclasses import dataclass

import numpy as np
import pandas as pd

from optimag import codes
from optimag.codes import FEASIBLE, Constraint, Family, GapKind, MaterialKind, WireKind
from optimag.constants import COPPER_RESISTIVITY_20C
from optimag.errors import ValidityRangeWarning
from optimag.physics import (
    ac_resistance,
    coreloss,
    fringing,
    gap_field,
    geometry,
    heat_balance,
    heat_paths,
    magnetic,
    saturation,
    sizing,
    thermal,
    winding,
)
from optimag.study.operating import OperatingArrays
from optimag.study.waveform import current_shape_from_voltages, pulse_harmonics

#: Constraint names in the order a candidate's elimination is attributed (the position of
#: a name is its `Constraint` code).
CONSTRAINTS = tuple(code.text for code in Constraint)
MAGNETIC_CONSTRAINTS = CONSTRAINTS[:4]
WINDING_CONSTRAINTS = CONSTRAINTS[4:9]
FINAL_CONSTRAINTS = CONSTRAINTS[9:]

#: Models a design's figures may rest on outside their declared range, with what that
#: means. Each stage returns ``outside_<name>`` (n,) bool for the models it runs; records,
#: exports, report and console read these flags (`model_flag_names`).
MODEL_FLAGS = {
    "material_fit": "core loss: the material's Steinmetz fit is used outside the frequency "
    "or flux range it was fitted on",
    "gap_model": "gap reluctance: the gap lies outside the chosen fringing model's range",
    "bias_table": "core loss: the DC field exceeds the material's premagnetisation table; "
    "its last factor is used",
    "litz_model": "litz: strands thicker than the skin depth at the switching frequency; "
    "the strand-level proximity factor underestimates the AC loss",
    "thermal_model": "temperature: the thermal law is used outside its stated range at the "
    "settled temperature",
}

#: Objective name -> metric column (defined once, in `optimag.codes`).
OBJECTIVE_COLUMNS = codes.OBJECTIVE_COLUMNS

#: Catalogue words to their codes (`optimag.codes`).
FAMILY_CODES = Family.by_text()
MATERIAL_KIND_CODES = MaterialKind.by_text()
WIRE_KIND_CODES = WireKind.by_text()
GAP_KIND_CODES = GapKind.by_text()

#: Copper resistivity at 100 degC, at which the litz strand range is checked (a hot
#: winding: the skin depth is larger when the copper is hot, so this is the lenient side).
LITZ_CHECK_RESISTIVITY = float(winding.copper_resistivity(100.0))

#: Temperatures at which winding loss is evaluated; in between it is interpolated
#: linearly (exact for DC loss, whose resistance is linear in temperature).
WINDING_REFERENCE_TEMPERATURES_C = (20.0, 120.0)


def _quiet(stage):
    """Silence validity-range warnings inside a search stage.

    A search visits millions of candidates, many outside some model's published range (a
    Steinmetz fit far from its flux range, a gap beyond McLyman's fringing range); one
    warning per batch would say nothing useful. Each short-listed design's record states
    instead which of its figures come from a model used outside its range.
    """

    @functools.wraps(stage)
    def wrapper(*args, **kwargs):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityRangeWarning)
            return stage(*args, **kwargs)

    return wrapper


def _mm(values) -> np.ndarray:
    return np.asarray(values, dtype=float) * 1e-3


def _mm2(values) -> np.ndarray:
    return np.asarray(values, dtype=float) * 1e-6


def _mm3(values) -> np.ndarray:
    return np.asarray(values, dtype=float) * 1e-9


def _optional(frame: pd.DataFrame, column: str, default: float = 0.0) -> np.ndarray:
    if column not in frame:
        return np.full(len(frame), default)
    return frame[column].astype(float).fillna(default).to_numpy()


@dataclass(frozen=True)
class CoreArrays:
    """Per-core-set constants in SI units (one entry per catalogue row)."""

    ids: np.ndarray
    family: np.ndarray
    ae_m2: np.ndarray
    le_m: np.ndarray
    ve_m3: np.ndarray
    amin_m2: np.ndarray
    window_area_m2: np.ndarray
    breadth_m: np.ndarray
    window_width_m: np.ndarray
    leg_width_m: np.ndarray
    leg_depth_m: np.ndarray
    bobbin_wall_m: np.ndarray
    length_m: np.ndarray
    width_m: np.ndarray
    height_m: np.ndarray
    price: np.ndarray
    max_stack: np.ndarray
    #: One outer leg's width (E) or the skirt's radial thickness (pot); 0 for a ring [m].
    outer_leg_width_m: np.ndarray
    #: Face area of all outer legs of one set at the gap; 0 for a ring [m^2].
    outer_leg_area_m2: np.ndarray

    @classmethod
    def from_frame(cls, cores: pd.DataFrame) -> CoreArrays:
        return cls(
            ids=cores["id"].astype(str).to_numpy(),
            family=cores["family"].map(FAMILY_CODES).to_numpy(dtype=np.int8),
            ae_m2=_mm2(cores["Ae_mm2"]),
            le_m=_mm(cores["le_mm"]),
            ve_m3=_mm3(cores["Ve_mm3"]),
            amin_m2=_mm2(cores["Amin_mm2"]),
            window_area_m2=_mm2(cores["window_area_mm2"]),
            breadth_m=_mm(cores["window_breadth_mm"]),
            window_width_m=_mm(cores["window_width_mm"]),
            leg_width_m=_mm(cores["leg_width_mm"]),
            leg_depth_m=_mm(cores["leg_depth_mm"]),
            bobbin_wall_m=_mm(_optional(cores, "bobbin_wall_mm")),
            length_m=_mm(cores["length_mm"]),
            width_m=_mm(cores["width_mm"]),
            height_m=_mm(cores["height_mm"]),
            price=cores["price"].astype(float).to_numpy(),
            max_stack=cores["max_stack"].astype(int).to_numpy(),
            outer_leg_width_m=_mm(_optional(cores, "outer_leg_width_mm")),
            outer_leg_area_m2=_mm2(_optional(cores, "outer_leg_area_mm2")),
        )


@dataclass(frozen=True)
class MaterialArrays:
    """Per-material constants (Steinmetz in W/m^3 with f in Hz and B in T)."""

    ids: np.ndarray
    kind: np.ndarray
    mu_i: np.ndarray
    bsat_25C_T: np.ndarray
    bsat_100C_T: np.ndarray
    k: np.ndarray
    alpha: np.ndarray
    beta: np.ndarray
    k_i: np.ndarray
    f_min_Hz: np.ndarray
    f_max_Hz: np.ndarray
    b_max_T: np.ndarray
    ct0: np.ndarray
    ct1: np.ndarray
    ct2: np.ndarray
    rolloff_a: np.ndarray
    rolloff_b: np.ndarray
    rolloff_c: np.ndarray
    density: np.ndarray
    price_factor: np.ndarray
    relax: np.ndarray  # (n, 5) k_r, alpha_r, beta_r, tau_s, q_r; NaN row: no parameters
    bias_h_A_m: np.ndarray  # (n, 3) premagnetisation table fields; NaN: no point
    bias_factor: np.ndarray  # (n, 3) loss multipliers at those fields

    @classmethod
    def from_frame(cls, materials: pd.DataFrame) -> MaterialArrays:
        k = materials["steinmetz_k"].astype(float).to_numpy()
        alpha = materials["steinmetz_alpha"].astype(float).to_numpy()
        beta = materials["steinmetz_beta"].astype(float).to_numpy()
        return cls(
            ids=materials["id"].astype(str).to_numpy(),
            kind=materials["kind"].map(MATERIAL_KIND_CODES).to_numpy(dtype=np.int8),
            mu_i=materials["mu_i"].astype(float).to_numpy(),
            bsat_25C_T=materials["bsat_25C_T"].astype(float).to_numpy(),
            bsat_100C_T=materials["bsat_100C_T"].astype(float).to_numpy(),
            k=k,
            alpha=alpha,
            beta=beta,
            k_i=np.asarray(coreloss.igse_coefficient(k, alpha, beta), dtype=float),
            f_min_Hz=materials["f_min_kHz"].astype(float).to_numpy() * 1e3,
            f_max_Hz=materials["f_max_kHz"].astype(float).to_numpy() * 1e3,
            b_max_T=materials["b_max_T"].astype(float).to_numpy(),
            ct0=materials["ct0"].astype(float).to_numpy(),
            ct1=materials["ct1_per_C"].astype(float).to_numpy(),
            ct2=materials["ct2_per_C2"].astype(float).to_numpy(),
            rolloff_a=_optional(materials, "rolloff_a", 1.0),
            rolloff_b=_optional(materials, "rolloff_b", 0.0),
            rolloff_c=_optional(materials, "rolloff_c", 1.0),
            density=materials["density_kg_m3"].astype(float).to_numpy(),
            price_factor=materials["price_factor"].astype(float).to_numpy(),
            relax=np.column_stack([
                _optional(materials, "relax_k", np.nan),
                _optional(materials, "relax_alpha", np.nan),
                _optional(materials, "relax_beta", np.nan),
                _optional(materials, "relax_tau_us", np.nan) * 1e-6,
                _optional(materials, "relax_q", np.nan),
            ]).reshape(len(materials), 5),
            bias_h_A_m=np.column_stack(
                [_optional(materials, f"bias_H{j}_A_m", np.nan) for j in (1, 2, 3)]
            ).reshape(len(materials), 3),
            bias_factor=np.column_stack(
                [_optional(materials, f"bias_factor{j}", np.nan) for j in (1, 2, 3)]
            ).reshape(len(materials), 3),
        )

    @property
    def has_relaxation(self) -> np.ndarray:
        return np.all(np.isfinite(self.relax), axis=1)

    @property
    def has_bias_table(self) -> np.ndarray:
        return np.isfinite(self.bias_h_A_m[:, 0])


@dataclass(frozen=True)
class WireArrays:
    """Per-wire constants: one *conductor* is one round wire, one litz bundle or one foil."""

    ids: np.ndarray
    kind: np.ndarray
    copper_area_m2: np.ndarray
    outer_m: np.ndarray
    bare_diameter_m: np.ndarray
    strands: np.ndarray
    strand_diameter_m: np.ndarray
    foil_thickness_m: np.ndarray
    foil_width_m: np.ndarray
    insulation_m: np.ndarray
    price_per_kg: np.ndarray

    @classmethod
    def from_frame(cls, wires: pd.DataFrame) -> WireArrays:
        kind = wires["kind"].map(WIRE_KIND_CODES).to_numpy(dtype=np.int8)
        bare = _mm(_optional(wires, "bare_diameter_mm"))
        strand_d = _mm(_optional(wires, "strand_diameter_mm"))
        strands = _optional(wires, "strands", 1.0)
        thickness = _mm(_optional(wires, "foil_thickness_mm"))
        foil_width = _mm(_optional(wires, "foil_width_mm"))
        insulation = _mm(_optional(wires, "insulation_mm"))
        outer = _mm(_optional(wires, "outer_diameter_mm"))
        copper = np.select(
            [kind == WireKind.ROUND, kind == WireKind.LITZ, kind == WireKind.FOIL],
            [np.pi / 4 * bare**2, strands * np.pi / 4 * strand_d**2, thickness * foil_width],
        )
        # A foil's "outer" size in the build direction is its thickness plus insulation.
        outer = np.where(kind == WireKind.FOIL, thickness + insulation, outer)
        return cls(
            ids=wires["id"].astype(str).to_numpy(),
            kind=kind,
            copper_area_m2=copper,
            outer_m=outer,
            bare_diameter_m=np.where(kind == WireKind.LITZ, strand_d, bare),
            strands=strands,
            strand_diameter_m=strand_d,
            foil_thickness_m=thickness,
            foil_width_m=foil_width,
            insulation_m=insulation,
            price_per_kg=wires["price_per_kg"].astype(float).to_numpy(),
        )


@dataclass(frozen=True)
class Cooling:
    """How the part sheds its heat (the study's ``[cooling]``), SI.

    Attributes
    ----------
    mode : "free_air", "on_board", "enclosure", "forced_air" or "potted"
    board_temperature_C, board_copper_area_m2 : the board of "on_board"
    enclosure_volume_m3 : the closed box of "enclosure"
    air_speed_m_s : the air stream of "forced_air"
    potting_conductivity_W_mK, potting_thickness_m, wall_temperature_C : "potted"
    core_emissivity, winding_emissivity : of the visible core and winding surfaces
    potting_shape : conduction shape of the compound layer: "faces_edges_corners" (the
        model), "faces_only" and "outer_faces" (its lower and upper bounds, for the band)
    board_path_factor : multiplies the board conductance: 1 in the model; 0.5 and 2 bound
        the assumed terminal length and standoff gap for the band
    """

    mode: str = "free_air"
    board_temperature_C: float = 0.0
    board_copper_area_m2: float = 0.0
    enclosure_volume_m3: float = 0.0
    air_speed_m_s: float = 0.0
    potting_conductivity_W_mK: float = 0.0
    potting_thickness_m: float = 0.0
    wall_temperature_C: float = 0.0
    core_emissivity: float = 0.9
    winding_emissivity: float = 0.85
    potting_shape: str = "faces_edges_corners"
    board_path_factor: float = 1.0

    @classmethod
    def from_study(cls, cooling) -> Cooling:
        def value(name: str, scale: float = 1.0) -> float:
            number = getattr(cooling, name)
            return 0.0 if number is None else float(number) * scale

        return cls(
            mode=cooling.mode,
            board_temperature_C=value("board_temperature_C"),
            board_copper_area_m2=value("board_copper_area_mm2", 1e-6),
            enclosure_volume_m3=value("enclosure_volume_cm3", 1e-6),
            air_speed_m_s=value("air_speed_m_s"),
            potting_conductivity_W_mK=value("potting_conductivity_W_mK"),
            potting_thickness_m=value("potting_thickness_mm", 1e-3),
            wall_temperature_C=value("wall_temperature_C"),
            core_emissivity=float(cooling.core_emissivity),
            winding_emissivity=float(cooling.winding_emissivity),
        )


@dataclass(frozen=True)
class Requirements:
    """The study's inductance requirement and limits, SI."""

    inductance_H: float
    tolerance: float
    min_fraction_at_peak: float
    ambient_C: float
    max_temperature_C: float
    max_height_m: float
    max_footprint_m2: float
    max_volume_m3: float
    max_mass_kg: float
    flux_margin: float
    max_fill_factor: float
    max_loss_W: float
    fringing: str
    thermal_model: str
    outside_fit: str
    labour_per_turn: float
    cooling: Cooling = Cooling()
    #: [cost] energy price and hours in service (0 when the study sets none).
    energy_price_per_kWh: float = 0.0
    operating_hours: float = 0.0
    #: Names in `coreloss.CORE_LOSS_MODELS` and `ac_resistance.AC_RESISTANCE_MODELS`.
    core_loss: str = "igse"
    ac_resistance: str = "dowell"


@dataclass(frozen=True)
class DesignSpace:
    """Everything the model needs: catalogue arrays, operating points, limits and the
    axes of the search (turns, stacks, parallels, gap options)."""

    cores: CoreArrays
    materials: MaterialArrays
    wires: WireArrays
    operating: OperatingArrays
    requirements: Requirements
    turns: np.ndarray
    stacks: np.ndarray
    parallels: np.ndarray
    gap_grid_m: np.ndarray | None  # None: gap solved for the inductance
    #: How the gap may be made: "centre" (ground centre leg) and/or "spacer" (every leg).
    gap_kinds: tuple[str, ...] = ("centre",)

    @property
    def n_gap_values(self) -> int:
        return 1 if self.gap_grid_m is None else len(self.gap_grid_m)

    @property
    def n_gap_options(self) -> int:
        """Gap options: every allowed gap kind times every gap value (option = kind index
        * values + value index)."""
        return len(self.gap_kinds) * self.n_gap_values

    def gap_option_spacer(self, gap_option: np.ndarray) -> np.ndarray:
        """True where a gap option is made with a spacer (every leg gapped)."""
        return self.gap_option_kind(gap_option) == GapKind.SPACER

    def gap_option_kind(self, gap_option: np.ndarray) -> np.ndarray:
        """`GapKind` code of each gap option."""
        kinds = np.array([GAP_KIND_CODES[kind] for kind in self.gap_kinds], dtype=np.int8)
        return kinds[np.asarray(gap_option, dtype=np.int64) // self.n_gap_values]

    def gap_option_value(self, gap_option: np.ndarray) -> np.ndarray:
        """Index into the gap grid of a gap option."""
        return np.asarray(gap_option, dtype=np.int64) % self.n_gap_values


def _finite_or_inf(value) -> float:
    return float("inf") if value is None else float(value)


def build_design_space(study, catalog) -> DesignSpace:
    """Gather the study's requirements and the (filtered) catalogue into SI arrays."""
    search = study.search
    cores, materials, wires = catalog.cores, catalog.materials, catalog.wires
    if search.cores:
        cores = cores[cores["id"].isin(search.cores)]
    if search.materials:
        materials = materials[materials["id"].isin(search.materials)]
    if search.wires:
        wires = wires[wires["id"].isin(search.wires)]
    limits = study.limits
    requirements = Requirements(
        inductance_H=float(study.required_inductance_H),
        tolerance=float(study.inductor.inductance_tolerance_pct) / 100.0,
        min_fraction_at_peak=float(study.inductor.min_fraction_at_peak),
        ambient_C=float(limits.ambient_C),
        max_temperature_C=float(limits.max_temperature_C),
        max_height_m=_finite_or_inf(limits.max_height_mm) * 1e-3,
        max_footprint_m2=_finite_or_inf(limits.max_footprint_mm2) * 1e-6,
        max_volume_m3=_finite_or_inf(limits.max_volume_cm3) * 1e-6,
        max_mass_kg=_finite_or_inf(limits.max_mass_g) * 1e-3,
        flux_margin=float(limits.flux_margin),
        max_fill_factor=float(limits.max_fill_factor),
        max_loss_W=_finite_or_inf(limits.max_loss_W),
        fringing=study.model.fringing,
        thermal_model=study.model.thermal,
        outside_fit=study.model.outside_fit,
        labour_per_turn=float(study.cost.labour_per_turn),
        cooling=Cooling.from_study(study.cooling),
        energy_price_per_kWh=float(study.cost.energy_price_per_kWh or 0.0),
        operating_hours=float(study.cost.operating_hours or 0.0),
        core_loss=study.model.core_loss,
        ac_resistance=study.model.ac_resistance,
    )
    gap_grid = None
    if search.gap == "grid":
        gap_grid = np.asarray(search.gap_grid_mm, dtype=float) * 1e-3
    return DesignSpace(
        cores=CoreArrays.from_frame(cores.reset_index(drop=True)),
        materials=MaterialArrays.from_frame(materials.reset_index(drop=True)),
        wires=WireArrays.from_frame(wires.reset_index(drop=True)),
        operating=OperatingArrays.from_study(study),
        requirements=requirements,
        turns=np.arange(search.turns_min, search.turns_max + 1, dtype=np.int64),
        stacks=np.arange(search.stack_min, search.stack_max + 1, dtype=np.int64),
        parallels=np.arange(search.parallel_min, search.parallel_max + 1, dtype=np.int64),
        gap_grid_m=gap_grid,
        gap_kinds=tuple(search.gap_kinds),
    )


# ---------------------------------------------------------------------------------------
# Stage 1: magnetic circuit, saturation and core loss
# ---------------------------------------------------------------------------------------


def gap_allowed(space: DesignSpace, core: np.ndarray, material: np.ndarray) -> np.ndarray:
    """A discrete gap is cut only in ferrite E and pot cores; powder has its gap
    distributed and a ring cannot be gapped in practice (common practice, no source)."""
    return ((space.materials.kind[material] == MaterialKind.FERRITE)
            & (space.cores.family[core] != Family.TOROID))


def gap_geometry(
    space: DesignSpace, core: np.ndarray, stack: np.ndarray, gap_option: np.ndarray
) -> fringing.GapGeometry:
    """What is gapped, for the gap models: the gapped leg's face (a pot core's round post
    of diameter `leg_width`, an E core's rectangular centre leg with the stack's depth), the
    window, the yoke, the outer legs' faces and whether a spacer gaps every leg."""
    c = space.cores
    stack_f = np.asarray(stack, dtype=float)
    round_leg = c.family[core] == Family.POT
    width = c.leg_width_m[core]
    depth = np.where(round_leg, width, c.leg_depth_m[core] * stack_f)
    face = np.where(round_leg, 0.25 * np.pi * width * width, width * depth)
    return fringing.GapGeometry(
        ae_m2=face,
        winding_length_m=c.breadth_m[core],
        leg_width_m=width,
        leg_depth_m=depth,
        round_leg=round_leg,
        window_width_m=c.window_width_m[core],
        outer_leg_width_m=c.outer_leg_width_m[core],
        outer_area_m2=c.outer_leg_area_m2[core] * np.where(round_leg, 1.0, stack_f),
        outer_legs=np.where(round_leg, 1.0, 2.0),
        yoke_thickness_m=np.maximum(0.5 * (c.height_m[core] - c.breadth_m[core]), 0.0),
        spacer=space.gap_option_spacer(gap_option),
    )


def window_permeance(
    space: DesignSpace, core: np.ndarray, stack: np.ndarray, gap_option: np.ndarray,
    gap: np.ndarray, r_core: np.ndarray, geometry: fringing.GapGeometry,
) -> np.ndarray:
    """Permeance [H] of the winding window's own field (added as N² P_w to the inductance;
    0 with the "ideal" gap model):
    window length (both E windows: 2 x depth; pot: mean circumference), width and height
    (a spacer lifts the yokes by its thickness), with the share of the MMF on the gapped
    leg's side from the gap reluctances and half the core's."""
    c = space.cores
    spacer = space.gap_option_spacer(gap_option)
    round_leg = c.family[core] == Family.POT
    width = c.window_width_m[core]
    length = np.where(
        round_leg, 2.0 * np.pi * (0.5 * c.leg_width_m[core] + 0.5 * width),
        2.0 * c.leg_depth_m[core] * np.asarray(stack, dtype=float),
    )
    centre_only = dataclasses.replace(geometry, spacer=np.zeros_like(spacer))
    model_name = space.requirements.fringing
    r_centre = fringing.gap_reluctance(gap, 0, 0, 0, 0, model_name, geometry=centre_only)
    r_all = fringing.gap_reluctance(gap, 0, 0, 0, 0, model_name, geometry=geometry)
    share = (r_centre + 0.5 * r_core) / (r_core + r_all)
    height = c.breadth_m[core] + np.where(spacer, gap, 0.0)
    # "ideal" keeps every line of flux in the core and the gap's face: no window field.
    has_window = (c.family[core] != Family.TOROID) & (model_name != "ideal")
    return np.where(has_window, magnetic.window_permeance(length, width, height, share), 0.0)


def _large_signal(space, material, turns, le, ae, bsat, r_gap, current, p_window=0.0):
    """Incremental inductance [H] and flux density in Ae [T] at a DC current (arrays
    broadcast): powder by its roll-off law, ferrite by its soft-saturation curve on the core
    and gap path plus the winding window's own permeance ``p_window`` [H] (air, linear)."""
    m = space.materials
    powder = m.kind[material] == MaterialKind.POWDER
    mu_i = m.mu_i[material]
    a, b, c = m.rolloff_a[material], m.rolloff_b[material], m.rolloff_c[material]
    field = turns * current / le
    powder_l = saturation.powder_inductance(turns, current, le, ae, mu_i, a, b, c)
    powder_b = saturation.powder_flux_density(field, mu_i, a, b, c)
    # The soft law needs mu_i > 1 (a ferrite of mu_i = 1 would be air: keep it finite).
    soft = saturation.soft_saturation_operating_point(
        turns, current, le, ae, np.where(powder, 2.0, np.maximum(mu_i, 1.0 + 1e-9)), bsat,
        r_gap,
    )
    return (
        np.where(powder, powder_l, soft.inductance_H + turns * turns * p_window),
        np.where(powder, powder_b, soft.flux_density_T),
    )


def inductance_versus_current(
    space: DesignSpace,
    core: np.ndarray,
    stack: np.ndarray,
    material: np.ndarray,
    turns: np.ndarray,
    gap_option: np.ndarray,
    gap_m: np.ndarray,
    current_A: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Incremental inductance [H] and flux density in Ae [T] of designs at DC currents,
    with the Bsat of the hottest allowed temperature, exactly as `magnetic_stage` uses them.
    The design arrays have shape (n,), ``current_A`` (n, ...)."""
    c, m, req = space.cores, space.materials, space.requirements
    stack_f = np.asarray(stack, dtype=float)
    ae = c.ae_m2[core] * stack_f
    le = c.le_m[core]
    geometry = gap_geometry(space, core, stack, gap_option)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityRangeWarning)
        r_gap = fringing.gap_reluctance(
            gap_m, ae, c.breadth_m[core], geometry.leg_width_m, geometry.leg_depth_m,
            model=req.fringing, geometry=geometry,
        )
        r_core = magnetic.core_reluctance(le, ae, m.mu_i[material])
        p_window = window_permeance(space, core, stack, gap_option, gap_m, r_core, geometry)
    bsat_hot = saturation.bsat_at_temperature(
        req.max_temperature_C, m.bsat_25C_T[material], m.bsat_100C_T[material]
    )
    current = np.asarray(current_A, dtype=float)
    col = (slice(None),) + (None,) * (current.ndim - 1)
    return _large_signal(
        space, np.asarray(material)[col], np.asarray(turns, dtype=float)[col],
        le[col], ae[col], bsat_hot[col], r_gap[col], current, p_window[col],
    )


@_quiet
def magnetic_stage(
    space: DesignSpace,
    core: np.ndarray,
    stack: np.ndarray,
    material: np.ndarray,
    turns: np.ndarray,
    gap_option: np.ndarray,
) -> dict[str, np.ndarray]:
    """Inductance, gap, flux and core-loss figures for flat (core, stack, material, turns,
    gap option) arrays. ``gap_option`` indexes the study's gap grid (ignored when the gap is
    solved). Per-operating-point outputs have shape (n, K).

    Returns normalised violations (> 0 means violated) for `MAGNETIC_CONSTRAINTS`.
    """
    c, m = space.cores, space.materials
    req, op = space.requirements, space.operating
    stack_f = stack.astype(float)
    n_turns = turns.astype(float)
    ae = c.ae_m2[core] * stack_f
    amin = c.amin_m2[core] * stack_f
    le = c.le_m[core]
    ve = c.ve_m3[core] * stack_f
    geometry = gap_geometry(space, core, stack, gap_option)
    breadth = c.breadth_m[core]
    mu_i = m.mu_i[material]
    powder = m.kind[material] == MaterialKind.POWDER
    can_gap = gap_allowed(space, core, material)

    # Gap: solved for the target, stepped on the study's grid, or none.
    r_core = magnetic.core_reluctance(le, ae, mu_i)
    if space.gap_grid_m is None:
        # The window's own permeance adds N² P_w, so the gap is solved for the rest; P_w
        # depends a little on the gap (MMF shares): a few fixed-point passes.
        gap = np.zeros_like(n_turns)
        for _ in range(5):
            p_window = window_permeance(space, core, stack, gap_option, gap, r_core, geometry)
            wanted = req.inductance_H - n_turns * n_turns * p_window
            solved = magnetic.gap_for_inductance(
                n_turns, np.where(wanted > 0.0, wanted, np.nan), le, ae, mu_i, breadth,
                fringing=req.fringing, geometry=geometry,
            )
            gap = np.where(can_gap, solved, 0.0)
            gap = np.where(np.isnan(gap), 0.0, gap)
        gap = np.where(can_gap, solved, 0.0)
    else:
        gap = np.where(can_gap, space.gap_grid_m[space.gap_option_value(gap_option)], 0.0)
    unreachable = np.isnan(gap)
    gap = np.where(unreachable, 0.0, gap)

    r_gap = fringing.gap_reluctance(
        gap, ae, breadth, geometry.leg_width_m, geometry.leg_depth_m, model=req.fringing,
        geometry=geometry,
    )
    # Powder: mu_i is the initial permeability; its roll-off starts from 1/a at H = 0.
    powder_l0 = saturation.powder_inductance(
        n_turns, 0.0, le, ae, mu_i, m.rolloff_a[material], m.rolloff_b[material],
        m.rolloff_c[material],
    )
    p_window = window_permeance(space, core, stack, gap_option, gap, r_core, geometry)
    inductance0 = np.where(
        powder, powder_l0,
        magnetic.inductance(n_turns, r_core + r_gap) + n_turns * n_turns * p_window,
    )

    relative_error = np.abs(inductance0 / req.inductance_H - 1.0)
    tolerance = max(req.tolerance, 1e-9)
    inductance_violation = np.where(
        unreachable, 1.0 + relative_error / tolerance, relative_error / tolerance - 1.0
    )
    if space.gap_grid_m is None:
        # A solved gap hits the target by construction; only rounding remains.
        inductance_violation = np.where(
            can_gap & ~unreachable, np.minimum(inductance_violation, -1.0), inductance_violation
        )

    # Large-signal behaviour at the hottest allowed temperature (a feasible part runs no
    # hotter, and Bsat falls with temperature): powder by its roll-off law, ferrite on its
    # soft-saturation curve fitted to mu_i and Bsat there.
    bsat_hot, flux_limit = saturation_limits(space, material)

    def large_signal(current: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        col = (slice(None),) + (None,) * (np.ndim(current) - 1)
        return _large_signal(
            space, material[col], n_turns[col], le[col], ae[col], bsat_hot[col], r_gap[col],
            current, p_window[col],
        )

    # Each design's own current at each instant (one per DC-DC point; a line-cycle point
    # has many): its incremental inductance at the instant's average current (rolled off
    # by the bias: powder roll-off, ferrite soft saturation) decides CCM or DCM, the
    # conduction intervals, the ripple and the peak (Erickson & Maksimović, ch. 2 and 5).
    # A bridge (bidirectional switches) stays continuous, its valley may cross zero.
    n_inst = len(op.dc_A)
    dc = np.broadcast_to(np.abs(op.dc_A)[None, :], (len(n_turns), n_inst))
    frequency = op.instant_frequency_Hz[None, :]
    two_way = op.instant_bidirectional[None, :]
    inductance_dc, _ = large_signal(dc)
    # An unreachable gap leaves no usable inductance; any positive stand-in keeps the
    # arithmetic finite (the candidate is eliminated under "inductance").
    inductance_dc = np.where(inductance_dc > 0, inductance_dc, req.inductance_H)
    shape = current_shape_from_voltages(
        op.rise_V[None, :], op.fall_V[None, :], dc, frequency, inductance_dc,
        allow_dcm=~two_way,
    )
    dcm, rise, fall = shape.dcm, shape.rise_fraction, shape.fall_fraction
    peak = shape.peak_A
    valley = np.where(two_way, shape.valley_A, np.maximum(shape.valley_A, 0.0))
    ripple = shape.ripple_pp_A
    imposed = op.from_file
    if imposed.any():
        # A current given by a file is the same for every design.
        for j in np.flatnonzero(imposed):
            wave = op.waveforms[j]
            dcm[:, j] = False
            peak[:, j] = wave.currents_A.max()
            valley[:, j] = wave.currents_A.min()
            ripple[:, j] = op.ripple_A[j]
            rise[:, j], fall[:, j] = op.rise[j], op.fall[j]
    # Harmonics of the design's own current, needed only where it is discontinuous (a CCM
    # triangle's shape is fixed by the duty ratio; see `winding_ac_loss`).
    harmonics = np.zeros((*dcm.shape, op.harmonics_A.shape[1]))
    where_dcm = np.nonzero(dcm)
    if where_dcm[0].size:
        harmonics[where_dcm] = pulse_harmonics(
            ripple[where_dcm], rise[where_dcm], fall[where_dcm], op.harmonics_A.shape[1]
        )

    # Flux on Ae from the same large-signal law (the core's B at the current).
    _, b_peak = large_signal(peak)
    _, b_valley = large_signal(valley)
    b_swing = b_peak - b_valley

    # Core loss density by iGSE on the triangular (CCM) or three-segment (DCM) flux.
    loss_density = coreloss.CORE_LOSS_MODELS[req.core_loss](
        frequency, b_swing, rise, m.k[material][:, None],
        m.alpha[material][:, None], m.beta[material][:, None], fall_fraction=fall,
    )
    for j in np.flatnonzero(imposed):
        # The imposed current's own flux, vertex by vertex through the large-signal law,
        # by the piecewise-linear iGSE.
        wave = op.waveforms[j]
        _, b_wave = large_signal(np.broadcast_to(wave.currents_A, (len(n_turns),
                                                                   wave.currents_A.size)))
        b_peak[:, j] = np.max(np.abs(b_wave), axis=1)
        b_swing[:, j] = np.ptp(b_wave, axis=1)
        loss_density[:, j] = coreloss.igse_loss_density_piecewise(
            b_wave, wave.times_s, m.k[material][:, None], m.alpha[material][:, None],
            m.beta[material][:, None],
        )
    # Saturation is decided in the narrowest section (Amin), at the hottest allowed
    # temperature. The peak flux the model reports is this one; the swing for core loss
    # stays on Ae.
    b_peak_narrow = np.abs(b_peak) * (ae / amin)[:, None]
    worst_flux = b_peak_narrow.max(axis=1)
    saturation_violation = worst_flux / flux_limit - 1.0

    # Incremental inductance left at the highest peak current (a line cycle's peak).
    inductance_peak, _ = large_signal(np.abs(peak).max(axis=1))
    peak_fraction = inductance_peak / req.inductance_H
    peak_violation = 1.0 - peak_fraction / req.min_fraction_at_peak

    # i²GSE: relaxation in the still (zero-current) interval of a DCM period, for
    # materials with relaxation parameters (Mühlethaler et al. 2012).
    relax = m.relax[material]
    has_relax = m.has_relaxation[material]
    relax_density = np.where(has_relax[:, None] & ~imposed[None, :],
                             coreloss.relaxation_loss_density(
        frequency, b_swing, rise, fall,
        *(np.where(has_relax, relax[:, j], 1.0)[:, None] for j in range(5)),
    ), 0.0)
    # DC bias: the premagnetisation table's loss multiplier at H_dc = N I_dc / le.
    h_dc = n_turns[:, None] * dc / le[:, None]
    has_bias = m.has_bias_table[material]
    table_h = np.where(np.isfinite(m.bias_h_A_m[material]), m.bias_h_A_m[material],
                       np.inf)
    table_f = np.where(np.isfinite(m.bias_factor[material]), m.bias_factor[material],
                       np.nan)
    # Unused table points repeat the last filled one (held beyond the table).
    for j in (1, 2):
        table_f[:, j] = np.where(np.isfinite(table_f[:, j]), table_f[:, j], table_f[:, j - 1])
        table_h[:, j] = np.where(np.isfinite(table_h[:, j]), table_h[:, j],
                                 table_h[:, j - 1] * (1 + 1e-9) + 1e-9)
    table_h = np.where(has_bias[:, None], table_h, np.array([1.0, 2.0, 3.0]))
    table_f = np.where(has_bias[:, None], table_f, 1.0)
    bias, beyond = coreloss.dc_bias_factor(np.abs(h_dc), table_h, table_f)
    bias = np.where(has_bias[:, None], bias, 1.0)
    instant_core = (loss_density + relax_density) * bias * ve[:, None]

    # Range of the material's loss fit (sinusoidal peak = half the swing), at every instant.
    fit_excess = coreloss.steinmetz_fit_excess(
        frequency, b_swing / 2.0, m.f_min_Hz[material][:, None],
        m.f_max_Hz[material][:, None], m.b_max_T[material][:, None],
    ).max(axis=1)
    outside_fit = fit_excess > 0.0
    if req.outside_fit == "flag":
        range_violation = np.full(len(n_turns), -1.0)
    else:
        range_violation = np.where(outside_fit, fit_excess, -1.0)
    gap_model = fringing.GAP_RELUCTANCE_MODELS[req.fringing]
    outside_gap = (gap > 0) & gap_model.outside_range(gap, geometry)
    # Per point: losses averaged over its instants, peaks and swings the largest, the
    # switching-period figures (DCM, duty) at the instant of the highest peak current.
    abs_peak = np.abs(peak)
    return {
        "gap_m": gap,
        "bsat_at_limit_T": bsat_hot,
        "inductance_H": inductance0,
        "inductance_at_peak_H": inductance_peak,
        "peak_flux_T": op.most(b_peak_narrow),
        "flux_swing_T": op.most(b_swing),
        "worst_flux_T": worst_flux,
        "flux_limit_T": flux_limit,
        "core_loss_reference_W": op.mean(instant_core),
        "dc_current_A": np.sqrt(op.mean(dc * dc)),
        "peak_current_A": op.most(abs_peak),
        "ripple_A": op.most(ripple),
        "dcm": op.most(dcm),
        "rise_fraction": op.at_worst(rise, abs_peak),
        "fall_fraction": op.at_worst(fall, abs_peak),
        "harmonics_A": harmonics,
        "instant_ac_scale": np.where(imposed[None, :], 1.0, ripple * ripple),
        "instant_dcm": dcm,
        "instant_core_loss_W": instant_core,
        "instant_peak_A": peak,
        "instant_valley_A": valley,
        "instant_ripple_A": ripple,
        "gap_mmf_share": np.where(gap > 0.0, r_gap / (r_gap + r_core), 0.0),
        "window_inductance_H": np.where(powder, 0.0, n_turns * n_turns * p_window),
        "violation_inductance": inductance_violation,
        "violation_saturation": saturation_violation,
        "violation_inductance_at_peak": peak_violation,
        "violation_material_range": range_violation,
        "outside_material_fit": outside_fit,
        "outside_bias_table": has_bias & np.any(beyond, axis=1),
        "relaxation_W": op.mean(relax_density * bias * ve[:, None]),
        "dc_field_A_m": op.most(np.abs(h_dc)),
        "outside_gap_model": outside_gap,
    }


# ---------------------------------------------------------------------------------------
# Stage 2: winding layout, resistance, AC factors, size
# ---------------------------------------------------------------------------------------


#: Outputs of `winding_layout_stage` in the order it returns them.
_LAYOUT_KEYS = (
    "layers", "conductors_per_layer", "build_m", "fill_factor", "mlt_m", "copper_area_m2",
    "dc_resistance_20C_ohm", "box_length_m", "box_width_m", "box_height_m", "footprint_m2",
    "volume_m3", "surface_m2", "copper_mass_kg", "copper_cost", "violation_window_fit",
    "violation_fill_factor", "violation_height", "violation_footprint", "violation_volume",
    "outside_litz_model",
)


@_quiet
def winding_layout_stage(
    space: DesignSpace,
    core: np.ndarray,
    stack: np.ndarray,
    turns: np.ndarray,
    wire: np.ndarray,
    parallel: np.ndarray,
) -> dict[str, np.ndarray]:
    """Layout, fill, MLT, DC resistance, boxed size and copper cost for flat (core, stack,
    turns, wire, parallel) arrays, with normalised violations of `WINDING_CONSTRAINTS`:
    `winding_fit_stage` and `winding_layout_rest` together."""
    fit = winding_fit_stage(space, core, stack, turns, wire, parallel)
    out = {**fit, **winding_layout_rest(space, core, stack, turns, wire, parallel, fit)}
    return {key: out[key] for key in _LAYOUT_KEYS}


@_quiet
def winding_fit_stage(
    space: DesignSpace,
    core: np.ndarray,
    stack: np.ndarray,
    turns: np.ndarray,
    wire: np.ndarray,
    parallel: np.ndarray,
) -> dict[str, np.ndarray]:
    """The part of `winding_layout_stage` that decides `WINDING_CONSTRAINTS`: the layout in
    the window, the fill and the wound box, with their violations. A search computes the
    rest (`winding_layout_rest`) only for the windings that pass."""
    c, w = space.cores, space.wires
    req = space.requirements
    n_turns = turns.astype(float)
    n_par = parallel.astype(float)
    stack_f = stack.astype(float)
    family = c.family[core]
    kind = w.kind[wire]
    breadth = c.breadth_m[core]
    width = c.window_width_m[core]

    round_fit = winding.round_layout(n_turns, n_par, w.outer_m[wire], breadth, width)
    foil_fit = winding.foil_layout(
        n_turns, n_par, w.foil_thickness_m[wire], w.insulation_m[wire], w.foil_width_m[wire],
        breadth, width,
    )
    is_foil = kind == WireKind.FOIL
    layers = np.where(is_foil, foil_fit.layers, round_fit.layers).astype(float)
    per_layer = np.where(is_foil, 1.0, round_fit.conductors_per_layer).astype(float)
    build = np.where(is_foil, foil_fit.build_m, round_fit.build_m)
    fits = np.where(is_foil, foil_fit.fits, round_fit.fits)
    # Foil does not go on a ring (common practice, no source).
    fits = fits & ~(is_foil & (family == Family.TOROID))

    copper_per_turn = w.copper_area_m2[wire] * n_par
    fill = winding.fill_factor(n_turns * copper_per_turn, c.window_area_m2[core])

    toroid_od = c.length_m[core]
    toroid_id = toroid_od - 2.0 * c.leg_width_m[core]
    box_e = geometry.wound_box_e_type(
        c.length_m[core], c.width_m[core], c.height_m[core], c.leg_depth_m[core], stack_f,
        c.bobbin_wall_m[core], build,
    )
    box_pot = geometry.wound_box_pot(c.length_m[core], c.height_m[core], stack_f)
    box_ring = geometry.wound_box_toroid(toroid_od, toroid_id, c.height_m[core], stack_f, build)
    box_length, box_width, box_height = (
        np.select([family == Family.E, family == Family.POT, family == Family.TOROID], [e, p, r])
        for e, p, r in zip(box_e, box_pot, box_ring, strict=True)
    )
    footprint = geometry.footprint(box_length, box_width)
    volume = geometry.box_volume(box_length, box_width, box_height)
    return {
        "layers": layers,
        "conductors_per_layer": per_layer,
        "build_m": build,
        "fill_factor": fill,
        "copper_area_m2": copper_per_turn,
        "box_length_m": box_length,
        "box_width_m": box_width,
        "box_height_m": box_height,
        "footprint_m2": footprint,
        "volume_m3": volume,
        "violation_window_fit": np.where(fits, -1.0, 1.0 + np.maximum(build / width - 1.0, 0)),
        "violation_fill_factor": fill / req.max_fill_factor - 1.0,
        "violation_height": box_height / req.max_height_m - 1.0,
        "violation_footprint": footprint / req.max_footprint_m2 - 1.0,
        "violation_volume": volume / req.max_volume_m3 - 1.0,
    }


@_quiet
def winding_layout_rest(
    space: DesignSpace,
    core: np.ndarray,
    stack: np.ndarray,
    turns: np.ndarray,
    wire: np.ndarray,
    parallel: np.ndarray,
    fit: dict[str, np.ndarray],
) -> dict[str, np.ndarray]:
    """The rest of `winding_layout_stage` for windings whose `winding_fit_stage` outputs
    are ``fit`` (row-aligned): MLT, DC resistance, surface, copper mass and cost, and the
    litz model's range flag."""
    c, w = space.cores, space.wires
    req = space.requirements
    n_turns = turns.astype(float)
    stack_f = stack.astype(float)
    family = c.family[core]
    kind = w.kind[wire]
    build = fit["build_m"]
    copper_per_turn = fit["copper_area_m2"]
    leg_perimeter = np.where(
        family == Family.POT,
        np.pi * c.leg_width_m[core],
        2.0 * (c.leg_width_m[core] + c.leg_depth_m[core] * stack_f),
    )
    toroid_od = c.length_m[core]
    toroid_id = toroid_od - 2.0 * c.leg_width_m[core]
    mlt = np.where(
        family == Family.TOROID,
        winding.mean_turn_length_toroid(toroid_od, toroid_id, c.height_m[core] * stack_f, build),
        winding.mean_turn_length(leg_perimeter, c.bobbin_wall_m[core], build),
    )
    rdc20 = winding.dc_resistance(COPPER_RESISTIVITY_20C, mlt, n_turns, copper_per_turn)
    copper_mass = geometry.copper_mass(n_turns, mlt, copper_per_turn)
    return {
        "mlt_m": mlt,
        "dc_resistance_20C_ohm": rdc20,
        "surface_m2": geometry.surface_area_box(
            fit["box_length_m"], fit["box_width_m"], fit["box_height_m"]),
        "copper_mass_kg": copper_mass,
        "copper_cost": copper_mass * w.price_per_kg[wire] + n_turns * req.labour_per_turn,
        "outside_litz_model": (kind == WireKind.LITZ) & ac_resistance.litz_outside_range(
            w.strand_diameter_m[wire], space.operating.frequency_Hz, LITZ_CHECK_RESISTIVITY
        ),
    }


@_quiet
def winding_loss_stage(
    space: DesignSpace,
    turns: np.ndarray,
    wire: np.ndarray,
    parallel: np.ndarray,
    layout: dict[str, np.ndarray],
    core: np.ndarray,
) -> dict[str, np.ndarray]:
    """DC winding loss at every operating point (shape (n, K)) and AC resistance per
    harmonic (shape (n, H)) at the two temperatures of `WINDING_REFERENCE_TEMPERATURES_C`,
    for windings laid out by `winding_layout_stage` (row-aligned ``layout``).

    ``winding_ac_unit_{lo,hi}_W`` (n, J) is the AC loss of a CCM triangle of 1 A peak to
    peak at each instant (its shape, the duty ratio, does not depend on the inductance; a
    unipolar bridge's ripple lies on the even harmonics), or of a waveform file's own
    current; a design's CCM AC loss is this times its ``instant_ac_scale`` (ripple
    squared, 1 for a file). `winding_ac_loss` combines these with each design's own
    current. The DC loss is the resistance times the mean square of the switching-period
    average current over the point (the line-frequency current of a line-cycle point,
    whose skin effect at the line's harmonics is neglected).
    """
    op = space.operating
    n_turns = turns.astype(float)
    n_par = parallel.astype(float)
    kind = space.wires.kind[wire]
    breadth = space.cores.breadth_m[core]
    n_harm = op.harmonics_A.shape[1]
    # The switching frequency is common to all operating points, so the AC factors are
    # evaluated once per winding and weighted by each point's harmonic amplitudes.
    freq = op.frequency_Hz * np.arange(1, n_harm + 1, dtype=float)[None, :]
    dc_sq = op.point_dc_sq  # (K,) mean square of the low-frequency current
    unit_sq_half = 0.5 * op.unit_spectrum**2  # (J, H)
    # The AC factors depend on fewer axes than the winding: not on the stack, nor (round
    # wire, foil) on the turns except through the layer count. Evaluate each distinct
    # (wire, core window, conductors per layer, layers | turns, strands) case once.
    if space.requirements.ac_resistance == "dowell":
        unique_rows, inverse = _distinct_ac_cases(space, wire, kind, core, layout, turns,
                                                  parallel)
    else:  # a registered model may read every field of its windings
        unique_rows = inverse = np.arange(len(wire))
    u_wire, u_kind = wire[unique_rows], kind[unique_rows]
    out = {}
    for label, temp in zip(("lo", "hi"), WINDING_REFERENCE_TEMPERATURES_C, strict=True):
        rho = float(winding.copper_resistivity(temp))
        factors = _ac_factors(
            space, u_wire, u_kind, layout["conductors_per_layer"][unique_rows],
            layout["layers"][unique_rows], n_turns[unique_rows], n_par[unique_rows],
            breadth[unique_rows], freq, rho,
        )
        rdc = layout["dc_resistance_20C_ohm"] * (rho / COPPER_RESISTIVITY_20C)
        out[f"winding_dc_{label}_W"] = rdc[:, None] * dc_sq[None, :]
        # Row-wise sums (not a matrix product, whose rounding may depend on the batch) keep
        # a design's figures the same whichever batch it is evaluated in.
        out[f"winding_ac_unit_{label}_W"] = rdc[:, None] * _rowwise(factors, unit_sq_half)[inverse]
        out[f"harmonic_resistance_{label}_ohm"] = rdc[:, None] * factors[inverse]
        gap_coefficient = _gap_loss_coefficient(
            space, wire, kind, core, layout, n_turns, n_par, freq[0], rho
        )
        out[f"gap_harmonic_coefficient_{label}_W_per_A2"] = gap_coefficient
        out[f"winding_gap_unit_{label}_W"] = _rowwise(gap_coefficient, 2.0 * unit_sq_half)
    return out


#: Stage outputs with a harmonic axis; a search joining stage outputs leaves them out of
#: the per-candidate gather and hands them to `winding_ac_loss` with row indices.
HARMONIC_KEYS = (
    "harmonics_A", "harmonic_resistance_lo_ohm", "harmonic_resistance_hi_ohm",
    "gap_harmonic_coefficient_lo_W_per_A2", "gap_harmonic_coefficient_hi_W_per_A2",
    # Per instant (J): `winding_ac_loss` reads them by row and averages over each point.
    "instant_ac_scale", "instant_dcm", "instant_core_loss_W", "instant_peak_A",
    "instant_valley_A", "instant_ripple_A",
    "winding_ac_unit_lo_W", "winding_ac_unit_hi_W", "winding_gap_unit_lo_W",
    "winding_gap_unit_hi_W",
)


def winding_ac_loss(
    mag: dict[str, np.ndarray],
    mag_rows: np.ndarray,
    wdg: dict[str, np.ndarray],
    wdg_rows: np.ndarray,
    block: int = 65_536,
    *,
    operating: OperatingArrays,
    instants: bool = False,
) -> dict[str, np.ndarray]:
    """AC winding loss and gap loss in the winding (n, K) at both reference temperatures of
    the candidates joining magnetic row ``mag_rows[i]`` with winding row ``wdg_rows[i]``.

    Each instant's loss is averaged over its point with ``operating`` (the design space's
    `OperatingArrays`; a line-cycle point has several instants); ``instants=True`` also
    returns the per-instant losses as ``instant_winding_{ac,gap}_{lo,hi}_W`` (n, J).

    CCM: the unit-ripple loss times the design's ripple squared (the triangle's shape is
    fixed by the duty ratio). DCM: the sum over harmonics of R_n c_n^2 / 2 with the design's
    own harmonic amplitudes c_n (`pulse_harmonics`), as the shape changes with D1 and D2.
    The gap loss follows the same split and is scaled by the square of the share of the
    MMF that sits across the gap (``gap_mmf_share``).
    """
    ripple_sq = mag["instant_ac_scale"][mag_rows]
    dcm = mag["instant_dcm"][mag_rows]
    share_sq = (mag["gap_mmf_share"][mag_rows] ** 2)[:, None]
    reduce = operating.mean
    out = {}
    for label in ("lo", "hi"):
        loss = wdg[f"winding_ac_unit_{label}_W"][wdg_rows] * ripple_sq
        gap = wdg[f"winding_gap_unit_{label}_W"][wdg_rows] * ripple_sq
        resistance = wdg[f"harmonic_resistance_{label}_ohm"]
        coefficient = wdg[f"gap_harmonic_coefficient_{label}_W_per_A2"]
        for k in np.flatnonzero(dcm.any(axis=0)):
            rows = np.flatnonzero(dcm[:, k])
            for start in range(0, rows.size, block):
                sel = rows[start:start + block]
                amp = mag["harmonics_A"][mag_rows[sel], k, :]
                loss[sel, k] = 0.5 * np.einsum("ih,ih->i", resistance[wdg_rows[sel]], amp * amp)
                gap[sel, k] = np.einsum("ih,ih->i", coefficient[wdg_rows[sel]], amp * amp)
        out[f"winding_ac_{label}_W"] = reduce(loss)
        out[f"winding_gap_{label}_W"] = reduce(gap * share_sq)
        if instants:
            out[f"instant_winding_ac_{label}_W"] = loss
            out[f"instant_winding_gap_{label}_W"] = gap * share_sq
    return out


def _rowwise(per_row: np.ndarray, per_point: np.ndarray) -> np.ndarray:
    """sum_h per_row[i, h] per_point[k, h] -> (n, K), each element summed on its own."""
    return (per_row[:, None, :] * per_point[None, :, :]).sum(axis=-1)


def _gap_loss_coefficient(space, wire, kind, core, layout, n_turns, n_par, harmonic_freq, rho):
    """Extra eddy loss per squared current-harmonic amplitude [W/A^2], shape (n, H), of the
    conductors near a centre-leg gap carrying the winding's whole MMF (`winding_ac_loss`
    scales it by the square of the magnetic stage's ``gap_mmf_share``).

    Each layer's mean squared field in excess of the 1-D (Dowell) field,
    `gap_field.gap_fringing_excess` (distances from the bobbin wall and the layer pitch the
    layout knows), times the exact transverse-field loss of its round conductors or litz
    strands, `gap_field.round_conductor_transverse_loss`, summed over the layers, along the
    mean turn length. Foil is left out (its low-frequency sheet formula has no support at
    practical widths; the record notes it)."""
    c, w = space.cores, space.wires
    is_litz = kind == WireKind.LITZ
    diameter = np.where(is_litz, w.strand_diameter_m[wire], w.bare_diameter_m[wire])
    strands = np.where(is_litz, w.strands[wire], 1.0)
    pitch = w.outer_m[wire]
    per_layer = layout["conductors_per_layer"]
    layers = layout["layers"]
    conductors = n_turns * n_par
    height = c.breadth_m[core]
    wall = c.bobbin_wall_m[core]
    # Sum over layers of conductors x excess field (units of (F_g/h)^2); the last layer
    # holds what is left.
    geometry_sum = np.zeros(len(wire))
    before = np.zeros(len(wire))
    # Layer by layer, only the windings that have that layer (the others add nothing).
    deepest_first = np.argsort(-layers, kind="stable")
    depth = layers[deepest_first]
    for layer in range(int(layers.max(initial=0))):
        rows = deepest_first[: int(np.searchsorted(-depth, -layer, side="left"))]
        in_layer = np.clip(conductors[rows] - before[rows], 0.0, per_layer[rows])
        distance = wall[rows] + (layer + 0.5) * pitch[rows]
        fraction = 1.0 - (before[rows] + 0.5 * in_layer) / conductors[rows]
        with np.errstate(divide="ignore", invalid="ignore"):
            excess = gap_field.gap_fringing_excess(
                distance, in_layer * pitch[rows], height[rows], fraction
            )
        geometry_sum[rows] += np.where(in_layer > 0, in_layer * excess, 0.0)
        before[rows] += in_layer
    geometry = geometry_sum * strands * layout["mlt_m"] * n_turns**2 / height**2
    # The conductor's loss per squared field depends on the wire alone: once per wire.
    _, first, inverse = np.unique(wire, return_index=True, return_inverse=True)
    per_field = gap_field.round_conductor_transverse_loss(
        harmonic_freq[None, :], rho, diameter[first][:, None]
    )[inverse]  # (n, H) W/m per (A/m)^2
    # Toroids have no discrete gap; foil is not estimated (see above).
    skip = (kind == WireKind.FOIL) | (c.family[core] == Family.TOROID)
    return np.where(skip[:, None], 0.0, geometry[:, None] * per_field)


def _distinct_ac_cases(space, wire, kind, core, layout, turns, parallel):
    """Rows that are distinct as far as the AC factor goes, and the map back to all rows."""
    zero = np.zeros_like(wire)
    is_round, is_litz = kind == WireKind.ROUND, kind == WireKind.LITZ
    per_layer = layout["conductors_per_layer"].astype(np.int64)
    layers = layout["layers"].astype(np.int64)
    fields = (
        wire,
        np.where(kind == WireKind.FOIL, zero, core),  # foil: porosity 1, the window does not matter
        np.where(is_round, per_layer, zero),
        np.where(is_litz, zero, layers),
        np.where(is_litz, turns, zero),
        np.where(is_litz, parallel, zero),
    )
    dims = tuple(int(f.max()) + 1 for f in fields)
    key = np.ravel_multi_index(fields, dims)
    _, first, inverse = np.unique(key, return_index=True, return_inverse=True)
    return first, inverse


def _ac_factors(space, wire, kind, per_layer, layers, n_turns, n_par, breadth, freq, rho):
    """AC resistance factor per harmonic, shape (n, H), by the study's AC-resistance model
    (`ac_resistance.AC_RESISTANCE_MODELS`)."""
    w = space.wires

    def col(values) -> np.ndarray:
        return np.asarray(values, dtype=float)[:, None]

    winding = ac_resistance.WindingAC(
        kind=np.asarray(kind)[:, None], bare_diameter_m=col(w.bare_diameter_m[wire]),
        strands=col(w.strands[wire]), strand_diameter_m=col(w.strand_diameter_m[wire]),
        foil_thickness_m=col(w.foil_thickness_m[wire]), turns_per_layer=col(per_layer),
        layers=col(layers), turns=col(n_turns), parallel=col(n_par), breadth_m=col(breadth),
    )
    model = ac_resistance.AC_RESISTANCE_MODELS[space.requirements.ac_resistance]
    return np.broadcast_to(model(freq, rho, winding), (len(wire), freq.shape[-1]))


# ---------------------------------------------------------------------------------------
# Stage 3: the whole candidate: temperatures, objectives, remaining constraints
# ---------------------------------------------------------------------------------------


def loss_quadratic(space: DesignSpace, material: np.ndarray, mag: dict, wdg: dict):
    """Coefficients (a0, a1, a2), each (n, K), of the total loss P(T) = a0 + a1 T + a2 T^2
    [W, T in degC]: core loss times ct0 - ct1 T + ct2 T^2 plus the winding loss on the line
    through its two reference temperatures."""
    m = space.materials
    t_lo, t_hi = WINDING_REFERENCE_TEMPERATURES_C
    core_ref = mag["core_loss_reference_W"]
    wind_lo = wdg["winding_dc_lo_W"] + wdg["winding_ac_lo_W"] + wdg["winding_gap_lo_W"]
    wind_hi = wdg["winding_dc_hi_W"] + wdg["winding_ac_hi_W"] + wdg["winding_gap_hi_W"]
    slope = (wind_hi - wind_lo) / (t_hi - t_lo)
    a0 = core_ref * m.ct0[material][:, None] + wind_lo - slope * t_lo
    a1 = -core_ref * m.ct1[material][:, None] + slope
    a2 = core_ref * m.ct2[material][:, None]
    return a0, a1, a2


def _visible_winding_fraction(space: DesignSpace, core: np.ndarray, wdg: dict) -> np.ndarray:
    """Share of the free faces' area where the winding, not the core, is seen: all of a
    ring, none of a pot core, the winding's two ends beyond an E core (each as wide as
    the centre leg plus bobbin wall and build, as high as the window) (common practice, no
    source)."""
    c = space.cores
    family = c.family[core]
    length, width, height = wdg["box_length_m"], wdg["box_width_m"], wdg["box_height_m"]
    free_area = length * width + 2.0 * (length + width) * height
    ends = 2.0 * (c.leg_width_m[core] + 2.0 * (c.bobbin_wall_m[core] + wdg["build_m"]))
    e_share = np.clip(ends * c.breadth_m[core] / free_area, 0.0, 1.0)
    return np.select([family == Family.E, family == Family.POT], [e_share, 0.0], 1.0)


def thermal_setup(
    space: DesignSpace, core: np.ndarray, stack: np.ndarray, wdg: dict
) -> tuple[float, dict, np.ndarray]:
    """How each candidate sheds heat under the study's cooling, for the thermal solver.

    Returns (reference temperature [degC], keyword arguments of
    `heat_balance.loss_temperature_fixed_point` other than the loss, per-candidate flag "the
    conduction model is inside its range"); arrays are per candidate, shape (n,).
    """
    req, cool, c = space.requirements, space.requirements.cooling, space.cores
    length, width, height = wdg["box_length_m"], wdg["box_width_m"], wdg["box_height_m"]
    n = len(length)
    share = _visible_winding_fraction(space, core, wdg)
    kwargs = {
        "surface_m2": wdg["surface_m2"],
        "height_m": height,
        "length_m": length,
        "width_m": width,
        "emissivity": share * cool.winding_emissivity + (1.0 - share) * cool.core_emissivity,
        "ve_m3": c.ve_m3[core] * stack.astype(float),
        "model": req.thermal_model,
    }
    reference = req.ambient_C
    inside = np.ones(n, dtype=bool)
    if cool.mode == "forced_air":
        kwargs["air_speed_m_s"] = cool.air_speed_m_s
    elif cool.mode == "on_board":
        g_board = cool.board_path_factor * heat_paths.board_conductance(
            geometry.footprint(length, width), wdg["copper_area_m2"], cool.board_copper_area_m2
        )
        kwargs["fixed_conductance_W_K"] = g_board
        kwargs["heat_offset_W"] = g_board * (cool.board_temperature_C - req.ambient_C)
    elif cool.mode == "enclosure":
        kwargs["enclosure"] = heat_paths.Enclosure(cool.enclosure_volume_m3, cool.core_emissivity)
    elif cool.mode == "potted":
        t = cool.potting_thickness_m
        shape, inside = heat_paths.potting_shape_factor(length, width, height, t)
        if cool.potting_shape == "faces_only":
            shape = (length * width + 2.0 * (length + width) * height) / t
        elif cool.potting_shape == "outer_faces":
            outer_l, outer_w = length + 2.0 * t, width + 2.0 * t
            shape = (outer_l * outer_w + 2.0 * (outer_l + outer_w) * (height + t)) / t
        kwargs["fixed_conductance_W_K"] = cool.potting_conductivity_W_mK * shape
        kwargs["air_exposed"] = 0.0
        reference = cool.wall_temperature_C
    return reference, kwargs, np.broadcast_to(inside, (n,))


@_quiet
def certainly_too_hot(
    space: DesignSpace, material: np.ndarray, stack: np.ndarray, core: np.ndarray,
    mag: dict, wdg: dict, loss_coefficients: tuple | None = None,
) -> np.ndarray:
    """True where a candidate cannot settle at or below the temperature limit at some
    operating point: its smallest loss between the reference temperature (ambient, or the
    wall of a potted part) and the limit, plus the heat a warmer board pushes in, already
    exceeds the heat it could shed with its surface at the limit (heat shed grows with
    temperature; in an enclosure the box's own heat curve at the full rise bounds it too).
    The hot spot is never below the surface, so this stays an exact screen: no feasible
    candidate is ever flagged."""
    req = space.requirements
    a0, a1, a2 = loss_coefficients or loss_quadratic(space, material, mag, wdg)
    t_a, kwargs, _ = thermal_setup(space, core, stack, wdg)
    t_max = req.max_temperature_C
    with np.errstate(divide="ignore", invalid="ignore"):
        vertex = np.clip(np.where(a2 > 0, -a1 / (2 * a2), t_a), t_a, t_max)
    p_min = np.minimum(
        np.minimum(a0 + a1 * t_a + a2 * t_a**2, a0 + a1 * t_max + a2 * t_max**2),
        a0 + a1 * vertex + a2 * vertex**2,
    )
    offset = kwargs.pop("heat_offset_W", 0.0)
    enclosure = kwargs.pop("enclosure", None)
    model_name = kwargs.pop("model")
    q_max = heat_balance.heat_shed(
        t_max - t_a, t_a, kwargs.pop("surface_m2"), kwargs.pop("height_m"),
        kwargs.pop("emissivity"), model_name, kwargs.pop("ve_m3"), **kwargs,
    )
    if enclosure is not None:
        q_max = np.minimum(q_max, heat_paths.enclosure_heat_shed(t_max - t_a, t_a, enclosure))
    return np.any(p_min + np.asarray(offset)[..., None] > q_max[:, None], axis=1)


def hot_spot_rise(
    space: DesignSpace, core: np.ndarray, stack: np.ndarray, wire: np.ndarray, wdg: dict,
    winding_loss_W: np.ndarray, core_loss_W: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Rise of the hottest point over the surface, (winding, core), each (n, K) [K].

    Winding: its loss generated evenly in a slab of the winding's build, cooled on its
    outer face only (the inner face on the bobbin taken as insulated), of area MLT x
    window breadth, conducting across the layers (`heat_paths.winding_conductivity_across_layers`,
    copper and insulation in series). Core: its loss generated evenly in the centre leg
    (ring: its cross-section), conducted to both faces across the smaller side of the leg
    (`heat_paths.slab_generation_rise`, plane wall with generation). Common-practice geometry
    (no source); the conduction laws from Incropera et al., 6th ed., ch. 3."""
    c, w = space.cores, space.wires
    pitch = w.outer_m[wire]
    copper = np.where(w.kind[wire] == WireKind.FOIL, w.foil_thickness_m[wire],
                      w.copper_area_m2[wire] / np.maximum(pitch, 1e-12))
    k_winding = heat_paths.winding_conductivity_across_layers(pitch, copper)
    area = wdg["mlt_m"] * c.breadth_m[core]
    build = wdg["build_m"]
    winding_rise = heat_paths.slab_generation_rise(
        winding_loss_W, build[:, None], area[:, None], k_winding[:, None]
    )
    family = c.family[core]
    stack_f = stack.astype(float)
    side = np.where(
        family == Family.POT, c.leg_width_m[core],
        np.minimum(c.leg_width_m[core],
                   c.leg_depth_m[core] * np.where(family == Family.E, stack_f, 1)),
    )
    side = np.where(family == Family.TOROID,
                    np.minimum(c.leg_width_m[core], c.height_m[core] * stack_f), side)
    half = 0.5 * side
    ve = c.ve_m3[core] * stack_f
    core_rise = heat_paths.slab_generation_rise(
        core_loss_W, half[:, None], (ve / half)[:, None], heat_paths.CORE_CONDUCTIVITY_W_MK
    )
    return winding_rise, core_rise


@_quiet
def combine_stage(
    space: DesignSpace,
    material: np.ndarray,
    stack: np.ndarray,
    core: np.ndarray,
    turns: np.ndarray,
    mag: dict[str, np.ndarray],
    wdg: dict[str, np.ndarray],
    loss_coefficients: tuple | None = None,
    *,
    wire: np.ndarray,
) -> dict[str, np.ndarray]:
    """Loss-temperature fixed point at every operating point, hot spot, objectives and the
    final constraints, for candidates whose stage outputs ``mag`` and ``wdg`` are
    row-aligned (``wire``, per candidate, sets the winding's conductivity for the hot
    spot). The temperature limit applies to the hot spot."""
    m, c = space.materials, space.cores
    req, op = space.requirements, space.operating
    t_lo, t_hi = WINDING_REFERENCE_TEMPERATURES_C
    core_ref = mag["core_loss_reference_W"]
    a0, a1, a2 = loss_coefficients or loss_quadratic(space, material, mag, wdg)
    reference_C, kwargs, conduction_inside = thermal_setup(space, core, stack, wdg)
    per_point = {
        name: (value[:, None] if isinstance(value, np.ndarray) and value.ndim == 1 else value)
        for name, value in kwargs.items()
    }
    fixed = heat_balance.loss_temperature_fixed_point(reference_C, (a0, a1, a2), **per_point)
    temperature = fixed.temperature_C
    runaway = fixed.runaway
    safe_t = np.where(runaway, req.max_temperature_C, temperature)
    ct = coreloss.core_loss_temperature_factor(
        safe_t, m.ct0[material][:, None], m.ct1[material][:, None], m.ct2[material][:, None]
    )
    fraction = (safe_t - t_lo) / (t_hi - t_lo)
    core_loss = core_ref * ct
    dc_loss = wdg["winding_dc_lo_W"] + fraction * (wdg["winding_dc_hi_W"] - wdg["winding_dc_lo_W"])
    ac_loss = (
        wdg["winding_ac_lo_W"] + fraction * (wdg["winding_ac_hi_W"] - wdg["winding_ac_lo_W"])
    )
    gap_loss = (
        wdg["winding_gap_lo_W"] + fraction * (wdg["winding_gap_hi_W"] - wdg["winding_gap_lo_W"])
    )
    point_loss = core_loss + dc_loss + ac_loss + gap_loss
    weighted_loss = (point_loss * op.share[None, :]).sum(axis=1)
    winding_rise, core_rise = hot_spot_rise(
        space, core, stack, wire, wdg, dc_loss + ac_loss + gap_loss, core_loss
    )
    hot_rise = np.maximum(winding_rise, core_rise)
    hotspot = np.where(runaway, thermal.RUNAWAY_TEMPERATURE_C, temperature + hot_rise)
    worst_t = temperature.max(axis=1)
    worst_hot = hotspot.max(axis=1)
    any_runaway = runaway.any(axis=1)
    core_mass = geometry.core_mass(c.ve_m3[core], m.density[material], stack.astype(float))
    mass = core_mass + wdg["copper_mass_kg"]
    cost = (
        c.price[core] * stack * m.price_factor[material] + wdg["copper_cost"]
    )
    temperature_span = req.max_temperature_C - req.ambient_C
    energy = geometry.energy_cost(weighted_loss, req.operating_hours, req.energy_price_per_kWh)
    return {
        "temperature_C": temperature,
        "hotspot_temperature_C": hotspot,
        "runaway": runaway,
        # Per-candidate validity flag (the "thermal_model" flag of the range flags): some
        # correlation or compound shape ran outside its published range at some point.
        "outside_thermal_model": ~(np.all(fixed.inside_range, axis=1) & conduction_inside),
        "core_loss_W": core_loss,
        "winding_dc_loss_W": dc_loss,
        "winding_ac_loss_W": ac_loss,
        "winding_gap_loss_W": gap_loss,
        "point_loss_W": point_loss,
        "core_loss_temperature_factor": ct,
        "weighted_loss_W": weighted_loss,
        "worst_temperature_C": np.where(any_runaway, thermal.RUNAWAY_TEMPERATURE_C, worst_t),
        "worst_hotspot_temperature_C": np.where(
            any_runaway, thermal.RUNAWAY_TEMPERATURE_C, worst_hot
        ),
        "volume_cm3": wdg["volume_m3"] * 1e6,
        "mass_g": mass * 1e3,
        "cost": cost,
        "energy_cost": energy,
        "lifetime_cost": cost + energy,
        "violation_temperature": np.where(
            any_runaway, 1.0, (worst_hot - req.max_temperature_C) / temperature_span
        ),
        "violation_loss_budget": weighted_loss / req.max_loss_W - 1.0,
        "violation_mass": mass / req.max_mass_kg - 1.0,
    }


# ---------------------------------------------------------------------------------------
# Flat evaluation
# ---------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Candidates:
    """Flat candidate arrays (indices into the design space's tables)."""

    core: np.ndarray
    stack: np.ndarray
    material: np.ndarray
    turns: np.ndarray
    gap_option: np.ndarray
    wire: np.ndarray
    parallel: np.ndarray

    def __len__(self) -> int:
        return len(self.core)

    @classmethod
    def from_arrays(cls, **arrays) -> Candidates:
        n = max(np.size(v) for v in arrays.values())
        return cls(**{k: np.broadcast_to(np.asarray(v, dtype=np.int64), (n,)).copy()
                      for k, v in arrays.items()})

    def take(self, index) -> Candidates:
        return Candidates(**{k: getattr(self, k)[index] for k in self.__dataclass_fields__})


def violations_matrix(metrics: dict[str, np.ndarray]) -> np.ndarray:
    """Normalised violations in `CONSTRAINTS` order, shape (n, C); > 0 means violated."""
    return np.stack([metrics[f"violation_{name}"] for name in CONSTRAINTS], axis=1)


def first_violated(violations: np.ndarray) -> np.ndarray:
    """Code (`Constraint`, the index into `CONSTRAINTS`) of the first violated constraint,
    or `FEASIBLE` (-1)."""
    bad = violations > 0
    first = np.argmax(bad, axis=1)
    return np.where(bad.any(axis=1), first, FEASIBLE)


def evaluate(space: DesignSpace, candidates: Candidates) -> dict[str, np.ndarray]:
    """Every figure, constraint violation and objective for flat candidate arrays."""
    cand = candidates
    mag = magnetic_stage(space, cand.core, cand.stack, cand.material, cand.turns,
                         cand.gap_option)
    wdg = winding_layout_stage(space, cand.core, cand.stack, cand.turns, cand.wire,
                               cand.parallel)
    wdg.update(winding_loss_stage(space, cand.turns, cand.wire, cand.parallel, wdg, cand.core))
    rows = np.arange(len(cand))
    wdg.update(winding_ac_loss(mag, rows, wdg, rows, operating=space.operating))
    final = combine_stage(space, cand.material, cand.stack, cand.core, cand.turns, mag, wdg,
                          wire=cand.wire)
    metrics = {**mag, **wdg, **final}
    violations = violations_matrix(metrics)
    metrics["feasible"] = ~(violations > 0).any(axis=1)
    metrics["first_violated"] = first_violated(violations)
    metrics["worst_violation"] = violations.max(axis=1)
    return metrics


def objective_matrix(metrics: dict[str, np.ndarray], objectives: list[str]) -> np.ndarray:
    """Objective columns (minimised) in the study's order, shape (n, n_objectives)."""
    return np.stack([metrics[OBJECTIVE_COLUMNS[name]] for name in objectives], axis=1)


# ---------------------------------------------------------------------------------------
# Figures for the records of a few chosen designs (front, short-list, near misses)
# ---------------------------------------------------------------------------------------

#: Wire added at each end of a winding for its leads when the wire is cut [m]
#: (common practice, no source).
LEAD_ALLOWANCE_M = 0.05

#: RMS current density the hand sizing procedure assumes [A/m^2] (4 A/mm^2; common
#: practice for naturally cooled inductors, no source).
HAND_CURRENT_DENSITY_A_PER_M2 = 4.0e6


def converter_peak_and_rms_A(space: DesignSpace) -> tuple[np.ndarray, np.ndarray]:
    """Peak and RMS inductor current [A] of each operating point at the required
    inductance (RMS from the DC value and the harmonic amplitudes, Parseval)."""
    op = space.operating
    mean_square = op.dc_A**2 + 0.5 * np.sum(op.harmonics_A**2, axis=1)
    rms = np.sqrt(op.mean(mean_square[None, :])[0])
    return op.most(np.abs(op.peak_A)[None, :])[0], rms


def area_product_required_m4(space: DesignSpace, material: np.ndarray) -> np.ndarray:
    """Area product [m^4] the energy-storage sizing method asks of a core of ``material``:
    required inductance, the highest peak and RMS converter currents, the material's flux
    limit, `HAND_CURRENT_DENSITY_A_PER_M2` and the study's fill limit as window use."""
    req = space.requirements
    peak, rms = converter_peak_and_rms_A(space)
    return sizing.area_product_required(
        req.inductance_H, float(peak.max()), float(rms.max()),
        saturation_limits(space, material)[1], HAND_CURRENT_DENSITY_A_PER_M2, req.max_fill_factor,
    )


@_quiet
def saturation_limits(space: DesignSpace, material: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Bsat at the temperature limit [T] and the allowed peak flux density [T] (the flux
    margin times that Bsat), which the saturation constraint checks the peak flux on Amin
    against."""
    m, req = space.materials, space.requirements
    bsat = saturation.bsat_at_temperature(
        req.max_temperature_C, m.bsat_25C_T[material], m.bsat_100C_T[material]
    )
    return bsat, req.flux_margin * bsat


@_quiet
def design_details(
    space: DesignSpace, candidates: Candidates, metrics: dict[str, np.ndarray]
) -> dict[str, np.ndarray]:
    """Figures a build record needs beyond those the search ranks on, for a few evaluated
    candidates (``metrics`` from `evaluate`, row-aligned).

    Per operating point (n, K): ``dc_resistance_ohm`` at the settled temperature (the
    resistance the DC winding loss was computed with; a runaway point at the temperature
    limit). Per design (n,): ``al_value_H`` (inductance at zero current per turn squared),
    ``gap_centre_leg_m`` and ``gap_outer_leg_m`` (a ground centre leg gaps the centre leg
    only; a spacer gaps every leg by its thickness), ``gap_spacer`` (bool),
    ``winding_length_m`` (turns x MLT, one conductor), ``wire_length_m`` (each
    parallel conductor with `LEAD_ALLOWANCE_M` at both ends, all conductors together),
    ``copper_mass_kg``, area product and geometry coefficient with their required values.
    """
    c, req = space.cores, space.requirements
    core, stack, material = candidates.core, candidates.stack.astype(float), candidates.material
    n_turns = candidates.turns.astype(float)
    n_par = candidates.parallel.astype(float)
    temperature = np.where(metrics["runaway"], req.max_temperature_C, metrics["temperature_C"])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityRangeWarning)
        rho = winding.copper_resistivity(temperature)
    rdc = metrics["dc_resistance_20C_ohm"][:, None] * (rho / COPPER_RESISTIVITY_20C)
    ae = c.ae_m2[core] * stack
    window = c.window_area_m2[core]
    winding_length = n_turns * metrics["mlt_m"]
    peak, _ = converter_peak_and_rms_A(space)
    limit = saturation_limits(space, material)[1]
    return {
        "dc_resistance_ohm": rdc,
        "al_value_H": metrics["inductance_H"] / n_turns**2,
        "gap_centre_leg_m": metrics["gap_m"],
        "gap_outer_leg_m": np.where(
            space.gap_option_spacer(candidates.gap_option), metrics["gap_m"], 0.0
        ),
        "gap_spacer": space.gap_option_spacer(candidates.gap_option) & (metrics["gap_m"] > 0),
        "winding_length_m": winding_length,
        "wire_length_m": n_par * (winding_length + 2 * LEAD_ALLOWANCE_M),
        "area_product_m4": sizing.area_product(ae, window),
        "area_product_required_m4": area_product_required_m4(space, material),
        "geometry_coefficient_m5": sizing.geometry_coefficient(ae, window, metrics["mlt_m"]),
        "geometry_coefficient_required_m5": sizing.geometry_coefficient_required(
            req.inductance_H, float(peak.max()), metrics["dc_resistance_20C_ohm"], limit,
            req.max_fill_factor,
        ),
    }


@_quiet
def inductance_curve(
    space: DesignSpace,
    candidates: Candidates,
    metrics: dict[str, np.ndarray],
    current_A: np.ndarray,
) -> np.ndarray:
    """Incremental inductance [H] of each candidate at the currents ``current_A`` (n, P),
    by the model's own large-signal law (`inductance_versus_current`): the powder roll-off,
    or the ferrite's Fröhlich-Kennelly soft saturation with the Bsat of the hottest allowed
    temperature — the curve that gives ``inductance_at_peak_H`` and the ripple."""
    inductance, _ = inductance_versus_current(
        space, candidates.core, candidates.stack, candidates.material, candidates.turns,
        candidates.gap_option, metrics["gap_m"], current_A,
    )
    return inductance


def line_cycle_profile(
    space: DesignSpace, candidates: Candidates, metrics: dict[str, np.ndarray], i: int
) -> dict[str, np.ndarray]:
    """Where along the line cycle evaluated design ``i`` (row of ``metrics`` from
    `evaluate`) loses its power: per instant (J,) its peak and valley current, DCM, and the
    core and winding loss (DC, AC and gap) at its point's settled temperature [W], the
    same figures the point's averages are made of."""
    op = space.operating
    rows = np.array([i])
    per_instant = winding_ac_loss(metrics, rows, metrics, rows, operating=op, instants=True)
    temperature = np.where(metrics["runaway"][i], space.requirements.max_temperature_C,
                           metrics["temperature_C"][i])[op.point]
    t_lo, t_hi = WINDING_REFERENCE_TEMPERATURES_C
    fraction = (temperature - t_lo) / (t_hi - t_lo)
    rdc_lo = metrics["dc_resistance_20C_ohm"][i] * float(
        winding.copper_resistivity(t_lo)) / COPPER_RESISTIVITY_20C
    rdc_hi = metrics["dc_resistance_20C_ohm"][i] * float(
        winding.copper_resistivity(t_hi)) / COPPER_RESISTIVITY_20C
    dc_sq = op.dc_A**2
    lo = rdc_lo * dc_sq + per_instant["instant_winding_ac_lo_W"][0] \
        + per_instant["instant_winding_gap_lo_W"][0]
    hi = rdc_hi * dc_sq + per_instant["instant_winding_ac_hi_W"][0] \
        + per_instant["instant_winding_gap_hi_W"][0]
    ct = metrics["core_loss_temperature_factor"][i][op.point]
    return {
        "peak_A": metrics["instant_peak_A"][i],
        "valley_A": metrics["instant_valley_A"][i],
        "dcm": metrics["instant_dcm"][i],
        "core_loss_W": metrics["instant_core_loss_W"][i] * ct,
        "winding_loss_W": lo + fraction * (hi - lo),
    }


#: Whole-part laws for still free air, applicable as alternatives in "free_air" only.
FREE_AIR_ALTERNATIVES = ("convection", "mclyman", "ferrite_rth")

#: Words for each thermal model in records and reports.
THERMAL_MODEL_WORDS = {
    "faces": "face by face: Churchill-Chu (sides), Lloyd-Moran/Goldstein or Raithby-Hollands "
             "(top), radiation",
    "faces_laminar": "face by face with the laminar Churchill-Chu form on the sides",
    "convection": "one natural-convection coefficient for the whole part (Holman) + radiation",
    "mclyman": "McLyman's temperature rise from loss per surface",
    "ferrite_rth": "ferrite core thermal resistance from Ve (Maniktala)",
    "faces_edges_corners": "compound: plane walls plus edge and corner shape factors",
    "faces_only": "compound: plane walls over the faces only",
    "outer_faces": "compound: plane walls of the outer (wall-side) area",
    "board_path_half": "face by face, board conductance halved",
    "board_path_double": "face by face, board conductance doubled",
}


def thermal_alternatives(space: DesignSpace) -> list[tuple[str, DesignSpace]]:
    """The study's thermal model first, then the published alternatives that apply to its
    cooling: the laminar vertical-face form; in still free air also the whole-part laws;
    for a potted part the lower and upper bounds of the compound's conduction shape; on a
    board also the board path halved and doubled (its terminal length and standoff gap are
    assumptions)."""
    req = space.requirements
    cool = req.cooling
    if cool.mode == "potted":
        shapes = ("faces_edges_corners", "faces_only", "outer_faces")
        return [
            (shape, dataclasses.replace(space, requirements=dataclasses.replace(
                req, cooling=dataclasses.replace(cool, potting_shape=shape))))
            for shape in shapes
        ]
    names = ["faces", "faces_laminar"]
    if cool.mode == "free_air":
        names += list(FREE_AIR_ALTERNATIVES)
    names = [req.thermal_model] + [n for n in names if n != req.thermal_model]
    variants = [
        (name, dataclasses.replace(
            space, requirements=dataclasses.replace(req, thermal_model=name)))
        for name in names
    ]
    if cool.mode == "on_board":
        # The terminal length and the standoff gap are assumptions (common practice, no
        # source): the board path within a factor of two either way.
        variants += [
            (label, dataclasses.replace(space, requirements=dataclasses.replace(
                req, cooling=dataclasses.replace(cool, board_path_factor=factor))))
            for label, factor in (("board_path_half", 0.5), ("board_path_double", 2.0))
        ]
    return variants


def temperature_band(space: DesignSpace, candidates: Candidates) -> dict[str, object]:
    """Spread of the worst hot-spot temperature between the thermal models that apply.

    Each alternative of `thermal_alternatives` is evaluated with the same model otherwise;
    an alternative counts for a design where it is inside its published range and finds
    an equilibrium (Maniktala's ferrite law for ferrite cores only). The study's own model
    always counts. Returns ``low_C`` and ``high_C`` (n,), ``models`` (per design, the names
    that counted) and ``runaway_models`` (per design, the alternatives inside their range
    that find no equilibrium).
    """
    n = len(candidates)
    low = np.full(n, np.inf)
    high = np.full(n, -np.inf)
    counted: list[list[str]] = [[] for _ in range(n)]
    runaway: list[list[str]] = [[] for _ in range(n)]
    ferrite = space.materials.kind[candidates.material] == MaterialKind.FERRITE
    for position, (name, variant) in enumerate(thermal_alternatives(space)):
        metrics = evaluate(variant, candidates)
        hot = metrics["worst_hotspot_temperature_C"]
        stuck = metrics["runaway"].any(axis=1)
        applies = ~metrics["outside_thermal_model"]
        if name == "ferrite_rth":
            applies &= ferrite
        if position == 0:
            applies[:] = True
        use = applies & ~stuck
        low = np.where(use, np.minimum(low, hot), low)
        high = np.where(use, np.maximum(high, hot), high)
        for i in np.flatnonzero(use):
            counted[i].append(name)
        for i in np.flatnonzero(applies & stuck):
            runaway[i].append(name)
    none = ~np.isfinite(low)
    low = np.where(none, np.nan, low)
    high = np.where(none, np.nan, high)
    return {"low_C": low, "high_C": high, "models": counted, "runaway_models": runaway}


def model_flag_names(metrics: dict[str, np.ndarray], i: int) -> list[str]:
    """Names of `MODEL_FLAGS` raised for row ``i`` of evaluated ``metrics``, in declared
    order."""
    return [name for name in MODEL_FLAGS
            if f"outside_{name}" in metrics and bool(metrics[f"outside_{name}"][i])]
