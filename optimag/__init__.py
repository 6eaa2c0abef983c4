"""optimag: power-inductor design search for switch-mode converters.

>>> import optimag
>>> study = optimag.load_study("studies/cargo-bike-buck.toml")   # doctest: +SKIP
>>> result = optimag.explore(study)                               # doctest: +SKIP
>>> result.pareto, result.shortlist, result.eliminated            # doctest: +SKIP
"""

__version__ = "0.1.0"

__all__ = ["__version__", "explore", "load_catalog", "load_study"]


def load_study(path):
    """Read and validate a study file (see `optimag.spec.load_study`)."""
    from optimag.spec import load_study as _load_study

    return _load_study(path)


def load_catalog(folder):
    """Read and validate a catalogue folder (see `optimag.catalog.load_catalog`)."""
    from optimag.catalog import load_catalog as _load_catalog

    return _load_catalog(folder)


def explore(study, catalog=None, top: int = 20):
    """Exhaustive search of a study (a Study or a path); see `optimag.search.run.explore`."""
    from optimag.search.run import explore as _explore

    return _explore(study, catalog, top=top)
