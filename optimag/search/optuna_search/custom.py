"""Custom (made-to-order) cores drawn by the optuna strategy: their geometry, their rows in
the design space, their records, and how they compare with catalogue cores."""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from optimag import model
from optimag.search import custom_core as geometry
from optimag.search.pareto import nondominated_mask

if TYPE_CHECKING:
    from optimag.study.custom_core import CustomCore

#: Prefix of the trial parameters holding custom-core dimensions.
CUSTOM_PARAM_PREFIX = "custom_"


def custom_core_id(family: str, trial_number: int) -> str:
    """Id of the custom core drawn in a trial."""
    return f"custom-{family}-{trial_number}"


def custom_geometry(custom: CustomCore, names: Sequence[str],
                    dims_m: np.ndarray) -> geometry.CoreGeometry:
    """Effective parameters of custom cores, one per row of ``dims_m`` (columns ``names``)."""
    col = {name: dims_m[:, j] for j, name in enumerate(names)}
    if custom.family == "E":
        return geometry.e_core_geometry(
            col["leg_width"], col["leg_depth"], col["window_breadth"], col["window_width"]
        )
    return geometry.pot_core_geometry(
        col["post_diameter"], col["window_breadth"], col["window_width"],
        col.get("base_thickness"),
    )


def custom_core_arrays(custom: CustomCore, names: Sequence[str], dims_m: np.ndarray,
                       ids: Sequence[str]) -> model.CoreArrays:
    """`model.CoreArrays` rows for custom cores (stack fixed at 1)."""
    n = len(dims_m)
    g = custom_geometry(custom, names, dims_m)
    price = geometry.volume_price(g.material_volume_m3, custom.price_base, custom.price_per_cm3)
    # Outer legs (E) or skirt (pot) from the outer length: what is left beside the
    # gapped leg and the two windows.
    outer_width = np.maximum(0.5 * (g.length_m - g.leg_width_m) - g.window_width_m, 0.0)
    if custom.family == "pot":
        r_in = 0.5 * g.leg_width_m + g.window_width_m
        outer_area = np.pi * ((0.5 * g.length_m) ** 2 - r_in**2)
    else:
        outer_area = 2.0 * outer_width * g.leg_depth_m
    return model.CoreArrays(
        ids=np.asarray(ids, dtype=object), family=np.full(
            n, model.FAMILY_CODES[custom.family], dtype=np.int8),
        ae_m2=g.ae_m2, le_m=g.le_m, ve_m3=g.ve_m3, amin_m2=g.amin_m2,
        window_area_m2=g.window_area_m2, breadth_m=g.window_breadth_m,
        window_width_m=g.window_width_m, leg_width_m=g.leg_width_m,
        leg_depth_m=g.leg_depth_m, bobbin_wall_m=np.full(n, custom.bobbin_wall_mm * 1e-3),
        length_m=g.length_m, width_m=g.width_m, height_m=g.height_m,
        price=np.asarray(price, dtype=float), max_stack=np.ones(n, dtype=np.int64),
        outer_leg_width_m=outer_width, outer_leg_area_m2=outer_area,
    )


def custom_records(custom: CustomCore, names: Sequence[str], numbers: np.ndarray,
                   dims_m: np.ndarray) -> dict[str, dict]:
    """Dimensions and effective parameters (trade units) of the custom cores drawn in
    trials ``numbers`` with dimensions ``dims_m``, keyed by core id."""
    if len(numbers) == 0:
        return {}
    g = custom_geometry(custom, names, dims_m)
    price = geometry.volume_price(g.material_volume_m3, custom.price_base, custom.price_per_cm3)
    out = {}
    for k, number in enumerate(numbers):
        entry = {"family": custom.family, "trial": int(number)}
        entry.update({f"{name}_mm": round(float(dims_m[k, j]) * 1e3, 4)
                      for j, name in enumerate(names)})
        entry.update({
            "Ae_mm2": round(float(g.ae_m2[k]) * 1e6, 4),
            "le_mm": round(float(g.le_m[k]) * 1e3, 4),
            "Ve_mm3": round(float(g.ve_m3[k]) * 1e9, 2),
            "Amin_mm2": round(float(g.amin_m2[k]) * 1e6, 4),
            "length_mm": round(float(g.length_m[k]) * 1e3, 4),
            "width_mm": round(float(g.width_m[k]) * 1e3, 4),
            "height_mm": round(float(g.height_m[k]) * 1e3, 4),
            "material_volume_cm3": round(float(g.material_volume_m3[k]) * 1e6, 5),
            "bobbin_wall_mm": custom.bobbin_wall_mm,
            "price": round(float(price[k]), 4),
        })
        out[custom_core_id(custom.family, int(number))] = entry
    return out


def clip_height(custom: CustomCore, ranges: dict, dims: np.ndarray) -> np.ndarray:
    """Custom-core dimensions with the window breadth clipped so the set stays within
    ``max_height_mm`` (never below the breadth's lower bound)."""
    if custom.max_height_mm is None:
        return dims
    names = list(ranges)
    out = dims.copy()
    breadth = out[:, names.index("window_breadth")]
    low = ranges["window_breadth"][0]
    if custom.family == "E":
        yokes = out[:, names.index("leg_width")]
    elif "base_thickness" in names:
        yokes = 2 * out[:, names.index("base_thickness")]
    else:
        yokes = out[:, names.index("post_diameter")] / 2
    out[:, names.index("window_breadth")] = np.maximum(
        np.minimum(breadth, custom.max_height_mm * 1e-3 - yokes), low
    )
    return out


def concat_cores(a: model.CoreArrays, b: model.CoreArrays) -> model.CoreArrays:
    """Core rows of ``a`` followed by those of ``b``."""
    return model.CoreArrays(**{
        f.name: np.concatenate([np.asarray(getattr(a, f.name)), np.asarray(getattr(b, f.name))])
        .astype(np.asarray(getattr(a, f.name)).dtype if f.name != "ids" else object)
        for f in dataclasses.fields(model.CoreArrays)
    })


def custom_vs_catalogue(
    catalogue_volume: np.ndarray, catalogue_loss: np.ndarray,
    custom_volume: np.ndarray, custom_loss: np.ndarray,
) -> list[dict]:
    """For each catalogue design on the (volume, loss) front, the smallest custom volume
    at the same or lower loss.

    Returns one row per catalogue design on that front (sorted by loss): its row index
    ``catalogue`` in the inputs, loss and volume, the index ``custom`` and volume of the
    smallest custom design with a loss no higher (None when no custom design is that
    efficient), and ``volume_ratio`` = catalogue volume / custom volume (> 1: the
    catalogue design is that much larger at equal loss).
    """
    catalogue_volume = np.asarray(catalogue_volume, dtype=float)
    catalogue_loss = np.asarray(catalogue_loss, dtype=float)
    custom_volume = np.asarray(custom_volume, dtype=float)
    custom_loss = np.asarray(custom_loss, dtype=float)
    on_front = np.flatnonzero(nondominated_mask(np.column_stack([catalogue_volume,
                                                                 catalogue_loss])))
    rows = []
    for k in on_front[np.argsort(catalogue_loss[on_front], kind="stable")]:
        ok = np.flatnonzero(custom_loss <= catalogue_loss[k])
        best = int(ok[np.argmin(custom_volume[ok])]) if ok.size else None
        custom = None if best is None else float(custom_volume[best])
        rows.append({
            "catalogue": int(k),
            "weighted_loss_W": float(catalogue_loss[k]),
            "catalogue_volume_cm3": float(catalogue_volume[k]),
            "custom": best,
            "custom_volume_cm3": custom,
            "volume_ratio": None if custom is None else float(catalogue_volume[k]) / custom,
        })
    return rows


def custom_comparison(space: model.DesignSpace, catalogue: model.Candidates,
                      custom: model.Candidates) -> dict:
    """The run record's ``custom_vs_catalogue``: `custom_vs_catalogue` of the catalogue
    and custom front designs (each evaluated afresh), with their core ids."""
    if len(catalogue.core) == 0 or len(custom.core) == 0:
        return {"rows": [], "median_volume_ratio": None,
                "note": "needs feasible designs on both catalogue and custom cores"}
    figures = {}
    for label, picked in (("catalogue", catalogue), ("custom", custom)):
        metrics = model.evaluate(space, picked)
        figures[label] = (picked, metrics["volume_cm3"], metrics["weighted_loss_W"])
    table = custom_vs_catalogue(*figures["catalogue"][1:], *figures["custom"][1:])
    ids = space.cores.ids
    for row in table:
        cat, cus = figures["catalogue"][0], figures["custom"][0]
        row["catalogue_core"] = str(ids[cat.core[row.pop("catalogue")]])
        best = row.pop("custom")
        row["custom_core"] = None if best is None else str(ids[cus.core[best]])
    ratios = [r["volume_ratio"] for r in table if r["volume_ratio"] is not None]
    return {
        "rows": table,
        "median_volume_ratio": float(np.median(ratios)) if ratios else None,
        "note": "catalogue designs on the volume-loss front against the smallest custom-core "
        "design with the same or lower loss; volume_ratio = catalogue volume / custom volume",
    }
