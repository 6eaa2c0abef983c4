"""The report in a real browser: headless Chromium from Debian's packages, driven over
the DevTools protocol (`tests.report.devtools`).

One Chromium loads the fixture report from disk, scrolls through it so every lazily
drawn figure comes into view, and gives back the rendered DOM, the console's errors,
the requests the page tried to send and a screenshot. Host names resolve nowhere, and
the page must ask for nothing over the network. A second, tiny page built to fail the
same checks shows none of them can pass vacuously.
"""

from __future__ import annotations

import base64
import os
import struct
import zlib
from dataclasses import dataclass
from html.parser import HTMLParser
from pathlib import Path

import pytest

from tests.report.devtools import CHROMIUM, Browser, Tab

pytestmark = pytest.mark.browser

WINDOW = (1400, 900)
#: Figures drawn on two busy cores (WebGL in software for the 3-D and parallel views).
DRAW_TIMEOUT_S = 240


def chromium_or_skip() -> Path:
    if CHROMIUM.exists():
        return CHROMIUM
    if os.environ.get("CI", "").lower() in ("1", "true", "yes"):
        pytest.fail("CI is set but /usr/bin/chromium is missing; .ci/run should install it")
    pytest.skip("headless Chromium not installed: apt-get install -y chromium")


@dataclass(frozen=True)
class Visit:
    dom: str
    console: list[str]
    requests: list[str]
    screenshot: Path
    ready_ms: float


def scroll_through(tab: Tab, timeout_s: float = DRAW_TIMEOUT_S) -> None:
    """Bring every figure slot into view in turn and wait until each is drawn."""
    count = tab.evaluate("document.querySelectorAll('div.lazy-figure').length")
    for index in range(count):
        tab.evaluate(
            f"document.querySelectorAll('div.lazy-figure')[{index}]"
            ".scrollIntoView({block: 'center'})"
        )
        tab.wait_for(
            f"document.querySelectorAll('div.lazy-figure')[{index}]"
            ".querySelector('svg.main-svg') !== null",
            timeout_s,
        )


def screenshot(tab: Tab, path: Path) -> Path:
    shot = tab.send("Page.captureScreenshot", {"format": "png"})
    path.write_bytes(base64.b64decode(shot["data"]))
    return path


def visit(page: Path, workdir: Path) -> Visit:
    """Load ``page`` in headless Chromium, draw every figure, collect what happened."""
    chromium_or_skip()
    workdir.mkdir(parents=True, exist_ok=True)
    with Browser(window=WINDOW) as browser:
        tab = browser.open(page.resolve().as_uri())
        ready = tab.wait_for(
            "document.documentElement && document.documentElement.getAttribute('data-ready')",
            DRAW_TIMEOUT_S,
        )
        scroll_through(tab)
        tab.evaluate("window.scrollTo(0, 0)")
        shot = screenshot(tab, workdir / "report.png")
        dom = tab.evaluate("document.documentElement.outerHTML")
        return Visit(dom=dom, console=tab.console_problems(),
                     requests=tab.network_requests(), screenshot=shot,
                     ready_ms=float(ready))


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
    expected = built_report.read_text("utf-8").count('class="plotly-graph-div')
    found = survey(report_visit.dom)
    print(f"figures rendered: {sum(found.figures.values())} of {expected}; first screen "
          f"ready after {report_visit.ready_ms:.0f} ms")
    assert len(found.figures) == expected > 20
    assert all(found.figures.values()), [k for k, ok in found.figures.items() if not ok]


def test_figures_wait_until_they_are_seen(built_report: Path) -> None:
    """At load only the figures near the first screen are drawn; the rest on scrolling."""
    chromium_or_skip()
    with Browser(window=WINDOW) as browser:
        tab = browser.open(built_report.resolve().as_uri())
        tab.wait_for("document.documentElement && "
                     "document.documentElement.getAttribute('data-ready')", DRAW_TIMEOUT_S)
        drawn = tab.evaluate("document.querySelectorAll('div.lazy-figure svg.main-svg').length")
        total = tab.evaluate("document.querySelectorAll('div.lazy-figure').length")
        assert 0 < drawn < total / 4
        last = f"document.querySelectorAll('div.lazy-figure')[{total - 1}]"
        assert tab.evaluate(f"{last}.querySelector('svg.main-svg') === null")
        tab.evaluate(f"{last}.scrollIntoView({{block: 'center'}})")
        tab.wait_for(f"{last}.querySelector('svg.main-svg') !== null", DRAW_TIMEOUT_S)


def test_hostile_strings_stay_text(report_visit: Visit, hostile: dict[str, str]) -> None:
    found = survey(report_visit.dom)
    assert "data-pwned" not in found.body_attributes
    assert "x" not in found.img_sources
    assert found.svg_onload == 0
    # The payload is on screen, as plain characters.
    assert found.h1_text.strip() == hostile["title"]


def test_console_is_clean(report_visit: Visit) -> None:
    assert report_visit.console == []


def test_nothing_fetched_from_the_network(report_visit: Visit) -> None:
    assert report_visit.requests == []


def test_screenshot_is_a_real_page(report_visit: Visit) -> None:
    width, height, distinct = png_facts(report_visit.screenshot)
    size = report_visit.screenshot.stat().st_size
    print(f"screenshot {report_visit.screenshot} {width}x{height}, {size / 1e3:.0f} kB")
    assert (width, height) == WINDOW
    assert size > 50_000
    assert distinct > 40


def test_the_checks_catch_a_broken_page(tmp_path: Path, hostile: dict[str, str]) -> None:
    """A page that logs an error, throws, fetches a remote image and runs a payload."""
    page = tmp_path / "broken.html"
    page.write_text(
        "<!DOCTYPE html><html><body><h1>x</h1>"
        '<script>console.error("deliberate error");</script>'
        "<script>notDefinedAnywhere();</script>"
        '<img src="http://example.invalid/pixel.png">'
        f"{hostile['img']}{hostile['svg']}"
        "<script>document.documentElement.setAttribute('data-ready', '1')</script>"
        "</body></html>",
        encoding="utf-8",
    )
    seen = visit(page, tmp_path / "chromium")
    assert any("deliberate error" in p for p in seen.console)
    assert any("notDefinedAnywhere" in p for p in seen.console)
    assert seen.requests == ["http://example.invalid/pixel.png"]
    assert "data-pwned" in survey(seen.dom).body_attributes
