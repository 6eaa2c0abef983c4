"""Numbers outside their plausible range are refused with the key named, never computed
(plausible ranges of `optimag.ranges`; common practice, no source)."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from optimag.cli import main
from optimag.errors import InputError
from optimag.study import load_study

STUDIES = Path(__file__).resolve().parents[2] / "studies"


def _variant(tmp_path: Path, source: str, key: str, value: str) -> Path:
    text = (STUDIES / source).read_text(encoding="utf-8")
    pattern = re.compile(rf"^{re.escape(key)}\s*=.*$", re.M)
    if pattern.search(text):
        text = pattern.sub(f"{key} = {value}", text, count=1)
    else:  # a [search] key the example leaves at its default
        text = text.replace("[search]\n", f"[search]\n{key} = {value}\n", 1)
    text = text.replace('path = "../catalogs/demo"', f'path = "{STUDIES.parent}/catalogs/demo"')
    path = tmp_path / "study.toml"
    path.write_text(text, encoding="utf-8")
    return path


CASES = [
    # (example study, key, value, field named in the problem)
    ("cargo-bike-buck.toml", "switching_frequency_kHz", "1e-300",
     "converter.switching_frequency_kHz"),
    ("cargo-bike-buck.toml", "switching_frequency_kHz", "1e300",
     "converter.switching_frequency_kHz"),
    ("cargo-bike-buck.toml", "switching_frequency_kHz", "1e8", "converter.switching_frequency_kHz"),
    ("cargo-bike-buck.toml", "load_A", "1e300", "operating_points[0].load_A"),
    ("cargo-bike-buck.toml", "input_V", "1e-300", "operating_points[0].input_V"),
    ("compute-pol-buck.toml", "max_height_mm", "1e18", "limits.max_height_mm"),
    ("cargo-bike-buck.toml", "turns_max", "9223372036854775807", "search.turns_max"),
    ("cargo-bike-buck.toml", "turns_max", "100000", "search.turns_max"),
    ("cargo-bike-buck.toml", "seed", "-1", "search.seed"),
    ("cargo-bike-buck.toml", "seed", "4294967296", "search.seed"),
    ("cargo-bike-buck.toml", "ambient_C", "1e300", "limits.ambient_C"),
    ("custom-core-buck.toml", "step_mm", "1e-300", "custom_core.step_mm"),
    ("custom-core-buck.toml", "leg_width_mm", "[3, 1e300]", "custom_core.leg_width_mm"),
    ("custom-core-buck.toml", "leg_width_mm", "[3, 99999999999999999999999]",
     "custom_core.leg_width_mm"),
    ("custom-core-buck.toml", "price_per_cm3", "1.7e308", "custom_core.price_per_cm3"),
    ("cargo-bike-buck.toml", "title", '"' + "t" * 40_000 + '"', "study.title"),
]  # fmt: skip


@pytest.mark.parametrize("case", CASES, ids=[f"{c[1]}={c[2][:12]}" for c in CASES])
def test_out_of_range_value_is_refused_naming_the_key(
    tmp_path: Path, case: tuple[str, str, str, str], capsys: pytest.CaptureFixture[str]
) -> None:
    source, key, value, field = case
    path = _variant(tmp_path, source, key, value)
    with pytest.raises(InputError) as caught:
        load_study(path)
    named = [p for p in caught.value.problems if p.field == field]
    assert named, [str(p) for p in caught.value.problems]
    assert named[0].line is not None
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert f": {field}: " in err and "Traceback" not in err
    assert all(len(line) < 400 for line in err.splitlines())


def test_inductance_far_outside_its_range_is_refused(tmp_path: Path) -> None:
    text = (STUDIES / "cargo-bike-buck.toml").read_text(encoding="utf-8")
    text = re.sub(r"^\[inductor\]\n(?:[^\[\n].*\n)*", "[inductor]\ninductance_uH = 1e300\n",
                  text, flags=re.M)
    text = text.replace('path = "../catalogs/demo"', f'path = "{STUDIES.parent}/catalogs/demo"')
    path = tmp_path / "study.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as caught:
        load_study(path)
    assert [p.field for p in caught.value.problems] == ["inductor.inductance_uH"]


def test_ripple_fraction_needing_an_implausible_inductance_is_refused(tmp_path: Path) -> None:
    # 1 mA at 1 kHz with 1 % ripple from 10 kV: L = V D / (f r I) is kilohenries.
    path = _variant(tmp_path, "cargo-bike-buck.toml", "switching_frequency_kHz", "1")
    text = path.read_text(encoding="utf-8")
    text = re.sub(r"^load_A\s*=.*$", "load_A = 0.001", text, flags=re.M)
    text = re.sub(r"^ripple_fraction\s*=.*$", "ripple_fraction = 0.01", text, flags=re.M)
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as caught:
        load_study(path)
    assert any(p.field == "inductor.ripple_fraction" and "plausible range" in p.message
               for p in caught.value.problems)


def test_byte_order_mark_is_accepted(tmp_path: Path) -> None:
    text = (STUDIES / "cargo-bike-buck.toml").read_text(encoding="utf-8")
    text = text.replace('path = "../catalogs/demo"', f'path = "{STUDIES.parent}/catalogs/demo"')
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    assert load_study(path).name == "cargo-bike-buck"
    assert main(["check", str(path)]) == 0


@pytest.mark.parametrize("seed", ["-1", "4294967296", "1" * 400])
def test_seed_out_of_range_on_the_command_line(
    seed: str, capsys: pytest.CaptureFixture[str]
) -> None:
    with pytest.raises(SystemExit) as stopped:
        main(["explore", str(STUDIES / "cargo-bike-buck.toml"), "--seed", seed])
    assert stopped.value.code == 2
    err = capsys.readouterr().err
    assert "--seed" in err and "out of range" in err and "Traceback" not in err
