"""Every malformed study in the corpus is rejected with a precise, located message.

Each file in ``malformed/`` starts with ``# expect: <text>``: the message that must
appear among the problems reported for it (schema of the study file; common
practice, no source).
"""

from __future__ import annotations

from pathlib import Path

import pytest

from optimag.errors import InputError
from optimag.study import load_study

CORPUS = sorted((Path(__file__).resolve().parent / "malformed").glob("*.toml"))
EXPECT_PREFIX = "# expect:"


def expected_message(path: Path) -> str:
    first_line = path.read_text(encoding="utf-8").splitlines()[0]
    assert first_line.startswith(EXPECT_PREFIX), f"{path.name} lacks its '# expect:' line"
    return first_line[len(EXPECT_PREFIX) :].strip()


def test_corpus_is_large_enough() -> None:
    assert len(CORPUS) >= 20


@pytest.mark.parametrize("path", CORPUS, ids=[p.stem for p in CORPUS])
def test_load_study_names_file_field_and_fault(path: Path) -> None:
    expected = expected_message(path)
    with pytest.raises(InputError) as caught:
        load_study(path)
    matching = [p for p in caught.value.problems if expected in p.message]
    assert matching, [str(p) for p in caught.value.problems]
    problem = matching[0]
    assert problem.file == str(path)
    assert str(path) in str(problem)
    if problem.message.startswith("not valid TOML"):
        # A syntax error has no key to name; the parser's line stands in for it.
        assert problem.line is not None
    else:
        assert problem.field
        assert f": {problem.field}: " in str(problem)


@pytest.mark.parametrize("path", CORPUS, ids=[p.stem for p in CORPUS])
def test_check_command_reports_the_fault(path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    from optimag.cli import main

    assert main(["check", str(path)]) == 2
    captured = capsys.readouterr()
    assert expected_message(path) in captured.err
    assert "Traceback" not in captured.err
    assert "Traceback" not in captured.out
