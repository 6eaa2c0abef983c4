"""The optuna studies of a search: the study of record in a storage (created, checked
against the fingerprint of what decides a trial's figures, re-scored) and the in-memory
study the sampler works on."""

from __future__ import annotations

from collections.abc import Sequence

import optuna
from optuna.trial import TrialState

from optimag import __version__
from optimag.errors import StorageError
from optimag.search.fingerprint import (
    fingerprint_changes,
    fingerprint_content,
    study_fingerprint,
)
from optimag.search.optuna_search.attrs import (
    ATTR_BATCH,
    ATTR_CATALOG_HASH,
    ATTR_CATALOG_PATH,
    ATTR_DESIGN,
    ATTR_FINGERPRINT,
    ATTR_FINGERPRINT_CONTENT,
    ATTR_OBJECTIVES,
    ATTR_PARAMETERS,
    ATTR_RESCORED,
    ATTR_SAMPLER,
    ATTR_STUDY_PATH,
    ATTR_STUDY_TEXT,
    ATTR_TARGET,
    ATTR_VERSION,
    ATTR_VIOLATIONS,
    CONSTRAINT,
    sampler_constraint,
)
from optimag.search.optuna_search.problem import OptunaProblem
from optimag.search.optuna_search.storage import complete_count

__all__ = ["RESCORE_BATCH", "memory_study", "open_optuna_study", "rescore_study",
           "trial_distributions"]

#: Trials re-scored per `model.evaluate` call in `rescore_study`.
RESCORE_BATCH = 2000


def memory_study(problem: OptunaProblem, sampler) -> optuna.Study:
    """An in-memory optuna study for ``problem``, all objectives minimised."""
    optuna.logging.set_verbosity(optuna.logging.WARNING)
    return optuna.create_study(sampler=sampler, study_name=problem.study_name,
                               directions=["minimize"] * len(problem.objectives))


def open_optuna_study(
    problem: OptunaProblem,
    storage: optuna.storages.BaseStorage,
    *,
    target: int,
    batch_size: int,
    sampler_name: str,
    re_evaluate: bool = False,
    shown: str = "the storage",
) -> optuna.Study:
    """Create or load the optuna study of ``problem`` in ``storage`` and record what a
    worker needs to join it. Its trials are written by `run_trials`; the sampler runs
    on an in-memory copy. ``shown`` names the storage in messages.

    An existing study whose fingerprint (`optimag.search.fingerprint`: the study content
    that decides a trial's figures, the catalogue's hash, the optimag version) differs
    from ``problem``'s is refused with a `StorageError` saying what changed, unless
    ``re_evaluate``: then every stored trial is re-scored under ``problem``
    (`rescore_study`).
    """
    optuna.logging.set_verbosity(optuna.logging.WARNING)
    directions = ["minimize"] * len(problem.objectives)
    try:
        # Loaded first: creating an existing study would still log an operation in a
        # journal, and a refused resume must leave the storage as it was.
        ostudy = optuna.load_study(study_name=problem.study_name, storage=storage,
                                   sampler=optuna.samplers.RandomSampler())
    except KeyError:
        ostudy = optuna.create_study(
            storage=storage, study_name=problem.study_name, directions=directions,
            load_if_exists=True,
        )
    attrs = ostudy.user_attrs
    content = fingerprint_content(problem.study, problem.catalog)
    fingerprint = study_fingerprint(problem.study, problem.catalog)
    if ATTR_STUDY_TEXT in attrs and attrs.get(ATTR_FINGERPRINT) != fingerprint:
        changes = fingerprint_changes(attrs.get(ATTR_FINGERPRINT_CONTENT), content)
        stored = complete_count(ostudy)
        if not re_evaluate:
            raise StorageError(
                f"the optuna study '{problem.study_name}' in {shown} was "
                f"scored under another study, catalogue or version (changed: "
                f"{', '.join(changes[:8])}{', ...' if len(changes) > 8 else ''}); its "
                f"{stored} stored trials would keep stale figures. Start a new study (a new "
                "--out, --overwrite to start this folder afresh, or with --storage another "
                "database or [study] name), or pass --re-evaluate to re-score every stored "
                "trial under the current study")
        ostudy = rescore_study(ostudy, problem, storage, changes)
        attrs = {}
    if ATTR_STUDY_TEXT not in attrs:
        for key, value in (
            (ATTR_STUDY_TEXT, problem.study.source_text),
            (ATTR_STUDY_PATH, str(problem.study.path)),
            (ATTR_CATALOG_PATH, str(problem.catalog.folder)),
            (ATTR_CATALOG_HASH, str(problem.catalog.content_hash)),
            (ATTR_OBJECTIVES, problem.objectives),
            (ATTR_SAMPLER, sampler_name),
            (ATTR_BATCH, int(batch_size)),
            (ATTR_VERSION, __version__),
            (ATTR_PARAMETERS, problem.describe()),
            (ATTR_FINGERPRINT, fingerprint),
            (ATTR_FINGERPRINT_CONTENT, content),
        ):
            ostudy.set_user_attr(key, value)
    if attrs.get(ATTR_TARGET) != int(target):
        ostudy.set_user_attr(ATTR_TARGET, int(target))
    return ostudy


def trial_distributions(problem: OptunaProblem) -> dict:
    """The parameter distributions of ``problem``'s trials (drawn once on a scratch study)."""
    scratch = optuna.create_study(directions=["minimize"] * len(problem.objectives))
    trial = scratch.ask()
    problem.suggest(trial)
    return trial.distributions


_NUMBER_DISTRIBUTIONS = (optuna.distributions.IntDistribution,
                         optuna.distributions.FloatDistribution)


def fit_params(params: dict, distributions: dict) -> dict | None:
    """``params`` mapped onto ``distributions`` (numbers clipped into range and onto the
    step grid); None when a parameter is missing or a category no longer exists."""
    fitted = {}
    for name, dist in distributions.items():
        if name not in params:
            return None
        value = params[name]
        if isinstance(dist, optuna.distributions.CategoricalDistribution):
            if value not in dist.choices:
                return None
        elif isinstance(dist, _NUMBER_DISTRIBUTIONS):
            value = min(max(value, dist.low), dist.high)
            step = getattr(dist, "step", None)
            if step:
                value = dist.low + round((value - dist.low) / step) * step
                value = min(max(value, dist.low), dist.high)
            value = int(value) if isinstance(dist, optuna.distributions.IntDistribution) \
                else float(value)
        fitted[name] = value
    return fitted


def rescore_study(ostudy: optuna.Study, problem: OptunaProblem,
                  storage: optuna.storages.BaseStorage,
                  changes: Sequence[str] = ()) -> optuna.Study:
    """Re-score every COMPLETE trial of ``ostudy`` under ``problem`` and put the study back
    in ``storage`` under the same name with the new figures (returned, without optimag's
    study attributes: `open_optuna_study` sets them).

    Each trial's parameters are mapped onto the current parameter ranges (numbers clipped,
    a vanished category or parameter drops the trial), decoded into the design they name
    now and evaluated by the model; objectives and constraint values are replaced, the
    trial's other user attributes (its generation) kept. All trials are scored before the
    stored study is replaced, so an interruption while scoring leaves it as it was.
    """
    old = ostudy.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
    distributions = trial_distributions(problem)
    kept: list[tuple[optuna.trial.FrozenTrial, dict]] = []
    for trial in sorted(old, key=lambda t: t.number):
        fitted = fit_params(trial.params, distributions)
        if fitted is not None:
            kept.append((trial, fitted))
    rescored: list[optuna.trial.FrozenTrial] = []
    for start in range(0, len(kept), RESCORE_BATCH):
        part = kept[start:start + RESCORE_BATCH]
        numbers = list(range(start, start + len(part)))
        table = problem.decode(numbers, [p for _, p in part])
        objectives, violations = problem.evaluate(table)
        for k, (trial, fitted) in enumerate(part):
            user = {key: value for key, value in trial.user_attrs.items()
                    if key not in (ATTR_DESIGN, ATTR_VIOLATIONS)}
            user[ATTR_VIOLATIONS] = [float(v) for v in violations[k]]
            fresh = optuna.trial.create_trial(
                params=fitted, distributions=distributions,
                values=[float(v) for v in objectives[k]], user_attrs=user,
            )
            fresh.set_constraint(CONSTRAINT, sampler_constraint(violations[k]))
            rescored.append(fresh)
    optuna.delete_study(study_name=ostudy.study_name, storage=storage)
    fresh_study = optuna.create_study(storage=storage, study_name=problem.study_name,
                                      directions=["minimize"] * len(problem.objectives))
    fresh_study.add_trials(rescored)
    fresh_study.set_user_attr(ATTR_RESCORED, {
        "trials": len(rescored), "dropped": len(old) - len(rescored),
        "changes": list(changes), "version": __version__,
    })
    return fresh_study

