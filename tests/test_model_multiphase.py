"""Multiphase buck: each phase's inductor carries its share; the output-ripple cancellation.

Sources: the interleaved-buck ripple cancellation factor K(D, N) = N (D − m/N)((m+1)/N − D)
/ (D (1 − D)), m = floor(N D) (Zhou, Wong, Xu, Lee, Huang, IEEE Trans. Power Electron.
15(6), 2000; recalled from memory; listed in tests/data/check_values.md), checked here
against an independent numerical sum of N triangles shifted by T/N; the per-phase buck
relations of Erickson & Maksimović ch. 2.
"""

import numpy as np
import pytest

from optimag import model, records
from optimag.catalog import load_catalog
from optimag.study import load_study
from optimag.study.linecycle import interleaved_ripple_factor
from optimag.study.operating import interleaved_output_ripple
from tests.search.conftest import write_tiny_study


def _shifted_triangles(duty, phases, samples=20000):
    """Independent sum of shifted triangles of 1 A peak to peak (own code, not optimag's)."""
    t = np.arange(samples) / samples
    total = np.zeros(samples)
    for q in range(phases):
        x = (t + q / phases) % 1.0
        total += np.where(x < duty, x / duty, (1 - x) / (1 - duty))
    return np.ptp(total)


@pytest.mark.parametrize("phases", [1, 2, 3, 4, 6])
def test_cancellation_factor_matches_shifted_triangles(phases):
    for duty in np.linspace(0.03, 0.97, 33):
        expected = _shifted_triangles(duty, phases)
        assert interleaved_ripple_factor(duty, phases) == pytest.approx(
            expected, abs=2e-3), duty
        assert interleaved_output_ripple(duty, 1.0, phases) == pytest.approx(
            expected, abs=2e-3)


def test_cancellation_is_complete_at_whole_multiples():
    """K = 0 where N D is a whole number; K = 1 for one phase."""
    for n in (2, 3, 4, 5):
        for m in range(1, n):
            assert interleaved_ripple_factor(m / n, n) == pytest.approx(0.0, abs=1e-12)
    assert np.allclose(interleaved_ripple_factor(np.linspace(0.1, 0.9, 9), 1), 1.0)


def _spaces(tmp_path):
    (tmp_path / "a").mkdir()
    buck = write_tiny_study(tmp_path / "a")
    text = buck.read_text(encoding="utf-8")
    multi = tmp_path / "multi.toml"
    multi.write_text(
        text.replace('topology = "buck"', 'topology = "multiphase-buck"\nphases = 3')
        .replace("load_A = 3.0", "load_A = 9.0").replace("load_A = 4.0", "load_A = 12.0"),
        encoding="utf-8")
    out = []
    for path in (buck, multi):
        study = load_study(path)
        out.append((study, model.build_design_space(study, load_catalog(study.catalog.path))))
    return out


def test_each_phase_is_a_buck_carrying_its_share(tmp_path):
    """Three phases carrying 9 A and 12 A give each inductor exactly the figures of a buck
    carrying 3 A and 4 A at the same switching frequency (ripple of one phase)."""
    (_, single), (multi_study, multi) = _spaces(tmp_path)
    cand = model.Candidates.from_arrays(
        core=np.arange(len(single.cores.ids)), stack=1, material=0, turns=20, gap_option=0,
        wire=0, parallel=1)
    a, b = model.evaluate(single, cand), model.evaluate(multi, cand)
    for name in ("core_loss_W", "winding_ac_loss_W", "winding_dc_loss_W", "peak_current_A",
                 "ripple_A", "temperature_C", "weighted_loss_W"):
        np.testing.assert_allclose(b[name], a[name], rtol=1e-12, err_msg=name)
    np.testing.assert_allclose(multi.operating.load_A, [9.0, 12.0])
    np.testing.assert_allclose(multi.operating.dc_A, [3.0, 4.0])
    # The record's cancellation: K(D, 3) times the phase ripple in CCM.
    for k in range(2):
        part = records._interleaving(multi.operating, b, 0, k)
        duty = multi_study.operating_points[k].output_V / multi_study.operating_points[k].input_V
        assert part["ripple_cancellation"] == pytest.approx(
            float(interleaved_ripple_factor(duty, 3)), rel=1e-12)
        if not b["dcm"][0, k]:
            assert part["output_ripple_A"] == pytest.approx(
                part["ripple_cancellation"] * b["ripple_A"][0, k], rel=2e-3)
