"""The operating points of a study as arrays for the model: points and their instants.

An operating point of a DC-DC converter is one switching period: one *instant*. A
line-cycle point (pfc-boost, inverter-filter) is several instants over the line cycle
(`optimag.study.linecycle`), each a quasi-static switching period with its share of the
point's time; a point given by a current-waveform file is one instant whose current is
imposed. The model evaluates every instant like a DC-DC point with each design's own
inductance and averages (`OperatingArrays.mean`) or takes the worst (`OperatingArrays.most`)
over the instants of a point. Instants are stored point by point, in the study's order.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from optimag.study import linecycle
from optimag.study.waveform import (
    current_shape_from_voltages,
    inductor_voltages,
    piecewise_linear_harmonics,
    pulse_harmonics,
)

if TYPE_CHECKING:
    from optimag.study.file import Study
    from optimag.study.waveform_file import CurrentWaveform


def grid_spectrum(amplitude, rise, fall, harmonics: int, multiplier) -> np.ndarray:
    """Harmonic amplitudes (J, H) on the switching-frequency grid of pulses whose own
    period is the switching period over ``multiplier`` (1 or 2): harmonic n of the pulse
    is harmonic ``multiplier n`` of the grid (`pulse_harmonics`)."""
    amplitude, rise, fall, multiplier = np.broadcast_arrays(
        np.asarray(amplitude, dtype=float), np.asarray(rise, dtype=float),
        np.asarray(fall, dtype=float), np.asarray(multiplier, dtype=np.int64))
    out = np.zeros((*amplitude.shape, harmonics))
    for m in np.unique(multiplier):
        rows = multiplier == m
        own = harmonics // int(m)
        if own:
            out[rows, int(m) - 1::int(m)] = pulse_harmonics(
                amplitude[rows], rise[rows], fall[rows], own)[..., : len(range(
                    int(m) - 1, harmonics, int(m)))]
    return out


@dataclass(frozen=True)
class OperatingArrays:
    """Operating points (K) and their instants (J >= K), at the required inductance.

    Per point: ``names``, ``share`` (time share), ``input_V``, ``output_V``, ``load_A``
    (line-cycle points: line or DC-link voltage, bus or grid voltage, load or grid current;
    see `from_study`). Per instant: the rest. ``point`` maps each instant to its point,
    ``weight`` is its share of its point's time.
    """

    names: tuple[str, ...]
    share: np.ndarray  # (K,)
    frequency_Hz: float
    dcm: np.ndarray  # (J,) bool
    rise: np.ndarray  # (J,)
    fall: np.ndarray  # (J,)
    dc_A: np.ndarray  # (J,) switching-period average current (magnitude)
    ripple_A: np.ndarray  # (J,) peak to peak
    harmonics_A: np.ndarray  # (J, H) on the switching-frequency grid
    input_V: np.ndarray  # (K,)
    output_V: np.ndarray  # (K,)
    load_A: np.ndarray  # (K,)
    rise_V: np.ndarray  # (J,) inductor voltage magnitude while the current rises
    fall_V: np.ndarray  # (J,) inductor voltage magnitude while the current falls
    point: np.ndarray | None = None  # (J,) index of each instant's point; None: one each
    weight: np.ndarray | None = None  # (J,) share of its point's time; None: 1
    multiplier: np.ndarray | None = None  # (J,) ripple frequency / switching frequency
    bidirectional: np.ndarray | None = None  # (J,) bool: no discontinuous conduction
    angle_rad: np.ndarray | None = None  # (J,) line angle (0 for DC-DC)
    line_V: np.ndarray | None = None  # (J,) line voltage at the instant (0 for DC-DC)
    #: Per instant: the imposed current (times_s, currents_A) of a waveform file, or None.
    waveforms: tuple = ()
    topology: str = "buck"
    phases: int = 1
    line_frequency_Hz: np.ndarray | None = None  # (K,); 0 for a DC-DC point
    _unit: np.ndarray | None = field(default=None, repr=False)

    # --- construction ------------------------------------------------------------------

    @classmethod
    def from_waveforms(cls, waveforms, topology: str) -> OperatingArrays:
        """DC-DC points from `optimag.study.waveform.Waveform` objects (one instant each)."""
        rise_V, fall_V, _ = inductor_voltages(
            topology, [w.input_V for w in waveforms], [w.output_V for w in waveforms], 0.0
        )
        return cls(
            names=tuple(w.name for w in waveforms),
            share=np.array([w.time_share for w in waveforms], dtype=float),
            frequency_Hz=float(waveforms[0].frequency_Hz),
            dcm=np.array([w.dcm for w in waveforms], dtype=bool),
            rise=np.array([w.rise_fraction for w in waveforms], dtype=float),
            fall=np.array([w.fall_fraction for w in waveforms], dtype=float),
            dc_A=np.array([w.dc_A for w in waveforms], dtype=float),
            ripple_A=np.array([w.ripple_pp_A for w in waveforms], dtype=float),
            harmonics_A=np.stack([np.asarray(w.harmonics_A, dtype=float) for w in waveforms]),
            input_V=np.array([w.input_V for w in waveforms], dtype=float),
            output_V=np.array([w.output_V for w in waveforms], dtype=float),
            load_A=np.array([w.load_A for w in waveforms], dtype=float),
            rise_V=np.asarray(rise_V, dtype=float),
            fall_V=np.asarray(fall_V, dtype=float),
            topology=topology,
        )

    @classmethod
    def from_study(cls, study: Study, inductance_H: float | None = None) -> OperatingArrays:
        """Points and instants of a validated study at an inductance (default the study's
        required inductance).

        * buck, boost, buck-boost: one instant per point (`from_waveforms`);
        * multiphase-buck: one phase of a buck carrying ``load_A / phases``;
        * pfc-boost, inverter-filter: ``converter.line_steps`` instants per point
          (`optimag.study.linecycle`); per point, ``input_V`` is the line RMS voltage
          (pfc-boost) or the DC link (inverter-filter), ``output_V`` the bus voltage or
          the grid RMS voltage, ``load_A`` the load (P / V_o) or grid RMS current;
        * a point given by ``current_waveform``: one instant with the file's current
          (`optimag.study.waveform_file`), input and output voltage and load 0.
        """
        from optimag.study.waveform import operating_waveforms
        from optimag.study.waveform_file import read_current_waveform

        conv = study.converter
        if conv.topology in ("buck", "boost", "buck-boost") and not any(
                p.current_waveform for p in study.operating_points):
            return cls.from_waveforms(operating_waveforms(study, inductance_H),
                                      conv.topology)
        topology = conv.topology
        frequency = study.frequency_Hz
        inductance = study.required_inductance_H if inductance_H is None else inductance_H
        count = study.search.harmonics
        phases = conv.phases or 1
        rows: list[dict] = []
        per_point: list[tuple[float, float, float, float]] = []
        for k, p in enumerate(study.operating_points):
            if p.current_waveform is not None:
                wave = read_current_waveform(study.waveform_path(p), frequency)
                rows.append(_file_instant(k, wave))
                per_point.append((0.0, 0.0, 0.0, 0.0))
                continue
            if topology in ("pfc-boost", "inverter-filter"):
                from optimag.study.file import line_instants

                inst = line_instants(conv, p)
                for j in range(inst.angle_rad.size):
                    rows.append({
                        "point": k, "weight": inst.weight[j], "rise_V": inst.rise_V[j],
                        "fall_V": inst.fall_V[j], "dc_A": inst.average_A[j],
                        "multiplier": int(inst.frequency_multiplier[j]),
                        "bidirectional": bool(inst.bidirectional[j]),
                        "angle_rad": inst.angle_rad[j], "line_V": inst.line_V[j],
                    })
                if topology == "pfc-boost":
                    per_point.append((p.line_V_rms, p.output_V, p.power_W / p.output_V,
                                      p.line_frequency_Hz))
                else:
                    per_point.append((p.dc_link_V, p.grid_V_rms, p.grid_A_rms,
                                      p.line_frequency_Hz))
                continue
            kind = "buck" if topology == "multiphase-buck" else topology
            rise_V, fall_V, average = inductor_voltages(
                kind, p.input_V, p.output_V, p.load_A / phases)
            rows.append({"point": k, "weight": 1.0, "rise_V": float(rise_V),
                         "fall_V": float(fall_V), "dc_A": float(average)})
            per_point.append((p.input_V, p.output_V, p.load_A, 0.0))

        def column(key, default, dtype=float):
            return np.array([r.get(key, default) for r in rows], dtype=dtype)

        rise_V, fall_V, dc = column("rise_V", 1.0), column("fall_V", 1.0), column("dc_A", 0.0)
        multiplier = column("multiplier", 1, np.int64)
        bidirectional = column("bidirectional", False, bool)
        waveforms = tuple(r.get("waveform") for r in rows)
        is_file = np.array([w is not None for w in waveforms])
        shape = current_shape_from_voltages(
            rise_V, fall_V, dc, frequency * multiplier, inductance, allow_dcm=~bidirectional)
        dcm = shape.dcm & ~is_file
        rise, fall, ripple = shape.rise_fraction, shape.fall_fraction, shape.ripple_pp_A
        harmonics = grid_spectrum(ripple, rise, fall, count, multiplier)
        for j, wave in enumerate(waveforms):
            if wave is None:
                continue
            dcm[j] = False
            rise[j] = wave.rise_share
            fall[j] = 1.0 - rise[j]
            ripple[j] = float(np.ptp(wave.currents_A))
            harmonics[j] = piecewise_linear_harmonics(wave.times_s, wave.currents_A, count)
        points = np.array([r["point"] for r in rows], dtype=np.int64)
        values = np.array(per_point, dtype=float).reshape(len(per_point), 4)
        return cls(
            names=tuple(p.name for p in study.operating_points),
            share=np.array([p.time_share for p in study.operating_points], dtype=float),
            frequency_Hz=float(frequency),
            dcm=dcm, rise=rise, fall=fall, dc_A=dc, ripple_A=ripple, harmonics_A=harmonics,
            input_V=values[:, 0], output_V=values[:, 1], load_A=values[:, 2],
            rise_V=rise_V, fall_V=fall_V,
            point=points, weight=column("weight", 1.0), multiplier=multiplier,
            bidirectional=bidirectional, angle_rad=column("angle_rad", 0.0),
            line_V=column("line_V", 0.0), waveforms=waveforms, topology=topology,
            phases=phases, line_frequency_Hz=values[:, 3],
        )

    # --- shapes ------------------------------------------------------------------------

    @property
    def n_points(self) -> int:
        return len(self.names)

    @property
    def n_instants(self) -> int:
        return len(self.dc_A)

    @property
    def single(self) -> bool:
        """One instant per point, instant k being point k: reductions are the identity."""
        return self.point is None or self.n_instants == self.n_points

    @property
    def starts(self) -> np.ndarray:
        """Index of each point's first instant (K,)."""
        if self.point is None:
            return np.arange(self.n_points)
        return np.searchsorted(self.point, np.arange(self.n_points))

    @property
    def instant_weight(self) -> np.ndarray:
        return np.ones(self.n_instants) if self.weight is None else self.weight

    @property
    def instant_multiplier(self) -> np.ndarray:
        if self.multiplier is None:
            return np.ones(self.n_instants, dtype=np.int64)
        return self.multiplier

    @property
    def instant_bidirectional(self) -> np.ndarray:
        if self.bidirectional is None:
            return np.zeros(self.n_instants, dtype=bool)
        return self.bidirectional

    @property
    def instant_frequency_Hz(self) -> np.ndarray:
        """Ripple frequency of each instant (J,) [Hz]."""
        return self.frequency_Hz * self.instant_multiplier

    @property
    def from_file(self) -> np.ndarray:
        """True for instants whose current a waveform file imposes (J,)."""
        if not self.waveforms:
            return np.zeros(self.n_instants, dtype=bool)
        return np.array([w is not None for w in self.waveforms])

    @property
    def line_cycle(self) -> bool:
        return self.topology in ("pfc-boost", "inverter-filter")

    @property
    def unit_spectrum(self) -> np.ndarray:
        """Harmonic amplitudes (J, H) of each instant's AC current per unit of the
        design's ``instant_ac_scale``: a CCM triangle of 1 A peak to peak at the instant's
        duty ratio and ripple frequency; a waveform file's own current (scale 1)."""
        count = self.harmonics_A.shape[1]
        duty = self.fall_V / (self.rise_V + self.fall_V)
        unit = grid_spectrum(1.0, duty, 1.0 - duty, count, self.instant_multiplier)
        for j, wave in enumerate(self.waveforms):
            if wave is not None:
                unit[j] = self.harmonics_A[j]
        return unit

    # --- reductions over the instants of each point -------------------------------------

    def mean(self, values: np.ndarray) -> np.ndarray:
        """Time average over each point's instants: (n, J) -> (n, K)."""
        if self.single:
            return values
        return np.add.reduceat(values * self.weight, self.starts, axis=-1)

    def most(self, values: np.ndarray) -> np.ndarray:
        """Largest value over each point's instants: (n, J) -> (n, K)."""
        if self.single:
            return values
        return np.maximum.reduceat(values, self.starts, axis=-1)

    def at_worst(self, values: np.ndarray, worst: np.ndarray) -> np.ndarray:
        """``values`` at the instant of each point where ``worst`` is largest (the line
        peak for the peak current): (n, J) -> (n, K)."""
        if self.single:
            return values
        out = np.empty((*values.shape[:-1], self.n_points), dtype=values.dtype)
        bounds = [*self.starts, self.n_instants]
        for k in range(self.n_points):
            part = worst[..., bounds[k]:bounds[k + 1]]
            pick = np.argmax(part, axis=-1)[..., None] + bounds[k]
            out[..., k] = np.take_along_axis(values, pick, axis=-1)[..., 0]
        return out

    @property
    def point_dc_sq(self) -> np.ndarray:
        """Mean square of the switching-period average current over each point (K,): the
        square of the DC current, or of the line-frequency RMS current [A^2]."""
        return self.mean((self.dc_A**2)[None, :])[0]

    @property
    def peak_A(self) -> np.ndarray:
        """Peak current of each instant at the required inductance (J,)."""
        return np.where(self.dcm, self.ripple_A, self.dc_A + self.ripple_A / 2)

    @property
    def valley_A(self) -> np.ndarray:
        return np.where(self.dcm, 0.0, self.dc_A - self.ripple_A / 2)


def _file_instant(k: int, wave: CurrentWaveform) -> dict:
    return {"point": k, "weight": 1.0, "rise_V": 1.0, "fall_V": 1.0, "dc_A": wave.mean_A,
            "waveform": wave}


def interleaved_output_ripple(rise: float, ripple_A: float, phases: int,
                              fall: float | None = None, samples: int = 4096) -> float:
    """Peak-to-peak of the sum of ``phases`` equal phase currents shifted by one period /
    phases (numerical, one period sampled) [A]: each a triangle rising for ``rise`` of the
    period and falling for ``fall`` (default ``1 - rise``, CCM), zero for the rest (DCM),
    of ``ripple_A`` peak to peak."""
    fall = 1.0 - rise if fall is None else fall
    t = np.arange(samples) / samples
    total = np.zeros(samples)
    for q in range(phases):
        x = (t - q / phases) % 1.0
        total += np.interp(x, [0.0, rise, rise + fall, 1.0], [0.0, 1.0, 0.0, 0.0]) * ripple_A
    return float(np.ptp(total))


__all__ = ["OperatingArrays", "grid_spectrum", "interleaved_output_ripple", "linecycle"]
