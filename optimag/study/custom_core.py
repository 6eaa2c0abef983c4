"""``[custom_core]``: a made-to-order core whose dimensions the search chooses.

The table states the shape family, the manufacturable range of each dimension (a
``[low, high]`` pair in mm, or one number to fix it), the bobbin wall and the price rule
``price = price_base + price_per_cm3 * core material volume``. Example::

    [custom_core]
    family = "E"
    leg_width_mm = [3, 20]
    leg_depth_mm = [3, 25]
    window_breadth_mm = [4, 30]
    window_width_mm = [2, 15]
    bobbin_wall_mm = 0.8
    price_base = 0.2
    price_per_cm3 = 0.08
    max_height_mm = 40

A pot core uses ``post_diameter_mm`` (and optionally ``base_thickness_mm``) instead of
``leg_width_mm`` and ``leg_depth_mm``. The geometry itself is computed by
`optimag.search.custom_core`.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import (
    AllowInfNan,
    BaseModel,
    ConfigDict,
    Field,
    Strict,
    field_validator,
    model_validator,
)

from optimag.ranges import BOBBIN_WALL_MM, CUSTOM_DIMENSION_MM, CUSTOM_STEP_MM, MONEY

DIMENSION_MM = CUSTOM_DIMENSION_MM
STEP_MM = CUSTOM_STEP_MM
WALL_MM = BOBBIN_WALL_MM

LengthMM = Annotated[float, Strict(), AllowInfNan(False), Field(ge=DIMENSION_MM[0],
                                                                le=DIMENSION_MM[1])]
StepMM = Annotated[float, Strict(), AllowInfNan(False), Field(ge=STEP_MM[0], le=STEP_MM[1])]
Money = Annotated[float, Strict(), AllowInfNan(False), Field(ge=MONEY[0], le=MONEY[1])]
WallMM = Annotated[float, Strict(), AllowInfNan(False), Field(ge=WALL_MM[0], le=WALL_MM[1])]

#: Smallest window side as a fraction of the largest centre-leg width (or post
#: diameter); mirrors `optimag.search.custom_core.MIN_WINDOW_TO_LEG_RATIO`, below which the
#: lumped-section geometry warns (common practice, no source).
MIN_WINDOW_TO_LEG_RATIO = 0.1

#: Dimensions each family needs (required) and may have (optional).
FAMILY_DIMENSIONS = {
    "E": (("leg_width_mm", "leg_depth_mm", "window_breadth_mm", "window_width_mm"), ()),
    "pot": (("post_diameter_mm", "window_breadth_mm", "window_width_mm"),
            ("base_thickness_mm",)),
}
CUSTOM_DIMENSIONS = ("leg_width_mm", "leg_depth_mm", "post_diameter_mm",
                     "window_breadth_mm", "window_width_mm", "base_thickness_mm")
_ALL_DIMENSIONS = CUSTOM_DIMENSIONS

Range = tuple[float, float]


class CustomCore(BaseModel):
    """``[custom_core]``: family, dimension ranges [mm], bobbin wall and price rule."""

    # The docstring under each field is its description in the study-file reference.
    model_config = ConfigDict(frozen=True, extra="forbid")

    family: Literal["E", "pot"]
    """Shape family of the custom core."""
    leg_width_mm: Range | None = None
    """E: centre-leg width range [low, high] (one number fixes it)."""
    leg_depth_mm: Range | None = None
    """E: centre-leg depth range [low, high]."""
    post_diameter_mm: Range | None = None
    """pot: centre-post diameter range [low, high]."""
    window_breadth_mm: Range
    """Window breadth (along the leg) range [low, high]."""
    window_width_mm: Range
    """Window width (leg to outer leg) range [low, high]."""
    base_thickness_mm: Range | None = None
    """pot: base-plate thickness range [low, high]; default a quarter of the post
    diameter."""
    #: Bobbin wall between leg and winding; 0.8 mm is a usual moulded-bobbin wall
    #: (common practice, no source).
    bobbin_wall_mm: WallMM = 0.8
    """Bobbin wall between leg and winding; 0.8 mm is a usual moulded-bobbin wall (common
    practice, no source)."""
    price_base: Money
    """Fixed price of a custom set, in the catalogue's currency units."""
    price_per_cm3: Money
    """Price per cm³ of core material, in the catalogue's currency units."""
    max_height_mm: LengthMM | None = None
    """Tallest custom set allowed; no limit when absent."""
    #: Dimensions are drawn on this grid (tool and drawing resolution).
    step_mm: StepMM = 0.1
    """Dimensions are drawn on this grid (tool and drawing resolution)."""
    #: Search the catalogue's cores as well, so the report can compare the two.
    include_catalogue_cores: Annotated[bool, Strict()] = True
    """Search the catalogue's cores as well, so the report can compare the two."""

    @field_validator(*_ALL_DIMENSIONS, mode="before")
    @classmethod
    def _range(cls, value: Any) -> Any:
        if value is None:
            return value
        if isinstance(value, bool) or not isinstance(value, int | float | list | tuple):
            raise ValueError("expected a number or a [low, high] pair in mm")
        if isinstance(value, int | float):
            value = [value, value]
        if len(value) != 2 or any(
            isinstance(v, bool) or not isinstance(v, int | float) for v in value
        ):
            raise ValueError("expected a [low, high] pair of numbers in mm")
        if any(isinstance(v, int) and abs(v) > 10**18 for v in value):
            raise ValueError(
                f"must lie within {DIMENSION_MM[0]:g} to {DIMENSION_MM[1]:g} mm; got a "
                "number too large to be a size"
            )
        low, high = float(value[0]), float(value[1])
        if not (0 < low <= high < float("inf")):
            raise ValueError(f"needs 0 < low <= high (finite); got [{low:g}, {high:g}]")
        if not (DIMENSION_MM[0] <= low and high <= DIMENSION_MM[1]):
            raise ValueError(
                f"must lie within {DIMENSION_MM[0]:g} to {DIMENSION_MM[1]:g} mm; got "
                f"[{low:g}, {high:g}]"
            )
        return (low, high)

    @model_validator(mode="after")
    def _family_dimensions(self) -> CustomCore:
        required, optional = FAMILY_DIMENSIONS[self.family]
        faults = [f"{name} is required for family '{self.family}'"
                  for name in required if getattr(self, name) is None]
        faults += [f"{name} does not apply to family '{self.family}'"
                   for name in _ALL_DIMENSIONS
                   if name not in required + optional and getattr(self, name) is not None]
        if not faults:
            leg = self.leg_width_mm or self.post_diameter_mm
            assert leg is not None
            limit = MIN_WINDOW_TO_LEG_RATIO * leg[1]
            for name in ("window_breadth_mm", "window_width_mm"):
                if getattr(self, name)[0] < limit:
                    faults.append(
                        f"{name} low end {getattr(self, name)[0]:g} mm is below "
                        f"{MIN_WINDOW_TO_LEG_RATIO:g} x the largest leg ({limit:g} mm), where "
                        "the core geometry model is not valid; raise it or lower the leg range"
                    )
            if self.max_height_mm is not None and self.lowest_height_mm() > self.max_height_mm:
                faults.append(
                    f"max_height_mm = {self.max_height_mm:g} is below the lowest core these "
                    f"ranges allow ({self.lowest_height_mm():g} mm)"
                )
        if faults:
            raise ValueError("; ".join(faults))
        return self

    def lowest_height_mm(self) -> float:
        """Height of the flattest set the ranges allow [mm] (window plus two yokes or
        base plates at their default thickness)."""
        breadth = self.window_breadth_mm[0]
        if self.family == "E":
            assert self.leg_width_mm is not None
            return breadth + self.leg_width_mm[0]
        assert self.post_diameter_mm is not None
        base = (self.base_thickness_mm[0] if self.base_thickness_mm
                else self.post_diameter_mm[0] / 4)
        return breadth + 2 * base

    def dimension_ranges_m(self) -> dict[str, Range]:
        """The family's dimension ranges in metres, keyed by name without the unit."""
        required, optional = FAMILY_DIMENSIONS[self.family]
        return {
            name.removesuffix("_mm"): (getattr(self, name)[0] * 1e-3,
                                       getattr(self, name)[1] * 1e-3)
            for name in required + optional
            if getattr(self, name) is not None
        }
