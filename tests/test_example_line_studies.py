"""The example studies of the PFC boost, the inverter filter and the multiphase buck run end
to end (`optimag explore` shape: `optimag.explore` then `optimag.write_run`); their report
shows the line-cycle waveform and where the loss arises along it, and the multiphase
records carry the output-ripple cancellation."""

import json
from pathlib import Path

import numpy as np
import pytest

import optimag

ROOT = Path(__file__).resolve().parents[1]


@pytest.mark.slow
@pytest.mark.parametrize("name", ["kiln-pfc-boost", "garden-battery-inverter"])
def test_line_cycle_study_runs_and_reports_the_line_cycle(tmp_path, name):
    result = optimag.explore(ROOT / "studies" / f"{name}.toml", top=2)
    folder = optimag.write_run(result, tmp_path / "run")
    report = (folder / "report.html").read_text(encoding="utf-8")
    assert "Over the line cycle" in report
    # The operating-point table shows the keys the topology reads.
    assert ("Line RMS [V]" if name.startswith("kiln") else "DC link [V]") in report
    assert "Input [V]" not in report
    records = json.loads((folder / "shortlist.json").read_text(encoding="utf-8"))
    records = records["designs"] if isinstance(records, dict) else records
    assert records
    for record in records:
        assert any(note.startswith("line cycle: losses averaged over 24 instants")
                   for note in record["model_notes"])
        parts = {p["name"]: p for p in record["line_cycle"]}
        assert set(parts) == {p["name"] for p in record["per_operating_point"]}
        for point in record["per_operating_point"]:
            part = parts[point["name"]]
            # The line-cycle profile's mean is the point's loss (parts add up).
            assert np.mean(part["core_loss_W"]) == pytest.approx(point["core_loss_W"],
                                                                 rel=1e-9)
            winding = (point["winding_dc_loss_W"] + point["winding_ac_loss_W"]
                       + point["winding_gap_loss_W"])
            assert np.mean(part["winding_loss_W"]) == pytest.approx(winding, rel=1e-9)
            assert max(part["peak_A"]) == pytest.approx(point["peak_current_A"], rel=1e-12)


@pytest.mark.slow
def test_multiphase_study_reports_the_ripple_cancellation(tmp_path):
    result = optimag.explore(ROOT / "studies" / "radio-fpga-multiphase.toml", top=2)
    folder = optimag.write_run(result, tmp_path / "run")
    assert (folder / "report.html").is_file()
    records = json.loads((folder / "shortlist.json").read_text(encoding="utf-8"))
    records = records["designs"] if isinstance(records, dict) else records
    for record in records:
        assert record["phases"] == 3 and record["line_cycle"] == []
        for point in record["per_operating_point"]:
            assert 0 <= point["ripple_cancellation"] < 1
            assert point["output_ripple_A"] >= 0
