"""Run report: one offline HTML page per run folder.

`build_report(run_dir)` writes ``report.html`` into the run folder. The data step
(`optimag.report.data`) is importable on its own; plotly is loaded only when a
report is actually rendered, so importing ``optimag.report.export`` stays light.
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["build_report"]


def build_report(run_dir: Path) -> Path:
    """Write ``report.html`` into ``run_dir`` and return its path."""
    from optimag.report.html import build_report as _build

    return _build(Path(run_dir))
