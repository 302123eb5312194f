"""Nothing is lost: interrupted writes leave no file, demo and report leave other files alone."""

import os

import pytest

from globcons.demo import run_demo
from globcons.errors import OutputError
from globcons.io.atomic import atomic_output


def test_interrupted_write_leaves_neither_the_file_nor_a_temporary(tmp_path):
    target = tmp_path / "table.tsv"
    with pytest.raises(KeyboardInterrupt):
        with atomic_output(target) as stream:
            stream.write("column\tclass\n1\tinvariant\n")
            raise KeyboardInterrupt  # Ctrl-C in the middle of a write
    assert os.listdir(tmp_path) == []


def test_interrupted_write_keeps_the_previous_version(tmp_path):
    target = tmp_path / "table.tsv"
    target.write_text("old\n")
    with pytest.raises(KeyboardInterrupt):
        with atomic_output(target) as stream:
            stream.write("new, half written")
            raise KeyboardInterrupt
    assert target.read_text() == "old\n" and os.listdir(tmp_path) == ["table.tsv"]


def test_demo_leaves_files_it_did_not_write(tmp_path):
    """The demo's own folder keeps other files; its report folder is replaced as a whole (no stale file of an
    earlier run survives), and a report folder holding other files is refused, untouched."""
    mine = tmp_path / "my_notes.txt"
    mine.write_text("keep me")
    (tmp_path / "report").mkdir()
    other = tmp_path / "report" / "my_figure.svg"
    other.write_text("<svg/>")
    with pytest.raises(OutputError, match="holds other files and no report.html"):
        run_demo(tmp_path)
    assert mine.read_text() == "keep me" and other.read_text() == "<svg/>"
    other.unlink()
    result = run_demo(tmp_path)
    stale = tmp_path / "report" / "stale.svg"
    stale.write_text("<svg/>")
    result = run_demo(tmp_path)
    assert not stale.exists()
    assert mine.read_text() == "keep me"
    assert (tmp_path / "columns.tsv").is_file() and result.report.is_file()
    assert not list(tmp_path.rglob("*.part"))
