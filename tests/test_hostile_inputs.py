"""Random values in every numeric study key and catalogue cell: the loaders and the command
line answer with exit code 0, 1 or 2 and a message, never a traceback (the exit-code
contract of the command line; common practice, no source).

Each example replaces one value of a small valid study or catalogue with a value drawn from
extremes a careless or hostile user might type (1e-300, 1e300, 1.7e308, 2**63, negative
numbers, nan, inf, text, control characters) and runs ``check``, and for a share of the
examples ``explore``, in-process: an uncaught exception fails the test with its traceback.
"""

from __future__ import annotations

import json
import math
import re
import shutil
import uuid
from pathlib import Path

import pytest
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from optimag.catalog import check_catalog, load_catalog
from optimag.cli import main
from optimag.errors import InputError
from optimag.study import load_study

BASE_CATALOGUE = Path(__file__).resolve().parent / "catalog" / "malformed" / "base"

# A small study on the three-row base catalogue: 3 cores x 2 materials x 5 turns x 3 wires.
STUDY = """\
[study]
name = "hostile"
title = "Random values"

[converter]
topology = "buck"
switching_frequency_kHz = 150

[[operating_points]]
name = "only"
input_V = 24.0
output_V = 5.0
load_A = 3.0
time_share = 1.0

[inductor]
inductance_uH = 33.0
inductance_tolerance_pct = 10
min_fraction_at_peak = 0.7

[limits]
ambient_C = 40
max_temperature_C = 100
max_height_mm = 30
max_footprint_mm2 = 2000
max_loss_W = 5.0
flux_margin = 0.8
max_fill_factor = 0.5

[search]
turns_min = 8
turns_max = 12
stack_max = 1
parallel_max = 1
harmonics = 15
seed = 3

[cost]
labour_per_turn = 0.02

[catalog]
path = "catalogue"
"""

STUDY_KEYS = sorted({m.group(1) for m in re.finditer(r"^(\w+) = [-\d]", STUDY, re.M)})

EXTREMES = [0, -1, 1e-300, 1e300, 1.7e308, -1.7e308, 2**63 - 1, 2**63, 2**64, 10**400,
            5e-324, 1e-7, 1e7, 1e8, 4294967296]


def toml_value(value: object) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    return json.dumps(value)


study_values = st.one_of(
    st.sampled_from(EXTREMES),
    st.integers(min_value=-(2**70), max_value=2**70),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=30),
    st.booleans(),
)

cell_texts = st.one_of(
    st.sampled_from(["0", "-1", "1e-300", "1e300", "1.7e308", "1e400", str(2**63),
                     "9" * 40, "nan", "inf", "-0", "1,5", "0x10", "1_000", "E\x00",
                     "\x00", "a" * 200, ""]),
    st.floats(allow_nan=False, allow_infinity=False).map(repr),
    st.integers(min_value=-(2**80), max_value=2**80).map(str),
    st.text(max_size=20).filter(lambda t: "\n" not in t and "\r" not in t),
)


def _assert_clean(code: int, allowed: set[int], capsys: pytest.CaptureFixture[str]) -> None:
    captured = capsys.readouterr()
    assert code in allowed, (code, captured.err[-2000:])
    assert "Traceback" not in captured.err and "Traceback" not in captured.out
    if code == 2:
        assert captured.err.strip(), "a refusal must say why"


def _folder(tmp_path_factory: pytest.TempPathFactory) -> Path:
    folder = tmp_path_factory.mktemp("hostile") / uuid.uuid4().hex[:8]
    shutil.copytree(BASE_CATALOGUE, folder / "catalogue")
    return folder


@pytest.mark.slow
@settings(max_examples=60, deadline=None, suppress_health_check=list(HealthCheck))
@given(key=st.sampled_from(STUDY_KEYS), value=study_values, run=st.booleans())
# A flux margin near zero once made the required Kg infinite in run.json.
@example(key="flux_margin", value=1e-300, run=True)
def test_random_study_value_never_gives_a_traceback(
    key: str, value: object, run: bool, tmp_path_factory: pytest.TempPathFactory,
    capsys: pytest.CaptureFixture[str],
) -> None:
    folder = _folder(tmp_path_factory)
    line = f"{key} = {toml_value(value)}"
    text = re.sub(rf"^{key} = .*$", lambda _: line, STUDY, count=1, flags=re.M)
    path = folder / "study.toml"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    try:
        load_study(path)
    except InputError as error:
        assert error.problems and all(str(p) for p in error.problems)
    _assert_clean(main(["check", str(path)]), {0, 2}, capsys)
    if run:
        code = main(["explore", str(path), "--out", str(folder / "run")])
        _assert_clean(code, {0, 1, 2}, capsys)
        if code in (0, 1):
            # The run record is strict JSON: no NaN or infinity slipped into it.
            json.loads((folder / "run" / "run.json").read_text(encoding="utf-8"),
                       parse_constant=lambda name: pytest.fail(f"{name} in run.json"))


def _set_cell(path: Path, row: int, column: int, text: str) -> None:
    lines = path.read_text(encoding="utf-8").splitlines()
    cells = lines[row].split(",")
    cells[column % len(cells)] = json.dumps(text) if ("," in text or '"' in text) else text
    lines[row] = ",".join(cells)
    path.write_text("\n".join(lines) + "\n", encoding="utf-8", errors="surrogatepass")


@pytest.mark.slow
@settings(max_examples=60, deadline=None, suppress_health_check=list(HealthCheck))
@given(
    table=st.sampled_from(["cores.csv", "materials.csv", "wires.csv"]),
    row=st.integers(min_value=1, max_value=2),
    column=st.integers(min_value=1, max_value=30),
    text=cell_texts,
    run=st.booleans(),
)
def test_random_catalogue_cell_never_gives_a_traceback(
    table: str, row: int, column: int, text: str, run: bool,
    tmp_path_factory: pytest.TempPathFactory, capsys: pytest.CaptureFixture[str],
) -> None:
    folder = _folder(tmp_path_factory)
    _set_cell(folder / "catalogue" / table, row, column, text)
    problems = check_catalog(folder / "catalogue")
    try:
        load_catalog(folder / "catalogue")
        assert not problems
    except InputError as error:
        assert error.problems == problems
    _assert_clean(main(["check", str(folder / "catalogue")]), {0, 2}, capsys)
    if run:
        study = folder / "study.toml"
        study.write_text(STUDY, encoding="utf-8")
        code = main(["explore", str(study), "--out", str(folder / "run")])
        _assert_clean(code, {0, 1, 2}, capsys)


@pytest.mark.parametrize("argument", [["--seed", "-1"], ["--seed", str(2**32)],
                                      ["--trials", "0"], ["--trials", "9" * 30],
                                      ["--top", "-5"], ["--seed", "1e3"]])
def test_command_line_numbers_out_of_range_exit_2(
    argument: list[str], tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    folder = tmp_path
    shutil.copytree(BASE_CATALOGUE, folder / "catalogue")
    study = folder / "study.toml"
    study.write_text(STUDY, encoding="utf-8")
    with pytest.raises(SystemExit) as stopped:
        main(["explore", str(study), *argument])
    assert stopped.value.code == 2
    err = capsys.readouterr().err
    assert argument[0] in err and "Traceback" not in err


def test_symbolic_link_loops_are_named_not_followed(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    (tmp_path / "a").symlink_to(tmp_path / "b")
    (tmp_path / "b").symlink_to(tmp_path / "a")
    (tmp_path / "loop.toml").symlink_to(tmp_path / "loop.toml")
    study = tmp_path / "study.toml"
    study.write_text(STUDY.replace('path = "catalogue"', 'path = "a"'), encoding="utf-8")
    for target, field in ((study, "catalog.path"), (tmp_path / "a", ""),
                          (tmp_path / "loop.toml", "")):
        assert main(["check", str(target)]) == 2
        err = capsys.readouterr().err
        assert "Traceback" not in err
        assert "cannot be opened" in err or "cannot open" in err
        assert field in err
    assert main(["explore", str(study), "--out", str(tmp_path / "run")]) == 2
    assert "catalog.path" in capsys.readouterr().err
