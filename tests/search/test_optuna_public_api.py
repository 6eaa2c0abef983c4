"""The optuna strategy stays on optuna's public API: an optuna release may change or drop
any name that starts with an underscore without notice (common practice, no source:
Python's convention that a leading underscore marks a non-public name, PEP 8 "Naming
Conventions")."""

import ast
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
PACKAGE = ROOT / "optimag" / "search" / "optuna_search"
SOURCES = sorted(PACKAGE.glob("*.py"))

#: Text patterns of optuna's private names and of private attributes of its objects.
PRIVATE_PATTERNS = (
    r"optuna(\.\w+)*\._(?!_)\w",  # optuna._x, optuna.study._constrained_optimization, ...
    r"\._(storage|study_id|trial_id|get_trials|backend|cached_frozen_trial|"
    r"population_size|thread_local|rng|random_sampler)\b",
    r"_CONSTRAINTS_KEY",
    r"_get_generation_key|_GENERATION_KEY|_get_parent_cache_key_prefix|_PARENT_CACHE_KEY",
)


def private_uses(text: str) -> list[str]:
    """Every private optuna name or private attribute of another object in ``text``."""
    found = [m.group(0) for pattern in PRIVATE_PATTERNS for m in re.finditer(pattern, text)]
    tree = ast.parse(text)
    optuna_names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and (node.module or "").split(".")[0] == "optuna":
            parts = node.module.split(".") + [alias.name for alias in node.names]
            found += [f"from {node.module} import {p}" for p in parts if p.startswith("_")]
            optuna_names.update(alias.asname or alias.name for alias in node.names)
        elif isinstance(node, ast.Import):
            found += [a.name for a in node.names
                      if a.name.split(".")[0] == "optuna" and "._" in a.name]
        elif isinstance(node, ast.Attribute) and _private(node.attr):
            # Private attributes are read on `self` only (our own classes' state).
            if not (isinstance(node.value, ast.Name) and node.value.id == "self"):
                found.append(ast.unparse(node))
        elif (isinstance(node, ast.Call) and isinstance(node.func, ast.Name)
              and node.func.id in ("getattr", "setattr", "hasattr", "delattr")
              and len(node.args) > 1 and isinstance(node.args[1], ast.Constant)
              and _private(str(node.args[1].value))):
            found.append(ast.unparse(node))
    # A class deriving from one of optuna's keeps no private state of its own either:
    # `self._x` there could be (or become) optuna's.
    for node in ast.walk(tree):
        if isinstance(node, ast.ClassDef) and any(
            "optuna" in ast.unparse(base) or ast.unparse(base) in optuna_names
            for base in node.bases
        ):
            found += [f"{node.name}: {ast.unparse(n)}" for n in ast.walk(node)
                      if isinstance(n, ast.Attribute) and _private(n.attr)]
    return found


def _private(name: str) -> bool:
    return name.startswith("_") and not name.startswith("__")


def test_the_checker_finds_private_uses():
    """The checks catch what the package used before it moved to the public API."""
    snippet = (
        "import optuna\n"
        "from optuna.study._constrained_optimization import _CONSTRAINTS_KEY\n"
        "class S(optuna.samplers.NSGAIISampler):\n"
        "    def f(self, study, trial):\n"
        "        key = self._get_generation_key()\n"
        "        study._storage.set_trial_system_attr(trial._trial_id, key, 1)\n"
        "        return study._get_trials(deepcopy=False), getattr(study, '_study_id')\n"
    )
    found = " ".join(private_uses(snippet))
    for name in ("_CONSTRAINTS_KEY", "_constrained_optimization", "_get_generation_key",
                 "study._storage", "trial._trial_id", "study._get_trials", "'_study_id'"):
        assert name in found, name


@pytest.mark.parametrize("path", SOURCES, ids=lambda p: p.name)
def test_no_private_optuna_name(path):
    assert len(SOURCES) >= 8  # the package's modules are all read
    uses = private_uses(path.read_text(encoding="utf-8"))
    assert not uses, f"{path.name}: {uses}"
