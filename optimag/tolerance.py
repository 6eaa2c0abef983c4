"""Production scatter: Monte Carlo yield and worst-case corners of built designs.

A design on the front sits at its limits by construction. Built parts scatter: the gap by
a few hundredths of a millimetre, ferrite permeability by tens of per cent, saturation
flux and loss coefficients by a few per cent, the wire by its conductor tolerance, the
ambient across its range. This module re-evaluates designs with the *same model* the
search uses, over perturbed copies of their inputs, vectorised over samples × designs:

* `monte_carlo` — seeded samples of every spread at once: the probability that each
  constraint holds and that all hold (``yield_fraction``), percentiles of the figures the
  limits act on, and which spread costs the most yield (each spread alone).
* `corner_violations` — every spread at its harmful extreme for each constraint (the
  harmful side found per design from the model itself), the deterministic worst case
  that ``[search] robust = true`` applies inside the search.

How a perturbed evaluation is built: each row of the evaluation gets its own copy of the
design's material (scaled permeability, Bsat and Steinmetz k) and wire (scaled conductor
size), and its own gap (the design's nominal gap plus the sampled error, as a one-entry
gap grid), so one `optimag.model.evaluate` call covers every sample. The ambient enters
the loss-temperature balance as a scalar, so rows are grouped by ambient, rounded to
`AMBIENT_STEP_K` (far below any ambient spread worth modelling).

Mixing assumptions (common practice, no source): the spreads are independent; the gap
error is added to the nominal gap (clipped at zero); a scale factor never drops below
`MIN_SCALE`.
"""

from __future__ import annotations

import dataclasses
import zlib
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import pandas as pd

from optimag import model
from optimag.codes import MaterialKind, WireKind
from optimag.study.tolerance import Spread, ToleranceSpec

#: Ambient values closer than this share one evaluation of the thermal balance [K].
AMBIENT_STEP_K = 0.25

#: Smallest scale any sampled factor may take (a normal tail cannot make a negative Bsat).
MIN_SCALE = 0.05

#: The spreads a design's figures respond to, in the order reports rank them.
PARAMETERS = ("gap", "permeability", "bsat", "steinmetz_k", "wire_diameter", "ambient")

#: The sensitivity ranking runs each spread alone on n_samples / SENSITIVITY_DIVISOR samples
#: (at least SENSITIVITY_MIN_SAMPLES).
SENSITIVITY_DIVISOR = 4
SENSITIVITY_MIN_SAMPLES = 250

#: Percentiles reported for each figure.
PERCENTILES = (5.0, 50.0, 95.0)

#: Figures whose distribution is reported: record name -> (metric, scale to trade unit).
FIGURES = {
    "inductance_at_peak_uH": ("inductance_at_peak_H", 1e6),
    "peak_flux_T": ("worst_flux_T", 1.0),
    "hotspot_temperature_C": ("worst_hotspot_temperature_C", 1.0),
}

#: Conductor tolerance of round winding wire, IEC 60317-0-1, approximated as
#: max(0.003 mm, 1 % of d) (value from memory).
IEC_60317_ABSOLUTE_M = 0.003e-3
IEC_60317_RELATIVE = 0.01


@dataclass(frozen=True)
class Deviations:
    """Per-row deviations from a design's nominal inputs (one row per evaluation).

    ``gap_m`` is added to the nominal gap [m]; the ``*_scale`` factors multiply the
    nominal value; ``ambient_C`` is the absolute ambient temperature [degC].
    """

    design: np.ndarray
    gap_m: np.ndarray
    permeability_scale: np.ndarray
    bsat_scale: np.ndarray
    k_scale: np.ndarray
    wire_scale: np.ndarray
    ambient_C: np.ndarray

    def __len__(self) -> int:
        return len(self.design)


# ---------------------------------------------------------------------------------------
# Spreads per design
# ---------------------------------------------------------------------------------------


@dataclass(frozen=True)
class DesignSpreads:
    """Each design's spread of every parameter, as ``±`` half width and distribution.

    Half widths are relative (fractions) except ``gap`` [m] and ``ambient`` [K].
    """

    half_width: dict[str, np.ndarray]  # parameter -> (n_designs,)
    normal: dict[str, np.ndarray]  # parameter -> (n_designs,) bool: normal, else uniform


def design_spreads(
    space: model.DesignSpace, designs: model.Candidates, gap_m: np.ndarray, spec: ToleranceSpec
) -> DesignSpreads:
    """The spread of every parameter for each design: the gap's by how it is made, the
    permeability's by material kind and whether the core is gapped, the wire's by its
    conductor tolerance class."""
    m, w = space.materials, space.wires
    n = len(designs)
    powder = m.kind[designs.material] == MaterialKind.POWDER
    gapped = np.asarray(gap_m, dtype=float) > 0
    spacer = space.gap_option_spacer(designs.gap_option)

    def pick(*choices: tuple[np.ndarray, Spread]) -> tuple[np.ndarray, np.ndarray]:
        width, normal = np.zeros(n), np.zeros(n, dtype=bool)
        for mask, spread in choices:
            width = np.where(mask, spread.spread, width)
            normal = np.where(mask, spread.distribution == "normal", normal)
        return width, normal

    everywhere = np.ones(n, dtype=bool)
    half, normal = {}, {}
    half["gap"], normal["gap"] = pick(
        (gapped & ~spacer, spec.gap_ground_mm), (gapped & spacer, spec.gap_spacer_mm)
    )
    half["gap"] = half["gap"] * 1e-3
    half["permeability"], normal["permeability"] = pick(
        (~powder & gapped, spec.permeability_pct), (~powder & ~gapped, spec.al_ungapped_pct),
        (powder, spec.powder_permeability_pct),
    )
    half["permeability"] = half["permeability"] / 100.0
    half["bsat"], normal["bsat"] = pick((everywhere, spec.bsat_pct))
    half["bsat"] = half["bsat"] / 100.0
    half["steinmetz_k"], normal["steinmetz_k"] = pick((everywhere, spec.steinmetz_k_pct))
    half["steinmetz_k"] = half["steinmetz_k"] / 100.0
    if spec.wire_diameter_pct is not None:
        half["wire_diameter"], normal["wire_diameter"] = pick(
            (everywhere, spec.wire_diameter_pct)
        )
        half["wire_diameter"] = half["wire_diameter"] / 100.0
    else:
        size = np.where(w.kind[designs.wire] == WireKind.FOIL, w.foil_thickness_m[designs.wire],
                        w.bare_diameter_m[designs.wire])
        with np.errstate(divide="ignore", invalid="ignore"):
            relative = np.maximum(IEC_60317_ABSOLUTE_M / size, IEC_60317_RELATIVE)
        half["wire_diameter"] = np.where(size > 0, relative, 0.0)
        normal["wire_diameter"] = everywhere.copy()
    half["ambient"], normal["ambient"] = pick((everywhere, spec.ambient_C))
    return DesignSpreads(half_width=half, normal=normal)


def _deviations_from_unit(
    spreads: DesignSpreads, design: np.ndarray, unit: Mapping[str, np.ndarray],
    ambient_nominal_C: float,
) -> Deviations:
    """Deviations for rows of ``design`` from unit deviates: ``unit[p]`` in [-1, 1] for a
    harmful-extreme corner, or a standard deviate (normal) / uniform on [-1, 1] for samples.

    A normal parameter maps a standard deviate z to z · half_width / 3; a uniform one maps
    u in [-1, 1] to u · half_width.
    """

    def value(parameter: str) -> np.ndarray:
        half = spreads.half_width[parameter][design]
        normal = spreads.normal[parameter][design]
        u = np.asarray(unit[parameter], dtype=float)
        return np.where(normal & np.asarray(unit.get("_sampled", False)), u * half / 3.0,
                        u * half)

    def scale(parameter: str) -> np.ndarray:
        return np.maximum(1.0 + value(parameter), MIN_SCALE)

    return Deviations(
        design=design,
        gap_m=value("gap"),
        permeability_scale=scale("permeability"),
        bsat_scale=scale("bsat"),
        k_scale=scale("steinmetz_k"),
        wire_scale=scale("wire_diameter"),
        ambient_C=ambient_nominal_C + value("ambient"),
    )


# ---------------------------------------------------------------------------------------
# One evaluation over perturbed copies
# ---------------------------------------------------------------------------------------


def _take_rows(table, index: np.ndarray):
    """A copy of a dataclass of per-row arrays holding rows ``index`` (other fields kept)."""
    n = len(table.ids)
    changes = {}
    for f in dataclasses.fields(table):
        value = getattr(table, f.name)
        if isinstance(value, np.ndarray) and value.ndim >= 1 and value.shape[0] == n:
            changes[f.name] = value[index]
    return dataclasses.replace(table, **changes)


def _scaled_materials(
    materials: model.MaterialArrays, rows: np.ndarray, permeability_scale: np.ndarray,
    bsat_scale: np.ndarray, k_scale: np.ndarray,
) -> model.MaterialArrays:
    table = _take_rows(materials, rows)
    return dataclasses.replace(
        table,
        mu_i=table.mu_i * permeability_scale,
        bsat_25C_T=table.bsat_25C_T * bsat_scale,
        bsat_100C_T=table.bsat_100C_T * bsat_scale,
        k=table.k * k_scale,
        k_i=table.k_i * k_scale,
    )


def _scaled_wires(
    wires: model.WireArrays, rows: np.ndarray, scale: np.ndarray
) -> model.WireArrays:
    """Conductor sizes scaled by ``scale``; the insulation build stays as it was, so a
    round wire's outer diameter moves with its copper."""
    table = _take_rows(wires, rows)
    s = scale
    bare, strand = table.bare_diameter_m, table.strand_diameter_m
    thickness = table.foil_thickness_m
    is_round, is_litz, is_foil = (table.kind == WireKind.ROUND, table.kind == WireKind.LITZ,
                                  table.kind == WireKind.FOIL)
    outer = np.select(
        [is_round, is_litz, is_foil],
        [table.outer_m + bare * (s - 1.0), table.outer_m * s,
         table.outer_m + thickness * (s - 1.0)],
    )
    return dataclasses.replace(
        table,
        copper_area_m2=table.copper_area_m2 * s**2 * np.where(is_foil, 1.0 / s, 1.0),
        bare_diameter_m=bare * s,
        strand_diameter_m=strand * s,
        foil_thickness_m=thickness * s,
        outer_m=outer,
    )


def evaluate_deviations(
    space: model.DesignSpace, designs: model.Candidates, gap_m: np.ndarray, dev: Deviations
) -> dict[str, np.ndarray]:
    """Evaluate ``designs`` (rows ``dev.design``) with their inputs moved by ``dev``.

    Returns the model's metrics, row-aligned with ``dev``. The gap is taken as built (the
    nominal gap plus the deviation), never re-solved.
    """
    n_rows = len(dev)
    cand = designs.take(dev.design)
    gap = np.maximum(np.asarray(gap_m, dtype=float)[dev.design] + dev.gap_m, 0.0)
    # One material (wire) copy per distinct (entry, scales) pair: rows that share them,
    # e.g. every row when only the gap scatters, share the model's per-wire work.
    material_rows, material_of_row = np.unique(
        np.stack([cand.material, dev.permeability_scale, dev.bsat_scale, dev.k_scale], 1),
        axis=0, return_inverse=True,
    )
    wire_rows, wire_of_row = np.unique(
        np.stack([cand.wire, dev.wire_scale], 1), axis=0, return_inverse=True
    )
    space_rows = dataclasses.replace(
        space,
        materials=_scaled_materials(
            space.materials, material_rows[:, 0].astype(np.int64), *material_rows[:, 1:].T
        ),
        wires=_scaled_wires(space.wires, wire_rows[:, 0].astype(np.int64), wire_rows[:, 1]),
        gap_grid_m=gap,
        gap_kinds=("centre", "spacer"),
    )
    # Each row keeps its design's gap kind: option = kind * rows + row.
    spacer = space.gap_option_spacer(cand.gap_option).astype(np.int64)
    cand = dataclasses.replace(
        cand, material=material_of_row.ravel(), wire=wire_of_row.ravel(),
        gap_option=spacer * n_rows + np.arange(n_rows),
    )
    # Rows grouped by ambient, evaluated group by group, put back in row order at the end.
    ambient_key = np.round(dev.ambient_C / AMBIENT_STEP_K).astype(np.int64)
    order = np.argsort(ambient_key, kind="stable")
    keys, starts = np.unique(ambient_key[order], return_index=True)
    bounds = [*starts.tolist(), n_rows]
    parts = []
    for key, lo, hi in zip(keys, bounds[:-1], bounds[1:], strict=True):
        requirements = dataclasses.replace(
            space.requirements, ambient_C=float(key * AMBIENT_STEP_K)
        )
        parts.append(model.evaluate(
            dataclasses.replace(space_rows, requirements=requirements), cand.take(order[lo:hi])
        ))
    back = np.empty(n_rows, dtype=np.int64)
    back[order] = np.arange(n_rows)
    return {name: np.concatenate([p[name] for p in parts])[back] for name in parts[0]}


# ---------------------------------------------------------------------------------------
# Monte Carlo
# ---------------------------------------------------------------------------------------


@dataclass(frozen=True)
class YieldResult:
    """Monte Carlo figures per design (one row each).

    ``table`` columns: ``yield_fraction``, ``yield_<constraint>`` for every constraint,
    ``<figure>_p5|p50|p95`` for every `FIGURES` entry, ``yield_loss_<parameter>`` (yield
    lost when only that spread acts) and ``yield_driver`` (the parameter losing most).
    ``samples`` holds the raw sampled figures per design for the report's histograms.
    """

    table: pd.DataFrame
    samples: dict[str, np.ndarray]  # figure -> (n_designs, n_samples)
    limits: dict[str, float]
    n_samples: int
    seed: int


def _design_seeds(designs: model.Candidates, space: model.DesignSpace, seed: int) -> list:
    """One seed sequence per design, from the study seed and the design's identity, so a
    design's figures do not depend on which other designs are analysed with it."""
    seqs = []
    for i in range(len(designs)):
        key = "|".join([
            str(space.cores.ids[designs.core[i]]), str(int(designs.stack[i])),
            str(space.materials.ids[designs.material[i]]), str(int(designs.turns[i])),
            str(space.wires.ids[designs.wire[i]]), str(int(designs.parallel[i])),
        ])
        seqs.append(np.random.SeedSequence([seed, zlib.crc32(key.encode())]))
    return seqs


def _unit_samples(designs, space, n_samples: int, seed: int, spreads: DesignSpreads):
    """Standard deviates per parameter, shape (n_designs, n_samples): N(0, 1) for normal
    spreads, U(-1, 1) for uniform ones."""
    n = len(designs)
    unit = {p: np.empty((n, n_samples)) for p in PARAMETERS}
    for i, sequence in enumerate(_design_seeds(designs, space, seed)):
        rng = np.random.default_rng(sequence)
        for p in PARAMETERS:
            normal_draw = rng.standard_normal(n_samples)
            uniform_draw = rng.uniform(-1.0, 1.0, n_samples)
            unit[p][i] = normal_draw if spreads.normal[p][i] else uniform_draw
    return unit


def monte_carlo(
    space: model.DesignSpace,
    designs: model.Candidates,
    gap_m: np.ndarray,
    spec: ToleranceSpec,
    *,
    n_samples: int | None = None,
    seed: int | None = None,
    sensitivity: bool = True,
) -> YieldResult:
    """Yield of each design under the study's spreads, seeded and reproducible.

    Parameters
    ----------
    space : model.DesignSpace
        The search's design space (catalogue arrays, operating points, limits).
    designs : model.Candidates
        The designs, as candidate indices into ``space``.
    gap_m : ndarray
        Each design's nominal gap as built [m] (the record's gap; 0 for none).
    spec : ToleranceSpec
        The spreads (``[tolerance]``).
    n_samples, seed : int, optional
        Override ``spec.samples`` and ``spec.seed``.
    sensitivity : bool
        Also run each spread alone (one more sample set per parameter, with the same
        deviates) to rank which spread loses the most yield.
    """
    n_samples = int(n_samples or spec.samples)
    seed = int(spec.seed if seed is None else seed)
    n = len(designs)
    spreads = design_spreads(space, designs, gap_m, spec)
    unit = _unit_samples(designs, space, n_samples, seed, spreads)

    def run(active: tuple[str, ...], m: int) -> dict[str, np.ndarray]:
        rows = np.repeat(np.arange(n), m)
        chosen = {p: (unit[p][:, :m].ravel() if p in active else np.zeros(n * m))
                  for p in PARAMETERS}
        chosen["_sampled"] = True
        dev = _deviations_from_unit(spreads, rows, chosen, space.requirements.ambient_C)
        return evaluate_deviations(space, designs, gap_m, dev)

    metrics = run(PARAMETERS, n_samples)
    violations = model.violations_matrix(metrics).reshape(n, n_samples, -1)
    table = {"yield_fraction": (violations <= 0).all(axis=2).mean(axis=1)}
    for c, name in enumerate(model.CONSTRAINTS):
        table[f"yield_{name}"] = (violations[:, :, c] <= 0).mean(axis=1)
    samples = {}
    for figure, (metric, factor) in FIGURES.items():
        values = np.asarray(metrics[metric], dtype=float).reshape(n, n_samples) * factor
        samples[figure] = values
        for q in PERCENTILES:
            table[f"{figure}_p{q:g}"] = np.percentile(values, q, axis=1)
    if sensitivity:
        # Each spread alone on the first deviates of the same draws: a ranking needs
        # fewer samples than the yield itself.
        m = min(n_samples, max(SENSITIVITY_MIN_SAMPLES, n_samples // SENSITIVITY_DIVISOR))
        for p in PARAMETERS:
            acting = spreads.half_width[p] > 0
            loss = np.zeros(n)
            if acting.any():
                alone = model.violations_matrix(run((p,), m)).reshape(n, m, -1)
                loss = np.where(acting, 1.0 - (alone <= 0).all(axis=2).mean(axis=1), 0.0)
            table[f"yield_loss_{p}"] = loss
        losses = np.stack([table[f"yield_loss_{p}"] for p in PARAMETERS], axis=1)
        table["yield_driver"] = np.where(
            losses.max(axis=1) > 0, np.asarray(PARAMETERS)[losses.argmax(axis=1)], "none"
        )
    req = space.requirements
    limits = {
        "inductance_at_peak_uH": req.inductance_H * req.min_fraction_at_peak * 1e6,
        "hotspot_temperature_C": req.max_temperature_C,
    }
    return YieldResult(pd.DataFrame(table), samples, limits, n_samples, seed)


# ---------------------------------------------------------------------------------------
# Worst-case corners
# ---------------------------------------------------------------------------------------


def corner_violations(
    space: model.DesignSpace, designs: model.Candidates, gap_m: np.ndarray,
    spec: ToleranceSpec,
) -> np.ndarray:
    """Each constraint's violation at its own worst corner, shape (n, C).

    For every design each spread is first moved alone to both ends of its ``±`` half
    width; for each constraint, the end that raises that constraint's violation is its
    harmful extreme. The corner of a constraint puts every spread at its harmful extreme
    for that constraint at once. `robust_feasible` checks every constraint at every
    corner.
    """
    return _corners(space, designs, gap_m, spec)[0]


def worst_corner_violations(
    space: model.DesignSpace, designs: model.Candidates, gap_m: np.ndarray,
    spec: ToleranceSpec,
) -> np.ndarray:
    """Each constraint's largest violation over all the constraints' worst corners, shape
    (n, C): a design meets every limit at every corner exactly when a row is all <= 0.
    The optuna search tells these to the sampler in a robust search."""
    if len(designs) == 0:
        return np.zeros((0, len(model.CONSTRAINTS)))
    return _corners(space, designs, gap_m, spec)[1]


def robust_feasible(
    space: model.DesignSpace, designs: model.Candidates, gap_m: np.ndarray,
    spec: ToleranceSpec,
) -> np.ndarray:
    """True where a design meets every limit at every constraint's worst corner."""
    return (worst_corner_violations(space, designs, gap_m, spec) <= 0).all(axis=1)


def _corners(space, designs, gap_m, spec):
    n = len(designs)
    n_c = len(model.CONSTRAINTS)
    spreads = design_spreads(space, designs, gap_m, spec)
    ambient = space.requirements.ambient_C
    # Probe each parameter alone at -1 and +1 (2 P rows per design).
    probe_design, probe_unit = [], {p: [] for p in PARAMETERS}
    for p in PARAMETERS:
        for sign in (-1.0, 1.0):
            probe_design.append(np.arange(n))
            for q in PARAMETERS:
                probe_unit[q].append(np.full(n, sign if q == p else 0.0))
    design_rows = np.concatenate(probe_design)
    unit = {p: np.concatenate(v) for p, v in probe_unit.items()}
    probe = model.violations_matrix(evaluate_deviations(
        space, designs, gap_m, _deviations_from_unit(spreads, design_rows, unit, ambient)
    )).reshape(len(PARAMETERS), 2, n, n_c)
    # Harmful side per (parameter, design, constraint): +1 when the + end violates more.
    harmful = np.where(probe[:, 1] > probe[:, 0], 1.0, -1.0)  # (P, n, C)
    corner_design = np.tile(np.arange(n), n_c)  # row = c * n + i
    corner_unit = {
        p: harmful[k].T.ravel() for k, p in enumerate(PARAMETERS)  # (C, n) -> rows
    }
    at_corner = model.violations_matrix(evaluate_deviations(
        space, designs, gap_m,
        _deviations_from_unit(spreads, corner_design, corner_unit, ambient),
    )).reshape(n_c, n, n_c)
    own = np.stack([at_corner[c, :, c] for c in range(n_c)], axis=1)
    return own, at_corner.max(axis=0)
