"""Visual identity of the run report: palette, type, page CSS and the plotly template.

One place for every colour and font so that the page and the figures agree. Fonts
come from system stacks only: the report must open offline and fetch nothing.
"""

from __future__ import annotations

from typing import Any

# Warm paper, deep teal ink, ochre accent, slate for structure.
PAPER = "#f6f1e7"
PANEL = "#fffdf8"
PLOT_FIELD = "#fbf7ee"
SAND = "#e7dcc6"
GRID = "#e9e0ce"
INK = "#1f2d38"
MUTED = "#5b6873"
TEAL = "#0e5660"
TEAL_LIGHT = "#5f9ea0"
OCHRE = "#c98a1b"
SLATE = "#4a5d70"
BRICK = "#a8432f"
SAGE = "#6f9468"
PLUM = "#6d4a6b"
COPPER = "#b8733a"
COPPER_DARK = "#7d4a22"
BOBBIN = "#d8ccb2"
CORE_FERRITE = "#8d949a"

#: Categorical colours for materials, in order of first appearance.
MATERIAL_COLOURS: tuple[str, ...] = (
    TEAL,
    OCHRE,
    "#3f6e9a",
    BRICK,
    SAGE,
    PLUM,
    "#8c6d46",
    "#2f8f83",
    "#b05f7a",
    "#6b6f2a",
)

#: Marker symbols per core family; anything else falls back to the last entry.
FAMILY_SYMBOLS: dict[str, str] = {
    "E": "square",
    "pot": "circle",
    "toroid": "diamond",
    "other": "triangle-up",
}

#: Colours of the three loss components, core first.
LOSS_COLOURS: dict[str, str] = {
    "Core": SLATE,
    "Winding DC": TEAL,
    "Winding AC": OCHRE,
    "Winding gap": BRICK,
}

SANS_STACK = (
    'system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", "Liberation Sans", '
    "Ubuntu, Cantarell, Arial, sans-serif"
)
SERIF_STACK = (
    '"Iowan Old Style", "Palatino Linotype", Palatino, "Book Antiqua", '
    '"URW Palladio L", "DejaVu Serif", Georgia, serif'
)
MONO_STACK = (
    'ui-monospace, "SF Mono", "Cascadia Mono", "DejaVu Sans Mono", '
    '"Liberation Mono", Menlo, Consolas, monospace'
)


def material_colour_map(materials: list[str]) -> dict[str, str]:
    """Stable colour per material: the palette cycles in first-seen order."""
    unique = list(dict.fromkeys(materials))
    return {name: MATERIAL_COLOURS[i % len(MATERIAL_COLOURS)] for i, name in enumerate(unique)}


def family_symbol(family: str) -> str:
    """Marker symbol for a core family."""
    return FAMILY_SYMBOLS.get(family, FAMILY_SYMBOLS["other"])


def plotly_layout_defaults() -> dict[str, Any]:
    """Layout keys shared by every figure.

    A dict rather than a registered template: each figure carries only these few keys
    (plotly.js draws a figure without a template from its own plain defaults).
    """
    axis = {
        "gridcolor": GRID,
        "zerolinecolor": SAND,
        "linecolor": SAND,
        "tickfont": {"color": MUTED, "size": 11},
        "title": {"font": {"color": INK, "size": 12}},
        "automargin": True,
    }
    return {
        "font": {"family": SANS_STACK, "color": INK, "size": 12},
        "paper_bgcolor": PANEL,
        "plot_bgcolor": PLOT_FIELD,
        "colorway": list(MATERIAL_COLOURS),
        "margin": {"l": 56, "r": 18, "t": 28, "b": 48},
        "xaxis": dict(axis),
        "yaxis": dict(axis),
        "legend": {
            "bgcolor": "rgba(255,253,248,0.85)",
            "bordercolor": SAND,
            "borderwidth": 1,
            "font": {"size": 11},
        },
        "hoverlabel": {
            "bgcolor": PANEL,
            "bordercolor": TEAL,
            "font": {"family": SANS_STACK, "color": INK, "size": 12},
        },
    }


#: Plotly's per-figure configuration: no vendor logo, no cloud button.
PLOTLY_CONFIG: dict[str, Any] = {
    "displaylogo": False,
    "responsive": True,
    "showSendToCloud": False,
    "modeBarButtonsToRemove": ["lasso2d", "select2d"],
}


PAGE_CSS = f"""
:root {{
  --paper: {PAPER}; --panel: {PANEL}; --sand: {SAND}; --ink: {INK}; --muted: {MUTED};
  --teal: {TEAL}; --ochre: {OCHRE}; --slate: {SLATE}; --brick: {BRICK}; --sage: {SAGE};
}}
* {{ box-sizing: border-box; }}
html {{ background: var(--paper); }}
body {{
  margin: 0; color: var(--ink); background: var(--paper);
  font-family: {SANS_STACK}; font-size: 15px; line-height: 1.5;
}}
.masthead {{
  background: var(--teal); color: #f7f1e3; padding: 28px 0 22px;
  border-bottom: 6px solid var(--ochre);
}}
.wrap {{ max-width: 1260px; margin: 0 auto; padding: 0 28px; }}
.masthead .kicker {{
  font-family: {MONO_STACK}; font-size: 12px; letter-spacing: .14em;
  text-transform: uppercase; color: #e9c77f;
}}
.masthead h1 {{
  font-family: {SERIF_STACK}; font-weight: 600; font-size: 34px; line-height: 1.15;
  margin: 6px 0 14px; overflow-wrap: anywhere;
}}
.facts {{ display: flex; flex-wrap: wrap; gap: 8px 28px; margin: 0; padding: 0; }}
.facts div {{ min-width: 120px; }}
.facts dt {{
  font-size: 11px; text-transform: uppercase; letter-spacing: .1em; color: #b9d3d3;
}}
.facts dd {{ margin: 0; font-family: {MONO_STACK}; font-size: 15px; overflow-wrap: anywhere; }}
.tally {{ display: flex; flex-wrap: wrap; gap: 14px; margin: 22px 0 6px; }}
.tally .count {{
  background: var(--panel); border: 1px solid var(--sand); border-radius: 6px;
  padding: 10px 16px; min-width: 150px;
}}
.tally .count b {{
  display: block; font-family: {SERIF_STACK}; font-size: 26px; color: var(--teal);
  font-variant-numeric: tabular-nums;
}}
.tally .count span {{ font-size: 12px; color: var(--muted); }}
nav.toc {{ margin: 14px 0 0; font-size: 13px; }}
nav.toc a {{ color: var(--teal); margin-right: 16px; text-decoration: none;
  border-bottom: 1px dotted var(--ochre); }}
section.part {{ margin: 34px 0 10px; }}
section.part > h2 {{
  font-family: {SERIF_STACK}; font-weight: 600; font-size: 25px; color: var(--teal);
  margin: 0 0 4px; display: flex; align-items: baseline; gap: 12px;
}}
section.part > h2 .num {{
  font-family: {MONO_STACK}; font-size: 13px; color: var(--ochre); letter-spacing: .08em;
}}
section.part > p.lede {{ color: var(--muted); margin: 0 0 14px; max-width: 860px; }}
/* Fixed column count: plotly sizes each figure once, as its card first appears, so
   the grid must not reflow when later cards arrive. */
.grid {{ display: grid; gap: 14px; grid-template-columns: repeat(2, minmax(0, 1fr)); }}
@media (max-width: 900px) {{ .grid {{ grid-template-columns: minmax(0, 1fr); }} }}
.card {{
  background: var(--panel); border: 1px solid var(--sand); border-radius: 6px;
  padding: 10px 12px; min-width: 0;
}}
.card h3 {{
  font-family: {SERIF_STACK}; font-size: 17px; margin: 2px 0 6px; color: var(--slate);
}}
.card .note {{ font-size: 12px; color: var(--muted); margin: 4px 0 0; }}
.sheet {{
  background: var(--panel); border: 1px solid var(--sand); border-left: 6px solid var(--teal);
  border-radius: 6px; padding: 14px 16px 16px; margin: 0 0 22px;
}}
.sheet.knee {{ border-left-color: var(--ochre); }}
.sheet > header {{ display: flex; flex-wrap: wrap; align-items: baseline; gap: 6px 16px; }}
.sheet > header h3 {{
  font-family: {SERIF_STACK}; font-size: 21px; margin: 0; color: var(--ink);
  overflow-wrap: anywhere;
}}
.badge {{
  font-family: {MONO_STACK}; font-size: 11px; letter-spacing: .08em; text-transform: uppercase;
  padding: 2px 8px; border-radius: 10px; background: var(--sand); color: var(--ink);
}}
.badge.knee {{ background: var(--ochre); color: #fffaf0; }}
.badge.warn {{ background: var(--brick); color: #fffaf0; }}
.sheet .grid {{ margin-top: 10px; }}
table.data {{
  border-collapse: collapse; width: 100%; font-size: 13px;
  font-variant-numeric: tabular-nums;
}}
table.data th {{
  text-align: left; font-weight: 600; color: var(--slate); border-bottom: 2px solid var(--sand);
  padding: 5px 8px; white-space: nowrap;
}}
table.data td {{ padding: 4px 8px; border-bottom: 1px solid #efe7d6; overflow-wrap: anywhere; }}
table.data td.num {{ text-align: right; font-family: {MONO_STACK}; font-size: 12.5px; }}
table.data tr:nth-child(even) td {{ background: #fbf6ea; }}
table.kv th {{ width: 42%; }}
.scroll {{ overflow-x: auto; }}
.caution {{
  background: #fbeee6; border: 1px solid #ecc9b8; border-left: 6px solid var(--brick);
  border-radius: 6px; padding: 12px 18px;
}}
.caution ul {{ margin: 6px 0; padding-left: 20px; }}
.caution li {{ margin: 4px 0; }}
.alert {{
  background: #fbeee6; border-left: 6px solid var(--brick); padding: 10px 14px;
  border-radius: 6px; margin: 10px 0;
}}
details.study {{ margin-top: 12px; }}
details.study pre {{
  background: var(--panel); border: 1px solid var(--sand); border-radius: 6px; padding: 12px;
  font-family: {MONO_STACK}; font-size: 12px; overflow-x: auto; white-space: pre-wrap;
}}
footer.colophon {{
  margin: 40px 0 0; padding: 16px 0 30px; border-top: 1px solid var(--sand);
  color: var(--muted); font-size: 12px;
}}
.fig {{ width: 100%; }}
"""
