"""The run folder's trial store: an append-only journal file for optuna's JournalStorage.

optuna's `JournalStorage` keeps a study as a log of operations; this backend (optuna's
public `BaseJournalBackend`) writes that log as one JSON object per line, the format of
optuna's own `JournalFileBackend`, so either can read the other's files. It differs in
two ways that make a persisted trial nearly as cheap as one in memory:

* appends are serialised between processes by an ``fcntl`` lock on the file itself (the
  kernel drops it when a process dies, so a killed run never leaves a stale lock);
* a write reaches the operating system at once (a killed process loses nothing it
  wrote), but the file is flushed to the disk (``fsync``) by a background thread at
  most every `SYNC_INTERVAL_S` seconds, by `sync` and when the process exits, not after
  every operation: a power cut may lose the last second of trials, which a resumed run
  asks again.

Several processes on one machine (or one shared file system with working locks) may
share a journal: `optimag worker --storage PATH`.
"""

from __future__ import annotations

import atexit
import contextlib
import fcntl
import json
import os
import threading
import time
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from optuna.storages.journal import BaseJournalBackend

__all__ = ["SYNC_INTERVAL_S", "JournalFile"]

#: Longest time a written operation waits for its flush to the disk [s].
SYNC_INTERVAL_S = 0.5


class JournalFile(BaseJournalBackend):
    """An optuna journal kept in the file ``path`` (created if missing, never followed
    through a symlink)."""

    def __init__(self, path: str | Path) -> None:
        self.path = str(path)
        descriptor = os.open(self.path, os.O_WRONLY | os.O_APPEND | os.O_CREAT | os.O_NOFOLLOW,
                             0o644)
        os.close(descriptor)
        #: Byte offset of each log number read so far (log number -> offset).
        self.offsets: dict[int, int] = {0: 0}
        self.synced_at = time.monotonic()
        self.unsynced = False
        #: Held while a flush to the disk runs.
        self.flushing = threading.Lock()
        atexit.register(self.sync_at_exit)

    def read_logs(self, log_number_from: int) -> Iterator[dict[str, Any]]:
        """The operations numbered ``log_number_from`` and later. A last line still being
        written (no line end yet) is left for the next read."""
        number = log_number_from if log_number_from in self.offsets else 0
        with open(self.path, "rb") as file:
            file.seek(self.offsets[number])
            data = file.read()
        position = self.offsets[number]
        for line in data.split(b"\n")[:-1]:  # the last piece has no line end
            position += len(line) + 1
            self.offsets.setdefault(number + 1, position)
            if number >= log_number_from:
                try:
                    yield json.loads(line)
                except json.JSONDecodeError as error:
                    raise ValueError(f"{self.path}: line {number + 1} of the journal is "
                                     f"damaged ({error.msg})") from None
            number += 1

    def append_logs(self, logs: list[dict[str, Any]]) -> None:
        """Append ``logs`` (one line each) under the file lock."""
        text = "".join(json.dumps(log, separators=(",", ":")) + "\n" for log in logs)
        descriptor = os.open(self.path, os.O_WRONLY | os.O_APPEND | os.O_NOFOLLOW)
        try:
            fcntl.flock(descriptor, fcntl.LOCK_EX)
            data = text.encode("utf-8")
            while data:
                written = os.write(descriptor, data)
                data = data[written:]
            self.unsynced = True
        finally:
            os.close(descriptor)  # closing releases the lock
        if (time.monotonic() - self.synced_at >= SYNC_INTERVAL_S
                and self.flushing.acquire(blocking=False)):
            self.synced_at, self.unsynced = time.monotonic(), False
            threading.Thread(target=flush_file, args=(self.path, self.flushing),
                             daemon=True).start()

    def sync(self) -> None:
        """Flush what this process wrote to the disk now (after a flush under way)."""
        with self.flushing:
            if self.unsynced:
                self.synced_at, self.unsynced = time.monotonic(), False
                flush_file(self.path)

    def sync_at_exit(self) -> None:
        """`sync`, for the end of the process (a journal removed meanwhile is let be)."""
        with contextlib.suppress(OSError):
            self.sync()


def flush_file(path: str, done: threading.Lock | None = None) -> None:
    """``fsync`` the file ``path``, then release ``done`` if given."""
    try:
        descriptor = os.open(path, os.O_RDONLY | os.O_NOFOLLOW)
        try:
            os.fsync(descriptor)
        finally:
            os.close(descriptor)
    except OSError:
        if done is None:
            raise  # a background flush of a journal removed meanwhile is let be
    finally:
        if done is not None:
            done.release()
