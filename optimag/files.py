"""Writing the files of a run safely.

Every file optimag writes goes through this module:

* **Cells that cannot run.** A spreadsheet reads a text cell that starts with ``=``, ``+``,
  ``-``, ``@``, a tab or a carriage return as a formula (OWASP, "CSV Injection"). Such
  cells are neutralised the way OWASP describes, by a leading apostrophe in CSV
  (`neutralise_text`, `neutralise_frame`), and written as text cells with the quote-prefix
  flag in xlsx (`neutralise_workbook`), so a catalogue id like ``=HYPERLINK(...)`` stays
  readable but never runs. A cell starting with an apostrophe gets one more, so the rule
  is reversible (`restore_text`). `NEUTRALISE_JS` is the same rule for a page that builds
  a CSV in the browser.
* **Atomic files, never through a symlink.** A file is written to a temporary name in its
  own folder and renamed over the target with `os.replace` (`atomic_path`,
  `atomic_write_text`); a rename replaces a symlink instead of following it.
* **Exclusive run folders.** `claim_run_folder` refuses a folder that is a symlink or
  contains one, a non-empty folder unless told to overwrite it or that the run continues
  the optuna study whose results it holds, and a folder another run holds (an ``fcntl``
  lock on a file in it, released by the operating system when the holder ends, however
  it ends).
  `unique_run_dir` creates a new default folder with a sub-second time stamp and a
  counter.
"""

from __future__ import annotations

import contextlib
import errno
import json
import os
import socket
import tempfile
import threading
from collections.abc import Iterator
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from optimag.errors import RunFolderError

#: First characters that make a spreadsheet read a text cell as a formula (OWASP, "CSV
#: Injection": = + - @ tab carriage return), plus line feed and the full-width forms of
#: = + - @ that some spreadsheet locales accept as well (common practice, no source).
FORMULA_TRIGGERS = frozenset("=+-@\t\r\n\uff1d\uff0b\uff0d\uff20")

#: Prefix that neutralises a cell (OWASP: "prepend each cell field with a single quote").
NEUTRALISER = "'"

#: The same rule for a CSV built by a page in the browser (JavaScript function source).
NEUTRALISE_JS = (
    "function neutraliseCell(v){if(typeof v!=='string'||v==='')return v;"
    "const t=v.replace(/^ +/,'');"
    f"return (v.charAt(0)==={json.dumps(NEUTRALISER)}||(t!==''&&"
    f"{json.dumps(''.join(sorted(FORMULA_TRIGGERS)))}.includes(t.charAt(0))))"
    f"?{json.dumps(NEUTRALISER)}+v:v;}}"
)

#: Lock file of a run folder (holds the holder's pid, host and start time).
LOCK_NAME = ".optimag-lock"
#: The optuna storage a run keeps in its folder by default (a journal file).
STORAGE_NAME = "optuna.journal"
#: The run folder's optuna storage before the journal (SQLite); such folders still resume.
LEGACY_STORAGE_NAME = "optuna.db"


# ---------------------------------------------------------------------------------------
# Formula neutralisation
# ---------------------------------------------------------------------------------------


def needs_neutralising(text: str) -> bool:
    """True when a spreadsheet could read ``text`` as a formula (leading spaces ignored),
    or when it starts with the neutraliser itself (so `restore_text` is exact)."""
    if not text:
        return False
    stripped = text.lstrip(" ")
    return text[0] == NEUTRALISER or (stripped != "" and stripped[0] in FORMULA_TRIGGERS)


def neutralise_text(value):
    """``value`` with a leading apostrophe when a spreadsheet would run it as a formula;
    anything that is not a string is returned unchanged."""
    if isinstance(value, str) and needs_neutralising(value):
        return NEUTRALISER + value
    return value


def restore_text(value):
    """Inverse of `neutralise_text` (for reading back a CSV optimag wrote)."""
    if isinstance(value, str) and value.startswith(NEUTRALISER) and len(value) > 1 \
            and needs_neutralising(value[1:]):
        return value[1:]
    return value


def neutralise_frame(frame):
    """A copy of a pandas DataFrame with every text cell and column name neutralised."""
    out = frame.copy()
    for column in out.columns:
        if _is_text(out[column]):
            out[column] = out[column].map(neutralise_text)
    out.columns = [neutralise_text(str(c)) if isinstance(c, str) else c for c in out.columns]
    return out


def restore_frame(frame, columns=None):
    """Undo `neutralise_frame` on the given (default: all text) columns."""
    for column in columns if columns is not None else frame.columns:
        if column in frame.columns and _is_text(frame[column]):
            frame[column] = frame[column].map(restore_text)
    return frame


def _is_text(series) -> bool:
    from pandas.api.types import is_object_dtype, is_string_dtype

    return is_object_dtype(series.dtype) or is_string_dtype(series.dtype)


def neutralise_workbook(book) -> int:
    """Make every text cell of an openpyxl workbook that a spreadsheet would read as a
    formula a plain text cell with the quote-prefix flag (kept readable, never run).
    Returns the number of cells changed."""
    changed = 0
    for sheet in book.worksheets:
        for row in sheet.iter_rows():
            for cell in row:
                value = cell.value
                if cell.data_type == "f" or (
                    isinstance(value, str) and value and needs_neutralising(value)
                ):
                    cell.value = str(value)
                    cell.data_type = "s"
                    cell.quotePrefix = True
                    changed += 1
    return changed


# ---------------------------------------------------------------------------------------
# Atomic writes
# ---------------------------------------------------------------------------------------


def _file_mode() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


_FILE_MODE = _file_mode()


class WriteFailed(OSError):
    """A file could not be written; the message names it and the target is unchanged."""


@contextlib.contextmanager
def atomic_path(target: str | Path) -> Iterator[Path]:
    """Yield a fresh temporary path in ``target``'s folder; when the block ends without an
    error, rename it over ``target`` (`os.replace`: a symlink at ``target`` is replaced,
    never followed). On an error the temporary file is removed, ``target`` is untouched
    and an `OSError` is re-raised as `WriteFailed` naming ``target``."""
    target = Path(target)
    fd, name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    temp = Path(name)
    with contextlib.suppress(AttributeError, OSError):  # no fchmod on some platforms
        os.fchmod(fd, _FILE_MODE)  # mkstemp makes 0600; a run's files are ordinary files
    os.close(fd)
    try:
        yield temp
        os.replace(temp, target)
    except OSError as error:
        with contextlib.suppress(OSError):
            temp.unlink()
        if isinstance(error, WriteFailed):
            raise
        reason = error.strerror or str(error)
        raise WriteFailed(error.errno or errno.EIO,
                          f"could not write {target}: {reason}", str(target)) from error
    except BaseException:
        with contextlib.suppress(OSError):
            temp.unlink()
        raise


def atomic_write_text(target: str | Path, text: str) -> Path:
    """Write ``text`` (UTF-8) to ``target`` atomically (see `atomic_path`)."""
    with atomic_path(target) as temp, open(temp, "w", encoding="utf-8", newline="") as handle:
        handle.write(text)
        handle.flush()
        os.fsync(handle.fileno())
    return Path(target)


def atomic_copy(source: str | Path, target: str | Path) -> Path:
    """Copy the bytes of ``source`` to ``target`` atomically."""
    data = Path(source).read_bytes()
    with atomic_path(target) as temp, open(temp, "wb") as handle:
        handle.write(data)
        handle.flush()
        os.fsync(handle.fileno())
    return Path(target)


def write_csv(frame, target: str | Path) -> Path:
    """A DataFrame as CSV (no index), text cells neutralised, written atomically."""
    return atomic_write_text(target, neutralise_frame(frame).to_csv(index=False))


@contextlib.contextmanager
def excel_writer(target: str | Path):
    """A pandas ExcelWriter (openpyxl) whose workbook is neutralised
    (`neutralise_workbook`) and saved atomically to ``target`` when the block ends."""
    import pandas as pd

    with atomic_path(target) as temp:
        writer = pd.ExcelWriter(temp, engine="openpyxl")
        try:
            yield writer
            neutralise_workbook(writer.book)
        except BaseException:
            with contextlib.suppress(Exception):
                writer.close()
            raise
        writer.close()


# ---------------------------------------------------------------------------------------
# Run folders
# ---------------------------------------------------------------------------------------


def symlinks_in(folder: Path) -> list[Path]:
    """Symlinks among ``folder`` itself and everything below it."""
    found = [folder] if folder.is_symlink() else []
    if folder.is_dir() and not folder.is_symlink():
        for root, dirs, files in os.walk(folder, followlinks=False):
            for name in dirs + files:
                path = Path(root) / name
                if path.is_symlink():
                    found.append(path)
    return found


def _is_empty(folder: Path, ignore: tuple[str, ...] = (LOCK_NAME,)) -> bool:
    return not [p for p in folder.iterdir() if p.name not in ignore]


@dataclass
class _Held:
    folder: Path
    fd: int
    depth: int = 1


_HELD: dict[Path, _Held] = {}
_HELD_GUARD = threading.Lock()


def held(folder: str | Path) -> bool:
    """True when this process holds the lock of ``folder``."""
    return Path(folder).resolve() in _HELD


def _holder_text(fd: int) -> str:
    try:
        os.lseek(fd, 0, os.SEEK_SET)
        info = json.loads(os.read(fd, 4096).decode("utf-8") or "{}")
    except (OSError, ValueError):
        info = {}
    if not info:
        return "another optimag run"
    return (f"optimag process {info.get('pid')} on {info.get('host')} "
            f"(started {info.get('started')})")


def _lock(fd: int) -> bool:
    try:
        import fcntl
    except ImportError:  # pragma: no cover - Windows
        import msvcrt

        try:
            msvcrt.locking(fd, msvcrt.LK_NBLCK, 1)
        except OSError:
            return False
        return True
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
    except BlockingIOError:
        return False
    return True


def check_run_folder(folder: str | Path, *, overwrite: bool = False,
                     continuing: bool = False, protect: tuple[Path, ...] = ()) -> None:
    """Refuse (`RunFolderError`) a run folder that a run may not write: a file, a symlink
    or a folder holding one, the folder of an input in ``protect`` (a study file's folder;
    a catalogue folder or anything below it), or an existing non-empty folder unless
    ``overwrite`` or ``continuing`` (the caller found that this run continues the optuna
    study whose results the folder holds, `optimag.runfolder.continues_optuna_run`)."""
    folder = Path(folder)
    if folder.is_symlink():
        raise RunFolderError(f"run folder {folder} is a symlink; give a real folder")
    if folder.exists() and not folder.is_dir():
        raise RunFolderError(f"run folder {folder} exists and is not a folder")
    resolved = folder.resolve()
    for path in protect:
        path = Path(path).resolve()
        inside = path if path.is_dir() else path.parent
        if resolved == inside or (path.is_dir() and inside in resolved.parents):
            raise RunFolderError(
                f"run folder {folder} lies in {inside}, which holds {path}, an input of "
                "this run; choose another --out")
    if not folder.exists():
        return
    links = symlinks_in(folder)
    if links:
        raise RunFolderError(
            f"run folder {folder} contains a symlink ({links[0]}); optimag never writes "
            "through symlinks: remove it or choose another --out")
    if _is_empty(folder) or overwrite:
        return
    if continuing:
        return
    raise RunFolderError(
        f"run folder {folder} is not empty; choose a new --out, or pass --overwrite to "
        "replace its contents")


@contextlib.contextmanager
def claim_run_folder(folder: str | Path, *, overwrite: bool = False,
                     continuing: bool = False,
                     protect: tuple[Path, ...] = (),
                     discard_if_unused: bool = False) -> Iterator[Path]:
    """Check ``folder`` (`check_run_folder`), create it and hold its lock for the block.

    With ``discard_if_unused`` (the caller made the folder for this run), a block that
    ends in an error and leaves nothing but the lock file removes the folder again.

    A second claim of a folder this process already holds nests (the checks were made by
    the first). Another process's claim fails at once with `RunFolderError` naming the
    holder.
    """
    folder = Path(folder)
    key = folder.resolve()
    with _HELD_GUARD:
        mine = _HELD.get(key)
        if mine is not None:
            mine.depth += 1
    if mine is not None:
        try:
            yield folder
        finally:
            with _HELD_GUARD:
                mine.depth -= 1
        return
    check_run_folder(folder, overwrite=overwrite, continuing=continuing,
                     protect=protect)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise RunFolderError(
            f"cannot create run folder {folder}: {error.strerror or error}") from error
    flags = os.O_RDWR | os.O_CREAT | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_CLOEXEC", 0)
    try:
        fd = os.open(folder / LOCK_NAME, flags, 0o644)
    except OSError as error:
        if error.errno == errno.ELOOP:
            raise RunFolderError(f"run folder {folder}: {LOCK_NAME} is a symlink") from error
        raise RunFolderError(
            f"cannot lock run folder {folder}: {error.strerror or error}") from error
    if not _lock(fd):
        holder = _holder_text(fd)
        os.close(fd)
        raise RunFolderError(
            f"run folder {folder} is in use by {holder}; wait for it or choose another --out")
    try:
        # Checked again under the lock: another run may have filled it meanwhile.
        check_run_folder(folder, overwrite=overwrite, continuing=continuing)
        info = {"pid": os.getpid(), "host": socket.gethostname(),
                "started": datetime.now().isoformat(timespec="seconds")}
        os.ftruncate(fd, 0)
        os.lseek(fd, 0, os.SEEK_SET)
        os.write(fd, json.dumps(info).encode("utf-8"))
    except BaseException:
        os.close(fd)
        raise
    with _HELD_GUARD:
        _HELD[key] = _Held(key, fd)
    failed = False
    try:
        yield folder
    except BaseException:
        failed = True
        raise
    finally:
        with _HELD_GUARD:
            _HELD.pop(key, None)
        if failed and discard_if_unused and _is_empty(folder):
            with contextlib.suppress(OSError):
                (folder / LOCK_NAME).unlink()
                folder.rmdir()
        # Otherwise the lock file stays: removing it would let a run that opened it
        # before the removal lock a file no longer in the folder.
        os.close(fd)


def unique_run_dir(root: str | Path, name: str, now: datetime | None = None) -> Path:
    """Create and return a new folder ``root/<name>-<YYYYmmdd-HHMMSS.mmm>`` (``-2``,
    ``-3``, ... appended while the name is taken); creation is exclusive, so two runs
    started at the same moment get two folders."""
    root = Path(root)
    root.mkdir(parents=True, exist_ok=True)
    now = now or datetime.now()
    stamp = now.strftime("%Y%m%d-%H%M%S") + f".{now.microsecond // 1000:03d}"
    for counter in range(1, 10_000):
        path = root / (f"{name}-{stamp}" + (f"-{counter}" if counter > 1 else ""))
        try:
            path.mkdir()
        except FileExistsError:
            continue
        return path
    raise RunFolderError(f"no free run folder name under {root} for {name}-{stamp}")
