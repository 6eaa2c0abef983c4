"""Evaluate given designs (the one on the bench, a colleague's proposal, a study's
``[[reference_designs]]``) with the same model and the same record format as the search.

A given design names its core, material, wire, turns, parallel strands and stack by the
catalogue's ids; the gap is either given or solved for the study's inductance exactly as
the search solves it. The design space is the study's own, narrowed to the named rows, so
the requirements, operating points and model choices are those the search uses and the
record is the one the search would write for the same design.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, replace

import numpy as np

from optimag import model, records, tolerance
from optimag.errors import ValidityRangeWarning
from optimag.study.catalog_check import (  # noqa: F401  (part of this module's interface)
    GAP_KINDS,
    GivenDesign,
    check_given,
    given_from_entry,
)


@dataclass(frozen=True)
class ConstraintCheck:
    """One constraint of one design: its normalised margin (> 0 met, <= 0 violated, the
    model's violation with its sign turned) and the figure and limit it compares."""

    name: str
    margin: float
    value: str
    limit: str

    @property
    def met(self) -> bool:
        return self.margin >= 0.0


@dataclass(frozen=True)
class Evaluation:
    """A given design's record (shortlist.json format) and its constraint checks."""

    record: dict
    checks: tuple[ConstraintCheck, ...]

    @property
    def violated(self) -> list[str]:
        return [c.name for c in self.checks if not c.met]


def _design_space(study, catalog, design: GivenDesign) -> model.DesignSpace:
    kind = design.gap_kind or study.search.gap_kinds[0]
    search = study.search.model_copy(update={
        "cores": (design.core,), "materials": (design.material,), "wires": (design.wire,),
        "gap": "solve", "gap_kinds": (kind,),
    })
    narrowed = study.model_copy(update={"search": search})
    return model.build_design_space(narrowed, catalog)


def evaluate_given(
    study, catalog, design: GivenDesign, source: str = "", prefix: str = ""
) -> Evaluation:
    """Evaluate one given design with the search's model; its record is exactly what the
    search writes to shortlist.json for the same design (``rank`` None, ``knee`` False)."""
    check_given(study, catalog, design, source or str(study.path), prefix)
    space = _design_space(study, catalog, design)
    if design.gap_mm is not None:
        space = replace(space, gap_grid_m=np.array([design.gap_mm * 1e-3]))
    candidates = model.Candidates.from_arrays(
        core=0, stack=design.stack, material=0, turns=design.turns, gap_option=0, wire=0,
        parallel=design.parallel,
    )
    with warnings.catch_warnings():
        # The record's model_notes say where a figure rests on a model outside its range.
        warnings.simplefilter("ignore", ValidityRangeWarning)
        metrics = model.evaluate(space, candidates)
        record = records.design_records(space, candidates, metrics, [design.name])[0]
        # The same Monte Carlo yield a short-listed design carries (per-design seeds, so the
        # figures do not depend on the batch).
        spec = getattr(study, "tolerance", None)
        if spec is not None:
            records.add_yields([record], tolerance.monte_carlo(space, candidates,
                                                                metrics["gap_m"], spec))
    record["rank"] = None
    record["knee"] = False
    return Evaluation(record=record, checks=constraint_checks(space, metrics, 0))


def constraint_checks(space: model.DesignSpace, metrics: dict, i: int) -> tuple:
    """Every constraint of `model.CONSTRAINTS` for candidate ``i``, with the figure it
    compares and its limit in trade units."""
    req = space.requirements
    violations = model.violations_matrix({k: v[i:i + 1] for k, v in metrics.items()})[0]
    l_uH = metrics["inductance_H"][i] * 1e6
    target = req.inductance_H * 1e6
    shown = {
        "inductance": (f"{l_uH:.4g} µH",
                       f"{target:.4g} µH ± {req.tolerance * 100:.3g} %"),
        "saturation": (f"{metrics['worst_flux_T'][i]:.4g} T in Amin",
                       f"{metrics['flux_limit_T'][i]:.4g} T"),
        "inductance_at_peak": (
            f"{metrics['inductance_at_peak_H'][i] / req.inductance_H:.3g} of the required L",
            f">= {req.min_fraction_at_peak:.3g}"),
        "window_fit": (f"{metrics['build_m'][i] * 1e3:.4g} mm build",
                       "fits the window"),
        "fill_factor": (f"{metrics['fill_factor'][i]:.3g}", f"{req.max_fill_factor:.3g}"),
        "height": (f"{metrics['box_height_m'][i] * 1e3:.4g} mm",
                   _limit(req.max_height_m * 1e3, "mm")),
        "footprint": (f"{metrics['footprint_m2'][i] * 1e6:.4g} mm²",
                      _limit(req.max_footprint_m2 * 1e6, "mm²")),
        "temperature": (f"{metrics['worst_temperature_C'][i]:.4g} °C",
                        f"{req.max_temperature_C:.4g} °C"),
        "loss_budget": (f"{metrics['weighted_loss_W'][i]:.4g} W weighted",
                        _limit(req.max_loss_W, "W")),
        "volume": (f"{metrics['volume_cm3'][i]:.4g} cm³",
                   _limit(getattr(req, "max_volume_m3", math.inf) * 1e6, "cm³")),
        "mass": (f"{metrics['mass_g'][i]:.4g} g",
                 _limit(getattr(req, "max_mass_kg", math.inf) * 1e3, "g")),
    }
    return tuple(
        ConstraintCheck(name, -float(violations[k]), *shown.get(name, ("", "")))
        for k, name in enumerate(model.CONSTRAINTS)
    )


def _limit(value: float, unit: str) -> str:
    return "none" if not math.isfinite(value) else f"{value:.4g} {unit}"


def reference_design_records(study, catalog) -> list[dict]:
    """Records of the study's ``[[reference_designs]]`` (shortlist.json format, with
    ``violated`` naming the constraints each one misses)."""
    out = []
    for index, entry in enumerate(getattr(study, "reference_designs", ()) or ()):
        result = evaluate_given(study, catalog, given_from_entry(entry), str(study.path),
                                f"reference_designs[{index}].")
        out.append({**result.record, "violated": result.violated})
    return out
