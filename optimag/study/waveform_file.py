"""An inductor current given as a file (a circuit simulation's output), one switching period.

The file is CSV with the header ``time_s,current_A`` and one sample per line, time strictly
increasing. It holds one switching period or several; the last whole period is taken. The
current is imposed: every design sees the same current, and its own large-signal law turns
it into flux. `read_current_waveform` returns the period as a piecewise-linear wave with
its vertices thinned to what changes the wave; every problem is one `Problem` naming the
file and line.
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from optimag.errors import InputError, Problem

#: The header the file must start with.
HEADER = ("time_s", "current_A")
#: Fewest samples in the period taken (a triangle needs three; fewer is no waveform).
MIN_SAMPLES = 3
#: Largest file read, in samples.
MAX_SAMPLES = 2_000_000
#: The period taken must close on itself: end and start current within this share of the
#: peak-to-peak current (and within `PERIODIC_ABS_A`) (common practice, no source).
PERIODIC_TOLERANCE = 0.02
PERIODIC_ABS_A = 1e-9
#: A file spanning the period to within this share of it counts as one period.
PERIOD_TOLERANCE = 1e-3
#: Vertices kept after thinning: a sample is dropped where the wave through its
#: neighbours stays within this share of the peak-to-peak current.
THIN_TOLERANCE = 1e-4
MAX_VERTICES = 400


@dataclass(frozen=True, eq=False)
class CurrentWaveform:
    """One switching period of a given inductor current.

    Attributes
    ----------
    path : str  File the waveform came from [-]
    times_s : ndarray  Vertex times from 0 to the period [s]
    currents_A : ndarray  Current at each vertex; the last equals the first [A]
    """

    path: str
    times_s: NDArray[np.float64]
    currents_A: NDArray[np.float64]

    @property
    def period_s(self) -> float:
        return float(self.times_s[-1])

    @property
    def mean_A(self) -> float:
        """Average current over the period (trapezoids between vertices) [A]."""
        return float(np.trapezoid(self.currents_A, self.times_s) / self.period_s)

    @property
    def rms_A(self) -> float:
        """RMS current of the piecewise-linear wave [A]."""
        a, b = self.currents_A[:-1], self.currents_A[1:]
        mean_square = np.sum(np.diff(self.times_s) * (a * a + a * b + b * b) / 3.0)
        return float(np.sqrt(mean_square / self.period_s))

    @property
    def rise_share(self) -> float:
        """Share of the period during which the current rises [-]."""
        steps = np.diff(self.times_s)
        return float(np.sum(steps[np.diff(self.currents_A) > 0]) / self.period_s)


def read_current_waveform(path: str | Path, frequency_Hz: float,
                          shown: str | None = None) -> CurrentWaveform:
    """Read, check and take one period of a current waveform file.

    Parameters
    ----------
    path : str or Path  The CSV file [-]
    frequency_Hz : float  Switching frequency; the period taken is 1 / frequency [Hz]
    shown : str, optional  Name of the file in problems; default ``str(path)`` [-]

    Returns
    -------
    CurrentWaveform

    Raises
    ------
    InputError
        One problem, ``file:line: message``: no such file, not UTF-8, a wrong header, a
        row that is not two finite numbers, time not increasing, too few samples, shorter
        than one period, or a period that does not close on itself.
    """
    name = str(path) if shown is None else shown

    def fail(line: int | None, message: str) -> InputError:
        return InputError([Problem(name, line, "", message)])

    try:
        text = Path(path).read_bytes().decode("utf-8-sig")
    except FileNotFoundError:
        raise fail(None, "waveform file not found") from None
    except UnicodeDecodeError as error:
        raise fail(None, f"not UTF-8 text (byte {error.start})") from None
    except OSError as error:
        raise fail(None, f"cannot read: {error.strerror}") from None
    rows = csv.reader(text.splitlines())
    header = next(rows, None)
    if header is None or tuple(cell.strip() for cell in header) != HEADER:
        raise fail(1, f"expected the header '{','.join(HEADER)}', got "
                      f"'{','.join(header or [])}'"[:200])
    times: list[float] = []
    currents: list[float] = []
    lines: list[int] = []
    for number, row in enumerate(rows, start=2):
        if not row or all(not cell.strip() for cell in row):
            continue
        if len(row) != 2:
            raise fail(number, f"expected two values (time_s, current_A), got {len(row)}")
        try:
            t, i = float(row[0]), float(row[1])
        except ValueError:
            raise fail(number, "time_s and current_A must be numbers") from None
        if not (math.isfinite(t) and math.isfinite(i)):
            raise fail(number, "time_s and current_A must be finite numbers (no NaN or inf)")
        if times and not t > times[-1]:
            raise fail(number, f"time_s must increase: {t:g} s follows {times[-1]:g} s")
        times.append(t)
        currents.append(i)
        lines.append(number)
        if len(times) > MAX_SAMPLES:
            raise fail(number, f"more than {MAX_SAMPLES} samples")
    last_line = lines[-1] if lines else 1
    if len(times) < MIN_SAMPLES:
        raise fail(last_line, f"too few samples: {len(times)}; at least {MIN_SAMPLES}")
    period = 1.0 / float(frequency_Hz)
    t = np.asarray(times)
    i = np.asarray(currents)
    span = t[-1] - t[0]
    if span < period * (1.0 - PERIOD_TOLERANCE):
        raise fail(last_line, f"the samples span {span:.6g} s, less than one switching period "
                              f"({period:.6g} s at the study's switching frequency)")
    start = max(t[-1] - period, t[0])
    inside = t > start
    count = int(np.count_nonzero(inside)) + 1
    if count < MIN_SAMPLES:
        raise fail(last_line, f"too few samples in the last period: {count}; at least "
                              f"{MIN_SAMPLES}")
    start_current = float(np.interp(start, t, i))
    period_t = np.concatenate([[start], t[inside]]) - start
    period_i = np.concatenate([[start_current], i[inside]])
    swing = float(period_i.max() - period_i.min())
    mismatch = abs(period_i[-1] - period_i[0])
    if mismatch > max(PERIODIC_TOLERANCE * swing, PERIODIC_ABS_A):
        raise fail(last_line, f"not periodic: the current ends the last period at "
                              f"{period_i[-1]:.6g} A but starts it at {period_i[0]:.6g} A "
                              f"(one period is {period:.6g} s)")
    period_i[-1] = period_i[0]
    period_t[-1] = period
    keep = _thin(period_t, period_i, swing)
    times_s, currents_A = period_t[keep], period_i[keep]
    for array in (times_s, currents_A):
        array.setflags(write=False)
    return CurrentWaveform(path=str(path), times_s=times_s, currents_A=currents_A)


def _thin(times: NDArray[np.float64], currents: NDArray[np.float64],
          swing: float) -> NDArray[np.intp]:
    """Indices of the vertices kept: a sample is dropped where the straight line between the
    kept vertices around it passes within the tolerance (Ramer-Douglas-Peucker on the
    current; U. Ramer, Computer Graphics and Image Processing 1(3), 1972, pp. 244-256)."""
    tolerance = THIN_TOLERANCE * max(swing, PERIODIC_ABS_A)
    while True:
        keep = np.zeros(times.size, dtype=bool)
        keep[[0, -1]] = True
        stack = [(0, times.size - 1)]
        while stack:
            a, b = stack.pop()
            if b - a < 2:
                continue
            inner = np.arange(a + 1, b)
            line = currents[a] + (currents[b] - currents[a]) * (
                (times[inner] - times[a]) / (times[b] - times[a]))
            error = np.abs(currents[inner] - line)
            worst = int(np.argmax(error))
            if error[worst] > tolerance:
                split = int(inner[worst])
                keep[split] = True
                stack.extend([(a, split), (split, b)])
        if np.count_nonzero(keep) <= MAX_VERTICES:
            return np.flatnonzero(keep)
        tolerance *= 2.0
