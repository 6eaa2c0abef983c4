"""Production scatter in the report: yield tables, histograms against the limits, and the
robust front beside the nominal one.

Data steps (DataFrames, tested) and their plotly renderers, reading what
`optimag.records.tolerance_part` wrote into each record and what the search wrote into
run.json (``tolerance``, ``robust``).
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from optimag import records
from optimag.report import style
from optimag.report.data import OBJECTIVES, RunData, objective_title
from optimag.report.figdict import Figure, plain, trace
from optimag.report.figures import plot_text

#: Words for each spread of `optimag.tolerance.PARAMETERS`.
SPREAD_WORDS = {
    "gap": "gap as ground or spaced",
    "permeability": "initial permeability / AL",
    "bsat": "saturation flux density",
    "steinmetz_k": "core-loss coefficient k",
    "wire_diameter": "wire diameter",
    "ambient": "ambient temperature",
}

#: The figures drawn as histograms on a build sheet, with their axis words.
HISTOGRAM_FIGURES = ("inductance_at_peak_uH", "hotspot_temperature_C")


def histogram_frame(record: dict[str, Any], figure: str) -> pd.DataFrame:
    """Bins of one sampled figure: ``centre``, ``width``, ``count`` and ``share`` of the
    samples, and ``beyond`` (True where the bin lies on the wrong side of the limit: below
    it for inductance at peak, above it otherwise). Empty when not analysed."""
    part = (record.get("tolerance") or {}).get("histograms", {}).get(figure)
    if not part:
        return pd.DataFrame(columns=["centre", "width", "count", "share", "beyond"])
    edges = np.asarray(part["edges"], dtype=float)
    counts = np.asarray(part["counts"], dtype=float)
    centre = 0.5 * (edges[1:] + edges[:-1])
    limit = part.get("limit")
    if limit is None:
        beyond = np.zeros(len(centre), dtype=bool)
    elif figure == "inductance_at_peak_uH":
        beyond = centre < float(limit)
    else:
        beyond = centre > float(limit)
    total = counts.sum() or 1.0
    return pd.DataFrame({"centre": centre, "width": np.diff(edges), "count": counts,
                         "share": counts / total, "beyond": beyond})


def spread_ranking(record: dict[str, Any]) -> pd.DataFrame:
    """Yield each spread loses when it acts alone, largest first (``spread``, ``words``,
    ``yield_lost``)."""
    losses = (record.get("tolerance") or {}).get("yield_loss_by_spread") or {}
    rows = [{"spread": k, "words": SPREAD_WORDS.get(k, k), "yield_lost": float(v)}
            for k, v in losses.items()]
    frame = pd.DataFrame(rows, columns=["spread", "words", "yield_lost"])
    return frame.sort_values("yield_lost", ascending=False, kind="stable").reset_index(drop=True)


def constraint_yields(record: dict[str, Any]) -> pd.DataFrame:
    """Share of builds meeting each limit (``constraint``, ``meeting``), lowest first."""
    by = (record.get("tolerance") or {}).get("yield_by_constraint") or {}
    frame = pd.DataFrame([{"constraint": k, "meeting": float(v)} for k, v in by.items()],
                         columns=["constraint", "meeting"])
    return frame.sort_values("meeting", kind="stable").reset_index(drop=True)


def robust_comparison(run: RunData, front: pd.DataFrame) -> pd.DataFrame:
    """The nominal front (every nominally feasible design) and the robust front of a
    robust search, in the first two objectives: ``x``, ``y``, ``front`` ("nominal" or
    "robust"). Empty unless the run was a robust search."""
    robust = run.meta.get("robust") or {}
    objectives = list(robust.get("objectives") or run.objectives)
    if not robust.get("enabled") or len(objectives) < 2:
        return pd.DataFrame(columns=["x", "y", "front"])
    nominal = np.asarray(robust.get("nominal_front") or [], dtype=float)
    nominal = nominal.reshape(-1, len(objectives))
    x_col, y_col = (OBJECTIVES[o][0] for o in objectives[:2])
    rows = [{"x": p[0], "y": p[1], "front": "nominal"} for p in nominal]
    rows += [{"x": float(a), "y": float(b), "front": "robust"}
             for a, b in zip(front[x_col], front[y_col], strict=True)]
    return pd.DataFrame(rows, columns=["x", "y", "front"])


# ---------------------------------------------------------------------------------------
# Renderers
# ---------------------------------------------------------------------------------------


def _layout(**extra: Any) -> dict[str, Any]:
    layout = style.plotly_layout_defaults()
    layout.update(extra)
    return layout


def histogram_figure(frame: pd.DataFrame, figure: str, limit: float | None) -> Figure:
    """Share of builds per bin, bins beyond the limit in brick, the limit dashed."""
    colours = np.where(frame["beyond"], style.BRICK, style.TEAL)
    traces = [trace("bar", x=frame["centre"], y=frame["share"] * 100, width=frame["width"],
                    marker={"color": list(colours)}, name="builds",
                    hovertemplate="%{x:.4g}: %{y:.1f} % of builds<extra></extra>")]
    shapes = []
    if limit is not None:
        shapes.append({"type": "line", "x0": limit, "x1": limit, "yref": "paper", "y0": 0,
                       "y1": 1, "line": {"dash": "dash", "color": style.INK, "width": 1.5}})
    return plain({"data": traces, "layout": _layout(
        height=240, showlegend=False, shapes=shapes, bargap=0.02,
        xaxis={"title": {"text": plot_text(records.header(figure))}},
        yaxis={"title": {"text": "builds [%]"}},
        margin={"t": 10, "b": 40, "l": 50, "r": 10},
    )})


def robust_figure(comparison: pd.DataFrame, x_title: str, y_title: str) -> Figure:
    """Nominal front in grey, robust front in teal."""
    traces = []
    for name, colour, size in (("nominal", style.SAND, 8), ("robust", style.TEAL, 11)):
        rows = comparison[comparison["front"] == name]
        traces.append(trace("scatter", x=rows["x"], y=rows["y"], mode="markers",
                            name=f"{name} front",
                            marker={"color": colour, "size": size,
                                    "line": {"color": style.SLATE, "width": 0.6}}))
    return plain({"data": traces, "layout": _layout(
        height=380, xaxis={"title": {"text": plot_text(x_title)}},
        yaxis={"title": {"text": plot_text(y_title)}},
        legend={"orientation": "h", "yanchor": "top", "y": -0.2, "x": 0},
    )})


def robust_titles(run: RunData) -> tuple[str, str]:
    objectives = list((run.meta.get("robust") or {}).get("objectives") or run.objectives)
    return (objective_title(objectives[0], run.currency),
            objective_title(objectives[1], run.currency))
