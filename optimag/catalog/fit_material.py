"""Fit a catalogue material row from measured loss-density points.

Input: a CSV of loss-density points under sinusoidal excitation, columns
``frequency_kHz, peak_flux_T, temperature_C, loss_density_kW_m3`` (optionally
``dc_field_A_m``). Output: the Steinmetz coefficients, the core-loss temperature factor and
the ranges they were fitted on, as one ``materials.csv`` row.

The fitted law is the one the model evaluates (`optimag.physics.coreloss`):

.. math:: P_v = k f^\\alpha \\hat B^\\beta \\, (c_{t0} - c_{t1} T + c_{t2} T^2)

with the temperature factor written as ``1 + c (T - T0)^2`` (1 at its minimum, as the
catalogue asks), fitted by least squares on the logarithm of the loss density (relative
errors weigh alike across decades).
"""

from __future__ import annotations

import csv
import math
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from scipy.optimize import least_squares

from optimag.errors import InputError, Problem

#: Columns of the points file (``dc_field_A_m`` optional).
POINT_COLUMNS = ("frequency_kHz", "peak_flux_T", "temperature_C", "loss_density_kW_m3")
OPTIONAL_POINT_COLUMNS = ("dc_field_A_m",)

#: Columns of the written row, in the catalogue's order (see catalogs/README.md).
MATERIAL_COLUMNS = (
    "id", "kind", "mu_i", "bsat_25C_T", "bsat_100C_T", "steinmetz_k", "steinmetz_alpha",
    "steinmetz_beta", "f_min_kHz", "f_max_kHz", "b_max_T", "ct0", "ct1_per_C", "ct2_per_C2",
    "rolloff_a", "rolloff_b", "rolloff_c", "density_kg_m3", "price_factor",
)
#: Optional columns the fit fills when the points hold DC-field levels.
BIAS_COLUMNS = tuple(
    name for j in range(1, 4) for name in (f"bias_H{j}_A_m", f"bias_factor{j}")
)

#: Relative singular value of the scaled Jacobian below which a parameter counts as not
#: determined by the data (common practice for rank decisions, no source).
RANK_TOLERANCE = 1e-8


@dataclass(frozen=True)
class LossPoints:
    """Validated loss-density points (SI)."""

    frequency_Hz: np.ndarray
    peak_flux_T: np.ndarray
    temperature_C: np.ndarray
    loss_W_m3: np.ndarray
    dc_field_A_m: np.ndarray | None
    lines: np.ndarray


@dataclass(frozen=True)
class MaterialFit:
    """Fitted coefficients, their ranges and the error at every point.

    ``relative_error`` is (model - measured) / measured per point [1].
    """

    k: float
    alpha: float
    beta: float
    ct0: float
    ct1_per_C: float
    ct2_per_C2: float
    f_min_kHz: float
    f_max_kHz: float
    b_max_T: float
    temperature_range_C: tuple[float, float]
    relative_error: np.ndarray
    bias_h_A_m: tuple[float, ...] = ()
    bias_factor: tuple[float, ...] = ()

    @property
    def worst_index(self) -> int:
        return int(np.argmax(np.abs(self.relative_error)))


def read_points(path: Path) -> LossPoints:
    """Read and validate a points CSV; every problem as file:line: field: message."""
    name = str(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError) as error:
        raise InputError([Problem(name, None, "", f"cannot read the file: {error}")]) from None
    rows = list(csv.reader(text.splitlines()))
    if not rows or not any(cell.strip() for cell in rows[0]):
        raise InputError([Problem(name, 1, "", "line 1 must be the header row")])
    header = [cell.strip() for cell in rows[0]]
    problems: list[Problem] = []
    known = POINT_COLUMNS + OPTIONAL_POINT_COLUMNS
    for column in header:
        if column not in known:
            problems.append(
                Problem(name, 1, column, f"unknown column; expected {', '.join(known)}")
            )
    for column in POINT_COLUMNS:
        if column not in header:
            problems.append(Problem(name, 1, column, "required column is missing"))
    if problems:
        raise InputError(problems)
    columns = [c for c in known if c in header]
    values: dict[str, list[float]] = {c: [] for c in columns}
    lines: list[int] = []
    lower = {"frequency_kHz": 0.0, "peak_flux_T": 0.0, "loss_density_kW_m3": 0.0}
    for line, row in enumerate(rows[1:], start=2):
        if not any(cell.strip() for cell in row):
            continue
        if len(row) != len(header):
            problems.append(Problem(name, line, "", f"{len(row)} cells, the header has "
                                                    f"{len(header)}"))
            continue
        lines.append(line)
        for column in columns:
            cell = row[header.index(column)].strip()
            try:
                value = float(cell)
            except ValueError:
                problems.append(Problem(name, line, column, f"'{cell}' is not a number"))
                continue
            if not math.isfinite(value):
                problems.append(Problem(name, line, column, f"'{cell}' is not a finite number"))
            elif column in lower and value <= lower[column]:
                problems.append(Problem(name, line, column, f"{value:g} must be > 0"))
            elif column == "dc_field_A_m" and value < 0:
                problems.append(Problem(name, line, column, f"{value:g} must be >= 0"))
            elif column == "temperature_C" and not -60.0 <= value <= 250.0:
                problems.append(Problem(name, line, column, f"{value:g} °C is outside -60..250"))
            else:
                values[column].append(value)
    if problems:
        raise InputError(problems)
    count = len(values["frequency_kHz"])
    if count == 0:
        raise InputError([Problem(name, None, "", "no data rows")])
    dc = values.get("dc_field_A_m")
    return LossPoints(
        frequency_Hz=np.array(values["frequency_kHz"]) * 1e3,
        peak_flux_T=np.array(values["peak_flux_T"]),
        temperature_C=np.array(values["temperature_C"]),
        loss_W_m3=np.array(values["loss_density_kW_m3"]) * 1e3,
        dc_field_A_m=None if dc is None else np.array(dc),
        lines=np.array(lines),
    )


#: Largest number of DC-field levels a material row carries (bias_H1..3_A_m).
BIAS_LEVELS = 3


def _model_log(params: np.ndarray, points: LossPoints, level: np.ndarray) -> np.ndarray:
    log_k, alpha, beta, curvature, t_min = params[:5]
    factor = 1.0 + curvature * (points.temperature_C - t_min) ** 2
    log_bias = np.concatenate([[0.0], params[5:]])[level]
    return (log_k + alpha * np.log(points.frequency_Hz) + beta * np.log(points.peak_flux_T)
            + np.log(factor) + log_bias)


def fit_material(points: LossPoints, source: str = "points") -> MaterialFit:
    """Least-squares fit of k, α, β and the temperature factor to ``points``.

    Raises `InputError` (naming ``source``) when the data cannot determine every
    coefficient: fewer than two frequencies or flux densities, fewer than three
    temperatures, no more points than coefficients, or a rank-deficient problem.
    """
    def refuse(message: str) -> InputError:
        return InputError([Problem(source, None, "", message)])

    n = len(points.loss_W_m3)
    needs = (
        (np.unique(points.frequency_Hz).size >= 2, "at least two different frequencies"),
        (np.unique(points.peak_flux_T).size >= 2, "at least two different peak flux densities"),
        (np.unique(points.temperature_C).size >= 3,
         "at least three different temperatures (the temperature factor is a parabola)"),
        (n > 5, "more points than the five fitted coefficients (k, α, β and the temperature "
                "factor's curvature and minimum)"),
    )
    for ok, what in needs:
        if not ok:
            raise refuse(f"the data cannot determine the fit: it needs {what}")
    field = np.zeros(n) if points.dc_field_A_m is None else points.dc_field_A_m
    levels = np.unique(field[field > 0])
    if levels.size > BIAS_LEVELS:
        raise refuse(f"the points hold {levels.size} DC-field levels; a material row carries "
                     f"at most {BIAS_LEVELS} (bias_H1_A_m .. bias_H{BIAS_LEVELS}_A_m)")
    if levels.size and not np.any(field == 0):
        raise refuse("the data cannot determine the fit: DC-bias factors need points "
                     "without a DC field (dc_field_A_m = 0) as their reference")
    # level 0: no field; level j: the j-th field level.
    level = np.where(field > 0, np.searchsorted(levels, field) + 1, 0)
    zero = field == 0
    if np.unique(points.temperature_C[zero]).size < 3 or np.unique(
            points.frequency_Hz[zero]).size < 2 or np.unique(points.peak_flux_T[zero]).size < 2:
        raise refuse("the data cannot determine the fit: the points without a DC field need "
                     "two frequencies, two flux densities and three temperatures")
    if n <= 5 + levels.size:
        raise refuse("the data cannot determine the fit: it needs more points than the "
                     f"{5 + levels.size} fitted coefficients")

    log_p = np.log(points.loss_W_m3)
    log_f, log_b = np.log(points.frequency_Hz), np.log(points.peak_flux_T)
    # Start: linear least squares for ln k, α, β with a flat temperature factor, the
    # minimum at the coolest-loss temperature.
    design = np.column_stack([np.ones(n), log_f, log_b])[zero]
    start3, *_ = np.linalg.lstsq(design, log_p[zero], rcond=None)
    t_lo, t_hi = float(points.temperature_C.min()), float(points.temperature_C.max())
    span = max(t_hi - t_lo, 1.0)
    n_bias = levels.size
    start = np.array([*start3, 1e-4, 0.5 * (t_lo + t_hi), *np.zeros(n_bias)])
    scale = np.array([1.0, 0.1, 0.1, 1e-4, 10.0, *np.ones(n_bias)])
    result = least_squares(
        lambda p: _model_log(p, points, level) - log_p, start,
        bounds=([-np.inf, 0.0, 0.0, 0.0, t_lo - 2 * span, *np.full(n_bias, -np.inf)],
                [np.inf, 3.0, 4.0, 1.0, t_hi + 2 * span, *np.full(n_bias, np.inf)]),
        x_scale=scale, method="trf",
    )
    jac = result.jac * scale
    singular = np.linalg.svd(jac, compute_uv=False)
    if singular[-1] <= RANK_TOLERANCE * singular[0] or not result.success:
        raise refuse("the data cannot determine the fit: the coefficients are not "
                     "independent on these points (rank-deficient least squares)")
    log_k, alpha, beta, curvature, t_min = (float(v) for v in result.x[:5])
    error = np.exp(_model_log(result.x, points, level) - log_p) - 1.0
    return MaterialFit(
        k=math.exp(log_k), alpha=alpha, beta=beta,
        ct0=1.0 + curvature * t_min**2, ct1_per_C=2.0 * curvature * t_min,
        ct2_per_C2=curvature,
        f_min_kHz=float(points.frequency_Hz.min() / 1e3),
        f_max_kHz=float(points.frequency_Hz.max() / 1e3),
        b_max_T=float(points.peak_flux_T.max()),
        temperature_range_C=(t_lo, t_hi),
        relative_error=error,
        bias_h_A_m=tuple(float(v) for v in levels),
        bias_factor=tuple(float(np.exp(v)) for v in result.x[5:]),
    )


#: Columns loss data cannot give: left empty in the written row, to be filled from the
#: material's datasheet before the row goes into a catalogue.
NOT_FROM_LOSS_DATA = ("kind", "mu_i", "bsat_25C_T", "bsat_100C_T", "density_kg_m3",
                      "price_factor")


def _number(value: float) -> str:
    text = f"{value:.6g}"
    if "e" in text:  # plain decimal notation, as the catalogue asks
        text = np.format_float_positional(float(text), trim="-")
    return text


def material_row(fit: MaterialFit, material_id: str) -> str:
    """``materials.csv`` text: the header and one row (`NOT_FROM_LOSS_DATA` and the
    roll-off cells empty)."""
    columns = MATERIAL_COLUMNS + (BIAS_COLUMNS if fit.bias_h_A_m else ())
    cells = dict.fromkeys(columns, "")
    cells.update({
        "id": material_id,
        "steinmetz_k": _number(fit.k), "steinmetz_alpha": _number(fit.alpha),
        "steinmetz_beta": _number(fit.beta), "f_min_kHz": _number(fit.f_min_kHz),
        "f_max_kHz": _number(fit.f_max_kHz), "b_max_T": _number(fit.b_max_T),
        "ct0": _number(fit.ct0), "ct1_per_C": _number(fit.ct1_per_C),
        "ct2_per_C2": _number(fit.ct2_per_C2),
    })
    for j, (h, factor) in enumerate(zip(fit.bias_h_A_m, fit.bias_factor, strict=True), 1):
        cells[f"bias_H{j}_A_m"] = _number(h)
        cells[f"bias_factor{j}"] = _number(factor)
    return ",".join(columns) + "\n" + ",".join(cells[c] for c in columns) + "\n"


def write_new_file(path: Path, text: str) -> None:
    """Write ``text`` to ``path`` through a temporary file in the same folder; refuse an
    existing path (or a symlink) rather than overwrite it."""
    if path.exists() or path.is_symlink():
        raise InputError([Problem(str(path), None, "", "already exists; refusing to "
                                                        "overwrite it (choose another --out)")])
    if not path.parent.is_dir():
        raise InputError([Problem(str(path), None, "", "its folder does not exist")])
    handle, temp = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent)
    try:
        with os.fdopen(handle, "w", encoding="utf-8", newline="") as stream:
            stream.write(text)
        # Hard link then unlink: fails instead of replacing a file created meanwhile.
        os.link(temp, path)
    except FileExistsError:
        raise InputError([Problem(str(path), None, "", "already exists; refusing to "
                                                        "overwrite it")]) from None
    finally:
        Path(temp).unlink(missing_ok=True)


def error_table(points: LossPoints, fit: MaterialFit) -> str:
    """Fit error at every point and the worst, as text lines."""
    lines = [f"{'line':>5} {'f kHz':>9} {'B T':>8} {'T °C':>7} {'measured kW/m³':>15} "
             f"{'fitted kW/m³':>13} {'error':>8}"]
    fitted = points.loss_W_m3 * (1.0 + fit.relative_error)
    for i in range(len(points.loss_W_m3)):
        lines.append(
            f"{points.lines[i]:>5} {points.frequency_Hz[i] / 1e3:>9.4g} "
            f"{points.peak_flux_T[i]:>8.4g} "
            f"{points.temperature_C[i]:>7.4g} {points.loss_W_m3[i] / 1e3:>15.5g} "
            f"{fitted[i] / 1e3:>13.5g} {fit.relative_error[i]:>+8.2%}"
        )
    worst = fit.worst_index
    lines.append(f"worst: line {points.lines[worst]}, {fit.relative_error[worst]:+.2%}; RMS "
                 f"{float(np.sqrt(np.mean(fit.relative_error**2))):.2%}")
    return "\n".join(lines)
