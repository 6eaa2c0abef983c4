"""Loader and validation of catalogue tables, on the small valid base catalogue."""

from __future__ import annotations

import hashlib
import math
import shutil
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from optimag.catalog import (
    CORES,
    MATERIALS,
    TABLES,
    WIRES,
    Catalog,
    Table,
    catalog_content_hash,
    check_catalog,
    load_catalog,
)
from optimag.errors import InputError, Problem

BASE = Path(__file__).parent / "malformed" / "base"


@pytest.fixture
def base(tmp_path: Path) -> Path:
    folder = tmp_path / "catalog"
    shutil.copytree(BASE, folder)
    return folder


def test_base_catalogue_is_valid() -> None:
    assert check_catalog(BASE) == []


def test_frames_have_schema_columns_dtypes_and_lines() -> None:
    catalog = load_catalog(BASE)
    assert isinstance(catalog, Catalog)
    assert catalog.folder == BASE
    for table, frame in zip(TABLES, (catalog.cores, catalog.materials, catalog.wires), strict=True):
        assert list(frame.columns) == [*table.column_names, "line"]
        assert frame.index.equals(pd.RangeIndex(len(frame)))
        assert frame["line"].dtype == np.int64
        assert frame["line"].tolist() == list(range(2, len(frame) + 2))
        for column in table.columns:
            if column.kind == "float":
                assert frame[column.name].dtype == np.float64, column.name
            elif column.kind == "int":
                assert frame[column.name].dtype == np.int64, column.name
    assert catalog.cores["id"].tolist() == ["E-shape-20", "pot-18", "ring-21"]
    assert catalog.cores["max_stack"].tolist() == [3, 1, 1]


def test_not_applicable_cells_are_nan_and_foil_is_one_strand() -> None:
    wires = load_catalog(BASE).wires.set_index("id")
    assert math.isnan(wires.loc["awg-20", "foil_thickness_mm"])
    assert math.isnan(wires.loc["litz-100x40", "bare_diameter_mm"])
    assert wires.loc["foil-0.10x10", "strands"] == 1
    materials = load_catalog(BASE).materials.set_index("id")
    assert math.isnan(materials.loc["fer-midf", "rolloff_b"])
    assert materials.loc["pwd-60u", "rolloff_b"] == pytest.approx(9.3747e-08)


def test_content_hash_frames_each_file_in_fixed_order() -> None:
    catalog = load_catalog(BASE)
    digest = hashlib.sha256()
    for name in ("cores.csv", "materials.csv", "wires.csv"):
        content = (BASE / name).read_bytes()
        digest.update(f"{name}\0{len(content)}\0".encode())
        digest.update(content)
    assert catalog.content_hash == digest.hexdigest()
    assert load_catalog(BASE).content_hash == catalog.content_hash


def test_content_hash_tells_apart_bytes_moved_between_files() -> None:
    # Plain concatenation would give both the same hash.
    assert catalog_content_hash([("a", b"xy"), ("b", b"z")]) != catalog_content_hash(
        [("a", b"x"), ("b", b"yz")]
    )


def test_content_hash_changes_with_one_byte(base: Path) -> None:
    before = load_catalog(base).content_hash
    path = base / "wires.csv"
    path.write_text(path.read_text().replace("11.89", "11.88"))
    assert load_catalog(base).content_hash != before


def test_column_order_is_free_and_bom_blank_lines_are_accepted(base: Path) -> None:
    path = base / "wires.csv"
    lines = path.read_text().splitlines()
    header = lines[0].split(",")
    rows = [line.split(",") for line in lines[1:]]
    order = list(reversed(range(len(header))))
    shuffled = [",".join(header[i] for i in order)] + [
        ",".join(row[i] for i in order) for row in rows
    ]
    # A blank line after the first row shifts the following line numbers.
    text = "\n".join([shuffled[0], shuffled[1], "", *shuffled[2:]]) + "\n"
    path.write_bytes(b"\xef\xbb\xbf" + text.encode())
    wires = load_catalog(base).wires
    assert list(wires.columns) == [*WIRES.column_names, "line"]
    assert wires["line"].tolist() == [2, 4, 5]
    assert wires.loc[0, "bare_diameter_mm"] == pytest.approx(0.8118)


@pytest.mark.parametrize("text", ["1_000", "0x10", "1.5.2", "--2", "1e", "∞"])
def test_only_plain_decimal_numbers_are_accepted(base: Path, text: str) -> None:
    path = base / "cores.csv"
    path.write_text(path.read_text().replace(",0.3,3\n", f",{text},3\n", 1))
    problems = check_catalog(base)
    assert len(problems) == 1
    assert problems[0].field == "price"
    assert "is not a number" in problems[0].message


def test_scientific_notation_and_signs_are_accepted(base: Path) -> None:
    path = base / "cores.csv"
    path.write_text(path.read_text().replace(",0.3,3\n", ",+3e-1,3\n", 1))
    assert load_catalog(base).cores.loc[0, "price"] == pytest.approx(0.3)


def test_whole_number_written_as_float_is_accepted_for_integer_columns(base: Path) -> None:
    path = base / "cores.csv"
    path.write_text(path.read_text().replace(",0.3,3\n", ",0.3,3.0\n", 1))
    assert load_catalog(base).cores.loc[0, "max_stack"] == 3


def test_input_error_carries_every_problem_and_prints_them(base: Path) -> None:
    (base / "cores.csv").write_text((base / "cores.csv").read_text().replace("31.3", "x", 1))
    (base / "wires.csv").unlink()
    with pytest.raises(InputError) as raised:
        load_catalog(base)
    problems = raised.value.problems
    assert problems == check_catalog(base)
    assert len(problems) == 2
    assert all(isinstance(problem, Problem) for problem in problems)
    text = str(raised.value)
    assert f"{base / 'cores.csv'}:2: Ae_mm2: core 'E-shape-20': Ae_mm2 = 'x'" in text
    assert f"{base / 'wires.csv'}: file not found" in text


def test_problem_file_keeps_the_path_as_given(base: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(base.parent)
    (base / "materials.csv").unlink()
    problems = check_catalog("catalog")
    assert [problem.file for problem in problems] == [str(Path("catalog") / "materials.csv")]


def test_schema_tables_name_the_three_files() -> None:
    assert [table.file_name for table in TABLES] == ["cores.csv", "materials.csv", "wires.csv"]
    assert (CORES.selector, MATERIALS.selector, WIRES.selector) == ("family", "kind", "kind")


# --- property tests --------------------------------------------------------------------

# Columns whose documented range is positive sizes; drawing over many decades exercises
# number formatting and the consistency checks, which must never crash or emit NaN.
_CORE_SIZE_COLUMNS = [
    column.name for column in CORES.columns if column.kind == "float" and column.lower == 0.0
]


def _write_cell(folder: Path, file_name: str, row: int, column: str, text: str) -> None:
    path = folder / file_name
    lines = path.read_text().splitlines()
    header = lines[0].split(",")
    cells = lines[row].split(",")
    cells[header.index(column)] = text
    lines[row] = ",".join(cells)
    path.write_text("\n".join(lines) + "\n")


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    column=st.sampled_from(_CORE_SIZE_COLUMNS),
    row=st.integers(1, 3),
    value=st.floats(min_value=1e-300, max_value=1e300, allow_nan=False, allow_infinity=False),
)
def test_property_any_positive_size_gives_problems_or_finite_frames(
    column: str, row: int, value: float
) -> None:
    with tempfile.TemporaryDirectory() as scratch:
        folder = Path(scratch) / "catalog"
        shutil.copytree(BASE, folder)
        _write_cell(folder, "cores.csv", row, column, repr(value))
        problems = check_catalog(folder)
        for problem in problems:
            assert problem.line == row + 1
            assert problem.field in CORES.column_names
            assert "nan" not in problem.message.lower()
        if not problems:
            cores = load_catalog(folder).cores
            # Outer-leg cells do not apply to a ring (left empty, NaN in the frame).
            outer = ["outer_leg_width_mm", "outer_leg_area_mm2"]
            numbers = cores.drop(columns=outer).select_dtypes("number").to_numpy(dtype=float)
            assert np.isfinite(numbers).all()
            gapped = cores["family"] != "toroid"
            assert np.isfinite(cores.loc[gapped, outer].to_numpy(dtype=float)).all()
            assert cores.loc[row - 1, column] == value


_printable = st.text(
    alphabet=st.characters(blacklist_categories=("Cs",), blacklist_characters="\r\n\0"),
    max_size=12,
)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    table=st.sampled_from(TABLES),
    row=st.integers(1, 2),
    column_index=st.integers(0, 18),
    text=_printable,
)
def test_property_any_cell_text_gives_problems_never_a_crash(
    table: Table, row: int, column_index: int, text: str
) -> None:
    names = table.column_names
    column = names[column_index % len(names)]
    with tempfile.TemporaryDirectory() as scratch:
        folder = Path(scratch) / "catalog"
        shutil.copytree(BASE, folder)
        path = folder / table.file_name
        lines = path.read_text().splitlines()
        cells = lines[row].split(",")
        cells[names.index(column)] = '"' + text.replace('"', '""') + '"'
        lines[row] = ",".join(cells)
        path.write_text("\n".join(lines) + "\n")
        problems = check_catalog(folder)
        data_lines = range(2, len(lines) + 1)
        for problem in problems:
            assert problem.file == str(path)
            # A duplicated id is reported on the later of the two lines.
            assert problem.line in data_lines
            assert problem.field in (*names, "")
        if not problems:
            catalog = load_catalog(folder)
            for frame in (catalog.cores, catalog.materials, catalog.wires):
                numbers = frame.select_dtypes("number").to_numpy(dtype=float)
                finite_or_not_applicable = np.isfinite(numbers) | np.isnan(numbers)
                assert finite_or_not_applicable.all()
                assert not np.isinf(numbers).any()
