"""Study files: TOML text -> validated, frozen `Study`.

A study states the converter, its operating points, the inductance it needs, the
limits a design must respect, the search settings and the catalogue to search.
`load_study` reports every problem in the file at once, each with its line, its
dotted key (``limits.ambient_C``, ``operating_points[2].input_V``) and a message
that says what is allowed.

Validation happens in two passes: each section is checked on its own (types,
ranges, names), then the checks that tie keys together (shares summing to 1, a buck
stepping down, turns_min <= turns_max, ...) run on every section that passed, so
one bad section does not hide the faults of another.
"""

from __future__ import annotations

import difflib
import json
import math
import os
import re
import tomllib
from collections.abc import Mapping
from pathlib import Path
from typing import Annotated, Any, Literal, get_args

import annotated_types
import numpy as np
from pydantic import (
    AllowInfNan,
    BaseModel,
    ConfigDict,
    Field,
    PrivateAttr,
    Strict,
    StringConstraints,
    ValidationError,
    ValidationInfo,
    field_validator,
    model_validator,
)
from pydantic.fields import FieldInfo

from optimag.codes import OBJECTIVE_COLUMNS
from optimag.errors import InputError, Problem
from optimag.ranges import (
    BATCH,
    BOARD_COPPER_MM2,
    CURRENT_A,
    CUSTOM_DIMENSION_MM,
    ENCLOSURE_VOLUME_CM3,
    ENERGY_PRICE_PER_KWH,
    FLUX_MARGIN,
    FOOTPRINT_MM2,
    FREQUENCY_KHZ,
    GAP_GRID_ENTRIES,
    GAP_MM,
    HEIGHT_MM,
    ID_CHARACTERS,
    INDUCTANCE_UH,
    LINE_FREQUENCY_HZ,
    LINE_STEPS,
    LOSS_W,
    MASS_G,
    MONEY,
    OPERATING_HOURS,
    PARALLEL,
    PHASES_MAX,
    POTTING_THICKNESS_MM,
    POWER_W,
    RIPPLE_FRACTION,
    SEED,
    STACK,
    TEMPERATURE_C,
    TITLE_CHARACTERS,
    TRIALS,
    TURNS,
    VOLTAGE_V,
    VOLUME_CM3,
)
from optimag.study.custom_core import CUSTOM_DIMENSIONS, CustomCore
from optimag.study.tolerance import SPREAD_DEFAULTS, ToleranceSpec
from optimag.study.waveform import ccm_ripple_inductance

# Strict numbers: TOML already types its values, so "12" must stay an error rather than
# be coerced, and nan/inf (legal TOML) are rejected. Every number also has a plausible
# range (`optimag.ranges`, listed in studies/README.md): a value outside it is a typing
# error, and the extremes TOML allows (1e-300, 1e300, 2**63 - 1) would overflow the model
# or make the design space astronomically large.


def _bounded(low: float, high: float) -> Any:
    return Annotated[float, Strict(), AllowInfNan(False), Field(ge=low, le=high)]


def _whole(low: int, high: int) -> Any:
    return Annotated[int, Strict(), Field(ge=low, le=high)]


Fraction = Annotated[float, Strict(), AllowInfNan(False), Field(gt=0, le=1)]
RippleFraction = _bounded(*RIPPLE_FRACTION)
FluxMargin = _bounded(*FLUX_MARGIN)
Percent = Annotated[float, Strict(), AllowInfNan(False), Field(ge=0, le=50)]
Celsius = _bounded(*TEMPERATURE_C)
Frequency = _bounded(*FREQUENCY_KHZ)
Voltage = _bounded(*VOLTAGE_V)
Current = _bounded(*CURRENT_A)
InductanceUH = _bounded(*INDUCTANCE_UH)
LengthMM = _bounded(*HEIGHT_MM)
AreaMM2 = _bounded(*FOOTPRINT_MM2)
LossW = _bounded(*LOSS_W)
Money = _bounded(*MONEY)
GapMM = _bounded(*GAP_MM)
VolumeCM3 = _bounded(*VOLUME_CM3)
MassG = _bounded(*MASS_G)
Text = Annotated[str, Strict()]
Title = Annotated[str, Strict(), StringConstraints(max_length=TITLE_CHARACTERS)]
Name = Annotated[str, Strict(), StringConstraints(min_length=1, max_length=ID_CHARACTERS)]
Slug = Annotated[str, Strict(), StringConstraints(pattern=r"^[a-z0-9-]+$", max_length=64)]
#: A model's name in its registry (`optimag.registry`); checked against the registry.
ModelName = Annotated[str, Strict(), StringConstraints(max_length=64)]

#: Ripple fraction used when a study states neither an inductance nor a ripple
#: fraction: 40 % peak-to-peak of the average current (common practice, no source).
DEFAULT_RIPPLE_FRACTION = 0.4

#: Tolerance on the sum of the operating points' time shares.
TIME_SHARE_TOLERANCE = 1e-6


class _Section(BaseModel):
    # The docstring under each field is its description in the study-file reference
    # (`optimag.study.reference` reads it from the source; pydantic's own docstring reading
    # would parse these sources at every start of the command).
    model_config = ConfigDict(frozen=True, extra="forbid")


class StudyInfo(_Section):
    """``[study]``: identity of the study."""

    name: Slug
    """Short name of the study; names the run folder (lowercase letters, digits, '-')."""
    title: Title
    """Free-text title shown in the report."""


class Converter(_Section):
    """``[converter]``: topology and switching frequency."""

    topology: Literal["buck", "boost", "buck-boost", "multiphase-buck", "pfc-boost",
                      "inverter-filter"]
    """Converter topology; buck-boost is the inverting buck-boost (output magnitude);
    multiphase-buck is interleaved buck phases with one uncoupled inductor each (give
    phases); pfc-boost is a power-factor-correction boost over the line cycle (fixed
    switching frequency, average current control); inverter-filter is the output filter
    inductor of a single-phase full-bridge inverter over the line cycle (give
    modulation)."""
    switching_frequency_kHz: Frequency
    """Switching frequency, common to every operating point (the carrier frequency of an
    inverter bridge)."""
    phases: Annotated[int, Strict(), Field(ge=2, le=PHASES_MAX)] | None = None
    """Number of interleaved phases of a multiphase-buck (carriers shifted by one
    period / phases); each phase's inductor is designed for its share of the load."""
    modulation: Literal["bipolar", "unipolar"] | None = None
    """PWM of an inverter-filter bridge: bipolar (output +/-Vdc, ripple at the switching
    frequency) or unipolar (output 0 or +/-Vdc, ripple at twice the switching
    frequency)."""
    line_steps: Annotated[int, Strict(), Field(ge=LINE_STEPS[0], le=LINE_STEPS[1])] = 32
    """Instants the line cycle is walked with (pfc-boost: over a quarter cycle;
    inverter-filter: over a half cycle); losses are averaged over them."""


class OperatingPoint(_Section):
    """One ``[[operating_points]]`` entry."""

    name: Name
    """Name of the point, unique within the study."""
    input_V: Voltage | None = None
    """Input voltage at this point (buck, boost, buck-boost, multiphase-buck)."""
    output_V: Voltage | None = None
    """Output voltage at this point (its magnitude for the inverting buck-boost; the bus
    voltage of a pfc-boost)."""
    load_A: Current | None = None
    """Output (load) current at this point (buck, boost, buck-boost; the total of all
    phases for a multiphase-buck)."""
    time_share: Fraction
    """Share of the operating time spent at this point; the shares sum to 1. Weights the
    loss objective."""
    line_V_rms: Voltage | None = None
    """pfc-boost: line voltage, RMS."""
    power_W: _bounded(*POWER_W) | None = None
    """pfc-boost: power drawn from the line (the converter is taken as lossless)."""
    line_frequency_Hz: _bounded(*LINE_FREQUENCY_HZ) = 50.0
    """pfc-boost and inverter-filter: line (grid) frequency; sets the time axis of the
    line-cycle figures (the instants are quasi-static switching periods)."""
    dc_link_V: Voltage | None = None
    """inverter-filter: DC link voltage across the bridge, above the grid's peak."""
    grid_V_rms: Voltage | None = None
    """inverter-filter: grid voltage, RMS."""
    grid_A_rms: Current | None = None
    """inverter-filter: grid current, RMS."""
    power_factor: Annotated[float, Strict(), AllowInfNan(False), Field(gt=0, le=1)] = 1.0
    """inverter-filter: cos of the angle between grid current and grid voltage."""
    current_waveform: Annotated[str, Strict(), StringConstraints(min_length=1,
                                                                 max_length=4096)] | None = None
    """buck, boost, buck-boost: a CSV file (relative to the study file) with the header
    time_s,current_A holding the inductor current over one switching period or several
    (the last whole period is taken), e.g. from a circuit simulation; replaces input_V,
    output_V and load_A at this point. Every design sees this current."""


class Inductor(_Section):
    """``[inductor]``: the inductance requirement, given directly or by ripple."""

    inductance_uH: InductanceUH | None = None
    """Required inductance at low current. Give this or ripple_fraction, not both."""
    ripple_fraction: RippleFraction | None = None
    """Peak-to-peak ripple as a fraction of the average inductor current, from which the
    inductance is derived; 0.4 when neither this nor inductance_uH is given."""
    ripple_point: Name | None = None
    """Operating point the ripple fraction applies to; default: the point that needs the
    largest inductance."""
    inductance_tolerance_pct: Percent = 10.0
    """Allowed deviation of the design's inductance from the required one."""
    min_fraction_at_peak: Fraction = 0.8
    """Inductance kept at peak current, as a fraction of the required inductance."""

    @model_validator(mode="before")
    @classmethod
    def _default_ripple(cls, data: Any) -> Any:
        if (
            isinstance(data, Mapping)
            and "inductance_uH" not in data
            and "ripple_fraction" not in data
        ):
            return {**data, "ripple_fraction": DEFAULT_RIPPLE_FRACTION}
        return data


class Limits(_Section):
    """``[limits]``: environment and constraints every design must meet."""

    ambient_C: Celsius = 40.0
    """Air temperature around the inductor."""
    max_temperature_C: Celsius = 100.0
    """Highest allowed hot-spot temperature at any operating point."""
    max_height_mm: LengthMM | None = None
    """Highest allowed height of the wound part above the board; no limit when absent."""
    max_footprint_mm2: AreaMM2 | None = None
    """Largest allowed board area of the wound part; no limit when absent."""
    flux_margin: FluxMargin = 0.8
    """Peak flux density allowed, as a fraction of the saturation flux density at the
    temperature limit."""
    max_fill_factor: Fraction = 0.5
    """Largest allowed copper area as a fraction of the window area."""
    max_loss_W: LossW | None = None
    """Largest allowed loss, weighted over the operating points by time share; no limit
    when absent."""
    max_volume_cm3: VolumeCM3 | None = None
    """Largest allowed boxed volume of the wound part; no limit when absent."""
    max_mass_g: MassG | None = None
    """Largest allowed mass of core and copper; no limit when absent."""


#: An objective's name (`optimag.codes.OBJECTIVE_COLUMNS`).
Objective = Literal[tuple(OBJECTIVE_COLUMNS)]


class Search(_Section):
    """``[search]``: strategy, objectives and the bounds of the design space."""

    strategy: Literal["exhaustive", "optuna"] = "exhaustive"
    """How the design space is searched: every candidate, or optuna's sampler (large
    spaces, custom cores)."""
    objectives: Annotated[tuple[Objective, ...], Field(min_length=1, max_length=4)] = (
        "volume",
        "loss",
        "cost",
    )
    """Objectives minimised together, distinct, from volume, loss, cost, mass and
    lifetime_cost (part cost plus the energy its weighted loss costs over
    [cost] operating_hours at [cost] energy_price_per_kWh; both keys required)."""
    turns_min: _whole(*TURNS) = 1
    """Fewest turns tried."""
    turns_max: _whole(*TURNS)
    """Most turns tried."""
    stack_min: _whole(*STACK) = 1
    """Fewest core sets stacked side by side."""
    stack_max: _whole(*STACK) = 1
    """Most core sets stacked (also limited by each core's max_stack)."""
    parallel_min: _whole(*PARALLEL) = 1
    """Fewest conductors wound in parallel."""
    parallel_max: _whole(*PARALLEL) = 1
    """Most conductors wound in parallel."""
    gap: Literal["solve", "grid"] = "solve"
    """solve: the gap is solved for the required inductance; grid: the spacer thicknesses
    of gap_grid_mm are tried."""
    gap_grid_mm: Annotated[tuple[GapMM, ...], Field(max_length=GAP_GRID_ENTRIES)] = ()
    """Gap lengths tried when gap = "grid"."""
    #: How a discrete gap may be made: "centre" (centre leg ground, outer legs touching)
    #: and/or "spacer" (a spacer between the halves gaps every leg by its thickness).
    gap_kinds: Annotated[
        tuple[Literal["centre", "spacer"], ...], Field(min_length=1, max_length=2)
    ] = ("centre",)
    """How a discrete gap may be made: "centre" (centre leg ground, outer legs touching)
    and/or "spacer" (a spacer between the halves gaps every leg by its thickness)."""
    cores: tuple[Name, ...] | None = None
    """Catalogue core ids to search; all cores when absent."""
    materials: tuple[Name, ...] | None = None
    """Catalogue material ids to search; all materials when absent."""
    wires: tuple[Name, ...] | None = None
    """Catalogue wire ids to search; all wires when absent."""
    harmonics: Annotated[int, Strict(), Field(ge=15, le=200)] = 25
    """Harmonics of the inductor current used for the AC winding loss."""
    trials: _whole(*TRIALS) = 2000
    """optuna: number of trials."""
    seed: _whole(*SEED) = 0
    """optuna: sampler seed (a single process with a fixed seed is reproducible)."""
    sampler: Literal["nsga2", "tpe"] = "nsga2"
    """optuna: sampler."""
    batch_size: _whole(*BATCH) = 64
    """optuna: trials asked and evaluated at once."""
    #: Keep only designs that meet every limit at every tolerance corner ([tolerance]).
    robust: Annotated[bool, Strict()] = False
    """Keep only designs that meet every limit at every tolerance corner ([tolerance])."""


class CatalogRef(_Section):
    """``[catalog]``: the catalogue folder, relative to the study file, and optionally the
    content hash the catalogue must have (a run folder's study copy records it)."""

    path: Path
    """Catalogue folder (cores.csv, materials.csv, wires.csv), relative to the study
    file."""
    sha256: Annotated[str, Strict(), StringConstraints(pattern=r"^[0-9a-f]{64}$")] | None = None
    """Content hash (sha256) the catalogue must have; written into a run folder's copy of
    the study so a rerun refuses a catalogue that has changed."""

    @field_validator("path", mode="before")
    @classmethod
    def _text_only(cls, value: Any) -> Any:
        if not isinstance(value, str | Path):
            raise ValueError(f"expected a folder path in quotes, got {_shown(value)}")
        if isinstance(value, str) and not value.strip():
            raise ValueError("must name a folder; got an empty string")
        return value

    @field_validator("path", mode="after")
    @classmethod
    def _existing_folder(cls, value: Path, info: ValidationInfo) -> Path:
        base = Path((info.context or {}).get("study_dir", Path.cwd()))
        try:
            folder = (base / value.expanduser()).resolve()
            folder.stat()
        except FileNotFoundError:
            pass  # reported below, with where it was looked for
        except (OSError, RuntimeError) as error:  # a symbolic-link loop, no permission
            reason = getattr(error, "strerror", None) or "a symbolic-link loop"
            raise ValueError(f"catalogue path '{value}' cannot be opened: {reason}") from None
        if not folder.exists():
            raise ValueError(
                f"catalogue folder '{value}' does not exist (looked for {folder}; "
                "the path is relative to the study file)"
            )
        if not folder.is_dir():
            raise ValueError(f"catalogue path '{value}' is a file; it must be a folder ({folder})")
        return folder


class ModelChoices(_Section):
    """``[model]``: which interchangeable physics models to use."""

    fringing: ModelName = "leg_edges"
    """Gap fringing model: "leg_edges" (fringing at the gapped legs' edges), "mclyman"
    (McLyman's fringing factor), "muhlethaler" (Mühlethaler's reluctance model), "ideal"
    (none), or a model registered in `optimag.physics.fringing.GAP_RELUCTANCE_MODELS`."""
    thermal: ModelName = "faces"
    """Temperature-rise model: "faces" (convection per face plus radiation, with the
    [cooling] paths), "convection" (whole-part natural convection plus radiation),
    "mclyman" (McLyman's empirical rise), "ferrite_rth" (the ferrite thermal-resistance
    rule), or a model registered in `optimag.physics.thermal.CONDUCTANCE_MODELS`."""
    core_loss: ModelName = "igse"
    """Core-loss model: "igse" (improved generalised Steinmetz on the design's flux
    waveform), or a model registered in `optimag.physics.coreloss.CORE_LOSS_MODELS`."""
    ac_resistance: ModelName = "dowell"
    """Winding AC-resistance model: "dowell" (Dowell's layers for round wire and foil, the
    strand proximity factor for litz), or a model registered in
    `optimag.physics.ac_resistance.AC_RESISTANCE_MODELS`."""

    @field_validator("fringing", "thermal", "core_loss", "ac_resistance")
    @classmethod
    def _registered(cls, value: str, info: ValidationInfo) -> str:
        from optimag.registry import study_registries

        names = study_registries()[info.field_name].study_names()
        if value not in names:
            raise ValueError(f"must be one of {', '.join(repr(n) for n in names)} (the "
                             f"registered models), got {value!r}")
        return value
    outside_fit: Literal["exclude", "flag"] = "exclude"
    """A material used outside its loss fit (frequency or flux): "exclude" eliminates the
    design (counted as material_range); "flag" keeps it, marked in every output."""



#: Keys of ``[cooling]`` each mode needs (and only that mode accepts).
COOLING_MODE_KEYS: dict[str, tuple[str, ...]] = {
    "free_air": (),
    "on_board": ("board_temperature_C", "board_copper_area_mm2"),
    "enclosure": ("enclosure_volume_cm3",),
    "forced_air": ("air_speed_m_s",),
    "potted": ("potting_conductivity_W_mK", "potting_thickness_mm", "wall_temperature_C"),
}


class Cooling(_Section):
    """``[cooling]``: how the part sheds its heat.

    ``free_air`` (default): still air around the part, which stands on a board that takes
    no heat (the face toward the board neither convects nor radiates). ``on_board``: the
    same, plus conduction through the terminals and the footprint into a board at
    ``board_temperature_C`` with ``board_copper_area_mm2`` of copper. ``enclosure``: the
    part in the still air of a closed box of ``enclosure_volume_cm3``, the box cooled by the
    air outside at ``limits.ambient_C``. ``forced_air``: an air stream of ``air_speed_m_s``
    along the part. ``potted``: ``potting_thickness_mm`` of compound of
    ``potting_conductivity_W_mK`` between the part's free faces and a wall at
    ``wall_temperature_C``. Emissivities of the core and the winding surface weigh the
    radiation of the visible faces.
    """

    mode: Literal["free_air", "on_board", "enclosure", "forced_air", "potted"] = "free_air"
    """Where the part sheds its heat: still air on a board that takes no heat, the same
    plus conduction into the board, inside a closed box, in an air stream, or potted."""
    board_temperature_C: Celsius | None = None
    """on_board: temperature of the board copper (at least ambient_C)."""
    board_copper_area_mm2: _bounded(*BOARD_COPPER_MM2) | None = None
    """on_board: board copper area the terminals and footprint conduct into."""
    enclosure_volume_cm3: _bounded(*ENCLOSURE_VOLUME_CM3) | None = None
    """enclosure: volume of the closed box, cooled outside by air at ambient_C."""
    air_speed_m_s: Annotated[float, Strict(), AllowInfNan(False), Field(gt=0, le=50)] | None = (
        None
    )
    """forced_air: speed of the air stream along the part's longer side."""
    potting_conductivity_W_mK: Annotated[
        float, Strict(), AllowInfNan(False), Field(gt=0, le=400)
    ] | None = None
    """potted: thermal conductivity of the potting compound."""
    potting_thickness_mm: _bounded(*POTTING_THICKNESS_MM) | None = None
    """potted: compound thickness between the part's free faces and the wall."""
    wall_temperature_C: Celsius | None = None
    """potted: temperature of the wall the compound conducts to."""
    core_emissivity: Fraction = 0.9
    """Emissivity of the visible core surface (radiation)."""
    winding_emissivity: Fraction = 0.85
    """Emissivity of the visible winding surface (radiation)."""


class Cost(_Section):
    """``[cost]``: labour cost, the currency label used in reports, and the price and
    hours that turn the weighted loss into an energy cost over the product's life."""

    labour_per_turn: Money = 0.02
    """Winding labour cost per turn, in the catalogue's currency units."""
    currency: Annotated[str, Strict(), StringConstraints(min_length=1, max_length=10)] = "cu"
    """Currency label shown beside costs."""
    energy_price_per_kWh: _bounded(*ENERGY_PRICE_PER_KWH) | None = None
    """Price of the energy the part's loss wastes, in currency units per kWh (what the
    product's user pays for electricity, or the value of the energy a source such as a
    panel or a battery could have delivered instead). With operating_hours it gives each
    design's energy_cost and lifetime_cost; absent: both are reported as zero energy."""
    operating_hours: _bounded(*OPERATING_HOURS) | None = None
    """Hours the product runs over its life at the operating points' time shares (for
    example 8 h a day for 10 years = 29,200 h)."""


class ReferenceDesign(_Section):
    """One ``[[reference_designs]]`` entry: a given design (the one on the bench, a
    colleague's proposal) evaluated with the same model and marked in the report."""

    name: Name
    """Label of the reference design on the report's plots."""
    core: Name
    """Catalogue core id."""
    material: Name
    """Catalogue material id."""
    turns: _whole(*TURNS)
    """Turns of the winding."""
    wire: Name
    """Catalogue wire id."""
    parallel: _whole(*PARALLEL) = 1
    """Conductors wound in parallel."""
    stack: _whole(*STACK) = 1
    """Core sets stacked side by side."""
    gap_mm: _bounded(0.0, 100.0) | None = None
    """Air gap as built; absent: solved for the study's inductance like the search."""
    gap_kind: Literal["centre", "spacer"] | None = None
    """How the gap is made: "centre" (ground centre leg, outer legs touching) or "spacer"
    (a spacer gaps every leg); absent: the first of [search] gap_kinds. Ferrite E and pot
    cores only."""


class Study(_Section):
    """A validated study. Build it with `load_study` (or `parse_study`).

    Besides its sections it exposes `path`, `source_text`, `name`, `frequency_Hz` and
    the derived `required_inductance_H`.
    """

    study: StudyInfo
    converter: Converter
    operating_points: Annotated[tuple[OperatingPoint, ...], Field(min_length=1)]
    inductor: Inductor = Inductor()
    limits: Limits = Limits()
    search: Search
    catalog: CatalogRef
    model: ModelChoices = ModelChoices()
    cooling: Cooling = Cooling()
    cost: Cost = Cost()
    custom_core: CustomCore | None = None
    tolerance: ToleranceSpec = ToleranceSpec()
    reference_designs: tuple[ReferenceDesign, ...] = ()

    _path: Path | None = PrivateAttr(default=None)
    _source_text: str = PrivateAttr(default="")

    @model_validator(mode="after")
    def _consistent(self) -> Study:
        faults = _consistency_faults({name: getattr(self, name) for name in _SECTION_MODELS})
        if faults:
            raise ValueError("; ".join(f"{field}: {message}" for field, message in faults))
        return self

    @property
    def path(self) -> Path | None:
        """Absolute path of the study file (None when not built from a file)."""
        return self._path

    @property
    def source_text(self) -> str:
        """The study file's text as read, kept for the run record."""
        return self._source_text

    @property
    def name(self) -> str:
        """The study's slug, used in run-folder names."""
        return self.study.name

    @property
    def title(self) -> str:
        """The study's free-text title."""
        return self.study.title

    @property
    def frequency_Hz(self) -> float:
        """Switching frequency [Hz]."""
        return self.converter.switching_frequency_kHz * 1e3

    def waveform_path(self, point: OperatingPoint) -> Path | None:
        """The point's current waveform file, resolved from the study's folder."""
        if point.current_waveform is None:
            return None
        base = self._path.parent if self._path is not None else Path.cwd()
        return base / Path(point.current_waveform).expanduser()

    @property
    def ripple_point(self) -> OperatingPoint | None:
        """The operating point the ripple fraction refers to (None when L is given).

        Without an explicit ``ripple_point`` it is the point that needs the largest
        inductance for the ripple fraction, so the ripple stays within the fraction at
        every point.
        """
        if self.inductor.inductance_uH is not None:
            return None
        if self.inductor.ripple_point is not None:
            return next(p for p in self.operating_points if p.name == self.inductor.ripple_point)
        needed = self._ripple_inductances(self.operating_points)
        return self.operating_points[int(np.nanargmax(needed))]

    @property
    def required_inductance_H(self) -> float:
        """Inductance the design must provide at low current [H].

        Either ``inductance_uH`` or, from the ripple fraction r at the ripple point,
        ``L = V_r D / (f r I_L)`` with the CCM relations of Erickson & Maksimović,
        Fundamentals of Power Electronics, ch. 2 (see
        `optimag.study.waveform.ccm_ripple_inductance`).
        """
        if self.inductor.inductance_uH is not None:
            return self.inductor.inductance_uH * 1e-6
        point = self.ripple_point
        assert point is not None
        return float(self._ripple_inductances((point,))[0])

    def _ripple_inductances(self, points: tuple[OperatingPoint, ...]) -> np.ndarray:
        return ripple_inductances(self.converter, points, self.inductor.ripple_fraction)


#: Keys each topology needs at every operating point (a current_waveform replaces them).
POINT_KEYS = {
    "buck": ("input_V", "output_V", "load_A"),
    "boost": ("input_V", "output_V", "load_A"),
    "buck-boost": ("input_V", "output_V", "load_A"),
    "multiphase-buck": ("input_V", "output_V", "load_A"),
    "pfc-boost": ("line_V_rms", "output_V", "power_W"),
    "inverter-filter": ("dc_link_V", "grid_V_rms", "grid_A_rms"),
}
#: Keys that only some topologies read (besides those of `POINT_KEYS`).
_OPTIONAL_POINT_KEYS = {
    "line_frequency_Hz": ("pfc-boost", "inverter-filter"),
    "power_factor": ("inverter-filter",),
    "current_waveform": ("buck", "boost", "buck-boost"),
}
LINE_CYCLE_TOPOLOGIES = ("pfc-boost", "inverter-filter")


def line_instants(converter: Converter, point: OperatingPoint):
    """The instants of a line-cycle point (`optimag.study.linecycle`)."""
    from optimag.study import linecycle

    if converter.topology == "pfc-boost":
        return linecycle.pfc_boost_instants(
            point.line_V_rms, point.output_V, point.power_W, converter.line_steps)
    return linecycle.inverter_instants(
        point.dc_link_V, point.grid_V_rms, point.grid_A_rms, point.power_factor,
        converter.modulation, converter.line_steps)


def ripple_inductances(converter: Converter, points, ripple_fraction: float) -> np.ndarray:
    """Inductance [H] each point needs for the ripple fraction (NaN for a point given by a
    current waveform): the CCM relation of the converter (per phase for a multiphase
    buck), or for a line-cycle point the largest ripple over the line cycle against the
    peak line current (`optimag.study.linecycle.line_ripple_inductance`)."""
    from optimag.study import linecycle

    frequency = converter.switching_frequency_kHz * 1e3
    out = np.full(len(points), np.nan)
    for index, point in enumerate(points):
        if point.current_waveform is not None:
            continue
        if converter.topology in LINE_CYCLE_TOPOLOGIES:
            out[index] = linecycle.line_ripple_inductance(
                line_instants(converter, point), frequency, ripple_fraction)
            continue
        topology = converter.topology
        load = point.load_A
        if topology == "multiphase-buck":
            topology, load = "buck", load / (converter.phases or 1)
        out[index] = float(ccm_ripple_inductance(
            topology, point.input_V, point.output_V, load, frequency, ripple_fraction))
    return out


_SECTION_MODELS: dict[str, type[_Section]] = {
    "study": StudyInfo,
    "converter": Converter,
    "operating_points": OperatingPoint,
    "inductor": Inductor,
    "limits": Limits,
    "search": Search,
    "catalog": CatalogRef,
    "model": ModelChoices,
    "cooling": Cooling,
    "cost": Cost,
    "custom_core": CustomCore,
    "tolerance": ToleranceSpec,
    "reference_designs": ReferenceDesign,
}
_REQUIRED_SECTIONS = ("study", "converter", "operating_points", "search", "catalog")


def load_study(path: str | os.PathLike[str]) -> Study:
    """Read and validate a study file.

    Parameters
    ----------
    path : str or path-like  The study's TOML file [-]

    Returns
    -------
    Study  Frozen and fully validated; ``study.catalog.path`` is absolute.

    Raises
    ------
    InputError
        Listing every problem found, each with file, line, dotted key and message.
    """
    shown = str(path)
    file = Path(path)
    try:
        file.stat()
    except FileNotFoundError:
        raise InputError([Problem(shown, None, "", "study file not found")]) from None
    except OSError as error:  # a symbolic-link loop, no permission, a name too long
        raise InputError([Problem(shown, None, "", f"cannot open: {error.strerror}")]) from None
    if file.is_dir():
        raise InputError([Problem(shown, None, "", "is a folder; expected a study .toml file")])
    try:
        # A byte-order mark, as some editors write it, is not part of the text.
        text = file.read_bytes().decode("utf-8-sig")
    except UnicodeDecodeError as error:
        raise InputError(
            [Problem(shown, None, "", f"not UTF-8 text (byte {error.start}); save it as UTF-8")]
        ) from None
    except OSError as error:
        raise InputError([Problem(shown, None, "", f"cannot read: {error.strerror}")]) from None
    return parse_study(text, file, shown_name=shown)


def parse_study(
    source_text: str, path: str | os.PathLike[str], shown_name: str | None = None
) -> Study:
    """Validate study text as if read from `path`.

    Parameters
    ----------
    source_text : str  TOML text of the study [-]
    path : str or path-like  Where the text belongs; relative catalogue paths are
        resolved from its folder [-]
    shown_name : str, optional  File name used in problems; default ``str(path)`` [-]

    Returns
    -------
    Study

    Raises
    ------
    InputError
        Listing every problem found.
    """
    shown = str(path) if shown_name is None else shown_name
    file = Path(path).resolve()
    lines = _LineIndex(source_text)

    def problem(field: str, message: str) -> Problem:
        return Problem(shown, lines.line_of(_split_field(field)), field, message)

    try:
        document = tomllib.loads(source_text)
    except tomllib.TOMLDecodeError as error:
        line, message = _toml_error_position(str(error), source_text)
        raise InputError([Problem(shown, line, "", f"not valid TOML: {message}")]) from None

    problems: list[Problem] = []
    sections: dict[str, Any] = {}
    context = {"study_dir": file.parent}

    for key in document:
        if key not in _SECTION_MODELS:
            problems.append(problem(key, _unknown_top_level(key)))

    for name, model in _SECTION_MODELS.items():
        if name not in document:
            if name in _REQUIRED_SECTIONS:
                header = f"[[{name}]]" if name == "operating_points" else f"[{name}]"
                problems.append(problem(name, f"missing section {header}"))
            else:
                # An absent [custom_core] means no custom core, not a default one.
                # No [[reference_designs]] means none.
                absent = {"custom_core": None, "reference_designs": ()}
                sections[name] = absent[name] if name in absent else model()
            continue
        content = document[name]
        if name in _TABLE_ARRAYS:
            sections[name] = _validate_points(content, problems, problem, name)
            continue
        if not isinstance(content, dict):
            problems.append(
                problem(name, f"expected a table written [{name}], got {_shown(content)}")
            )
            continue
        try:
            sections[name] = model.model_validate(content, context=context)
        except ValidationError as error:
            problems.extend(
                problem(field, message) for field, message in _translate(error, name, model)
            )

    problems.extend(problem(field, message) for field, message in _consistency_faults(sections))
    if not problems and sections.get("converter") is not None:
        problems.extend(_waveform_problems(
            sections["operating_points"], sections["converter"], file.parent, problem))
    if problems:
        raise InputError(problems)

    study = Study.model_validate(sections, context=context)
    study._path = file
    study._source_text = source_text
    return study


def runnable_study_text(study: Study, content_hash: str) -> str:
    """The study's text as a run folder keeps it: ``[catalog] path`` made absolute and
    ``sha256`` set to the catalogue's content hash, so the copy can be rerun from the run
    folder and refuses a catalogue that has changed since. Everything else, comments
    included, is kept as written. Where the catalogue is not written as a plain
    ``[catalog]`` table (an inline table, dotted keys), a comment at the top records the
    path and hash instead."""
    text = _absolute_waveform_paths(study)
    folder = str(study.catalog.path)
    lines = text.splitlines(keepends=True)
    index = _LineIndex(text)
    path_line = index.lines.get(("catalog", "path"))
    hash_line = index.lines.get(("catalog", "sha256"))
    candidate = None
    if path_line is not None and re.match(r"\s*path\s*=", lines[path_line - 1]):
        ending = "\r\n" if lines[path_line - 1].endswith("\r\n") else "\n"
        new = list(lines)
        new[path_line - 1] = f"path = {_toml_string(folder)}{ending}"
        hash_text = f'sha256 = "{content_hash}"{ending}'
        if hash_line is not None and re.match(r"\s*sha256\s*=", lines[hash_line - 1]):
            new[hash_line - 1] = hash_text
        else:
            new.insert(path_line, hash_text)
        candidate = "".join(new)
        try:
            written = tomllib.loads(candidate)
            original = tomllib.loads(text)
        except tomllib.TOMLDecodeError:
            candidate = None
        else:
            original["catalog"] = {**original.get("catalog", {}), "path": folder,
                                   "sha256": content_hash}
            if written != original:
                candidate = None
    if candidate is not None:
        return candidate
    return (
        f"# Run with the catalogue {folder} (content sha256 {content_hash}).\n" + text
    )


def _absolute_waveform_paths(study: Study) -> str:
    """The study's text with each ``current_waveform = "..."`` line given the file's
    absolute path, so a run folder's copy finds the files it was run with (a line that
    cannot be rewritten safely is left as written)."""
    text = study.source_text
    index = _LineIndex(text)
    lines = text.splitlines(keepends=True)
    changed = False
    for position, point in enumerate(study.operating_points):
        if point.current_waveform is None:
            continue
        number = index.lines.get(("operating_points", position, "current_waveform"))
        if number is None or not re.match(r"\s*current_waveform\s*=", lines[number - 1]):
            continue
        ending = "\r\n" if lines[number - 1].endswith("\r\n") else "\n"
        absolute = str(study.waveform_path(point).resolve())
        lines[number - 1] = f"current_waveform = {_toml_string(absolute)}{ending}"
        changed = True
    if not changed:
        return text
    candidate = "".join(lines)
    try:
        tomllib.loads(candidate)
    except tomllib.TOMLDecodeError:
        return text
    return candidate


def _toml_string(text: str) -> str:
    """A TOML string holding ``text``: a literal string where it can be one."""
    if "'" not in text and not any(ord(c) < 32 or ord(c) == 127 for c in text):
        return f"'{text}'"
    return json.dumps(text, ensure_ascii=False)


def applied_defaults(study: Study) -> list[tuple[str, Any]]:
    """The keys a study file leaves out and the values they took, in schema order.

    Parameters
    ----------
    study : Study  A study built from its file (its ``source_text`` is read again) [-]

    Returns
    -------
    list of (dotted key, value)  Every key absent from the file, with its default value;
        ``None`` means "not set" (no limit, every catalogue entry). An absent
        ``[custom_core]`` contributes nothing (it means no custom core). When the ripple
        fraction applies without ``ripple_point``, ``inductor.ripple_point`` is reported
        with the point the study chose.
    """
    document = tomllib.loads(study.source_text) if study.source_text else {}
    applied: list[tuple[str, Any]] = []
    for name, model in _SECTION_MODELS.items():
        if name in _TABLE_ARRAYS:
            continue
        section = getattr(study, name)
        if section is None:
            continue
        given = document.get(name, {})
        for key in model.model_fields:
            if key in given:
                continue
            if name == "converter" and not _converter_key_applies(key, study.converter.topology):
                continue
            value = getattr(section, key)
            if name == "inductor" and key == "ripple_point" and study.ripple_point is not None:
                value = study.ripple_point.name
            applied.append((f"{name}.{key}", value))
    return applied


def _converter_key_applies(key: str, topology: str) -> bool:
    """Whether a ``[converter]`` key means anything for the topology (the line walk only
    for line-cycle topologies, phases and modulation only where required)."""
    if key == "line_steps":
        return topology in LINE_CYCLE_TOPOLOGIES
    # phases and modulation are required where they apply, so never a default.
    return key not in ("phases", "modulation")


#: Sections written as arrays of tables ([[name]]).
_TABLE_ARRAYS = ("operating_points", "reference_designs")


def _validate_points(
    content: Any, problems: list[Problem], problem: Any, name: str = "operating_points"
) -> Any:
    entry_model = _SECTION_MODELS[name]
    if isinstance(content, dict):
        problems.append(
            problem(
                name,
                f"must be an array of tables: write each entry under its own [[{name}]] header",
            )
        )
        return None
    if not isinstance(content, list):
        problems.append(problem(name, f"expected [[{name}]] tables, got {_shown(content)}"))
        return None
    if not content and name == "operating_points":
        problems.append(problem("operating_points", "at least one operating point is required"))
        return None
    points = []
    for index, entry in enumerate(content):
        prefix = f"{name}[{index}]"
        if not isinstance(entry, dict):
            problems.append(problem(prefix, f"expected a table, got {_shown(entry)}"))
            continue
        try:
            points.append(entry_model.model_validate(entry))
        except ValidationError as error:
            problems.extend(
                problem(field, message)
                for field, message in _translate(error, prefix, entry_model)
            )
    return tuple(points) if len(points) == len(content) else None


def _consistency_faults(sections: Mapping[str, Any]) -> list[tuple[str, str]]:
    """Checks that tie keys together; a section that failed its own checks is None."""
    faults: list[tuple[str, str]] = []
    points = sections.get("operating_points")
    converter = sections.get("converter")
    inductor = sections.get("inductor")
    limits = sections.get("limits")
    search = sections.get("search")
    cooling = sections.get("cooling")
    choices = sections.get("model")

    designs = sections.get("reference_designs") or ()
    seen: dict[str, int] = {}
    for index, design in enumerate(designs):
        if design.name in seen:
            faults.append((
                f"reference_designs[{index}].name",
                f"duplicate reference-design name '{design.name}' (first used by "
                f"reference_designs[{seen[design.name]}]); names must be unique",
            ))
        seen.setdefault(design.name, index)

    if points:
        first_index: dict[str, int] = {}
        for index, point in enumerate(points):
            if point.name in first_index:
                faults.append(
                    (
                        f"operating_points[{index}].name",
                        f"duplicate operating-point name '{point.name}' (first used by "
                        f"operating_points[{first_index[point.name]}]); names must be unique",
                    )
                )
            else:
                first_index[point.name] = index
        total = math.fsum(p.time_share for p in points)
        if abs(total - 1.0) > TIME_SHARE_TOLERANCE:
            faults.append(
                (
                    "operating_points",
                    f"time_share values sum to {total:.9g}; they must sum to 1 "
                    f"(within {TIME_SHARE_TOLERANCE:g})",
                )
            )

    if points and converter:
        point_faults = _point_faults(converter, points)
        faults.extend(point_faults)
        if point_faults:
            points = None
    if points and converter:
        for index, point in enumerate(points):
            field = f"operating_points[{index}].output_V"
            vi, vo = point.input_V, point.output_V
            if point.current_waveform is not None:
                continue
            if converter.topology == "pfc-boost" and not vo > np.sqrt(2) * point.line_V_rms:
                faults.append((field, (
                    f"a PFC boost steps up from the rectified line: output_V must be above "
                    f"the line peak ({np.sqrt(2) * point.line_V_rms:.4g} V); got "
                    f"{vo:g} V at point '{point.name}'")))
            if (converter.topology == "inverter-filter"
                    and not point.dc_link_V > np.sqrt(2) * point.grid_V_rms):
                faults.append((f"operating_points[{index}].dc_link_V", (
                    f"the bridge cannot reach the grid peak "
                    f"({np.sqrt(2) * point.grid_V_rms:.4g} V) from dc_link_V = "
                    f"{point.dc_link_V:g} V at point '{point.name}'")))
            if converter.topology == "multiphase-buck" and not vo < vi:
                faults.append((field, (
                    f"a buck steps down: output_V must be below input_V; got output_V = "
                    f"{vo:g} V, input_V = {vi:g} V at point '{point.name}'")))
            if converter.topology == "buck" and not vo < vi:
                faults.append(
                    (
                        field,
                        f"a buck steps down: output_V must be below input_V; got output_V = "
                        f"{vo:g} V, input_V = {vi:g} V at point '{point.name}'",
                    )
                )
            if converter.topology == "boost" and not vo > vi:
                faults.append(
                    (
                        field,
                        f"a boost steps up: output_V must be above input_V; got output_V = "
                        f"{vo:g} V, input_V = {vi:g} V at point '{point.name}'",
                    )
                )

    if inductor:
        if inductor.inductance_uH is not None and inductor.ripple_fraction is not None:
            faults.append(
                (
                    "inductor",
                    "give either inductance_uH or ripple_fraction (with ripple_point), not both",
                )
            )
        elif inductor.inductance_uH is not None and inductor.ripple_point is not None:
            faults.append(
                (
                    "inductor.ripple_point",
                    "ripple_point only applies with ripple_fraction; remove it or give "
                    "ripple_fraction instead of inductance_uH",
                )
            )
        elif inductor.ripple_point is not None and points:
            names = [p.name for p in points]
            if inductor.ripple_point not in names:
                faults.append(
                    (
                        "inductor.ripple_point",
                        f"'{inductor.ripple_point}' is not an operating point (known: "
                        + ", ".join(f"'{n}'" for n in names)
                        + f"){_suggestion(inductor.ripple_point, names)}",
                    )
                )

    if (
        inductor
        and inductor.inductance_uH is None
        and inductor.ripple_fraction is not None
        and points
        and converter
        and not faults
    ):
        needed_uH = 1e6 * ripple_inductances(converter, points, inductor.ripple_fraction)
        if inductor.ripple_point is not None:
            needed_uH = needed_uH[[p.name for p in points].index(inductor.ripple_point)]
        needed = float(np.nanmax(needed_uH)) if np.any(np.isfinite(needed_uH)) else math.nan
        if math.isnan(needed):
            faults.append((
                "inductor.ripple_fraction",
                "every point used is a current_waveform, which has no converter to derive "
                "an inductance from; give inductance_uH",
            ))
            needed = 1.0
        low, high = INDUCTANCE_UH
        if not low <= needed <= high:
            faults.append(
                (
                    "inductor.ripple_fraction",
                    f"this ripple fraction needs {needed:.3g} uH, outside the plausible "
                    f"range {low:g} to {high:g} uH; check the voltages, load and frequency",
                )
            )

    if limits and not limits.max_temperature_C > limits.ambient_C:
        faults.append(
            (
                "limits.max_temperature_C",
                f"must be above ambient_C ({limits.ambient_C:g} °C); got "
                f"{limits.max_temperature_C:g} °C",
            )
        )

    if cooling:
        faults.extend(_cooling_faults(cooling, limits, choices))

    if search:
        for low, high in (
            ("turns_min", "turns_max"),
            ("stack_min", "stack_max"),
            ("parallel_min", "parallel_max"),
        ):
            if getattr(search, low) > getattr(search, high):
                faults.append(
                    (
                        f"search.{low}",
                        f"{low} ({getattr(search, low)}) exceeds {high} "
                        f"({getattr(search, high)}); the range would be empty",
                    )
                )
        repeated = sorted({o for o in search.objectives if search.objectives.count(o) > 1})
        if repeated:
            faults.append(
                (
                    "search.objectives",
                    "objectives must be distinct; repeated: "
                    + ", ".join(f"'{o}'" for o in repeated),
                )
            )
        if "lifetime_cost" in search.objectives:
            # A [cost] that failed its own checks is None; an absent one has no keys set.
            cost = sections["cost"] if "cost" in sections else Cost()
            for key in ("energy_price_per_kWh", "operating_hours"):
                if cost is not None and getattr(cost, key) is None:
                    faults.append((
                        f"cost.{key}",
                        "required when search.objectives includes lifetime_cost",
                    ))
        if search.gap == "grid" and not search.gap_grid_mm:
            faults.append(
                (
                    "search.gap_grid_mm",
                    'required (a non-empty list of spacer thicknesses in mm) when gap = "grid"',
                )
            )
    return faults


def _point_faults(converter: Converter, points) -> list[tuple[str, str]]:
    """Each point gives the keys its topology reads, and no others; the converter gives
    phases (multiphase-buck) and modulation (inverter-filter) only where they apply."""
    faults: list[tuple[str, str]] = []
    topology = converter.topology
    for key, needed_by in (("phases", ("multiphase-buck",)),
                           ("modulation", ("inverter-filter",))):
        given = getattr(converter, key) is not None
        if topology in needed_by and not given:
            faults.append((f"converter.{key}", f'required when topology = "{topology}"'))
        elif topology not in needed_by and given:
            faults.append((f"converter.{key}", (
                f'applies only with topology = "{needed_by[0]}"; this study has '
                f'topology = "{topology}"')))
    electrical = {key for keys in POINT_KEYS.values() for key in keys}
    for index, point in enumerate(points):
        prefix = f"operating_points[{index}]"
        given = set(point.model_fields_set)
        wanted = set(POINT_KEYS[topology])
        if point.current_waveform is not None:
            if topology not in _OPTIONAL_POINT_KEYS["current_waveform"]:
                faults.append((f"{prefix}.current_waveform", (
                    f"a current waveform replaces a DC-DC point (buck, boost, buck-boost); "
                    f'topology = "{topology}" has none')))
                continue
            wanted = set()
        for key in sorted(wanted - given):
            faults.append((f"{prefix}.{key}", f'required when topology = "{topology}"'
                           + (" (or give current_waveform)"
                              if topology in _OPTIONAL_POINT_KEYS["current_waveform"] else "")))
        for key in sorted(given & (electrical | set(_OPTIONAL_POINT_KEYS)) - wanted):
            if key == "current_waveform" and point.current_waveform is not None:
                continue
            users = _OPTIONAL_POINT_KEYS.get(key)
            if users is not None and topology in users and point.current_waveform is None:
                continue
            reason = ("a point given by current_waveform takes no converter keys"
                      if point.current_waveform is not None
                      else f'topology = "{topology}" does not read it')
            faults.append((f"{prefix}.{key}", reason))
    return faults


def _waveform_problems(study_points, converter, study_dir: Path, problem) -> list[Problem]:
    """Read every point's current waveform file; its problems name the CSV file and line."""
    from optimag.study.waveform_file import read_current_waveform

    problems: list[Problem] = []
    for index, point in enumerate(study_points):
        if point.current_waveform is None:
            continue
        path = study_dir / Path(point.current_waveform).expanduser()
        if not path.is_file():
            problems.append(problem(f"operating_points[{index}].current_waveform", (
                f"waveform file '{point.current_waveform}' not found (looked for {path}; "
                "the path is relative to the study file)")))
            continue
        try:
            read_current_waveform(path, converter.switching_frequency_kHz * 1e3)
        except InputError as error:
            problems.extend(error.problems)
    return problems


def _cooling_faults(cooling: Cooling, limits: Limits | None, choices: Any) -> list:
    faults: list[tuple[str, str]] = []
    mode = cooling.mode
    for key in COOLING_MODE_KEYS[mode]:
        if getattr(cooling, key) is None:
            faults.append((f"cooling.{key}", f'required when mode = "{mode}"'))
    for other, keys in COOLING_MODE_KEYS.items():
        for key in keys:
            if other != mode and getattr(cooling, key) is not None:
                faults.append(
                    (
                        f"cooling.{key}",
                        f'applies only with mode = "{other}"; this study has mode = "{mode}"',
                    )
                )
    board = cooling.board_temperature_C
    if mode == "on_board" and limits and board is not None and board < limits.ambient_C:
        faults.append(
            (
                "cooling.board_temperature_C",
                f"must be at least limits.ambient_C ({limits.ambient_C:g} °C): the board "
                f"under a dissipating part is no cooler than the air; got {board:g} °C",
            )
        )
    wall = cooling.wall_temperature_C
    if mode == "potted" and limits and wall is not None and wall >= limits.max_temperature_C:
        faults.append(
            (
                "cooling.wall_temperature_C",
                f"must be below limits.max_temperature_C ({limits.max_temperature_C:g} °C), "
                f"or no design can stay below it; got {wall:g} °C",
            )
        )
    if choices is not None and mode != "free_air" and choices.thermal != "faces":
        faults.append(
            (
                "model.thermal",
                f'"{choices.thermal}" is a whole-part law for still free air; with cooling '
                f'mode = "{mode}" use thermal = "faces"',
            )
        )
    return faults


# --- turning pydantic errors into plain messages -------------------------------------


def _translate(
    error: ValidationError, prefix: str, model: type[BaseModel]
) -> list[tuple[str, str]]:
    faults = []
    for item in error.errors(include_url=False):
        loc = tuple(item["loc"])
        field = _join_field(prefix, loc)
        if item["type"] == "extra_forbidden":
            faults.append((field, _unknown_key(str(loc[-1]), prefix, model)))
        else:
            message = _describe(item, field)
            bounds = field_range(model, str(loc[0])) if loc else None
            if item["type"] in _BOUND_ERRORS and bounds is not None:
                message += f" (plausible range {_number(bounds[0])} to {_number(bounds[1])})"
            faults.append((field, message))
    return faults


_BOUND_ERRORS = ("greater_than", "greater_than_equal", "less_than", "less_than_equal")


def _describe(item: Mapping[str, Any], field: str) -> str:
    kind = item["type"]
    ctx = item.get("ctx") or {}
    got = item.get("input")
    if kind == "missing":
        return "required key is missing"
    if kind in ("float_type", "float_parsing"):
        return f"expected a number, got {_shown(got)}"
    if kind in ("int_type", "int_parsing", "int_from_float"):
        return f"expected a whole number, got {_shown(got)}"
    if kind == "finite_number":
        return f"must be a finite number, got {_shown(got)}"
    bounds = {
        "greater_than": ("gt", ">"),
        "greater_than_equal": ("ge", ">="),
        "less_than": ("lt", "<"),
        "less_than_equal": ("le", "<="),
    }
    if kind in bounds:
        key, symbol = bounds[kind]
        return f"must be {symbol} {_number(ctx[key])}, got {_shown(got)}"
    if kind == "literal_error":
        return f"must be one of {ctx.get('expected')}, got {_shown(got)}"
    if kind == "string_type":
        return f"expected text in quotes, got {_shown(got)}"
    if kind == "string_pattern_mismatch":
        return (
            "must use only lowercase letters, digits and '-' (it names the run folder), "
            f"got {_shown(got)}"
        )
    if kind == "string_too_short":
        return f"must not be empty (at least {ctx.get('min_length')} character(s))"
    if kind == "string_too_long":
        return f"must have at most {ctx.get('max_length')} characters, got {len(str(got))}"
    if kind == "too_short":
        return f"needs at least {ctx.get('min_length')} entry(ies), got {ctx.get('actual_length')}"
    if kind == "too_long":
        return f"allows at most {ctx.get('max_length')} entries, got {ctx.get('actual_length')}"
    if kind in ("tuple_type", "list_type"):
        return f"expected a list [ ... ], got {_shown(got)}"
    if kind in ("model_type", "model_attributes_type", "dict_type"):
        return f"expected a table, got {_shown(got)}"
    if kind == "value_error":
        return str(ctx.get("error", item.get("msg", "invalid value")))
    return f"{item.get('msg', 'invalid value')}, got {_shown(got)}"


def field_range(model: type[BaseModel], name: str) -> tuple[Any, Any] | None:
    """The (low, high) bounds of a numeric key of a study section, or of the entries of a
    list-valued key; None when the key has no two-sided range."""
    bounds = _bounds(model, name)
    return None if bounds is None else (bounds[0], bounds[1])


def _bounds(model: type[BaseModel], name: str) -> tuple[Any, Any, bool, bool] | None:
    """(low, high, low included, high included) of a key, from its annotation."""
    field = model.model_fields.get(name)
    if field is None:
        return None
    low = high = None
    low_in = high_in = True
    stack: list[Any] = [field.annotation, *field.metadata]
    while stack:
        item = stack.pop()
        if isinstance(item, annotated_types.Ge | annotated_types.Gt):
            low_in = isinstance(item, annotated_types.Ge)
            low = item.ge if low_in else item.gt
        elif isinstance(item, annotated_types.Le | annotated_types.Lt):
            high_in = isinstance(item, annotated_types.Le)
            high = item.le if high_in else item.lt
        elif isinstance(item, FieldInfo):
            stack.extend(item.metadata)
        elif item is not None and not isinstance(item, type):
            stack.extend(get_args(item))
            stack.extend(getattr(item, "__metadata__", ()))
    return None if low is None or high is None else (low, high, low_in, high_in)


def range_table_markdown() -> str:
    """The plausible range of every numeric study key, as the Markdown table that
    ``studies/README.md`` holds (a test keeps the two equal). A list key's range applies
    to each entry."""
    lines = ["| table | key | plausible range |", "|---|---|---|"]
    for section, model in _SECTION_MODELS.items():
        header = f"[[{section}]]" if section == "operating_points" else f"[{section}]"
        for name in model.model_fields:
            bounds = _bounds(model, name)
            if bounds is None:
                continue
            low, high, low_in, high_in = bounds
            shown = (
                f"{_number(low)} {'≤' if low_in else '<'} {name} "
                f"{'≤' if high_in else '<'} {_number(high)}"
            )
            lines.append(f"| `{header}` | `{name}` | {shown} |")
        if model is ToleranceSpec:
            lines.extend(
                f"| `{header}` | `{name}` | 0 ≤ {name} ≤ {_number(upper)} (the ± half width) |"
                for name, (_, _, upper) in SPREAD_DEFAULTS.items()
            )
        if model is CustomCore:
            low, high = CUSTOM_DIMENSION_MM
            lines.extend(
                f"| `{header}` | `{name}` | [low, high] with {_number(low)} ≤ low ≤ high ≤ "
                f"{_number(high)} |"
                for name in CUSTOM_DIMENSIONS
            )
    return "\n".join(lines) + "\n"


def _unknown_key(key: str, prefix: str, model: type[BaseModel]) -> str:
    known = list(model.model_fields)
    section = prefix.split("[")[0]
    hint = _suggestion(key, known)
    if not hint:
        home = [s for s, m in _SECTION_MODELS.items() if key in m.model_fields and s != section]
        if home:
            return f"unknown key '{key}' in [{section}]; it belongs in [{home[0]}]"
        return f"unknown key '{key}'; allowed keys: " + ", ".join(known)
    return f"unknown key '{key}'{hint}"


def _unknown_top_level(key: str) -> str:
    hint = _suggestion(key, list(_SECTION_MODELS))
    if hint:
        return f"unknown section [{key}]{hint}"
    home = [s for s, m in _SECTION_MODELS.items() if key in m.model_fields]
    if home:
        return f"key '{key}' is outside any section; it belongs in [{home[0]}]"
    return f"unknown section [{key}]; known sections: " + ", ".join(_SECTION_MODELS)


def _suggestion(word: str, candidates: list[str]) -> str:
    close = difflib.get_close_matches(word, candidates, n=1, cutoff=0.6)
    if not close:
        lowered = {c.lower(): c for c in candidates}
        close = difflib.get_close_matches(word.lower(), list(lowered), n=1, cutoff=0.6)
        close = [lowered[c] for c in close]
    return f"; did you mean '{close[0]}'?" if close else ""


def _shown(value: Any) -> str:
    if isinstance(value, bool):
        return f"the boolean {str(value).lower()}"
    if isinstance(value, str):
        text = value if len(value) <= 40 else value[:37] + "..."
        return f"the text {text!r}"
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, int):
        text = str(value)
        return text if len(text) <= 24 else f"{text[:10]}...({len(text)} digits)"
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list | tuple):
        return "a list"
    return f"a {type(value).__name__} value"


def _number(value: Any) -> str:
    return f"{value:g}" if isinstance(value, float) else str(value)


def _join_field(prefix: str, loc: tuple[Any, ...]) -> str:
    field = prefix
    for part in loc:
        field += f"[{part}]" if isinstance(part, int) else (f".{part}" if field else str(part))
    return field


def _split_field(field: str) -> tuple[Any, ...]:
    parts: list[Any] = []
    for name, index in re.findall(r"([^.\[\]]+)|\[(\d+)\]", field):
        parts.append(int(index) if index else name)
    return tuple(parts)


def _toml_error_position(message: str, text: str) -> tuple[int | None, str]:
    found = re.search(r"\s*\(at line (\d+), column (\d+)\)", message)
    if found:
        plain = message[: found.start()] + message[found.end() :]
        return int(found.group(1)), f"{plain.strip()} (column {found.group(2)})"
    if "(at end of document)" in message:
        return max(1, len(text.splitlines())), message.replace(" (at end of document)", "") + (
            " at the end of the file"
        )
    return None, message


_ARRAY_HEADER = re.compile(r"^\[\[\s*([^\[\]]+?)\s*\]\]")
_TABLE_HEADER = re.compile(r"^\[\s*([^\[\]]+?)\s*\]")
_KEY_LINE = re.compile(
    r"""^((?:"[^"]*"|'[^']*'|[A-Za-z0-9_-]+)(?:\s*\.\s*(?:"[^"]*"|'[^']*'|[A-Za-z0-9_-]+))*)\s*="""
)


def _dotted(text: str) -> tuple[str, ...]:
    parts = re.findall(r"""\s*("[^"]*"|'[^']*'|[A-Za-z0-9_-]+)\s*""", text)
    return tuple(p[1:-1] if p[:1] in "\"'" else p for p in parts)


class _LineIndex:
    """Line of each table header and key in TOML text, found by scanning the lines.

    A best effort: it understands headers, arrays of tables and (dotted) keys, and
    skips multi-line strings; a key it cannot place falls back to its table's header.
    """

    def __init__(self, text: str) -> None:
        self.lines: dict[tuple[Any, ...], int] = {}
        counts: dict[tuple[str, ...], int] = {}
        table: tuple[Any, ...] = ()
        in_multiline = False
        for number, raw in enumerate(text.splitlines(), start=1):
            line = raw.strip()
            quotes = line.count('"""') + line.count("'''")
            if in_multiline:
                in_multiline = quotes % 2 == 0
                continue
            if match := _ARRAY_HEADER.match(line):
                name = _dotted(match.group(1))
                index = counts.get(name, 0)
                counts[name] = index + 1
                table = (*name, index)
                self.lines.setdefault(name, number)
                self.lines.setdefault(table, number)
            elif match := _TABLE_HEADER.match(line):
                table = _dotted(match.group(1))
                self.lines.setdefault(table, number)
            elif match := _KEY_LINE.match(line):
                self.lines.setdefault((*table, *_dotted(match.group(1))), number)
            in_multiline = quotes % 2 == 1

    def line_of(self, path: tuple[Any, ...]) -> int | None:
        for length in range(len(path), 0, -1):
            if path[:length] in self.lines:
                return self.lines[path[:length]]
        return None
