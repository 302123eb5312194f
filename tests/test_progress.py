"""Progress displays: report, align and scan show one on a terminal (scan with a total when the input is a
file), and nothing of it off a terminal or with --quiet. The terminal is a real pseudo-terminal (Python's
pty module) on the command's standard error, as a user's shell gives it.
"""

from __future__ import annotations

import os
import pty
import re
import subprocess
import sys
import threading
from pathlib import Path

import pytest

from globcons.cli import main

EXAMPLES = Path(__file__).resolve().parents[1] / "data_examples"
_ANSI = re.compile(r"\x1b\[[0-9;?]*[A-Za-z]")


def on_terminal(args: list[str], cwd: Path, stdin: Path | None = None) -> tuple[int, str]:
    """Run ``globcons ARGS`` with standard error on a pseudo-terminal; (exit status, what the terminal got)."""
    master, slave = pty.openpty()
    env = dict(os.environ, TERM="xterm-256color", COLUMNS="120")
    env.pop("NO_COLOR", None)
    chunks: list[bytes] = []

    def drain() -> None:
        while True:
            try:
                data = os.read(master, 65536)
            except OSError:
                return
            if not data:
                return
            chunks.append(data)

    reader = threading.Thread(target=drain, daemon=True)
    reader.start()
    with open(stdin, "rb") if stdin else open(os.devnull, "rb") as source:
        process = subprocess.run([sys.executable, "-m", "globcons", *args], cwd=cwd, env=env, stdin=source,
                                 stdout=subprocess.DEVNULL, stderr=slave, timeout=600)
    os.close(slave)
    reader.join(timeout=30)
    os.close(master)
    return process.returncode, _ANSI.sub("", b"".join(chunks).decode("utf-8", "replace"))


def test_report_shows_its_steps_on_a_terminal(tmp_path):
    # globcons report family.fasta -o rep: steps named as they finish, out of a known total
    # (score, tables, profile, 8 helix logos, page = 12 steps for the demo family)
    status, seen = on_terminal(["report", str(EXAMPLES / "family.fasta"), "-o", "rep"], tmp_path)
    assert status == 0
    assert "report: drew the logo of helix F" in seen
    assert "12/12 steps" in seen
    assert "wrote 16 files" in seen  # the summary line after the display


def test_align_shows_sequences_placed_of_the_total(tmp_path):
    # globcons align globins.fasta -o placed.sto: 48 sequences
    status, seen = on_terminal(["align", str(EXAMPLES / "globins.fasta"), "-o", "placed.sto"], tmp_path)
    assert status == 0
    assert "placing" in seen and "48/48 sequences" in seen


def test_scan_of_a_file_shows_a_total(tmp_path):
    # globcons scan new_globins.fasta -o s.tsv --jobs 1: the file holds 6 records, counted before the scan
    status, seen = on_terminal(["scan", str(EXAMPLES / "new_globins.fasta"), "-o", "s.tsv", "--jobs", "1"], tmp_path)
    assert status == 0
    assert "6/6 sequences" in seen
    # gzip too: the count reads through the compression
    status, seen = on_terminal(["scan", str(EXAMPLES / "metagenome_hits.fa.gz"), "-o", "g.tsv", "--jobs", "1"],
                               tmp_path)
    assert status == 0 and "6/6 sequences" in seen


def test_scan_of_stdin_counts_without_a_total(tmp_path):
    # globcons scan - < new_globins.fasta: standard input can be read once, so no total
    status, seen = on_terminal(["scan", "-", "-o", "s.tsv", "--jobs", "1"], tmp_path,
                               stdin=EXAMPLES / "new_globins.fasta")
    assert status == 0
    assert "scanning 6 sequences" in seen and "/6" not in seen


def test_no_progress_with_quiet_on_a_terminal(tmp_path):
    status, seen = on_terminal(["align", str(EXAMPLES / "globins.fasta"), "-o", "placed.sto", "--quiet"], tmp_path)
    assert status == 0 and "placing" not in seen and seen.strip() == ""


@pytest.mark.parametrize("args", [
    ["report", str(EXAMPLES / "family.fasta"), "-o", "rep", "--no-logos"],
    ["align", str(EXAMPLES / "globins.fasta"), "-o", "placed.sto"],
    ["scan", str(EXAMPLES / "new_globins.fasta"), "-o", "s.tsv", "--jobs", "1"],
])
def test_no_progress_off_a_terminal(args, tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(args) == 0
    err = capsys.readouterr().err
    assert all(line.startswith("globcons: ") for line in err.splitlines()), err
    assert "steps" not in err and "/48" not in err and "/6 " not in err


def test_count_records_counts_headers_of_every_line_end_and_gzip(tmp_path):
    import gzip

    from globcons.io.counting import BLOCK_BYTES, count_records
    from globcons.io.records import stream_records

    text = b"\xef\xbb\xbf>a one\nMKV\r\n>b\r\nAC\r>c\rGG\n\n>d x>y\nW\n"
    plain = tmp_path / "x.fa"
    plain.write_bytes(text)
    packed = tmp_path / "x.fa.gz"
    packed.write_bytes(gzip.compress(text))
    # the reader itself is the reference: the same four records
    assert len(list(stream_records(plain))) == count_records(plain) == count_records(packed) == 4
    # a line end and its '>' on either side of a block boundary are one header
    big = tmp_path / "big.fa"
    body = b"M" * (BLOCK_BYTES - 3)
    big.write_bytes(b">r1\n" + body[:-2] + b"\n>r2\nMK\n")  # the "\n" ends the first block, ">" starts the next
    assert big.read_bytes()[BLOCK_BYTES - 1:BLOCK_BYTES + 1] == b"\n>"
    assert count_records(big) == 2
    assert count_records("-") is None and count_records(tmp_path) is None
    assert count_records(tmp_path / "missing.fa") is None


def test_align_to_frame_gives_the_same_layout_in_any_batch(monkeypatch):
    import globcons.align.layout as layout
    from globcons import read_sequences

    records = [(r.id, r.sequence) for r in read_sequences(EXAMPLES / "globins.fasta")][:12]
    whole = layout.align_to_frame(records, shuffles=2)
    steps: list[int] = []
    monkeypatch.setattr(layout, "PLACE_BATCH", 5)
    batched = layout.align_to_frame(records, shuffles=2, progress=steps.append)
    assert steps == [5, 5, 2]
    assert batched.rows == whole.rows and [p.evalue for p in batched.placed] == [p.evalue for p in whole.placed]
