"""Every user-given number has a documented plausible range, and the documentation lists
exactly the ranges the validators apply (schema of the study and catalogue files; common
practice, no source)."""

from __future__ import annotations

from pathlib import Path

from optimag.catalog.schema import TABLES
from optimag.catalog.schema import range_table_markdown as catalog_ranges
from optimag.study.custom_core import CustomCore
from optimag.study.file import _SECTION_MODELS, field_range, range_table_markdown

ROOT = Path(__file__).resolve().parents[1]
NUMERIC = (int, float)


def _numeric_keys(model) -> list[str]:
    keys = []
    for name, field in model.model_fields.items():
        text = str(field.annotation)
        numeric = field.annotation in NUMERIC or "float" in text or "int" in text
        if numeric and "bool" not in text and "str" not in text:
            keys.append(name)
    return keys


def test_every_numeric_study_key_has_a_range() -> None:
    assert sum(len(_numeric_keys(m)) for m in _SECTION_MODELS.values()) >= 30
    missing = [
        f"{section}.{name}"
        for section, model in _SECTION_MODELS.items()
        for name in _numeric_keys(model)
        if field_range(model, name) is None
        and not (model is CustomCore and name.endswith("_mm") and name != "step_mm")
    ]
    assert missing == []


def test_every_numeric_catalogue_column_has_a_two_sided_range() -> None:
    missing = [
        f"{table.file_name}:{column.name}"
        for table in TABLES
        for column in table.columns
        if column.kind in ("float", "int") and (column.lower is None or column.upper is None)
    ]
    assert missing == []


def test_study_readme_lists_the_ranges_the_schema_applies() -> None:
    assert range_table_markdown() in (ROOT / "studies" / "README.md").read_text("utf-8")


def test_catalogue_readme_lists_the_ranges_the_validator_applies() -> None:
    assert catalog_ranges() in (ROOT / "catalogs" / "README.md").read_text("utf-8")
