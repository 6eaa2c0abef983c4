"""A study checked against its catalogue before anything is computed: the ids its search
filters and its ``[[reference_designs]]`` name, and whether the catalogue is still the one
the study was run on. Light on imports (no model, no pandas), so `optimag check` starts
fast.
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass

from optimag.errors import InputError, Problem


@dataclass(frozen=True)
class GivenDesign:
    """A design named by catalogue ids; ``gap_mm`` None means solved as in the search;
    ``gap_kind`` ("centre": ground centre leg, "spacer": every leg gapped) None means the
    study's first allowed kind."""

    core: str
    material: str
    turns: int
    wire: str
    parallel: int = 1
    stack: int = 1
    gap_mm: float | None = None
    name: str = "given"
    gap_kind: str | None = None


#: How a discrete gap can be made (`optimag evaluate --gap-kind`, `[[reference_designs]]`).
GAP_KINDS = ("centre", "spacer")


def _problem(source: str, field: str, message: str) -> Problem:
    return Problem(source, None, field, message)


def _index(ids: list[str], ident: str, what: str, source: str, field: str,
           folder) -> tuple[int, list]:
    if ident in ids:
        return ids.index(ident), []
    close = difflib.get_close_matches(ident, ids, n=1)
    hint = f"; did you mean '{close[0]}'?" if close else ""
    return -1, [_problem(source, field, f"no {what} '{ident}' in the catalogue {folder}{hint}")]


def check_given(study, catalog, design: GivenDesign, source: str, prefix: str = "") -> None:
    """Raise `InputError` listing every problem of a given design against the catalogue.

    ``source`` names the file (or command line) the design came from; ``prefix`` is
    prepended to field names (``reference_designs[0].`` or ``--``)."""
    problems: list[Problem] = []
    folder = catalog.folder
    core_row, found = _index(catalog.ids("cores"), design.core, "core", source,
                             f"{prefix}core", folder)
    problems += found
    mat_row, found = _index(catalog.ids("materials"), design.material, "material", source,
                            f"{prefix}material", folder)
    problems += found
    problems += _index(catalog.ids("wires"), design.wire, "wire", source, f"{prefix}wire",
                       folder)[1]
    for field, value in (("turns", design.turns), ("parallel", design.parallel),
                         ("stack", design.stack)):
        if int(value) < 1:
            problems.append(_problem(source, f"{prefix}{field}", f"must be at least 1, got "
                                                                  f"{value}"))
    if design.gap_kind is not None and design.gap_kind not in GAP_KINDS:
        problems.append(_problem(source, f"{prefix}gap_kind",
                                 f"must be one of {', '.join(GAP_KINDS)}, got "
                                 f"'{design.gap_kind}'"))
    if design.gap_mm is not None and not (math.isfinite(design.gap_mm) and design.gap_mm >= 0):
        problems.append(_problem(source, f"{prefix}gap_mm",
                                 f"must be a finite length >= 0, got {design.gap_mm}"))
    if core_row >= 0:
        max_stack = int(catalog.value("cores", core_row, "max_stack"))
        if design.stack > max_stack:
            problems.append(_problem(
                source, f"{prefix}stack",
                f"core '{design.core}' stacks at most {max_stack} sets, got {design.stack}",
            ))
        if mat_row >= 0:
            kind = str(catalog.value("materials", mat_row, "kind"))
            family = str(catalog.value("cores", core_row, "family"))
            ungappable = kind == "powder" or family == "toroid"
            for field, given in (("gap_mm", design.gap_mm), ("gap_kind", design.gap_kind)):
                if ungappable and given:
                    problems.append(_problem(
                        source, f"{prefix}{field}",
                        "a discrete gap is cut only in ferrite E and pot cores; "
                        f"{design.material} on {design.core} takes none (leave it out)",
                    ))
    if problems:
        raise InputError(problems)


def given_from_entry(entry) -> GivenDesign:
    """A study's ``[[reference_designs]]`` entry as a `GivenDesign`."""
    return GivenDesign(
        core=entry.core, material=entry.material, turns=entry.turns, wire=entry.wire,
        parallel=entry.parallel, stack=entry.stack, gap_mm=entry.gap_mm, name=entry.name,
        gap_kind=entry.gap_kind,
    )


def check_study_against_catalog(study, catalog) -> None:
    """Ids named in the study's search filters must exist in the catalogue, and a study
    that records the catalogue's content hash (``[catalog] sha256``, as a run folder's
    copy does) needs the catalogue to still have it."""
    problems = []
    recorded = getattr(study.catalog, "sha256", None)
    if recorded is not None and recorded != catalog.content_hash:
        problems.append(Problem(
            str(study.path), line_of(study, "sha256"), "catalog.sha256",
            f"the catalogue {catalog.folder} has changed since this study was run (content "
            f"sha256 {catalog.content_hash[:12]}..., recorded {recorded[:12]}...); restore "
            "it, or delete the sha256 line to search the catalogue as it is now",
        ))
    for key in ("cores", "materials", "wires"):
        wanted = getattr(study.search, key) or []
        known = set(catalog.ids(key))
        for ident in wanted:
            if ident not in known:
                close = difflib.get_close_matches(ident, sorted(known), n=1)
                hint = f"; did you mean '{close[0]}'?" if close else ""
                problems.append(Problem(
                    str(study.path), line_of(study, key), f"search.{key}",
                    f"'{ident}' is not in the catalogue {catalog.folder}{hint}",
                ))
    for index, entry in enumerate(getattr(study, "reference_designs", ()) or ()):
        try:
            check_given(study, catalog, given_from_entry(entry), str(study.path),
                        f"reference_designs[{index}].")
        except InputError as error:
            problems.extend(error.problems)
    if problems:
        raise InputError(problems)


def line_of(study, key: str) -> int | None:
    for number, line in enumerate(study.source_text.splitlines(), start=1):
        if re.match(rf"\s*{re.escape(key)}\s*=", line):
            return number
    return None
