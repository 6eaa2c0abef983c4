"""Current waveform files: malformed files give one `file:line: message` problem, never a
traceback; a good file gives one period, its vertices thinned without changing the wave."""

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from optimag.errors import InputError
from optimag.study.waveform import piecewise_linear_harmonics
from optimag.study.waveform_file import read_current_waveform
from tests.search.conftest import write_tiny_study

HERE = Path(__file__).parent / "waveforms"
FREQUENCY = 150e3  # the tiny study's switching frequency

# file -> (line of the problem, words of the message)
MALFORMED = {
    "wrong-header.csv": (1, "expected the header 'time_s,current_A'"),
    "nan.csv": (3, "finite numbers (no NaN or inf)"),
    "not-increasing.csv": (4, "time_s must increase"),
    "too-few.csv": (3, "too few samples: 2"),
    "not-periodic.csv": (4, "not periodic"),
    "too-short.csv": (4, "less than one switching period"),
    "not-a-number.csv": (3, "must be numbers"),
    "three-columns.csv": (3, "expected two values"),
}


@pytest.mark.parametrize("name", sorted(MALFORMED))
def test_malformed_waveform_names_file_and_line(name):
    line, words = MALFORMED[name]
    with pytest.raises(InputError) as caught:
        read_current_waveform(HERE / name, FREQUENCY)
    (problem,) = caught.value.problems
    assert problem.file == str(HERE / name)
    assert problem.line == line
    assert words in problem.message
    assert str(problem).startswith(f"{HERE / name}:{line}: ")


def test_missing_file_is_named():
    with pytest.raises(InputError, match="waveform file not found"):
        read_current_waveform(HERE / "nowhere.csv", FREQUENCY)


def _study_with_waveform(tmp_path, csv_text: str) -> Path:
    path = write_tiny_study(tmp_path)
    (tmp_path / "sim.csv").write_text(csv_text, encoding="utf-8")
    text = path.read_text(encoding="utf-8").replace(
        'input_V = 12.0\noutput_V = 5.0\nload_A = 4.0', 'current_waveform = "sim.csv"')
    path.write_text(text, encoding="utf-8")
    return path


def test_check_reports_a_bad_waveform_as_file_line_and_exits_2(tmp_path):
    """`optimag check` on a study whose waveform file has a NaN: exit 2, one line naming
    the CSV file and line, no traceback."""
    path = _study_with_waveform(tmp_path, "time_s,current_A\n0,1\n1e-6,nan\n")
    result = subprocess.run([sys.executable, "-m", "optimag", "check", str(path)],
                            capture_output=True, text=True, timeout=300)
    assert result.returncode == 2
    assert "Traceback" not in result.stderr
    assert f"{tmp_path / 'sim.csv'}:3: " in result.stderr


def test_waveform_point_takes_no_converter_keys(tmp_path):
    from optimag.study import load_study

    path = _study_with_waveform(tmp_path, "time_s,current_A\n0,1\n1e-6,2\n6.6667e-6,1\n")
    text = path.read_text(encoding="utf-8").replace(
        'current_waveform = "sim.csv"', 'current_waveform = "sim.csv"\nload_A = 4.0')
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as caught:
        load_study(path)
    assert any(p.field == "operating_points[1].load_A" for p in caught.value.problems)


def test_last_whole_period_is_taken_and_thinned_exactly():
    """Three periods of a sampled triangle (valley 1 A, peak 3 A, rise 40 %): the last
    period is taken, the 3,000 samples thin to the triangle's vertices, and its harmonics
    equal the closed-form triangle's (Oppenheim & Willsky ch. 3 via
    `piecewise_linear_harmonics`)."""
    period = 1 / FREQUENCY
    t = np.linspace(0, 3 * period, 3001)
    phase = (t / period) % 1.0
    i = np.where(phase < 0.4, 1 + 2 * phase / 0.4, 3 - 2 * (phase - 0.4) / 0.6)
    import tempfile

    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "tri.csv"
        path.write_text("time_s,current_A\n" + "\n".join(
            f"{float(a)!r},{float(b)!r}" for a, b in zip(
            t, i, strict=True)) + "\n", encoding="utf-8")
        wave = read_current_waveform(path, FREQUENCY)
    assert wave.times_s.size <= 4
    assert wave.period_s == pytest.approx(period, rel=1e-12)
    assert wave.mean_A == pytest.approx(2.0, rel=1e-6)
    assert wave.rms_A == pytest.approx(np.sqrt(4 + 4 / 12), rel=1e-6)
    exact = piecewise_linear_harmonics([0, 0.4 * period, period], [1, 3, 1], 25)
    got = piecewise_linear_harmonics(wave.times_s, wave.currents_A, 25)
    np.testing.assert_allclose(got, exact, rtol=1e-5, atol=1e-9)


from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

_CELL = st.one_of(st.floats(allow_nan=True, allow_infinity=True).map(repr),
                  st.text(max_size=6), st.just(""), st.just("1e-6"))


@settings(max_examples=150, deadline=None)
@given(header=st.sampled_from(["time_s,current_A", "time_s;current_A", "", "t,i"]),
       rows=st.lists(st.lists(_CELL, min_size=0, max_size=3), max_size=12))
def test_any_file_is_read_or_refused_in_one_line(tmp_path_factory, header, rows):
    """Whatever the file holds, the reader returns a waveform or raises InputError naming
    the file (never another exception)."""
    path = tmp_path_factory.mktemp("w") / "any.csv"
    text = header + "\n" + "\n".join(",".join(r) for r in rows)
    path.write_bytes(text.encode("utf-8", "replace"))
    try:
        wave = read_current_waveform(path, FREQUENCY)
    except InputError as error:
        assert all(p.file == str(path) for p in error.problems)
    else:
        assert np.all(np.diff(wave.times_s) > 0)
        assert wave.currents_A[0] == wave.currents_A[-1]
