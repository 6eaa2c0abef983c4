"""Study files: loading, defaults, derived values and problem reports.

The derived inductance is checked against the CCM relations of Erickson & Maksimović,
Fundamentals of Power Electronics, ch. 2 (check_values.md "Waveforms"). What the
loader accepts and rejects is the study-file schema itself (common practice, no
source).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pydantic
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from optimag.errors import InputError
from optimag.study import Study, load_study, operating_waveforms, parse_study

REPO = Path(__file__).resolve().parents[2]
STUDIES = REPO / "studies"
EXAMPLES = ["cargo-bike-buck", "solar-pump-boost", "compute-pol-buck"]

MINIMAL = """\
[study]
name = "minimal"
title = "Minimal <b>study</b> & friends"

[converter]
topology = "{topology}"
switching_frequency_kHz = {frequency_kHz}

{points}
{inductor}
[search]
turns_max = 30

[catalog]
path = "catalogue"
"""


def point_table(name: str, vi: float, vo: float, load: float, share: float) -> str:
    return (
        f'[[operating_points]]\nname = "{name}"\ninput_V = {vi!r}\noutput_V = {vo!r}\n'
        f"load_A = {load!r}\ntime_share = {share!r}\n"
    )


def write_study(folder: Path, text: str, name: str = "study.toml") -> Path:
    (folder / "catalogue").mkdir(exist_ok=True)
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def minimal_text(
    topology: str = "buck",
    points: str | None = None,
    inductor: str = "[inductor]\ninductance_uH = 22\n",
    frequency_kHz: float = 200,
) -> str:
    if points is None:
        points = point_table("nominal", 24.0, 5.0, 3.0, 1.0)
    return MINIMAL.format(
        topology=topology, frequency_kHz=frequency_kHz, points=points, inductor=inductor
    )


def problems_of(path: Path) -> list:
    with pytest.raises(InputError) as caught:
        load_study(path)
    return caught.value.problems


# --- the example studies ------------------------------------------------------------


@pytest.mark.parametrize("name", EXAMPLES)
def test_example_studies_load(name: str) -> None:
    path = STUDIES / f"{name}.toml"
    study = load_study(path)
    assert study.name == name
    assert study.path == path.resolve()
    assert study.source_text == path.read_text(encoding="utf-8")
    assert study.catalog.path == (REPO / "catalogs" / "demo").resolve()
    assert study.search.turns_max <= 60
    assert study.search.stack_max <= 2
    assert study.search.parallel_max <= 3
    assert study.required_inductance_H > 0
    assert path.read_text(encoding="utf-8").startswith("#")


def test_cargo_bike_inductance_from_ripple() -> None:
    # Buck, Erickson & Maksimović ch. 2: ΔI = (Vi − Vo) D / (L f), D = Vo/Vi, ΔI = r Io.
    study = load_study(STUDIES / "cargo-bike-buck.toml")
    vi, vo, load, f, r = 54.0, 12.0, 2.0, 200e3, 0.3
    expected = (vi - vo) * (vo / vi) / (f * r * load)
    assert study.required_inductance_H == pytest.approx(expected, rel=1e-12)
    assert study.frequency_Hz == 200e3


def test_compute_pol_study_is_flat_and_fast() -> None:
    study = load_study(STUDIES / "compute-pol-buck.toml")
    assert study.limits.max_height_mm is not None and study.limits.max_height_mm <= 8
    assert study.frequency_Hz == 500e3
    waveforms = operating_waveforms(study)
    assert [w.name for w in waveforms] == ["full-load", "idle"]
    assert waveforms[0].ripple_pp_A == pytest.approx(0.35 * 25.0, rel=1e-12)


def test_operating_waveforms_defaults_and_overrides() -> None:
    study = load_study(STUDIES / "solar-pump-boost.toml")
    default = operating_waveforms(study)
    assert len(default) == 3
    assert all(w.harmonics_A.shape == (study.search.harmonics,) for w in default)
    assert math.fsum(w.time_share for w in default) == pytest.approx(1.0, abs=1e-12)
    halved = operating_waveforms(study, inductance_H=study.required_inductance_H / 2, harmonics=40)
    assert halved[0].harmonics_A.shape == (40,)
    for full, half in zip(default, halved, strict=True):
        if not (full.dcm or half.dcm):
            # CCM ripple is inversely proportional to L (Erickson & Maksimović ch. 2).
            assert half.ripple_pp_A == pytest.approx(2 * full.ripple_pp_A, rel=1e-12)


# --- derived inductance per topology -------------------------------------------------


def test_boost_and_buck_boost_inductance_from_ripple(tmp_path: Path) -> None:
    inductor = '[inductor]\nripple_fraction = 0.4\nripple_point = "p"\n'
    points = point_table("p", 12.0, 30.0, 2.0, 1.0)
    boost = load_study(write_study(tmp_path, minimal_text("boost", points, inductor), "b.toml"))
    duty = 1 - 12.0 / 30.0  # boost D = 1 − Vi/Vo, I_L = Io/(1 − D), ΔI = Vi D/(L f)
    expected = 12.0 * duty / (200e3 * 0.4 * 2.0 / (1 - duty))
    assert boost.required_inductance_H == pytest.approx(expected, rel=1e-12)

    inverting = load_study(
        write_study(tmp_path, minimal_text("buck-boost", points, inductor), "bb.toml")
    )
    duty = 30.0 / (12.0 + 30.0)  # inverting buck-boost D = Vo/(Vi + Vo)
    expected = 12.0 * duty / (200e3 * 0.4 * 2.0 / (1 - duty))
    assert inverting.required_inductance_H == pytest.approx(expected, rel=1e-12)


def test_inductance_given_directly(tmp_path: Path) -> None:
    study = load_study(write_study(tmp_path, minimal_text()))
    assert study.required_inductance_H == pytest.approx(22e-6, rel=1e-15)
    assert study.ripple_point is None


def test_omitted_inductor_uses_default_ripple_at_worst_point(tmp_path: Path) -> None:
    points = (
        point_table("low", 36.0, 12.0, 4.0, 0.5) + "\n" + point_table("high", 54.0, 12.0, 4.0, 0.5)
    )
    study = load_study(write_study(tmp_path, minimal_text("buck", points, "")))
    assert study.inductor.ripple_fraction == 0.4
    assert study.ripple_point is not None and study.ripple_point.name == "high"
    ratios = [w.ripple_pp_A / w.dc_A for w in operating_waveforms(study)]
    assert max(ratios) == pytest.approx(0.4, rel=1e-12)
    assert min(ratios) < 0.4


# --- defaults, paths, immutability -------------------------------------------------


def test_defaults_of_omitted_sections(tmp_path: Path) -> None:
    study = load_study(write_study(tmp_path, minimal_text()))
    assert study.limits.ambient_C == 40.0
    assert study.limits.max_temperature_C == 100.0
    assert study.limits.max_height_mm is None
    assert study.limits.flux_margin == 0.8
    assert study.limits.max_fill_factor == 0.5
    assert study.inductor.inductance_tolerance_pct == 10.0
    assert study.inductor.min_fraction_at_peak == 0.8
    assert study.search.objectives == ("volume", "loss", "cost")
    assert study.search.strategy == "exhaustive"
    assert (study.search.harmonics, study.search.trials, study.search.seed) == (25, 2000, 0)
    assert (study.search.sampler, study.search.batch_size, study.search.gap) == (
        "nsga2",
        64,
        "solve",
    )
    assert (study.model.fringing, study.model.thermal) == ("leg_edges", "faces")
    assert (study.cooling.mode, study.cooling.core_emissivity) == ("free_air", 0.9)
    assert study.cooling.winding_emissivity == 0.85
    assert (study.cost.labour_per_turn, study.cost.currency) == (0.02, "cu")
    assert study.title == "Minimal <b>study</b> & friends"


def test_catalogue_path_is_relative_to_the_study_file(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    path = write_study(tmp_path, minimal_text())
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)
    study = load_study(Path("..") / "study.toml")
    assert study.catalog.path == (tmp_path / "catalogue").resolve()
    assert study.catalog.path.is_absolute()
    assert study.path == path.resolve()


def test_study_is_frozen(tmp_path: Path) -> None:
    study = load_study(write_study(tmp_path, minimal_text()))
    with pytest.raises(pydantic.ValidationError):
        study.limits = study.limits  # type: ignore[misc]
    with pytest.raises(pydantic.ValidationError):
        study.converter.switching_frequency_kHz = 1.0  # type: ignore[misc]


def test_grid_gap_with_spacers_is_accepted(tmp_path: Path) -> None:
    text = minimal_text().replace(
        "turns_max = 30", 'turns_max = 30\ngap = "grid"\ngap_grid_mm = [0.1, 0.25, 0.5]'
    )
    study = load_study(write_study(tmp_path, text))
    assert study.search.gap_grid_mm == (0.1, 0.25, 0.5)


def test_integers_are_accepted_where_numbers_are_expected(tmp_path: Path) -> None:
    study = load_study(write_study(tmp_path, minimal_text(frequency_kHz=100)))
    assert isinstance(study.converter.switching_frequency_kHz, float)


def test_direct_model_validation_applies_the_same_cross_checks(tmp_path: Path) -> None:
    data = {
        "study": {"name": "direct", "title": "t"},
        "converter": {"topology": "buck", "switching_frequency_kHz": 100.0},
        "operating_points": [
            {"name": "a", "input_V": 5.0, "output_V": 12.0, "load_A": 1.0, "time_share": 1.0}
        ],
        "search": {"turns_max": 10},
        "catalog": {"path": str(tmp_path)},
    }
    with pytest.raises(pydantic.ValidationError, match="a buck steps down"):
        Study.model_validate(data)


# --- problem reports ---------------------------------------------------------------


def test_every_problem_is_reported_with_its_line(tmp_path: Path) -> None:
    text = minimal_text().replace("turns_max = 30", "turns_max = 30\nturns_min = 40")
    text = text.replace('topology = "buck"', 'topology = "buck"\nswitching_frequency = 1')
    text = text.replace("load_A = 3.0", "load_A = -3.0")
    text += "\n[limits]\nambient_C = 80\nmax_temperature_C = 70\n"
    path = write_study(tmp_path, text)
    problems = problems_of(path)
    by_field = {p.field: p for p in problems}
    assert set(by_field) == {
        "converter.switching_frequency",
        "operating_points[0].load_A",
        "search.turns_min",
        "limits.max_temperature_C",
    }
    lines = text.splitlines()
    for field, problem in by_field.items():
        key = field.rsplit(".", 1)[-1]
        assert lines[problem.line - 1].startswith(key), (field, problem.line)
        assert problem.file == str(path)
    assert (
        "did you mean 'switching_frequency_kHz'?"
        in by_field["converter.switching_frequency"].message
    )


def test_point_index_and_line_for_a_later_point(tmp_path: Path) -> None:
    points = "\n".join(
        point_table(f"p{i}", 24.0, 5.0 if i != 2 else 30.0, 1.0, 0.25) for i in range(4)
    )
    path = write_study(tmp_path, minimal_text("buck", points))
    (problem,) = problems_of(path)
    assert problem.field == "operating_points[2].output_V"
    assert path.read_text().splitlines()[problem.line - 1] == "output_V = 30.0"
    assert "'p2'" in problem.message


def test_missing_file_and_folder_and_bad_encoding(tmp_path: Path) -> None:
    (problem,) = problems_of(tmp_path / "absent.toml")
    assert "not found" in problem.message
    (problem,) = problems_of(tmp_path)
    assert "folder" in problem.message
    binary = tmp_path / "binary.toml"
    binary.write_bytes(b'[study]\nname = "\xff\xfe"\n')
    (problem,) = problems_of(binary)
    assert "UTF-8" in problem.message


def test_parse_error_reports_the_parser_line(tmp_path: Path) -> None:
    text = minimal_text().replace("turns_max = 30", "turns_max = = 30")
    (problem,) = problems_of(write_study(tmp_path, text))
    assert problem.line == text.splitlines().index("turns_max = = 30") + 1
    assert problem.message.startswith("not valid TOML")


def test_problem_text_never_shows_pydantic_dumps(tmp_path: Path) -> None:
    text = minimal_text().replace("load_A = 3.0", 'load_A = "3 A"')
    text = text.replace("turns_max = 30", 'turns_max = 30\nobjectives = "volume"')
    problems = problems_of(write_study(tmp_path, text))
    joined = "\n".join(str(p) for p in problems)
    for leak in ("validation error", "input_value", "pydantic", "For further information"):
        assert leak not in joined
    assert "expected a number, got the text '3 A'" in joined
    assert "expected a list" in joined


# --- property test: any valid study gives finite derived values ------------------------


@st.composite
def valid_studies(draw: st.DrawFn) -> str:
    topology = draw(st.sampled_from(["buck", "boost", "buck-boost"]))
    count = draw(st.integers(min_value=1, max_value=5))
    weights = draw(st.lists(st.floats(0.01, 1.0), min_size=count, max_size=count))
    shares = [w / math.fsum(weights) for w in weights]
    shares[-1] = 1.0 - math.fsum(shares[:-1])
    points = []
    for index, share in enumerate(shares):
        low = draw(st.floats(0.1, 200.0))
        ratio = draw(st.floats(1.01, 50.0))
        vi, vo = (low * ratio, low) if topology == "buck" else (low, low * ratio)
        load = draw(st.floats(1e-3, 1e3))
        points.append(point_table(f"p{index}", vi, vo, load, share))
    if draw(st.booleans()):
        inductor = f"[inductor]\ninductance_uH = {draw(st.floats(1e-3, 1e5))!r}\n"
    else:
        fraction = draw(st.floats(0.01, 2.0))
        which = draw(st.integers(0, count - 1))
        inductor = f'[inductor]\nripple_fraction = {fraction!r}\nripple_point = "p{which}"\n'
    frequency = draw(st.floats(1.0, 1e4))
    return minimal_text(topology, "\n".join(points), inductor, frequency)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(text=valid_studies())
def test_valid_studies_give_finite_inductance_and_waveforms(text: str) -> None:
    folder = Path(__file__).resolve().parent
    # The catalogue must exist beside the study; this test folder has no "catalogue",
    # so point it at the test folder itself.
    try:
        study = parse_study(
            text.replace('path = "catalogue"', 'path = "."'), folder / "virtual.toml"
        )
    except InputError as error:
        # Every number is in its range, but a ripple fraction can still ask for an
        # inductance outside the plausible range; that is refused, not computed.
        assert all("outside the plausible range" in p.message for p in error.problems), error
        assume(False)
    assert np.isfinite(study.required_inductance_H) and study.required_inductance_H > 0
    for waveform in operating_waveforms(study, harmonics=15):
        assert np.all(np.isfinite([waveform.rms_A, waveform.peak_A, waveform.dc_A]))
        assert np.all(np.isfinite(waveform.harmonics_A))
