"""The report in a real browser: headless Chromium from Debian's packages.

One Chromium run loads the fixture report from disk and gives back the rendered DOM,
the console log, a network log and a screenshot. Host names resolve nowhere during
the run, and the network log must show no request leaving the page. A second, tiny
run feeds the same checks a page built to fail them, so none of them can pass
vacuously.
"""

from __future__ import annotations

import json
import os
import re
import struct
import subprocess
import zlib
from dataclasses import dataclass
from html.parser import HTMLParser
from pathlib import Path

import pytest

pytestmark = pytest.mark.browser

CHROMIUM = Path("/usr/bin/chromium")
WINDOW = (1400, 4000)
#: A clean run takes 10-20 s on two busy cores; a page stuck on a dialog never ends.
TIMEOUT_S = 120

#: Browser notices about its own software rendering, not problems of the page.
HARMLESS_CONSOLE = (
    "GPU stall due to ReadPixels",
    "Canvas2D: Multiple readback operations using getImageData",
    "Automatic fallback to software WebGL has been deprecated",
)
_CONSOLE_LINE = re.compile(r'CONSOLE[^\]]*\]\s*"(?P<message>.*)", source:')


def _chromium() -> Path:
    if CHROMIUM.exists():
        return CHROMIUM
    if os.environ.get("CI", "").lower() in ("1", "true", "yes"):
        pytest.fail("CI is set but /usr/bin/chromium is missing; .ci/run should install it")
    pytest.skip("headless Chromium not installed: apt-get install -y chromium")


@dataclass(frozen=True)
class Visit:
    dom: str
    stderr: str
    netlog: dict
    screenshot: Path


def visit(page: Path, workdir: Path) -> Visit:
    """Load ``page`` once in headless Chromium with networking dead-ended."""
    browser = _chromium()
    workdir.mkdir(parents=True, exist_ok=True)
    shot = workdir / "report.png"
    netlog = workdir / "net.json"
    command = [
        str(browser),
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        # Software WebGL for the 3-D and parallel-axes views, opted in explicitly.
        "--enable-unsafe-swiftshader",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--host-resolver-rules=MAP * ~NOTFOUND",
        f"--user-data-dir={workdir / 'profile'}",
        f"--log-net-log={netlog}",
        "--enable-logging=stderr",
        "--v=0",
        "--hide-scrollbars",
        f"--window-size={WINDOW[0]},{WINDOW[1]}",
        f"--screenshot={shot}",
        "--dump-dom",
        "--virtual-time-budget=10000",
        page.resolve().as_uri(),
    ]
    try:
        done = subprocess.run(
            command, capture_output=True, text=True, timeout=TIMEOUT_S, check=False
        )
    except subprocess.TimeoutExpired:
        pytest.fail(
            f"Chromium did not finish {page.name} in {TIMEOUT_S} s; a script dialog such as "
            "alert() blocks headless Chromium, so injected script may have run"
        )
    assert done.returncode == 0, done.stderr[-3000:]
    return Visit(
        dom=done.stdout,
        stderr=done.stderr,
        netlog=json.loads(netlog.read_text(encoding="utf-8")),
        screenshot=shot,
    )


def console_problems(stderr: str) -> list[str]:
    """Console messages of the page, minus the browser's own rendering notices."""
    problems = []
    for line in stderr.splitlines():
        match = _CONSOLE_LINE.search(line)
        if match and not any(ok in match["message"] for ok in HARMLESS_CONSOLE):
            problems.append(match["message"])
        elif "Uncaught" in line and not match:
            problems.append(line)
    return problems


def page_requests(netlog: dict) -> list[str]:
    """URLs the page itself asked for over the network (file: loads excluded)."""
    kinds = {value: name for name, value in netlog["constants"]["logEventTypes"].items()}
    urls = []
    for event in netlog["events"]:
        if kinds.get(event["type"]) != "URL_REQUEST_START_JOB":
            continue
        params = event.get("params", {})
        url = params.get("url", "")
        from_page = "file://" in params.get("network_isolation_key", "")
        if from_page and not url.startswith(("file:", "data:", "blob:")):
            urls.append(url)
    return urls


class _DomSurvey(HTMLParser):
    """Figure divs and whether each holds plotly's rendered SVG; body attributes."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.figures: dict[str, bool] = {}
        self.body_attributes: dict[str, str | None] = {}
        self.img_sources: list[str | None] = []
        self.svg_onload = 0
        self.h1_text = ""
        self._open: list[tuple[str, int]] = []
        self._depth = 0
        self._in_h1 = False

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        attributes = dict(attrs)
        if tag == "body":
            self.body_attributes = attributes
        if tag == "img":
            self.img_sources.append(attributes.get("src"))
        if tag == "svg" and "onload" in attributes:
            self.svg_onload += 1
        if tag == "h1":
            self._in_h1 = True
        if tag == "div":
            self._depth += 1
            if "plotly-graph-div" in (attributes.get("class") or ""):
                figure_id = attributes.get("id") or f"anonymous-{len(self.figures)}"
                self.figures[figure_id] = False
                self._open.append((figure_id, self._depth))
        if tag == "svg" and "main-svg" in (attributes.get("class") or ""):
            for figure_id, _ in self._open:
                self.figures[figure_id] = True

    def handle_endtag(self, tag: str) -> None:
        if tag == "h1":
            self._in_h1 = False
        if tag == "div":
            if self._open and self._open[-1][1] == self._depth:
                self._open.pop()
            self._depth -= 1

    def handle_data(self, data: str) -> None:
        if self._in_h1:
            self.h1_text += data


def survey(dom: str) -> _DomSurvey:
    parser = _DomSurvey()
    parser.feed(dom)
    parser.close()
    return parser


def png_facts(path: Path) -> tuple[int, int, int]:
    """Width, height and the number of distinct byte values in the pixel stream."""
    blob = path.read_bytes()
    assert blob[:8] == b"\x89PNG\r\n\x1a\n", "not a PNG"
    width, height = struct.unpack(">II", blob[16:24])
    position, chunks = 8, []
    while position < len(blob):
        (length,) = struct.unpack(">I", blob[position : position + 4])
        kind = blob[position + 4 : position + 8]
        if kind == b"IDAT":
            chunks.append(blob[position + 8 : position + 8 + length])
        position += 12 + length
    pixels = zlib.decompress(b"".join(chunks))
    return width, height, len(set(pixels[: 4 * width * 400]))


@pytest.fixture(scope="module")
def report_visit(built_report: Path, tmp_path_factory: pytest.TempPathFactory) -> Visit:
    return visit(built_report, tmp_path_factory.mktemp("chromium"))


def test_every_figure_renders_an_svg(report_visit: Visit, built_report: Path) -> None:
    expected = len(re.findall(r'class="plotly-graph-div"', built_report.read_text("utf-8")))
    found = survey(report_visit.dom)
    print(f"figures rendered: {sum(found.figures.values())} of {expected}")
    assert len(found.figures) == expected > 20
    assert all(found.figures.values()), [k for k, ok in found.figures.items() if not ok]


def test_hostile_strings_stay_text(report_visit: Visit, hostile: dict[str, str]) -> None:
    found = survey(report_visit.dom)
    assert "data-pwned" not in found.body_attributes
    assert "x" not in found.img_sources
    assert found.svg_onload == 0
    # The payload is on screen, as plain characters.
    assert found.h1_text.strip() == hostile["title"]


def test_console_is_clean(report_visit: Visit) -> None:
    assert console_problems(report_visit.stderr) == []


def test_nothing_fetched_from_the_network(report_visit: Visit) -> None:
    assert page_requests(report_visit.netlog) == []


def test_screenshot_is_a_real_page(report_visit: Visit) -> None:
    width, height, distinct = png_facts(report_visit.screenshot)
    size = report_visit.screenshot.stat().st_size
    print(f"screenshot {report_visit.screenshot} {width}x{height}, {size / 1e3:.0f} kB")
    assert (width, height) == WINDOW
    assert size > 100_000
    assert distinct > 40


def test_the_checks_catch_a_broken_page(tmp_path: Path, hostile: dict[str, str]) -> None:
    """A page that logs an error, throws, fetches a remote image and runs a payload."""
    page = tmp_path / "broken.html"
    page.write_text(
        "<!DOCTYPE html><html><body><h1>x</h1>"
        '<script>console.error("deliberate error");</script>'
        "<script>notDefinedAnywhere();</script>"
        '<img src="http://example.invalid/pixel.png">'
        f"{hostile['img']}{hostile['svg']}</body></html>",
        encoding="utf-8",
    )
    seen = visit(page, tmp_path / "chromium")
    problems = console_problems(seen.stderr)
    assert any("deliberate error" in p for p in problems)
    assert any("Uncaught" in p for p in problems)
    assert page_requests(seen.netlog) == ["http://example.invalid/pixel.png"]
    assert "data-pwned" in survey(seen.dom).body_attributes
