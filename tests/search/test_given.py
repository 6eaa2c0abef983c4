"""Given designs: `optimag evaluate` and [[reference_designs]] use the search's own model
and reproduce the search's short-list record of the same design."""

import json

import pytest

from optimag.catalog import load_catalog
from optimag.cli import main
from optimag.errors import InputError
from optimag.search.given import GivenDesign, evaluate_given, reference_design_records
from optimag.search.run import explore
from optimag.study import load_study
from tests.search.conftest import write_tiny_study

# Fields that belong to a design's place in a run (its id, rank and knee flag), not to it.
RUN_PLACE = {"design_id", "rank", "knee"}


@pytest.fixture(scope="module")
def tiny_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("given")
    study = load_study(write_tiny_study(folder))
    result = explore(study, top=6)
    assert result.shortlist_records
    # The short-list as written to shortlist.json (JSON round trip).
    records = json.loads(json.dumps(result.shortlist_records))
    return study, result.catalog, records


@pytest.fixture(scope="module")
def spacer_run(tmp_path_factory):
    """A search whose gaps are made by a spacer (on the tiny study a spacer gap never
    reaches the front when a ground centre leg is allowed too: it adds height)."""
    folder = tmp_path_factory.mktemp("given-spacer")
    path = write_tiny_study(folder)
    text = path.read_text(encoding="utf-8")
    path.write_text(text.replace("parallel_max = 2",
                                 'parallel_max = 2\ngap_kinds = ["spacer"]'),
                    encoding="utf-8")
    study = load_study(path)
    result = explore(study, top=20)
    return study, result.catalog, json.loads(json.dumps(result.shortlist_records))


def _args(record):
    return ["--core", record["core"], "--material", record["material"], "--turns",
            str(record["turns"]), "--wire", record["wire"], "--parallel",
            str(record["parallel"]), "--stack", str(record["stack"])]


def test_evaluate_json_reproduces_the_shortlist_record(tiny_run, capsys):
    study, _, records = tiny_run
    for record in records[:3]:
        code = main(["evaluate", str(study.path), *_args(record), "--json"])
        printed = json.loads(capsys.readouterr().out)
        assert code == 0  # short-listed designs meet every constraint
        assert printed.keys() == record.keys()
        assert {k: v for k, v in printed.items() if k not in RUN_PLACE} == {
            k: v for k, v in record.items() if k not in RUN_PLACE
        }


@pytest.mark.parametrize("kind", ["centre", "spacer"])
def test_evaluate_json_reproduces_records_of_either_gap_kind(tiny_run, spacer_run, capsys,
                                                             kind):
    study, _, records = tiny_run if kind == "centre" else spacer_run
    record = next(r for r in records if r["inputs"]["gap_kind"] != "none")
    assert record["inputs"]["gap_kind"] == kind
    for given in ([], ["--gap-kind", kind]):  # the study's own kind, or named
        code = main(["evaluate", str(study.path), *_args(record), *given, "--json"])
        printed = json.loads(capsys.readouterr().out)
        assert code == 0
        assert printed.keys() == record.keys()
        assert {k: v for k, v in printed.items() if k not in RUN_PLACE} == {
            k: v for k, v in record.items() if k not in RUN_PLACE
        }
    # The other kind is another design, and the console says how its gap is made.
    other = "spacer" if kind == "centre" else "centre"
    main(["evaluate", str(study.path), *_args(record), "--gap-kind", other])
    out = capsys.readouterr().out
    assert ("spacer" in out) == (other == "spacer")
    assert main(["evaluate", str(study.path), *_args(record), "--gap-kind", other,
                 "--json"]) in (0, 1)
    assert json.loads(capsys.readouterr().out)["inputs"]["gap_kind"] == other


def test_gap_kind_on_a_powder_core_is_bad_input(tiny_run, capsys):
    study, _, _ = tiny_run
    code = main(["evaluate", str(study.path), "--core", "E-shape-20", "--material", "pwd-60u",
                 "--turns", "20", "--wire", "awg-22", "--gap-kind", "spacer"])
    err = capsys.readouterr().err
    assert code == 2 and "command line: --gap_kind: " in err


def test_evaluate_with_the_records_gap_gives_its_figures(tiny_run):
    """A given gap (the record's, rounded to 6 digits) lands on the same design."""
    study, catalog, records = tiny_run
    record = records[0]
    design = GivenDesign(record["core"], record["material"], record["turns"], record["wire"],
                         record["parallel"], record["stack"], gap_mm=record["gap_mm"])
    result = evaluate_given(study, catalog, design)
    for key in ("inductance_uH", "total_loss_W", "temperature_C", "peak_flux_T"):
        assert result.record[key] == pytest.approx(record[key], rel=1e-4)
    assert result.violated == []


def test_evaluate_names_the_violated_constraints(tiny_run, capsys):
    study, _, records = tiny_run
    record = records[0]
    # Few turns on the smallest core: the solved gap cannot hold the flux.
    args = _args(record)
    args[args.index("--turns") + 1] = "8"
    args[args.index("--core") + 1] = "E-shape-17"
    args[args.index("--material") + 1] = "fer-lowf"
    code = main(["evaluate", str(study.path), *args])
    captured = capsys.readouterr()
    assert code == 1
    assert "violates:" in captured.err and "saturation" in captured.err
    assert "saturation" in captured.out and "violated" in captured.out


@pytest.mark.parametrize(
    ("change", "field"),
    [(("--core", "E-shape-99"), "--core"), (("--wire", "awg-99"), "--wire"),
     (("--stack", "9"), "--stack")],
)
def test_evaluate_bad_input_exits_2_naming_the_field(tiny_run, capsys, change, field):
    study, _, records = tiny_run
    args = _args(records[0])
    args[args.index(change[0]) + 1] = change[1]
    code = main(["evaluate", str(study.path), *args])
    err = capsys.readouterr().err
    assert code == 2
    assert f"command line: {field}: " in err and "Traceback" not in err


def test_gap_on_a_powder_core_is_bad_input(tiny_run):
    study, catalog, _ = tiny_run
    design = GivenDesign("E-shape-20", "pwd-60u", 20, "awg-22", gap_mm=0.3)
    with pytest.raises(InputError, match="gap_mm"):
        evaluate_given(study, catalog, design)


def test_reference_designs_of_a_study(tmp_path, tiny_run):
    _, _, records = tiny_run
    record = records[0]
    extra = f"""
[[reference_designs]]
name = "bench"
core = "{record['core']}"
material = "{record['material']}"
turns = {record['turns']}
wire = "{record['wire']}"
parallel = {record['parallel']}
stack = {record['stack']}

[[reference_designs]]
name = "proposal"
core = "E-shape-17"
material = "fer-lowf"
turns = 8
wire = "awg-22"
gap_mm = 0.2

[[reference_designs]]
name = "proposal on a spacer"
core = "E-shape-17"
material = "fer-lowf"
turns = 8
wire = "awg-22"
gap_mm = 0.2
gap_kind = "spacer"
"""
    study = load_study(write_tiny_study(tmp_path, extra=extra))
    refs = reference_design_records(study, load_catalog(study.catalog.path))
    assert [r["design_id"] for r in refs] == ["bench", "proposal", "proposal on a spacer"]
    assert refs[1]["inputs"]["gap_kind"] == "centre" and refs[1]["gap_outer_leg_mm"] == 0
    assert refs[2]["inputs"]["gap_kind"] == "spacer" and refs[2]["gap_outer_leg_mm"] == 0.2
    assert refs[2]["gap_method"].startswith("spacer")
    assert refs[0]["total_loss_W"] == record["total_loss_W"] and refs[0]["violated"] == []
    assert refs[1]["gap_mm"] == 0.2 and refs[1]["violated"]
