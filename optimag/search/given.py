"""Evaluate given designs (the one on the bench, a colleague's proposal, a study's
``[[reference_designs]]``) with the same model and the same record format as the search.

A given design names its core, material, wire, turns, parallel strands and stack by the
catalogue's ids; the gap is either given or solved for the study's inductance exactly as
the search solves it. The design space is the study's own, narrowed to the named rows, so
the requirements, operating points and model choices are those the search uses and the
record is the one the search would write for the same design.
"""

from __future__ import annotations

import difflib
import math
import warnings
from dataclasses import dataclass, replace

import numpy as np

from optimag import model, records, tolerance
from optimag.errors import InputError, Problem, ValidityRangeWarning


@dataclass(frozen=True)
class GivenDesign:
    """A design named by catalogue ids; ``gap_mm`` None means solved as in the search;
    ``gap_kind`` ("centre": ground centre leg, "spacer": every leg gapped) None means the
    study's first allowed kind."""

    core: str
    material: str
    turns: int
    wire: str
    parallel: int = 1
    stack: int = 1
    gap_mm: float | None = None
    name: str = "given"
    gap_kind: str | None = None


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


def _problem(source: str, field: str, message: str) -> Problem:
    return Problem(source, None, field, message)


def _index(table, ident: str, what: str, source: str, field: str, folder) -> tuple[int, list]:
    ids = table["id"].astype(str).tolist()
    if ident in ids:
        return ids.index(ident), []
    close = difflib.get_close_matches(ident, ids, n=1)
    hint = f"; did you mean '{close[0]}'?" if close else ""
    return -1, [_problem(source, field, f"no {what} '{ident}' in the catalogue {folder}{hint}")]


#: How a discrete gap can be made (`optimag evaluate --gap-kind`, `[[reference_designs]]`).
GAP_KINDS = ("centre", "spacer")


def _design_space(study, catalog, design: GivenDesign) -> model.DesignSpace:
    kind = design.gap_kind or study.search.gap_kinds[0]
    search = study.search.model_copy(update={
        "cores": (design.core,), "materials": (design.material,), "wires": (design.wire,),
        "gap": "solve", "gap_kinds": (kind,),
    })
    narrowed = study.model_copy(update={"search": search})
    return model.build_design_space(narrowed, catalog)


def check_given(study, catalog, design: GivenDesign, source: str, prefix: str = "") -> None:
    """Raise `InputError` listing every problem of a given design against the catalogue.

    ``source`` names the file (or command line) the design came from; ``prefix`` is
    prepended to field names (``reference_designs[0].`` or ``--``)."""
    problems: list[Problem] = []
    folder = catalog.folder
    core_row, found = _index(catalog.cores, design.core, "core", source, f"{prefix}core", folder)
    problems += found
    mat_row, found = _index(catalog.materials, design.material, "material", source,
                            f"{prefix}material", folder)
    problems += found
    problems += _index(catalog.wires, design.wire, "wire", source, f"{prefix}wire", folder)[1]
    for field, value in (("turns", design.turns), ("parallel", design.parallel),
                         ("stack", design.stack)):
        if int(value) < 1:
            problems.append(_problem(source, f"{prefix}{field}", f"must be at least 1, got "
                                                                  f"{value}"))
    if design.gap_kind is not None and design.gap_kind not in GAP_KINDS:
        problems.append(_problem(source, f"{prefix}gap_kind",
                                 f"must be one of {', '.join(GAP_KINDS)}, got "
                                 f"'{design.gap_kind}'"))
    if design.gap_mm is not None and not (math.isfinite(design.gap_mm) and design.gap_mm >= 0):
        problems.append(_problem(source, f"{prefix}gap_mm",
                                 f"must be a finite length >= 0, got {design.gap_mm}"))
    if core_row >= 0:
        core = catalog.cores.iloc[core_row]
        if design.stack > int(core["max_stack"]):
            problems.append(_problem(
                source, f"{prefix}stack",
                f"core '{design.core}' stacks at most {int(core['max_stack'])} sets, "
                f"got {design.stack}",
            ))
        if mat_row >= 0:
            kind = str(catalog.materials.iloc[mat_row]["kind"])
            ungappable = kind == "powder" or str(core["family"]) == "toroid"
            for field, given in (("gap_mm", design.gap_mm), ("gap_kind", design.gap_kind)):
                if ungappable and given:
                    problems.append(_problem(
                        source, f"{prefix}{field}",
                        "a discrete gap is cut only in ferrite E and pot cores; "
                        f"{design.material} on {design.core} takes none (leave it out)",
                    ))
    if problems:
        raise InputError(problems)


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


def given_from_entry(entry) -> GivenDesign:
    """A study's ``[[reference_designs]]`` entry as a `GivenDesign`."""
    return GivenDesign(
        core=entry.core, material=entry.material, turns=entry.turns, wire=entry.wire,
        parallel=entry.parallel, stack=entry.stack, gap_mm=entry.gap_mm, name=entry.name,
        gap_kind=entry.gap_kind,
    )


def reference_design_records(study, catalog) -> list[dict]:
    """Records of the study's ``[[reference_designs]]`` (shortlist.json format, with
    ``violated`` naming the constraints each one misses)."""
    out = []
    for index, entry in enumerate(getattr(study, "reference_designs", ()) or ()):
        result = evaluate_given(study, catalog, given_from_entry(entry), str(study.path),
                                f"reference_designs[{index}].")
        out.append({**result.record, "violated": result.violated})
    return out
