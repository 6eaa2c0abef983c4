"""A commented starting study for each topology (what `optimag init` writes).

The operating points are invented round numbers for a typical converter of each kind; the
comments say what each key means and where the full list of keys is
(`studies/REFERENCE.md`, generated from the schema).
"""

from __future__ import annotations

import re

#: Invented operating points per topology: (name, input_V, output_V, load_A, time_share).
TEMPLATE_POINTS: dict[str, tuple[tuple[str, float, float, float, float], ...]] = {
    "buck": (
        ("high-input", 28.0, 5.0, 2.0, 0.3),
        ("nominal", 24.0, 5.0, 3.0, 0.7),
    ),
    "boost": (
        ("low-input", 9.0, 24.0, 0.8, 0.3),
        ("nominal", 12.0, 24.0, 1.0, 0.7),
    ),
    "buck-boost": (
        ("low-input", 9.0, 12.0, 0.8, 0.3),
        ("nominal", 12.0, 12.0, 1.0, 0.7),
    ),
}

#: Invented points of the topologies beyond DC-DC: (name, {key: value}, time_share).
TEMPLATE_OTHER_POINTS: dict[str, tuple[tuple[str, dict[str, float], float], ...]] = {
    "multiphase-buck": (
        ("full-load", {"input_V": 12.0, "output_V": 1.2, "load_A": 40.0}, 0.4),
        ("light-load", {"input_V": 12.0, "output_V": 1.2, "load_A": 15.0}, 0.6),
    ),
    "pfc-boost": (
        ("nominal-line", {"line_V_rms": 230.0, "output_V": 400.0, "power_W": 250.0}, 0.8),
        ("low-line", {"line_V_rms": 195.0, "output_V": 400.0, "power_W": 250.0}, 0.2),
    ),
    "inverter-filter": (
        ("full-export", {"dc_link_V": 400.0, "grid_V_rms": 230.0, "grid_A_rms": 4.0,
                         "power_factor": 1.0}, 0.6),
        ("reactive", {"dc_link_V": 400.0, "grid_V_rms": 230.0, "grid_A_rms": 2.0,
                      "power_factor": 0.8}, 0.4),
    ),
}

#: [converter] keys beyond topology and frequency, per topology.
TEMPLATE_CONVERTER_KEYS = {
    "multiphase-buck": "phases = 2                      # interleaved phases, one inductor each",
    "pfc-boost": "line_steps = 32                 # instants walked over a quarter line cycle",
    "inverter-filter": 'modulation = "unipolar"         # or "bipolar"\n'
                       "line_steps = 32                 # instants over a half line cycle",
}

TOPOLOGY_NOTES = {
    "buck": "A buck steps down: output_V must stay below input_V at every point.",
    "boost": "A boost steps up: output_V must stay above input_V at every point.",
    "buck-boost": "The inverting buck-boost: write output_V as a magnitude (12 for -12 V).",
    "multiphase-buck": "load_A is the total of all phases; each phase's inductor carries "
                       "its share.",
    "pfc-boost": "A PFC boost: output_V (the bus) above the line's peak; power_W drawn "
                 "from the line. CAUTION: mains voltage.",
    "inverter-filter": "A full-bridge inverter: dc_link_V above the grid's peak. CAUTION: "
                       "grid voltage.",
}

#: Switching frequency per topology [kHz] (invented round values).
TEMPLATE_FREQUENCY_KHZ = {"buck": 250, "boost": 150, "buck-boost": 200,
                          "multiphase-buck": 500, "pfc-boost": 100, "inverter-filter": 40}

#: Every topology `optimag init` can write.
TEMPLATE_TOPOLOGIES = (*TEMPLATE_POINTS, *TEMPLATE_OTHER_POINTS)

_SLUG = re.compile(r"^[a-z0-9-]+$")


def study_slug(text: str) -> str:
    """A study name (lowercase letters, digits, '-') made from ``text``; empty if nothing
    usable is left."""
    slug = re.sub(r"[^a-z0-9-]+", "-", text.lower()).strip("-")
    return re.sub(r"-{2,}", "-", slug)[:64]


def study_template(name: str, topology: str, catalog_path: str) -> str:
    """TOML text of a commented study named ``name`` for ``topology`` searching the
    catalogue at ``catalog_path`` (relative to the study file, or absolute)."""
    if topology not in TEMPLATE_TOPOLOGIES:
        raise ValueError(f"unknown topology {topology!r}")
    if not _SLUG.match(name):
        raise ValueError(f"{name!r} is not a study name (lowercase letters, digits, '-')")
    if topology in TEMPLATE_POINTS:
        entries = [(point, {"input_V": vin, "output_V": vout, "load_A": load}, share)
                   for point, vin, vout, load, share in TEMPLATE_POINTS[topology]]
    else:
        entries = list(TEMPLATE_OTHER_POINTS[topology])
    points = "\n".join(
        f'[[operating_points]]\nname = "{point}"\n'
        + "".join(f"{key} = {value:g}\n" for key, value in keys.items())
        + f"time_share = {share:g}\n"
        for point, keys, share in entries
    )
    extra = TEMPLATE_CONVERTER_KEYS.get(topology)
    extra = f"\n{extra}" if extra else ""
    catalog = catalog_path.replace("\\", "/").replace('"', '\\"')
    return f"""# Study "{name}": a {topology} converter's power inductor.
#
# Replace the invented values below with your converter's. Every key, its unit, default
# and allowed range: studies/REFERENCE.md. Check the file with `optimag check {name}.toml`
# and search with `optimag explore {name}.toml`.
#
# Caution: converters can carry hazardous voltages and inductors run hot. The results are
# model estimates; verify a design on a prototype and follow the applicable standards.

[study]
name = "{name}"                 # names the run folder: lowercase letters, digits, '-'
title = "{topology} converter inductor (edit me)"

[converter]
topology = "{topology}"          # see studies/REFERENCE.md for every topology
switching_frequency_kHz = {TEMPLATE_FREQUENCY_KHZ[topology]}{extra}

# One [[operating_points]] table per load case. time_share is the share of the operating
# time spent there (they sum to 1); it weights the loss objective.
# {TOPOLOGY_NOTES[topology]}
{points}
[inductor]
# The inductance follows from the peak-to-peak ripple allowed, as a fraction of the
# average inductor current, at the point that needs the most. Or state it directly with
# inductance_uH = ... (then remove ripple_fraction).
ripple_fraction = 0.3
inductance_tolerance_pct = 10   # allowed deviation from the required inductance, %
min_fraction_at_peak = 0.8      # inductance kept at peak current, fraction of required

[limits]
ambient_C = 40                  # air around the part, °C
max_temperature_C = 100         # hottest allowed point, °C
flux_margin = 0.8               # peak flux up to this fraction of saturation
max_fill_factor = 0.5           # copper area up to this fraction of the window
# Optional limits, no limit when absent:
# max_height_mm = 15
# max_footprint_mm2 = 400
# max_volume_cm3 = 5
# max_mass_g = 30
# max_loss_W = 1.5

[search]
strategy = "exhaustive"         # every candidate; "optuna" samples very large spaces
objectives = ["volume", "loss", "cost"]   # minimised together; "mass" also possible
turns_min = 3
turns_max = 60
stack_max = 1                   # core sets stacked side by side; 2 or more to try stacks
parallel_max = 2                # conductors wound in parallel
# Restrict the catalogue with lists of ids, e.g. cores = ["E-shape-20", "pot-18"].

[catalog]
path = "{catalog}"   # catalogue folder, relative to this file

[cost]
labour_per_turn = 0.02          # winding labour per turn, catalogue currency units
currency = "cu"                 # label shown beside costs
"""
