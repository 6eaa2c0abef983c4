"""The run folder: no formula in any export, exclusive and atomic folders, exit codes."""

import errno
import hashlib
import json
import os
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

import optimag
from optimag import cli, files
from optimag.errors import RunFolderError

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "catalogs" / "demo"
sys.path.insert(0, str(ROOT / "tests" / "search"))
from conftest import write_tiny_study  # noqa: E402

#: Catalogue ids and an operating-point name that a spreadsheet would run as formulas
#: (the reported cases; payload forms from OWASP's "CSV Injection" page).
EVIL = {
    "E-shape-17": '=HYPERLINK("http://example.invalid/steal","click")',
    "fer-lowf": "=cmd|' /C calc'!A0",
    "awg-22": "@SUM(1+1)",
    "litz-60x38": "-2+3",
    "pot-18": "+1+1",
}
EVIL_POINT = "=1+1"


def _evil_study(tmp_path: Path) -> Path:
    catalogue = tmp_path / "evil-catalogue"
    shutil.copytree(DEMO, catalogue, ignore=shutil.ignore_patterns("*.py"))
    for name in ("cores.csv", "materials.csv", "wires.csv"):
        path = catalogue / name
        text = path.read_text(encoding="utf-8")
        for old, new in EVIL.items():
            quoted = '"' + new.replace('"', '""') + '"'
            text = text.replace(f"\n{old},", f"\n{quoted},")
        path.write_text(text, encoding="utf-8")
    study = write_tiny_study(tmp_path)
    text = study.read_text(encoding="utf-8").replace(DEMO.as_posix(), catalogue.as_posix())
    for old, new in EVIL.items():
        text = text.replace(f'"{old}"', json.dumps(new))
    text = text.replace('name = "high-line"', f'name = "{EVIL_POINT}"')
    text = text.replace('"full-battery-lights"', f'"{EVIL_POINT}"')
    study.write_text(text, encoding="utf-8")
    return study


def _tree_digest(folder: Path) -> dict[str, str]:
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.iterdir()) if p.is_file() and p.name != files.LOCK_NAME}


@pytest.fixture(scope="module")
def evil_run(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("evil")
    study = _evil_study(tmp)
    out = tmp / "run"
    code = cli.main(["explore", str(study), "--out", str(out), "--top", "6"])
    assert code == 0
    return out


def test_xlsx_has_no_formula_cell_and_keeps_ids_readable(evil_run):
    book = openpyxl.load_workbook(evil_run / "shortlist.xlsx")
    cells = [c for sheet in book.worksheets for row in sheet.iter_rows() for c in row]
    assert not [c.coordinate for c in cells if c.data_type == "f"]
    values = {c.value for c in cells if isinstance(c.value, str)}
    shown = values & ({*EVIL.values(), EVIL_POINT})
    assert shown, "the hostile ids should appear (as text) in the short-list"
    for cell in cells:
        if cell.value in shown:
            assert cell.data_type == "s" and cell.quotePrefix


@pytest.mark.parametrize("name", ["pareto.csv", "shortlist.csv"])
def test_csv_cells_are_neutralised(evil_run, name):
    table = pd.read_csv(evil_run / name, dtype=str, keep_default_na=False)
    text_cells = [v for col in table.columns for v in table[col]
                  if not _is_number(v)]
    for value in text_cells:
        assert not value or value[0] not in "=+-@\t\r", (name, value)
    hostile = [v for v in text_cells if files.restore_text(v) in EVIL.values()]
    assert hostile and all(v.startswith("'") for v in hostile)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def test_report_reads_the_ids_back_as_given(evil_run):
    from optimag.report import data

    run = data.load_run(evil_run)
    cores = set(run.pareto["core"])
    assert cores <= {EVIL.get(c, c) for c in cores} | set(EVIL.values())
    assert not any(c.startswith("'") for c in cores)
    html = (evil_run / "report.html").read_text(encoding="utf-8")
    assert "=HYPERLINK(&quot;http://example.invalid" in html or "click" not in html


# ---------------------------------------------------------------------------------------
# Exclusive, atomic folders
# ---------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def tiny_result(tmp_path_factory):
    study = write_tiny_study(tmp_path_factory.mktemp("tiny"))
    return optimag.explore(study, top=4)


def test_symlinked_files_outside_stay_untouched(tmp_path, tiny_result):
    outside_report = tmp_path / "precious.html"
    outside_study = tmp_path / "precious.toml"
    outside_report.write_text("keep me")
    outside_study.write_text("keep me too")
    out = tmp_path / "run"
    out.mkdir()
    (out / "report.html").symlink_to(outside_report)
    (out / "study.toml").symlink_to(outside_study)
    for overwrite in (False, True):
        with pytest.raises(RunFolderError, match="symlink"):
            optimag.write_run(tiny_result, out, overwrite=overwrite)
        code = cli.main(["explore", str(tiny_result.study.path), "--out", str(out)]
                        + (["--overwrite"] if overwrite else []))
        assert code == 2
    assert outside_report.read_text() == "keep me"
    assert outside_study.read_text() == "keep me too"
    linked = tmp_path / "linked-run"
    linked.symlink_to(out)
    with pytest.raises(RunFolderError, match="is a symlink"):
        optimag.write_run(tiny_result, linked, overwrite=True)


def test_existing_run_is_refused_without_overwrite(tmp_path, tiny_result, capsys):
    out = tmp_path / "run"
    optimag.write_run(tiny_result, out)
    before = _tree_digest(out)
    code = cli.main(["explore", str(tiny_result.study.path), "--out", str(out)])
    assert code == 2
    assert "not empty" in capsys.readouterr().err
    assert _tree_digest(out) == before
    assert cli.main(["explore", str(tiny_result.study.path), "--out", str(out),
                     "--overwrite"]) == 0


def test_disk_full_names_the_file_and_keeps_the_previous_run(tmp_path, tiny_result,
                                                             monkeypatch, capsys):
    out = tmp_path / "run"
    optimag.write_run(tiny_result, out)
    before = _tree_digest(out)
    assert set(before) >= {"run.json", "pareto.csv", "shortlist.xlsx", "report.html"}
    real_fsync, calls = os.fsync, []

    def fsync(fd):
        calls.append(fd)
        if len(calls) == 3:  # the third file of the run
            raise OSError(errno.ENOSPC, "No space left on device")
        real_fsync(fd)

    monkeypatch.setattr(os, "fsync", fsync)
    with pytest.raises(files.WriteFailed) as caught:
        optimag.write_run(tiny_result, out, overwrite=True)
    message = str(caught.value)
    assert "No space left on device" in message and str(out) in message
    assert any(name in message for name in ("pareto.csv", "shortlist.csv"))
    assert _tree_digest(out) == before
    assert sorted(p.name for p in out.iterdir()) == sorted([*before, files.LOCK_NAME])

    calls.clear()
    code = cli.main(["explore", str(tiny_result.study.path), "--out", str(out),
                     "--overwrite"])
    err = capsys.readouterr().err
    assert code == 2 and "No space left on device" in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
    assert _tree_digest(out) == before


def test_two_runs_into_one_folder_leave_one_complete_run(tmp_path):
    study_a = write_tiny_study(tmp_path)
    other = tmp_path / "other"
    other.mkdir()
    study_b = write_tiny_study(other, objectives=("volume", "loss"))
    out = tmp_path / "shared"
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    command = [sys.executable, "-m", "optimag.cli", "explore"]
    procs = [subprocess.Popen([*command, str(s), "--out", str(out), "--top", "3"],
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                              env=env) for s in (study_a, study_b)]
    done = [(p.wait(timeout=600), *p.communicate()) for p in procs]
    codes = sorted(d[0] for d in done)
    assert codes == [0, 2], [d[2] for d in done]
    winner = next(i for i, d in enumerate(done) if d[0] == 0)
    loser = done[1 - winner]
    assert "Traceback" not in loser[2]
    assert "in use by optimag process" in loser[2] or "not empty" in loser[2]
    record = json.loads((out / "run.json").read_text())
    expected = [("volume", "loss", "cost"), ("volume", "loss")][winner]
    assert tuple(record["objectives"]) == expected
    # The winner's study, its catalogue named by absolute path and hash (rerunnable).
    copied = tomllib.loads((out / "study.toml").read_text())
    source = tomllib.loads([study_a, study_b][winner].read_text())
    assert copied.pop("catalog")["path"] == source.pop("catalog")["path"]
    assert copied == source
    book = openpyxl.load_workbook(out / "shortlist.xlsx")  # complete, not corrupt
    assert book.sheetnames
    assert "D0001" in (out / "report.html").read_text(encoding="utf-8")


def test_collecting_a_shared_storage_again_into_the_same_folder(tmp_path, capsys):
    """README: re-run `optimag explore` with the same --storage and --out to collect."""
    study = write_tiny_study(tmp_path)
    url = f"sqlite:///{tmp_path / 'shared.db'}"
    out = tmp_path / "run"
    args = ["explore", str(study), "--strategy", "optuna", "--storage", url, "--out",
            str(out)]
    assert cli.main([*args, "--trials", "20"]) in (0, 1)
    assert cli.main([*args, "--trials", "30"]) in (0, 1)
    assert json.loads((out / "run.json").read_text())["optuna"]["complete_trials"] == 30
    other = tmp_path / "other.db"
    code = cli.main(["explore", str(study), "--strategy", "optuna", "--storage",
                     f"sqlite:///{other}", "--out", str(out), "--trials", "40"])
    assert code == 2 and "not empty" in capsys.readouterr().err


def test_default_folders_are_unique(tmp_path, tiny_result, monkeypatch):
    monkeypatch.chdir(tmp_path)
    first = optimag.write_run(tiny_result)
    second = optimag.write_run(tiny_result)
    assert first != second and first.parent == second.parent == Path("runs")
    assert (first / "run.json").is_file() and (second / "run.json").is_file()


# ---------------------------------------------------------------------------------------
# Exit codes and interrupts
# ---------------------------------------------------------------------------------------


def test_interrupted_search_exits_130_with_consistent_counts(tmp_path, monkeypatch):
    from optimag.search import exhaustive, run

    real_final, real_explore, calls = exhaustive._final_stage, run.explore_exhaustive, []

    def stop_in_second_chunk(*args, **kwargs):
        calls.append(1)
        if len(calls) == 2:  # Ctrl-C once, during the second chunk
            raise KeyboardInterrupt
        return real_final(*args, **kwargs)

    def small_chunks(space, objectives, progress=None, **_kwargs):
        return real_explore(space, objectives, progress=progress, chunk_size=20)

    monkeypatch.setattr(exhaustive, "_final_stage", stop_in_second_chunk)
    monkeypatch.setattr(run, "explore_exhaustive", small_chunks)
    study = write_tiny_study(tmp_path)
    out = tmp_path / "run"
    code = cli.main(["explore", str(study), "--out", str(out)])
    assert len(calls) == 2
    assert code == 130
    record = json.loads((out / "run.json").read_text())
    counts = record["counts"]
    assert record["interrupted"] is True
    assert counts["total"] == counts["feasible"] + sum(counts["eliminated"].values())
    assert counts.get("not_reached", 0) > 0
    assert record["report"] == "written"
    assert "stopped early" in (out / "report.html").read_text(encoding="utf-8")


def test_interrupt_while_writing_the_report_is_not_a_traceback(tmp_path, monkeypatch,
                                                                capsys):
    from optimag.report import html

    def interrupted(_run):
        raise KeyboardInterrupt

    monkeypatch.setattr(html, "render_report", interrupted)
    study = write_tiny_study(tmp_path)
    out = tmp_path / "run"
    code = cli.main(["explore", str(study), "--out", str(out)])
    captured = capsys.readouterr()
    assert code == 130 and "Traceback" not in captured.err
    record = json.loads((out / "run.json").read_text())
    assert record["report"].startswith("skipped: interrupted")
    assert not (out / "report.html").exists()
    assert (out / "shortlist.xlsx").is_file() and "skipped" in captured.out


def test_internal_error_is_not_the_infeasible_code(tmp_path, monkeypatch, capsys):
    from optimag.search import run

    def broken(*_args, **_kwargs):
        raise ZeroDivisionError("boom")

    monkeypatch.setattr(run, "explore_exhaustive", broken)
    monkeypatch.delenv("OPTIMAG_DEBUG", raising=False)
    code = cli.main(["explore", str(write_tiny_study(tmp_path)), "--out",
                     str(tmp_path / "run")])
    err = capsys.readouterr().err
    assert code == 3 and "internal error" in err and "Traceback" not in err
