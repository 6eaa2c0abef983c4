"""Trials per second of the optuna strategy in memory and persisted, in one run.

Runs the same study with the same seed in memory and with the run folder's default
storage (the journal file, in a temporary folder), alternating, after a short warm-up;
each figure is the median over ``--repeat`` runs of the trials told divided by the
loop's wall time (asking, decoding, evaluating, telling and, persisted, writing every
trial). Both runs must produce the same trials (checked). ``--sqlite`` adds an SQLite
database (the run folder's storage before the journal) for comparison.

    python tests/benchmarks/optuna_storage_speed.py
    python tests/benchmarks/optuna_storage_speed.py studies/solar-pump-boost.toml \\
        --trials 3000 --repeat 3 --sqlite

Prints, each on its own line, ``in-memory trials/s: N``, ``persisted trials/s: N`` and
their ratio. Target: persisted at least 60 % of in memory.
"""

from __future__ import annotations

import argparse
import statistics
import tempfile
import warnings
from pathlib import Path

from optimag.catalog import load_catalog
from optimag.errors import ValidityRangeWarning
from optimag.search import optuna_search as osearch
from optimag.study import load_study

ROOT = Path(__file__).resolve().parents[2]
DEFAULT_STUDY = ROOT / "studies" / "compute-pol-buck.toml"


def run_once(study, catalog, trials: int, seed: int, batch: int, storage: str | None):
    """Trials per second and the trials' parameters of one run (``storage``: None for
    memory, "folder" for the run folder's default, or a URL)."""
    problem = osearch.OptunaProblem(study, catalog)
    disk = None
    with tempfile.TemporaryDirectory() as folder:
        if storage is not None:
            spec = osearch.storage_spec(folder, None if storage == "folder" else
                                        storage.format(folder=folder))
            disk = osearch.open_optuna_study(problem, osearch.open_storage(spec), target=trials,
                                             batch_size=batch, sampler_name="nsga2")
        ostudy = osearch.memory_study(problem, osearch.make_sampler("nsga2", seed))
        counts = osearch.run_trials(ostudy, problem, trials, batch, disk=disk)
        params = [t.params for t in ostudy.get_trials(deepcopy=False)]
        if disk is not None:
            assert osearch.complete_count(disk) == trials
    return counts.told / counts.wall_time_s, params


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("study", nargs="?", type=Path, default=DEFAULT_STUDY)
    parser.add_argument("--trials", type=int, default=2000)
    parser.add_argument("--batch", type=int, default=64)
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--repeat", type=int, default=1)
    parser.add_argument("--sqlite", action="store_true",
                        help="also time an SQLite database (slow: tens of trials/s)")
    args = parser.parse_args()
    warnings.simplefilter("ignore", ValidityRangeWarning)
    study = load_study(args.study)
    catalog = load_catalog(study.catalog.path)
    run_once(study, catalog, args.batch, args.seed, args.batch, None)  # warm-up
    kinds = {"in-memory": None, "persisted": "folder"}
    if args.sqlite:
        kinds["sqlite"] = "sqlite:///{folder}/optuna.db"
    rates: dict[str, list[float]] = {kind: [] for kind in kinds}
    reference = None
    for _ in range(args.repeat):
        for kind, storage in kinds.items():
            rate, params = run_once(study, catalog, args.trials, args.seed, args.batch, storage)
            rates[kind].append(rate)
            reference = params if reference is None else reference
            assert params == reference, f"{kind}: other trials than in memory"
    medians = {kind: statistics.median(values) for kind, values in rates.items()}
    print(f"{args.study.name}: {args.trials} trials, batch {args.batch}, seed {args.seed}, "
          f"median of {args.repeat}; same trials in every storage")
    for kind in kinds:
        print(f"{kind} trials/s: {medians[kind]:.0f}")
    print(f"persisted / in-memory: {medians['persisted'] / medians['in-memory']:.2f}")


if __name__ == "__main__":
    main()
