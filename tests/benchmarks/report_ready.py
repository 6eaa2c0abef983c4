"""How soon the run report is ready in headless Chromium, beside a page holding only
plotly.js. Not collected by pytest.

    python tests/benchmarks/report_ready.py [RUNS_DIR]

Each example study is explored into RUNS_DIR/<study> (a temporary folder by default;
an existing run folder there is reused; the optuna study runs a shortened search of
`OPTUNA_TRIALS` trials) and its report rebuilt. Ready means: the load event has fired
and every figure near the first screen (1400 x 900) is drawn; the blank page is ready
at its load event. Each report is loaded `REPEATS` times, each time in a fresh browser
with a fresh profile, alternating with the blank page (so both see the same load on a
shared machine); medians are printed, in seconds since navigation start, the blank
page's over all its loads, as

    solar-pump-boost report ready s: 1.42
    blank page ready s: 1.10
    solar-pump-boost page size MB: 5.44
"""

from __future__ import annotations

import statistics
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from tests.report.devtools import Browser  # noqa: E402

REPEATS = 3
OPTUNA_TRIALS = 600
READY = """(function () {
  var nav = performance.getEntriesByType('navigation')[0];
  if (!nav || !nav.loadEventEnd) return null;
  var mark = document.documentElement.getAttribute('data-ready');
  if (document.querySelector('div.lazy-figure') && mark === null) return null;
  return Math.max(nav.loadEventEnd, Number(mark || 0));
})()"""


def ready_once(page: Path) -> float:
    """Ready time of one load of ``page`` in a fresh browser [s]."""
    with Browser(window=(1400, 900), timeout_s=120) as browser:
        tab = browser.open(page.resolve().as_uri())
        return float(tab.wait_for(READY, timeout_s=120)) / 1e3


def blank_page(folder: Path) -> Path:
    from plotly.offline import get_plotlyjs

    page = folder / "blank.html"
    page.write_text(
        '<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"></head><body>'
        f"<script>{get_plotlyjs()}</script></body></html>",
        encoding="utf-8",
    )
    return page


def run_folder(study: Path, runs: Path) -> Path:
    from optimag.report.html import build_report
    from optimag.runfolder import write_run
    from optimag.search.run import explore
    from optimag.study import load_study

    folder = runs / study.stem
    if not (folder / "run.json").exists():
        loaded = load_study(study)
        trials = OPTUNA_TRIALS if loaded.search.strategy == "optuna" else None
        write_run(explore(loaded, trials=trials), folder, overwrite=True)
    build_report(folder)
    return folder / "report.html"


def main() -> None:
    runs = Path(sys.argv[1]) if len(sys.argv) > 1 else Path(tempfile.mkdtemp(prefix="ready-"))
    runs.mkdir(parents=True, exist_ok=True)
    blank = blank_page(runs)
    blank_times = []
    for study in sorted((ROOT / "studies").glob("*.toml")):
        page = run_folder(study, runs)
        times = []
        for _ in range(REPEATS):
            times.append(ready_once(page))
            blank_times.append(ready_once(blank))
        print(f"{study.stem} page size MB: {page.stat().st_size / 1e6:.2f}", flush=True)
        print(f"{study.stem} report ready s: {statistics.median(times):.2f}", flush=True)
    print(f"blank page ready s: {statistics.median(blank_times):.2f}", flush=True)


if __name__ == "__main__":
    main()
