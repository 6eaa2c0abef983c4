"""The invented demo catalogue: loads, is reproducible, and holds plausible values."""

from __future__ import annotations

import hashlib
import math
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import quad

from optimag.catalog import TABLES, check_catalog, load_catalog

DEMO = Path(__file__).resolve().parents[2] / "catalogs" / "demo"


@pytest.fixture(scope="module")
def demo():
    return load_catalog(DEMO)


def test_demo_is_valid() -> None:
    assert check_catalog(DEMO) == []


def test_counts_and_families(demo) -> None:
    families = demo.cores["family"].value_counts()
    assert len(demo.cores) >= 40
    assert families["E"] >= 12 and families["pot"] >= 8 and families["toroid"] >= 10
    kinds = demo.materials["kind"].value_counts()
    assert kinds["ferrite"] == 3 and kinds["powder"] == 3
    wire_kinds = demo.wires["kind"].value_counts()
    assert wire_kinds["litz"] >= 8 and wire_kinds["foil"] >= 5
    awg_ids = {f"awg-{gauge}" for gauge in range(10, 41)}
    assert awg_ids <= set(demo.wires["id"])


def test_dtypes(demo) -> None:
    for table, frame in zip(TABLES, (demo.cores, demo.materials, demo.wires), strict=True):
        for column in table.columns:
            expected = {"float": np.float64, "int": np.int64}.get(column.kind)
            if expected is not None:
                assert frame[column.name].dtype == expected, column.name
        assert frame["line"].dtype == np.int64


def test_hash_is_stable_and_follows_the_files(demo) -> None:
    assert load_catalog(DEMO).content_hash == demo.content_hash
    digest = hashlib.sha256()
    for name in ("cores.csv", "materials.csv", "wires.csv"):
        content = (DEMO / name).read_bytes()
        digest.update(f"{name}\0{len(content)}\0".encode())
        digest.update(content)
    assert demo.content_hash == digest.hexdigest()


def test_generator_reproduces_committed_files_byte_for_byte(tmp_path: Path) -> None:
    result = subprocess.run(
        [sys.executable, str(DEMO / "make_demo_catalog.py"), "--out", str(tmp_path)],
        capture_output=True,
        text=True,
        timeout=60,
        check=False,
    )
    assert result.returncode == 0, result.stderr
    for name in ("cores.csv", "materials.csv", "wires.csv"):
        assert (tmp_path / name).read_bytes() == (DEMO / name).read_bytes(), name


def test_generator_imports_nothing_of_optimag() -> None:
    # The generator must be auditable on its own, independent of the physics it feeds.
    source = (DEMO / "make_demo_catalog.py").read_text()
    assert "from optimag" not in source and "import optimag" not in source


def test_loading_is_fast() -> None:
    best = math.inf
    for _ in range(3):
        start = time.perf_counter()
        load_catalog(DEMO)
        best = min(best, time.perf_counter() - start)
    assert best < 0.2


# --- wires ---------------------------------------------------------------------------


# ASTM B258, d = 0.127 mm·92^((36−n)/39), evaluated to 5 decimals (rel 1e-5). The demo
# rounds to 0.0001 mm, so the tolerance is that rounding step.
@pytest.mark.parametrize(
    ("gauge", "diameter_mm"),
    [(10, 2.58819), (20, 0.81182), (24, 0.51056), (30, 0.25464), (36, 0.12700), (40, 0.07987)],
)
def test_awg_diameter_astm_b258_check_values(demo, gauge: int, diameter_mm: float) -> None:
    wires = demo.wires.set_index("id")
    assert wires.loc[f"awg-{gauge}", "bare_diameter_mm"] == pytest.approx(diameter_mm, abs=6e-5)


def test_awg_every_gauge_astm_b258_formula(demo) -> None:
    # ASTM B258 defining formula, evaluated here independently of the generator.
    wires = demo.wires.set_index("id")
    gauges = np.arange(10, 41)
    expected = 0.127 * 92.0 ** ((36 - gauges) / 39.0)
    actual = wires.loc[[f"awg-{gauge}" for gauge in gauges], "bare_diameter_mm"].to_numpy()
    np.testing.assert_allclose(actual, expected, atol=5.1e-5)
    # AWG 36 is the formula's anchor: exactly 0.005 in = 0.127 mm (ASTM B258).
    assert wires.loc["awg-36", "bare_diameter_mm"] == 0.127


def test_enamel_allowance_is_plausible(demo) -> None:
    # Single-build enamel adds a few hundredths of a millimetre: common practice, no source.
    round_wires = demo.wires[demo.wires["kind"] == "round"]
    build = round_wires["outer_diameter_mm"] - round_wires["bare_diameter_mm"]
    assert (build > 0.015).all() and (build < 0.12).all()


def test_litz_copper_fill_of_bundle_is_plausible(demo) -> None:
    # Copper share of a litz bundle's circumscribed area ~0.3-0.7: common practice, no source.
    litz = demo.wires[demo.wires["kind"] == "litz"]
    fill = litz["strands"] * litz["strand_diameter_mm"] ** 2 / litz["outer_diameter_mm"] ** 2
    assert (fill > 0.3).all() and (fill < 0.75).all()
    assert litz["strands"].between(20, 420).all()


def test_foils_span_stated_range(demo) -> None:
    foils = demo.wires[demo.wires["kind"] == "foil"]
    assert foils["foil_thickness_mm"].between(0.05, 0.3).all()
    assert foils["foil_width_mm"].between(5, 30).all()
    assert (foils["insulation_mm"] == 0.05).all()


def test_wire_price_rises_for_finer_gauges(demo) -> None:
    awg = demo.wires[demo.wires["id"].str.startswith("awg-")]
    assert np.all(np.diff(awg["price_per_kg"].to_numpy()) >= 0)


# --- materials -------------------------------------------------------------------------


def steinmetz_w_m3(material, frequency_hz: float, peak_t: float) -> float:
    # Steinmetz equation P_v = k f^alpha B^beta (Steinmetz, Trans. AIEE 1892).
    return (
        material["steinmetz_k"]
        * frequency_hz ** material["steinmetz_alpha"]
        * peak_t ** material["steinmetz_beta"]
    )


def test_ferrite_saturation_ranges(demo) -> None:
    # MnZn power ferrite Bsat 0.47-0.53 T at 25 °C, 0.38-0.42 T at 100 °C:
    # (common practice, no source).
    ferrites = demo.materials[demo.materials["kind"] == "ferrite"]
    assert ferrites["bsat_25C_T"].between(0.47, 0.53).all()
    assert ferrites["bsat_100C_T"].between(0.38, 0.42).all()


def test_powder_saturation_and_permeabilities(demo) -> None:
    # Powder cores 0.75-1.4 T (Mo-permalloy ~0.75 T up to iron powder ~1.4 T):
    # (common practice, no source).
    powders = demo.materials[demo.materials["kind"] == "powder"]
    assert powders["bsat_25C_T"].between(0.75, 1.4).all()
    assert sorted(powders["mu_i"]) == [26, 60, 125]
    assert powders["density_kg_m3"].between(6000, 7000).all()


def test_ferrite_loss_at_100khz_100mt_in_plausible_band(demo) -> None:
    # Power ferrite near its loss minimum: 100-400 kW/m³ at 100 kHz, 0.1 T (common practice,
    # no source).
    for _, material in demo.materials[demo.materials["kind"] == "ferrite"].iterrows():
        loss = steinmetz_w_m3(material, 100e3, 0.1)
        assert 100e3 <= loss <= 400e3, material["id"]
        assert 1.1 <= material["steinmetz_alpha"] <= 1.7
        assert 2.3 <= material["steinmetz_beta"] <= 2.9


def test_powders_lose_more_than_ferrites(demo) -> None:
    # Distributed-gap powder cores have higher core loss than power ferrite (common practice,
    # no source).
    losses = {
        material["id"]: (material["kind"], steinmetz_w_m3(material, 100e3, 0.1))
        for _, material in demo.materials.iterrows()
    }
    worst_ferrite = max(loss for kind, loss in losses.values() if kind == "ferrite")
    best_powder = min(loss for kind, loss in losses.values() if kind == "powder")
    assert best_powder > worst_ferrite


def test_ferrite_frequency_bands(demo) -> None:
    bands = demo.materials.set_index("id")[["f_min_kHz", "f_max_kHz"]]
    assert tuple(bands.loc["fer-lowf"]) == (25, 150)
    assert tuple(bands.loc["fer-midf"]) == (100, 500)
    assert tuple(bands.loc["fer-highf"]) == (300, 2000)


def test_ferrite_temperature_factor_has_unit_minimum_near_90_to_100_c(demo) -> None:
    # Power ferrites are tuned for minimum loss near 90-100 °C (common practice, no source);
    # the minimum is located numerically on a fine grid rather than from the vertex formula.
    temperatures = np.linspace(0.0, 150.0, 15001)
    for _, material in demo.materials[demo.materials["kind"] == "ferrite"].iterrows():
        factor = (
            material["ct0"]
            - material["ct1_per_C"] * temperatures
            + material["ct2_per_C2"] * temperatures**2
        )
        assert 90.0 <= temperatures[np.argmin(factor)] <= 100.0
        assert factor.min() == pytest.approx(1.0, abs=0.01)
        assert factor[np.searchsorted(temperatures, 25.0)] > 1.2


@pytest.mark.parametrize(("material_id", "half_field_a_m"), [
    ("pwd-26u", 8000.0), ("pwd-60u", 5000.0), ("pwd-125u", 3000.0),
])  # fmt: skip
def test_powder_rolloff_halves_permeability_at_stated_field(
    demo, material_id: str, half_field_a_m: float
) -> None:
    # Roll-off form mu/mu_i = 1/(a + b H^c): common practice form, no source.
    material = demo.materials.set_index("id").loc[material_id]
    fields = np.array([0.0, half_field_a_m])
    ratio = 1.0 / (material["rolloff_a"] + material["rolloff_b"] * fields ** material["rolloff_c"])
    assert ratio[0] == pytest.approx(1.0)
    assert ratio[1] == pytest.approx(0.5, abs=0.01)


# --- cores ---------------------------------------------------------------------------


def _ring_core_constants(r1: float, r2: float, height: float) -> tuple[float, float]:
    """C1 = ∫B²dV/Φ² and C2 = ∫B³dV/Φ³ for unit flux with B ∝ 1/r, by quadrature."""
    log_ratio, _ = quad(lambda r: 1.0 / r, r1, r2)

    def flux_density(r: float) -> float:
        return 1.0 / (height * log_ratio * r)

    flux, _ = quad(lambda r: flux_density(r) * height, r1, r2)
    assert flux == pytest.approx(1.0, rel=1e-9)
    c1, _ = quad(lambda r: flux_density(r) ** 2 * 2.0 * math.pi * r * height, r1, r2)
    c2, _ = quad(lambda r: flux_density(r) ** 3 * 2.0 * math.pi * r * height, r1, r2)
    return c1, c2


def test_toroid_effective_parameters_match_quadrature(demo) -> None:
    """Ae, le of each ring against C1 = ∫B²dV/Φ², C2 = ∫B³dV/Φ³ with B ∝ 1/r.

    For series sections these integrals reduce to the core constants C1 = Σl/A, C2 = Σl/A²
    (the IEC 60205 idea; the continuous form is from memory); Ae = C1/C2 and le = C1²/C2 are
    the definitions of IEC 60050-221, item 221-04-31. Evaluated by scipy quad.
    """
    rings = demo.cores[demo.cores["family"] == "toroid"]
    assert len(rings) >= 10
    for _, ring in rings.iterrows():
        r1 = ring["window_width_mm"]  # ID/2 by the toroid convention
        r2 = ring["length_mm"] / 2.0  # OD/2
        height = ring["leg_depth_mm"]
        assert r2 - r1 == pytest.approx(ring["leg_width_mm"], abs=0.011)
        c1, c2 = _ring_core_constants(r1, r2, height)
        # Tolerance: the demo rounds dimensions to 0.01 mm and Ae to 0.1 mm².
        assert ring["Ae_mm2"] == pytest.approx(c1 / c2, rel=0.01), ring["id"]
        assert ring["le_mm"] == pytest.approx(c1 * c1 / c2, rel=0.005), ring["id"]
        # Flux crowds towards the inner edge, so le is shorter than the mean circumference.
        assert c1 * c1 / c2 < math.pi * (r1 + r2)


def test_ring_quadrature_tends_to_thin_ring_limit() -> None:
    # A thin ring has le = its circumference and Ae = its section (magnetic circuit law).
    c1, c2 = _ring_core_constants(10.0, 10.01, 2.0)
    assert c1 * c1 / c2 == pytest.approx(2.0 * math.pi * 10.005, rel=1e-6)
    assert c1 / c2 == pytest.approx(0.02, rel=1e-6)


def test_toroid_window_conventions(demo) -> None:
    rings = demo.cores[demo.cores["family"] == "toroid"]
    inner = 2.0 * rings["window_width_mm"]
    np.testing.assert_allclose(rings["window_breadth_mm"], math.pi * inner, rtol=2e-3)
    np.testing.assert_allclose(rings["window_area_mm2"], math.pi * inner**2 / 4.0, rtol=2e-3)
    assert (rings["bobbin_wall_mm"] == 0).all()
    assert (rings["length_mm"] == rings["width_mm"]).all()


def test_effective_area_between_smallest_and_largest_section(demo) -> None:
    # Ae = C1/C2 is a weighted mean of the section areas, so it cannot fall below the
    # smallest one (follows from the IEC 60050-221 definitions).
    cores = demo.cores
    assert (cores["Amin_mm2"] <= cores["Ae_mm2"] * 1.001).all()
    e_cores = cores[cores["family"] == "E"]
    centre_leg = e_cores["leg_width_mm"] * e_cores["leg_depth_mm"]
    assert (e_cores["Ae_mm2"] <= centre_leg * 1.01).all()


@pytest.mark.parametrize("prefix", ["E-shape-", "E-flat-", "pot-", "ring-"])
def test_size_series_are_geometric_and_price_rises(demo, prefix: str) -> None:
    # A geometric size series (constant step ratio) is common practice, no source.
    series = demo.cores[demo.cores["id"].str.startswith(prefix)]
    assert len(series) >= 8
    sizes = series["length_mm"].to_numpy()
    steps = sizes[1:] / sizes[:-1]
    assert steps.min() > 1.1
    assert steps.max() - steps.min() < 0.02
    assert np.all(np.diff(series["Ve_mm3"].to_numpy()) > 0)
    assert np.all(np.diff(series["price"].to_numpy()) > 0)
    assert np.all(np.diff(series["bobbin_wall_mm"].to_numpy()) >= 0)


def test_core_span_and_stacking(demo) -> None:
    cores = demo.cores
    e_lengths = cores.loc[cores["family"] == "E", "length_mm"]
    assert e_lengths.min() <= 11 and e_lengths.max() >= 60
    pots = cores.loc[cores["family"] == "pot", "length_mm"]
    assert pots.min() <= 10 and pots.max() >= 40
    rings = cores.loc[cores["family"] == "toroid", "length_mm"]
    assert rings.min() <= 10 and rings.max() >= 60
    assert (cores.loc[cores["family"] == "E", "max_stack"] == 3).all()
    assert (cores.loc[cores["family"] != "E", "max_stack"] == 1).all()
    walls = cores.loc[cores["family"] != "toroid", "bobbin_wall_mm"]
    assert walls.between(0.5, 1.2).all()


def test_mass_at_nominal_ferrite_density_is_below_full_box(demo) -> None:
    # Mass uses 4800 kg/m³ (catalogue convention): a set is lighter than its solid envelope,
    # and its ferrite volume is of the order of Ve (simplified paths, so a loose bound).
    cores = demo.cores
    box_mm3 = cores["length_mm"] * cores["width_mm"] * cores["height_mm"]
    envelope_g = box_mm3 * 1e-9 * 4800.0 * 1e3
    effective_g = cores["Ve_mm3"] * 1e-9 * 4800.0 * 1e3
    assert (cores["mass_g"] < envelope_g).all()
    assert (cores["mass_g"] > 0.6 * effective_g).all()
