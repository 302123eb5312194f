"""Tests of the ``globcons`` command through its real entry point (``globcons.cli.main``) and, for a
few cases, through a real subprocess.

The hand-made alignment ALN (4 rows, 7 columns) and what each column must be, with ``--weights none``
(every row weighs 1) and rules loose enough for four sequences (HAND: a share of 0.6 for invariant, 0.8
for a group, reached with posterior probability 0.5 under a negligible prior, so the posterior share of
k rows out of n is Beta(k, n - k)), worked out by hand:

    s1  H A D - K W L
    s2  H S E - R - L
    s3  H A D G K - -
    s4  H S E - Y - -

    col 1  H H H H   H 4 of 4: P(share >= 0.6) = 1 - 0.6^4 = 0.87   -> invariant,    consensus H
    col 2  A S A S   A 2 of 4: P(>= 0.6) = 0.35; A/S = +1, group 4 of 4: P(>= 0.8) = 1 - 0.8^4 = 0.59
                                                                    -> conservative, consensus A (tie A=S, alphabetical)
    col 3  D E D E   as col 2 (BLOSUM62 D/E = +2)                   -> conservative, consensus D (tie)
    col 4  - - G -   gap fraction 3/4 > 0.5                         -> gap-rich,     consensus G
    col 5  K R K Y   K/R = +2, K/Y = -2: group K, R 3 of 4: P(>= 0.8) = 1 - 0.8^3 = 0.49
                                                                    -> variable,     consensus K (2 of 4)
    col 6  W - - -   gap fraction 3/4                               -> gap-rich,     consensus W
    col 7  L L - -   gap fraction 2/4 = 0.5, not above 0.5; L 2 of 2: P(>= 0.6) = 1 - 0.6^2 = 0.64
                                                                    -> invariant,    consensus L

Class counts: 2 invariant, 2 conservative, 1 variable, 2 gap-rich.
Entropies (bits): col 2 and 3 -(2 * 0.5 log2 0.5) = 1; col 5 frequencies 1/2, 1/4, 1/4 -> 0.5 + 0.5 + 0.5 = 1.5.
"""

from __future__ import annotations

import csv
import io
import json
import os
import stat
import subprocess
import sys

import pytest

import globcons
from globcons.analysis.columns import COLUMN_ORDER
from globcons.cli import main

ALN = ">s1\nHAD-KWL\n>s2\nHSE-R-L\n>s3\nHADGK--\n>s4\nHSE-Y--\n"
EXPECTED_CLASS = ["invariant", "conservative", "conservative", "gap-rich", "variable", "gap-rich", "invariant"]
EXPECTED_CONSENSUS = ["H", "A", "D", "G", "K", "W", "L"]
EXPECTED_RESIDUES = ["H:1.00", "A:0.50,S:0.50", "D:0.50,E:0.50", "G:1.00", "K:0.50,R:0.25,Y:0.25", "W:1.00",
                     "L:1.00"]
EXPECTED_GAPS = [0.0, 0.0, 0.0, 0.75, 0.0, 0.75, 0.5]
HAND = ["--weights", "none", "--min-neff", "0", "--invariant-min", "0.6", "--confidence", "0.5",
        "--prior-weight", "0.0001"]


@pytest.fixture
def aln(tmp_path):
    path = tmp_path / "family.fasta"
    path.write_text(ALN)
    return path


def run(capsys, *args) -> tuple[int, str, str]:
    status = main([str(a) for a in args])
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def tsv_rows(text: str) -> list[dict[str, str]]:
    return list(csv.DictReader(io.StringIO(text), delimiter="\t"))


# --------------------------------------------------------------------------------------------------
# formats


def test_columns_tsv_to_stdout(capsys, aln):
    status, out, err = run(capsys, "columns", aln, *HAND)
    assert status == 0
    lines = out.splitlines()
    assert lines[0].split("\t") == list(COLUMN_ORDER)
    rows = tsv_rows(out)
    assert len(rows) == 7
    assert [r["column"] for r in rows] == ["1", "2", "3", "4", "5", "6", "7"]
    assert [r["class"] for r in rows] == EXPECTED_CLASS
    assert [r["consensus"] for r in rows] == EXPECTED_CONSENSUS
    assert [r["residues"] for r in rows] == EXPECTED_RESIDUES
    assert [float(r["gap_fraction"]) for r in rows] == EXPECTED_GAPS
    assert [float(r["n_eff"]) for r in rows] == [4, 4, 4, 1, 4, 1, 2]  # rows holding a residue
    assert float(rows[0]["entropy_bits"]) == 0.0
    assert float(rows[1]["entropy_bits"]) == pytest.approx(1.0, abs=1e-4)
    assert float(rows[4]["entropy_bits"]) == pytest.approx(1.5, abs=1e-4)
    assert all(r["low_data"] == "no" for r in rows)  # --min-neff 0


def test_default_rules_do_not_trust_four_sequences_and_say_so(capsys, aln):
    # Four sequences are four effective ones: with the defaults (share 0.8 with probability 0.9) none of
    # the columns is confidently invariant or conservative (col 1, H 4 of 4: P = 1 - 0.8^4 = 0.59), every
    # column is low_data, and the summary warns that the family is thin.
    status, out, err = run(capsys, "columns", aln)
    assert status == 0
    rows = tsv_rows(out)
    assert {r["class"] for r in rows} == {"variable", "gap-rich"}
    assert all(r["low_data"] == "yes" for r in rows)
    assert float(rows[0]["support"]) == pytest.approx(0.8 ** 4, abs=0.02)  # variable: 1 - P(invariant share)
    assert "4.0 effective" in err and "thin" in err


def test_columns_csv(capsys, aln):
    status, out, _ = run(capsys, "columns", aln, *HAND, "--table", "csv")
    assert status == 0
    rows = list(csv.reader(io.StringIO(out)))
    assert rows[0] == list(COLUMN_ORDER)
    assert len(rows) == 8
    body = [dict(zip(rows[0], r, strict=True)) for r in rows[1:]]
    assert [r["class"] for r in body] == EXPECTED_CLASS
    # residues with a comma inside are quoted, so the csv still has one field per column
    assert [r["residues"] for r in body] == EXPECTED_RESIDUES


def test_columns_json_with_metadata(capsys, aln):
    status, out, _ = run(capsys, "columns", aln, *HAND, "--table", "json", "--max-gaps", "0.6")
    assert status == 0
    document = json.loads(out)
    meta = document["metadata"]
    assert meta["rules"]["max_gaps"] == 0.6
    assert meta["weights"] == "none"
    assert meta["sequences"] == 4 and meta["columns"] == 7
    # 0.75 > 0.6: columns 4 and 6 stay gap-rich
    assert meta["class_counts"] == {"invariant": 2, "conservative": 2, "variable": 1, "gap-rich": 2}
    rows = document["rows"]
    assert [r["column"] for r in rows] == list(range(1, 8))
    assert [r["class"] for r in rows] == EXPECTED_CLASS
    assert list(rows[0]) == list(COLUMN_ORDER)
    assert rows[3]["gap_fraction"] == 0.75
    assert rows[0]["low_data"] is False


def test_max_gaps_option_changes_the_classes(capsys, aln):
    # with --max-gaps 0.8, columns 4 (only G) and 6 (only W) are no longer gap-rich: invariant
    status, out, _ = run(capsys, "columns", aln, *HAND, "--table", "json", "--max-gaps", "0.8")
    assert status == 0
    document = json.loads(out)
    assert [r["class"] for r in document["rows"]] == [
        "invariant", "conservative", "conservative", "invariant", "variable", "invariant", "invariant"]
    assert document["metadata"]["class_counts"] == {"invariant": 4, "conservative": 2, "variable": 1, "gap-rich": 0}


def test_columns_markdown(capsys, aln):
    status, out, _ = run(capsys, "columns", aln, *HAND, "--table", "md")
    assert status == 0
    lines = out.splitlines()
    assert lines[0] == "| " + " | ".join(COLUMN_ORDER) + " |"
    assert set(lines[1]) <= set("|-: ") and lines[1].count("|") == len(COLUMN_ORDER) + 1
    body = [line for line in lines[2:] if line.startswith("|")]
    assert len(body) == 7
    cells = [[c.strip() for c in line.strip("|").split("|")] for line in body]
    position = {name: k for k, name in enumerate(COLUMN_ORDER)}
    assert [c[position["class"]] for c in cells] == EXPECTED_CLASS
    assert [c[position["consensus"]] for c in cells] == EXPECTED_CONSENSUS


def test_columns_tex_booktabs(capsys, aln):
    status, out, _ = run(capsys, "columns", aln, *HAND, "--table", "tex")
    assert status == 0
    for rule in (r"\toprule", r"\midrule", r"\bottomrule"):
        assert rule in out
    assert out.index(r"\toprule") < out.index(r"\midrule")
    # the page-wide paper table (see test_paper_outputs.py): its chosen columns, '_' escaped for LaTeX
    assert r"col. & label & class & supp. & res. & cons. & gaps & n\_eff & sites \\" in out
    body = [line for line in out.splitlines() if line.endswith(r"\\") and line.split(" & ")[0].strip().isdigit()]
    assert len(body) == 7
    assert [line.split(" & ")[2] for line in body] == EXPECTED_CLASS
    status, out, _ = run(capsys, "columns", aln, *HAND, "--table", "tex", "--tex-columns", "all")
    assert status == 0 and r"H (bits) & H norm." in out and r"unknown\_fraction" in out
    body = [line for line in out.splitlines() if line.endswith(r"\\") and line.split(" & ")[0].strip().isdigit()]
    assert [line.split(" & ")[COLUMN_ORDER.index("class")] for line in body] == EXPECTED_CLASS


def test_dash_output_is_stdout(capsys, aln):
    status, out, _ = run(capsys, "columns", aln, *HAND, "-o", "-")
    assert status == 0
    assert [r["class"] for r in tsv_rows(out)] == EXPECTED_CLASS


# --------------------------------------------------------------------------------------------------
# output files


def test_output_file_and_metadata_sidecar(capsys, aln, tmp_path):
    target = tmp_path / "out" / "table.tsv"
    target.parent.mkdir()
    status, out, err = run(capsys, "columns", aln, *HAND, "-o", target)
    assert status == 0
    assert out == ""
    assert [r["class"] for r in tsv_rows(target.read_text())] == EXPECTED_CLASS
    meta = json.loads((tmp_path / "out" / "table.tsv.meta.json").read_text())
    assert meta["rules"]["max_gaps"] == 0.5
    assert meta["weights"] == "none"
    assert sorted(os.listdir(target.parent)) == ["table.tsv", "table.tsv.meta.json"]  # no temporary left
    assert str(target) in err


def test_table_format_from_extension(capsys, aln, tmp_path):
    target = tmp_path / "x.json"
    status, _, _ = run(capsys, "columns", aln, *HAND, "-o", target)
    assert status == 0
    document = json.loads(target.read_text())
    assert [r["class"] for r in document["rows"]] == EXPECTED_CLASS
    assert not (tmp_path / "x.json.meta.json").exists()  # json carries its metadata inside


def test_explicit_table_option_beats_extension(capsys, aln, tmp_path):
    target = tmp_path / "x.json"
    assert run(capsys, "columns", aln, *HAND, "-o", target, "--table", "csv")[0] == 0
    assert target.read_text().splitlines()[0] == ",".join(COLUMN_ORDER)


def test_dev_null_written_not_replaced(capsys, aln):
    before = os.stat("/dev/null")
    status, out, _ = run(capsys, "columns", aln, *HAND, "-o", "/dev/null")
    assert status == 0
    after = os.stat("/dev/null")
    assert stat.S_ISCHR(after.st_mode)
    assert (after.st_ino, after.st_rdev) == (before.st_ino, before.st_rdev)
    assert not os.path.exists("/dev/null.meta.json")
    assert out == ""


def test_same_input_same_bytes(capsys, aln, tmp_path):
    for fmt in ("tsv", "json", "tex"):
        first, second = tmp_path / f"one.{fmt}", tmp_path / f"two.{fmt}"
        assert run(capsys, "columns", aln, "-o", first)[0] == 0
        assert run(capsys, "columns", aln, "-o", second)[0] == 0
        assert first.read_bytes() == second.read_bytes()
    assert (tmp_path / "one.tsv.meta.json").read_bytes() == (tmp_path / "two.tsv.meta.json").read_bytes()


# --------------------------------------------------------------------------------------------------
# --reference


def test_reference_numbering_skips_gaps(capsys, aln):
    # s2 = H S E - R - L: residues numbered 1 2 3 . 4 . 5
    status, out, _ = run(capsys, "columns", aln, *HAND, "--reference", "s2")
    assert status == 0
    header = out.splitlines()[0].split("\t")
    assert header == ["column", "ref_position", "ref_residue", *COLUMN_ORDER[1:]]
    rows = tsv_rows(out)
    assert [r["ref_position"] for r in rows] == ["1", "2", "3", "", "4", "", "5"]
    assert [r["ref_residue"] for r in rows] == ["H", "S", "E", "", "R", "", "L"]
    assert [r["class"] for r in rows] == EXPECTED_CLASS


def test_reference_in_json_uses_null_at_gaps(capsys, aln):
    # s3 = H A D G K - -: 1 2 3 4 5 then none
    status, out, _ = run(capsys, "columns", aln, *HAND, "--reference", "s3", "--table", "json")
    assert status == 0
    rows = json.loads(out)["rows"]
    assert [r["ref_position"] for r in rows] == [1, 2, 3, 4, 5, None, None]
    assert [r["ref_residue"] for r in rows] == ["H", "A", "D", "G", "K", "", ""]


def test_unknown_reference_is_a_usage_error(capsys, aln):
    status, out, err = run(capsys, "columns", aln, "--reference", "nobody")
    assert status == 2
    assert "nobody" in err and "Traceback" not in err
    assert out == ""


# --------------------------------------------------------------------------------------------------
# summary and --quiet


def test_summary_names_the_class_counts(capsys, aln):
    status, _, err = run(capsys, "columns", aln, *HAND)
    assert status == 0
    summary = [line for line in err.splitlines() if "sequences" in line]
    assert len(summary) == 1
    line = summary[0]
    assert line.startswith("globcons: ")
    for part in ("4 sequences", "7 columns", "2 invariant", "2 conservative", "1 variable", "2 gap-rich"):
        assert part in line


def test_quiet_silences_the_summary(capsys, aln):
    status, out, err = run(capsys, "columns", aln, *HAND, "--quiet")
    assert status == 0
    assert err == ""
    assert len(tsv_rows(out)) == 7


def test_low_data_warning_once_even_when_quiet(capsys, aln):
    # 4 rows: 4 effective sequences < 5 (default --min-neff): one warning line that the family is thin,
    # kept under --quiet; with --min-neff 3 the family is not thin but columns 6 and 7 (1 and 2 residues) are.
    status, _, err = run(capsys, "columns", aln, "--weights", "none", "--quiet")
    assert status == 0
    lines = err.splitlines()
    assert len(lines) == 1 and "warning" in lines[0] and "4.0 effective sequences" in lines[0] and "thin" in lines[0]
    status, _, err = run(capsys, "columns", aln, "--weights", "none", "--quiet", "--min-neff", "3")
    lines = err.splitlines()
    assert len(lines) == 1 and "3 of 7 columns" in lines[0] and "low_data" in lines[0]


# --------------------------------------------------------------------------------------------------
# errors


BAD = ">s1\nHADK\n>s2\nHA9K\n"  # line 4 holds a digit


def test_bad_input_one_line_exit_2(capsys, tmp_path):
    path = tmp_path / "bad.fasta"
    path.write_text(BAD)
    status, out, err = run(capsys, "columns", path)
    assert status == 2
    assert out == ""
    lines = err.splitlines()
    assert len(lines) == 1
    assert lines[0].startswith(f"globcons: error: {path}:4: ")
    assert "'9'" in lines[0]
    assert "Traceback" not in err


def test_bad_input_with_debug_shows_traceback(capsys, tmp_path):
    path = tmp_path / "bad.fasta"
    path.write_text(BAD)
    status, _, err = run(capsys, "columns", path, "--debug")
    assert status == 2
    assert "Traceback" in err
    assert err.splitlines()[-1].startswith(f"globcons: error: {path}:4: ")


def test_missing_input_exit_2(capsys, tmp_path):
    status, _, err = run(capsys, "columns", tmp_path / "nothing.fasta")
    assert status == 2
    assert "nothing.fasta" in err and "Traceback" not in err


@pytest.mark.parametrize("option", [["--max-gaps", "2"], ["--max-gaps", "-0.1"], ["--invariant-min", "0"],
                                    ["--weights", "bogus"], ["--table", "xml"], ["--matrix", "NOSUCH"],
                                    ["--no-such-option"]])
def test_bad_option_value_exit_2(capsys, aln, option):
    status, out, err = run(capsys, "columns", aln, *option)
    assert status == 2
    assert out == ""
    assert "Traceback" not in err
    assert err.strip()


def test_max_gaps_2_message(capsys, aln):
    status, _, err = run(capsys, "columns", aln, "--max-gaps", "2")
    assert status == 2
    assert err.splitlines() == [line for line in err.splitlines() if line.startswith("globcons: error:")]
    assert "--max-gaps" in err


def test_output_equal_to_input_refused(capsys, aln, tmp_path):
    original = aln.read_bytes()
    other_spelling = tmp_path / "sub" / ".." / aln.name
    (tmp_path / "sub").mkdir()
    link = tmp_path / "link.fasta"
    link.symlink_to(aln)
    for target in (aln, other_spelling, link):
        status, out, err = run(capsys, "columns", aln, "-o", target)
        assert status == 2, target
        assert "input" in err and "Traceback" not in err
        assert aln.read_bytes() == original
        assert link.is_symlink()
    assert sorted(os.listdir(tmp_path)) == ["family.fasta", "link.fasta", "sub"]


def test_failed_input_leaves_no_output(capsys, tmp_path):
    path = tmp_path / "bad.fasta"
    path.write_text(BAD)
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    status, _, _ = run(capsys, "columns", path, "-o", out_dir / "table.tsv")
    assert status == 2
    assert os.listdir(out_dir) == []


def test_output_into_missing_folder(capsys, aln, tmp_path):
    status, _, err = run(capsys, "columns", aln, "-o", tmp_path / "no_such_dir" / "t.tsv")
    assert status == 2
    assert "no_such_dir" in err and "Traceback" not in err
    assert not (tmp_path / "no_such_dir").exists()


def test_output_is_a_folder(capsys, aln, tmp_path):
    status, _, err = run(capsys, "columns", aln, "-o", tmp_path)
    assert status == 2
    assert "folder" in err


def test_write_failure_leaves_no_file_and_no_temporary(capsys, aln, tmp_path, monkeypatch):
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    existing = out_dir / "table.tsv"
    existing.write_text("old content\n")

    def disk_full(fd):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", disk_full)
    status, _, err = run(capsys, "columns", aln, "-o", existing)
    assert status != 0
    assert "No space left" in err
    # the old file is untouched, nothing else was left behind (no .part temporary)
    assert os.listdir(out_dir) == ["table.tsv"]
    assert existing.read_text() == "old content\n"


# --------------------------------------------------------------------------------------------------
# demo and --version


def test_demo_writes_its_table_and_says_where(capsys, tmp_path):
    out_dir = tmp_path / "demo_out"
    status, _, err = run(capsys, "demo", "-o", out_dir)
    assert status == 0
    table = out_dir / "columns.tsv"
    assert table.is_file()
    rows = tsv_rows(table.read_text())
    assert list(rows[0]) == list(COLUMN_ORDER)
    assert {r["class"] for r in rows} <= set(globcons.CLASSES)
    assert str(out_dir.resolve()) in err or str(out_dir) in err
    assert "columns.tsv" in err


def test_version(capsys):
    status, out, _ = run(capsys, "--version")
    assert status == 0
    assert globcons.__version__ in out


# --------------------------------------------------------------------------------------------------
# through a real process


# The process imports the globcons this one imported, also from another working directory (where a relative
# PYTHONPATH would miss it).
_SRC = os.path.dirname(os.path.dirname(os.path.abspath(globcons.__file__)))
_ENV = {**os.environ, "PYTHONPATH": os.pathsep.join(filter(None, [_SRC, os.environ.get("PYTHONPATH")]))}


def _process(*args, stdin: bytes | None = None, cwd=None) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "globcons", *map(str, args)], input=stdin,
                          capture_output=True, cwd=cwd, timeout=120, env=_ENV)


def test_process_version():
    result = _process("--version")
    assert result.returncode == 0
    assert globcons.__version__ in result.stdout.decode()


def test_process_stdin_to_stdout(tmp_path):
    result = _process("columns", "-", *HAND, stdin=ALN.encode(), cwd=tmp_path)
    assert result.returncode == 0, result.stderr.decode()
    rows = tsv_rows(result.stdout.decode())
    assert [r["class"] for r in rows] == EXPECTED_CLASS
    assert "2 gap-rich" in result.stderr.decode()
    assert os.listdir(tmp_path) == []


def test_process_bad_input_exit_2(tmp_path):
    path = tmp_path / "bad.fasta"
    path.write_text(BAD)
    result = _process("columns", path, "-o", tmp_path / "t.tsv")
    assert result.returncode == 2
    err = result.stderr.decode()
    assert err.splitlines() == [err.splitlines()[0]] and err.startswith(f"globcons: error: {path}:4: ")
    assert "Traceback" not in err
    assert sorted(os.listdir(tmp_path)) == ["bad.fasta"]


# --------------------------------------------------------------------------------------------------
# the exit statuses main() promises for what is not bad input


def _raise(error: BaseException):
    def fail(*args, **kwargs):
        raise error

    return fail


def test_internal_error_exit_1_in_one_line(capsys, aln, monkeypatch):
    monkeypatch.setattr("globcons.analysis.columns.score_columns", _raise(RuntimeError("column 3 lost")))
    status, out, err = run(capsys, "columns", aln)
    assert status == 1 and out == ""
    assert err == ("globcons: internal error: RuntimeError: column 3 lost (please report it; --debug shows the "
                   "traceback)\n")


def test_internal_error_with_debug_shows_traceback(capsys, aln, monkeypatch):
    monkeypatch.setattr("globcons.analysis.columns.score_columns", _raise(RuntimeError("column 3 lost")))
    status, _, err = run(capsys, "columns", aln, "--debug")
    assert status == 1
    assert err.startswith("Traceback (most recent call last):")
    assert err.splitlines()[-1].startswith("globcons: internal error: RuntimeError: column 3 lost")


def test_interrupt_exit_130(capsys, aln, monkeypatch):
    monkeypatch.setattr("globcons.analysis.columns.score_columns", _raise(KeyboardInterrupt()))
    status, out, err = run(capsys, "columns", aln)
    # click ends the interrupted line first
    assert (status, out, err) == (130, "", "\nglobcons: interrupted; no partial output was left\n")


def test_out_of_memory_exit_2(capsys, aln, monkeypatch):
    monkeypatch.setattr("globcons.analysis.columns.score_columns", _raise(MemoryError()))
    status, _, err = run(capsys, "columns", aln)
    assert (status, err) == (2, "globcons: error: not enough memory for this input on this machine\n")


def test_process_reader_gone_stops_quietly(tmp_path):
    """The reader of standard output goes away (as `| head` does) before the table is written: no traceback,
    no message, the conventional status of a closed pipe, 128 + SIGPIPE = 141 (common practice of shells).
    (The command turns the broken pipe into OutputClosed so that click does not end the run with 1.)"""
    wide = tmp_path / "wide.fasta"
    wide.write_text(">w1\n" + "ACDEFGHIKLMNPQRSTVWY" * 50 + "\n>w2\n" + "YWVTSRQPNMLKIHGFEDCA" * 50 + "\n")
    process = subprocess.Popen([sys.executable, "-m", "globcons", "columns", wide, "--no-frame", "-q"],
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=_ENV)
    process.stdout.close()  # long before the child has imported its libraries, let alone scored anything
    assert process.wait(timeout=120) == 141
    assert process.stderr.read() == b""
