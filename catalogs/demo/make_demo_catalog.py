"""Write the invented demo catalogue: cores.csv, materials.csv and wires.csv.

Everything here is INVENTED: plausible proportions and magnitudes, no vendor part numbers,
material codes or datasheet values. The output is deterministic: rerunning the script
reproduces the committed files byte for byte.

    python catalogs/demo/make_demo_catalog.py            # rewrite the files beside this script
    python catalogs/demo/make_demo_catalog.py --out DIR  # write them elsewhere

Core geometry follows the idea of IEC 60205 (Calculation of the effective parameters of
magnetic piece parts): split the flux path into sections i of length l_i and area A_i, form
the core constants C1 = Σ l_i/A_i and C2 = Σ l_i/A_i², then Ae = C1/C2, le = C1²/C2 and
Ve = Ae·le (the definitions of IEC 60050-221, item 221-04-31). The path lengths are
simplified (see each shape function); corners are not treated separately.

The script depends on the Python standard library only, so it can be audited on its own.
"""

from __future__ import annotations

import argparse
import csv
import math
from pathlib import Path

#: Nominal ferrite density used for the mass column [kg/m³].
FERRITE_DENSITY = 4800.0

CORE_COLUMNS = (
    "id", "family", "Ae_mm2", "le_mm", "Ve_mm3", "Amin_mm2", "window_area_mm2",
    "window_breadth_mm", "window_width_mm", "leg_width_mm", "leg_depth_mm",
    "outer_leg_width_mm", "outer_leg_area_mm2", "bobbin_wall_mm",
    "length_mm", "width_mm", "height_mm", "surface_mm2", "mass_g", "price", "max_stack",
)  # fmt: skip
MATERIAL_COLUMNS = (
    "id", "kind", "mu_i", "bsat_25C_T", "bsat_100C_T", "steinmetz_k", "steinmetz_alpha",
    "steinmetz_beta", "f_min_kHz", "f_max_kHz", "b_max_T", "ct0", "ct1_per_C", "ct2_per_C2",
    "rolloff_a", "rolloff_b", "rolloff_c", "density_kg_m3", "price_factor",
)  # fmt: skip
WIRE_COLUMNS = (
    "id", "kind", "bare_diameter_mm", "outer_diameter_mm", "strands", "strand_diameter_mm",
    "foil_thickness_mm", "foil_width_mm", "insulation_mm", "price_per_kg",
)  # fmt: skip


def fixed(value: float, decimals: int) -> str:
    """Round to `decimals` places and drop trailing zeros (stable text for the CSV)."""
    text = f"{value:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def significant(value: float, digits: int = 4) -> str:
    return f"{value:.{digits}g}"


def effective_parameters(sections: list[tuple[float, float]]) -> tuple[float, float, float]:
    """Ae, le, Ve from (length, area) sections via C1 = Σ l/A and C2 = Σ l/A²."""
    c1 = sum(length / area for length, area in sections)
    c2 = sum(length / area**2 for length, area in sections)
    return c1 / c2, c1 * c1 / c2, c1**3 / c2**2


def price_of_set(mass_g: float) -> float:
    # Invented price rule: a fixed handling cost plus a cost per gram of ferrite.
    return 0.15 + 0.02 * mass_g


def bobbin_wall(size_mm: float) -> float:
    return min(1.2, max(0.5, 0.5 + 0.01 * size_mm))


# --- cores -----------------------------------------------------------------------------

#: Proportions of the E shapes as fractions of the overall length A (invented).
E_PROPORTIONS = {
    # centre-leg width, outer-leg width, yoke thickness, depth, set height
    "shape": {"centre": 0.28, "outer": 0.13, "yoke": 0.13, "depth": 0.30, "height": 1.00},
    "flat": {"centre": 0.22, "outer": 0.11, "yoke": 0.09, "depth": 0.50, "height": 0.40},
}


def e_core(name: str, length: float, style: str) -> dict[str, str]:
    """A pair of E halves with a rectangular centre leg.

    Sections as IEC 60205 treats an E pair: centre leg and outer legs (together) each of
    length h (window breadth), the yokes of length 2·(window width), and four corners, each
    a quarter circle through the middle of the corner: length (π/8)·(b + y) at an outer
    corner and (π/8)·(a/2 + y) at a centre corner, with the mean
    of the two areas it joins (a centre width, b outer width, y yoke thickness). Outer legs
    and both yoke halves carry half the flux each, so their two areas add.
    """
    p = E_PROPORTIONS[style]
    centre, outer, yoke = p["centre"] * length, p["outer"] * length, p["yoke"] * length
    depth, height = p["depth"] * length, p["height"] * length
    window_width = (length - centre - 2.0 * outer) / 2.0
    window_breadth = height - 2.0 * yoke
    areas = (centre * depth, 2.0 * outer * depth, 2.0 * yoke * depth)
    sections = [
        (window_breadth, areas[0]),
        (window_breadth, areas[1]),
        (2.0 * window_width, areas[2]),
        (2.0 * math.pi / 8.0 * (outer + yoke), (areas[1] + areas[2]) / 2.0),
        (2.0 * math.pi / 8.0 * (centre / 2.0 + yoke), (areas[0] + areas[2]) / 2.0),
    ]
    ae, le, ve = effective_parameters(sections)
    ferrite_volume = length * height * depth - 2.0 * window_width * window_breadth * depth
    mass = ferrite_volume * 1e-9 * FERRITE_DENSITY * 1e3
    surface = 2.0 * (length * depth + length * height + depth * height)
    return {
        "id": name,
        "family": "E",
        "Ae_mm2": fixed(ae, 1),
        "le_mm": fixed(le, 2),
        "Ve_mm3": fixed(ve, 0),
        "Amin_mm2": fixed(min(areas), 1),
        "window_area_mm2": fixed(window_breadth * window_width, 1),
        "window_breadth_mm": fixed(window_breadth, 2),
        "window_width_mm": fixed(window_width, 2),
        "leg_width_mm": fixed(centre, 2),
        "leg_depth_mm": fixed(depth, 2),
        "outer_leg_width_mm": fixed(outer, 2),
        "outer_leg_area_mm2": fixed(2.0 * outer * depth, 1),
        "bobbin_wall_mm": fixed(bobbin_wall(length), 2),
        "length_mm": fixed(length, 2),
        "width_mm": fixed(depth, 2),
        "height_mm": fixed(height, 2),
        "surface_mm2": fixed(surface, 0),
        "mass_g": fixed(mass, 2),
        "price": fixed(price_of_set(mass), 2),
        "max_stack": "3",
    }


#: Fraction of the pot skirt left after the wire slots (invented).
POT_SLOT_FACTOR = 0.85


def pot_core(name: str, diameter: float) -> dict[str, str]:
    """A pair of pot halves with a solid round centre post.

    The skirt's inner radius (0.45 of the diameter) makes the skirt's face, slots
    deducted, about the post's area, so Ae comes out near the post's own π/4·d².
    Post and skirt are axial sections of length (window breadth + plate thickness); each
    plate is a radial section from the post radius r1 to the skirt's inner radius r2 with
    area 2π r t, integrated exactly: ∫dr/(2πrt) = ln(r2/r1)/(2πt) and
    ∫dr/(2πrt)² = (1/r1 − 1/r2)/(4π²t²).
    """
    post = 0.42 * diameter
    r1, r2 = post / 2.0, 0.45 * diameter
    height = 0.59 * diameter
    window_breadth = 0.40 * diameter
    plate = (height - window_breadth) / 2.0
    post_area = math.pi * r1**2
    skirt_area = POT_SLOT_FACTOR * math.pi * ((diameter / 2.0) ** 2 - r2**2)
    axial = window_breadth + plate
    c1 = axial / post_area + axial / skirt_area + 2.0 * math.log(r2 / r1) / (2.0 * math.pi * plate)
    c2 = (
        axial / post_area**2
        + axial / skirt_area**2
        + 2.0 * (1.0 / r1 - 1.0 / r2) / (4.0 * math.pi**2 * plate**2)
    )
    ae, le, ve = c1 / c2, c1 * c1 / c2, c1**3 / c2**2
    smallest = min(post_area, skirt_area, 2.0 * math.pi * r1 * plate)
    window_width = r2 - r1
    ferrite_volume = (
        math.pi * (diameter / 2.0) ** 2 * height
        - math.pi * (r2**2 - r1**2) * window_breadth
        - (1.0 - POT_SLOT_FACTOR) * math.pi * ((diameter / 2.0) ** 2 - r2**2) * window_breadth
    )
    mass = ferrite_volume * 1e-9 * FERRITE_DENSITY * 1e3
    surface = 2.0 * math.pi * (diameter / 2.0) ** 2 + math.pi * diameter * height
    return {
        "id": name,
        "family": "pot",
        "Ae_mm2": fixed(ae, 1),
        "le_mm": fixed(le, 2),
        "Ve_mm3": fixed(ve, 0),
        "Amin_mm2": fixed(smallest, 1),
        "window_area_mm2": fixed(window_breadth * window_width, 1),
        "window_breadth_mm": fixed(window_breadth, 2),
        "window_width_mm": fixed(window_width, 2),
        "leg_width_mm": fixed(post, 2),
        "leg_depth_mm": fixed(post, 2),
        "outer_leg_width_mm": fixed(diameter / 2.0 - r2, 2),
        "outer_leg_area_mm2": fixed(skirt_area, 1),
        "bobbin_wall_mm": fixed(bobbin_wall(diameter), 2),
        "length_mm": fixed(diameter, 2),
        "width_mm": fixed(diameter, 2),
        "height_mm": fixed(height, 2),
        "surface_mm2": fixed(surface, 0),
        "mass_g": fixed(mass, 2),
        "price": fixed(price_of_set(mass), 2),
        "max_stack": "1",
    }


def ring_core(name: str, outer: float) -> dict[str, str]:
    """A toroid of rectangular section.

    Flux density falls as 1/r across the section; with B ∝ 1/r the core constants are
    C1 = 2π/(h ln(r2/r1)) and C2 = 2π(1/r1 − 1/r2)/(h² ln³(r2/r1)). Amin is reported equal
    to Ae (the usual convention for rings), not the larger geometric section h·(r2 − r1).
    """
    inner, height = 0.60 * outer, 0.40 * outer
    r1, r2 = inner / 2.0, outer / 2.0
    log_ratio = math.log(r2 / r1)
    c1 = 2.0 * math.pi / (height * log_ratio)
    c2 = 2.0 * math.pi * (1.0 / r1 - 1.0 / r2) / (height**2 * log_ratio**3)
    ae, le, ve = c1 / c2, c1 * c1 / c2, c1**3 / c2**2
    ferrite_volume = math.pi * (r2**2 - r1**2) * height
    mass = ferrite_volume * 1e-9 * FERRITE_DENSITY * 1e3
    surface = 2.0 * math.pi * (r2**2 - r1**2) + 2.0 * math.pi * (r1 + r2) * height
    return {
        "id": name,
        "family": "toroid",
        "Ae_mm2": fixed(ae, 1),
        "le_mm": fixed(le, 2),
        "Ve_mm3": fixed(ve, 0),
        "Amin_mm2": fixed(ae, 1),
        "window_area_mm2": fixed(math.pi * inner**2 / 4.0, 1),
        "window_breadth_mm": fixed(math.pi * inner, 2),
        "window_width_mm": fixed(inner / 2.0, 2),
        "leg_width_mm": fixed(r2 - r1, 2),
        "leg_depth_mm": fixed(height, 2),
        "outer_leg_width_mm": "",
        "outer_leg_area_mm2": "",
        "bobbin_wall_mm": "0",
        "length_mm": fixed(outer, 2),
        "width_mm": fixed(outer, 2),
        "height_mm": fixed(height, 2),
        "surface_mm2": fixed(surface, 0),
        "mass_g": fixed(mass, 2),
        "price": fixed(price_of_set(mass), 2),
        "max_stack": "1",
    }


def geometric_series(first: float, last: float, count: int) -> list[float]:
    ratio = (last / first) ** (1.0 / (count - 1))
    return [round(first * ratio**step, 1) for step in range(count)]


def cores() -> list[dict[str, str]]:
    rows = [e_core(f"E-shape-{size:.0f}", size, "shape") for size in geometric_series(10, 65, 12)]
    rows += [e_core(f"E-flat-{size:.0f}", size, "flat") for size in geometric_series(14, 64, 8)]
    rows += [pot_core(f"pot-{size:.0f}", size) for size in geometric_series(9, 42, 10)]
    rows += [ring_core(f"ring-{size:.0f}", size) for size in geometric_series(10, 60, 13)]
    return rows


# --- materials -------------------------------------------------------------------------


def steinmetz_k_for(loss_w_m3: float, alpha: float, beta: float) -> float:
    """k that gives `loss_w_m3` at 100 kHz and 0.1 T peak."""
    return loss_w_m3 / (1e5**alpha * 0.1**beta)


def loss_factor_with_minimum(at_c: float, slope: float) -> tuple[float, float, float]:
    """ct0, ct1, ct2 of ct0 − ct1·T + ct2·T² with its minimum 1 at `at_c` °C."""
    ct2 = slope
    ct1 = 2.0 * ct2 * at_c
    return 1.0 + ct1 * ct1 / (4.0 * ct2), ct1, ct2


def rolloff_b_for(half_field_a_m: float, exponent: float) -> float:
    """b with a = 1 such that μ/μi = 1/(1 + b H^c) is 0.5 at H = `half_field_a_m`."""
    return half_field_a_m ** (-exponent)


MATERIALS = (
    # id, kind, mu_i, bsat25, bsat100, loss at 100 kHz 0.1 T [W/m³], alpha, beta,
    # f range [kHz], b_max, temperature-factor minimum [°C] and curvature,
    # roll-off (H at 50 %, exponent) or None, density, price factor
    ("fer-lowf", "ferrite", 2300, 0.52, 0.41, 150e3, 1.30, 2.60, (25, 150), 0.30, (100, 1e-4),
     None, 4800, 1.00),
    ("fer-midf", "ferrite", 2000, 0.50, 0.40, 120e3, 1.45, 2.50, (100, 500), 0.25, (95, 1e-4),
     None, 4800, 1.15),
    ("fer-highf", "ferrite", 1400, 0.48, 0.38, 200e3, 1.55, 2.50, (300, 2000), 0.15, (90, 1e-4),
     None, 4750, 1.40),
    ("pwd-26u", "powder", 26, 1.30, 1.25, 2000e3, 1.15, 2.10, (5, 300), 0.50, (100, 1e-5),
     (8000, 1.8), 7000, 0.80),
    ("pwd-60u", "powder", 60, 1.00, 0.96, 700e3, 1.40, 2.05, (10, 500), 0.40, (100, 1e-5),
     (5000, 1.9), 6100, 1.60),
    ("pwd-125u", "powder", 125, 0.75, 0.72, 500e3, 1.35, 2.20, (10, 500), 0.30, (100, 1e-5),
     (3000, 2.0), 6800, 2.50),
)  # fmt: skip


def materials() -> list[dict[str, str]]:
    rows = []
    for (name, kind, mu_i, bsat25, bsat100, loss, alpha, beta, (f_low, f_high), b_max,
         (t_min, curvature), rolloff, density, price_factor) in MATERIALS:  # fmt: skip
        ct0, ct1, ct2 = loss_factor_with_minimum(t_min, curvature)
        row = {
            "id": name,
            "kind": kind,
            "mu_i": fixed(mu_i, 0),
            "bsat_25C_T": fixed(bsat25, 3),
            "bsat_100C_T": fixed(bsat100, 3),
            "steinmetz_k": significant(steinmetz_k_for(loss, alpha, beta)),
            "steinmetz_alpha": fixed(alpha, 3),
            "steinmetz_beta": fixed(beta, 3),
            "f_min_kHz": fixed(f_low, 1),
            "f_max_kHz": fixed(f_high, 1),
            "b_max_T": fixed(b_max, 3),
            "ct0": significant(ct0, 6),
            "ct1_per_C": significant(ct1, 6),
            "ct2_per_C2": significant(ct2, 6),
            "rolloff_a": "",
            "rolloff_b": "",
            "rolloff_c": "",
            "density_kg_m3": fixed(density, 0),
            "price_factor": fixed(price_factor, 2),
        }
        if rolloff is not None:
            half_field, exponent = rolloff
            row["rolloff_a"] = "1"
            row["rolloff_b"] = significant(rolloff_b_for(half_field, exponent), 5)
            row["rolloff_c"] = fixed(exponent, 3)
        rows.append(row)
    return rows


# --- wires -----------------------------------------------------------------------------


def awg_diameter_mm(gauge: int) -> float:
    """ASTM B258: d = 0.127 mm · 92^((36 − n)/39)."""
    return 0.127 * 92.0 ** ((36 - gauge) / 39.0)


def enamelled_diameter_mm(bare_mm: float) -> float:
    # Invented single-build enamel allowance (common practice magnitude, no source).
    return bare_mm + 0.02 + 0.035 * bare_mm


def round_wire_price_per_kg(bare_mm: float) -> float:
    # Invented: copper base price, drawing fine wire costs more per kilogram.
    return 11.0 * (1.0 + (0.1 / bare_mm) ** 1.2)


#: Bundle packing factor: outer diameter = 1.15·sqrt(n)·strand insulated diameter.
LITZ_PACKING = 1.15

LITZ = ((20, 38), (60, 38), (50, 40), (100, 40), (175, 42), (100, 42), (250, 44), (420, 44),
        (270, 46), (420, 46))  # fmt: skip
FOILS = ((0.05, 5), (0.10, 10), (0.10, 20), (0.15, 15), (0.20, 20), (0.30, 30))
METRIC_ROUND_MM = (0.1, 0.2, 0.3, 0.5, 0.8, 1.0, 1.5)
FOIL_INSULATION_MM = 0.05


def wire_row(**cells: str) -> dict[str, str]:
    return {column: cells.get(column, "") for column in WIRE_COLUMNS}


def wires() -> list[dict[str, str]]:
    rows = []
    for gauge in range(10, 41):
        bare = round(awg_diameter_mm(gauge), 4)
        rows.append(
            wire_row(
                id=f"awg-{gauge}",
                kind="round",
                bare_diameter_mm=fixed(bare, 4),
                outer_diameter_mm=fixed(enamelled_diameter_mm(bare), 4),
                strands="1",
                price_per_kg=fixed(round_wire_price_per_kg(bare), 2),
            )
        )
    for bare in METRIC_ROUND_MM:
        rows.append(
            wire_row(
                id=f"round-{bare:.2f}mm",
                kind="round",
                bare_diameter_mm=fixed(bare, 4),
                outer_diameter_mm=fixed(enamelled_diameter_mm(bare), 4),
                strands="1",
                price_per_kg=fixed(round_wire_price_per_kg(bare), 2),
            )
        )
    for strands, gauge in LITZ:
        strand = round(awg_diameter_mm(gauge), 4)
        bundle = LITZ_PACKING * math.sqrt(strands) * enamelled_diameter_mm(strand)
        rows.append(
            wire_row(
                id=f"litz-{strands}x{gauge}",
                kind="litz",
                outer_diameter_mm=fixed(bundle, 3),
                strands=str(strands),
                strand_diameter_mm=fixed(strand, 4),
                # Invented: twisting and serving double the strand price, plus a fixed cost.
                price_per_kg=fixed(2.0 * round_wire_price_per_kg(strand) + 10.0, 2),
            )
        )
    for thickness, width in FOILS:
        rows.append(
            wire_row(
                id=f"foil-{thickness:.2f}x{width}",
                kind="foil",
                foil_thickness_mm=fixed(thickness, 3),
                foil_width_mm=fixed(width, 1),
                insulation_mm=fixed(FOIL_INSULATION_MM, 3),
                # Invented: rolling thin foil costs more per kilogram.
                price_per_kg=fixed(13.0 + 0.4 / thickness, 2),
            )
        )
    return rows


def write_table(path: Path, columns: tuple[str, ...], rows: list[dict[str, str]]) -> None:
    with path.open("w", encoding="utf-8", newline="") as handle:
        writer = csv.writer(handle, lineterminator="\n")
        writer.writerow(columns)
        for row in rows:
            writer.writerow([row[column] for column in columns])


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=Path(__file__).resolve().parent)
    args = parser.parse_args(argv)
    args.out.mkdir(parents=True, exist_ok=True)
    write_table(args.out / "cores.csv", CORE_COLUMNS, cores())
    write_table(args.out / "materials.csv", MATERIAL_COLUMNS, materials())
    write_table(args.out / "wires.csv", WIRE_COLUMNS, wires())
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
