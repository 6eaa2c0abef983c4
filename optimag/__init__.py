"""optimag: power-inductor design search for switch-mode converters.

>>> import optimag
>>> study = optimag.load_study("studies/cargo-bike-buck.toml")   # doctest: +SKIP
>>> result = optimag.explore(study)                               # doctest: +SKIP
>>> result.pareto, result.shortlist, result.eliminated            # doctest: +SKIP
>>> optimag.write_run(result, "runs/demo")                        # doctest: +SKIP
"""

__version__ = "0.1.0"

__all__ = ["__version__", "explore", "load_catalog", "load_study", "write_run"]


def load_study(path):
    """Read and validate a study file (see `optimag.study.load_study`)."""
    from optimag.study import load_study as _load_study

    return _load_study(path)


def load_catalog(folder):
    """Read and validate a catalogue folder (see `optimag.catalog.load_catalog`)."""
    from optimag.catalog import load_catalog as _load_catalog

    return _load_catalog(folder)


def explore(study, *, strategy=None, trials=None, seed=None, storage=None, top: int = 20,
            catalog=None, progress=None, re_evaluate: bool = False, force: bool = False,
            announce=None, workers: int | None = None, scheduler: str | None = None):
    """Run what the study asks: its ``[search] strategy`` (or ``strategy``), exhaustive or
    optuna, with ``[custom_core]`` searched by optuna. ``study`` is a Study or a path.

    ``trials``, ``seed`` and ``storage`` (SQLAlchemy URL or ``.journal`` file path; in
    memory without it) apply to optuna; ``re_evaluate`` re-scores the trials of a storage
    started under a different study, catalogue or optimag version (which is refused
    otherwise). An exhaustive search passes its candidate count and estimated peak memory to
    ``announce`` and refuses a space above the size or memory limit unless ``force``. It
    runs on ``workers`` processes of this machine (default: every core for a large space)
    or on the Dask cluster at ``scheduler``, with the same front and counts. Returns an
    `ExploreResult`; see `optimag.search.run.explore`.
    """
    from optimag.search.run import explore as _explore

    return _explore(study, catalog, strategy=strategy, trials=trials, seed=seed,
                    storage=storage, top=top, progress=progress, re_evaluate=re_evaluate,
                    force=force, announce=announce, workers=workers, scheduler=scheduler)


def write_run(result, folder=None, *, overwrite: bool = False):
    """Write the run folder of an `explore` result (study copy, run.json, pareto and
    short-list tables, report) and return its path; see `optimag.runfolder.write_run`.
    Without ``folder``, a new ``runs/<study>-<timestamp>`` is created."""
    from optimag.runfolder import write_run as _write_run

    return _write_run(result, folder, overwrite=overwrite)
