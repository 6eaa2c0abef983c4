"""The `optimag` command."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from optimag.errors import InputError, Problem


def _print_problems(problems: list[Problem]) -> None:
    for problem in problems:
        print(str(problem), file=sys.stderr)
    print(f"{len(problems)} problem(s) found.", file=sys.stderr)


def _check(path_text: str) -> int:
    from optimag.catalog import load_catalog
    from optimag.spec import load_study

    path = Path(path_text)
    try:
        if path.is_dir():
            catalog = load_catalog(path)
            print(
                f"OK: catalogue {path}: {len(catalog.cores)} cores, "
                f"{len(catalog.materials)} materials, {len(catalog.wires)} wires"
            )
            return 0
        study = load_study(path)
        catalog = load_catalog(study.catalog.path)
    except InputError as error:
        _print_problems(error.problems)
        return 2
    print(
        f"OK: study '{study.name}' ({study.converter.topology}, "
        f"{len(study.operating_points)} operating point(s)); catalogue {study.catalog.path}: "
        f"{len(catalog.cores)} cores, {len(catalog.materials)} materials, {len(catalog.wires)} wires"
    )
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="optimag", description="Power-inductor design search for switch-mode converters."
    )
    commands = parser.add_subparsers(dest="command", required=True)
    check = commands.add_parser("check", help="validate a study file or a catalogue folder")
    check.add_argument("path", help="a study .toml file or a catalogue folder")
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command == "check":
        return _check(args.path)
    parser.error(f"unknown command {args.command}")
    return 2


if __name__ == "__main__":
    sys.exit(main())
