"""Physics-chain throughput: designs evaluated per second through the whole model.

A random catalogue (core geometries in a size series, materials, wires) and a converter
with three operating points give a space of several million candidates. Every candidate
goes through inductance and gap, saturation, iGSE core loss, DC + Dowell/litz AC winding
loss over 25 harmonics and the loss-temperature fixed point, by the factorised search
(each factor evaluated once on its own axes, failures pruned before expanding, per-core
and per-wire constants computed once). For comparison the same chain is run flat on a
random sample of candidates with no structure (`model.evaluate` on unrelated candidates).

    python tests/benchmarks/physics_throughput.py
"""

from __future__ import annotations

import time

import numpy as np
import pandas as pd

from optimag import model
from optimag.physics.winding import awg_diameter_m
from optimag.search.exhaustive import explore_exhaustive
from optimag.study.waveform import converter_waveform

RNG = np.random.default_rng(2026)


def random_cores(n: int) -> pd.DataFrame:
    scale = np.geomspace(8, 60, n) * RNG.uniform(0.95, 1.05, n)  # outer length [mm]
    leg = 0.2 * scale
    depth = leg * RNG.uniform(0.9, 1.6, n)
    breadth = 0.36 * scale
    width = 0.16 * scale
    ae = leg * depth
    le = 2 * breadth + 2 * width + 1.2 * leg * 2
    return pd.DataFrame({
        "id": [f"rc{i}" for i in range(n)], "family": "E", "Ae_mm2": ae, "le_mm": le,
        "Ve_mm3": ae * le, "Amin_mm2": 0.95 * ae, "window_area_mm2": breadth * width,
        "window_breadth_mm": breadth, "window_width_mm": width, "leg_width_mm": leg,
        "leg_depth_mm": depth, "bobbin_wall_mm": 0.02 * scale + 0.3, "length_mm": scale,
        "width_mm": depth, "height_mm": 0.5 * scale + breadth, "price": 0.1 + 0.002 * ae,
        "max_stack": 3,
    })


def random_materials() -> pd.DataFrame:
    return pd.DataFrame({
        "id": ["f1", "f2", "f3", "p1", "p2", "p3"],
        "kind": ["ferrite"] * 3 + ["powder"] * 3,
        "mu_i": [2300, 2000, 1500, 26, 60, 125],
        "bsat_25C_T": [0.52, 0.5, 0.48, 1.3, 1.0, 0.8],
        "bsat_100C_T": [0.41, 0.4, 0.39, 1.2, 0.95, 0.75],
        "steinmetz_k": [18.9, 2.1, 0.6, 60.0, 50.0, 45.0],
        "steinmetz_alpha": [1.3, 1.45, 1.6, 1.2, 1.25, 1.3],
        "steinmetz_beta": [2.6, 2.5, 2.4, 2.2, 2.2, 2.3],
        "f_min_kHz": 10.0, "f_max_kHz": 2000.0, "b_max_T": 1.5,
        "ct0": [2.0, 1.9, 1.8, 1.0, 1.0, 1.0], "ct1_per_C": [0.02, 0.019, 0.018, 0, 0, 0],
        "ct2_per_C2": [1e-4, 1e-4, 1e-4, 0, 0, 0],
        "rolloff_a": [np.nan] * 3 + [1.0] * 3, "rolloff_b": [np.nan] * 3 + [1e-7, 4e-7, 1e-6],
        "rolloff_c": [np.nan] * 3 + [1.8] * 3, "density_kg_m3": [4800] * 3 + [6500] * 3,
        "price_factor": [1.0, 1.1, 1.3, 0.8, 0.9, 1.0],
    })


def random_wires(n_round: int = 30) -> pd.DataFrame:
    gauges = np.linspace(12, 38, n_round).round()
    bare = awg_diameter_m(gauges) * 1e3
    rows = pd.DataFrame({
        "id": [f"w{g:.0f}-{i}" for i, g in enumerate(gauges)], "kind": "round",
        "bare_diameter_mm": bare, "outer_diameter_mm": bare * 1.07 + 0.02, "strands": 1,
        "strand_diameter_mm": np.nan, "foil_thickness_mm": np.nan, "foil_width_mm": np.nan,
        "insulation_mm": np.nan, "price_per_kg": 12.0,
    })
    strands = np.array([20, 50, 100, 200, 400])
    litz = pd.DataFrame({
        "id": [f"litz{s}" for s in strands], "kind": "litz", "bare_diameter_mm": np.nan,
        "outer_diameter_mm": 1.15 * np.sqrt(strands) * 0.085, "strands": strands,
        "strand_diameter_mm": 0.071, "foil_thickness_mm": np.nan, "foil_width_mm": np.nan,
        "insulation_mm": np.nan, "price_per_kg": 40.0,
    })
    foil = pd.DataFrame({
        "id": ["foil1", "foil2", "foil3"], "kind": "foil", "bare_diameter_mm": np.nan,
        "outer_diameter_mm": np.nan, "strands": 1, "strand_diameter_mm": np.nan,
        "foil_thickness_mm": [0.05, 0.1, 0.2], "foil_width_mm": [6.0, 10.0, 15.0],
        "insulation_mm": 0.05, "price_per_kg": 20.0,
    })
    return pd.concat([rows, litz, foil], ignore_index=True)


def build_space() -> model.DesignSpace:
    inductance = 22e-6
    points = [(54.0, 12.0, 2.0, 0.25), (46.0, 12.0, 4.0, 0.6), (36.0, 12.0, 8.0, 0.15)]
    waves = [
        converter_waveform("buck", vi, vo, io, 200e3, inductance, harmonics=25,
                           name=f"p{i}", time_share=share)
        for i, (vi, vo, io, share) in enumerate(points)
    ]
    requirements = model.Requirements(
        inductance_H=inductance, tolerance=0.1, min_fraction_at_peak=0.8, ambient_C=50.0,
        max_temperature_C=110.0, max_height_m=0.03, max_footprint_m2=np.inf,
        max_volume_m3=np.inf, max_mass_kg=np.inf, flux_margin=0.8,
        max_fill_factor=0.5, max_loss_W=np.inf, fringing="mclyman",
        thermal_model="faces", outside_fit="flag", labour_per_turn=0.02,
    )
    return model.DesignSpace(
        cores=model.CoreArrays.from_frame(random_cores(40)),
        materials=model.MaterialArrays.from_frame(random_materials()),
        wires=model.WireArrays.from_frame(random_wires()),
        operating=model.OperatingArrays.from_waveforms(waves, "buck"),
        requirements=requirements,
        turns=np.arange(1, 101), stacks=np.arange(1, 4), parallels=np.arange(1, 5),
        gap_grid_m=None,
    )


def main() -> None:
    space = build_space()
    objectives = ["volume", "loss", "cost"]
    explore_exhaustive(space, objectives)  # warm-up
    best = np.inf
    for _ in range(3):
        start = time.perf_counter()
        outcome = explore_exhaustive(space, objectives)
        best = min(best, time.perf_counter() - start)
    print(f"structured chain: {outcome.total:,} designs in {best:.2f} s -> "
          f"{outcome.total / best:,.0f} designs/s ({outcome.feasible:,} feasible, "
          f"front {len(outcome.front)}, stage sizes {outcome.stage_sizes})")

    n = 200_000
    cores = RNG.integers(0, len(space.cores.ids), n)
    cands = model.Candidates(
        core=cores, stack=RNG.integers(1, 4, n), material=RNG.integers(0, 6, n),
        turns=RNG.integers(1, 101, n), gap_option=np.zeros(n, dtype=np.int64),
        wire=RNG.integers(0, len(space.wires.ids), n), parallel=RNG.integers(1, 5, n),
    )
    start = time.perf_counter()
    model.evaluate(space, cands)
    flat = time.perf_counter() - start
    print(f"flat chain (no structure): {n:,} designs in {flat:.2f} s -> {n / flat:,.0f} designs/s")
    print(f"{outcome.total / best:,.0f} designs/s")


if __name__ == "__main__":
    main()
