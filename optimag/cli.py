"""The `optimag` command."""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
import tomllib
from pathlib import Path

from optimag import __version__
from optimag.errors import ClusterError, InputError, Problem, RunFolderError, StorageError
from optimag.ranges import BATCH, SEED, TRIALS

#: Topologies `optimag init` writes (kept equal to `optimag.study.template`'s, tested;
#: written out so the command line starts without loading the study package).
INIT_TOPOLOGIES = ("buck", "boost", "buck-boost", "multiphase-buck", "pfc-boost",
                   "inverter-filter")

#: Shown under `optimag --help`.
EXAMPLES = """examples:
  optimag init my-buck --topology buck      write a commented starting study my-buck.toml
  optimag check my-buck.toml                validate it (and list the defaults applied)
  optimag explore my-buck.toml              search it; results in runs/my-buck-<time>/
  optimag explore studies/cargo-bike-buck.toml --top 10 --out runs/demo
  optimag explore studies/custom-core-buck.toml --strategy optuna --trials 3000 --seed 7
  optimag report runs/demo                  rebuild report.html of a run folder
  optimag check catalogs/demo               validate a catalogue folder

Every study key, its unit, default and range: studies/REFERENCE.md.
"""

#: Optional tables that `check` summarises in one line when the study leaves them out.
SUMMARISED_SECTIONS = ("tolerance",)

#: search keys whose absence means the whole catalogue.
UNSET_SEARCH_KEYS = ("search.cores", "search.materials", "search.wires")

#: search keys that only the optuna strategy reads.
OPTUNA_ONLY_KEYS = ("search.trials", "search.seed", "search.sampler", "search.batch_size")


def _print_problems(problems: list[Problem]) -> None:
    for problem in problems:
        print(str(problem), file=sys.stderr)
    print(f"{len(problems)} problem(s) found.", file=sys.stderr)


def _check(path_text: str) -> int:
    # Only what validation needs (no model, no pandas): `check` starts fast
    # (tests/test_cli_start.py).
    from optimag.catalog import load_catalog
    from optimag.study import load_study
    from optimag.study.catalog_check import check_study_against_catalog

    path = Path(path_text)
    try:
        if path.is_dir():
            catalog = load_catalog(path)
            print(
                f"OK: catalogue {path}: {catalog.count('cores')} cores, "
                f"{catalog.count('materials')} materials, {catalog.count('wires')} wires"
            )
            return 0
        study = load_study(path)
        catalog = load_catalog(study.catalog.path)
        check_study_against_catalog(study, catalog)
    except InputError as error:
        _print_problems(error.problems)
        return 2
    print(
        f"OK: study '{study.name}' "
        f"({study.converter.topology}, "
        f"{len(study.operating_points)} operating point(s)); catalogue {study.catalog.path}: "
        f"{catalog.count('cores')} cores, {catalog.count('materials')} materials, "
        f"{catalog.count('wires')} wires"
    )
    for line in _defaults_lines(study):
        print(line)
    return 0


#: Exit codes of the `optimag` command.
EXIT_OK, EXIT_INFEASIBLE, EXIT_REFUSED, EXIT_INTERNAL, EXIT_INTERRUPTED = 0, 1, 2, 3, 130


def _defaults_lines(study) -> list[str]:
    """What `check` says about the keys the study leaves out."""
    from optimag.study import applied_defaults
    from optimag.study.reference import toml_value, unit_of

    applied, unset = [], []
    document = tomllib.loads(study.source_text) if study.source_text else {}
    summarised = [name for name in SUMMARISED_SECTIONS if name not in document]
    for key, value in applied_defaults(study):
        if key.partition(".")[0] in summarised:
            continue
        if study.search.strategy != "optuna" and key in OPTUNA_ONLY_KEYS:
            continue
        if key == "search.gap_grid_mm" and study.search.gap != "grid":
            continue
        if value is None:
            # Only absences that widen the search are worth a word; a key of another
            # cooling mode or the inductance given by ripple is simply not used.
            if key.startswith("limits.") or key in UNSET_SEARCH_KEYS:
                unset.append(key)
            continue
        section, _, name = key.partition(".")
        unit = unit_of(section, name)
        shown = toml_value(value)
        if unit not in ("-", "currency") and not isinstance(value, str):
            shown += f" {unit}"
        if key == "inductor.ripple_point":
            shown += " (the point that needs the largest inductance)"
        applied.append(f"  {key} = {shown}")
    applied += [f"  [{name}]: every key at its default (see studies/REFERENCE.md)"
                for name in summarised]
    lines = []
    if applied:
        lines += ["Defaults applied (keys not in the file):", *applied]
    if unset:
        lines.append("Not set (no limit, or the whole catalogue): " + ", ".join(unset))
    return lines


def _init(args) -> int:
    from optimag.study.template import study_slug, study_template

    target = Path(args.name if args.name.endswith(".toml") else f"{args.name}.toml")
    name = study_slug(target.stem)
    if not name:
        print(f"{args.name}: give a name made of letters, digits or '-'", file=sys.stderr)
        return EXIT_REFUSED
    if os.path.lexists(target):
        print(f"{target}: already exists; not overwritten (choose another name)",
              file=sys.stderr)
        return EXIT_REFUSED
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        print(f"{folder}: folder does not exist", file=sys.stderr)
        return EXIT_REFUSED
    catalog = Path(args.catalog) if args.catalog else _demo_catalog()
    if catalog is None or not catalog.is_dir():
        shown = args.catalog or "the demo catalogue (catalogs/demo)"
        print(f"{shown}: catalogue folder not found; give one with --catalog FOLDER",
              file=sys.stderr)
        return EXIT_REFUSED
    try:
        reference = Path(os.path.relpath(catalog.resolve(), folder.resolve())).as_posix()
    except ValueError:  # another drive
        reference = catalog.resolve().as_posix()
    text = study_template(name, args.topology, reference)
    _write_new_file(target, text)
    print(f"Wrote {target} ({args.topology}, study '{name}', catalogue {reference}). "
          f"Next: optimag check {target}")
    return 0


def _demo_catalog() -> Path | None:
    folder = Path(__file__).resolve().parents[1] / "catalogs" / "demo"
    return folder if folder.is_dir() else None


def _write_new_file(target: Path, text: str) -> None:
    """Write ``text`` to a new file at ``target``: a temporary file in the same folder,
    then a hard link under the final name, which fails instead of replacing anything that
    appeared meanwhile (a file or a symlink)."""
    handle, temp = tempfile.mkstemp(dir=target.parent if str(target.parent) else ".",
                                    prefix=f".{target.name}.", suffix=".tmp")
    try:
        with os.fdopen(handle, "w", encoding="utf-8", newline="\n") as out:
            out.write(text)
        os.link(temp, target)
    finally:
        Path(temp).unlink(missing_ok=True)


def _explore(args) -> int:
    from rich.console import Console
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    import optimag
    from optimag import files
    from optimag.catalog import load_catalog
    from optimag.runfolder import continues_optuna_run, default_run_dir
    from optimag.search.run import check_study_against_catalog
    from optimag.study import load_study

    console = Console(stderr=True)
    try:
        study = load_study(Path(args.study))
        catalog = load_catalog(study.catalog.path)
        check_study_against_catalog(study, catalog)
    except InputError as error:
        _print_problems(error.problems)
        return EXIT_REFUSED
    strategy = args.strategy or study.search.strategy
    folder_storage = strategy == "optuna" and not args.storage
    protect = (Path(study.path), Path(catalog.folder))
    # Every check of the run folder, and its lock, come before the search.
    made = not args.out or not Path(args.out).exists()
    out_dir = Path(args.out) if args.out else default_run_dir(study)
    continuing = strategy == "optuna" and continues_optuna_run(out_dir, args.storage)
    with files.claim_run_folder(out_dir, overwrite=args.overwrite,
                                continuing=continuing, protect=protect,
                                discard_if_unused=made):
        storage = args.storage
        if args.overwrite:  # --overwrite starts afresh, trials included
            for name in (files.STORAGE_NAME, files.LEGACY_STORAGE_NAME):
                (out_dir / name).unlink(missing_ok=True)
        if folder_storage:
            from optimag.search.optuna_search.storage import folder_storage as kept_storage
            from optimag.search.optuna_search.storage import kept_in_folder

            kept = kept_in_folder(out_dir)
            if kept is not None:
                print(f"continuing the optuna study kept in {kept}", file=sys.stderr)
            storage = kept_storage(out_dir)
        started = time.perf_counter()
        with Progress(
            TextColumn("[bold]exploring[/bold]"), BarColumn(),
            TextColumn("{task.completed:,.0f}/{task.total:,.0f} candidates"),
            TextColumn("{task.fields[rate]}"), TimeElapsedColumn(),
            console=console, transient=True, disable=not console.is_terminal,
        ) as progress:
            task = progress.add_task("explore", total=None, rate="")

            def report(done: int, total: int) -> None:
                elapsed = max(time.perf_counter() - started, 1e-9)
                progress.update(task, completed=done, total=total,
                                rate=f"{done / elapsed:,.0f}/s")

            result = optimag.explore(
                study, catalog=catalog, strategy=strategy, trials=args.trials,
                seed=args.seed, storage=storage, top=args.top, progress=report,
                re_evaluate=args.re_evaluate, force=args.force,
                announce=print,  # the space's size and estimated memory, on stdout
                workers=args.workers, scheduler=args.scheduler,
            )
        try:
            run_dir = optimag.write_run(result, out_dir, overwrite=args.overwrite)
        except KeyboardInterrupt:
            print(f"Interrupted while writing the run folder; {out_dir} keeps its previous "
                  "contents.", file=sys.stderr)
            return EXIT_INTERRUPTED
    return _summarise(result, run_dir)


def _summarise(result, run_dir: Path) -> int:
    """Print the outcome of a written run; the exit code (0, 1 or 130)."""
    from rich.console import Console
    from rich.table import Table

    counts = result.record["counts"]
    out = Console() if sys.stdout.isatty() else Console(width=160)
    report_state = result.record.get("report", "written")
    interrupted = bool(result.record.get("interrupted")) or report_state.startswith(
        "skipped: interrupted")
    if result.record.get("interrupted"):
        out.print("[yellow]Interrupted: the results below cover the candidates evaluated "
                  "before the stop.[/yellow]")
    for note in result.record.get("notes", []):
        out.print(f"note: {note}")
    out.print(
        f"{counts['total']:,} candidates in {result.record['wall_time_s']:.2f} s "
        f"({result.record['candidates_per_s']:,.0f}/s): {counts['feasible']:,} feasible, "
        f"{counts['pareto']} on the Pareto front."
    )
    if counts.get("not_reached"):
        out.print(f"{counts['not_reached']:,} candidates of the space were not reached.")
    diagnosis = result.record.get("diagnosis") or {}
    alone = diagnosis.get("fails_alone") or {}
    elim = Table(title="Eliminated by constraint (first failed, in check order)")
    elim.add_column("constraint")
    elim.add_column("candidates", justify="right")
    elim.add_column("share", justify="right")
    if alone:
        elim.add_column("fail it alone (relaxing only it admits)", justify="right")
    for name, count in counts["eliminated"].items():
        cells = [name, f"{count:,}", f"{count / max(counts['total'], 1):.1%}"]
        if alone:
            cells.append(f"{alone[name]:,}" if name in alone else "")
        elim.add_row(*cells)
    out.print(elim)
    if report_state != "written":
        out.print(f"report.html: {report_state}")
    if not result.feasible:
        out.print("[bold red]No candidate meets every constraint.[/bold red]")
        if alone:
            admits = [f"{name} would admit {n:,}" for name, n in
                      sorted(alone.items(), key=lambda item: -item[1]) if n]
            out.print("Relaxing one limit alone: " + ("; ".join(admits) if admits else
                      "no single limit rules out any candidate on its own; at least two "
                      "must be relaxed") + f" (over {diagnosis.get('scope', 'the run')}).")
        out.print("Nearest misses (one per core, by worst violation relative to its limit):")
        misses = Table()
        for col in ("core", "material", "turns", "wire", "parallel", "worst constraint",
                    "violation"):
            misses.add_column(col)
        for rec in result.near_miss_records:
            misses.add_row(rec["core"], rec["material"], str(rec["turns"]), rec["wire"],
                           str(rec["parallel"]), rec.get("worst_constraint", ""),
                           f"{rec.get('worst_violation', 0):+.1%}")
        out.print(misses)
        out.print(f"Run record: {run_dir}")
        return EXIT_INTERRUPTED if interrupted else EXIT_INFEASIBLE
    table = Table(title=f"Short-list (first {min(5, len(result.shortlist_records))}; all in "
                        f"{run_dir / 'shortlist.csv'})")
    for col in ("id", "core", "material", "N", "gap mm", "wire", "par", "weighted loss W",
                "hot spot °C",
                "vol cm³", "cost", "model flags"):
        table.add_column(col)
    for rec in result.shortlist_records[:5]:
        table.add_row(
            rec["design_id"] + (" (knee)" if rec.get("knee") else ""), rec["core"],
            rec["material"], str(rec["turns"]), f"{rec['gap_mm']:.3f}", rec["wire"],
            str(rec["parallel"]), f"{rec['weighted_loss_W']:.3f}",
            f"{rec['hotspot_temperature_C']:.1f}",
            f"{rec['volume_cm3']:.2f}", f"{rec['cost']:.2f}", rec.get("model_flags", ""),
        )
    out.print(table)
    out.print(f"Results: {run_dir} (report.html, shortlist.csv/.xlsx/.json, pareto.csv, run.json)")
    return EXIT_INTERRUPTED if interrupted else EXIT_OK


def _report(args) -> int:
    from optimag import files
    from optimag.report.html import build_report

    run_dir = Path(args.run_dir)
    if not (run_dir / "run.json").is_file():
        print(f"{run_dir}: not a run folder (no run.json)", file=sys.stderr)
        return 2
    with files.claim_run_folder(run_dir, overwrite=True):
        path = build_report(run_dir)
    print(f"Report: {path}")
    return 0


def _fit_material(args) -> int:
    from optimag.catalog import fit_material as fm

    path = Path(args.points)
    points = fm.read_points(path)
    fit = fm.fit_material(points, source=str(path))
    print(fm.error_table(points, fit))
    low, high = fit.temperature_range_C
    print(f"Fitted on {fit.f_min_kHz:g}-{fit.f_max_kHz:g} kHz, peak flux up to "
          f"{fit.b_max_T:g} T, {low:g}-{high:g} °C"
          + (f", DC field up to {max(fit.bias_h_A_m):g} A/m" if fit.bias_h_A_m else "")
          + ". Outside these ranges the row is an extrapolation.")
    print("Not given by loss data, fill from the datasheet before use: "
          + ", ".join(fm.NOT_FROM_LOSS_DATA))
    text = fm.material_row(fit, args.name or path.stem)
    if args.out:
        fm.write_new_file(Path(args.out), text)
        print(f"Material row: {args.out}")
    else:
        print(text, end="")
    return 0


def _evaluate(args) -> int:
    import json

    from rich.console import Console
    from rich.table import Table

    from optimag import records
    from optimag.catalog import load_catalog
    from optimag.search.given import GivenDesign, evaluate_given
    from optimag.study import load_study

    study = load_study(Path(args.study))
    catalog = load_catalog(study.catalog.path)
    design = GivenDesign(core=args.core, material=args.material, turns=args.turns,
                         wire=args.wire, parallel=args.parallel, stack=args.stack,
                         gap_mm=args.gap_mm, name="given", gap_kind=args.gap_kind)
    result = evaluate_given(study, catalog, design, source="command line", prefix="--")
    record = result.record
    if args.json:
        print(json.dumps(record, indent=1, allow_nan=False))
    else:
        out = Console() if sys.stdout.isatty() else Console(width=160)
        gap = "solved for the inductance" if args.gap_mm is None else "given"
        out.print(
            f"{record['core']} x{record['stack']} {record['material']}, N = {record['turns']}, "
            f"{record['parallel']} x {record['wire']}, gap {record['gap_mm']:.4g} mm ({gap}); "
            f"{record['gap_method']}"
        )
        figures = Table(title=f"Figures (point figures at {record['operating_point']}, "
                              "the hottest operating point)")
        figures.add_column("figure")
        figures.add_column("value", justify="right")
        for key in ("inductance_uH", "inductance_at_peak_uH", "peak_current_A",
                    "peak_flux_T", "flux_swing_T", "core_loss_W", "winding_dc_loss_W",
                    "winding_ac_loss_W", "winding_gap_loss_W", "total_loss_W",
                    "weighted_loss_W", "temperature_C", "fill_factor", "layers",
                    "volume_cm3", "mass_g", "cost"):
            figures.add_row(records.header(key, study.cost.currency),
                            records.display(key, record[key]))
        out.print(figures)
        checks = Table(title="Constraints (margin > 0: met)")
        for col in ("constraint", "value", "limit", "margin", ""):
            checks.add_column(col, justify="right" if col == "margin" else "left")
        for check in result.checks:
            checks.add_row(check.name, check.value, check.limit, f"{check.margin:+.1%}",
                           "met" if check.met else "[bold red]violated[/bold red]")
        out.print(checks)
        for note in record.get("model_notes", []):
            out.print(f"note: {note}")
    if result.violated:
        print(f"violates: {', '.join(result.violated)}", file=sys.stderr)
        return 1
    return 0


def _verify(args) -> int:
    from rich.console import Console
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn
    from rich.table import Table

    from optimag import files
    from optimag.report.data import field_check_lines
    from optimag.report.html import build_report
    from optimag.verify import verify_design

    run_dir = Path(args.run_dir)
    if not (run_dir / "run.json").is_file():
        print(f"{run_dir}: not a run folder (no run.json)", file=sys.stderr)
        return 2
    console = Console(stderr=True)
    with files.claim_run_folder(run_dir, overwrite=True), Progress(
        TextColumn("[bold]field check[/bold]"), BarColumn(), TextColumn("{task.description}"),
        TimeElapsedColumn(), console=console, transient=True,
    ) as progress:
        task = progress.add_task("starting", total=1.0)

        def tell(step: str, done: float) -> None:
            progress.update(task, completed=done, description=step)

        result = verify_design(run_dir, args.design_id, progress=tell,
                               resolution=args.resolution)
        progress.update(task, description="rebuilding the report")
        build_report(run_dir)
    out = Console() if sys.stdout.isatty() else Console(width=160)
    table = Table(title=f"Field check of {result['design_id']} ({result['core']}, gap "
                        f"{result['gap_mm']:.3g} mm, {result['section']} section)")
    table.add_column("figure")
    table.add_column("value", justify="right")
    for label, value in field_check_lines(result):
        table.add_row(label, value)
    out.print(table)
    across = Table(title=f"|B| across the winding at the gap's height, "
                        f"{result['peak_current_A']:.3g} A, in mT")
    for col in ("from the leg (mm)", "field solution", "gap-loss model", "1-D (AC loss)"):
        across.add_column(col, justify="right")
    for row in zip(result["field_distance_mm"], result["field_fem_mT"],
                   result["field_closed_form_mT"], result["field_one_d_mT"], strict=True):
        across.add_row(*(f"{v:.3g}" for v in row))
    out.print(across)
    out.print(f"Flux plot: {run_dir / ('verify-' + result['design_id'] + '.html')}; "
              "the report's build sheet shows the check.")
    return 0


def _non_negative_float(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{text}' is not a number") from None
    if not (value >= 0.0 and value != float("inf")):
        raise argparse.ArgumentTypeError(f"{text} must be a finite length >= 0")
    return value


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="optimag", description="Power-inductor design search for switch-mode converters.",
        epilog=EXAMPLES, formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"optimag {__version__}")
    commands = parser.add_subparsers(dest="command", required=True)
    init = commands.add_parser(
        "init", help="write a commented starting study NAME.toml",
        epilog="example: optimag init my-boost --topology boost",
    )
    init.add_argument("name", help="study name, or the .toml file to write")
    init.add_argument("--topology", choices=list(INIT_TOPOLOGIES), default="buck",
                      help="converter topology (default buck)")
    init.add_argument("--catalog", help="catalogue folder (default: the demo catalogue)")
    check = commands.add_parser("check", help="validate a study file or a catalogue folder")
    check.add_argument("path", help="a study .toml file or a catalogue folder")
    explore = commands.add_parser("explore", help="search the design space of a study")
    explore.add_argument("study", help="the study .toml file")
    explore.add_argument("--out", help="run folder (default: a new runs/<study>-<timestamp>); "
                         "refused when it is not empty, unless --overwrite or it holds the "
                         "optuna storage this run continues")
    explore.add_argument("--overwrite", action="store_true",
                         help="replace the contents of a non-empty --out (and start its "
                              "optuna storage afresh)")
    explore.add_argument("--re-evaluate", action="store_true", dest="re_evaluate",
                         help="optuna: re-score every stored trial under the current study "
                              "when the study, catalogue or optimag version changed since "
                              "the storage was started")
    explore.add_argument("--top", type=_positive_int, default=20,
                         help="short-list length (default 20)")
    explore.add_argument("--strategy", choices=["exhaustive", "optuna"],
                         help="override the study's search strategy")
    explore.add_argument("--force", action="store_true",
                         help="exhaustive: search a space above the size or memory limit")
    explore.add_argument("--trials", type=_trials, help="optuna: number of trials")
    explore.add_argument("--seed", type=_seed, help=f"optuna: sampler seed, 0 to {SEED[1]}")
    explore.add_argument("--storage", help="optuna: SQLAlchemy URL or journal file path "
                         "(default: optuna.journal in the run folder)")
    explore.add_argument("--workers", type=_positive_int,
                         help="exhaustive: worker processes on this machine (default: every "
                              "core for a large space, else 1)")
    explore.add_argument("--scheduler", metavar="ADDRESS",
                         help="exhaustive: run on the Dask cluster whose scheduler is at "
                              "ADDRESS (e.g. tcp://192.0.2.10:8786)")
    worker = commands.add_parser(
        "worker", help="add trials to an optuna study kept in a shared storage")
    worker.add_argument("--storage", required=True,
                        help="SQLAlchemy URL or journal file path of the storage")
    worker.add_argument("--study", required=True, help="name of the optuna study")
    worker.add_argument("--study-file", help="study .toml (default: the text kept in storage)")
    worker.add_argument("--trials", type=_trials,
                        help="stop when the study has this many complete trials "
                             "(default: the target of the run that created it)")
    worker.add_argument("--batch-size", type=_batch, help="trials asked at once")
    fit = commands.add_parser(
        "fit-material", help="fit a materials.csv row to measured loss-density points")
    fit.add_argument("points", help="CSV with frequency_kHz, peak_flux_T, temperature_C, "
                                    "loss_density_kW_m3 and optionally dc_field_A_m")
    fit.add_argument("--name", help="material id (default: the points file's name)")
    fit.add_argument("--out", help="write the header and row to this new file "
                                   "(default: print them)")
    evaluate = commands.add_parser(
        "evaluate", help="evaluate one given design with the model of a study")
    evaluate.add_argument("study", help="the study .toml file")
    evaluate.add_argument("--core", required=True, help="core id in the catalogue")
    evaluate.add_argument("--material", required=True, help="material id")
    evaluate.add_argument("--turns", required=True, type=_positive_int, help="number of turns")
    evaluate.add_argument("--wire", required=True, help="wire id")
    evaluate.add_argument("--parallel", type=_positive_int, default=1,
                          help="conductors in parallel (default 1)")
    evaluate.add_argument("--stack", type=_positive_int, default=1,
                          help="core sets stacked (default 1)")
    evaluate.add_argument("--gap-mm", type=_non_negative_float,
                          help="air gap [mm]; default: solved for the study's inductance")
    evaluate.add_argument("--gap-kind", choices=("centre", "spacer"), dest="gap_kind",
                          help="how the gap is made: centre (ground centre leg) or spacer "
                               "(every leg gapped); default: the study's first gap kind")
    evaluate.add_argument("--json", action="store_true",
                          help="print the design's record in the shortlist.json format")
    verify = commands.add_parser(
        "verify", help="check one design of a run against field solutions (finite elements)")
    verify.add_argument("run_dir", help="a run folder written by explore")
    verify.add_argument("design_id", help="the design's id (e.g. D0001)")
    verify.add_argument("--resolution", type=float, default=1.0,
                        help="mesh density factor (default 1; 2 doubles the grid lines)")
    report = commands.add_parser("report", help="rebuild report.html of a run folder")
    report.add_argument("run_dir", help="a run folder written by explore")
    return parser


def _whole_in(low: int, high: int):
    """An argparse type: a whole number within [low, high]."""

    def parse(text: str) -> int:
        shown = text if len(text) <= 24 else f"{text[:10]}...({len(text)} characters)"
        try:
            value = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"'{shown}' is not a whole number") from None
        if not low <= value <= high:
            raise argparse.ArgumentTypeError(
                f"{shown} is out of range; expected {low} to {high}"
            )
        return value

    return parse


# Bounds shared with the study file's [search] keys.
_positive_int = _whole_in(1, 10**9)
_trials = _whole_in(*TRIALS)
_seed = _whole_in(*SEED)
_batch = _whole_in(*BATCH)


def main(argv: list[str] | None = None) -> int:
    """Run the command; returns the exit code: 0 success, 1 no feasible design, 2 bad
    input or refused, 3 internal error, 130 interrupted."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return _dispatch(parser, args)
    except InputError as error:
        _print_problems(error.problems)
        return EXIT_REFUSED
    except (RunFolderError, StorageError, ClusterError) as error:
        print(f"optimag: {error}", file=sys.stderr)
        return EXIT_REFUSED
    except KeyboardInterrupt:
        print("optimag: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    except OSError as error:
        where = f": {error.filename}" if error.filename and str(error.filename) not in str(
            error.strerror) else ""
        print(f"optimag: {error.strerror or error}{where}", file=sys.stderr)
        return EXIT_REFUSED
    except Exception as error:  # a bug: say so, with a code no other outcome uses
        if os.environ.get("OPTIMAG_DEBUG"):
            raise
        print(f"optimag: internal error ({type(error).__name__}: {error}); set "
              "OPTIMAG_DEBUG=1 to see where", file=sys.stderr)
        return EXIT_INTERNAL


def _dispatch(parser: argparse.ArgumentParser, args: argparse.Namespace) -> int:
    if args.command == "init":
        return _init(args)
    if args.command == "check":
        return _check(args.path)
    if args.command == "explore":
        return _explore(args)
    if args.command == "report":
        return _report(args)
    if args.command == "fit-material":
        return _fit_material(args)
    if args.command == "evaluate":
        return _evaluate(args)
    if args.command == "verify":
        return _verify(args)
    if args.command == "worker":
        from optimag.search.optuna_search import worker_command

        return worker_command(args)
    parser.error(f"unknown command {args.command}")
    return 2


if __name__ == "__main__":
    sys.exit(main())
