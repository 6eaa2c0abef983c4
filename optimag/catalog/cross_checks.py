"""Physical cross-checks of one catalogue row: the columns of a core, material or wire
must describe one buildable part (volume against le and Ae, the gapped leg against Ae and
Amin, the window against its bobbin, a material's saturation and temperature factor, a
wire's conductor against its insulation). Each check returns (column, message) pairs.
"""

from __future__ import annotations

import math
from typing import Any

RowValues = dict[str, Any]

VE_TOLERANCE = 0.10
WINDOW_AREA_TOLERANCE = 0.15
AMIN_MARGIN = 1.001
#: Temperatures [°C] over which the core-loss temperature factor must stay positive.
LOSS_FACTOR_CHECK_RANGE_C = (0.0, 150.0)



def _relative_deviation(value: float, expected: float) -> float:
    # Absurdly large sizes can overflow the product; report them as infinitely far off
    # rather than letting NaN slip through the comparison.
    if expected == 0.0 or not math.isfinite(expected):
        return math.inf
    return abs(value - expected) / abs(expected)


# --- cores -----------------------------------------------------------------------------


def check_core_volume(row: RowValues) -> list[tuple[str, str]]:
    ae, le, ve = row.get("Ae_mm2"), row.get("le_mm"), row.get("Ve_mm3")
    if ae is None or le is None or ve is None:
        return []
    expected = float(ae) * float(le)
    deviation = _relative_deviation(float(ve), expected)
    if deviation <= VE_TOLERANCE:
        return []
    return [
        (
            "Ve_mm3",
            f"Ve_mm3 = {ve:g} is {100 * deviation:.0f} % away from Ae_mm2·le_mm = "
            f"{expected:g}; expected within {100 * VE_TOLERANCE:.0f} %",
        )
    ]


def check_core_minimum_area(row: RowValues) -> list[tuple[str, str]]:
    ae, amin = row.get("Ae_mm2"), row.get("Amin_mm2")
    if ae is None or amin is None or float(amin) <= float(ae) * AMIN_MARGIN:
        return []
    return [
        (
            "Amin_mm2",
            f"Amin_mm2 = {amin:g} is larger than Ae_mm2 = {ae:g}; the smallest cross-section "
            "cannot exceed the effective area",
        )
    ]


#: How far Ae may lie from the gapped leg's own face (round post pi/4 d², rectangular leg
#: w·d) before the two contradict each other: the effective area is a weighted mean of the
#: path's sections, of which the gapped leg is one, so in a sensibly proportioned E or pot
#: set it lies near the leg's face (common practice, no source).
AE_TO_LEG_RANGE = (0.75, 1.10)
#: Tolerance for dimensions that must add up (leg, windows and outer legs to the outer
#: length; outer-leg faces to their width times depth): rounding only.
DIMENSION_TOLERANCE = 0.02


def check_core_gapped_leg(row: RowValues) -> list[tuple[str, str]]:
    """The gapped leg against Ae and Amin, and the outer legs against the outer size."""
    family = row.get("family")
    if family not in ("E", "pot"):
        return []
    values = {name: row.get(name) for name in (
        "Ae_mm2", "Amin_mm2", "leg_width_mm", "leg_depth_mm", "window_width_mm",
        "outer_leg_width_mm", "outer_leg_area_mm2", "length_mm",
    )}  # fmt: skip
    if any(value is None for value in values.values()):
        return []
    v = {name: float(value) for name, value in values.items()}
    found: list[tuple[str, str]] = []
    width, depth = v["leg_width_mm"], v["leg_depth_mm"]
    if family == "pot":
        if _relative_deviation(depth, width) > DIMENSION_TOLERANCE:
            found.append(("leg_depth_mm", f"leg_depth_mm = {depth:g} differs from leg_width_mm "
                          f"= {width:g}; a pot core's post is round: both are its diameter"))
        face, face_text = math.pi / 4.0 * width * width, "the post's π/4·d² = "
    else:
        face, face_text = width * depth, "the centre leg's width·depth = "
    face_text += f"{face:.4g} mm²"
    low, high = AE_TO_LEG_RANGE
    ratio = v["Ae_mm2"] / face
    if not low <= ratio <= high:
        found.append(("Ae_mm2", f"Ae_mm2 = {v['Ae_mm2']:g} is {ratio:.2f}× {face_text}; "
                      f"expected {low:g}-{high:g}× for the gapped leg of this set"))
    if v["Amin_mm2"] > face * AMIN_MARGIN:
        found.append(("Amin_mm2", f"Amin_mm2 = {v['Amin_mm2']:g} is larger than {face_text}; "
                      "the gapped leg is one of the sections, so the smallest cannot exceed it"))
    outer_w, outer_area = v["outer_leg_width_mm"], v["outer_leg_area_mm2"]
    across = width + 2.0 * v["window_width_mm"] + 2.0 * outer_w
    if _relative_deviation(across, v["length_mm"]) > DIMENSION_TOLERANCE:
        found.append(("outer_leg_width_mm", f"leg_width_mm + 2·window_width_mm + "
                      f"2·outer_leg_width_mm = {across:.4g} differs from length_mm = "
                      f"{v['length_mm']:g}; expected within {100 * DIMENSION_TOLERANCE:g} %"))
    if family == "E":
        expected = 2.0 * outer_w * depth
        if _relative_deviation(outer_area, expected) > DIMENSION_TOLERANCE:
            found.append(("outer_leg_area_mm2", f"outer_leg_area_mm2 = {outer_area:g} differs "
                          f"from 2·outer_leg_width_mm·leg_depth_mm = {expected:.4g}"))
    else:
        r_in = width / 2.0 + v["window_width_mm"]
        ring = math.pi * ((r_in + outer_w) ** 2 - r_in**2)
        if not 0.5 * ring <= outer_area <= ring * (1.0 + DIMENSION_TOLERANCE):
            found.append(("outer_leg_area_mm2", f"outer_leg_area_mm2 = {outer_area:g} does not "
                          f"fit the skirt ring of {ring:.4g} mm² (at most the ring, at least "
                          "half of it with the wire slots)"))
    if v["Amin_mm2"] > outer_area * AMIN_MARGIN:
        found.append(("Amin_mm2", f"Amin_mm2 = {v['Amin_mm2']:g} is larger than the outer legs' "
                      f"face outer_leg_area_mm2 = {outer_area:g}"))
    return found


def check_core_window(row: RowValues) -> list[tuple[str, str]]:
    family = row.get("family")
    area, breadth, width = (
        row.get("window_area_mm2"),
        row.get("window_breadth_mm"),
        row.get("window_width_mm"),
    )
    found: list[tuple[str, str]] = []
    if family == "toroid":
        if area is not None and width is not None:
            expected = math.pi * (2.0 * float(width)) ** 2 / 4.0
            deviation = _relative_deviation(float(area), expected)
            if deviation > WINDOW_AREA_TOLERANCE:
                found.append(
                    (
                        "window_area_mm2",
                        f"window_area_mm2 = {area:g} is {100 * deviation:.0f} % away from the "
                        f"inner-hole area π·(2·window_width_mm)²/4 = {expected:.4g}; expected "
                        f"within {100 * WINDOW_AREA_TOLERANCE:.0f} % (for a toroid "
                        "window_width_mm is ID/2)",
                    )
                )
        if breadth is not None and width is not None:
            expected = math.pi * 2.0 * float(width)
            deviation = _relative_deviation(float(breadth), expected)
            if deviation > WINDOW_AREA_TOLERANCE:
                found.append(
                    (
                        "window_breadth_mm",
                        f"window_breadth_mm = {breadth:g} is {100 * deviation:.0f} % away from "
                        f"the inner circumference π·2·window_width_mm = {expected:.4g}; expected "
                        f"within {100 * WINDOW_AREA_TOLERANCE:.0f} %",
                    )
                )
    elif family in ("E", "pot") and None not in (area, breadth, width):
        expected = float(breadth) * float(width)
        deviation = _relative_deviation(float(area), expected)
        if deviation > WINDOW_AREA_TOLERANCE:
            found.append(
                (
                    "window_area_mm2",
                    f"window_area_mm2 = {area:g} is {100 * deviation:.0f} % away from "
                    f"window_breadth_mm·window_width_mm = {expected:.4g}; expected within "
                    f"{100 * WINDOW_AREA_TOLERANCE:.0f} %",
                )
            )
    return found


def check_core_bobbin(row: RowValues) -> list[tuple[str, str]]:
    family, wall = row.get("family"), row.get("bobbin_wall_mm")
    if wall is None:
        return []
    wall = float(wall)
    if family == "toroid":
        if wall != 0.0:
            return [
                (
                    "bobbin_wall_mm",
                    f"bobbin_wall_mm = {wall:g} but a toroid is wound without a bobbin; write 0",
                )
            ]
        return []
    breadth, width = row.get("window_breadth_mm"), row.get("window_width_mm")
    if width is not None and wall >= float(width):
        return [
            (
                "bobbin_wall_mm",
                f"bobbin_wall_mm = {wall:g} leaves no room for the winding: it must be smaller "
                f"than window_width_mm = {width:g}",
            )
        ]
    if breadth is not None and 2.0 * wall >= float(breadth):
        return [
            (
                "bobbin_wall_mm",
                f"bobbin_wall_mm = {wall:g} leaves no room for the winding: twice the wall must "
                f"be smaller than window_breadth_mm = {breadth:g}",
            )
        ]
    return []


# --- materials -------------------------------------------------------------------------


def check_material_saturation(row: RowValues) -> list[tuple[str, str]]:
    hot, cold = row.get("bsat_100C_T"), row.get("bsat_25C_T")
    if hot is None or cold is None or float(hot) <= float(cold):
        return []
    return [
        (
            "bsat_100C_T",
            f"bsat_100C_T = {hot:g} is larger than bsat_25C_T = {cold:g}; saturation flux "
            "density falls with temperature",
        )
    ]


def check_material_frequency_range(row: RowValues) -> list[tuple[str, str]]:
    low, high = row.get("f_min_kHz"), row.get("f_max_kHz")
    if low is None or high is None or float(low) < float(high):
        return []
    return [
        (
            "f_max_kHz",
            f"f_max_kHz = {high:g} must be greater than f_min_kHz = {low:g}",
        )
    ]


def check_material_temperature_factor(row: RowValues) -> list[tuple[str, str]]:
    coefficients = [row.get(name) for name in ("ct0", "ct1_per_C", "ct2_per_C2")]
    if any(value is None for value in coefficients):
        return []
    ct0, ct1, ct2 = (float(value) for value in coefficients)
    low, high = LOSS_FACTOR_CHECK_RANGE_C
    candidates = [low, high]
    if ct2 != 0.0:
        vertex = ct1 / (2.0 * ct2)
        if low < vertex < high:
            candidates.append(vertex)
    worst_t = min(candidates, key=lambda t: ct0 - ct1 * t + ct2 * t * t)
    worst = ct0 - ct1 * worst_t + ct2 * worst_t * worst_t
    if not math.isfinite(worst):
        return [("ct0", "core-loss temperature factor overflows; the coefficients are too large")]
    if worst > 0.0:
        return []
    return [
        (
            "ct0",
            f"core-loss temperature factor ct0 − ct1·T + ct2·T² = {worst:.3g} at T = "
            f"{worst_t:g} °C; it must stay positive from {low:g} to {high:g} °C",
        )
    ]


#: Optional materials.csv columns: the i²GSE relaxation parameters (all or none) and a
#: premagnetisation (DC-bias) loss-factor table of up to three points.
RELAXATION_COLUMNS = ("relax_k", "relax_alpha", "relax_beta", "relax_tau_us", "relax_q")
BIAS_TABLE_COLUMNS = tuple(
    name for j in (1, 2, 3) for name in (f"bias_H{j}_A_m", f"bias_factor{j}")
)


def check_material_optional_groups(row: RowValues) -> list[tuple[str, str]]:
    found: list[tuple[str, str]] = []
    given = [name for name in RELAXATION_COLUMNS if row.get(name) is not None]
    if given and len(given) < len(RELAXATION_COLUMNS):
        absent = [name for name in RELAXATION_COLUMNS if name not in given]
        found.append((absent[0], "the relaxation parameters go together: fill "
                                 f"{', '.join(RELAXATION_COLUMNS)} or none"))
    last_h = 0.0
    ended = False
    for j in (1, 2, 3):
        h, factor = row.get(f"bias_H{j}_A_m"), row.get(f"bias_factor{j}")
        if (h is None) != (factor is None):
            found.append((f"bias_factor{j}" if factor is None else f"bias_H{j}_A_m",
                          f"bias_H{j}_A_m and bias_factor{j} go together"))
        elif h is not None:
            if ended:
                found.append((f"bias_H{j}_A_m", f"table point {j} follows an empty one; "
                                                "fill the points from 1 on"))
            elif float(h) <= last_h:
                found.append((f"bias_H{j}_A_m", f"bias_H{j}_A_m = {h:g} must be above the "
                                                f"previous point's field ({last_h:g})"))
            last_h = float(h)
        else:
            ended = True
    return found


# --- wires -----------------------------------------------------------------------------


def check_wire_conductor(row: RowValues) -> list[tuple[str, str]]:
    kind = row.get("kind")
    strands = row.get("strands")
    outer = row.get("outer_diameter_mm")
    found: list[tuple[str, str]] = []
    if kind == "round":
        bare = row.get("bare_diameter_mm")
        if bare is not None and outer is not None and float(outer) <= float(bare):
            found.append(
                (
                    "outer_diameter_mm",
                    f"outer_diameter_mm = {outer:g} must be larger than bare_diameter_mm = "
                    f"{bare:g} (it includes the insulation)",
                )
            )
        if strands is not None and strands != 1:
            found.append(
                (
                    "strands",
                    f"strands = {strands} but a round wire has 1 strand; use kind 'litz' for a "
                    "stranded bundle",
                )
            )
    elif kind == "litz":
        if strands is not None and strands < 2:
            found.append(("strands", f"strands = {strands} but a litz wire has at least 2"))
        strand = row.get("strand_diameter_mm")
        if strands is not None and strand is not None and outer is not None:
            copper = float(strands) * math.pi * float(strand) ** 2 / 4.0
            bundle = math.pi * float(outer) ** 2 / 4.0
            if copper >= bundle:
                found.append(
                    (
                        "outer_diameter_mm",
                        f"{strands} strands of {strand:g} mm (copper {copper:.4g} mm²) do not fit "
                        f"in a bundle of outer_diameter_mm = {outer:g} ({bundle:.4g} mm²)",
                    )
                )
    elif kind == "foil" and strands is not None and strands != 1:
        found.append(
            (
                "strands",
                f"strands = {strands} but a foil is one conductor; write 1 or leave it empty",
            )
        )
    return found


