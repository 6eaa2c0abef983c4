"""The samplers: NSGA-II (default) or multivariate TPE, as optuna publishes them.

Constraints reach both through ``Trial.set_constraint`` (one value per trial, see
`attrs.CONSTRAINT`). NSGA-II's generation bookkeeping is overridden through the public
methods of optuna's genetic-algorithm base (`BatchFriendlyNSGAIISampler`).
"""

from __future__ import annotations

import warnings

import optuna
from optuna.samplers.nsgaii import PolynomialMutation
from optuna.trial import FrozenTrial, TrialState

from optimag.search.optuna_search.attrs import ATTR_GENERATION

__all__ = ["DEFAULT_POPULATION", "BatchFriendlyNSGAIISampler", "make_sampler",
           "sampled_generation"]

#: NSGA-II population size: large enough to hold separate regions of a fragmented feasible
#: set while converging within 3000 trials (tuned with tests/benchmarks/optuna_vs_exhaustive.py).
DEFAULT_POPULATION = 100


def make_sampler(name: str, seed: int | None, population_size: int = DEFAULT_POPULATION,
                 mutation_prob: float | None = None) -> optuna.samplers.BaseSampler:
    """The study's sampler: NSGA-II (default) or multivariate TPE.

    NSGA-II mutates integers and floats locally (polynomial mutation) instead of
    redrawing them uniformly, which keeps children near good parents.
    """
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", optuna.exceptions.ExperimentalWarning)
        if name == "tpe":
            return optuna.samplers.TPESampler(
                seed=seed, multivariate=True, group=False, constant_liar=True,
                n_startup_trials=population_size,
            )
        return BatchFriendlyNSGAIISampler(
            seed=seed, population_size=population_size, mutation_prob=mutation_prob,
            mutation=PolynomialMutation(),
        )


class BatchFriendlyNSGAIISampler(optuna.samplers.NSGAIISampler):
    """NSGA-II whose generations are kept by optimag and worked out once per batch.

    optuna's genetic-algorithm base puts a new trial in the newest generation unless that
    one already holds ``population_size`` complete trials, scanning every complete trial
    at every ask. This sampler overrides the two public methods that read and assign
    generations (`get_trial_generation`, `get_population`):

    * the generation of each trial it samples is kept here by trial number
      (`generations`) and written by the search loop into the trial's user attribute
      ``optimag.generation`` (`sampled_generation`), which trials read back from a
      storage carry;
    * while a batch is asked no trial completes, so the scan is cached on the number of
      complete trials (which only grows).

    Generations, and so the trials a seed produces, are those of optuna's own
    NSGAIISampler (tested). One sampler serves one study.
    """

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        #: Generation of each trial this sampler sampled, by trial number.
        self.generations: dict[int, int] = {}
        #: (study name, complete trials) -> (newest generation, its complete trials).
        self.newest: tuple[tuple[str, int], int, int] | None = None

    def generation_of(self, trial: FrozenTrial) -> int | None:
        """The generation of ``trial``: its user attribute, else what this sampler gave it."""
        generation = trial.user_attrs.get(ATTR_GENERATION)
        return self.generations.get(trial.number) if generation is None else generation

    def get_trial_generation(self, study: optuna.Study, trial: FrozenTrial) -> int:
        generation = self.generation_of(trial)
        if generation is not None:
            return generation
        complete = study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
        token = (study.study_name, len(complete))
        if self.newest is None or self.newest[0] != token:
            newest, count = 0, 0
            for past in complete:
                past_generation = self.generation_of(past)
                past_generation = -1 if past_generation is None else past_generation
                if past_generation > newest:
                    newest, count = past_generation, 1
                elif past_generation == newest:
                    count += 1
            self.newest = (token, newest, count)
        _, newest, count = self.newest
        generation = newest if count < self.population_size else newest + 1
        self.generations[trial.number] = generation
        return generation

    def get_population(self, study: optuna.Study, generation: int) -> list[FrozenTrial]:
        return [trial for trial in study.get_trials(deepcopy=False,
                                                    states=(TrialState.COMPLETE,))
                if self.generation_of(trial) == generation]


def sampled_generation(sampler: optuna.samplers.BaseSampler, number: int) -> int | None:
    """The generation ``sampler`` gave the trial numbered ``number`` (None for samplers
    without generations, or before the trial was sampled)."""
    if isinstance(sampler, BatchFriendlyNSGAIISampler):
        return sampler.generations.get(number)
    return None
