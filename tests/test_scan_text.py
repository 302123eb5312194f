"""The scan's text path (globcons.analysis.scan_text, ScanBatch texts) against the pandas path it replaced.

The command line used to build a DataFrame per batch and write it with globcons.io.tables.format_table
(pandas' csv writer); it now writes the batches' own text. Both must give the same bytes, so every check
here renders the same batch both ways, on batches that mix placed and refused records, odd ids (quotes,
commas, backslashes), both table formats and both families; and the files of the command line are
compared with the pandas rendering of iter_scan's DataFrames, with either alignment kernel.
"""

from __future__ import annotations

import os
import subprocess
import sys

import numpy as np
import pytest

from globcons.align.anchor import map_columns
from globcons.analysis.family import family_from_alignment
from globcons.analysis.scan_text import cell_texts, delimited_text, number_texts
from globcons.analysis.scanning import RESIDUE_COLUMNS, SUMMARY_COLUMNS, header_text, iter_scan, iter_scan_batches
from globcons.cli import main
from globcons.demo import demo_alignment_path, demo_file
from globcons.frame.reference import reference_chains
from globcons.io.alignments import read_alignment
from globcons.io.records import read_sequences, stream_records
from globcons.io.tables import format_table

ODD_RECORDS = [
    ("empty", ""),
    ("digits", "MVLS1GEW"),
    ("nucleotide", "ACGTACGTACGTACGTACGTAC"),
    ('"quoted",id\\x', reference_chains()[0].mature_sequence),
    ("stop", reference_chains()[1].mature_sequence[:60] + "*" + reference_chains()[1].mature_sequence[61:]),
    ("short", "MVLSEGEWQLV"),
    ("tab\there", reference_chains()[2].full_sequence),
]


def records() -> list[tuple[str, str]]:
    return ODD_RECORDS + [(r.id, r.sequence) for r in read_sequences(demo_file("demo_queries.fasta"))]


@pytest.fixture(scope="module")
def demo_family():
    return family_from_alignment(read_alignment(demo_alignment_path()))


@pytest.mark.parametrize("fmt", ["tsv", "csv"])
@pytest.mark.parametrize("with_family", [False, True])
def test_batch_text_is_what_pandas_writes(fmt, with_family, demo_family):
    family = demo_family if with_family else None
    batches = list(iter_scan_batches(records(), family, batch_size=4, shuffles=4))
    assert len(batches) == 4
    for batch in batches:
        summary = format_table(batch.summary_frame(), fmt)
        assert header_text(SUMMARY_COLUMNS, fmt) + batch.summary_text(fmt) == summary
        residues = format_table(batch.residue_frame(), fmt)
        assert header_text(RESIDUE_COLUMNS, fmt) + batch.residue_text(fmt) == residues
    # the first batch holds only refused records: a summary of flags and an empty residue table
    assert [row["flags"] for row in batches[0].rows] == ["empty", "invalid-characters", "nucleotide", ""]
    # the odd id: as it is in tsv (io.tables writes tsv cells unescaped), quoted in csv (RFC 4180)
    first = {"tsv": '"quoted",id\\x\t1\tV\t', "csv": '"""quoted"",id\\x",1,V,'}[fmt]
    assert batches[0].residue_text(fmt).startswith(first)


def test_cell_rules_follow_the_table_writer():
    # The rules of globcons.io.tables: FLOAT_DIGITS = 4 decimals (significant digits below 0.01), no negative
    # zero, NaN empty, yes/no.
    assert cell_texts([3, 10]) == ["3", "10"]
    assert cell_texts([70.6, -0.0, float("nan"), 2]) == ["70.6000", "0.0000", "", "2.0000"]
    assert cell_texts([70.6, -0.00001, 8.1e-53]) == ["70.6000", "-1e-05", "8.1e-53"]  # small: significant digits
    assert cell_texts([True, False]) == ["yes", "no"]
    assert cell_texts([70.6, "", 5]) == ["70.6000", "", "5"]  # a mixed column goes cell by cell
    assert cell_texts([]) == []
    assert delimited_text([["a\tb", "c"], ["1", "2"]], "tsv") == "a b\t1\nc\t2\n"  # tsv cells as they are
    assert delimited_text([["a,b", 'q"'], ["1", "2"]], "csv") == '"a,b",1\n"q""",2\n'
    assert delimited_text([["=SUM(A1)", "-0.5", "-"]], "csv") == "'=SUM(A1)\n-0.5\n-\n"  # formulas neutralised
    with pytest.raises(ValueError, match="fmt must be one of tsv, csv"):
        delimited_text([["a"]], "md")


@pytest.mark.parametrize("fmt", ["tsv", "csv"])
def test_direct_join_equals_the_table_writer(fmt):
    # Reference: globcons.io.tables.format_table, the pandas path every other table goes through.
    import pandas as pd

    from globcons.io.tables import format_table

    rng = np.random.default_rng(4)
    alphabet = list("AB1:. ") + ["\t", ",", '"', "\\", "\n", "\r", "=", "-", "+", "@"]
    for trial in range(300):
        n_rows, n_cols = int(rng.integers(1, 5)), int(rng.integers(1, 4))
        plain = trial % 2 == 0  # half the cases without any special character: the direct join
        letters = alphabet[:6] if plain else alphabet
        columns = [["".join(rng.choice(letters, int(rng.integers(1, 4)))) for _ in range(n_rows)]
                   for _ in range(n_cols)]
        names = [f"c{i}" for i in range(n_cols)]
        frame = pd.DataFrame(dict(zip(names, columns, strict=True)), dtype=object)
        assert delimited_text([[name] for name in names], fmt) + delimited_text(columns, fmt) == \
            format_table(frame, fmt), columns
    assert number_texts(np.array([0, 7, 12])).tolist() == ["0", "7", "12"]
    assert number_texts(np.array([0, 7, 100000]), zero="").tolist() == ["", "7", "100000"]


@pytest.mark.parametrize("kernel", ["numpy", "compiled"])
def test_command_line_files_equal_the_pandas_rendering(tmp_path, monkeypatch, kernel):
    if kernel == "compiled":
        pytest.importorskip("numba", reason="numba is not installed: the compiled kernel is not there")
    monkeypatch.setenv("GLOBCONS_DP_KERNEL", kernel)
    fasta = tmp_path / "q.fasta"
    fasta.write_text("".join(f">{identifier}\n{sequence}\n" for identifier, sequence in records()
                             if "\t" not in identifier))
    summary, residues = tmp_path / "s.csv", tmp_path / "r.tsv"
    assert main(["scan", str(fasta), "--family", demo_alignment_path(), "-o", str(summary), "--residues",
                 str(residues), "--jobs", "2", "--batch-size", "3", "--quiet"]) == 0
    aligned = read_alignment(demo_alignment_path())
    family = family_from_alignment(aligned, labels=map_columns(aligned).labels)  # as the command loads it
    expected_summary, expected_residues = "", ""
    frames = list(iter_scan(((r.id, r.sequence) for r in stream_records(str(fasta))), family, batch_size=3))
    for index, (summary_frame, residue_frame) in enumerate(frames):
        text = format_table(summary_frame, "csv")
        expected_summary += text if index == 0 else text.split("\n", 1)[1]
        text = format_table(residue_frame, "tsv")
        expected_residues += text if index == 0 else text.split("\n", 1)[1]
    assert summary.read_text() == expected_summary
    assert residues.read_text() == expected_residues
    assert len(summary.read_text().splitlines()) == 1 + len(records()) - 1
    assert np.all([line.count("\t") == 7 for line in residues.read_text().splitlines()])


def test_a_small_scan_does_not_load_the_compiler(tmp_path):
    # The demo's six queries are far below dp.COMPILED_AFTER_CELLS: numba must not even be imported.
    queries, summary = str(demo_file("demo_queries.fasta")), str(tmp_path / "s.tsv")
    script = ("import sys\nfrom globcons.cli import main\n"
              f"main(['scan', {queries!r}, '-o', {summary!r}, '--quiet'])\nprint('numba' in sys.modules)")
    env = {k: v for k, v in os.environ.items() if k != "GLOBCONS_DP_KERNEL"}
    result = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, env=env, check=True)
    assert result.stdout.strip() == "False"
    assert len((tmp_path / "s.tsv").read_text().splitlines()) == 7
