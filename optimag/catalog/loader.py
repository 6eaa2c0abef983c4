"""Catalogue loader: three CSV tables read, validated against the schema and joined.

A catalogue is a folder holding three CSV tables, ``cores.csv``, ``materials.csv`` and
``wires.csv``, with the fixed, unit-suffixed column names of :data:`TABLES` (see
``catalogs/README.md`` for the meaning of every column). Sizes are stored in the units their
names state (mm, mm², mm³, g, kHz, T); converting to SI is the model's job.

Validation collects every problem of all three files before giving up, so that a user fixes
a broken catalogue in one pass. Each problem names the file, the CSV line (header = line 1),
the column, and the row's id where one is known.

Choices made here:

* Every column of the schema must be present in the header, even where all its cells are
  empty (a catalogue of round wires still has the foil columns); unknown columns are errors,
  with the closest known name suggested, because a wrong unit suffix (``Ae_cm2``) must not be
  silently ignored.
* A cell that does not apply to the row's family or kind must be empty. In particular a
  ferrite row with roll-off coefficients is rejected rather than silently ignored: it usually
  means the ``kind`` is wrong.
* ``strands`` may be empty for a foil (a foil is one conductor); it is then stored as 1 so the
  column keeps an integer dtype.
* Blank lines are skipped; lines starting with ``#`` are errors (notes belong in a README).
"""

from __future__ import annotations

import csv
import difflib
import hashlib
import io
import math
import os
import re
import stat
from array import array
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any, BinaryIO, TextIO

import numpy as np

from optimag import ranges as R
from optimag.catalog.cross_checks import RowValues
from optimag.catalog.schema import TABLES, Table
from optimag.errors import InputError, Problem

if TYPE_CHECKING:
    import pandas as pd

# Only plain decimal notation: float() would also accept "nan", "inf", "1_000" and "0x10".
_NUMBER = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$")
# A C0 control character or DEL in a cell: a binary or damaged file, never table text.
_CONTROL = re.compile(r"[\x00-\x1f\x7f]")
_NON_FINITE_WORDS = frozenset(
    {"nan", "+nan", "-nan", "inf", "+inf", "-inf", "infinity", "+infinity", "-infinity"}
)

class Catalog:
    """A validated catalogue.

    Parameters
    ----------
    folder : the folder the tables were read from
    cores, materials, wires : one row per catalogue entry, index 0..n-1, columns in the
        order of :data:`TABLES` plus ``line`` (1-based CSV line, header = 1); numeric columns
        are float64 (NaN where not applicable), ``max_stack`` and ``strands`` int64. Given
        as DataFrames or as the loader's compact columns, which become DataFrames on first
        use (so validating a study against a catalogue never imports pandas).
    content_hash : sha256 hex digest of the three files (see :func:`catalog_content_hash`)
    """

    TABLE_NAMES = ("cores", "materials", "wires")

    def __init__(self, folder: Path, cores: Any, materials: Any, wires: Any,
                 content_hash: str):
        self.folder = folder
        self.content_hash = content_hash
        self._tables = {"cores": cores, "materials": materials, "wires": wires}

    @property
    def cores(self) -> pd.DataFrame:
        return self.frame("cores")

    @property
    def materials(self) -> pd.DataFrame:
        return self.frame("materials")

    @property
    def wires(self) -> pd.DataFrame:
        return self.frame("wires")

    def frame(self, table: str) -> pd.DataFrame:
        """Table ``table`` ("cores", "materials" or "wires") as a DataFrame."""
        rows = self._tables[table]
        if isinstance(rows, _Columns):
            rows = self._tables[table] = rows.frame()
        return rows

    def count(self, table: str) -> int:
        """Rows of table ``table``."""
        return len(self._tables[table])

    def ids(self, table: str) -> list[str]:
        """The ``id`` column of table ``table``, in row order."""
        rows = self._tables[table]
        if isinstance(rows, _Columns):
            return list(rows.texts["id"])
        return rows["id"].astype(str).tolist()

    def value(self, table: str, row: int, column: str) -> Any:
        """The cell of ``column`` in row ``row`` (0-based) of table ``table``."""
        rows = self._tables[table]
        if isinstance(rows, _Columns):
            source = rows.texts.get(column)
            return source[row] if source is not None else rows.numbers[column][row]
        return rows[column].iloc[row]


def catalog_content_hash(file_bytes: Sequence[tuple[str, bytes]]) -> str:
    """Hash the tables of a catalogue.

    Each file enters as its name, its length and its bytes, in the fixed order cores,
    materials, wires; the framing keeps two different catalogues whose concatenated bytes
    happen to agree from sharing a hash.
    """
    digest = hashlib.sha256()
    for name, content in file_bytes:
        digest.update(f"{name}\0{len(content)}\0".encode())
        digest.update(content)
    return digest.hexdigest()


#: Problems kept per file; beyond it they are counted, so a huge broken file cannot fill
#: memory with messages.
MAX_PROBLEMS_PER_FILE = 1000


class _Columns:
    """The valid rows of a table, stored column by column in compact arrays (8 bytes per
    number), so a catalogue of millions of rows stays small in memory."""

    def __init__(self, table: Table):
        self.table = table
        self.numbers = {
            c.name: array("q" if c.kind == "int" else "d")
            for c in table.columns
            if c.kind in ("int", "float")
        }
        self.texts: dict[str, list[str]] = {
            c.name: [] for c in table.columns if c.kind in ("text", "choice")
        }
        self.lines = array("q")

    def __len__(self) -> int:
        return len(self.lines)

    def append(self, values: RowValues, line: int) -> None:
        for name, column in self.numbers.items():
            cell = values.get(name)
            if column.typecode == "q":
                # Integer columns may be empty only where a single conductor is implied.
                column.append(1 if cell is None else int(cell))
            else:
                column.append(math.nan if cell is None else float(cell))
        for name, column in self.texts.items():
            column.append(str(values.get(name)))
        self.lines.append(line)

    def frame(self) -> pd.DataFrame:
        """The rows as a DataFrame; the compact arrays are released column by column as
        they are copied, so the peak is the frame plus one column."""
        import pandas as pd

        data: dict[str, object] = {}
        for column in self.table.columns:
            if column.name in self.texts:
                data[column.name] = self.texts[column.name]
            else:
                numbers = self.numbers[column.name]
                dtype = np.int64 if numbers.typecode == "q" else np.float64
                data[column.name] = np.frombuffer(numbers, dtype=dtype).copy()
                self.numbers[column.name] = array(numbers.typecode)
        data["line"] = np.frombuffer(self.lines, dtype=np.int64).copy()
        # copy=False: the columns just copied are the frame's own (no second copy).
        return pd.DataFrame(data, index=pd.RangeIndex(len(self)), copy=False)


@dataclass
class _ParsedTable:
    rows: _Columns
    problems: list[Problem]


def _row_label(table: Table, row_id: str | None, line: int) -> str:
    if not row_id:
        return f"{table.noun} on line {line}"
    shown = row_id if len(row_id) <= 40 else row_id[:37] + "..."
    return f"{table.noun} '{shown}'"


def _closest(name: str, candidates: Sequence[str]) -> str | None:
    by_lower = {candidate.lower(): candidate for candidate in candidates}
    match = difflib.get_close_matches(name.lower(), list(by_lower), n=1, cutoff=0.6)
    return by_lower[match[0]] if match else None


def _parse_number(text: str) -> tuple[float | None, str | None]:
    """Return (value, None) or (None, reason)."""
    # Fast path: float() alone also takes "nan", "inf", "1_000" and spaces, which the
    # pattern below refuses; only digits, a sign, '.' and an exponent pass it here.
    if text.isascii() and "_" not in text and " " not in text and "n" not in text.lower():
        try:
            value = float(text)
        except ValueError:
            pass
        else:
            if math.isfinite(value):
                return value, None
    if not _NUMBER.match(text):
        if text.lower() in _NON_FINITE_WORDS:
            return None, "is not a finite number"
        if re.fullmatch(r"[+-]?\d+,\d+", text):
            return None, "is not a number (use '.' as the decimal separator)"
        return None, "is not a number"
    value = float(text)
    if not math.isfinite(value):
        return None, "is not a finite number"
    return value, None


def _check_header(
    table: Table, header: list[str], file: str
) -> tuple[dict[str, int], list[Problem]]:
    """Map known column names to cell positions and report header faults."""
    problems: list[Problem] = []
    known = set(table.column_names)
    positions: dict[str, int] = {}
    unknown: list[tuple[int, str]] = []
    for position, raw in enumerate(header):
        name = raw.strip()
        if not name:
            problems.append(
                Problem(file, 1, "", f"column {position + 1} of the header has no name")
            )
        elif name in positions:
            problems.append(
                Problem(
                    file,
                    1,
                    name,
                    f"column '{name}' appears twice (columns {positions[name] + 1} and "
                    f"{position + 1})",
                )
            )
        elif name in known:
            positions[name] = position
        else:
            unknown.append((position, name))
    optional = {c.name for c in table.columns if c.optional}
    missing = [
        name for name in table.column_names if name not in positions and name not in optional
    ]
    explained: set[str] = set()
    for _position, name in unknown:
        suggestion = _closest(name, table.column_names)
        if suggestion is not None and suggestion in missing and suggestion not in explained:
            explained.add(suggestion)
            problems.append(
                Problem(
                    file,
                    1,
                    name,
                    f"unknown column '{name}'; did you mean '{suggestion}'? The unit is part "
                    "of the column name: convert the values to that unit and rename the "
                    "column",
                )
            )
        else:
            hint = f"; did you mean '{suggestion}'?" if suggestion else ""
            problems.append(
                Problem(
                    file,
                    1,
                    name,
                    f"unknown column '{name}'{hint} (known columns: "
                    f"{', '.join(table.column_names)})",
                )
            )
    problems.extend(
        Problem(file, 1, name, f"required column '{name}' is missing from the header")
        for name in missing
        if name not in explained
    )
    return positions, problems


def _check_row(
    table: Table,
    cells: dict[str, str],
    line: int,
    file: str,
    seen_ids: dict[str, int],
) -> tuple[RowValues | None, list[Problem]]:
    """Validate one data row; return its typed values (None if anything is wrong)."""
    problems: list[Problem] = []
    damaged = (
        {name for name, text in cells.items() if _CONTROL.search(text)}
        if _CONTROL.search("".join(cells.values()))
        else set()
    )
    for name in sorted(damaged, key=list(cells).index):
        code = ord(_CONTROL.search(cells[name]).group())
        problems.append(
            Problem(
                file,
                line,
                name,
                f"{table.noun} on line {line}: {name} contains the control character "
                f"U+{code:04X}; the file is damaged or not a text table (re-export it as "
                "CSV)",
            )
        )
    row_id = "" if "id" in damaged else cells.get("id", "")
    label = _row_label(table, row_id, line)

    if "id" in cells and "id" not in damaged:
        if len(row_id) > R.ID_CHARACTERS:
            problems.append(
                Problem(
                    file,
                    line,
                    "id",
                    f"{label}: id has {len(row_id):,} characters; at most {R.ID_CHARACTERS} "
                    "are allowed",
                )
            )
        elif not row_id:
            problems.append(Problem(file, line, "id", f"{label}: id is empty; every row needs one"))
        elif row_id in seen_ids:
            problems.append(
                Problem(
                    file,
                    line,
                    "id",
                    f"{label}: id '{row_id}' is already used on line {seen_ids[row_id]}; "
                    "ids must be unique",
                )
            )
        else:
            seen_ids[row_id] = line

    selector_value: str | None = None
    if table.selector in cells and table.selector not in damaged:
        text = cells[table.selector]
        if text in table.choices:
            # The schema's own string: a million rows share one object, not a million.
            selector_value = table.choices[table.choices.index(text)]
        else:
            suggestion = _closest(text, table.choices) if text else None
            hint = f"; did you mean '{suggestion}'?" if suggestion else ""
            shown = f"'{text}'" if text else "empty"
            problems.append(
                Problem(
                    file,
                    line,
                    table.selector,
                    f"{label}: {table.selector} {shown} is not one of "
                    f"{', '.join(table.choices)}{hint}",
                )
            )

    values: RowValues = {"id": row_id, table.selector: selector_value}
    for column in table.columns:
        if column.kind in ("text", "choice") or column.name not in cells:
            continue
        if column.name in damaged:
            values[column.name] = None
            continue
        text = cells[column.name]
        if text == "":
            if selector_value is not None and column.is_required(selector_value):
                problems.append(
                    Problem(
                        file,
                        line,
                        column.name,
                        f"{label}: {column.name} is empty but required for "
                        f"{table.selector} '{selector_value}' ({column.description})",
                    )
                )
            values[column.name] = None
            continue
        if not column.is_allowed(selector_value):
            applies = ", ".join(sorted(column.allowed_for or ()))
            problems.append(
                Problem(
                    file,
                    line,
                    column.name,
                    f"{label}: {column.name} = {text} does not apply to {table.selector} "
                    f"'{selector_value}' (only to {applies}); leave the cell empty",
                )
            )
            continue
        value, reason = _parse_number(text)
        if value is None:
            problems.append(
                Problem(file, line, column.name, f"{label}: {column.name} = '{text}' {reason}")
            )
            continue
        if column.kind == "int" and value != math.floor(value):
            problems.append(
                Problem(
                    file,
                    line,
                    column.name,
                    f"{label}: {column.name} = {text} is not a whole number",
                )
            )
            continue
        if not column.in_range(value):
            problems.append(
                Problem(
                    file,
                    line,
                    column.name,
                    f"{label}: {column.name} = {value:g} is out of range; expected "
                    f"{column.range_text()}",
                )
            )
            continue
        values[column.name] = int(value) if column.kind == "int" else value

    for check in table.row_checks:
        for field, message in check(values):
            problems.append(Problem(file, line, field, f"{label}: {message}"))
    return (None if problems else values), problems


class _Problems(list):
    """A file's problems, keeping the first `MAX_PROBLEMS_PER_FILE` and counting the rest."""

    def __init__(self, file: str):
        super().__init__()
        self.file = file
        self.dropped = 0

    def append(self, problem: Problem) -> None:
        if len(self) < MAX_PROBLEMS_PER_FILE:
            super().append(problem)
        else:
            self.dropped += 1

    def extend(self, problems) -> None:
        for problem in problems:
            self.append(problem)

    def closed(self) -> list[Problem]:
        found = list(self)
        if self.dropped:
            found.append(Problem(
                self.file, None, "",
                f"... and {self.dropped:,} more problem(s) in this file (only the first "
                f"{MAX_PROBLEMS_PER_FILE:,} are listed)",
            ))
        return found


class _HashingReader(io.RawIOBase):
    """Reads a binary file and feeds every byte to a hash on the way."""

    def __init__(self, raw: BinaryIO, digest: Any):
        self.raw = raw
        self.digest = digest
        self.size = 0

    def readable(self) -> bool:
        return True

    def readinto(self, buffer: Any) -> int:
        count = self.raw.readinto(buffer)
        if count:
            self.digest.update(memoryview(buffer)[:count])
            self.size += count
        return count or 0


def _parse_table(table: Table, path: Path, text: TextIO) -> _ParsedTable:
    """Parse one table from a text stream, row by row (the file is never held whole)."""
    file = str(path)
    problems = _Problems(file)
    rows = _Columns(table)
    reader = csv.reader(text, strict=True)
    positions: dict[str, int] | None = None
    header_names: list[str] = []
    header_width = 0
    seen_ids: dict[str, int] = {}
    next_line = 1
    try:
        for row in reader:
            line = next_line
            next_line = reader.line_num + 1
            if positions is None:
                if line != 1 or not any(cell.strip() for cell in row):
                    problems.append(
                        Problem(file, line, "", "line 1 must be the header row; it is empty")
                    )
                    return _ParsedTable(rows, problems.closed())
                if row[0].lstrip().startswith("#"):
                    problems.append(
                        Problem(
                            file,
                            1,
                            "",
                            "line 1 starts with '#': comment lines are not allowed; line 1 "
                            "must be the header row",
                        )
                    )
                    return _ParsedTable(rows, problems.closed())
                positions, header_problems = _check_header(table, row, file)
                problems.extend(header_problems)
                header_names = [cell.strip() for cell in row]
                header_width = len(row)
                continue
            if not any(cell.strip() for cell in row):
                continue
            if row[0].lstrip().startswith("#"):
                problems.append(
                    Problem(
                        file,
                        line,
                        "",
                        "line starts with '#': comment lines are not allowed in catalogue "
                        "tables; keep notes in a README beside them",
                    )
                )
                continue
            if len(row) != header_width:
                row_id = row[positions["id"]].strip() if "id" in positions else ""
                label = _row_label(table, row_id, line)
                if len(row) < header_width:
                    first_missing = header_names[len(row)]
                    problems.append(
                        Problem(
                            file,
                            line,
                            first_missing,
                            f"{label}: row has {len(row)} cells but the header has "
                            f"{header_width}; it ends before column '{first_missing}' "
                            "(write empty cells as nothing between commas)",
                        )
                    )
                else:
                    problems.append(
                        Problem(
                            file,
                            line,
                            "",
                            f"{label}: row has {len(row)} cells but the header has "
                            f"{header_width}; remove the extra cells (a decimal comma?)",
                        )
                    )
                continue
            cells = {name: row[position].strip() for name, position in positions.items()}
            values, row_problems = _check_row(table, cells, line, file, seen_ids)
            problems.extend(row_problems)
            if values is not None and not problems:
                # Once a file has a problem it will not load, so its rows are not kept.
                rows.append(values, line)
    except csv.Error as error:
        problems.append(Problem(file, reader.line_num, "", f"unreadable CSV: {error}"))
        return _ParsedTable(rows, problems.closed())
    except UnicodeDecodeError as error:
        problems.append(Problem(file, None, "", f"file is not UTF-8 text ({error.reason})"))
        return _ParsedTable(rows, problems.closed())

    if positions is None:
        problems.append(Problem(file, None, "", "file is empty; line 1 must be the header row"))
    elif not len(rows) and not problems:
        problems.append(
            Problem(file, None, "", f"table has no rows; add at least one {table.noun}")
        )
    return _ParsedTable(rows, problems.closed())


def _read(folder: str | Path) -> tuple[list[Problem], Catalog | None]:
    folder_path = Path(folder)
    try:
        is_dir = stat.S_ISDIR(folder_path.stat().st_mode)
        exists = True
    except FileNotFoundError:
        is_dir = exists = False
    except OSError as error:  # a symbolic-link loop, no permission, a name too long
        return [Problem(str(folder_path), None, "", f"cannot open: {error.strerror}")], None
    if not exists:
        return [Problem(str(folder_path), None, "", "catalogue folder not found")], None
    if not is_dir:
        return [
            Problem(
                str(folder_path),
                None,
                "",
                "not a folder; a catalogue is a folder holding "
                + ", ".join(table.file_name for table in TABLES),
            )
        ], None

    problems: list[Problem] = []
    parsed: list[_ParsedTable] = []
    digest = hashlib.sha256()
    for table in TABLES:
        path = folder_path / table.file_name
        try:
            with open(path, "rb") as raw:
                size = os.fstat(raw.fileno()).st_size
                digest.update(f"{table.file_name}\0{size}\0".encode())
                hashing = _HashingReader(raw, digest)
                text = io.TextIOWrapper(
                    io.BufferedReader(hashing, buffer_size=1 << 20),
                    encoding="utf-8-sig",
                    newline="",
                )
                result = _parse_table(table, path, text)
                if not result.problems and hashing.size != size:
                    result.problems.append(Problem(
                        str(path), None, "",
                        "the file changed while it was read; run again when it is saved",
                    ))
        except FileNotFoundError:
            problems.append(
                Problem(
                    str(path),
                    None,
                    "",
                    "file not found; a catalogue folder holds "
                    + ", ".join(t.file_name for t in TABLES),
                )
            )
            continue
        except OSError as error:
            problems.append(Problem(str(path), None, "", f"cannot read the file ({error})"))
            continue
        parsed.append(result)
        problems.extend(result.problems)
    if problems:
        return problems, None
    cores, materials, wires = (result.rows for result in parsed)
    catalog = Catalog(
        folder=folder_path,
        cores=cores,
        materials=materials,
        wires=wires,
        content_hash=digest.hexdigest(),
    )
    return [], catalog


def check_catalog(folder: str | Path) -> list[Problem]:
    """Validate a catalogue folder and return every problem found (empty when fine).

    Parameters
    ----------
    folder : str or Path
        Folder holding cores.csv, materials.csv and wires.csv [path].

    Returns
    -------
    list of Problem
        Each names the file, the CSV line (header = 1; None for file-wide faults), the
        column and what is wrong.
    """
    problems, _ = _read(folder)
    return problems


def load_catalog(folder: str | Path) -> Catalog:
    """Load and validate a catalogue folder.

    Parameters
    ----------
    folder : str or Path
        Folder holding cores.csv, materials.csv and wires.csv [path].

    Returns
    -------
    Catalog
        The three tables as DataFrames and the content hash.

    Raises
    ------
    InputError
        Listing every problem of all three files.
    """
    problems, catalog = _read(folder)
    if catalog is None:
        raise InputError(problems)
    return catalog
