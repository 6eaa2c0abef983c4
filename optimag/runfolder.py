"""Writing a run folder: the study copy, run.json and the tables (`optimag.report.export`).

It sits above both ``search`` (which finds the designs) and ``report`` (which writes
them), so that no arrow runs from ``search`` to ``report``.
"""

from __future__ import annotations

import json
import os
import shutil
import tempfile
import time
from datetime import datetime
from pathlib import Path

import numpy as np

from optimag.report import export
from optimag.search.run import ExploreResult

__all__ = ["default_run_dir", "write_run"]


def default_run_dir(study, root: Path | None = None) -> Path:
    stamp = datetime.now().strftime("%Y%m%d-%H%M%S")
    return (root or Path("runs")) / f"{study.name}-{stamp}"


def write_run(result: ExploreResult, run_dir: Path | None = None) -> Path:
    """Write the run folder: study copy, run.json, pareto and short-list tables."""
    run_dir = Path(run_dir) if run_dir else default_run_dir(result.study)
    run_dir.mkdir(parents=True, exist_ok=True)
    started = time.perf_counter()
    handle, temp = tempfile.mkstemp(prefix=".study.toml.", dir=run_dir)
    os.close(handle)
    shutil.copyfile(result.study.path, temp)
    os.replace(temp, run_dir / "study.toml")
    export.write_tables(run_dir, result.pareto, result.shortlist_records,
                        currency=str(result.record.get("currency", "")))
    text = json.dumps(result.record, indent=1, default=_json_default, allow_nan=False)
    handle, temp = tempfile.mkstemp(prefix=".run.json.", dir=run_dir)
    os.close(handle)
    Path(temp).write_text(text, encoding="utf-8")
    os.replace(temp, run_dir / "run.json")
    result.record["export_time_s"] = round(time.perf_counter() - started, 4)
    result.run_dir = run_dir
    return run_dir


def _json_default(value):
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, Path):
        return str(value)
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")
