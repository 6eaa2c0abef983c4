"""A tiny study on the demo catalogue, small enough for a per-design brute-force loop."""

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
DEMO_CATALOG = ROOT / "catalogs" / "demo"

TINY_STUDY = """
[study]
name = "tiny-buck"
title = "Tiny buck for search tests"

[converter]
topology = "buck"
switching_frequency_kHz = 150

[[operating_points]]
name = "high-line"
input_V = 24.0
output_V = 5.0
load_A = 3.0
time_share = 0.4

[[operating_points]]
name = "low-line"
input_V = 12.0
output_V = 5.0
load_A = 4.0
time_share = 0.6

[inductor]
inductance_uH = 33.0
inductance_tolerance_pct = 10
min_fraction_at_peak = 0.7

[limits]
ambient_C = 40
max_temperature_C = 100
max_height_mm = 30
flux_margin = 0.8
max_fill_factor = 0.5

[search]
objectives = {objectives}
turns_min = 8
turns_max = 30
stack_max = 2
parallel_max = 2
cores = ["E-shape-17", "E-shape-20", "pot-18", "ring-21"]
materials = ["fer-lowf", "fer-midf", "pwd-60u"]
wires = ["awg-22", "awg-24", "litz-60x38", "foil-0.10x10"]

[catalog]
path = "{catalog}"
"""


def write_tiny_study(folder: Path, objectives=("volume", "loss", "cost"), extra: str = "") -> Path:
    text = TINY_STUDY.format(
        objectives="[" + ", ".join(f'"{o}"' for o in objectives) + "]",
        catalog=DEMO_CATALOG.as_posix(),
    )
    path = folder / "tiny.toml"
    path.write_text(text + extra, encoding="utf-8")
    return path


@pytest.fixture
def tiny_study_path(tmp_path):
    return write_tiny_study(tmp_path)


@pytest.fixture
def make_tiny_study(tmp_path):
    """Factory: write the tiny study with other objectives or extra TOML appended."""

    def make(objectives=("volume", "loss", "cost"), replace: dict | None = None) -> Path:
        path = write_tiny_study(tmp_path, objectives)
        text = path.read_text(encoding="utf-8")
        for old, new in (replace or {}).items():
            assert old in text, old
            text = text.replace(old, new)
        path.write_text(text, encoding="utf-8")
        return path

    return make
