"""Names optimag keeps on optuna studies and trials (user attributes and the constraint).

Everything optimag stores beside optuna's own bookkeeping goes through optuna's public
``set_user_attr`` (study and trial) and ``Trial.set_constraint``; these are the keys.
"""

from __future__ import annotations

#: Study user attributes: what a worker needs to rebuild the design space.
ATTR_STUDY_TEXT = "optimag.study_text"
ATTR_STUDY_PATH = "optimag.study_path"
ATTR_CATALOG_PATH = "optimag.catalog_path"
ATTR_CATALOG_HASH = "optimag.catalog_hash"
ATTR_TARGET = "optimag.trials"
ATTR_SAMPLER = "optimag.sampler"
ATTR_BATCH = "optimag.batch_size"
ATTR_OBJECTIVES = "optimag.objectives"
ATTR_VERSION = "optimag.version"
#: Study user attribute: what the integer parameters index (core and wire orders).
ATTR_PARAMETERS = "optimag.parameters"
#: Study user attributes: the fingerprint of what decides a trial's figures, the content
#: it hashes (to say what changed), and the last re-scoring (`rescore_study`).
ATTR_FINGERPRINT = "optimag.fingerprint"
ATTR_FINGERPRINT_CONTENT = "optimag.fingerprint_content"
ATTR_RESCORED = "optimag.re_evaluated"

#: Trial user attribute: the design evaluated when it differs from the decoded one.
ATTR_DESIGN = "optimag.design"
#: Trial user attribute: the model's normalised violations in `model.CONSTRAINTS` order
#: (feasible when all are <= 0).
ATTR_VIOLATIONS = "optimag.violations"
#: Trial user attribute: the NSGA-II generation the trial was sampled in.
ATTR_GENERATION = "optimag.generation"
#: Trial user attribute: which process wrote the trial to the storage (a run's token).
ATTR_WRITER = "optimag.writer"

#: The one constraint optuna's samplers read (``Trial.set_constraint``): the sum of the
#: positive violations when any is positive, else the largest (<= 0) violation. The
#: samplers use a trial's constraints only through "all <= 0" and "sum of the positive
#: ones", which this single value preserves exactly.
CONSTRAINT = "violation"


def sampler_constraint(violations) -> float:
    """The value told to optuna for a trial's ``violations`` (see `CONSTRAINT`); summed
    left to right in Python, as optuna's samplers sum a trial's constraints."""
    values = [float(v) for v in violations]
    positive = [v for v in values if v > 0]
    return sum(positive) if positive else max(values)
