"""The study copy in a run folder names its catalogue by absolute path and content hash,
so the run can be repeated from the run folder and refuses a catalogue that changed."""

from __future__ import annotations

import shutil
import tomllib
from pathlib import Path

import pandas as pd

from optimag.catalog import load_catalog
from optimag.cli import main
from optimag.study import load_study, parse_study
from optimag.study.file import runnable_study_text
from tests.search.conftest import DEMO_CATALOG, write_tiny_study


def _tiny_with_relative_catalogue(folder: Path) -> Path:
    shutil.copytree(DEMO_CATALOG, folder / "cat")
    path = write_tiny_study(folder)
    text = path.read_text(encoding="utf-8").replace(DEMO_CATALOG.as_posix(), "cat")
    path.write_text("# a comment that must survive\n" + text, encoding="utf-8")
    return path


def test_run_folder_copy_reruns_from_anywhere(tmp_path: Path, monkeypatch, capsys) -> None:
    project = tmp_path / "project"
    project.mkdir()
    study_path = _tiny_with_relative_catalogue(project)
    first = tmp_path / "first"
    assert main(["explore", str(study_path), "--out", str(first)]) == 0

    copy = (first / "study.toml").read_text(encoding="utf-8")
    catalog = tomllib.loads(copy)["catalog"]
    assert Path(catalog["path"]).is_absolute()
    assert Path(catalog["path"]) == (project / "cat").resolve()
    assert catalog["sha256"] == load_catalog(project / "cat").content_hash
    assert copy.startswith("# a comment that must survive\n")

    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)
    assert main(["check", str(first / "study.toml")]) == 0
    second = tmp_path / "second"
    assert main(["explore", str(first / "study.toml"), "--out", str(second)]) == 0
    pd.testing.assert_frame_equal(pd.read_csv(first / "pareto.csv"),
                                  pd.read_csv(second / "pareto.csv"))

    # One changed byte in the catalogue: the recorded hash no longer matches.
    cores = project / "cat" / "cores.csv"
    cores.write_bytes(cores.read_bytes() + b"\n")
    capsys.readouterr()
    assert main(["check", str(first / "study.toml")]) == 2
    err = capsys.readouterr().err
    assert "catalog.sha256" in err and "has changed since this study was run" in err


def test_inline_catalogue_table_is_recorded_in_a_comment(tmp_path: Path) -> None:
    path = write_tiny_study(tmp_path)
    text = path.read_text(encoding="utf-8")
    start = text.index("[catalog]")
    end = text.index("\n", text.index("path =", start)) + 1
    # A top-level key must come before the first table.
    inline = (f'catalog = {{ path = "{DEMO_CATALOG.as_posix()}" }}\n' + text[:start]
              + text[end:])
    study = parse_study(inline, path)
    written = runnable_study_text(study, "0" * 64)
    assert written.startswith(f"# Run with the catalogue {DEMO_CATALOG.resolve()}")
    assert written.endswith(inline)


def test_path_with_a_quote_is_escaped(tmp_path: Path) -> None:
    folder = tmp_path / "it's here"
    shutil.copytree(DEMO_CATALOG, folder)
    path = write_tiny_study(tmp_path)
    path.write_text(path.read_text(encoding="utf-8").replace(DEMO_CATALOG.as_posix(),
                                                               folder.as_posix()),
                    encoding="utf-8")
    written = runnable_study_text(load_study(path), "a" * 64)
    assert tomllib.loads(written)["catalog"] == {"path": str(folder.resolve()),
                                                 "sha256": "a" * 64}
