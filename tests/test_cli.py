"""End-to-end: the real `optimag` command on the demo catalogue and example studies."""

import json
import shutil
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest

ROOT = Path(__file__).resolve().parents[1]
STUDIES = sorted((ROOT / "studies").glob("*.toml"))

RECORD_FIELDS = {
    "design_id", "core", "material", "stack", "turns", "gap_mm", "wire", "parallel", "layers",
    "fill_factor", "inductance_uH", "inductance_at_peak_uH", "peak_current_A", "peak_flux_T",
    "flux_swing_T", "core_loss_W", "winding_dc_loss_W", "winding_ac_loss_W", "total_loss_W",
    "weighted_loss_W", "temperature_C", "volume_cm3", "mass_g", "cost", "operating_point", "dcm",
    "per_operating_point", "inputs",
}
INPUT_FIELDS = {
    "input_V", "output_V", "load_A", "Ae_mm2", "Amin_mm2", "le_mm", "Ve_mm3", "mu_r",
    "window_breadth_mm", "mlt_mm", "copper_area_mm2",
    "dc_resistance_mOhm", "frequency_kHz", "dc_current_A", "ripple_A", "duty", "steinmetz_k",
    "steinmetz_alpha", "steinmetz_beta", "core_loss_temperature_factor",
}


def optimag(*args, cwd=ROOT):
    exe = shutil.which("optimag")
    command = [exe] if exe else [sys.executable, "-m", "optimag.cli"]
    return subprocess.run([*command, *args], capture_output=True, text=True, cwd=cwd,
                          timeout=600)


@pytest.mark.parametrize("study", STUDIES, ids=lambda p: p.stem)
def test_check_accepts_the_example_studies(study):
    done = optimag("check", str(study))
    assert done.returncode == 0, done.stderr
    assert done.stdout.startswith("OK")


def test_check_accepts_the_demo_catalogue():
    done = optimag("check", "catalogs/demo")
    assert done.returncode == 0, done.stderr


def test_readme_demo_command_writes_the_run_folder(tmp_path):
    """The README's demo runs `optimag explore studies/cargo-bike-buck.toml`."""
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "optimag explore studies/cargo-bike-buck.toml" in readme
    out = tmp_path / "run"
    done = optimag("explore", "studies/cargo-bike-buck.toml", "--out", str(out), "--top", "7")
    assert done.returncode == 0, done.stderr
    assert "Traceback" not in done.stderr
    for name in ("study.toml", "run.json", "pareto.csv", "shortlist.csv", "shortlist.xlsx",
                 "shortlist.json", "report.html"):
        assert (out / name).is_file(), name
    record = json.loads((out / "run.json").read_text())
    assert record["counts"]["total"] == record["counts"]["feasible"] + sum(
        record["counts"]["eliminated"].values())
    assert record["candidates_per_s"] > 0 and record["catalog_hash"]
    designs = json.loads((out / "shortlist.json").read_text())["designs"]
    assert 1 <= len(designs) <= 7
    for design in designs:
        assert design.keys() >= RECORD_FIELDS
        assert design["inputs"].keys() >= INPUT_FIELDS
        assert len(design["per_operating_point"]) == 3
        assert design["temperature_C"] <= 110.0
        assert design["fill_factor"] <= 0.45
    report = (out / "report.html").read_text(encoding="utf-8")
    assert (out / "report.html").stat().st_size < 10e6
    assert "<script src=\"http" not in report and designs[0]["design_id"] in report
    rebuilt = optimag("report", str(out))
    assert rebuilt.returncode == 0, rebuilt.stderr
    pareto = pd.read_csv(out / "pareto.csv")
    assert {"volume_cm3", "weighted_loss_W", "total_loss_W", "cost", "mass_g"} <= set(
        pareto.columns)
    # Row 2 of the short-list sheet holds the units.
    assert len(pd.read_excel(out / "shortlist.xlsx", skiprows=[1])) == len(designs)


def test_bad_study_gives_problems_not_traceback(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("[study]\nname = 'x'\n[converter]\ntopology = 'flyback'\n")
    done = optimag("explore", str(bad))
    assert done.returncode == 2
    assert "Traceback" not in done.stderr
    assert "topology" in done.stderr


@pytest.mark.slow
@pytest.mark.parametrize("topology", ["buck", "boost", "buck-boost"])
def test_init_check_explore_for_each_topology(tmp_path, topology):
    made = optimag("init", f"my-{topology}", "--topology", topology, cwd=tmp_path)
    assert made.returncode == 0, made.stderr
    study = tmp_path / f"my-{topology}.toml"
    text = study.read_text(encoding="utf-8")
    assert f'topology = "{topology}"' in text and text.count("#") > 20  # commented
    checked = optimag("check", study.name, cwd=tmp_path)
    assert checked.returncode == 0, checked.stderr
    assert checked.stdout.startswith("OK")
    assert "Defaults applied" in checked.stdout and "Not set" in checked.stdout
    out = tmp_path / "run"
    explored = optimag("explore", study.name, "--out", str(out), cwd=tmp_path)
    assert explored.returncode == 0, explored.stderr + explored.stdout
    shortlist = pd.read_csv(out / "shortlist.csv")
    assert len(shortlist) > 0
    assert json.loads((out / "run.json").read_text())["study_name"] == f"my-{topology}"


def test_init_refuses_to_overwrite(tmp_path):
    existing = tmp_path / "taken.toml"
    existing.write_text("keep me", encoding="utf-8")
    done = optimag("init", "taken", cwd=tmp_path)
    assert done.returncode == 2 and "already exists" in done.stderr
    assert existing.read_text(encoding="utf-8") == "keep me"
    # A dangling symlink is not written through either.
    (tmp_path / "link.toml").symlink_to(tmp_path / "nowhere.toml")
    done = optimag("init", "link.toml", cwd=tmp_path)
    assert done.returncode == 2
    assert not (tmp_path / "nowhere.toml").exists()
    assert [p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp")] == []


def test_init_with_a_missing_catalogue_is_a_one_line_problem(tmp_path):
    done = optimag("init", "x", "--catalog", str(tmp_path / "nope"), cwd=tmp_path)
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert len(done.stderr.strip().splitlines()) == 1
    assert not (tmp_path / "x.toml").exists()


def test_check_names_the_defaults_it_applied(tmp_path):
    text = (ROOT / "studies" / "cargo-bike-buck.toml").read_text(encoding="utf-8")
    catalog = f'[catalog]\npath = "{ROOT.as_posix()}/catalogs/demo"'
    text = text.replace("ambient_C = 50\n", "").replace(
        '[catalog]\npath = "../catalogs/demo"', catalog)
    study = tmp_path / "s.toml"
    study.write_text(text, encoding="utf-8")
    done = optimag("check", str(study))
    assert done.returncode == 0, done.stderr
    assert "limits.ambient_C = 40 °C" in done.stdout
    assert "inductor.inductance_tolerance_pct = 10 %" in done.stdout
    assert "limits.max_volume_cm3" in done.stdout  # not set
    assert "search.trials" not in done.stdout  # optuna only; this study is exhaustive


def test_version_and_examples_in_help():
    import optimag as package

    done = optimag("--version")
    assert done.returncode == 0 and done.stdout.strip() == f"optimag {package.__version__}"
    helped = optimag("--help")
    assert helped.returncode == 0
    assert "examples:" in helped.stdout and "optimag init" in helped.stdout
    assert "REFERENCE.md" in helped.stdout


@pytest.mark.parametrize("topology", ["multiphase-buck", "pfc-boost", "inverter-filter"])
def test_init_writes_a_valid_study_beyond_dc_dc(tmp_path, topology):
    """The topologies beyond DC-DC get a commented study that `optimag check` accepts (their
    example studies are explored in tests/test_example_line_studies.py)."""
    from optimag.cli import INIT_TOPOLOGIES
    from optimag.study.template import TEMPLATE_TOPOLOGIES

    assert INIT_TOPOLOGIES == TEMPLATE_TOPOLOGIES
    made = optimag("init", f"my-{topology}", "--topology", topology, cwd=tmp_path)
    assert made.returncode == 0, made.stderr
    text = (tmp_path / f"my-{topology}.toml").read_text(encoding="utf-8")
    assert f'topology = "{topology}"' in text
    assert ("CAUTION" in text) == (topology != "multiphase-buck")
    checked = optimag("check", f"my-{topology}.toml", cwd=tmp_path)
    assert checked.returncode == 0, checked.stderr + checked.stdout
