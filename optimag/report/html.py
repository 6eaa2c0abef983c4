"""Assemble the run report: one self-contained, offline HTML page per run folder.

plotly.js is embedded once, inline, at the end of the page. Each figure is a plain
dict embedded in one compact JSON block; its slot is an empty div that the page's own
script (`page.js`) fills when the slot comes into view, so the page is ready as soon
as its first screen is drawn. Nothing is fetched from the network: no CDN, no web
fonts.
Every user string is escaped with `html.escape` before it reaches the page, and the
JSON summary embedded in a ``<script>`` block has ``<``, ``>`` and ``&`` escaped so
that no string can close the block.
"""

from __future__ import annotations

import dataclasses
import html
import json
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import Any

import pandas as pd

from optimag import files, records
from optimag.report import choose, data, figures, style, yields
from optimag.report.figdict import Figure

#: The page's own script (lazy figures, opening sheets, comparison, lifetime cost),
#: shipped beside this module.
PAGE_SCRIPT = Path(__file__).with_name("page.js")


def page_script() -> str:
    """The page's script as embedded: the CSV cell rule of the exports, then page.js."""
    return files.NEUTRALISE_JS + "\n" + PAGE_SCRIPT.read_text(encoding="utf-8")

REPORT_NAME = "report.html"

CAUTIONS = (
    "Switching converters can carry hazardous voltages, mains voltage included, and keep "
    "them on capacitors after the supply is removed. Work on them only when you are "
    "trained to, with the power off and the energy discharged.",
    "Inductors and their cores run hot in service and can burn skin; at fault currents "
    "the winding insulation can char or ignite.",
    "Insulation, creepage and clearance distances are set by the safety standard that "
    "applies to the end product, not by this search; check the bobbin, tape and wire "
    "ratings against it.",
    "Every figure here is an estimate from models with known limits. Build a prototype "
    "and measure inductance, temperature rise and losses before you rely on a design.",
    "Local codes and licensed professional practice take precedence over anything in this report.",
)


def escape(value: Any) -> str:
    """HTML-escape any value for text or attribute context."""
    return html.escape(str(value), quote=True)


def json_for_script(value: Any) -> str:
    """JSON text safe inside a ``<script>`` element.

    ``<``, ``>`` and ``&`` become ``\\u003c``, ``\\u003e`` and ``\\u0026`` (still valid
    JSON, decoding to the same strings), so ``</script>`` or ``<!--`` in a string
    cannot end or alter the block; U+2028/U+2029 are escaped for old JS parsers.
    """
    text = json.dumps(value, ensure_ascii=False, allow_nan=False)
    for raw, safe in (
        ("<", "\\u003c"),
        (">", "\\u003e"),
        ("&", "\\u0026"),
        ("\u2028", "\\u2028"),
        ("\u2029", "\\u2029"),
    ):
        text = text.replace(raw, safe)
    return text


class _FigureSlots:
    """Collects the page's figures; each becomes an empty slot drawn when seen."""

    def __init__(self) -> None:
        self.figures: list[Figure] = []

    @property
    def count(self) -> int:
        return len(self.figures)

    def render(self, fig: Figure, role: str) -> str:
        self.figures.append(fig)
        index = len(self.figures) - 1
        height = int(fig.get("layout", {}).get("height") or 400)
        return (
            f'<div class="fig" data-role="{escape(role)}">'
            f'<div id="figure-{index + 1:03d}" class="plotly-graph-div lazy-figure" '
            f'data-figure="{index}" style="height:{height}px; width:100%;"></div></div>'
        )

    def scripts(self) -> str:
        """The figures' JSON block, plotly.js and the page's script (nothing without
        figures)."""
        if not self.figures:
            return ""
        from plotly.offline import get_plotlyjs

        store = {"config": style.PLOTLY_CONFIG, "figures": self.figures,
                 "loss_colours": list(style.LOSS_COLOURS.values())}
        return (
            '<script type="application/json" id="optimag-figures">'
            f"{json_for_script(store)}</script>"
            f"<script>{get_plotlyjs()}</script>"
            f"<script>{page_script()}</script>"
        )


def _table(
    headers: Sequence[str],
    rows: Iterable[Sequence[Any]],
    numeric: Sequence[bool] | None = None,
    css: str = "data",
    designs: Sequence[str] | None = None,
) -> str:
    """An HTML table; every header and cell is escaped here, values arrive raw.
    ``designs``: the design id of each row (a click on the row opens its build sheet)."""
    numeric = numeric or [False] * len(headers)
    head = "".join(f"<th>{escape(h)}</th>" for h in headers)
    body = []
    for index, row in enumerate(rows):
        cells = "".join(
            f'<td class="num">{escape(v)}</td>' if is_num else f"<td>{escape(v)}</td>"
            for v, is_num in zip(row, numeric, strict=True)
        )
        attributes = ""
        if designs is not None:
            attributes = f' class="pick" data-design="{escape(designs[index])}"'
        body.append(f"<tr{attributes}>{cells}</tr>")
    return (
        f'<div class="scroll"><table class="{css}"><thead><tr>{head}</tr></thead>'
        f"<tbody>{''.join(body)}</tbody></table></div>"
    )


def _card(title: str, inner: str, note: str = "", spaced: bool = False) -> str:
    """A panel with an escaped heading; ``inner`` is trusted page markup."""
    style_attr = ' style="margin-top:14px"' if spaced else ""
    note_html = f'<p class="note">{escape(note)}</p>' if note else ""
    return f'<div class="card"{style_attr}><h3>{escape(title)}</h3>{inner}{note_html}</div>'


def _section(number: int, anchor: str, title: str, lede: str, body: str) -> str:
    return (
        f'<section class="part" id="{anchor}"><h2><span class="num">{number:02d}</span>'
        f'{escape(title)}</h2><p class="lede">{escape(lede)}</p>{body}</section>'
    )


def _masthead(run: data.RunData) -> str:
    title = run.meta.get("study_title") or run.meta.get("study_name", "")
    facts = "".join(
        f"<div><dt>{escape(label)}</dt><dd>{escape(value)}</dd></div>"
        for label, value in data.header_facts(run)
    )
    return (
        '<header class="masthead"><div class="wrap">'
        f'<div class="kicker">optimag · inductor search record · {escape(run.meta["study_name"])}'
        "</div>"
        f"<h1>{escape(title)}</h1>"
        f'<dl class="facts">{facts}</dl>'
        "</div></header>"
    )


def _tally(run: data.RunData) -> str:
    counts = run.meta["counts"]
    items = [
        (counts.get("total", 0), "candidates evaluated"),
        (counts.get("feasible", 0), "met every limit"),
        (counts.get("pareto", 0), "on the trade-off front"),
        (len(run.shortlist), "short-listed"),
    ]
    cells = "".join(
        f'<div class="count"><b>{int(n):,}</b><span>{escape(label)}</span></div>'
        for n, label in items
    )
    nav = "".join(
        f'<a href="#{anchor}">{escape(label)}</a>'
        for anchor, label in (
            ("tradeoff", "Trade-off map"),
            ("shortlist", "Short-list"),
            ("build", "Build sheets"),
            ("ruled-out", "Ruled out"),
            ("asked", "What was asked"),
            ("before-you-build", "Before you build"),
        )
    )
    warning = ""
    if run.meta.get("interrupted"):
        warning = (
            '<div class="alert"><b>This search was stopped early.</b> Everything below covers '
            "only the candidates evaluated before the stop.</div>"
        )
    return f'{warning}<div class="tally">{cells}</div><nav class="toc">{nav}</nav>'


def _tradeoff(run: data.RunData, front: Any, slots: _FigureSlots) -> str:
    if front.empty:
        misses = data.near_miss_table(run)
        body = (
            '<div class="alert"><b>No design met every limit.</b> The candidates that came '
            "closest, one per core, are listed with the limit they broke worst (each limit's "
            "excess relative to the limit itself, so different limits compare); relax that "
            "limit or widen the catalogue. What each limit rules out on its own is under "
            '<a href="#ruled-out">What was ruled out</a>.</div>'
        )
        if not misses.empty:
            body += _table(
                ["Design", "Core", "Material", "Turns", "Wire", "Worst limit", "Beyond it by"],
                (
                    [
                        r.design_id,
                        r.core,
                        r.material,
                        r.turns,
                        r.wire,
                        r.worst_constraint,
                        f"{float(r.worst_violation):+.1%}",
                    ]
                    for r in misses.itertuples(index=False)
                ),
                [False, False, False, True, False, False, True],
            )
        return _section(
            1, "tradeoff", "Trade-off map", "Nothing reached the front in this run.", body
        )
    hand = data.hand_sizing_table(run)
    hand_on_map = hand[hand["feasible"].astype(bool)] if len(hand) else None
    references = data.reference_table(run)
    cards = [
        _card(
            f"{view.y_title} against {view.x_title}",
            slots.render(
                figures.tradeoff_pair_figure(
                    front, view, run.currency, hand_on_map, references
                ),
                "pair",
            ),
            f"{len(view.front_ids)} of {len(front)} front designs stay unbeaten in this pair "
            "of objectives (dotted staircase).",
        )
        for view in data.pair_views(run, front)
    ]
    if len(run.objectives) >= 3:
        names = ", ".join(run.objectives[:3])
        cards.append(
            _card(
                f"The whole front in three objectives ({names})",
                slots.render(
                    figures.tradeoff_3d_figure(
                        front, run.objectives, run.currency, references
                    ),
                    "front-3d",
                ),
                "Drag to turn the view; hover a point for its figures.",
            )
        )
    body = (
        f'<div class="grid">{"".join(cards)}</div>' + _whatif_card(run) + _hand_sizing(run, hand)
        + _custom_comparison(run) + _robust(run, front, slots)
    )
    lede = (
        f"Each point is a design no other design beats on every objective at once "
        f"({', '.join(run.objectives)}). Colour shows the core material, marker shape the "
        "core family; the ringed point is the knee, the most balanced compromise."
    )
    if not references.empty:
        lede += (
            " Red stars are the study's reference designs, evaluated with the same model "
            "(filled: meets every constraint; open: misses one)."
        )
    return _section(1, "tradeoff", "Trade-off map", lede, body)


def _number(value: Any, fmt: str) -> str:
    return "—" if value is None or pd.isna(value) else format(float(value), fmt)


def _whatif_card(run: data.RunData) -> str:
    """Sliders for the limits and objective ranges; the page recomputes the front."""
    if run.near_front is None or not (run.near_front.get("columns") or {}).get("core"):
        return ""
    near = run.near_front
    layers = near.get("layers")
    held = (f"the first {int(layers)} non-dominated layers ({int(near['count']):,} designs)"
            if layers is not None else f"every feasible design ({int(near['count']):,})")
    note = (
        f"The page holds {held} of this run; moving a slider keeps the designs within the "
        "limits and objective ranges and recomputes their front here. Teal: the front "
        "under these limits; sand: designs within them; grey: designs they rule out."
    )
    return (
        '<div class="card" id="whatif" style="margin-top:14px"><h3>What if the limits were '
        'different?</h3><div id="whatif-sliders" class="controls"></div>'
        '<div id="whatif-status" class="note"></div><div id="whatif-warning"></div>'
        '<div id="whatif-plot" style="height:440px"></div>'
        f'<p class="note">{escape(note)}</p></div>'
    )


def _hand_sizing(run: data.RunData, table: pd.DataFrame) -> str:
    """The classic area-product procedure on this study, beside the front."""
    meta = run.meta.get("hand_sizing") or {}
    if table.empty:
        if not meta.get("note"):
            return ""
        return _card("The hand procedure on this study (area product)",
                     f"<p>{escape(meta['note'])}.</p>", spaced=True)
    cost = records.header("cost", run.currency)
    inner = _table(
        ["Design", "Material", records.header("area_product_required_cm4"),
         "Smallest core meeting Ap", "Core used", records.header("area_product_cm4"),
         "Turns", records.header("gap_mm"), "Wire", records.header("volume_cm3"),
         records.header("weighted_loss_W"), cost, "Against the front"],
        (
            [r.design_id, r.material,
             records.display("area_product_required_cm4", r.area_product_required_cm4),
             r.first_core, f"{r.core}" + (f" ×{int(r.stack)}" if int(r.stack) > 1 else ""),
             records.display("area_product_cm4", r.area_product_cm4), int(r.turns),
             records.display("gap_mm", r.gap_mm), f"{r.wire} ×{int(r.parallel)}",
             records.display("volume_cm3", r.volume_cm3),
             records.display("weighted_loss_W", r.weighted_loss_W),
             records.display("cost", r.cost), r.standing]
            for r in table.itertuples(index=False)
        ),
        [False, False, True, False, False, True, True, True, False, True, True, True, False],
    )
    note = (
        f"Method: {meta.get('method', '')}; J = {meta.get('current_density_A_per_mm2', '')} "
        f"A/mm², Ku = {meta.get('window_utilisation', '')} (the study's fill limit). Each "
        "hand design is evaluated with the same model as the search; those that meet every "
        "limit are drawn as crosses on the maps above."
    )
    skipped = meta.get("no_core_large_enough") or []
    if skipped:
        note += f" No catalogue core meets Ap for: {', '.join(map(str, skipped))}."
    return _card("The hand procedure on this study (area product)", inner, note, spaced=True)


def _custom_comparison(run: data.RunData) -> str:
    table = data.custom_comparison_table(run)
    if table.empty:
        return ""
    median = (run.meta.get("custom_vs_catalogue") or {}).get("median_volume_ratio")
    note = (
        "Volume ratio = catalogue volume / custom volume at the same or lower loss; "
        + (f"median {float(median):.2f}." if median is not None else "no ratio available.")
    )
    inner = _table(
        ["Catalogue core", records.header("weighted_loss_W"), "Catalogue volume [cm³]",
         "Custom core", "Custom volume [cm³]", "Volume ratio"],
        (
            [r.catalogue_core, _number(r.weighted_loss_W, ".3f"),
             _number(r.catalogue_volume_cm3, ".2f"), r.custom_core or "—",
             _number(r.custom_volume_cm3, ".2f"), _number(r.volume_ratio, ".2f")]
            for r in table.itertuples(index=False)
        ),
        [False, True, True, False, True, True],
    )
    return _card("What a custom core would save", inner, note, spaced=True)


def _shortlist(run: data.RunData, slots: _FigureSlots) -> str:
    if not run.shortlist:
        return _section(2, "shortlist", "Short-list side by side", "No designs short-listed.", "")
    table = data.shortlist_table(run)
    figure = slots.render(figures.shortlist_parallel_figure(table, run.currency), "parallel")
    rows = (
        [
            r.rank,
            f"{r.design_id}{' (knee)' if r.knee else ''}",
            r.core,
            r.material,
            r.turns,
            f"{r.gap_mm:.2f}",
            f"{r.wire} ×{r.parallel}",
            f"{r.weighted_loss_W:.3g}",
            f"{r.hotspot_temperature_C:.0f}",
            f"{r.volume_cm3:.2f}",
            f"{r.cost:.2f}",
            _yield_text(getattr(r, "yield_fraction", None)),
        ]
        for r in table.itertuples(index=False)
    )
    cost_header = f"Cost [{run.currency}]" if run.currency else "Cost"
    listing = _table(
        [
            "#",
            "Design",
            "Core",
            "Material",
            "Turns",
            "Gap [mm]",
            "Wire",
            records.header("weighted_loss_W"),
            "Hot spot [°C]",
            "Volume [cm³]",
            cost_header,
            records.header("yield_fraction"),
        ],
        rows,
        [True, False, False, False, True, True, False, True, True, True, True, True],
        designs=[str(v) for v in table["design_id"]],
    )
    body = _card("Parallel axes", figure) + _card(
        "Ranked list", listing, "Click a row, or a line on the parallel axes, to open that "
        "design's build sheet.", spaced=True) + _compare_card() + _lifetime_card(run)
    lede = (
        "The short-listed designs on shared axes: follow a line to see what each design "
        "trades. The knee design is drawn in ochre; drag along an axis to filter."
    )
    return _section(2, "shortlist", "Short-list side by side", lede, body)


def _compare_card() -> str:
    """Controls of the side-by-side comparison; the page's script fills it."""
    controls = (
        '<div class="controls"><label>Design <select id="compare-pick"></select></label>'
        '<button type="button" id="compare-add">Add</button>'
        '<button type="button" id="compare-clear">Clear</button>'
        '<button type="button" id="compare-csv">Export CSV</button></div>'
        '<div id="compare-chips"></div><div id="compare-table"></div>'
        '<div id="compare-charts" class="grid"></div>'
    )
    return (
        f'<div class="card" id="compare" style="margin-top:14px"><h3>Compare two to four '
        f"designs</h3>{controls}"
        '<p class="note">Any front or reference design: add it here or with Compare on its '
        "build sheet. Cells that differ are tinted, the best of a figure that has a better "
        "direction is bold; one loss chart per operating point. The CSV holds the table "
        "as shown, cells that a spreadsheet could read as a formula prefixed with '.</p>"
        "</div>"
    )


def _lifetime_card(run: data.RunData) -> str:
    """Energy price slider and hours: the front ranked by part cost + energy cost."""
    energy = run.meta.get("energy") or {}
    price = energy.get("energy_price_per_kWh")
    hours = energy.get("operating_hours")
    top = max(1.0, 3.0 * float(price or 0.0))
    start_price = float(price if price is not None else 0.25)
    start_hours = float(hours if hours is not None else 20000)
    assumed = []
    if price is None:
        assumed.append("the study sets no [cost] energy_price_per_kWh: the slider starts at 0.25")
    if hours is None:
        assumed.append("it sets no operating_hours: 20,000 h assumed until you type the "
                       "product's own")
    currency = run.currency or "currency"
    controls = (
        f'<div class="controls"><label>Energy price <input type="range" id="energy-price" '
        f'min="0" max="{top:g}" step="0.005" value="{start_price:g}">'
        '</label><output id="energy-price-shown"></output>'
        '<label>Hours in service <input type="number" id="operating-hours" min="0" '
        f'max="1000000" step="100" value="{start_hours:g}">'
        "</label></div>"
        '<div id="lifetime-table"></div>'
    )
    note = (
        "Lifetime cost = part cost + weighted loss × hours × price / 1000, in "
        f"{escape(currency)}. The cheapest front design over the product's life is marked; "
        "click a row for its build sheet."
    )
    if assumed:
        note += " Note: " + escape("; ".join(assumed)) + "."
    return (
        '<div class="card" id="lifetime" style="margin-top:14px"><h3>Cost over the '
        f"product's life</h3>{controls}<p class=\"note\">{note}</p></div>"
    )


def _field_check_panel(check: dict[str, Any], slots: _FigureSlots) -> str:
    rows = data.field_check_lines(check)
    table = _table(["Field check", "Value"], rows, css="data kv")
    figure = slots.render(figures.field_check_figure(check), "field-check")
    return _card(
        "Field check (finite elements)",
        f'<div class="grid">{table}{figure}</div>',
        "From `optimag verify`: the core, gap and winding window solved as a "
        f"{check['section']} section with the winding current; white lines are flux "
        "lines, colour is |B|, the dotted box the winding. The 1-D field is the one the AC "
        "loss assumes; the gap-loss model's field adds the gap's fringing.",
    )


def _build_sheet(record: dict[str, Any], currency: str, slots: _FigureSlots,
                 check: dict[str, Any] | None = None) -> str:
    sheet_rows = data.build_sheet_table(record, currency)
    table = _table(["Item", "Value"], sheet_rows.itertuples(index=False, name=None), css="data kv")
    parts = _card("Parts and winding", table)
    panels: list[str] = []
    try:
        shapes = data.winding_drawing_shapes(record)
        drawing = slots.render(figures.winding_figure(shapes, record), "winding")
        panels.append(
            _card(
                "Winding window, to scale",
                drawing,
                f"Window laid on its side: grey core, sand bobbin, copper "
                f"{record['winding']['kind']} conductors; layer 1 lies at the bottom, "
                f"against the {'centre leg' if record['family'] in ('E', 'pot') else 'core'}.",
            )
        )
    except ValueError as err:
        panels.append(
            _card("Winding window", f'<p class="alert">Drawing unavailable: {escape(err)}</p>')
        )
    try:
        losses = slots.render(figures.loss_figure(data.loss_breakdown(record)), "loss")
        panels.append(_card("Where the watts go", losses))
    except ValueError as err:
        panels.append(
            _card("Where the watts go", f'<p class="alert">Unavailable: {escape(err)}</p>')
        )
    panels.append(
        _card(
            "Inductance under load",
            slots.render(figures.inductance_figure(record), "inductance"),
            "Dashed: peak current; dotted: lowest inductance the limits allow at that current.",
        )
    )
    margins = data.margin_table(record)
    panels.append(
        _card(
            "Headroom to each limit",
            slots.render(figures.margin_figure(margins), "margins"),
            "Bars as a share of their limit; the dashed line is the limit itself. "
            "Inductance kept at peak must reach past it, the others stay short of it.",
        )
    )
    # The parts table is the tallest panel: the drawing and the headroom bars share
    # the column beside it, the two curves go underneath.
    drawing, losses_panel, inductance_panel, headroom = panels
    layout = (
        f'<div class="grid">{parts}<div class="stack">{drawing}{headroom}</div>'
        f"{losses_panel}{inductance_panel}{_production_scatter(record, slots)}</div>"
    )
    if record.get("line_cycle"):
        layout += _card(
            "Over the line cycle",
            slots.render(figures.line_cycle_figure(record), "line-cycle"),
            "The current's switching-period average and its ripple envelope (peak and "
            "valley) along the repeating part of the line cycle, and the core and winding "
            "loss each instant contributes (their mean is the point's loss).",
        )
    if check is not None:
        layout += _field_check_panel(check, slots)
    notes = record.get("model_notes") or []
    if notes:
        items = "".join(f"<li>{escape(note)}</li>" for note in notes)
        layout += (
            '<div class="alert"><b>Where these figures lean on a model outside its range:'
            f"</b><ul>{items}</ul></div>"
        )

    knee = bool(record.get("knee"))
    compare = (f'<button type="button" class="compare-add" '
               f'data-design="{escape(record["design_id"])}">Compare</button>')
    if record.get("rank") is not None:
        badges = f'<span class="badge">rank {int(record["rank"])}</span>'
    elif "violated" in record:
        badges = '<span class="badge">reference design</span>'
        if record.get("violated"):
            badges += (f'<span class="badge warn">misses '
                       f"{escape(', '.join(map(str, record['violated'])))}</span>")
    else:
        badges = '<span class="badge">front design</span>'
    if knee:
        badges += '<span class="badge knee">knee</span>'
    if bool(record.get("dcm")):
        badges += '<span class="badge">enters DCM</span>'
    if not margins["within"].all():
        badges += '<span class="badge warn">limit exceeded</span>'
    # Header figures are those of the named operating point; the weighted loss (the
    # objective, over all points) is named as such.
    summary = (
        f"{float(record['inductance_uH']):.1f} µH · at {record['operating_point']}: "
        f"{records.display('total_loss_W', record['total_loss_W'])} W, "
        f"{float(record.get('hotspot_temperature_C', record['temperature_C'])):.0f} °C hot "
        "spot · weighted loss "
        f"{records.display('weighted_loss_W', record['weighted_loss_W'])} W"
    )
    return (
        f'<article class="sheet{" knee" if knee else ""}" '
        f'id="design-{escape(record["design_id"])}" '
        f'data-design="{escape(record["design_id"])}">'
        f"<header><h3>{escape(record['design_id'])} — {escape(record['core'])}, "
        f"{escape(record['material'])}</h3>{badges}{compare}"
        f'<span class="note">{escape(summary)}</span></header>'
        f"{layout}</article>"
    )


def _yield_text(value: Any) -> str:
    return "—" if value is None or pd.isna(value) else f"{float(value):.1%}"


def _production_scatter(record: dict[str, Any], slots: _FigureSlots) -> str:
    """Build-sheet panels: the distribution of inductance at peak and temperature over
    Monte Carlo builds against their limits, yield per limit and the spreads that cost
    the most yield."""
    part = record.get("tolerance")
    if not part:
        return ""
    plots = []
    for figure in yields.HISTOGRAM_FIGURES:
        frame = yields.histogram_frame(record, figure)
        if frame.empty:
            continue
        limit = part["histograms"][figure].get("limit")
        plots.append(slots.render(yields.histogram_figure(frame, figure, limit), "yield"))
    ranking = yields.spread_ranking(record)
    by_limit = yields.constraint_yields(record)
    tables = _table(
        ["Limit", "Builds meeting it"],
        ([r.constraint, f"{r.meeting:.1%}"] for r in by_limit.itertuples(index=False)),
        [False, True],
    ) + _table(
        ["Spread (acting alone)", "Yield lost"],
        ([r.words, f"{r.yield_lost:.1%}"] for r in ranking.itertuples(index=False)),
        [False, True],
    )
    note = (
        f"{int(part['samples'])} simulated builds (seed {int(part['seed'])}) with the study's "
        f"[tolerance] spreads: {float(part['yield_fraction']):.1%} meet every limit. Dashed: "
        "the limit; brick bins fall beyond it."
    )
    return _card("Production scatter", "".join(plots) + tables, note)


def _robust(run: data.RunData, front: Any, slots: _FigureSlots) -> str:
    comparison = yields.robust_comparison(run, front)
    if comparison.empty:
        return ""
    x_title, y_title = yields.robust_titles(run)
    counts = comparison["front"].value_counts()
    note = (
        f"{int(counts.get('robust', 0))} designs meet every limit at every tolerance corner "
        f"(teal); the front of the nominally feasible designs has "
        f"{int(counts.get('nominal', 0))} (sand)."
    )
    return _card("Robust front against the nominal front",
                 slots.render(yields.robust_figure(comparison, x_title, y_title), "robust"),
                 note, spaced=True)


def _sheet_templates(run: data.RunData, slots: _FigureSlots) -> str:
    """Build sheets of the front designs not short-listed and of the reference designs,
    as inert templates: the page copies one in (and draws its figures) when the design is
    opened from a plot or a list."""
    shown = {str(r["design_id"]) for r in run.shortlist}
    checks = run.field_checks
    extra = [r for r in run.front_records if str(r["design_id"]) not in shown]
    extra += [r for r in run.reference_designs if str(r.get("design_id")) not in shown]
    templates = []
    for record in extra:
        design = str(record["design_id"])
        sheet = _build_sheet(record, run.currency, slots, checks.get(design))
        templates.append(
            f'<template class="sheet-template" data-design="{escape(design)}">{sheet}</template>'
        )
    return "".join(templates)


def _build_sheets(run: data.RunData, slots: _FigureSlots) -> str:
    records = sorted(run.shortlist, key=lambda r: int(r["rank"]))
    checks = run.field_checks
    body = "".join(
        _build_sheet(r, run.currency, slots, checks.get(str(r["design_id"]))) for r in records
    )
    lede = (
        "Everything needed to wind each short-listed design: parts, the window to scale, "
        "where the loss arises at each operating point, how inductance falls with current, "
        "and how close each limit is. Every other front design (and each reference design) "
        "opens here with a click on its point in any trade-off plot."
    )
    opened = '<div id="opened-sheets"></div>'
    return _section(3, "build", "Build sheets", lede,
                    opened + (body or "<p>No designs short-listed.</p>")
                    + _sheet_templates(run, slots))


def _ruled_out(run: data.RunData) -> str:
    table = data.elimination_table(run)
    alone = bool((table["alone"] >= 0).any()) if not table.empty else False
    rows = []
    for r in table.itertuples(index=False):
        bar = f'<span class="bar" style="width:{100 * r.share:.1f}%"></span>'
        only = f'<td class="num">{r.alone:,}</td>' if alone and r.alone >= 0 else (
            "<td></td>" if alone else "")
        rows.append(
            "<tr>"
            f"<td><code>{escape(r.constraint)}</code></td><td>{escape(r.meaning)}</td>"
            f'<td class="num">{r.removed:,}</td>'
            f'<td class="num share">{100 * r.share:.1f} %{bar}</td>{only}'
            "</tr>"
        )
    only_head = "<th>Fail it alone</th>" if alone else ""
    body = (
        '<div class="card"><div class="scroll"><table class="data"><thead><tr>'
        f"<th>Limit</th><th>Meaning</th><th>Removed</th><th>Share of all</th>{only_head}"
        f"</tr></thead><tbody>{''.join(rows)}</tbody></table></div></div>"
    )
    if table.empty:
        body = "<p>The run recorded no eliminations.</p>"
    lede = "How many candidates each limit removed, as a share of all candidates evaluated."
    if alone:
        diagnosis = run.meta.get("diagnosis") or {}
        lede += (
            " Removed counts each candidate under the first limit it fails, in check order. "
            "Fail it alone counts the candidates that break that limit and no other: relaxing "
            f"only that limit would admit them (over {diagnosis.get('scope', 'the run')})."
        )
    return _section(4, "ruled-out", "What was ruled out", lede, body)


def _asked(run: data.RunData) -> str:
    points = data.operating_points_table(run)
    given = list(points.columns[1:-1])
    point_table = _table(
        ["Operating point", *(data.POINT_COLUMNS[c] for c in given), "Time share"],
        (
            [row["name"], *("" if pd.isna(row[c]) else row[c] for c in given),
             f"{100 * float(row['time_share']):.0f} %"]
            for _, row in points.iterrows()
        ),
        [False, *(c != "current_waveform" for c in given), True],
    )
    limits = data.limits_table(run)
    limit_table = _table(
        ["Limit", "Unit", "Value"], limits.itertuples(index=False, name=None), [False, False, True]
    )
    target = run.meta.get("required_inductance_uH")
    if target is not None:
        limit_table = (
            f'<p class="note">Inductance the converter needs: {float(target):.4g} µH.</p>'
            + limit_table
        )
    model = run.meta.get("model") or {}
    model_table = _table(["Model", "Choice"], ([k.replace("_", " "), v] for k, v in model.items()))
    study = ""
    if run.study_text:
        study = (
            '<details class="study"><summary>Study file as run</summary>'
            f"<pre>{escape(run.study_text)}</pre></details>"
        )
    catalogue = run.meta.get("catalog_folder", "")
    body = (
        '<div class="grid">'
        f'<div class="card"><h3>Operating points</h3>{point_table}</div>'
        f'<div class="card"><h3>Limits</h3>{limit_table}</div>'
        f'<div class="card"><h3>Models</h3>{model_table}'
        f'<p class="note">Catalogue {escape(catalogue)} · hash '
        f"{escape(run.meta.get('catalog_hash', ''))}</p></div>"
        f"</div>{study}"
    )
    return _section(5, "asked", "What was asked", "The inputs this run answered.", body)


def _cautions() -> str:
    items = "".join(f"<li>{escape(text)}</li>" for text in CAUTIONS)
    return _section(
        6,
        "before-you-build",
        "Before you build",
        "Read this before turning any design here into hardware.",
        f'<div class="caution"><ul>{items}</ul></div>',
    )


def _summary_json(run: data.RunData, front: Any) -> dict[str, Any]:
    return {
        "tool": run.meta.get("tool", "optimag"),
        "version": run.meta.get("version"),
        "study_name": run.meta.get("study_name"),
        "study_title": run.meta.get("study_title"),
        "objectives": run.objectives,
        "counts": run.meta.get("counts"),
        "front": list(front["design_id"]) if len(front) else [],
        "shortlist": [r["design_id"] for r in sorted(run.shortlist, key=lambda r: int(r["rank"]))],
    }


_EXTRA_CSS = """
td.share { position: relative; min-width: 120px; }
td.share .bar { position: absolute; left: 0; bottom: 2px; height: 3px;
  background: var(--ochre); border-radius: 2px; }
code { font-family: inherit; color: var(--teal); }
.stack { display: flex; flex-direction: column; gap: 14px; min-width: 0; }
tr.pick { cursor: pointer; }
.controls { display: flex; flex-wrap: wrap; gap: 10px 18px; align-items: center;
  margin: 6px 0 10px; }
.controls input[type=range] { width: 220px; vertical-align: middle; }
.controls input[type=number] { width: 110px; }
button.chip, button.compare-add { font: inherit; font-size: 12px; margin: 0 6px 6px 0;
  padding: 2px 10px; border: 1px solid var(--sand); border-radius: 12px;
  background: var(--panel); cursor: pointer; }
table.compare td.differs { background: rgba(201, 146, 43, 0.10); }
table.compare td.best { font-weight: 700; }
tr.cheapest td { font-weight: 700; }
tr.pick:hover td { background: rgba(201, 146, 43, 0.12); }
article.sheet.opened { outline: 2px solid var(--ochre); outline-offset: 4px; }
"""


def _designs_block(run: data.RunData, front: Any) -> str:
    """Compact rows of every front and reference design and the near-front designs of
    the what-if limits, for choosing in the page."""
    if front.empty:
        return ""
    block = ('<script type="application/json" id="optimag-designs">'
             f"{json_for_script(choose.design_rows(run))}</script>")
    whatif = choose.whatif_data(run)
    if whatif is not None:
        block += ('<script type="application/json" id="optimag-whatif">'
                  f"{json_for_script(whatif)}</script>")
    return block


def render_report(run: data.RunData) -> str:
    """The whole page as a string."""
    front = data.pareto_table(run)
    slots = _FigureSlots()
    title = run.meta.get("study_title") or run.meta.get("study_name", "")
    parts = [
        _masthead(run),
        '<main class="wrap">',
        _tally(run),
        _tradeoff(run, front, slots),
        _shortlist(run, slots),
        _build_sheets(run, slots),
        _ruled_out(run),
        _asked(run),
        _cautions(),
        '<footer class="colophon">Written by optimag '
        f"{escape(run.meta.get('version', ''))} from run folder "
        f"{escape(run.folder.name)}. Figures are model estimates.</footer>",
        "</main>",
        '<script type="application/json" id="optimag-run-summary">'
        f"{json_for_script(_summary_json(run, front))}</script>",
        _designs_block(run, front),
        slots.scripts(),
    ]
    return (
        '<!DOCTYPE html><html lang="en"><head><meta charset="utf-8">'
        '<meta name="viewport" content="width=device-width, initial-scale=1">'
        f"<title>{escape(title)} · optimag run report</title>"
        f"<style>{style.PAGE_CSS}{_EXTRA_CSS}</style></head><body>"
        + "".join(parts)
        + "</body></html>"
    )


def build_report(run_dir: Path, *, shown_as: Path | None = None) -> Path:
    """Write ``report.html`` into the run folder (atomically) and return its path.

    ``shown_as`` is the folder the report belongs to when ``run_dir`` is where its files
    are being prepared (the name and time stamp shown come from it).
    """
    run = data.load_run(run_dir)
    if shown_as is not None:
        run = dataclasses.replace(run, folder=Path(shown_as),
                                  started=data.folder_time(Path(shown_as)) or run.started)
    target = Path(run_dir) / REPORT_NAME
    files.atomic_write_text(target, render_report(run))
    return target
