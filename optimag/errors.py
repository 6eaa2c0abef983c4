"""Errors and warnings of optimag.

`InputError` gathers every problem found in user input (study files, catalogue
tables) so that they are reported together, each as ``file:line: field: message``.
`ValidityRangeWarning` is raised by physics functions used outside the range their
published source supports.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # numpy is imported where it is used: the command line starts without it
    from numpy.typing import ArrayLike


class ValidityRangeWarning(UserWarning):
    """A physics model was evaluated outside the range its source supports."""


def warn_outside_range(condition: ArrayLike, message: str, stacklevel: int = 3) -> None:
    """Warn once, with `ValidityRangeWarning`, where any element of `condition` is true.

    Called by a physics function about its own inputs; the warning points at that
    function's caller (``stacklevel`` as `warnings.warn` counts it from here: one more for
    each helper in between). One ``np.any`` per call, never a warning per element. Every
    model-range warning goes through here.
    """
    import numpy as np

    if np.any(condition):
        warnings.warn(message, ValidityRangeWarning, stacklevel=stacklevel)


@dataclass(frozen=True)
class Problem:
    """One problem in one input file.

    Parameters
    ----------
    file : path of the offending file, as given by the user
    line : 1-based line number in that file, or None when the problem is file-wide
    field : the column or key concerned ("" when none applies)
    message : what is wrong and, where possible, how to fix it
    """

    file: str
    line: int | None
    field: str
    message: str

    def __str__(self) -> str:
        where = self.file if self.line is None else f"{self.file}:{self.line}"
        if self.field:
            return f"{where}: {self.field}: {self.message}"
        return f"{where}: {self.message}"


class InputError(Exception):
    """Bad user input; carries every problem found, not only the first."""

    def __init__(self, problems: list[Problem]):
        self.problems = list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


class InfeasibleStudyError(Exception):
    """No candidate met every constraint (the run record still explains why)."""


class RunFolderError(Exception):
    """A run cannot use its folder (busy, not empty, a symlink, stale storage); the
    one-line message says why and what to do instead."""


class StorageError(Exception):
    """An optuna storage cannot be used (unknown scheme, unreachable server, read-only
    location, missing database); the one-line message never shows a password."""


class ClusterError(Exception):
    """A Dask cluster cannot be used (scheduler unreachable, no worker); the one-line
    message says what to start."""
