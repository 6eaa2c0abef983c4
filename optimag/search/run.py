"""From a study to a finished search: front, short-list, run record (the run folder is
written by `optimag.runfolder`)."""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from optimag import __version__, model, records, tolerance
from optimag.errors import InputError, Problem
from optimag.ranges import MAX_CANDIDATES, MEMORY_BUDGET_BYTES
from optimag.search import parallel
from optimag.search.exhaustive import CANDIDATE_FIELDS, SearchPlan, explore_exhaustive, plan
from optimag.search.fingerprint import study_fingerprint
from optimag.search.given import reference_design_records
from optimag.search.hand import hand_sizing
from optimag.search.pareto import (
    KNEE_METHOD,
    NORMALISATION_METHOD,
    knee_index,
    layer_numbers,
)
from optimag.search.shortlist import SHORTLIST_METHOD, spread_shortlist
from optimag.study.catalog_check import (
    check_study_against_catalog,
    line_of,
)

DEFAULT_TOP = 20
#: Search strategies `explore` runs.
STRATEGIES = ("exhaustive", "optuna")


@dataclass
class ExploreResult:
    """A finished search. ``pareto``, ``shortlist`` and ``eliminated`` are DataFrames;
    ``record`` is the run record written to run.json."""

    study: object
    catalog: object
    space: model.DesignSpace
    pareto: pd.DataFrame
    shortlist: pd.DataFrame
    shortlist_records: list[dict]
    eliminated: pd.DataFrame
    record: dict
    front_candidates: model.Candidates | None
    front_metrics: dict[str, np.ndarray] | None
    near_miss_records: list[dict] = field(default_factory=list)
    run_dir: Path | None = None
    #: Records of every front design (the short-listed ones among them), front order.
    front_records: list[dict] = field(default_factory=list)
    #: The first non-dominated layers of the feasible designs, columnar (`near_front`).
    near_front: dict | None = None

    @property
    def feasible(self) -> bool:
        return len(self.pareto) > 0


def explore(study, catalog=None, *, strategy: str | None = None, trials: int | None = None,
            seed: int | None = None, storage: str | None = None, top: int = DEFAULT_TOP,
            progress=None, chunk_size: int | None = None,
            re_evaluate: bool = False, force: bool = False,
            announce: Callable[[str], None] | None = None, workers: int | None = None,
            scheduler: str | None = None) -> ExploreResult:
    """Run what the study asks and build the front, short-list and run record.

    ``study`` is a loaded Study or a path to a study file; ``catalog`` defaults to the
    study's catalogue. ``strategy`` (default: the study's ``[search] strategy``) is
    ``"exhaustive"`` (every candidate of the catalogue) or ``"optuna"`` (``trials``,
    ``seed`` and ``storage`` (SQLAlchemy URL or ``.journal`` file path) apply, and a
    ``[custom_core]`` table is searched beside the catalogue; an existing optuna study in
    ``storage`` is resumed, or re-scored under this study with ``re_evaluate``). A
    ``[custom_core]`` table under the exhaustive strategy is noted in the run record: only
    the catalogue is enumerated.

    Before an exhaustive search, the candidate count and estimated peak memory are passed
    to ``announce`` (one line of text); a space above `optimag.ranges.MAX_CANDIDATES`
    candidates or `optimag.ranges.MEMORY_BUDGET_BYTES` of estimated memory raises
    InputError unless ``force``.

    The exhaustive search runs on ``workers`` processes of this machine (default: every
    core when the space has at least `parallel.PARALLEL_MIN_CANDIDATES` candidates, else
    this process alone), or on the running Dask cluster at ``scheduler``
    (`optimag.search.parallel`); the front and counts are the same.
    """
    from optimag.catalog import load_catalog
    from optimag.study import load_study

    if not hasattr(study, "search"):
        study = load_study(Path(study))
    if catalog is None:
        catalog = load_catalog(study.catalog.path)
    check_study_against_catalog(study, catalog)
    strategy = strategy or study.search.strategy
    if strategy not in STRATEGIES:
        raise InputError([Problem(str(study.path), line_of(study, "strategy"),
                                  "search.strategy",
                                  f"'{strategy}' is not one of {', '.join(STRATEGIES)}")])
    if strategy == "optuna":
        from optimag.search.optuna_search import explore_optuna

        return explore_optuna(study, catalog, trials=trials, seed=seed, top=top,
                              storage=storage, progress=progress, re_evaluate=re_evaluate)
    space = model.build_design_space(study, catalog)
    objectives = list(study.search.objectives)
    search_plan = plan(space, chunk_size) if chunk_size else plan(space)
    if announce is not None:
        announce(search_plan.describe())
    if not force:
        refuse_oversized(study, search_plan)
    robust = {"robust": study.tolerance} if study.search.robust else {}
    n_workers = workers if workers is not None else parallel.default_workers(
        search_plan.candidates)
    if scheduler or n_workers > 1:
        if announce is not None:
            announce(f"searching on the Dask cluster at {scheduler}" if scheduler else
                     f"searching on {n_workers} worker processes")
        with parallel.cluster(n_workers, scheduler) as client:
            outcome = parallel.explore_on_cluster(space, objectives, client,
                                                  search_plan=search_plan,
                                                  progress=progress, **robust)
            diagnosis = _diagnose(space, search_plan, outcome, announce, client)
        where = {"scheduler": scheduler} if scheduler else {"workers": n_workers}
    else:
        outcome = explore_exhaustive(space, objectives, progress=progress,
                                     search_plan=search_plan, **robust)
        diagnosis = _diagnose(space, search_plan, outcome, announce)
        where = {"workers": 1}
    result = _assemble(study, catalog, space, objectives, outcome, top, diagnosis=diagnosis)
    result.record["parallel"] = where
    if getattr(study, "custom_core", None) is not None:
        result.record.setdefault("notes", []).append(
            "[custom_core] is searched by the optuna strategy only; this exhaustive run "
            "covers the catalogue's cores")
    return result


def _diagnose(space, search_plan, outcome, announce, client=None):
    """The diagnosis of an infeasible exhaustive run (its nearest misses replace the
    search's), on the Dask ``client``'s cluster when given; None when the run found a
    feasible design or was interrupted."""
    from optimag.search.diagnosis import diagnose_exhaustive

    if outcome.feasible or outcome.interrupted or not outcome.total:
        return None
    if announce is not None:
        announce("no candidate meets every constraint; counting what each constraint rules "
                 "out on its own")
    start = time.perf_counter()
    try:
        if client is not None:
            diagnosis = parallel.diagnose_on_cluster(space, client, search_plan)
        else:
            diagnosis = diagnose_exhaustive(space, search_plan)
    except KeyboardInterrupt:
        return None
    diagnosis.wall_time_s = time.perf_counter() - start
    if diagnosis.near_misses is not None:
        outcome.near_misses = diagnosis.near_misses
        outcome.near_miss_violation = diagnosis.near_miss_violation
    return diagnosis


#: Candidates per second assumed for the time estimate in a refusal (the slower example
#: studies on one core of a small machine, tests/benchmarks/explore_speed.py).
_ASSUMED_RATE = 3e6


def refuse_oversized(study, search_plan: SearchPlan) -> None:
    """Raise InputError when the exhaustive search's space is above the candidate limit or
    its estimated peak memory above the budget (the user may insist with --force)."""
    advice = (
        "narrow [search] turns, stacks or parallels, filter cores/materials/wires, use "
        "--strategy optuna, or pass --force to run it anyway"
    )
    problems = []
    if search_plan.candidates > MAX_CANDIDATES:
        hours = search_plan.candidates / _ASSUMED_RATE / 3600
        problems.append(Problem(
            str(study.path), line_of(study, "turns_max"), "search",
            f"the design space has {search_plan.candidates:,} candidates (about "
            f"{hours:,.1f} h at {_ASSUMED_RATE / 1e6:g} M/s), above the exhaustive search's "
            f"limit of {MAX_CANDIDATES:,}; {advice}",
        ))
    if search_plan.peak_bytes > MEMORY_BUDGET_BYTES:
        problems.append(Problem(
            str(study.path), None, "search",
            f"the exhaustive search would need about {search_plan.peak_bytes / 1e6:,.0f} MB "
            f"(budget {MEMORY_BUDGET_BYTES / 1e6:,.0f} MB), mostly for the catalogue; "
            f"{advice}",
        ))
    if problems:
        raise InputError(problems)


def _assemble(study, catalog, space, objectives, outcome, top,
              catalogue_space=None, diagnosis=None) -> ExploreResult:
    """Front, short-list, records and run record of a finished search. ``catalogue_space``
    (default ``space``) holds the catalogue's cores only, for the hand procedure;
    ``diagnosis`` (`optimag.search.diagnosis.Diagnosis`, infeasible runs) goes into the
    record."""
    front = outcome.front
    front_candidates = front_metrics = None
    tolerance_record: dict = {}
    pareto = pd.DataFrame(columns=records.PARETO_COLUMNS)
    shortlist_records: list[dict] = []
    front_records: list[dict] = []
    front_ids: list[str] = []
    order = np.arange(0)
    if len(front):
        order = np.lexsort(front.objectives.T[::-1])
        front_candidates = model.Candidates(
            **{f: front.payload[f][order] for f in CANDIDATE_FIELDS}
        )
        front_metrics = model.evaluate(space, front_candidates)
        ids = [f"D{i + 1:04d}" for i in range(len(order))]
        front_ids = ids
        front_records = records.design_records(space, front_candidates, front_metrics, ids)
        knee = knee_index(front.objectives[order])
        for i, rec in enumerate(front_records):
            rec["knee"] = i == knee
        groups = np.column_stack([front_candidates.core, front_candidates.material,
                                  front_candidates.turns])
        picked = spread_shortlist(front.objectives[order], groups, top)
        # The knee first, then the rest in front order (sorted by the first objective).
        ranked = picked[:1] + sorted(picked[1:])
        tolerance_record = _yields(study, space, front_candidates, front_metrics,
                                   front_records, ranked)
        pareto = records.pareto_frame(front_records)
        shortlist_records = [front_records[i] for i in ranked]
        for rank, rec in enumerate(shortlist_records, start=1):
            rec["rank"] = rank
    near_records = []
    if outcome.feasible == 0 and outcome.near_misses is not None:
        near_metrics = model.evaluate(space, outcome.near_misses)
        ids = [f"M{i + 1:02d}" for i in range(len(outcome.near_misses))]
        near_records = records.design_records(space, outcome.near_misses, near_metrics, ids)

    eliminated = pd.DataFrame(
        [{"constraint": k, "eliminated": v, "share": v / max(outcome.total, 1)}
         for k, v in outcome.eliminated.items()]
    )
    counted = int(outcome.feasible) + sum(int(v) for v in outcome.eliminated.values())
    limits = study.limits.model_dump() if hasattr(study.limits, "model_dump") else {}
    record = {
        "tool": "optimag",
        "version": __version__,
        "study_name": study.name,
        "study_title": study.title,
        "strategy": "exhaustive",
        "catalog_folder": str(catalog.folder),
        "catalog_hash": catalog.content_hash,
        "model": {
            "fringing": space.requirements.fringing,
            "thermal": space.requirements.thermal_model,
            "cooling": space.requirements.cooling.mode,
            "temperature_limit_applies_to": "hot spot",
            "outside_fit": space.requirements.outside_fit,
            "core_loss": space.requirements.core_loss,
            "ac_resistance": space.requirements.ac_resistance,
            "harmonics": int(space.operating.harmonics_A.shape[1]),
            "winding_loss_temperature": "interpolated between "
            f"{model.WINDING_REFERENCE_TEMPERATURES_C[0]} and "
            f"{model.WINDING_REFERENCE_TEMPERATURES_C[1]} degC",
        },
        "objectives": objectives,
        "shortlist_method": SHORTLIST_METHOD,
        "knee_method": KNEE_METHOD,
        "normalisation": NORMALISATION_METHOD,
        "required_inductance_uH": space.requirements.inductance_H * 1e6,
        "counts": {
            # Candidates counted (feasible + eliminated); an interrupted exhaustive run
            # also says how many of the space it did not reach.
            "total": counted,
            "feasible": int(outcome.feasible),
            "pareto": len(pareto),
            "eliminated": {k: int(v) for k, v in outcome.eliminated.items()},
            "stages": outcome.stage_sizes,
        },
        "interrupted": outcome.interrupted,
        "fingerprint": study_fingerprint(study, catalog),
        "wall_time_s": round(outcome.wall_time_s, 4),
        "candidates_per_s": round(outcome.total / max(outcome.wall_time_s, 1e-9), 1),
        "limits": limits,
        # Each point as the study gives it (the keys its topology reads).
        "operating_points": [
            p.model_dump(mode="json", exclude_none=True, exclude_defaults=False)
            for p in study.operating_points
        ],
        "topology": study.converter.topology,
        "currency": study.cost.currency,
        # The price and hours behind energy_cost and lifetime_cost (None: not set).
        "energy": {"energy_price_per_kWh": study.cost.energy_price_per_kWh,
                   "operating_hours": study.cost.operating_hours},
        "near_misses": near_records,
        "diagnosis": diagnosis.record() if diagnosis is not None else None,
        "hand_sizing": hand_sizing(
            catalogue_space or space, objectives,
            front.objectives[order] if len(front) else None, front_ids,
        ),
        "tolerance": tolerance_record,
        "robust": _robust_record(study, outcome, objectives),
        "reference_designs": reference_design_records(study, catalog),
    }
    if outcome.interrupted and int(outcome.total) > counted:
        record["counts"]["not_reached"] = int(outcome.total) - counted
    return ExploreResult(
        study=study, catalog=catalog, space=space, pareto=pareto,
        shortlist=records.records_frame(shortlist_records), shortlist_records=shortlist_records,
        eliminated=eliminated, record=record, front_candidates=front_candidates,
        front_metrics=front_metrics, near_miss_records=near_records,
        front_records=front_records,
        near_front=near_front(space, objectives, getattr(outcome, "pool", None),
                              front_candidates, front_ids, study),
    )


def _yields(study, space, candidates, metrics, front_records, shortlisted) -> dict:
    """Monte Carlo yield of the short-listed designs (or the whole front, by the study's
    ``[tolerance] scope``), written into their records; returns run.json's account."""
    spec = study.tolerance
    analysed = list(range(len(front_records))) if spec.scope == "front" else list(shortlisted)
    start = time.perf_counter()
    index = np.asarray(analysed, dtype=np.int64)
    result = tolerance.monte_carlo(space, candidates.take(index), metrics["gap_m"][index], spec)
    records.add_yields([front_records[i] for i in analysed], result)
    return {
        "method": "Monte Carlo over the [tolerance] spreads with the search's model; gap as "
                  "built (never re-solved); each spread alone for the yield driver",
        "seed": result.seed,
        "samples": result.n_samples,
        "scope": spec.scope,
        "designs": len(analysed),
        "wall_time_s": round(time.perf_counter() - start, 3),
        "spreads": spec.model_dump(exclude={"samples", "seed", "scope"}),
    }


def _robust_record(study, outcome, objectives) -> dict:
    """run.json's account of a robust search: whether it ran, and the nominal front's
    objective values beside the robust one for the report's comparison."""
    if not study.search.robust:
        return {"enabled": False}
    nominal = getattr(outcome, "nominal_front", None)
    points = [] if nominal is None or not len(nominal) else nominal.objectives.tolist()
    return {
        "enabled": True,
        "method": "every limit met at each constraint's worst tolerance corner",
        "objectives": list(objectives),
        "nominal_front": points,
    }


def near_front(space, objectives, pool, front_candidates, front_ids, study) -> dict | None:
    """The near-front pool as columns for the report's what-if limits: each design's
    construction (catalogue ids), its objectives and the figures the limits act on,
    its front id where it is on the front, the layers held and the study's limits."""
    if pool is None or not len(pool):
        return None
    payload = pool.payload
    front_key = {}
    if front_candidates is not None:
        for i, design in enumerate(front_ids):
            front_key[tuple(int(getattr(front_candidates, f)[i])
                            for f in CANDIDATE_FIELDS)] = design
    keys = zip(*(payload[f].astype(int).tolist() for f in CANDIDATE_FIELDS), strict=True)
    columns = {
        "core": [str(space.cores.ids[i]) for i in payload["core"]],
        "material": [str(space.materials.ids[i]) for i in payload["material"]],
        "wire": [str(space.wires.ids[i]) for i in payload["wire"]],
        "stack": payload["stack"].astype(int).tolist(),
        "turns": payload["turns"].astype(int).tolist(),
        "parallel": payload["parallel"].astype(int).tolist(),
        "hotspot_temperature_C": payload["worst_hotspot_temperature_C"].tolist(),
        "box_height_mm": (payload["box_height_m"] * 1e3).tolist(),
        "footprint_mm2": (payload["footprint_m2"] * 1e6).tolist(),
        "volume_cm3": payload["volume_cm3"].tolist(),
        "weighted_loss_W": payload["weighted_loss_W"].tolist(),
        "design_id": [front_key.get(k, "") for k in keys],
        "layer": layer_numbers(pool.objectives).tolist(),
    }
    for index, name in enumerate(objectives):
        columns[model.OBJECTIVE_COLUMNS[name]] = pool.objectives[:, index].tolist()
    limits = study.limits
    return {
        "objectives": list(objectives),
        "layers": pool.layers,
        "cap": pool.cap,
        "count": len(pool),
        "limits": {
            "hotspot_temperature_C": limits.max_temperature_C,
            "box_height_mm": limits.max_height_mm,
            "footprint_mm2": limits.max_footprint_mm2,
            "weighted_loss_W": limits.max_loss_W,
            "volume_cm3": limits.max_volume_cm3,
        },
        "columns": columns,
    }
