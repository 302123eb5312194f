"""Safety of outputs and runs (issue 16, first part): signals, closed pipes, report folders replaced as a whole,
tables and their metadata landing together, number formatting, formula neutralising, terminal escapes,
non-globin targets, figure text, worker deaths. The one-line errors of bad input are in the corpus
(tests/data/bad/cases.tsv); here are the cases that need a process, a file made in the test or a look at
the output."""

from __future__ import annotations

import csv
import io
import json
import os
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import pandas as pd
import pytest

from globcons.analysis.workers import ordered_map
from globcons.cli import main
from globcons.demo import demo_alignment_path, demo_file
from globcons.errors import OutputError, RunError
from globcons.io.atomic import atomic_batch, atomic_output
from globcons.io.tables import format_number, format_table, write_table

BAD = Path(__file__).resolve().parent / "data" / "bad"
_SRC = str(Path(__file__).resolve().parents[1] / "src")
_ENV = {**os.environ, "PYTHONPATH": os.pathsep.join(filter(None, [_SRC, os.environ.get("PYTHONPATH")]))}
FAMILY = demo_alignment_path()


def run(capsys, *args) -> tuple[int, str, str]:
    status = main([str(a) for a in args])
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def _globcons(*args) -> list[str]:
    return [sys.executable, "-m", "globcons", *map(str, args)]


def _many_queries(tmp_path: Path, copies: int = 400) -> Path:
    """The demo's six survey queries repeated under new ids: enough work for a run to be stopped mid-way."""
    text = demo_file("demo_queries.fasta").read_text()
    path = tmp_path / "many.fasta"
    path.write_text("".join(text.replace(">", f">c{k}_") for k in range(copies)))
    return path


def _children(pid: int) -> list[int]:
    found = []
    for task in Path(f"/proc/{pid}/task").iterdir():
        found += [int(c) for c in (task / "children").read_text().split()]
    return found


# ------------------------------------------------------------------------------------------------ signals

@pytest.mark.skipif(not Path("/proc/self/task").exists(), reason="needs /proc to see the worker processes")
@pytest.mark.parametrize("signum", [signal.SIGTERM, signal.SIGHUP])
def test_stop_signal_leaves_no_part_files_and_no_workers(tmp_path, signum):
    """`scan -j 2 -o s.tsv --residues r.tsv` stopped by SIGTERM or SIGHUP mid-run: status 128 + the signal
    (the shells' convention), one line saying so, no temporary file, and both workers gone."""
    queries = _many_queries(tmp_path)
    process = subprocess.Popen(_globcons("scan", queries, "-j", "2", "-o", tmp_path / "s.tsv", "--residues",
                                         tmp_path / "r.tsv", "--batch-size", "8", "-q"),
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=_ENV)
    deadline = time.monotonic() + 90
    while not list(tmp_path.glob(".*.part")) or len(_children(process.pid)) < 2:  # writing, workers running
        assert process.poll() is None and time.monotonic() < deadline
        time.sleep(0.1)
    workers = _children(process.pid)
    process.send_signal(signum)
    assert process.wait(timeout=60) == 128 + signum
    err = process.stderr.read().decode()
    assert f"globcons: stopped by {signal.Signals(signum).name}; no partial output was left" in err
    assert "Traceback" not in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["many.fasta"]  # no .part, no half table
    for pid in workers:
        assert not Path(f"/proc/{pid}").exists() or "Z" in Path(f"/proc/{pid}/stat").read_text().split()[2]


def _die(batch, code):
    os._exit(code)  # a worker killed in mid-batch (as the out-of-memory killer would)


def _double(batch, factor):
    return [factor * x for x in batch]


def test_worker_death_is_a_clear_error():
    with pytest.raises(RunError, match="a worker process ended unexpectedly"):
        list(ordered_map(_die, [[1], [2], [3]], jobs=2, state=(3,)))


def test_ordered_map_keeps_input_order():
    batches = [[k, k + 1] for k in range(0, 40, 2)]
    assert list(ordered_map(_double, batches, jobs=3, state=(2,))) == [[2 * a, 2 * b] for a, b in batches]


def test_closed_pipe_ends_quietly(tmp_path):
    """`scan ... | head -2`: the reader leaves after two lines; the run ends with 141 (128 + SIGPIPE, the
    shells' convention) and says nothing."""
    queries = _many_queries(tmp_path, copies=40)
    process = subprocess.Popen(_globcons("scan", queries, "--shuffles", "0", "--batch-size", "4", "-j", "1", "-q"),
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=_ENV)
    lines = [process.stdout.readline() for _ in range(2)]
    process.stdout.close()
    assert lines[0].startswith(b"id\tlength")
    assert process.wait(timeout=120) == 141
    said = process.stderr.read().decode().splitlines()
    assert all(line.startswith("globcons: warning: family built-in") for line in said), said  # no error line


def test_closed_stdout_is_a_one_line_error(tmp_path):
    result = subprocess.run(f"{sys.executable} -m globcons columns {BAD / 'one_sequence.fasta'} -q >&-",
                            shell=True, capture_output=True, env=_ENV, timeout=120)
    assert result.returncode == 2
    assert result.stderr.decode().strip().splitlines() == ["globcons: error: standard output is closed; give -o FILE"]


# ------------------------------------------------------------------------------------------------ outputs

def test_table_and_metadata_land_together(tmp_path, monkeypatch):
    """A full disk after the table but before its .meta.json: the old table and metadata stay, and the message
    says nothing was left."""
    out = tmp_path / "t.tsv"
    table = pd.DataFrame({"a": [1.5]})
    write_table(table, out, metadata={"run": 1})
    before = (out.read_text(), Path(f"{out}.meta.json").read_text())

    def full(*_args, **_kwargs):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr("globcons.io.tables.json.dumps", full)
    with pytest.raises(OutputError, match=r"No space left on device\); nothing was left behind"):
        write_table(pd.DataFrame({"a": [2.5]}), out, metadata={"run": 2})
    assert (out.read_text(), Path(f"{out}.meta.json").read_text()) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["t.tsv", "t.tsv.meta.json"]


def test_batch_renames_nothing_on_error(tmp_path):
    first, second = tmp_path / "a.txt", tmp_path / "b.txt"
    with pytest.raises(KeyboardInterrupt), atomic_batch():
        with atomic_output(first) as stream:
            stream.write("new")
        assert not first.exists()  # held back until the batch ends
        raise KeyboardInterrupt
    assert list(tmp_path.iterdir()) == []
    with atomic_batch():
        for path in (first, second):
            with atomic_output(path) as stream:
                stream.write(path.name)
    assert (first.read_text(), second.read_text()) == ("a.txt", "b.txt")


def test_report_folder_is_replaced_as_a_whole(tmp_path, capsys):
    folder = tmp_path / "rep"
    assert run(capsys, "report", FAMILY, "-o", folder, "--no-logos", "-q")[0] == 0
    (folder / "stale_from_an_old_run.txt").write_text("old")
    assert run(capsys, "report", FAMILY, "-o", folder, "--no-logos", "-q")[0] == 0
    assert not (folder / "stale_from_an_old_run.txt").exists()
    assert (folder / "report.html").is_file()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["rep"]  # no temporary sibling left


def test_report_failure_leaves_the_old_folder(tmp_path, capsys, monkeypatch):
    """A failure after columns.tsv but before its .meta.json: the earlier report stays whole, and the message
    says what was left."""
    folder = tmp_path / "rep"
    assert run(capsys, "report", FAMILY, "-o", folder, "--no-logos", "-q")[0] == 0
    before = {p.name: p.read_bytes() for p in folder.iterdir()}

    def full(*_args, **_kwargs):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr("globcons.io.tables.write_metadata", full)
    status, _, err = run(capsys, "report", FAMILY, "-o", folder, "--no-logos", "-q")
    assert status == 2
    assert err == f"globcons: error: {folder}: cannot be written (No space left on device); {folder} was left as it " \
                  "was\n"
    assert {p.name: p.read_bytes() for p in folder.iterdir()} == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["rep"]


@pytest.mark.skipif(os.geteuid() == 0, reason="root writes into read-only folders")
def test_report_and_demo_under_read_only_folder(tmp_path, capsys):
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o555)
    try:
        for command in (["report", FAMILY, "--no-logos"], ["demo"]):
            status, _, err = run(capsys, *command, "-o", locked / "out")
            assert status == 2 and "Permission denied" in err and len(err.splitlines()) == 1
    finally:
        locked.chmod(0o755)


# ------------------------------------------------------------------------------------------------ numbers

def test_small_numbers_keep_significant_digits():
    # 4 decimals down to 0.01, then 4 significant digits (our rule; Python's "g" format does the work)
    assert [format_number(v) for v in (0.5, 0.0123, 0.0021, 1e-20, 8.1e-53, -0.0, 2.5e-4)] == \
        ["0.5000", "0.0123", "0.0021", "1e-20", "8.1e-53", "0.0000", "0.00025"]
    table = pd.DataFrame({"pvalue": [1e-20, 0.5], "id": ["a", "b"]})
    assert format_table(table, "tsv").splitlines()[1:] == ["1e-20\ta", "0.5000\tb"]
    assert "1e-20 & a" in format_table(table, "tex")
    assert json.loads(format_table(table, "json", {"evalue": 8.1e-53}))["metadata"]["evalue"] == 8.1e-53
    assert json.loads(format_table(table, "json"))["rows"][0]["pvalue"] == 1e-20


def test_contrast_pvalues_never_read_zero(tmp_path, capsys):
    out = tmp_path / "c.tsv"
    assert run(capsys, "contrast", FAMILY, "--group-by", "^KBM-(S[0-9])-", "-o", out, "-q")[0] == 0
    cells = [row["pvalue"] for row in csv.DictReader(io.StringIO(out.read_text()), delimiter="\t")]
    values = [float(c) for c in cells if c]
    assert min(values) > 0 and "0.0000" not in cells


def test_frame_evalue_in_metadata_keeps_digits(tmp_path, capsys):
    out = tmp_path / "columns.tsv"
    assert run(capsys, "columns", FAMILY, "-o", out, "-q")[0] == 0
    meta = json.loads(Path(f"{out}.meta.json").read_text())
    assert 0 < meta["frame"]["evalue"] < 1e-20  # the demo anchor places at about 1e-48 (README summary line)


def test_tsv_writes_quotes_and_backslashes_as_they_are():
    table = pd.DataFrame({"note": ['say "hi"', "a\\b", "tab\there"]})
    assert format_table(table, "tsv").splitlines() == ["note", 'say "hi"', "a\\b", "tab here"]


def test_csv_neutralises_formulas_and_tsv_keeps_them(tmp_path, capsys):
    """Cells a spreadsheet would run (=, +, -, @ first; OWASP "CSV injection", common practice) get a leading
    single quote in csv; tsv, the scripts' format, keeps every value as it is (README "Safety of outputs")."""
    queries = tmp_path / "q.fasta"
    sequence = (BAD / "one_sequence.fasta").read_text().split("\n", 1)[1]
    queries.write_text(f">=HYPERLINK(\"x\")\n{sequence}>@SUM(1)\n{sequence}>-2+3\n{sequence}>KBM-1\n{sequence}")
    assert run(capsys, "scan", queries, "--shuffles", "0", "-o", tmp_path / "s.csv", "-q")[0] == 0
    ids = [row["id"] for row in csv.DictReader(io.StringIO((tmp_path / "s.csv").read_text()))]
    assert ids == ["'=HYPERLINK(\"x\")", "'@SUM(1)", "'-2+3", "KBM-1"]
    assert run(capsys, "scan", queries, "--shuffles", "0", "-o", tmp_path / "s.tsv", "-q")[0] == 0
    lines = (tmp_path / "s.tsv").read_text().splitlines()
    assert [line.split("\t")[0] for line in lines[1:]] == ['=HYPERLINK("x")', "@SUM(1)", "-2+3", "KBM-1"]


# ------------------------------------------------------------------------------------------------ terminal

def test_terminal_escapes_in_ids_are_shown_not_obeyed(tmp_path, capsys):
    target = tmp_path / "t.fasta"
    beta = (BAD / "beta_target.fasta").read_text().split("\n", 1)[1]
    target.write_text(f">evil\x1b[2J\x1b]0;owned\x07\n{beta}")
    status, _, err = run(capsys, "check", target, "--mutations", "A3:V")
    assert status == 0
    assert "\x1b" not in err and "\x07" not in err
    assert "evil\\x1b[2J\\x1b]0;owned\\x07" in err


# ------------------------------------------------------------------------------------------------ results

def test_non_globin_target_allowed_says_so_on_every_row(tmp_path, capsys):
    out = tmp_path / "plan.tsv"
    status, _, err = run(capsys, "plan", BAD / "random_target.fasta", "--allow-non-globin", "-o", out)
    assert status == 0 and "warning: target 'random_protein' is not a globin; every row says so" in err
    rows = list(csv.DictReader(io.StringIO(out.read_text()), delimiter="\t"))
    assert len(rows) == 150 and all("not a globin" in row["reasons"] for row in rows)
    status, out_text, _ = run(capsys, "plan", BAD / "all_x_target.fasta", "--top", "3", "--allow-non-globin")
    assert status == 0 and out_text.count("not a globin") == 3


def test_a_globin_target_has_no_such_reason(capsys):
    status, out, _ = run(capsys, "plan", BAD / "beta_target.fasta", "--top", "5")
    assert status == 0 and "not a globin" not in out


def test_lone_cr_reads_alike_everywhere(tmp_path, capsys):
    """Old Mac line ends: the same two records in columns, scan and align (and as with LF)."""
    lf = tmp_path / "lf.fasta"
    lf.write_bytes((BAD / "lone_cr.fasta").read_bytes().replace(b"\r", b"\n"))
    outputs = {}
    for name, path in (("cr", BAD / "lone_cr.fasta"), ("lf", lf)):
        outputs[name] = [run(capsys, "columns", path, "--no-frame", "-q")[1],
                         run(capsys, "scan", path, "--shuffles", "0", "-q")[1],
                         run(capsys, "align", path, "--shuffles", "0", "-q")[1]]
    assert outputs["cr"] == outputs["lf"]
    assert outputs["cr"][1].count("\n") == 3  # header and two records


def test_x_column_is_gap_rich_with_consensus_x(capsys):
    """A column of only X/B/Z (x_column.fasta, column 3): nothing to class, so gap-rich, low_data, consensus X
    (README "Classes"), never variable with consensus '-'."""
    status, out, _ = run(capsys, "columns", BAD / "x_column.fasta", "--no-frame", "-q")
    rows = list(csv.DictReader(io.StringIO(out), delimiter="\t"))
    assert status == 0
    assert (rows[2]["class"], rows[2]["consensus"], rows[2]["low_data"], rows[2]["unknown_fraction"]) == \
        ("gap-rich", "X", "yes", "1.0000")
    assert rows[0]["class"] != "gap-rich"


def test_bom_in_groups_file_keeps_its_first_row(tmp_path, capsys):
    ids = [line[1:].split()[0] for line in FAMILY.read_text().splitlines() if line.startswith(">")]
    text = "".join(f"{i}\t{i.split('-')[1]}\n" for i in ids)
    plain, bom = tmp_path / "g.tsv", tmp_path / "g_bom.tsv"
    plain.write_text(text)
    bom.write_bytes(b"\xef\xbb\xbf" + text.encode())
    results = [run(capsys, "contrast", FAMILY, "--groups", g, "-q") for g in (plain, bom)]
    assert results[0][0] == results[1][0] == 0
    assert results[0][1] == results[1][1]


def test_bom_in_sites_and_mutations_reads_as_without(tmp_path, capsys):
    sites = run(capsys, "columns", BAD / "one_sequence.fasta", "--sites", BAD / "sites_bom.tsv", "-q")
    plain = run(capsys, "columns", BAD / "one_sequence.fasta", "--sites", BAD / "sites_label.tsv", "-q")
    assert sites[0] == 0 and sites[1] == plain[1]
    checked = run(capsys, "check", BAD / "beta_target.fasta", "--mutations-file", BAD / "mutations_bom.txt", "-q")
    assert checked[0] == 0 and [line.split("\t")[0] for line in checked[1].splitlines()] == ["mutation", "E7V",
                                                                                           "H93Y"]


def test_shuffles_zero_says_no_significance(tmp_path, capsys):
    out = tmp_path / "s.tsv"
    status, _, err = run(capsys, "scan", BAD / "one_sequence.fasta", "--shuffles", "0", "-o", out)
    assert status == 0
    assert "no significance computed (--shuffles 0), so is_globin is left blank" in err
    row = next(csv.DictReader(io.StringIO(out.read_text()), delimiter="\t"))
    assert (row["evalue"], row["is_globin"]) == ("", "")
    assert json.loads(Path(f"{out}.meta.json").read_text())["globins"] is None


# ------------------------------------------------------------------------------------------------ resources

def test_paint_reads_a_fifo(tmp_path, capsys):
    """A structure given as a named pipe is read once (a second open would wait for a writer forever)."""
    from test_structure import pdb_text  # a small PDB written by the structure tests

    source = tmp_path / "source.pdb"
    source.write_text(pdb_text())
    fifo = tmp_path / "in.pdb"
    os.mkfifo(fifo)
    writer = threading.Thread(target=lambda: fifo.write_bytes(source.read_bytes()), daemon=True)
    writer.start()
    status, _, err = run(capsys, "paint", fifo, "--alignment", FAMILY, "-o", tmp_path / "out.pdb", "-q")
    writer.join(timeout=30)
    assert status == 0, err
    assert (tmp_path / "out.pdb").is_file()


def test_logo_caps_the_columns_drawn(tmp_path, capsys):
    wide = tmp_path / "wide.fasta"
    wide.write_text(">a\n" + "ACDEFGHIKLMNPQRSTVWY" * 110 + "\n>b\n" + "YWVTSRQPNMLKIHGFEDCA" * 110 + "\n")
    status, _, err = run(capsys, "logo", wide, "--no-frame", "-o", tmp_path / "l.png")
    assert status == 2
    assert err == ("globcons: error: a logo of 2200 columns is more than the 2000 drawn at most (about 2 ms a "
                   "letter): choose a region with --range or --columns, or give --max-columns 2200\n")
    assert not list(tmp_path.glob("*.png"))


def test_stockholm_of_a_long_id_is_refused_on_read(tmp_path, capsys):
    """A 10 MB id would pad every Stockholm row to its length: ids are capped at 1000 characters on read."""
    big = tmp_path / "big_id.fasta"
    big.write_text(">" + "x" * 10_000_000 + "\nVLSEGEWQLVLHVWAKVEAD\n")
    status, _, err = run(capsys, "align", big, "-o", tmp_path / "out.sto")
    assert status == 2 and "sequence id of 10000000 characters" in err
    assert not (tmp_path / "out.sto").exists()


# ------------------------------------------------------------------------------------------------ figure text

@pytest.mark.parametrize("command", ["logo", "profile", "report"])
def test_dollar_in_file_name_and_title(tmp_path, capsys, command):
    """matplotlib reads $...$ as math text (a bad formula fails the figure): a name or title is shown as is."""
    odd = tmp_path / "fam$\\q^$.fasta"
    odd.write_bytes(FAMILY.read_bytes())
    if command == "report":
        status, _, err = run(capsys, "report", odd, "-o", tmp_path / "rep", "-q")
    else:
        extra = ["--columns", "1-10"] if command == "logo" else []
        status, _, err = run(capsys, command, odd, *extra, "--title", "cost $\\q^$ 5", "-o", tmp_path / "f.svg", "-q")
        assert "cost $\\q^$ 5" in (tmp_path / "f.svg").read_text() or "cost" in (tmp_path / "f.svg").read_text()
    assert status == 0, err
