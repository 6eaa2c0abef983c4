"""The study-file reference, generated from the study schema.

Every table and key of a study file, with its type, unit, default, allowed range and
description, read from the pydantic models of `optimag.study.file` (the description is the
docstring under each field). `studies/REFERENCE.md` is this module's output; regenerate it
after changing the schema::

    python -m optimag.study.reference studies/REFERENCE.md

A test checks that the file is up to date and names every key.
"""

from __future__ import annotations

import ast
import functools
import inspect
import itertools
import os
import sys
import tempfile
import textwrap
import types
import typing
from pathlib import Path
from typing import Any, Literal

import annotated_types
from pydantic import BaseModel, StringConstraints
from pydantic.fields import FieldInfo

from optimag.study.file import _REQUIRED_SECTIONS, _SECTION_MODELS, DEFAULT_RIPPLE_FRACTION
from optimag.study.tolerance import SPREAD_DEFAULTS, Spread

#: Unit of a key, from the suffix of its name (the codebase's naming rule).
UNIT_SUFFIXES = {
    "kHz": "kHz",
    "uH": "µH",
    "V": "V",
    "A": "A",
    "W": "W",
    "C": "°C",
    "mm": "mm",
    "mm2": "mm²",
    "cm3": "cm³",
    "g": "g",
    "pct": "%",
}

#: Keys whose unit is not in their name.
UNIT_OVERRIDES = {
    "cost.labour_per_turn": "currency",
    "custom_core.price_base": "currency",
    "custom_core.price_per_cm3": "currency / cm³",
    "tolerance.ambient_C": "K",
    "cooling.air_speed_m_s": "m/s",
    "cooling.potting_conductivity_W_mK": "W/(m·K)",
}

#: Rules that tie keys together (checked by `optimag.study.file._consistency_faults`).
CROSS_KEY_RULES = (
    "The operating points' `time_share` values sum to 1; their names are distinct.",
    "A buck has `output_V` below `input_V` at every point; a boost above.",
    "Each operating point gives the keys its topology reads and no others: `input_V`, "
    "`output_V`, `load_A` (buck, boost, buck-boost, multiphase-buck); `line_V_rms`, "
    "`output_V` above the line peak, `power_W` (pfc-boost); `dc_link_V` above the grid "
    "peak, `grid_V_rms`, `grid_A_rms`, optionally `power_factor` (inverter-filter); or "
    "`current_waveform` alone (buck, boost, buck-boost). `[converter] phases` is required "
    "for multiphase-buck and `modulation` for inverter-filter, neither elsewhere.",
    "A `current_waveform` file is CSV with the header `time_s,current_A`, at least 3 "
    "samples, time increasing, finite numbers, spanning at least one switching period; "
    "its last whole period must end at the current it starts with (within 2 % of its "
    "peak to peak).",
    "`[inductor]` gives `inductance_uH` or `ripple_fraction` (optionally with "
    "`ripple_point`, which must name an operating point), not both; with neither, "
    f"`ripple_fraction = {DEFAULT_RIPPLE_FRACTION}` applies.",
    "`limits.max_temperature_C` is above `limits.ambient_C`.",
    "`turns_min <= turns_max`, `stack_min <= stack_max`, `parallel_min <= parallel_max`.",
    "`objectives` are distinct.",
    '`gap_grid_mm` is required (non-empty) when `gap = "grid"`.',
    '`robust = true` needs `strategy = "exhaustive"`.',
    "`[cooling]` takes the keys its `mode` needs, all of them, and no key of another mode "
    "(`on_board`: `board_temperature_C` at least `limits.ambient_C`, "
    "`board_copper_area_mm2`; `enclosure`: `enclosure_volume_cm3`; `forced_air`: "
    "`air_speed_m_s`; `potted`: `potting_conductivity_W_mK`, `potting_thickness_mm`, "
    "`wall_temperature_C`).",
    "`[custom_core]`: an E core needs `leg_width_mm` and `leg_depth_mm`, a pot core "
    "`post_diameter_mm`; windows at least a tenth of the largest leg; `max_height_mm` "
    "above the flattest set the ranges allow.",
    "Core, material and wire ids in `[search]` exist in the catalogue (checked against "
    "the catalogue by `optimag check`).",
)


def _unwrap_optional(annotation: Any) -> Any:
    origin = typing.get_origin(annotation)
    if origin in (typing.Union, types.UnionType):
        args = [a for a in typing.get_args(annotation) if a is not type(None)]
        if len(args) == 1:
            return args[0]
    return annotation


def _split_annotated(annotation: Any) -> tuple[Any, list[Any]]:
    metadata: list[Any] = []
    while typing.get_origin(annotation) is typing.Annotated:
        base, *extra = typing.get_args(annotation)
        metadata.extend(extra)
        annotation = base
    return annotation, metadata


def _number(value: Any) -> str:
    return f"{value:g}" if isinstance(value, float) else str(value)


def _flat_metadata(metadata: list[Any]) -> list[Any]:
    # ``Field(gt=0)`` inside ``Annotated`` arrives as a FieldInfo holding the bounds.
    flat: list[Any] = []
    for item in metadata:
        flat += _flat_metadata(list(item.metadata)) if isinstance(item, FieldInfo) else [item]
    return flat


def _bounds(metadata: list[Any]) -> list[str]:
    parts = []
    for item in _flat_metadata(metadata):
        if isinstance(item, annotated_types.Gt):
            parts.append(f"> {_number(item.gt)}")
        elif isinstance(item, annotated_types.Ge):
            parts.append(f">= {_number(item.ge)}")
        elif isinstance(item, annotated_types.Lt):
            parts.append(f"< {_number(item.lt)}")
        elif isinstance(item, annotated_types.Le):
            parts.append(f"<= {_number(item.le)}")
        elif isinstance(item, annotated_types.MinLen) and item.min_length:
            parts.append(f"at least {item.min_length} entries")
        elif isinstance(item, annotated_types.MaxLen):
            parts.append(f"at most {item.max_length} entries")
        elif isinstance(item, StringConstraints):
            if item.pattern == r"^[a-z0-9-]+$":
                parts.append("lowercase letters, digits and '-'")
            if item.min_length:
                parts.append("not empty")
            if item.max_length:
                parts.append(f"at most {item.max_length} characters")
    return parts


def describe_type(annotation: Any, metadata: list[Any] | None = None) -> tuple[str, str]:
    """(type, allowed values) of a schema annotation, in words."""
    annotation, inner = _split_annotated(_unwrap_optional(annotation))
    metadata = list(metadata or []) + inner
    origin = typing.get_origin(annotation)
    if origin is Literal:
        return "text", "one of " + ", ".join(f'"{v}"' for v in typing.get_args(annotation))
    if origin is tuple:
        args = typing.get_args(annotation)
        if len(args) == 2 and args[1] is Ellipsis:
            kind, allowed = describe_type(args[0])
            each = f"each {allowed}" if allowed else ""
            bounds = _bounds(metadata)
            return f"list of {kind}", "; ".join(p for p in [*bounds, each] if p)
        return "[low, high] pair of numbers, or one number", "0 < low <= high"
    if annotation is bool:
        return "true or false", ""
    if annotation is int:
        return "whole number", ", ".join(_bounds(metadata))
    if annotation is float:
        return "number", ", ".join(_bounds(metadata))
    if annotation is str:
        return "text", ", ".join(_bounds(metadata))
    if annotation is Path:
        return "text (folder path)", "an existing folder"
    if annotation is Spread:
        return ("number, or table { spread, distribution }",
                'spread >= 0; distribution "normal" (spread = 3 sigma) or "uniform"')
    return getattr(annotation, "__name__", str(annotation)), ""


def unit_of(section: str, key: str) -> str:
    """Unit of ``section.key`` from its name's suffix ("-" for a plain number)."""
    dotted = f"{section}.{key}"
    if dotted in UNIT_OVERRIDES:
        return UNIT_OVERRIDES[dotted]
    stem, _, suffix = key.rpartition("_")
    return UNIT_SUFFIXES.get(suffix, "-") if stem else "-"


def default_text(section: str, key: str, field: FieldInfo) -> str:
    """How the default of a key reads in the reference."""
    if field.is_required():
        return "required"
    value = field.get_default(call_default_factory=True)
    if section == "inductor" and key == "ripple_fraction":
        return f"{DEFAULT_RIPPLE_FRACTION} if inductance_uH is absent"
    if value is None:
        return "absent"
    return toml_value(value)


def toml_value(value: Any) -> str:
    """A Python value written as TOML."""
    if isinstance(value, Spread):
        return f'{{ spread = {_number(value.spread)}, distribution = "{value.distribution}" }}'
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return f'"{value}"'
    if isinstance(value, float):
        return _number(value)
    if isinstance(value, tuple | list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    return str(value)


def attribute_docstrings(model: type[BaseModel]) -> dict[str, str]:
    """The docstring written under each field of ``model`` (and of its bases), by field."""
    docs: dict[str, str] = {}
    for cls in reversed(model.__mro__):
        if not (isinstance(cls, type) and issubclass(cls, BaseModel)) or cls is BaseModel:
            continue
        try:
            tree = ast.parse(textwrap.dedent(inspect.getsource(cls)))
        except (OSError, TypeError):
            continue
        body = tree.body[0].body if tree.body and isinstance(tree.body[0], ast.ClassDef) else []
        for node, after in itertools.pairwise(body):
            if (isinstance(node, ast.AnnAssign) and isinstance(node.target, ast.Name)
                    and isinstance(after, ast.Expr) and isinstance(after.value, ast.Constant)
                    and isinstance(after.value.value, str)):
                docs[node.target.id] = inspect.cleandoc(after.value.value)
    return docs


@functools.cache
def _describe_fields() -> None:
    """Give every study-file key its docstring as its description (once)."""
    for model in _SECTION_MODELS.values():
        docs = attribute_docstrings(model)
        for key, field in model.model_fields.items():
            if not field.description and key in docs:
                field.description = docs[key]


def schema_keys() -> list[tuple[str, str, FieldInfo]]:
    """(section, key, field) for every key of every study-file table, in schema order,
    each field's description its docstring."""
    _describe_fields()
    return [
        (section, key, field)
        for section, model in _SECTION_MODELS.items()
        for key, field in model.model_fields.items()
    ]


def _header(section: str) -> str:
    return f"[[{section}]]" if section == "operating_points" else f"[{section}]"


def _cell(text: str) -> str:
    return " ".join(text.split()).replace("|", "\\|")


def _section_doc(model: type[BaseModel]) -> str:
    doc = (model.__doc__ or "").strip().split("\n\n")[0]
    text = " ".join(doc.split())
    # Drop the leading "``[name]``:" the docstrings start with.
    if text.startswith("``") and ":" in text:
        text = text.split(":", 1)[1].strip()
    return text[:1].upper() + text[1:]


def study_reference() -> str:
    """The study-file reference as Markdown (the [model] choices: the built-in models of
    `optimag.registry`'s registries, as a fresh process has them)."""
    from optimag.registry import study_registries

    _describe_fields()
    registries = study_registries()
    lines = [
        "# Study-file reference",
        "",
        "<!-- Generated by `python -m optimag.study.reference studies/REFERENCE.md` from the "
        "study schema (optimag/study/file.py, optimag/study/custom_core.py); do not edit by "
        "hand. -->",
        "",
        "A study is a TOML file. `optimag init NAME` writes a commented starting point and "
        "`optimag check STUDY` validates one (and says which defaults it applied). Units are "
        "part of each key's name (`_kHz`, `_V`, `_A`, `_uH`, `_mm`, `_mm2`, `_cm3`, `_g`, "
        "`_W`, `_C` for °C, `_pct` for %). Numbers are TOML numbers: `12` and `12.0` are "
        "both accepted for a number, text in quotes is not. A key that is absent takes its "
        "default; \"absent\" means no limit, all catalogue entries, or no custom core, as "
        "the description says.",
        "",
        "Required tables: "
        + ", ".join(f"`{_header(s)}`" for s in _REQUIRED_SECTIONS)
        + ". The others are optional.",
        "",
    ]
    for section, model in _SECTION_MODELS.items():
        required = section in _REQUIRED_SECTIONS
        lines += [f"## `{_header(section)}`" + (" (required)" if required else ""), ""]
        doc = _section_doc(model)
        if section == "operating_points":
            doc = "One table per operating point, at least one."
        if doc:
            lines += [doc, ""]
        lines += [
            "| key | type | unit | default | allowed | description |",
            "| --- | --- | --- | --- | --- | --- |",
        ]
        for key, field in model.model_fields.items():
            kind, allowed = describe_type(field.annotation, list(field.metadata))
            if section == "tolerance" and key in SPREAD_DEFAULTS:
                allowed += f"; spread <= {_number(SPREAD_DEFAULTS[key][2])}"
            if section == "model" and key in registries:
                names = ", ".join(f'"{n}"' for n in registries[key].study_names())
                allowed = f"one of {names}, or a model registered from Python"
            lines.append(
                "| "
                + " | ".join(
                    _cell(text)
                    for text in (
                        f"`{key}`", kind, unit_of(section, key),
                        default_text(section, key, field), allowed or "-",
                        field.description or "",
                    )
                )
                + " |"
            )
        lines.append("")
    lines += ["## Rules across keys", ""]
    lines += [f"- {rule}" for rule in CROSS_KEY_RULES]
    lines.append("")
    return "\n".join(lines)


def write_reference(path: str | os.PathLike[str]) -> Path:
    """Write `study_reference` to ``path`` atomically (temp file, then rename)."""
    target = Path(path)
    handle, temp = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.",
                                    suffix=".tmp")
    try:
        with os.fdopen(handle, "w", encoding="utf-8", newline="\n") as out:
            out.write(study_reference())
        os.replace(temp, target)
    except BaseException:
        Path(temp).unlink(missing_ok=True)
        raise
    return target


def main(argv: list[str] | None = None) -> int:
    args = sys.argv[1:] if argv is None else argv
    if len(args) != 1:
        print("usage: python -m optimag.study.reference OUTPUT.md", file=sys.stderr)
        return 2
    print(f"wrote {write_reference(args[0])}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
