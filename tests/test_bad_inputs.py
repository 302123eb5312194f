"""The corpus of malformed and awkward inputs (tests/data/bad): every case gets its exit status and one
short line naming the problem, with no traceback, and a failed run leaves no output behind."""

import shlex
from pathlib import Path

import pytest

from globcons.cli import main

BAD = Path(__file__).resolve().parent / "data" / "bad"


def load_cases():
    cases = []
    for line in (BAD / "cases.tsv").read_text(encoding="utf-8").splitlines():
        if not line.strip() or line.startswith("#"):
            continue
        name, command, status, message = (line.split("\t") + [""])[:4]
        cases.append(pytest.param(command, int(status), message, id=name))
    return cases


@pytest.mark.parametrize("command,status,message", load_cases())
def test_bad_input_case(command, status, message, tmp_path, capsys):
    args = shlex.split(command.format(bad=BAD, tmp=tmp_path))
    before = sorted(p.name for p in BAD.iterdir())
    assert main(args) == status
    captured = capsys.readouterr()
    assert "Traceback" not in captured.err
    assert sorted(p.name for p in BAD.iterdir()) == before  # nothing written beside the inputs
    if status == 2:
        errors = [line for line in captured.err.splitlines() if "error" in line.lower()]
        assert len(errors) == 1, captured.err
        assert message in errors[0], errors[0]
        assert not [p for p in tmp_path.rglob("*") if p.is_file()]  # a failed run leaves no file


def test_the_corpus_is_large_enough():
    assert len(load_cases()) >= 40
