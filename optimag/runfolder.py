"""Writing a run folder: the study copy, run.json, the tables and the report.

`write_run` is the one writer the command line and the library share; `default_run_dir`
creates a new, unique default folder.
"""

from __future__ import annotations

import contextlib
import json
import os
import shutil
import signal
import tempfile
import threading
import time
from pathlib import Path

import numpy as np

from optimag import files
from optimag.report import export
from optimag.report.html import REPORT_NAME
from optimag.search.run import ExploreResult
from optimag.study.file import runnable_study_text

__all__ = ["RUN_FILES", "default_run_dir", "write_run"]


def default_run_dir(study, root: Path | None = None) -> Path:
    """Create and return a new, unique run folder ``runs/<study>-<timestamp.ms>[-N]``."""
    return files.unique_run_dir(root or Path("runs"), study.name)


#: Files of a run folder, in the order they are put in place (run.json last: a folder
#: whose run.json is new holds nothing older).
RUN_FILES = ("study.toml", "pareto.csv", "shortlist.csv", "shortlist.xlsx", "shortlist.json",
             "front.json", "near_front.json", REPORT_NAME, "run.json")


def continues_optuna_run(folder: Path | str, storage_url: str | None) -> bool:
    """True when a run of the optuna strategy with ``storage_url`` (None: the default
    ``optuna.journal``, or an older folder's ``optuna.db``, in the folder) continues the
    run whose results ``folder`` holds: the folder keeps that storage, or its run.json
    names the same storage."""
    from optimag.search.optuna_search.storage import kept_in_folder, shown_storage

    folder = Path(folder)
    if not folder.is_dir():
        return False
    if storage_url is None:
        return kept_in_folder(folder) is not None
    try:
        meta = json.loads((folder / "run.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return False
    stored = (meta.get("optuna") or {}).get("storage") if isinstance(meta, dict) else None
    return stored is not None and stored == shown_storage(storage_url)


def _continues(result: ExploreResult, run_dir: Path) -> bool:
    settings = result.record.get("optuna")
    if not settings:
        return False
    shown = settings.get("storage", "")
    from optimag.search.optuna_search.storage import (
        folder_storage,
        kept_in_folder,
        shown_storage,
    )

    if shown == shown_storage(folder_storage(run_dir)):
        return kept_in_folder(run_dir) is not None
    try:
        meta = json.loads((Path(run_dir) / "run.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return False
    return isinstance(meta, dict) and (meta.get("optuna") or {}).get("storage") == shown


def write_run(result: ExploreResult, run_dir: Path | str | None = None, *,
              overwrite: bool = False, report: bool = True) -> Path:
    """Write the run folder: study copy, run.json, pareto and short-list tables, report.

    The folder is claimed for the write (`optimag.files.claim_run_folder`: refused when
    another run holds it, when it is or holds a symlink, or when it is not empty, unless
    ``overwrite`` or this result continues the optuna run it holds). Every file is first
    written into a fresh sub-folder and built into the report there; only when all are
    complete are they moved into place one by one (`os.replace`), run.json last, and
    files of an earlier run that this one does not write are removed. A failed write
    (a full disk) names the file and leaves the folder as it was. A Ctrl-C while the
    report is built leaves the report out, says so in run.json (``report``) and keeps
    the interruption for the caller (``record["interrupted"]``).
    """
    run_dir = Path(run_dir) if run_dir else default_run_dir(result.study)
    with files.claim_run_folder(
        run_dir, overwrite=overwrite, continuing=_continues(result, run_dir),
        protect=_inputs_of(result),
    ):
        started = time.perf_counter()
        staging = Path(tempfile.mkdtemp(prefix=".incoming-", dir=run_dir))
        try:
            # The copy names the catalogue by absolute path and content hash, so the run
            # can be repeated from its folder.
            files.atomic_write_text(
                staging / "study.toml",
                runnable_study_text(result.study, result.catalog.content_hash),
            )
            export.write_tables(staging, result.pareto, result.shortlist_records,
                                currency=str(result.record.get("currency", "")),
                                front_records=result.front_records,
                                near_front=result.near_front)
            result.record["report"] = "written" if report else "not requested"
            _write_record(result, staging)
            if report:
                note = _build_report(staging, run_dir)
                if note is not None:
                    result.record["report"] = note
                    _write_record(result, staging)
            result.record["export_time_s"] = round(time.perf_counter() - started, 4)
            with _deferred_interrupt():
                for name in RUN_FILES:
                    if (staging / name).exists():
                        os.replace(staging / name, run_dir / name)
                    elif (run_dir / name).exists() or (run_dir / name).is_symlink():
                        (run_dir / name).unlink()
        finally:
            shutil.rmtree(staging, ignore_errors=True)
    result.run_dir = run_dir
    return run_dir


def _inputs_of(result: ExploreResult) -> tuple[Path, ...]:
    inputs = []
    if getattr(result.study, "path", None):
        inputs.append(Path(result.study.path))
    folder = getattr(result.catalog, "folder", None)
    if folder:
        inputs.append(Path(folder))
    return tuple(inputs)


def _write_record(result: ExploreResult, folder: Path) -> None:
    files.atomic_write_text(
        folder / "run.json",
        json.dumps(result.record, indent=1, default=_json_default, allow_nan=False),
    )


def _build_report(staging: Path, run_dir: Path) -> str | None:
    """Build report.html in ``staging``; None when written, else why it was skipped."""
    try:
        from optimag.report.html import build_report
    except ImportError as error:  # pragma: no cover - plotly missing
        return f"skipped: the report needs {error.name}"
    try:
        build_report(staging, shown_as=run_dir)
    except KeyboardInterrupt:
        with contextlib.suppress(OSError):
            (staging / REPORT_NAME).unlink()
        return (f"skipped: interrupted while writing it; rebuild it with "
                f"`optimag report {run_dir}`")
    return None


@contextlib.contextmanager
def _deferred_interrupt():
    """Hold a Ctrl-C back while the finished files are renamed into place (in the main
    thread), so the folder is never left half old, half new; it is raised afterwards."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    caught = []
    previous = signal.signal(signal.SIGINT, lambda *_: caught.append(True))
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, previous)
    if caught:
        raise KeyboardInterrupt


def _json_default(value):
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, Path):
        return str(value)
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")
