"""Names and codes the study, the model and the records share, one definition each: the
objectives and the metric column each one minimises, and the integer codes the model keeps
per catalogue row and per candidate (core family, material kind, wire kind, how a gap is
made, and the constraints: a candidate's first violated constraint is its code,
`FEASIBLE` when it meets all). Each code's ``text`` is the word the catalogue and the
study use for it. Imports nothing of optimag, so every layer may read it.
"""

from __future__ import annotations

from enum import IntEnum

#: Objective name (study ``[search] objectives``) -> the metric column it minimises.
OBJECTIVE_COLUMNS: dict[str, str] = {
    "volume": "volume_cm3",
    "loss": "weighted_loss_W",
    "cost": "cost",
    "mass": "mass_g",
    "lifetime_cost": "lifetime_cost",
}


class _Code(IntEnum):
    @property
    def text(self) -> str:
        """The word the catalogue, study and records use."""
        return self.name.lower()

    @classmethod
    def by_text(cls) -> dict[str, _Code]:
        """Each member by its word."""
        return {member.text: member for member in cls}


class Family(_Code):
    """Core family (catalogue ``family``)."""

    E = 0
    POT = 1
    TOROID = 2

    @property
    def text(self) -> str:
        return "E" if self is Family.E else self.name.lower()


class MaterialKind(_Code):
    """Core material kind (catalogue ``kind``): gapped ferrite or distributed-gap powder."""

    FERRITE = 0
    POWDER = 1


class WireKind(_Code):
    """Conductor kind (catalogue ``kind``)."""

    ROUND = 0
    LITZ = 1
    FOIL = 2


class GapKind(_Code):
    """How a discrete gap is made (study ``gap_kinds``): the centre leg ground, or a
    spacer gapping every leg."""

    CENTRE = 0
    SPACER = 1


class Constraint(_Code):
    """The constraints, in the order a candidate's elimination is attributed."""

    INDUCTANCE = 0
    SATURATION = 1
    INDUCTANCE_AT_PEAK = 2
    MATERIAL_RANGE = 3
    WINDOW_FIT = 4
    FILL_FACTOR = 5
    HEIGHT = 6
    FOOTPRINT = 7
    VOLUME = 8
    TEMPERATURE = 9
    LOSS_BUDGET = 10
    MASS = 11


#: First-violated code of a candidate that meets every constraint.
FEASIBLE = -1
