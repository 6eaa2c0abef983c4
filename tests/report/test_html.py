"""The report page as a file: size, build time, self-containment and escaping.

Outside references: the standard library's HTML parser and JSON decoder read the
page back; plotly's own bundle (`plotly.offline.get_plotlyjs`) is the reference for
"embedded exactly once".
"""

from __future__ import annotations

import json
import re
import time
from html.parser import HTMLParser
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from plotly.offline import get_plotlyjs

from optimag.report import data, figures
from optimag.report.html import CAUTIONS, build_report, json_for_script, page_script

SIZE_LIMIT_BYTES = 10_000_000
BUILD_TIME_LIMIT_S = 5.0


class _Page(HTMLParser):
    """Scripts, styles, links and every src/href of a page."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.scripts: list[tuple[dict[str, str | None], str]] = []
        self.styles: list[str] = []
        self.references: list[tuple[str, str, str]] = []
        self.tags: list[str] = []
        self._in: str | None = None
        self._attrs: dict[str, str | None] = {}
        self._buffer: list[str] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append(tag)
        for name, value in attrs:
            if name in ("src", "href", "srcset", "poster", "data") and value is not None:
                self.references.append((tag, name, value))
        if tag in ("script", "style"):
            self._in, self._attrs, self._buffer = tag, dict(attrs), []

    def handle_data(self, text: str) -> None:
        if self._in:
            self._buffer.append(text)

    def handle_endtag(self, tag: str) -> None:
        if tag == self._in == "script":
            self.scripts.append((self._attrs, "".join(self._buffer)))
        elif tag == self._in == "style":
            self.styles.append("".join(self._buffer))
        if tag == self._in:
            self._in = None


def _parse(page: str) -> _Page:
    parser = _Page()
    parser.feed(page)
    parser.close()
    return parser


def _strings(node: Any) -> list[str]:
    """Every string inside a nested figure dict."""
    if isinstance(node, str):
        return [node]
    if isinstance(node, dict):
        return [s for v in node.values() for s in _strings(v)]
    if isinstance(node, list | tuple | np.ndarray):
        return [s for v in node for s in _strings(v)]
    return []


@pytest.fixture(scope="module")
def page(built_report: Path) -> str:
    return built_report.read_text(encoding="utf-8")


def test_build_time_and_size(run_dir: Path) -> None:
    started = time.perf_counter()
    report = build_report(run_dir)
    seconds = time.perf_counter() - started
    size = report.stat().st_size
    print(f"report built in {seconds:.2f} s, {size / 1e6:.2f} MB")
    assert report == run_dir / "report.html"
    assert seconds < BUILD_TIME_LIMIT_S
    assert size < SIZE_LIMIT_BYTES


def test_plotly_js_is_inline_exactly_once(page: str) -> None:
    bundle = get_plotlyjs()
    assert page.count(bundle[:2000]) == 1
    scripts = _parse(page).scripts
    assert sum(len(body) > 1_000_000 for _, body in scripts) == 1


def test_every_script_is_one_of_ours(page: str) -> None:
    """Plotly's bundle, the page's own script and JSON blocks (summary, figures): nothing
    else; one embedded figure per slot, each a plain {data, layout} dict."""
    bundle = get_plotlyjs()
    ours = page_script()
    blocks: dict[str, Any] = {}
    for attrs, body in _parse(page).scripts:
        assert "src" not in attrs
        if attrs.get("type") == "application/json":
            blocks[str(attrs.get("id"))] = json.loads(body)
        else:
            assert body in (bundle, ours), body[:200]
    assert set(blocks) == {"optimag-run-summary", "optimag-figures", "optimag-designs"}
    embedded = blocks["optimag-figures"]["figures"]
    # Per build sheet: drawing, losses, inductance, headroom and two scatter histograms;
    # 5 sheets shown, 7 more (the other front designs) as templates.
    assert len(embedded) == page.count('class="plotly-graph-div') == 3 + 1 + 1 + 12 * (4 + 2)
    assert page.count('<template class="sheet-template"') == 7
    assert all(set(f) == {"data", "layout"} and f["data"] for f in embedded)
    assert page.count("<script>") == 2


def test_nothing_is_loaded_from_elsewhere(page: str) -> None:
    parsed = _parse(page)
    assert parsed.references == [(tag, n, v) for tag, n, v in parsed.references if v[:1] == "#"]
    assert not {"link", "iframe", "object", "embed", "base"} & set(parsed.tags)
    for css in parsed.styles:
        assert "@import" not in css and "url(" not in css and "@font-face" not in css


def test_hostile_strings_are_escaped(page: str, hostile: dict[str, str]) -> None:
    for raw in hostile.values():
        assert raw not in page
    assert "<script>alert(1)" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page  # shown, as text
    assert "&lt;img src=x onerror=" in page


def test_json_summary_round_trips(page: str, hostile: dict[str, str]) -> None:
    blocks = [b for a, b in _parse(page).scripts if a.get("id") == "optimag-run-summary"]
    assert len(blocks) == 1
    assert "<" not in blocks[0] and ">" not in blocks[0] and "&" not in blocks[0]
    summary = json.loads(blocks[0])
    assert summary["study_title"] == hostile["title"]
    assert len(summary["front"]) == 12 and summary["shortlist"][0] == "D0006"


@settings(max_examples=60, deadline=None)
@given(st.recursive(st.text() | st.integers() | st.booleans(), lambda c: st.lists(c, max_size=4)))
def test_json_for_script_property(value: Any) -> None:
    text = json_for_script({"value": value, "tail": "</script><!--"})
    assert not {"<", ">", "&"} & set(text)
    assert json.loads(text) == {"value": value, "tail": "</script><!--"}


def test_sections_and_cautions(page: str) -> None:
    for heading in (
        "Trade-off map",
        "Short-list side by side",
        "Build sheets",
        "What was ruled out",
        "What was asked",
        "Before you build",
        "Winding window, to scale",
        "Where the watts go",
        "Inductance under load",
        "Headroom to each limit",
    ):
        assert heading in page
    cautions = " ".join(CAUTIONS).lower()
    for word in ("mains", "hot", "burn", "creepage", "clearance", "prototype", "local codes"):
        assert word in cautions
    for text in CAUTIONS:
        assert text.replace("'", "&#x27;") in page
    # Five short-listed sheets on the page, the seven other front designs' in templates.
    assert page.count('<article class="sheet') == 12
    assert page.count('<template class="sheet-template"') == 7


def test_figure_text_is_escaped_for_plotly(run_dir: Path, hostile: dict[str, str]) -> None:
    run = data.load_run(run_dir)
    front = data.pareto_table(run)
    record = dict(run.shortlist[0])
    record["per_operating_point"] = [
        dict(p, name=f"{p['name']} {hostile['svg']}") for p in record["per_operating_point"]
    ]
    built = [
        figures.tradeoff_pair_figure(front, data.pair_views(run)[0], "<b>EUR</b>"),
        figures.tradeoff_3d_figure(front, run.objectives, run.currency),
        figures.shortlist_parallel_figure(data.shortlist_table(run), "<i>EUR</i>"),
        figures.loss_figure(data.loss_breakdown(record)),
        figures.winding_figure(data.winding_drawing_shapes(record), record),
        figures.inductance_figure(record),
        figures.margin_figure(data.margin_table(record)),
    ]
    texts = [s for fig in built for s in _strings(fig)]
    assert any("&lt;script&gt;" in s for s in texts)
    for text in texts:
        lowered = text.lower()
        assert "<script" not in lowered and "<img" not in lowered and "<svg" not in lowered
        assert "<b>eur" not in lowered and "<i>eur" not in lowered


@settings(max_examples=40, deadline=None)
@given(
    values=st.lists(st.floats(1e-3, 1e3), min_size=4, max_size=4),
    limits=st.lists(st.floats(1e-3, 1e3), min_size=4, max_size=4),
)
def test_margin_figure_property(values: list[float], limits: list[float]) -> None:
    record = {
        "peak_flux_T": values[0],
        "temperature_C": values[1],
        "fill_factor": values[2],
        "margins": {
            "flux_limit_T": limits[0],
            "temperature_limit_C": limits[1],
            "fill_limit": limits[2],
            "inductance_at_peak_fraction": values[3],
            "inductance_at_peak_limit": limits[3],
        }
    }
    table = data.margin_table(record)
    fig = figures.margin_figure(table)
    bars = np.asarray(fig["data"][0]["x"], dtype=float)
    assert np.all(np.isfinite(bars))
    assert np.allclose(bars, 100 * np.asarray(values) / np.asarray(limits))
    assert fig["layout"]["xaxis"]["range"][1] >= bars.max()
    colours = list(fig["data"][0]["marker"]["color"])
    assert [c == figures.style.SAGE for c in colours] == list(table["within"])


@pytest.mark.parametrize(
    ("objectives", "pairs", "views_3d"),
    [(("volume", "loss"), 1, 0), (("volume", "loss", "cost", "mass"), 6, 1)],
)
def test_objective_count_sets_the_views(
    tmp_path: Path, make_run, objectives, pairs: int, views_3d: int
) -> None:
    report = build_report(make_run(tmp_path, objectives=objectives, shortlist_size=1))
    text = report.read_text("utf-8")
    assert text.count('data-role="pair"') == pairs
    assert text.count('data-role="front-3d"') == views_3d


def test_report_when_nothing_is_feasible(tmp_path: Path, make_run) -> None:
    report = build_report(make_run(tmp_path, feasible=False))
    text = report.read_text("utf-8")
    assert "No design met every limit" in text
    assert len(re.findall(r"<tr><td>D000\d</td>", text)) == 3  # the three near misses
    assert "plotly-graph-div" not in text
    assert report.stat().st_size < 200_000  # no figure, so no plotly.js either


def test_a_bad_record_costs_one_panel_not_the_report(run_dir: Path) -> None:
    path = run_dir / "shortlist.json"
    designs = json.loads(path.read_text("utf-8"))["designs"]
    designs[1]["winding"]["layers"] += 2
    designs[2]["per_operating_point"][0]["total_loss_W"] += 1.0
    path.write_text(json.dumps({"designs": designs}), "utf-8")
    (run_dir / "front.json").unlink()  # the short-list alone
    text = build_report(run_dir).read_text("utf-8")
    assert text.count("Drawing unavailable") == 1
    assert text.count("Unavailable: ") == 1
    assert text.count('<article class="sheet') == 5


def test_limits_not_set_and_interrupted_runs(run_dir: Path) -> None:
    meta = json.loads((run_dir / "run.json").read_text("utf-8"))
    meta["limits"]["max_footprint_mm2"] = None
    meta["interrupted"] = True
    (run_dir / "run.json").write_text(json.dumps(meta), "utf-8")
    limits = data.limits_table(data.load_run(run_dir)).set_index("limit")
    assert limits.loc["max footprint", "value"] == "not set"
    assert limits.loc["max footprint", "unit"] == "mm²"
    text = build_report(run_dir).read_text("utf-8")
    assert "stopped early" in text


def test_elimination_table_in_page(page: str) -> None:
    rows = re.findall(r"<tr><td><code>([a-z_]+)</code>", page)
    assert rows[0] == "inductance" and len(rows) == 8


def test_custom_core_comparison_is_rendered_when_present(run_dir):
    """An optuna run with custom cores records, per catalogue front design, the smallest
    custom design at equal or lower loss; the report shows it as a table."""
    import json

    from optimag.report import data
    from optimag.report.html import render_report

    folder = run_dir
    meta_path = folder / "run.json"
    meta = json.loads(meta_path.read_text())
    meta["custom_vs_catalogue"] = {
        "rows": [
            {"catalogue_core": "E-20", "loss_W": 1.2, "catalogue_volume_cm3": 9.0,
             "custom_core": "custom-E-7", "custom_volume_cm3": 6.0, "volume_ratio": 1.5},
            {"catalogue_core": "E-25", "loss_W": 0.8, "catalogue_volume_cm3": 14.0,
             "custom_core": None, "custom_volume_cm3": None, "volume_ratio": None},
        ],
        "median_volume_ratio": 1.5,
    }
    meta_path.write_text(json.dumps(meta))
    run = data.load_run(folder)
    table = data.custom_comparison_table(run)
    assert list(table["volume_ratio"].iloc[:1]) == [1.5]
    page = render_report(run)
    assert "What a custom core would save" in page
    assert "custom-E-7" in page and "median 1.50" in page


def test_model_range_notes_appear_escaped_on_the_build_sheet(run_dir):
    """A record's model notes (model used outside its stated range) are shown as text."""
    import json

    from optimag.report import data
    from optimag.report.html import render_report

    path = run_dir / "shortlist.json"
    content = json.loads(path.read_text())
    content["designs"][0]["model_notes"] = ["core loss: fit holds to 0.3 T <b>only</b>"]
    path.write_text(json.dumps(content))
    page = render_report(data.load_run(run_dir))
    assert "outside its range" in page
    assert "fit holds to 0.3 T &lt;b&gt;only&lt;/b&gt;" in page


def test_headroom_chart_shows_the_hot_spot_band() -> None:
    record = {
        "peak_flux_T": 0.2, "temperature_C": 80.0, "hotspot_temperature_C": 88.0,
        "temperature_band_C": [84.0, 97.0], "fill_factor": 0.3,
        "margins": {
            "flux_limit_T": 0.3, "temperature_limit_C": 100.0, "fill_limit": 0.45,
            "inductance_at_peak_fraction": 0.9, "inductance_at_peak_limit": 0.8,
        },
    }
    fig = figures.margin_figure(data.margin_table(record))
    bar = fig["data"][0]
    assert bar["error_x"]["visible"]
    row = list(bar["y"]).index("Hot-spot temperature")
    assert bar["x"][row] == pytest.approx(88.0)
    assert bar["error_x"]["array"][row] == pytest.approx(9.0)  # up to 97 % of the limit
    assert bar["error_x"]["arrayminus"][row] == pytest.approx(4.0)  # down to 84 %
    assert bar["error_x"]["array"][0] == 0.0
    assert "band 84–97 °C" in bar["text"][row]


def test_reference_designs_are_marked_on_every_tradeoff_plot(run_dir: Path) -> None:
    """A study's [[reference_designs]] (records in run.json) appear as labelled stars on
    each pair view and in the 3-D view; filled when they meet every constraint."""
    meta = json.loads((run_dir / "run.json").read_text("utf-8"))
    shortlist = json.loads((run_dir / "shortlist.json").read_text("utf-8"))["designs"]
    bench = dict(shortlist[1], design_id="bench", violated=[])
    proposal = dict(shortlist[2], design_id="proposal <b>", violated=["temperature"])
    meta["reference_designs"] = [bench, proposal]
    (run_dir / "run.json").write_text(json.dumps(meta), "utf-8")
    run = data.load_run(run_dir)
    front = data.pareto_table(run)
    references = data.reference_table(run)
    assert list(references["meets_all"]) == [True, False]
    views = data.pair_views(run, front)
    built = [figures.tradeoff_pair_figure(front, v, run.currency, references=references)
             for v in views]
    built.append(figures.tradeoff_3d_figure(front, run.objectives, run.currency, references))
    for fig, view in zip(built, [*views, None], strict=True):
        marked = [t for t in fig["data"] if t.get("name") == "reference design"]
        assert len(marked) == 1
        assert list(marked[0]["text"]) == ["bench", "proposal &lt;b&gt;"]
        if view is not None:
            assert list(marked[0]["x"]) == pytest.approx(
                [bench[view.x_column], proposal[view.x_column]], rel=1e-6)
            assert list(marked[0]["marker"]["symbol"]) == ["star", "star-open"]
    page = build_report(run_dir).read_text("utf-8")
    assert "reference designs" in page
