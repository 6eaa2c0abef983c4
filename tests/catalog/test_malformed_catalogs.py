"""Broken catalogues: every fault is reported with its file, line, column and cause.

Each case copies the small valid catalogue in ``malformed/base`` and breaks it in one way.
Line numbers of the base: cores E-shape-20 = 2, pot-18 = 3, ring-21 = 4; materials
fer-midf = 2, pwd-60u = 3; wires awg-20 = 2, litz-100x40 = 3, foil-0.10x10 = 4.
"""

from __future__ import annotations

import csv
import io
import shutil
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import pytest

from optimag.catalog import check_catalog, load_catalog
from optimag.cli import main
from optimag.errors import InputError, Problem

BASE = Path(__file__).parent / "malformed" / "base"


def _read(path: Path) -> list[list[str]]:
    return list(csv.reader(io.StringIO(path.read_text(), newline="")))


def _write(path: Path, rows: list[list[str]]) -> None:
    buffer = io.StringIO()
    csv.writer(buffer, lineterminator="\n").writerows(rows)
    path.write_text(buffer.getvalue())


def set_cell(file_name: str, row_id: str, column: str, text: str) -> Callable[[Path], None]:
    def mutate(folder: Path) -> None:
        rows = _read(folder / file_name)
        position = rows[0].index(column)
        for row in rows[1:]:
            if row[0] == row_id:
                row[position] = text
                break
        else:
            raise AssertionError(f"no row {row_id}")
        _write(folder / file_name, rows)

    return mutate


def add_column(
    file_name: str, column: str, text: str, skip_line: int | None = None
) -> Callable[[Path], None]:
    def mutate(folder: Path) -> None:
        rows = _read(folder / file_name)
        rows[0].append(column)
        for line, row in enumerate(rows[1:], start=2):
            if line != skip_line:
                row.append(text)
        _write(folder / file_name, rows)

    return mutate


def drop_column(file_name: str, column: str) -> Callable[[Path], None]:
    def mutate(folder: Path) -> None:
        rows = _read(folder / file_name)
        position = rows[0].index(column)
        _write(folder / file_name, [row[:position] + row[position + 1 :] for row in rows])

    return mutate


def rename_column(file_name: str, old: str, new: str) -> Callable[[Path], None]:
    def mutate(folder: Path) -> None:
        rows = _read(folder / file_name)
        rows[0][rows[0].index(old)] = new
        _write(folder / file_name, rows)

    return mutate


def edit_text(file_name: str, old: str, new: str) -> Callable[[Path], None]:
    def mutate(folder: Path) -> None:
        path = folder / file_name
        text = path.read_text()
        assert old in text
        path.write_text(text.replace(old, new, 1))

    return mutate


def truncate_row(file_name: str, line: int, keep_cells: int) -> Callable[[Path], None]:
    def mutate(folder: Path) -> None:
        rows = _read(folder / file_name)
        rows[line - 1] = rows[line - 1][:keep_cells]
        _write(folder / file_name, rows)

    return mutate


def insert_line(file_name: str, before_line: int, text: str) -> Callable[[Path], None]:
    def mutate(folder: Path) -> None:
        path = folder / file_name
        lines = path.read_text().splitlines(keepends=True)
        lines.insert(before_line - 1, text + "\n")
        path.write_text("".join(lines))

    return mutate


def keep_lines(file_name: str, count: int) -> Callable[[Path], None]:
    def mutate(folder: Path) -> None:
        path = folder / file_name
        path.write_text("".join(path.read_text().splitlines(keepends=True)[:count]))

    return mutate


def replace_file(file_name: str, content: bytes | None) -> Callable[[Path], None]:
    def mutate(folder: Path) -> None:
        path = folder / file_name
        if content is None:
            path.unlink()
        else:
            path.write_bytes(content)

    return mutate


@dataclass(frozen=True)
class Case:
    name: str
    mutate: Callable[[Path], None]
    file_name: str
    line: int | None
    field: str
    fragments: tuple[str, ...]
    only_problem: bool = True


CASES = [
    Case("non_numeric", set_cell("cores.csv", "E-shape-20", "Ae_mm2", "abc"),
         "cores.csv", 2, "Ae_mm2", ("core 'E-shape-20'", "'abc' is not a number")),
    Case("decimal_comma_quoted", set_cell("cores.csv", "pot-18", "bobbin_wall_mm", "0,68"),
         "cores.csv", 3, "bobbin_wall_mm", ("core 'pot-18'", "decimal separator")),
    Case("decimal_comma_unquoted", edit_text("wires.csv", ",11.89\n", ",11,89\n"),
         "wires.csv", 2, "", ("wire 'awg-20'", "11 cells but the header has 10")),
    Case("negative_dimension", set_cell("cores.csv", "E-shape-20", "le_mm", "-5"),
         "cores.csv", 2, "le_mm", ("core 'E-shape-20'", "le_mm = -5 is out of range",
                                   "0.1 <= le_mm <= 1000")),
    Case("zero_dimension", set_cell("cores.csv", "pot-18", "window_breadth_mm", "0"),
         "cores.csv", 3, "window_breadth_mm", ("core 'pot-18'", "out of range")),
    Case("nan_text", set_cell("materials.csv", "fer-midf", "mu_i", "nan"),
         "materials.csv", 2, "mu_i", ("material 'fer-midf'", "'nan' is not a finite number")),
    Case("inf_text", set_cell("wires.csv", "litz-100x40", "price_per_kg", "inf"),
         "wires.csv", 3, "price_per_kg", ("wire 'litz-100x40'", "not a finite number")),
    Case("overflow_to_inf", set_cell("cores.csv", "ring-21", "mass_g", "1e999"),
         "cores.csv", 4, "mass_g", ("core 'ring-21'", "not a finite number")),
    Case("empty_required_core_cell", set_cell("cores.csv", "E-shape-20", "Ve_mm3", ""),
         "cores.csv", 2, "Ve_mm3", ("core 'E-shape-20'", "empty but required for family 'E'")),
    Case("empty_powder_rolloff", set_cell("materials.csv", "pwd-60u", "rolloff_b", ""),
         "materials.csv", 3, "rolloff_b", ("material 'pwd-60u'", "required for kind 'powder'")),
    Case("ferrite_with_rolloff", set_cell("materials.csv", "fer-midf", "rolloff_a", "1"),
         "materials.csv", 2, "rolloff_a", ("does not apply to kind 'ferrite'", "leave the cell")),
    Case("round_wire_with_foil_width", set_cell("wires.csv", "awg-20", "foil_width_mm", "3"),
         "wires.csv", 2, "foil_width_mm", ("wire 'awg-20'", "does not apply to kind 'round'")),
    Case("missing_column", drop_column("materials.csv", "steinmetz_beta"),
         "materials.csv", 1, "steinmetz_beta", ("required column 'steinmetz_beta' is missing",)),
    Case("wrong_unit_suffix", rename_column("cores.csv", "Ae_mm2", "Ae_cm2"),
         "cores.csv", 1, "Ae_cm2", ("unknown column 'Ae_cm2'", "did you mean 'Ae_mm2'")),
    Case("unknown_extra_column", add_column("wires.csv", "colour", "red"),
         "wires.csv", 1, "colour", ("unknown column 'colour'", "known columns: id, kind")),
    Case("ragged_before_unknown_column", add_column("wires.csv", "colour", "red", skip_line=3),
         "wires.csv", 3, "colour", ("ends before column 'colour'",), only_problem=False),
    Case("duplicate_column", rename_column("cores.csv", "width_mm", "height_mm"),
         "cores.csv", 1, "height_mm", ("'height_mm' appears twice",), only_problem=False),
    Case("duplicate_id", set_cell("wires.csv", "foil-0.10x10", "id", "awg-20"),
         "wires.csv", 4, "id", ("'awg-20' is already used on line 2",)),
    Case("empty_id", set_cell("materials.csv", "pwd-60u", "id", ""),
         "materials.csv", 3, "id", ("material on line 3", "id is empty")),
    Case("ragged_row", truncate_row("cores.csv", 3, 18),
         "cores.csv", 3, "mass_g", ("core 'pot-18'", "18 cells but the header has 21",
                                    "ends before column 'mass_g'")),
    Case("unknown_family", set_cell("cores.csv", "ring-21", "family", "Toroid"),
         "cores.csv", 4, "family", ("family 'Toroid' is not one of E, pot, toroid",
                                    "did you mean 'toroid'")),
    Case("unknown_wire_kind", set_cell("wires.csv", "litz-100x40", "kind", "braid"),
         "wires.csv", 3, "kind", ("kind 'braid' is not one of round, litz, foil",)),
    Case("ve_inconsistent", set_cell("cores.csv", "E-shape-20", "Ve_mm3", "2500"),
         "cores.csv", 2, "Ve_mm3", ("core 'E-shape-20': Ve_mm3 = 2500 is 55 % away from "
                                    "Ae_mm2·le_mm = 1615.71; expected within 10 %",)),
    Case("amin_above_ae", set_cell("cores.csv", "E-shape-20", "Amin_mm2", "40"),
         "cores.csv", 2, "Amin_mm2", ("Amin_mm2 = 40 is larger than Ae_mm2 = 31.3",),
         only_problem=False),
    # The gapped leg against Ae: a pot core whose Ae is 1.18x its post's own area.
    Case("ae_contradicts_post", set_cell("cores.csv", "pot-18", "Ae_mm2", "51.9"),
         "cores.csv", 3, "Ae_mm2", ("Ae_mm2 = 51.9 is 1.18× the post's π/4·d²",),
         only_problem=False),
    Case("ae_contradicts_leg", set_cell("cores.csv", "E-shape-20", "Ae_mm2", "40"),
         "cores.csv", 2, "Ae_mm2", ("Ae_mm2 = 40 is 1.22× the centre leg's width·depth",),
         only_problem=False),
    Case("post_not_round", set_cell("cores.csv", "pot-18", "leg_depth_mm", "6"),
         "cores.csv", 3, "leg_depth_mm", ("a pot core's post is round",)),
    Case("outer_area_inconsistent", set_cell("cores.csv", "E-shape-20", "outer_leg_area_mm2",
                                             "40"),
         "cores.csv", 2, "outer_leg_area_mm2", ("2·outer_leg_width_mm·leg_depth_mm",)),
    Case("legs_do_not_add_up", set_cell("cores.csv", "E-shape-20", "outer_leg_width_mm", "3.5"),
         "cores.csv", 2, "outer_leg_width_mm", ("differs from length_mm = 19.8",),
         only_problem=False),
    Case("skirt_area_too_large", set_cell("cores.csv", "pot-18", "outer_leg_area_mm2", "80"),
         "cores.csv", 3, "outer_leg_area_mm2", ("does not fit the skirt ring",)),
    Case("outer_leg_missing", set_cell("cores.csv", "E-shape-20", "outer_leg_width_mm", ""),
         "cores.csv", 2, "outer_leg_width_mm", ("outer_leg_width_mm",)),
    Case("toroid_with_outer_leg", set_cell("cores.csv", "ring-21", "outer_leg_area_mm2", "5"),
         "cores.csv", 4, "outer_leg_area_mm2", ("outer_leg_area_mm2",)),
    Case("window_area_inconsistent", set_cell("cores.csv", "pot-18", "window_area_mm2", "60"),
         "cores.csv", 3, "window_area_mm2", ("window_breadth_mm·window_width_mm", "15 %")),
    Case("toroid_window_inconsistent", set_cell("cores.csv", "ring-21", "window_area_mm2", "60"),
         "cores.csv", 4, "window_area_mm2", ("π·(2·window_width_mm)²/4",)),
    Case("toroid_with_bobbin", set_cell("cores.csv", "ring-21", "bobbin_wall_mm", "0.5"),
         "cores.csv", 4, "bobbin_wall_mm", ("toroid is wound without a bobbin",)),
    Case("bobbin_fills_window", set_cell("cores.csv", "E-shape-20", "bobbin_wall_mm", "5"),
         "cores.csv", 2, "bobbin_wall_mm", ("leaves no room for the winding",)),
    Case("bsat_hot_above_cold", set_cell("materials.csv", "fer-midf", "bsat_100C_T", "0.55"),
         "materials.csv", 2, "bsat_100C_T", ("bsat_100C_T = 0.55 is larger than bsat_25C_T",)),
    Case("bsat_out_of_range", set_cell("materials.csv", "pwd-60u", "bsat_25C_T", "5"),
         "materials.csv", 3, "bsat_25C_T", ("out of range", "0.05 <= bsat_25C_T <= 3")),
    Case("alpha_out_of_range", set_cell("materials.csv", "fer-midf", "steinmetz_alpha", "3.5"),
         "materials.csv", 2, "steinmetz_alpha", ("0 < steinmetz_alpha < 3",)),
    Case("beta_at_excluded_bound", set_cell("materials.csv", "fer-midf", "steinmetz_beta", "1"),
         "materials.csv", 2, "steinmetz_beta", ("1 < steinmetz_beta < 4",)),
    Case("mu_i_out_of_range", set_cell("materials.csv", "pwd-60u", "mu_i", "0.5"),
         "materials.csv", 3, "mu_i", ("1 <= mu_i <= 100000",)),
    Case("frequency_range_reversed", set_cell("materials.csv", "pwd-60u", "f_min_kHz", "600"),
         "materials.csv", 3, "f_max_kHz", ("must be greater than f_min_kHz = 600",)),
    Case("negative_loss_factor", set_cell("materials.csv", "fer-midf", "ct0", "0.1"),
         "materials.csv", 2, "ct0", ("must stay positive",)),
    Case("negative_price", set_cell("cores.csv", "pot-18", "price", "-0.31"),
         "cores.csv", 3, "price", ("0 <= price",)),
    Case("stack_not_whole", set_cell("cores.csv", "E-shape-20", "max_stack", "1.5"),
         "cores.csv", 2, "max_stack", ("max_stack = 1.5 is not a whole number",)),
    Case("stack_zero", set_cell("cores.csv", "E-shape-20", "max_stack", "0"),
         "cores.csv", 2, "max_stack", ("1 <= max_stack",)),
    Case("round_outer_not_above_bare", set_cell("wires.csv", "awg-20", "outer_diameter_mm", "0.8"),
         "wires.csv", 2, "outer_diameter_mm", ("must be larger than bare_diameter_mm",)),
    Case("round_with_strands", set_cell("wires.csv", "awg-20", "strands", "7"),
         "wires.csv", 2, "strands", ("a round wire has 1 strand",)),
    Case("litz_one_strand", set_cell("wires.csv", "litz-100x40", "strands", "1"),
         "wires.csv", 3, "strands", ("a litz wire has at least 2",)),
    Case("litz_strands_overfill", set_cell("wires.csv", "litz-100x40", "strands", "400"),
         "wires.csv", 3, "outer_diameter_mm", ("400 strands of 0.0799 mm", "do not fit")),
    Case("comment_line", insert_line("cores.csv", 3, "# small pot cores follow"),
         "cores.csv", 3, "", ("comment lines are not allowed",)),
    Case("comment_as_header", insert_line("wires.csv", 1, "# wires"),
         "wires.csv", 1, "", ("line 1 must be the header row",)),
    Case("missing_file", replace_file("wires.csv", None),
         "wires.csv", None, "", ("file not found",)),
    Case("empty_file", replace_file("materials.csv", b""),
         "materials.csv", None, "", ("file is empty",)),
    Case("header_only", keep_lines("wires.csv", 1),
         "wires.csv", None, "", ("table has no rows",)),
    Case("not_utf8", replace_file("materials.csv", b"id,kind\n\xb5-ferrite,ferrite\n"),
         "materials.csv", None, "", ("not UTF-8",)),
    # Plausible ranges (optimag.ranges): absurd values are typing errors, not designs.
    Case("absurd_core_length", set_cell("cores.csv", "E-shape-20", "length_mm", "1e18"),
         "cores.csv", 2, "length_mm", ("length_mm = 1e+18 is out of range",
                                       "0.1 <= length_mm <= 1000")),
    Case("price_factor_near_float_max",
         set_cell("materials.csv", "fer-midf", "price_factor", "1.7e308"),
         "materials.csv", 2, "price_factor", ("price_factor = 1.7e+308 is out of range",)),
    Case("stack_beyond_int64",
         set_cell("cores.csv", "E-shape-20", "max_stack", "9223372036854775808"),
         "cores.csv", 2, "max_stack", ("out of range", "max_stack <= 100")),
    Case("strands_beyond_int64",
         set_cell("wires.csv", "litz-100x40", "strands", "99999999999999999999999"),
         "wires.csv", 3, "strands", ("out of range", "strands <= 100000")),
    Case("temperature_factor_huge", set_cell("materials.csv", "fer-midf", "ct2_per_C2", "1e300"),
         "materials.csv", 2, "ct2_per_C2", ("out of range",)),
    # A NUL byte says the file is damaged; no near-miss suggestion for the damaged text.
    Case("nul_in_family", set_cell("cores.csv", "pot-18", "family", "E\x00"),
         "cores.csv", 3, "family", ("control character U+0000", "damaged")),
    Case("overlong_id", set_cell("cores.csv", "pot-18", "id", "p" * 40_000),
         "cores.csv", 3, "id", ("id has 40,000 characters; at most 80",)),
]  # fmt: skip


@pytest.fixture
def base(tmp_path: Path) -> Path:
    folder = tmp_path / "broken"
    shutil.copytree(BASE, folder)
    return folder


def _matching(problems: list[Problem], case: Case, folder: Path) -> list[Problem]:
    return [
        problem
        for problem in problems
        if problem.file == str(folder / case.file_name)
        and problem.line == case.line
        and problem.field == case.field
        and all(fragment in problem.message for fragment in case.fragments)
    ]


def test_corpus_is_large_enough() -> None:
    assert len(CASES) >= 15
    assert len({case.name for case in CASES}) == len(CASES)


def test_base_is_valid() -> None:
    assert check_catalog(BASE) == []


@pytest.mark.parametrize("case", CASES, ids=lambda case: case.name)
def test_fault_is_reported_with_file_line_field_and_cause(base: Path, case: Case) -> None:
    case.mutate(base)
    problems = check_catalog(base)
    found = _matching(problems, case, base)
    assert found, "\n".join(str(problem) for problem in problems)
    if case.only_problem:
        assert len(problems) == 1, "\n".join(str(problem) for problem in problems)
    with pytest.raises(InputError) as raised:
        load_catalog(base)
    assert raised.value.problems == problems


@pytest.mark.parametrize("case", CASES, ids=lambda case: case.name)
def test_cli_check_reports_fault_on_stderr(
    base: Path, case: Case, capsys: pytest.CaptureFixture[str]
) -> None:
    case.mutate(base)
    expected = _matching(check_catalog(base), case, base)[0]
    assert main(["check", str(base)]) == 2
    captured = capsys.readouterr()
    assert str(expected) in captured.err
    assert "Traceback" not in captured.err
    assert captured.out == ""


def test_missing_folder_is_reported(tmp_path: Path) -> None:
    folder = tmp_path / "no-such-catalogue"
    problems = check_catalog(folder)
    assert problems == [Problem(str(folder), None, "", "catalogue folder not found")]
    with pytest.raises(InputError):
        load_catalog(folder)


def test_file_given_instead_of_folder_is_reported(base: Path) -> None:
    problems = check_catalog(base / "cores.csv")
    assert len(problems) == 1
    assert problems[0].file == str(base / "cores.csv")
    assert "not a folder" in problems[0].message


def test_three_faults_in_three_files_are_all_reported(
    base: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    faults = [CASES_BY_NAME[name] for name in ("ve_inconsistent", "nan_text", "missing_column")]
    for case in faults:
        case.mutate(base)
    problems = check_catalog(base)
    assert len(problems) == 3, "\n".join(str(problem) for problem in problems)
    for case in faults:
        assert len(_matching(problems, case, base)) == 1, case.name
    assert main(["check", str(base)]) == 2
    err = capsys.readouterr().err
    assert all(str(problem) in err for problem in problems)
    assert "3 problem(s)" in err


def test_two_faults_in_one_row_are_both_reported(base: Path) -> None:
    set_cell("cores.csv", "pot-18", "le_mm", "x")(base)
    set_cell("cores.csv", "pot-18", "height_mm", "-1")(base)
    problems = check_catalog(base)
    assert [(problem.line, problem.field) for problem in problems] == [
        (3, "le_mm"),
        (3, "height_mm"),
    ]


CASES_BY_NAME = {case.name: case for case in CASES}


def test_nul_gets_no_suggestion(base: Path) -> None:
    set_cell("cores.csv", "pot-18", "family", "E\x00")(base)
    messages = [p.message for p in check_catalog(base)]
    assert not any("did you mean" in m for m in messages), messages


def test_integers_beyond_int64_do_not_overflow(base: Path) -> None:
    # 2**63 does not fit the int64 columns; it must be a problem, not an OverflowError.
    set_cell("cores.csv", "E-shape-20", "max_stack", str(2**63))(base)
    set_cell("wires.csv", "awg-20", "strands", str(2**64))(base)
    with pytest.raises(InputError) as caught:
        load_catalog(base)
    assert {p.field for p in caught.value.problems} == {"max_stack", "strands"}
