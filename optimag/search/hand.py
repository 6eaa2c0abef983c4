"""The classic hand procedure, run on the study beside the search.

For each ferrite material of the study (the procedure sizes a gapped core), the
energy-storage (area product) method:

1. required area product Ap = L Ipk Irms / (Bmax J Ku) (`model.area_product_required_m4`:
   required inductance, the highest converter peak and RMS currents, the material's flux
   limit, J = `model.HAND_CURRENT_DENSITY_A_PER_M2`, Ku = the study's fill limit);
2. the smallest catalogue core (and stack) whose Ap = Ae Wa meets it; when the design on
   it breaks a limit of the study, the next core up (as an engineer iterates by hand);
3. turns N = ceil(L Ipk / (Bmax A)), here on the narrowest section A = Amin, where the
   model checks saturation;
4. copper section Irms / J: the round wire and parallel count of the study with the
   smallest copper section at or above it;
5. the gap for the inductance, as the search solves it (or the study's grid step that
   comes nearest).

C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed., CRC Press, 2011,
ch. "Inductor design fundamentals" (from memory). Each design is then evaluated with the
same model as the search, so it can be placed against the front.
"""

from __future__ import annotations

import numpy as np

from optimag import model, records
from optimag.codes import MaterialKind, WireKind

METHOD = (
    "area product (McLyman): Ap = L Ipk Irms / (Bmax J Ku), smallest catalogue core meeting "
    "it (the next up while a limit is broken), N = ceil(L Ipk / (Bmax Amin)), copper "
    "section Irms / J"
)


def _hand_design(space: model.DesignSpace, material: int, core: int, stack: int
                 ) -> model.Candidates:
    """Turns, wire and gap by the hand method on one core (and stack)."""
    c, w, req = space.cores, space.wires, space.requirements
    limit = float(model.saturation_limits(space, np.array([material]))[1][0])
    peak, rms = model.converter_peak_and_rms_A(space)
    area = c.amin_m2[core] * stack
    turns = max(int(np.ceil(req.inductance_H * float(peak.max()) / (limit * area))), 1)
    section = float(rms.max()) / model.HAND_CURRENT_DENSITY_A_PER_M2
    round_wires = np.flatnonzero(w.kind == WireKind.ROUND)
    pool = round_wires if len(round_wires) else np.arange(len(w.ids))
    wires = [(w.copper_area_m2[k] * p, int(p), int(k)) for k in pool for p in space.parallels
             if w.copper_area_m2[k] * p >= section]
    if wires:
        _, parallel, wire = min(wires)
    else:  # nothing is thick enough: the thickest the study allows
        _, parallel, wire = max((w.copper_area_m2[k] * p, int(p), int(k))
                                for k in pool for p in space.parallels)
    gaps = np.arange(space.n_gap_options)
    trial = model.Candidates.from_arrays(core=core, stack=stack, material=material,
                                         turns=turns, gap_option=gaps, wire=wire,
                                         parallel=parallel)
    if len(gaps) > 1:
        # The grid step nearest the target (the violation grows with the relative error).
        metrics = model.evaluate(space, trial)
        return trial.take([int(np.argmin(metrics["violation_inductance"]))])
    return trial


def _cores_by_area_product(space: model.DesignSpace, material: int) -> list[tuple[int, int]]:
    """(core, stack) whose Ap meets the material's requirement, smallest Ap first."""
    c = space.cores
    required = float(model.area_product_required_m4(space, np.array([material]))[0])
    options = []
    for core in range(len(c.ids)):
        if not model.gap_allowed(space, np.array([core]), np.array([material]))[0]:
            continue
        for stack in space.stacks:
            ap = c.ae_m2[core] * stack * c.window_area_m2[core]
            if stack <= c.max_stack[core] and ap >= required:
                options.append((ap, c.length_m[core] * c.width_m[core] * c.height_m[core],
                                core, int(stack)))
    return [(core, stack) for _, _, core, stack in sorted(options)]


def hand_sizing(
    space: model.DesignSpace, objectives: list[str], front: np.ndarray | None,
    front_ids: list[str] | None = None,
) -> dict:
    """The hand procedure's design for each ferrite material, evaluated with the model,
    with its place against the front (``front``: the front's objective matrix in the
    study's objective order, or None; ``front_ids`` its design ids, row for row)."""
    picked = []
    skipped = []
    tried = []
    for material in range(len(space.materials.ids)):
        if space.materials.kind[material] != MaterialKind.FERRITE:
            continue
        cores = _cores_by_area_product(space, material)
        if not cores:
            skipped.append(str(space.materials.ids[material]))
            continue
        # The smallest core meeting Ap first; when its design breaks a limit, the next
        # core up, as one would by hand.
        designs = [_hand_design(space, material, core, stack) for core, stack in cores]
        batch = model.Candidates(**{
            f: np.concatenate([getattr(d, f) for d in designs])
            for f in model.Candidates.__dataclass_fields__
        })
        feasible = np.flatnonzero(model.evaluate(space, batch)["feasible"])
        step = int(feasible[0]) if len(feasible) else 0
        picked.append(designs[step])
        tried.append((str(space.cores.ids[cores[0][0]]), cores[0][1], step, len(feasible) > 0))
    out = {
        "method": METHOD,
        "current_density_A_per_mm2": model.HAND_CURRENT_DENSITY_A_PER_M2 / 1e6,
        "window_utilisation": space.requirements.max_fill_factor,
        "no_core_large_enough": skipped,
        "designs": [],
    }
    if not picked:
        out["note"] = (
            "no ferrite material in this study: the procedure sizes a gapped ferrite core"
            if not any(space.materials.kind == MaterialKind.FERRITE)
            else "no catalogue core meets the required area product"
        )
        return out
    candidates = model.Candidates(**{
        f: np.concatenate([getattr(p, f) for p in picked])
        for f in model.Candidates.__dataclass_fields__
    })
    metrics = model.evaluate(space, candidates)
    ids = [f"H{i + 1}" for i in range(len(picked))]
    hand_records = records.design_records(space, candidates, metrics, ids)
    values = model.objective_matrix(metrics, objectives)
    for i, rec in enumerate(hand_records):
        beaten_by = 0
        same_as = None
        if front is not None and len(front):
            no_worse = np.all(front <= values[i] * (1 + 1e-12), axis=1)
            better = np.any(front < values[i] * (1 - 1e-12), axis=1)
            beaten_by = int(np.sum(no_worse & better))
            equal = np.flatnonzero(np.all(np.isclose(front, values[i], rtol=1e-9, atol=0),
                                          axis=1))
            if len(equal) and front_ids is not None:
                same_as = front_ids[int(equal[0])]
        first_core, first_stack, steps, found = tried[i]
        out["designs"].append({
            "first_core": first_core,
            "first_stack": first_stack,
            "cores_up_from_first": steps,
            "meets_every_limit": found,
            "front_designs_beating_it": beaten_by,
            "same_as_front_design": same_as,
            # Turns outside the study's range: the search could not have found it.
            "turns_in_search_range": bool(space.turns.min() <= rec["turns"]
                                          <= space.turns.max()),
            "worst_constraint": rec.get("worst_constraint"),
            "record": rec,
        })
    return out
