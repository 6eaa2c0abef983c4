"""Plotly renderers of the run report.

Each function turns the output of `optimag.report.data` into one figure dict
(`optimag.report.figdict`), built directly rather than as validated graph objects. Every
user-supplied string (design ids, core and material names, operating-point names,
currency) goes through `plot_text` first: plotly draws text as a small HTML dialect,
so unescaped names could inject markup into the page.
"""

from __future__ import annotations

import html
from typing import Any

import numpy as np
import pandas as pd

from optimag import records
from optimag.report import style
from optimag.report.data import OBJECTIVES, PARALLEL_AXES, PairView, objective_title
from optimag.report.figdict import Figure, plain, trace

_HOVER = (
    "<b>%{customdata[0]}</b><br>"
    "core %{customdata[1]} · %{customdata[2]}<br>"
    "%{customdata[3]} turns · gap %{customdata[4]} mm · %{customdata[5]}<br>"
    "weighted loss %{customdata[6]} W · %{customdata[7]} °C<br>"
    "volume %{customdata[8]} cm³ · cost %{customdata[9]}"
    "<extra></extra>"
)

_SYMBOLS_3D = {"square": "square", "circle": "circle", "diamond": "diamond"}


def plot_text(value: Any) -> str:
    """Escape a user string for plotly's text dialect (``<``, ``>``, ``&``)."""
    return html.escape(str(value), quote=False)


def _merged(base: dict[str, Any], extra: dict[str, Any]) -> dict[str, Any]:
    out = dict(base)
    for key, value in extra.items():
        if isinstance(value, dict) and isinstance(out.get(key), dict):
            out[key] = _merged(out[key], value)
        else:
            out[key] = value
    return out


def _styled(traces: list[Any], **layout: Any) -> Figure:
    """A figure dict in the report's style, with plain JSON values only."""
    return plain({"data": traces, "layout": _merged(style.plotly_layout_defaults(), layout)})


def _hover_data(rows: pd.DataFrame, currency: str) -> np.ndarray:
    cost_unit = f" {plot_text(currency)}" if currency else ""
    return (
        np.column_stack(
            [
                rows["design_id"].map(plot_text),
                rows["core"].map(plot_text),
                rows["material"].map(plot_text),
                rows["turns"].map(lambda v: f"{int(v)}"),
                rows["gap_mm"].map(lambda v: f"{float(v):.2f}"),
                rows["wire"].map(plot_text),
                rows["weighted_loss_W"].map(lambda v: f"{float(v):.3g}"),
                rows["temperature_C"].map(lambda v: f"{float(v):.0f}"),
                rows["volume_cm3"].map(lambda v: f"{float(v):.2f}"),
                rows["cost"].map(lambda v: f"{float(v):.2f}{cost_unit}"),
            ]
        )
        if len(rows)
        else np.empty((0, 10), dtype=object)
    )


def _ids(rows: pd.DataFrame) -> list[str]:
    """Design ids as trace ``ids``: the page opens a design's build sheet from a click on
    its point (never drawn as text, so not escaped)."""
    return [str(v) for v in rows["design_id"]]


def _groups(front: pd.DataFrame) -> list[tuple[str, str, pd.DataFrame]]:
    return [
        (str(material), str(family), rows)
        for (material, family), rows in front.groupby(["material", "family"], sort=False)
    ]


def flagged_rows(front: pd.DataFrame) -> pd.DataFrame:
    """Front designs whose figures rest on a model outside its range (`model_flags`)."""
    if "model_flags" not in front:
        return front.iloc[0:0]
    return front[front["model_flags"].fillna("").astype(str) != ""]


def _referencetrace(references: pd.DataFrame | None, columns: list[str], currency: str,
                     three_d: bool = False) -> list[Any]:
    """The study's reference designs as labelled stars (filled: meets every constraint)."""
    if references is None or references.empty:
        return []
    rows = references.dropna(subset=columns)
    if rows.empty:
        return []
    filled = rows["meets_all"].astype(bool).to_numpy()
    marker = {
        "symbol": ["star" if ok else "star-open" for ok in filled] if not three_d
        else "diamond-open",
        "size": 16 if not three_d else 9,
        "color": style.BRICK,
        "line": {"color": style.BRICK, "width": 1.5},
    }
    coords = dict(zip(("x", "y", "z"), (rows[c] for c in columns), strict=False))
    kind = "scatter3d" if three_d else "scatter"
    return [trace(kind,
        **coords,
        mode="markers+text",
        text=rows["design_id"].map(plot_text),
        textposition="top center",
        name="reference design",
        marker=marker,
        customdata=_hover_data(rows, currency),
        ids=_ids(rows),
        hovertemplate=_HOVER,
    )]


def tradeoff_pair_figure(
    front: pd.DataFrame, view: PairView, currency: str, hand: pd.DataFrame | None = None,
    references: pd.DataFrame | None = None,
) -> Figure:
    """Front designs in one objective pair: colour = material, symbol = core family.

    The dotted staircase joins the designs that stay non-dominated in this pair; the
    knee design wears an ochre ring; a design with a raised model flag wears an open
    square. ``hand``: designs of the hand procedure that meet every limit, drawn as
    crosses. ``references``: the study's reference designs, labelled stars (open when they
    miss a constraint).
    """
    colours = style.material_colour_map(list(front["material"]))
    traces: list[Any] = []
    for material, family, rows in _groups(front):
        traces.append(
            trace("scatter",
                x=rows[view.x_column],
                y=rows[view.y_column],
                mode="markers",
                name=f"{plot_text(material)} · {plot_text(family)}",
                legendgroup=plot_text(material),
                marker={
                    "color": colours[material],
                    "symbol": style.family_symbol(family),
                    "size": 11,
                    "line": {"color": style.PANEL, "width": 1},
                },
                customdata=_hover_data(rows, currency),
                ids=_ids(rows),
                hovertemplate=_HOVER,
            )
        )
    if view.front_ids:
        best = front.set_index("design_id").loc[list(view.front_ids)]
        traces.append(
            trace("scatter",
                x=best[view.x_column],
                y=best[view.y_column],
                mode="lines",
                line={"shape": "hv", "dash": "dot", "color": style.SLATE, "width": 1.2},
                name="best in this view",
                hoverinfo="skip",
            )
        )
    traces.extend(_yield_labels(front, view))
    flagged = flagged_rows(front)
    if len(flagged):
        traces.append(
            trace("scatter",
                x=flagged[view.x_column],
                y=flagged[view.y_column],
                mode="markers",
                name="outside a model's range",
                marker={"symbol": "square-open", "size": 20, "color": style.SLATE,
                        "line": {"width": 1.5, "color": style.SLATE}},
                customdata=_hover_data(flagged, currency),
                ids=_ids(flagged),
                hovertemplate=_HOVER,
            )
        )
    knee = front[front["knee"]]
    if len(knee):
        traces.append(
            trace("scatter",
                x=knee[view.x_column],
                y=knee[view.y_column],
                mode="markers",
                name="knee",
                marker={
                    "symbol": "circle-open",
                    "size": 24,
                    "color": style.OCHRE,
                    "line": {"width": 3, "color": style.OCHRE},
                },
                customdata=_hover_data(knee, currency),
                ids=_ids(knee),
                hovertemplate=_HOVER,
            )
        )
    if hand is not None and len(hand):
        traces.append(
            trace("scatter",
                x=hand[view.x_column],
                y=hand[view.y_column],
                mode="markers+text",
                name="hand procedure (area product)",
                text=[plot_text(v) for v in hand["design_id"]],
                textposition="top right",
                marker={"symbol": "x-thin-open", "size": 14, "color": style.INK,
                        "line": {"width": 2, "color": style.INK}},
                customdata=np.column_stack(
                    [hand["design_id"].map(plot_text), hand["core"].map(plot_text),
                     hand["material"].map(plot_text)]
                ),
                hovertemplate=(
                    "<b>%{customdata[0]}</b> by the hand procedure<br>"
                    "core %{customdata[1]} · %{customdata[2]}<extra></extra>"
                ),
            )
        )
    traces += _referencetrace(references, [view.x_column, view.y_column], currency)
    return _styled(
        traces,
        xaxis={"title": {"text": plot_text(view.x_title)}},
        yaxis={"title": {"text": plot_text(view.y_title)}},
        height=440,
        legend={"orientation": "h", "yanchor": "top", "y": -0.2, "x": 0},
        margin={"b": 40},
    )


def _yield_labels(front: pd.DataFrame, view: PairView) -> list[Any]:
    """Designs with a Monte Carlo yield: a ring coloured by it (brick below 90 %, ochre
    below 99 %, sage above) and the yield written beside the point."""
    if "yield_fraction" not in front:
        return []
    rows = front[front["yield_fraction"].notna()]
    if rows.empty:
        return []
    share = rows["yield_fraction"].astype(float)
    colours = np.select([share < 0.9, share < 0.99], [style.BRICK, style.OCHRE], style.SAGE)
    return [trace("scatter",
        x=rows[view.x_column], y=rows[view.y_column], mode="markers+text",
        name="yield (ring: <90 % brick, <99 % ochre)",
        text=[f"{v:.0%}" for v in share], textposition="top right",
        textfont={"size": 10, "color": style.MUTED},
        marker={"symbol": "circle-open", "size": 17, "color": list(colours),
                "line": {"width": 2}},
        ids=_ids(rows),
        hovertemplate="yield %{text}<extra></extra>",
    )]


def tradeoff_3d_figure(front: pd.DataFrame, objectives: list[str], currency: str,
                       references: pd.DataFrame | None = None) -> Figure:
    """The front in the space of the run's first three objectives, with the study's
    reference designs marked."""
    columns = [OBJECTIVES[name][0] for name in objectives[:3]]
    titles = [plot_text(objective_title(name, currency)) for name in objectives[:3]]
    colours = style.material_colour_map(list(front["material"]))
    traces: list[Any] = []
    for material, family, rows in _groups(front):
        traces.append(
            trace("scatter3d",
                x=rows[columns[0]],
                y=rows[columns[1]],
                z=rows[columns[2]],
                mode="markers",
                name=f"{plot_text(material)} · {plot_text(family)}",
                marker={
                    "color": colours[material],
                    "symbol": _SYMBOLS_3D.get(style.family_symbol(family), "cross"),
                    "size": 6,
                    "line": {"color": style.PANEL, "width": 0.5},
                },
                customdata=_hover_data(rows, currency),
                ids=_ids(rows),
                hovertemplate=_HOVER,
            )
        )
    flagged = flagged_rows(front)
    if len(flagged):
        traces.append(
            trace("scatter3d",
                x=flagged[columns[0]],
                y=flagged[columns[1]],
                z=flagged[columns[2]],
                mode="markers",
                name="outside a model's range",
                marker={"symbol": "square-open", "size": 11, "color": style.SLATE},
                customdata=_hover_data(flagged, currency),
                ids=_ids(flagged),
                hovertemplate=_HOVER,
            )
        )
    knee = front[front["knee"]]
    if len(knee):
        traces.append(
            trace("scatter3d",
                x=knee[columns[0]],
                y=knee[columns[1]],
                z=knee[columns[2]],
                mode="markers",
                name="knee",
                marker={"symbol": "circle-open", "size": 14, "color": style.OCHRE},
                customdata=_hover_data(knee, currency),
                ids=_ids(knee),
                hovertemplate=_HOVER,
            )
        )
    traces += _referencetrace(references, columns, currency, three_d=True)
    scene_axis = {
        "backgroundcolor": style.PLOT_FIELD,
        "gridcolor": style.GRID,
        "showbackground": True,
    }
    return _styled(
        traces,
        height=440,
        scene={
            "camera": {"eye": {"x": 1.7, "y": 1.7, "z": 1.1}},
            "xaxis": dict(scene_axis, title={"text": titles[0]}),
            "yaxis": dict(scene_axis, title={"text": titles[1]}),
            "zaxis": dict(scene_axis, title={"text": titles[2]}),
        },
        legend={"orientation": "h", "y": -0.02, "x": 0},
        margin={"l": 10, "r": 10, "t": 10, "b": 10},
    )


def shortlist_parallel_figure(shortlist: pd.DataFrame, currency: str) -> Figure:
    """The short-list on parallel axes; the knee design's line is ochre."""
    ranks = shortlist["rank"].astype(int).to_numpy()
    dimensions = [
        {
            "label": "Design",
            "values": ranks,
            "tickvals": ranks,
            "ticktext": [plot_text(v) for v in shortlist["design_id"]],
            "range": [int(ranks.max()) + 0.3, int(ranks.min()) - 0.3] if len(ranks) else None,
        }
    ]
    for column, label in PARALLEL_AXES.items():
        if column == "cost" and currency:
            label = plot_text(records.header("cost", currency))
        dimensions.append({"label": label, "values": shortlist[column].astype(float)})
    traces = [
        trace("parcoords",
            dimensions=dimensions,
            line={
                "color": shortlist["knee"].astype(float),
                "colorscale": [[0.0, style.TEAL_LIGHT], [1.0, style.OCHRE]],
                "cmin": 0.0,
                "cmax": 1.0,
            },
            meta={"designs": _ids(shortlist)},
            labelfont={"size": 12, "color": style.INK},
            tickfont={"size": 10, "color": style.MUTED},
            rangefont={"size": 9, "color": style.MUTED},
        )
    ]
    return _styled(traces, height=400, margin={"l": 70, "r": 50, "t": 70, "b": 30})


def winding_figure(shapes: pd.DataFrame, record: dict[str, Any]) -> Figure:
    """To-scale drawing of the winding window, laid on its side.

    The breadth of the window runs left to right and the build grows upwards from
    the centre-leg side at the bottom, so that a tall narrow window fits the page.
    Equal axis scale keeps circles round and proportions true.
    """
    window = shapes[shapes["kind"] == "window"].iloc[0]
    # Page x runs along the window breadth (data y), page y along the build (data x).
    left, right = float(window["y0"]), float(window["y1"])
    bottom, top = float(window["x0"]), float(window["x1"])
    breadth, width = right - left, top - bottom
    pad = max(0.12 * width, 0.04 * breadth, 0.6)
    layout_shapes: list[dict[str, Any]] = []
    core_fill = {"fillcolor": "#d6d8d6", "line": {"width": 0}, "layer": "below"}
    layout_shapes += [
        dict(core_fill, type="rect", x0=left - pad, x1=right + pad, y0=bottom - pad, y1=bottom),
        dict(core_fill, type="rect", x0=left - pad, x1=right + pad, y0=top, y1=top + pad),
        dict(core_fill, type="rect", x0=left - pad, x1=left, y0=bottom, y1=top),
        dict(core_fill, type="rect", x0=right, x1=right + pad, y0=bottom, y1=top),
    ]
    fills = {
        "bobbin": (style.BOBBIN, "#b9ab8d", "solid", "rect"),
        "round": (style.COPPER, style.COPPER_DARK, "solid", "circle"),
        "litz": ("#d49a62", style.COPPER_DARK, "dot", "circle"),
        "foil": (style.COPPER, style.COPPER_DARK, "solid", "rect"),
    }
    for row in shapes.itertuples(index=False):
        if row.kind == "window":
            continue
        fill, edge, dash, shape_type = fills[row.kind]
        # The page's x is the window's breadth (y in the data), its y the build.
        layout_shapes.append(
            {
                "type": shape_type,
                "x0": row.y0,
                "x1": row.y1,
                "y0": row.x0,
                "y1": row.x1,
                "fillcolor": fill,
                "line": {"color": edge, "width": 0.7, "dash": dash},
            }
        )
    layout_shapes.append(
        {
            "type": "rect",
            "x0": left,
            "x1": right,
            "y0": bottom,
            "y1": top,
            "line": {"color": style.SLATE, "width": 1.6},
        }
    )
    conductors = shapes[shapes["layer"] >= 0]
    centre_x = (conductors["y0"] + conductors["y1"]) / 2
    centre_y = (conductors["x0"] + conductors["x1"]) / 2
    hover = [
        f"layer {int(layer) + 1} · turn {int(turn) + 1}"
        for layer, turn in zip(conductors["layer"], conductors["turn"], strict=True)
    ]
    traces = [
        trace("scatter",
            x=centre_x,
            y=centre_y,
            mode="markers",
            marker={"size": 4, "opacity": 0},
            text=hover,
            hovertemplate="%{text}<extra></extra>",
            showlegend=False,
        )
    ]
    leg = "centre leg" if record["family"] in ("E", "pot") else "core"
    winding = record["winding"]
    aspect_height = 120 + 520 * (width + 2 * pad) / (breadth + 2 * pad)
    return _styled(
        traces,
        shapes=layout_shapes,
        height=int(min(max(aspect_height, 230), 520)),
        xaxis={
            "title": {"text": "along the window breadth [mm]"},
            "range": [left - pad, right + pad],
            "showgrid": False,
            "zeroline": False,
        },
        yaxis={
            "title": {"text": "build [mm]"},
            "range": [bottom - pad, top + pad],
            "scaleanchor": "x",
            "scaleratio": 1,
            "showgrid": False,
            "zeroline": False,
        },
        annotations=[
            {
                "x": (left + right) / 2,
                "y": bottom - pad / 2,
                "text": leg,
                "showarrow": False,
                "font": {"size": 10, "color": style.INK},
            },
            {
                "x": right,
                "y": top + pad / 2,
                "xanchor": "right",
                "text": (
                    f"{int(winding['layers'])} layer(s) · build "
                    f"{float(winding['build_mm']):.2f} of "
                    f"{float(winding['window_width_mm']):.2f} mm"
                ),
                "showarrow": False,
                "font": {"size": 10, "color": style.INK},
            },
        ],
        margin={"l": 56, "r": 12, "t": 24, "b": 44},
    )


def loss_figure(breakdown: pd.DataFrame) -> Figure:
    """Stacked loss per operating point: core, DC winding, AC winding, gap loss in the
    winding."""
    points = list(dict.fromkeys(breakdown["operating_point"]))
    shares = breakdown.drop_duplicates("operating_point").set_index("operating_point")
    labels = [
        f"{plot_text(p)}<br>{100 * shares.loc[p, 'time_share']:.0f} % of time" for p in points
    ]
    traces: list[Any] = []
    for component, colour in style.LOSS_COLOURS.items():
        part = breakdown[breakdown["component"] == component].set_index("operating_point")
        traces.append(
            trace("bar",
                x=labels,
                y=[float(part.loc[p, "loss_W"]) for p in points],
                name=component,
                marker={"color": colour},
                hovertemplate=f"{component}: %{{y:.3f}} W<extra></extra>",
            )
        )
    totals = [float(shares.loc[p, "total_loss_W"]) for p in points]
    traces.append(
        trace("scatter",
            x=labels,
            y=totals,
            mode="text",
            text=[f"{t:.2f} W" for t in totals],
            textposition="top center",
            showlegend=False,
            hoverinfo="skip",
        )
    )
    top = max(totals) if totals else 1.0
    return _styled(
        traces,
        barmode="stack",
        height=320,
        yaxis={"title": {"text": "loss [W]"}, "range": [0, 1.18 * top]},
        legend={"orientation": "h", "y": -0.28, "x": 0, "traceorder": "normal"},
        margin={"b": 86},
        bargap=0.45,
    )


def inductance_figure(record: dict[str, Any]) -> Figure:
    """Inductance against current, with the peak current and the lowest allowed value."""
    curve = record["inductance_curve"]
    current = np.asarray(curve["current_A"], dtype=float)
    inductance = np.asarray(curve["inductance_uH"], dtype=float)
    peak = float(record["peak_current_A"])
    at_peak = float(record["inductance_at_peak_uH"])
    floor = float(record["margins"]["inductance_at_peak_limit"]) * float(inductance[0])
    traces = [
        trace("scatter",
            x=current,
            y=inductance,
            mode="lines",
            line={"color": style.TEAL, "width": 2.5},
            name="L(I)",
            hovertemplate="%{x:.2f} A → %{y:.2f} µH<extra></extra>",
        ),
        trace("scatter",
            x=[peak],
            y=[at_peak],
            mode="markers+text",
            marker={"color": style.OCHRE, "size": 11, "symbol": "diamond"},
            text=[f"{at_peak:.1f} µH at {peak:.1f} A"],
            textposition="bottom left",
            name="at peak current",
            hovertemplate="peak %{x:.2f} A → %{y:.2f} µH<extra></extra>",
        ),
    ]
    top = float(np.nanmax(inductance)) * 1.12
    return _styled(
        traces,
        height=320,
        showlegend=False,
        shapes=[
            {
                "type": "line",
                "x0": peak,
                "x1": peak,
                "y0": 0,
                "y1": top,
                "line": {"color": style.OCHRE, "dash": "dash", "width": 1.2},
            },
            {
                "type": "line",
                "x0": float(current.min()),
                "x1": float(current.max()),
                "y0": floor,
                "y1": floor,
                "line": {"color": style.BRICK, "dash": "dot", "width": 1.2},
            },
        ],
        annotations=[
            {
                "x": float(current.min()),
                "y": floor,
                "xanchor": "left",
                "yanchor": "bottom",
                "text": "lowest allowed at peak",
                "showarrow": False,
                "font": {"size": 10, "color": style.BRICK},
            }
        ],
        xaxis={"title": {"text": "current [A]"}},
        yaxis={"title": {"text": "inductance [µH]"}, "range": [0, top]},
    )


def margin_figure(margins: pd.DataFrame) -> Figure:
    """Each checked quantity as a share of its limit; the 100 % line is the limit. Where
    the table gives a band (the hot spot's spread between thermal models), an error bar
    spans it."""
    percent = 100.0 * margins["share"].to_numpy(dtype=float)
    colours = [style.SAGE if ok else style.BRICK for ok in margins["within"]]
    words = []
    for row in margins.itertuples(index=False):
        unit = f" {row.unit}" if row.unit else ""
        relation = "≤" if row.sense == "max" else "≥"
        text = f"{row.value:.3g}{unit}  (limit {relation} {row.limit:.3g}{unit})"
        low, high = getattr(row, "band_low", np.nan), getattr(row, "band_high", np.nan)
        if np.isfinite(low) and np.isfinite(high):
            text += f"  band {low:.3g}–{high:.3g}{unit}"
        words.append(text)
    labels = list(margins["quantity"])
    limit = margins["limit"].to_numpy(dtype=float)
    low = margins.get("band_low", pd.Series(np.nan, index=margins.index)).to_numpy(float)
    high = margins.get("band_high", pd.Series(np.nan, index=margins.index)).to_numpy(float)
    has_band = np.isfinite(low) & np.isfinite(high)
    above = np.where(has_band, np.maximum(100.0 * high / limit - percent, 0.0), 0.0)
    below = np.where(has_band, np.maximum(percent - 100.0 * low / limit, 0.0), 0.0)
    traces = [
        trace("bar",
            x=percent,
            y=labels,
            orientation="h",
            marker={"color": colours},
            text=words,
            textposition="auto",
            insidetextanchor="start",
            hovertemplate="%{y}: %{x:.0f} % of the limit<extra></extra>",
            error_x={
                "type": "data", "symmetric": False, "array": above, "arrayminus": below,
                "visible": bool(has_band.any()), "color": style.INK, "thickness": 1.5,
                "width": 6,
            },
        )
    ]
    ends = np.concatenate([percent, (percent + above)[has_band]])
    right = max(125.0, float(np.nanmax(ends)) + 10.0) if len(percent) else 125.0
    return _styled(
        traces,
        height=250,
        showlegend=False,
        xaxis={"title": {"text": "share of limit [%]"}, "range": [0, right]},
        yaxis={"autorange": "reversed"},
        shapes=[
            {
                "type": "line",
                "x0": 100,
                "x1": 100,
                "y0": -0.5,
                "y1": len(labels) - 0.5,
                "line": {"color": style.INK, "width": 1.5, "dash": "dash"},
            }
        ],
        margin={"l": 160, "r": 16, "t": 16, "b": 44},
    )


def field_check_figure(result: dict[str, Any]) -> Figure:
    """Plotly figure of the solved section: |B| as colour, flux lines as contours, iron
    and winding outlined."""
    plot = result["plot"]
    axis_x = "r [mm]" if result["section"] == "axisymmetric" else "x [mm]"
    traces = [
        trace("heatmap", x=plot["x_mm"], y=plot["y_mm"], z=plot["b_T"],
               colorscale="Cividis", colorbar={"title": {"text": "|B| [T]"}},
               hovertemplate="%{x:.2f}, %{y:.2f} mm: %{z:.3f} T<extra></extra>"),
        trace("contour", x=plot["x_mm"], y=plot["y_mm"], z=plot["potential"],
               contours={"coloring": "none"}, ncontours=28,
               line={"color": "white", "width": 1}, showscale=False, hoverinfo="skip"),
    ]
    shapes = [
        {"type": "rect", "x0": r[0], "x1": r[1], "y0": r[2], "y1": r[3],
         "line": {"color": "#d8ccb2", "width": 1.5}}
        for r in plot["iron_mm"]
    ]
    c = plot["coil_mm"]
    shapes.append({"type": "rect", "x0": c[0], "x1": c[1], "y0": c[2], "y1": c[3],
                   "line": {"color": "#b8733a", "width": 2, "dash": "dot"}})
    return plain({"data": traces, "layout": {
        "shapes": shapes, "height": 460, "margin": {"l": 50, "r": 20, "t": 30, "b": 45},
        "xaxis": {"title": {"text": axis_x}, "constrain": "domain"},
        "yaxis": {"title": {"text": "height above the gap's mid-plane [mm]"},
                  "scaleanchor": "x", "scaleratio": 1},
        "title": {"text": f"{plot_text(result['design_id'])}: flux at "
                          f"{result['peak_current_A']:.3g} A (gap {result['gap_mm']:.3g} mm)",
                  "font": {"size": 13}},
    }})


def line_cycle_figure(record: dict[str, Any]) -> Figure:
    """The inductor current over the line cycle at the record's operating point (average,
    and the switching ripple's peak and valley envelopes) and where the loss arises along
    it (core and winding loss of each instant, at the point's settled temperature)."""
    parts = {part["name"]: part for part in record.get("line_cycle") or []}
    part = parts.get(record["operating_point"]) or next(iter(parts.values()), None)
    if part is None:
        raise ValueError("not a line-cycle design")
    time = np.asarray(part["time_ms"], dtype=float)
    traces = [
        trace("bar", x=time, y=part["core_loss_W"], name="core loss", yaxis="y2",
               marker={"color": style.TEAL_LIGHT}, opacity=0.45,
               hovertemplate="%{x:.2f} ms: core %{y:.3g} W<extra></extra>"),
        trace("bar", x=time, y=part["winding_loss_W"], name="winding loss", yaxis="y2",
               marker={"color": style.COPPER}, opacity=0.45,
               hovertemplate="%{x:.2f} ms: winding %{y:.3g} W<extra></extra>"),
        trace("scatter", x=time, y=part["peak_A"], mode="lines", name="ripple peak",
                   line={"color": style.OCHRE, "width": 1.2},
                   hovertemplate="%{x:.2f} ms: peak %{y:.3g} A<extra></extra>"),
        trace("scatter", x=time, y=part["valley_A"], mode="lines", name="ripple valley",
                   line={"color": style.OCHRE, "width": 1.2}, fill="tonexty",
                   fillcolor="rgba(201,138,27,0.18)",
                   hovertemplate="%{x:.2f} ms: valley %{y:.3g} A<extra></extra>"),
        trace("scatter", x=time, y=part["average_A"], mode="lines", name="average",
                   line={"color": style.TEAL, "width": 2.5},
                   hovertemplate="%{x:.2f} ms: average %{y:.3g} A<extra></extra>"),
    ]
    return _styled(
        traces,
        height=340,
        barmode="stack",
        xaxis={"title": {
            "text": f"time in the line cycle [ms] ({plot_text(part['name'])})"}},
        yaxis={"title": {"text": "inductor current [A]"}, "rangemode": "tozero"},
        yaxis2={"title": {"text": "loss at that instant [W]", "standoff": 8},
                "overlaying": "y", "side": "right", "rangemode": "tozero",
                "showgrid": False},
        legend={"orientation": "h", "y": -0.3, "x": 0},
        margin={"b": 90, "r": 80},
    )
