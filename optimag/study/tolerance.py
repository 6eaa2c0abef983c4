"""``[tolerance]``: how built parts scatter around their nominal design.

Each spread is a half width (``±``) with a distribution: ``"normal"`` reads the half width
as three standard deviations (99.7 % of parts inside it), ``"uniform"`` as the edges of a
flat distribution. Give a number to keep the key's default distribution, or a table to
choose it::

    [tolerance]
    samples = 4000
    gap_ground_mm = 0.02
    permeability_pct = { spread = 25, distribution = "uniform" }
    ambient_C = 5

Defaults (each "common practice, no source" unless stated):

============================  ======  ============  =========================================
key                           ±       distribution  what scatters
============================  ======  ============  =========================================
``gap_ground_mm``             0.02    normal        depth of a ground centre-leg gap [mm]
``gap_spacer_mm``             0.03    normal        spacer thickness and seating [mm]
``permeability_pct``          25      uniform       ferrite initial permeability [%]
``powder_permeability_pct``   8       normal        powder-core initial permeability [%]
``al_ungapped_pct``           25      uniform       AL of an ungapped ferrite core [%]
``bsat_pct``                  5       normal        saturation flux density [%]
``steinmetz_k_pct``           15      normal        core-loss coefficient k [%]
``wire_diameter_pct``         (*)     normal        bare copper diameter [%]
``ambient_C``                 5       uniform       ambient temperature [K]
============================  ======  ============  =========================================

(*) Without ``wire_diameter_pct`` each round wire scatters by the conductor tolerance of
IEC 60317-0-1 for its diameter, approximated as ``max(0.003 mm, 1 % of d)`` (value from
memory); litz strands and foil thickness take the same rule on their strand diameter or
thickness.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import AllowInfNan, BaseModel, ConfigDict, Field, Strict, model_validator

Distribution = Literal["normal", "uniform"]
NonNegative = Annotated[float, Strict(), AllowInfNan(False), Field(ge=0)]


#: Key -> (default half width, default distribution, largest accepted half width).
SPREAD_DEFAULTS: dict[str, tuple[float, Distribution, float]] = {
    "gap_ground_mm": (0.02, "normal", 1.0),
    "gap_spacer_mm": (0.03, "normal", 1.0),
    "permeability_pct": (25.0, "uniform", 90.0),
    "powder_permeability_pct": (8.0, "normal", 90.0),
    "al_ungapped_pct": (25.0, "uniform", 90.0),
    "bsat_pct": (5.0, "normal", 90.0),
    "steinmetz_k_pct": (15.0, "normal", 90.0),
    "wire_diameter_pct": (0.0, "normal", 30.0),
    "ambient_C": (5.0, "uniform", 100.0),
}


class Spread(BaseModel):
    """A ``±`` half width and the distribution it belongs to."""

    model_config = ConfigDict(frozen=True, extra="forbid")

    spread: NonNegative
    distribution: Distribution

    @property
    def sigma(self) -> float:
        """Standard deviation of the distribution, in the key's unit."""
        if self.distribution == "normal":
            return self.spread / 3.0
        return self.spread / 3.0**0.5


def _default(key: str) -> Spread:
    spread, distribution, _ = SPREAD_DEFAULTS[key]
    return Spread(spread=spread, distribution=distribution)


class ToleranceSpec(BaseModel):
    """``[tolerance]``: production spreads, Monte Carlo size, seed and scope."""

    # The docstring under each field is its description in the study-file reference.
    model_config = ConfigDict(frozen=True, extra="forbid")

    samples: Annotated[int, Strict(), Field(ge=100, le=100_000)] = 2000
    """Monte Carlo samples per design."""
    seed: Annotated[int, Strict(), Field(ge=0, le=2**32 - 1)] = 0
    """Seed of the Monte Carlo draws."""
    scope: Literal["shortlist", "front"] = "shortlist"
    """Which designs get a yield estimate: the short-list or the whole front."""
    gap_ground_mm: Spread = Field(default_factory=lambda: _default("gap_ground_mm"))
    """± depth of a ground centre-leg gap."""
    gap_spacer_mm: Spread = Field(default_factory=lambda: _default("gap_spacer_mm"))
    """± spacer thickness and seating."""
    permeability_pct: Spread = Field(default_factory=lambda: _default("permeability_pct"))
    """± ferrite initial permeability."""
    powder_permeability_pct: Spread = Field(
        default_factory=lambda: _default("powder_permeability_pct")
    )
    """± powder-core initial permeability."""
    al_ungapped_pct: Spread = Field(default_factory=lambda: _default("al_ungapped_pct"))
    """± AL of an ungapped ferrite core."""
    bsat_pct: Spread = Field(default_factory=lambda: _default("bsat_pct"))
    """± saturation flux density."""
    steinmetz_k_pct: Spread = Field(default_factory=lambda: _default("steinmetz_k_pct"))
    """± core-loss coefficient k."""
    wire_diameter_pct: Spread | None = None
    """± bare copper diameter; when absent, the IEC 60317-0-1 conductor tolerance per
    diameter, max(0.003 mm, 1 % of d) (from memory)."""
    ambient_C: Spread = Field(default_factory=lambda: _default("ambient_C"))
    """± ambient temperature (a difference, in K)."""

    @model_validator(mode="before")
    @classmethod
    def _numbers_take_default_distribution(cls, value: Any) -> Any:
        if not isinstance(value, dict):
            return value
        out = dict(value)
        for key, (_, distribution, _upper) in SPREAD_DEFAULTS.items():
            item = out.get(key)
            if isinstance(item, bool):
                continue  # left for the field's own type error
            if isinstance(item, int | float):
                # An integer beyond float range stays an integer: the field refuses it.
                spread = float(item) if abs(item) < 1e300 else item
                out[key] = {"spread": spread, "distribution": distribution}
            elif isinstance(item, dict) and "distribution" not in item:
                out[key] = {**item, "distribution": distribution}
        return out

    @model_validator(mode="after")
    def _plausible(self) -> ToleranceSpec:
        for key, (_, _, upper) in SPREAD_DEFAULTS.items():
            item = getattr(self, key)
            if item is not None and item.spread > upper:
                raise ValueError(f"{key}: ±{item.spread:g} is beyond the plausible {upper:g}")
        return self
