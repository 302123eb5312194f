"""Streaming (two passes over the file in chunks) gives the in-memory table; the FASTA byte path changes nothing.

The reference parser below is a plain per-record Python reading of the FASTA rules (written here, not
taken from the package): records start at '>' lines, the id is the first word, CRs and trailing blanks go,
blank lines are skipped, letters are upper-cased, one final '*' per record is dropped and other '*' are
unknown residues.
"""

from __future__ import annotations

import gzip
import warnings

import numpy as np
import pandas as pd
import pytest

from globcons import read_alignment, score_columns
from globcons.analysis import streaming
from globcons.analysis.options import ScoreOptions
from globcons.analysis.streaming import plan_reading, stream_columns
from globcons.cli import main
from globcons.errors import InputError, OptionError
from globcons.io.alignments import parse_alignment
from globcons.io.chunks import record_chunks
from globcons.io.fasta import parse_fasta_rows
from globcons.io.tables import format_table

_LETTERS = "ACDEFGHIKLMNPQRSTVWY"
_HAND_CODES = {letter: code for code, letter in enumerate(_LETTERS)}
_HAND_CODES.update({"U": 20, "O": 21, "X": 22, "B": 22, "Z": 22, "J": 22, "*": 22, "-": 23, ".": 23, "~": 23})


def reference_parse(data: bytes) -> tuple[list[str], list[str], list[list[int]]]:
    """Ids, descriptions and codes of aligned FASTA, one record at a time in plain Python."""
    records: list[tuple[str, str, list[str]]] = []
    for raw in data.decode("ascii").split("\n"):
        line = raw.rstrip("\r")
        if line.startswith(">"):
            fields = line[1:].strip().split(None, 1)
            records.append((fields[0], fields[1] if len(fields) > 1 else "", []))
        elif line.strip():
            records[-1][2].append(line.rstrip(" \t"))
    ids, descriptions, rows = [], [], []
    for identifier, description, pieces in records:
        sequence = "".join(pieces).upper()
        if sequence.endswith("*"):
            sequence = sequence[:-1]
        ids.append(identifier)
        descriptions.append(description)
        rows.append([_HAND_CODES[c] for c in sequence])
    return ids, descriptions, rows


TRICKY = {
    "wrapped": b">a first one\nMKVLA\nAG-\n>b\nMKV\nLAAG-\n",
    "crlf_blank_lines": b"\r\n>a d\r\nMKV-\r\n\r\nLL\r\n>b\r\nMRV-\r\nLI\r\n\r\n",
    "lower_dot_star": b">a\nmkv.ll*\n>b\nMK*-LL\n>c x y\nmkv-li\n",
    "trailing_blanks": b">a\nMKV  \nLL\t\n>b\nMKVLL\n",
    "no_final_newline": b">a\nMKVLL\n>b\nMKVL-",
    "leading_blank_lines": b"\n  \n>a\nWYVLL\n>b\nWKVLL\n",
}


@pytest.mark.parametrize("name", sorted(TRICKY))
def test_fast_path_equals_a_plain_record_parser(name, tmp_path):
    data = TRICKY[name]
    ids, descriptions, rows = reference_parse(data)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # internal stops are reported as a warning
        in_memory = parse_alignment(data, "x.fasta")
        path = tmp_path / "x.fasta"
        path.write_bytes(data)
        from_file = read_alignment(path)  # read into a buffer of its own and encoded in place
    for alignment in (in_memory, from_file):
        assert list(alignment.ids) == ids
        assert list(alignment.descriptions) == descriptions
        assert alignment.codes.tolist() == rows
    # Slices of a few bytes (every line its own slice) change nothing either.
    sliced = parse_fasta_rows(data, "x.fasta", a2m=False, keep_inserts=False, slice_bytes=3)
    assert sliced[0] == ids and sliced[1] == descriptions
    assert np.where(sliced[2] == 252, 22, sliced[2]).tolist() == rows


def test_sliced_fast_path_reports_the_same_errors():
    for data in (b">a\nMK V\n>b\nMKVL\n", b">a\nMKVL\n>b\nMK1L\n", b">a\nMKVL\n>b\nMKV\n", b"MK\n>a\nMK\n"):
        messages = []
        for slice_bytes in (2, 5, 1 << 20):
            with pytest.raises(InputError) as caught:
                parse_fasta_rows(data, "x.fasta", False, False, slice_bytes=slice_bytes)
            messages.append(str(caught.value))
        assert len(set(messages)) == 1, messages


# --------------------------------------------------------------------------------------------------
# a multi-chunk synthetic family


def _family(tmp_path, n_rows: int = 5000, gz: bool = False, name: str = "family.fasta"):
    """Rows of the demo globins with substitutions, fragments, all-gap rows, lower case and duplicate ids."""
    from globcons.demo import demo_alignment_path

    demo = read_alignment(demo_alignment_path())
    rng = np.random.default_rng(7)
    letters = np.frombuffer(("".join(demo.row(i) for i in range(demo.n_rows))).encode(), dtype=np.uint8)
    base = letters.reshape(demo.n_rows, demo.n_columns)
    rows = base[rng.integers(0, demo.n_rows, n_rows)].copy()
    mutate = rng.random(rows.shape) < 0.08
    rows[mutate] = np.frombuffer(_LETTERS.encode(), dtype=np.uint8)[rng.integers(0, 20, int(mutate.sum()))]
    rows[rng.random(rows.shape) < 0.03] = ord("-")
    fragment = rng.random(n_rows) < 0.1
    cut = rng.integers(0, demo.n_columns, n_rows)
    for k in np.flatnonzero(fragment)[:200]:  # test data only
        rows[k, : cut[k]] = ord("-")
    rows[rng.integers(0, n_rows, 15)] = ord("-")  # rows without residues
    lower = rng.random(n_rows) < 0.05
    rows[lower] = np.char.lower(rows[lower].view("S1")).view(np.uint8).reshape(-1, demo.n_columns)
    ids = [f"seq{k}" for k in range(n_rows)]
    ids[10] = ids[11] = ids[n_rows // 2] = "dup"
    ids[n_rows * 4 // 5] = "dup_2"  # taken later in the file: the renaming must skip it, as in memory
    text = "".join(f">{identifier} row {k}\n" + "\n".join(
        rows[k].tobytes().decode()[i:i + 50] for i in range(0, demo.n_columns, 50)) + "\n"
        for k, identifier in enumerate(ids))
    path = tmp_path / (name + (".gz" if gz else ""))
    path.write_bytes(gzip.compress(text.encode()) if gz else text.encode())
    return path


def _tables(path, options, chunk_rows=700):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        memory = score_columns(read_alignment(path), options)
        streamed = stream_columns(path, options, chunk_rows=chunk_rows)
    return memory, streamed


@pytest.mark.parametrize("weights", ["henikoff", "none"])
def test_streaming_equals_in_memory_on_a_multi_chunk_family(tmp_path, weights):
    path = _family(tmp_path)
    memory, streamed = _tables(path, ScoreOptions(weights=weights))
    pd.testing.assert_frame_equal(memory, streamed, check_exact=False, rtol=0, atol=1e-12)
    assert list(memory["class"]) == list(streamed["class"])
    assert list(memory["frame_label"]) == list(streamed["frame_label"])
    assert (memory["frame_label"] != "").sum() > 100  # the anchor placed: labels were really compared
    assert memory.attrs == streamed.attrs
    assert memory.attrs["sequences"] == 5000


def test_streaming_tsv_is_byte_identical_and_reference_follows_renamed_ids(tmp_path, capsys):
    path = _family(tmp_path)
    outputs = []
    for extra in ([], ["--chunk-rows", "700"], ["--chunk-rows", "1"]):
        out = tmp_path / f"out{len(outputs)}.tsv"
        status = main(["columns", str(path), "-o", str(out), "--reference", "dup_3", *extra])
        assert status == 0, capsys.readouterr().err
        outputs.append(out.read_bytes())
    assert outputs[0] == outputs[1] == outputs[2]
    assert b"ref_position" in outputs[0]
    err = capsys.readouterr().err
    assert "'dup' -> 'dup_3'" in err  # dup_2 was taken by a later row


def test_gzip_and_stdin_stream_like_the_file(tmp_path, monkeypatch, capsys):
    plain = _family(tmp_path, n_rows=1500)
    zipped = _family(tmp_path, n_rows=1500, gz=True)
    memory, _ = _tables(plain, ScoreOptions(), chunk_rows=400)
    _, from_gzip = _tables(zipped, ScoreOptions(), chunk_rows=400)
    pd.testing.assert_frame_equal(memory, from_gzip, check_exact=True)
    assert from_gzip.attrs["input"] == str(zipped)
    import io
    import sys

    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(zipped.read_bytes())))
    out = tmp_path / "stdin.tsv"
    assert main(["columns", "-", "-o", str(out), "--chunk-rows", "333", "--no-frame"]) == 0
    in_memory = tmp_path / "mem.tsv"
    assert main(["columns", str(plain), "-o", str(in_memory), "--no-frame"]) == 0
    body = [line for line in out.read_text().splitlines() if not line.startswith("#")]
    assert body == [line for line in in_memory.read_text().splitlines() if not line.startswith("#")]


def test_a2m_rows_left_too_short_fail_on_the_same_line_streamed(tmp_path):
    path = _family(tmp_path, n_rows=900, name="family.a2m")  # lower-case rows are inserts here
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            score_columns(read_alignment(path), ScoreOptions(frame=False))
        except InputError as exc:  # dropping whole lower-case rows leaves them too short: same error streamed
            with pytest.raises(InputError) as caught:
                stream_columns(path, ScoreOptions(frame=False), chunk_rows=100)
            assert caught.value.line == exc.line
            return
    pytest.fail("expected the lower-case rows to fail as A2M")


def test_a2m_inserts_dropped_are_counted_over_all_chunks(tmp_path):
    text = "".join(f">r{k}\nMK{'ae' if k % 3 else ''}VL-\n" for k in range(50))
    path = tmp_path / "small.a2m"
    path.write_text(text)
    memory, streamed = _tables(path, ScoreOptions(frame=False, weights="none"), chunk_rows=7)
    pd.testing.assert_frame_equal(memory, streamed, check_exact=True)
    assert streamed.attrs["reader_notes"]["inserts_dropped"] == 2 * sum(1 for k in range(50) if k % 3)


# --------------------------------------------------------------------------------------------------
# errors and refusals


def test_an_error_in_a_later_chunk_names_the_line_of_the_file(tmp_path):
    lines = []
    for k in range(100):
        lines += [f">r{k}", "MKVLA", "AGLLW"]
    lines[3 * 73 + 2] = "AGL1W"  # record 73, its second sequence line
    path = tmp_path / "bad.fasta"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError) as memory:
        read_alignment(path)
    with pytest.raises(InputError) as streamed:
        stream_columns(path, ScoreOptions(frame=False), chunk_rows=10)
    assert memory.value.line == streamed.value.line == 3 * 73 + 3
    assert str(memory.value) == str(streamed.value)


def test_a_short_row_in_a_later_chunk_names_its_header_line(tmp_path):
    text = "".join(f">r{k}\n{'MKVLA' if k != 55 else 'MKV'}\n" for k in range(80))
    path = tmp_path / "short.fasta"
    path.write_text(text)
    with pytest.raises(InputError) as memory:
        read_alignment(path)
    with pytest.raises(InputError) as streamed:
        stream_columns(path, ScoreOptions(frame=False), chunk_rows=9)
    assert memory.value.line == streamed.value.line == 2 * 55 + 1
    assert "row 'r55' has 3 columns" in str(streamed.value)


def test_cluster_weights_stream_and_give_the_in_memory_table(tmp_path):
    # Cluster weights need every pair of rows: the first pass keeps the rows' codes (up to the exact
    # limit) or a fixed sample (above it), so both ways of reading agree in both regimes.
    path = _family(tmp_path, n_rows=50)
    for options in (ScoreOptions(weights="cluster", frame=False),
                    ScoreOptions(weights="cluster", frame=False, neff_exact_rows=20)):
        streamed = stream_columns(path, options, chunk_rows=7)
        in_memory = score_columns(read_alignment(path), options)
        assert format_table(streamed, "tsv") == format_table(in_memory, "tsv")
    assert "sampled rows" in streamed.attrs["effective_sequences_method"]
    # The default (Henikoff frequencies) estimates the effective number from sampled rows compared with
    # every row: the same sample and the same integer counts whichever way the file is read.
    options = ScoreOptions(frame=False, neff_exact_rows=20, neff_sample=16)
    streamed = stream_columns(path, options, chunk_rows=7)
    in_memory = score_columns(read_alignment(path), options)
    assert format_table(streamed, "tsv") == format_table(in_memory, "tsv")
    assert streamed.attrs["effective_sequences"] == in_memory.attrs["effective_sequences"]
    assert "16 sampled rows each compared with all 50" in streamed.attrs["effective_sequences_method"]


def test_keep_inserts_and_stockholm_refuse_to_stream(tmp_path):
    path = _family(tmp_path, n_rows=50)
    with pytest.raises(OptionError, match="keep-inserts"):
        streaming.summarise_file(path, ScoreOptions(), chunk_rows=10, keep_inserts=True)
    sto = tmp_path / "x.sto"
    sto.write_text("# STOCKHOLM 1.0\na MKV\nb MKL\n//\n")
    with pytest.raises(OptionError, match="FASTA and A2M"):
        stream_columns(sto, ScoreOptions(frame=False), chunk_rows=10)
    with pytest.raises(OptionError, match="at least 1"):
        plan_reading(str(path), chunk_rows=0)


def test_too_large_for_memory_streams_automatically_or_stops_clearly(tmp_path, monkeypatch, capsys):
    path = _family(tmp_path, n_rows=300)
    monkeypatch.setattr(streaming, "available_memory", lambda: 1000)
    plan = plan_reading(str(path))
    assert plan.stream and plan.chunk_rows is None and "GB available" in plan.note
    with pytest.raises(OptionError, match=r"GB needed in memory.*use --chunk-rows"):
        plan_reading(str(path), keep_inserts=True)
    out = tmp_path / "auto.tsv"
    assert main(["columns", str(path), "-o", str(out), "--no-frame"]) == 0
    assert "reading it in two passes" in capsys.readouterr().err
    monkeypatch.setattr(streaming, "available_memory", lambda: 1 << 40)
    assert not plan_reading(str(path)).stream
    reference = tmp_path / "memory.tsv"
    assert main(["columns", str(path), "-o", str(reference), "--no-frame"]) == 0
    assert out.read_bytes() == reference.read_bytes()


def test_record_chunks_cut_at_whole_records():
    import io

    data = b"\n>a\nMK\nVL\n>b x\nMKVL\n>c\nMK\nVL\n>d\nMKVL"
    chunks = list(record_chunks(io.BytesIO(data), 2))
    assert chunks == [b"\n>a\nMK\nVL\n>b x\nMKVL\n", b">c\nMK\nVL\n>d\nMKVL"]
    assert b"".join(record_chunks(io.BytesIO(data), 1)) == data


def test_the_second_pass_reads_the_spooled_codes_not_the_file(tmp_path, monkeypatch):
    # Pass 2 reads pass 1's codes back from a temporary file: the file is parsed once.
    from globcons.io import chunks

    path = _family(tmp_path, n_rows=50)
    calls = []
    original = chunks.ChunkedFasta.matrices

    def counting(self, first_pass):
        calls.append(first_pass)
        return original(self, first_pass)

    monkeypatch.setattr(chunks.ChunkedFasta, "matrices", counting)
    streamed = stream_columns(path, ScoreOptions(frame=False), chunk_rows=7)
    assert calls == [True]
    assert format_table(streamed, "tsv") == format_table(score_columns(read_alignment(path), ScoreOptions(frame=False)),
                                                         "tsv")
