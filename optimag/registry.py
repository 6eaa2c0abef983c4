"""Registries of interchangeable models: a name for each model of a family, the names a
study may choose from, and a way for a user to add their own from Python.

Each physics family keeps one `Registry` where the family is defined:

* `optimag.physics.coreloss.CORE_LOSS_MODELS` — core loss density of a design's flux
  waveform (study ``[model] core_loss``);
* `optimag.physics.ac_resistance.AC_RESISTANCE_MODELS` — a winding's AC resistance
  factor per harmonic (``[model] ac_resistance``);
* `optimag.physics.fringing.GAP_RELUCTANCE_MODELS` — gap reluctance with fringing
  (``[model] fringing``);
* `optimag.physics.thermal.CONDUCTANCE_MODELS` — heat shed by the part at a temperature
  rise (``[model] thermal``).

The study schema reads its allowed names from these registries when a study is validated,
so a model registered before `optimag.load_study` is a valid choice. Imports nothing of
optimag, so the physics modules may use it.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Mapping
from typing import Generic, TypeVar

T = TypeVar("T")


class Registry(Mapping[str, T], Generic[T]):
    """Models of one family by name (a read-only mapping plus `register`).

    Parameters
    ----------
    family : what the models compute, for messages ("gap reluctance")
    study_key : the study key that chooses one ("model.fringing")
    check : called with each entry on registration; raises TypeError when the entry is
        not of the family's type
    """

    def __init__(self, family: str, study_key: str,
                 check: Callable[[T], None] | None = None):
        self.family = family
        self.study_key = study_key
        self._check = check
        self._entries: dict[str, T] = {}
        self._in_study: dict[str, bool] = {}

    def register(self, name: str, entry: T, *, replace: bool = False,
                 in_study: bool = True) -> T:
        """Add ``entry`` under ``name`` and return it. ``replace`` allows overwriting a
        registered name; ``in_study`` False keeps a model out of the study's choices (one
        used internally, e.g. for the thermal band)."""
        if not isinstance(name, str) or not name.isidentifier():
            raise ValueError(f"{self.family} model name must be a word of letters, digits "
                             f"and '_', got {name!r}")
        if name in self._entries and not replace:
            raise ValueError(f"a {self.family} model named {name!r} is already registered; "
                             "pass replace=True to overwrite it")
        if self._check is not None:
            self._check(entry)
        self._entries[name] = entry
        self._in_study[name] = in_study
        return entry

    def unregister(self, name: str) -> None:
        """Remove a model (a user's; the built-in ones are needed by tests and defaults)."""
        del self._entries[name]
        del self._in_study[name]

    def study_names(self) -> tuple[str, ...]:
        """Names a study may choose, in registration order."""
        return tuple(n for n in self._entries if self._in_study[n])

    def __getitem__(self, name: str) -> T:
        try:
            return self._entries[name]
        except KeyError:
            raise KeyError(f"unknown {self.family} model {name!r}; registered: "
                           f"{', '.join(self._entries)}") from None

    def __iter__(self) -> Iterator[str]:
        return iter(self._entries)

    def __len__(self) -> int:
        return len(self._entries)

    def __repr__(self) -> str:
        return f"Registry({self.family!r}: {', '.join(self._entries)})"


def callable_entry(entry: object) -> None:
    """`Registry` check: the entry is callable."""
    if not callable(entry):
        raise TypeError(f"a model must be callable, got {type(entry).__name__}")


def study_registries() -> dict[str, Registry]:
    """The registries the study's ``[model]`` table chooses from, by key (imports the
    physics modules that hold them)."""
    from optimag.physics.ac_resistance import AC_RESISTANCE_MODELS
    from optimag.physics.coreloss import CORE_LOSS_MODELS
    from optimag.physics.fringing import GAP_RELUCTANCE_MODELS
    from optimag.physics.thermal import CONDUCTANCE_MODELS

    return {
        "core_loss": CORE_LOSS_MODELS,
        "ac_resistance": AC_RESISTANCE_MODELS,
        "fringing": GAP_RELUCTANCE_MODELS,
        "thermal": CONDUCTANCE_MODELS,
    }
