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
        #: Inside inert <template> content (sheets not opened yet): not surveyed.
        self._templates = 0

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        if tag == "template":
            self._templates += 1
        if self._templates:
            return
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
        if tag == "template":
            self._templates -= 1
        if self._templates:
            return
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
    # Slots on the page itself (sheets kept in templates are drawn only when opened).
    expected = len(survey(built_report.read_text("utf-8")).figures)
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


#: Centres of the points of a drawn scatter figure with their design ids (trace ``ids``),
#: in viewport pixels.
POINTS_JS = """(function (div) {
  var out = [];
  var groups = div.querySelectorAll('g.scatterlayer g.trace');
  for (var t = 0; t < div.data.length; t += 1) {
    var ids = div.data[t].ids;
    if (!ids || !groups[t]) continue;
    var points = groups[t].querySelectorAll('path.point');
    for (var p = 0; p < points.length && p < ids.length; p += 1) {
      var r = points[p].getBoundingClientRect();
      out.push([ids[p], r.left + r.width / 2, r.top + r.height / 2]);
    }
  }
  return out;
})"""


def _open_page(browser: Browser, page: Path) -> Tab:
    tab = browser.open(page.resolve().as_uri())
    tab.wait_for("document.documentElement && "
                 "document.documentElement.getAttribute('data-ready')", DRAW_TIMEOUT_S)
    return tab


def test_a_click_on_a_front_point_opens_its_build_sheet(built_report: Path) -> None:
    """A real mouse click on a front design that is not short-listed, in the first
    trade-off plot, brings in that design's build sheet with its figures drawn."""
    chromium_or_skip()
    with Browser(window=WINDOW) as browser:
        tab = _open_page(browser, built_report)
        first = "document.querySelector('div.fig[data-role=pair] div.lazy-figure')"
        tab.evaluate(f"{first}.scrollIntoView({{block: 'center'}})")
        tab.wait_for(f"{first}.querySelector('svg.main-svg') !== null", DRAW_TIMEOUT_S)
        points = tab.evaluate(f"{POINTS_JS}({first})")
        hidden = set(tab.evaluate(
            "Array.from(document.querySelectorAll('template.sheet-template'))"
            ".map(t => t.getAttribute('data-design'))"))
        assert hidden

        def clear(design: str, x: float, y: float) -> bool:
            return all(other == design or (x - ox) ** 2 + (y - oy) ** 2 > 14**2
                       for other, ox, oy in points)

        design, x, y = next(p for p in points if p[0] in hidden and clear(*p))
        assert tab.evaluate("document.querySelector('#opened-sheets article') === null")
        tab.click(x, y)
        opened = tab.wait_for(
            "(document.querySelector('#opened-sheets article.sheet') || {}).id", 30)
        assert opened == f"design-{design}"
        sheet = "document.querySelector('#opened-sheets article.sheet')"
        assert tab.evaluate(f"{sheet}.classList.contains('opened')")
        tab.wait_for(f"{sheet}.querySelector('svg.main-svg') !== null", DRAW_TIMEOUT_S)
        title = tab.evaluate(f"{sheet}.querySelector('h3').textContent")
        assert title.startswith(f"{design} — ")
        assert tab.console_problems() == []


def test_a_click_on_a_ranked_row_opens_its_build_sheet(built_report: Path) -> None:
    chromium_or_skip()
    with Browser(window=WINDOW) as browser:
        tab = _open_page(browser, built_report)
        row = "document.querySelectorAll('tr.pick')[2]"
        design = tab.evaluate(f"{row}.getAttribute('data-design')")
        tab.click_element(row)
        shown = tab.wait_for(
            "(document.querySelector('article.sheet.opened') || {}).id", 30)
        assert shown == f"design-{design}"
        top = tab.evaluate("document.querySelector('article.sheet.opened')"
                           ".getBoundingClientRect().top")
        assert abs(top) < 5  # scrolled to it


def test_the_comparison_shows_the_picked_designs_and_exports_a_safe_csv(
    tmp_path: Path, make_run
) -> None:
    """Two designs picked in the page (one from the list, one with Compare on its build
    sheet) fill the table and one loss chart per operating point; the CSV holds the
    cells as shown, formula-like ones neutralised by the export rule
    (`optimag.files.neutralise_text`)."""
    import csv
    import io
    import json

    from optimag import files
    from optimag.report.html import build_report

    chromium_or_skip()
    folder = make_run(tmp_path)
    front = json.loads((folder / "front.json").read_text("utf-8"))
    front["designs"][7]["core"] = '=HYPERLINK("http://example.invalid")'
    (folder / "front.json").write_text(json.dumps(front), "utf-8")
    page = build_report(folder)
    with Browser(window=WINDOW) as browser:
        tab = _open_page(browser, page)
        tab.evaluate("document.getElementById('compare-pick').value = 'D0008'")
        tab.click_element("document.getElementById('compare-add')")
        tab.click_element("document.querySelector('#design-D0002 button.compare-add')")
        heads = tab.wait_for(
            "Array.from(document.querySelectorAll('#compare-table th[data-design]'))"
            ".map(th => th.textContent)", 30)
        assert heads == ["D0008", "D0002"]
        core_row = tab.evaluate(
            "Array.from(document.querySelectorAll('#compare-table tbody tr')[0].cells)"
            ".map(td => td.textContent)")
        assert core_row[1:] == [front["designs"][7]["core"], front["designs"][1]["core"]]
        assert tab.evaluate("document.querySelectorAll('#compare-table td.differs').length") > 0
        charts = tab.wait_for(
            "document.querySelectorAll('#compare-charts .js-plotly-plot').length", 30)
        assert charts == 3  # one per operating point
        text = tab.evaluate("optimagReport.csvText()")
        rows = list(csv.reader(io.StringIO(text)))
        assert rows[0] == ["Figure", "D0008", "D0002"]
        assert rows[1] == ["Core", files.neutralise_text(front["designs"][7]["core"]),
                           files.neutralise_text(front["designs"][1]["core"])]
        assert rows[1][1].startswith("'=")
        assert tab.console_problems() == []


def test_the_energy_price_slider_marks_the_cheapest_over_the_life(built_report: Path) -> None:
    """For a price and hours set in the page, the design marked cheapest is the one with
    the lowest part cost + energy cost computed in Python (`geometry.energy_cost`)."""
    import json

    from optimag.physics.geometry import energy_cost

    chromium_or_skip()
    front = json.loads((built_report.parent / "front.json").read_text("utf-8"))["designs"]
    with Browser(window=WINDOW) as browser:
        tab = _open_page(browser, built_report)
        for price, hours in ((0.0, 29_200.0), (0.25, 29_200.0), (1.0, 60_000.0)):
            tab.evaluate(
                f"(function () {{ var p = document.getElementById('energy-price');"
                f" p.value = '{price}'; p.dispatchEvent(new Event('input'));"
                f" var h = document.getElementById('operating-hours'); h.value = '{hours}';"
                " h.dispatchEvent(new Event('input')); })()")
            marked = tab.evaluate(
                "document.querySelector('#lifetime-table tr.cheapest').getAttribute("
                "'data-design')")
            totals = {d["design_id"]: d["cost"] + float(
                energy_cost(d["weighted_loss_W"], hours, price)) for d in front}
            assert marked == min(totals, key=lambda k: (totals[k], k)), (price, hours)


def _near_front_run(tmp_path: Path, make_run) -> Path:
    """The fixture run with a near-front file: 400 invented feasible designs in three
    objectives (invented numbers)."""
    import json

    import numpy as np

    from optimag.search.pareto import layer_numbers

    folder = make_run(tmp_path)
    rng = np.random.default_rng(11)
    count = 400
    volume = rng.uniform(2.0, 20.0, count)
    loss = 0.8 + 14.0 / (volume + 1.5) * rng.uniform(1.0, 1.6, count)
    cost = 0.5 + 0.1 * volume * rng.uniform(0.8, 1.3, count)
    objectives = np.column_stack([volume, loss, cost])
    layer = layer_numbers(objectives)
    columns = {
        "core": ["E25/13/7"] * count, "material": ["N87-like"] * count,
        "wire": ["round 1.25 mm"] * count, "stack": [1] * count,
        "turns": rng.integers(10, 40, count).tolist(), "parallel": [1] * count,
        "hotspot_temperature_C": rng.uniform(60.0, 100.0, count).tolist(),
        "box_height_mm": rng.uniform(8.0, 22.0, count).tolist(),
        "footprint_mm2": rng.uniform(300.0, 900.0, count).tolist(),
        "volume_cm3": volume.tolist(), "weighted_loss_W": loss.tolist(),
        "cost": cost.tolist(), "design_id": [""] * count, "layer": layer.tolist(),
    }
    # Every feasible design held (no layer bound): a front is never cut short.
    near = {"objectives": ["volume", "loss", "cost"], "layers": None,
            "cap": 20_000, "count": count,
            "limits": {"hotspot_temperature_C": 100.0, "box_height_mm": 22.0,
                       "footprint_mm2": None, "weighted_loss_W": None, "volume_cm3": None},
            "columns": columns}
    (folder / "near_front.json").write_text(json.dumps(near), "utf-8")
    return folder


def test_the_temperature_slider_recomputes_the_front_as_python_does(
    tmp_path: Path, make_run
) -> None:
    """Moving the temperature slider in the page leaves exactly the front that Python
    computes (`optimag.search.pareto.nondominated_mask`) on the embedded designs within
    the same limits; relaxing past the study's limit shows the rerun command."""
    import json

    import numpy as np

    from optimag.report.html import build_report
    from optimag.search.pareto import nondominated_mask

    chromium_or_skip()
    page = build_report(_near_front_run(tmp_path, make_run))
    with Browser(window=WINDOW) as browser:
        tab = _open_page(browser, page)
        embedded = json.loads(tab.evaluate(
            "document.getElementById('optimag-whatif').textContent"))
        cols = {k: np.asarray(v, dtype=float) for k, v in embedded["columns"].items()}
        tab.evaluate("document.getElementById('whatif').scrollIntoView()")
        tab.wait_for("document.getElementById('whatif-plot').hasAttribute('data-front')", 60)
        slider = "document.getElementById('whatif-limit-0')"
        assert tab.evaluate(f"{slider}.getAttribute('data-column')") == "hotspot_temperature_C"
        for limit in (100.0, 90.0, 80.0, 70.0):
            tab.evaluate(f"(function () {{ var s = {slider}; s.value = '{limit}';"
                         " s.dispatchEvent(new Event('input')); })()")
            shown = tab.evaluate("document.getElementById('whatif-plot')"
                                 ".getAttribute('data-front')")
            page_front = sorted(int(v) for v in shown.split(",") if v)
            bound = float(tab.evaluate(f"Number({slider}.value)"))
            inside = (cols["hotspot_temperature_C"] <= bound) & (cols["box_height_mm"] <= 22.0)
            rows = np.flatnonzero(inside)
            points = np.column_stack([cols[c][rows] for c in embedded["objective_columns"]])
            python_front = sorted(rows[nondominated_mask(points)].tolist())
            assert page_front == python_front, limit
            removed = set(range(len(cols["cost"]))) - set(rows.tolist())
            assert not removed & set(page_front)
        assert tab.evaluate("document.querySelector('#whatif-warning .alert') === null")
        tab.evaluate(f"(function () {{ var s = {slider}; s.value = s.max;"
                     " s.dispatchEvent(new Event('input')); })()")
        warning = tab.evaluate("document.getElementById('whatif-warning').textContent")
        assert "max_temperature_C = 125" in warning
        assert "optimag explore " in warning and "study.toml" in warning
        assert tab.console_problems() == []
