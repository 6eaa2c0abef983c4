"""The study-file reference is generated from the schema, complete and up to date."""

import re
from pathlib import Path

import pytest

from optimag.study import applied_defaults, load_study
from optimag.study.file import _SECTION_MODELS
from optimag.study.reference import schema_keys, study_reference, unit_of
from optimag.study.template import TEMPLATE_POINTS, study_slug, study_template

REPO = Path(__file__).resolve().parents[2]
REFERENCE = REPO / "studies" / "REFERENCE.md"
DEMO = REPO / "catalogs" / "demo"


def test_reference_file_is_up_to_date():
    assert REFERENCE.read_text(encoding="utf-8") == study_reference(), (
        "regenerate with: python -m optimag.study.reference studies/REFERENCE.md"
    )


def _tables(text: str) -> dict[str, list[str]]:
    """Keys listed in each section's table of the reference, by section header."""
    tables: dict[str, list[str]] = {}
    section = None
    for line in text.splitlines():
        header = re.match(r"^## `\[\[?([a-z_]+)\]\]?`", line)
        if header:
            section = header.group(1)
            tables[section] = []
        elif section and (row := re.match(r"^\| `([A-Za-z0-9_]+)` \|", line)):
            tables[section].append(row.group(1))
    return tables


def test_reference_lists_every_key_of_every_table_once():
    tables = _tables(REFERENCE.read_text(encoding="utf-8"))
    assert set(tables) == set(_SECTION_MODELS)
    for section, model in _SECTION_MODELS.items():
        assert tables[section] == list(model.model_fields), section


@pytest.mark.parametrize("section,key,field", schema_keys(),
                         ids=[f"{s}.{k}" for s, k, _ in schema_keys()])
def test_every_key_has_a_description_and_a_unit_when_its_name_carries_one(section, key, field):
    assert field.description and len(field.description) > 10
    if re.search(r"_(kHz|uH|V|A|W|C|mm|mm2|cm3|g|pct)$", key):
        assert unit_of(section, key) != "-"


def test_reference_rows_show_ranges_and_defaults():
    text = REFERENCE.read_text(encoding="utf-8")
    assert "| `ambient_C` | number | °C | 40 | >= -100, <= 300 |" in text
    assert "| `max_volume_cm3` | number | cm³ | absent | >= 0.001, <= 1e+06 |" in text
    assert "| `max_mass_g` | number | g | absent | >= 0.001, <= 1e+06 |" in text
    assert "| `harmonics` | whole number | - | 25 | >= 15, <= 200 |" in text
    assert ('| `topology` | text | - | required | one of "buck", "boost", "buck-boost", '
            '"multiphase-buck", "pfc-boost", "inverter-filter" |') in text


def _write(folder: Path, text: str) -> Path:
    path = folder / "s.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_applied_defaults_name_the_keys_left_out(tmp_path):
    text = study_template("s", "buck", DEMO.as_posix())
    # Leave out a limit and the inductor table: their defaults must be reported.
    text = text.replace("ambient_C = 40 ", "# ambient ")
    start, end = text.index("[inductor]"), text.index("[limits]")
    text = text[:start] + text[end:]
    applied = dict(applied_defaults(load_study(_write(tmp_path, text))))
    assert applied["limits.ambient_C"] == 40.0
    assert applied["inductor.ripple_fraction"] == 0.4
    assert applied["inductor.ripple_point"] == "high-input"
    assert applied["inductor.min_fraction_at_peak"] == 0.8
    assert applied["limits.max_height_mm"] is None
    assert "limits.max_temperature_C" not in applied  # given in the file
    assert not any(key.startswith("custom_core") for key in applied)


@pytest.mark.parametrize("topology", sorted(TEMPLATE_POINTS))
def test_template_loads_for_each_topology(tmp_path, topology):
    study = load_study(_write(tmp_path, study_template("my-study", topology,
                                                       DEMO.as_posix())))
    assert study.converter.topology == topology
    assert study.catalog.path == DEMO.resolve()
    points = {p.name: (p.input_V, p.output_V) for p in study.operating_points}
    assert len(points) == len(TEMPLATE_POINTS[topology])


def test_template_rejects_bad_names_and_slug_cleans_them():
    with pytest.raises(ValueError):
        study_template("My Study", "buck", ".")
    assert study_slug("My Study_2") == "my-study-2"
    assert study_slug("__") == ""
