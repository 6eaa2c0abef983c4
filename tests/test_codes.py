"""The shared codes agree with the words the catalogue, the study and the model use."""

from typing import get_args

import numpy as np

from optimag import codes, model
from optimag.catalog.schema import CORES, MATERIALS, WIRES
from optimag.study.file import Objective, Search


def test_catalogue_words_are_the_codes_words_in_code_order():
    for table, column, enum in ((CORES, "family", codes.Family),
                                (MATERIALS, "kind", codes.MaterialKind),
                                (WIRES, "kind", codes.WireKind)):
        assert table.choices == tuple(m.text for m in enum), (table.file_name, column)
        assert [int(m) for m in enum] == list(range(len(enum)))


def test_study_words_are_the_codes_words():
    kinds = get_args(get_args(Search.model_fields["gap_kinds"].annotation)[0])
    assert set(kinds) == set(codes.GapKind.by_text())
    assert get_args(Objective) == tuple(codes.OBJECTIVE_COLUMNS)
    assert model.OBJECTIVE_COLUMNS is codes.OBJECTIVE_COLUMNS


def test_constraint_codes_index_the_constraint_names():
    assert tuple(c.text for c in codes.Constraint) == model.CONSTRAINTS
    violations = np.full((3, len(codes.Constraint)), -1.0)
    violations[1, codes.Constraint.HEIGHT] = 0.2
    violations[2, [codes.Constraint.MASS, codes.Constraint.SATURATION]] = 0.1
    first = model.first_violated(violations)
    assert first.tolist() == [codes.FEASIBLE, codes.Constraint.HEIGHT,
                              codes.Constraint.SATURATION]
    assert model.CONSTRAINTS[first[1]] == "height"
