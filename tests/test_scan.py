"""Scanning sequences: verdicts, key residues, pocket, departures, flags, workers, streaming input.

Sources: reference sequences are the UniProt entries in globcons/data/frame (P02185, P02144, P69905,
P68871); key positions and the canonical heme pocket (proximal His F8, distal His E7, Phe CD1) are facts
of the trade, from memory. Non-globins (ubiquitin P0CG48, lysozyme P00698) are written from memory.
"""

import gzip

import numpy as np
import pytest

from globcons import read_alignment
from globcons.analysis.family import family_from_alignment
from globcons.analysis.scanning import scan
from globcons.cli import main
from globcons.demo import demo_alignment_path
from globcons.frame.reference import reference_chain, reference_chains
from globcons.io.records import stream_records
from helpers import planted_family
from test_place import LYSOZYME, UBIQUITIN

MB = reference_chain("sperm_whale_myoglobin").mature_sequence


def by_id(summary):
    return {row["id"]: row for row in summary.to_dict("records")}


@pytest.fixture(scope="module")
def reference_scan():
    records = []
    for chain in reference_chains():
        records += [(chain.name + "+Met", chain.full_sequence), (chain.name, chain.mature_sequence)]
    return scan(records)


def test_real_chains_with_and_without_met(reference_scan):
    summary, residues = reference_scan
    for row in summary.to_dict("records"):
        assert row["is_globin"] == "yes" and row["pocket"] == "canonical"
        assert row["key_residues"] == "F8:H E7:H CD1:F B10:L E11:V"
        assert row["helices_missing"] == "" and row["flags"] == ""
    # beta His92 (mature) is F8; with the Met it is position 93 of the query as given.
    beta = residues[residues["id"] == "human_hemoglobin_beta+Met"]
    f8 = beta[beta["frame_label"] == "F8"]
    assert f8["position"].item() == 93 and f8["residue"].item() == "H"
    assert beta.iloc[0]["deviation"] == "insertion"  # the initiator Met has no frame position


def test_proximal_his_replaced_truncated_and_stopped_myoglobins():
    records = [("mb", MB), ("H93Y", MB[:92] + "Y" + MB[93:]), ("from_C", MB[35:]),
               ("stop", MB[:70] + "*" + MB[71:])]
    summary, residues = scan(records)
    rows = by_id(summary)
    # The built-in family is three chains (3 effective sequences): nothing in it is confidently invariant,
    # so nothing departs from it; the pocket and key residues are read all the same.
    assert rows["mb"]["departures"] == 0 and rows["H93Y"]["departures"] == 0
    assert rows["H93Y"]["pocket"] == "altered: F8 Y" and rows["H93Y"]["key_residues"].startswith("F8:Y")
    # Against the demo family (45 effective myoglobins, F8 held His by construction) the lost His breaks it.
    demo = family_from_alignment(read_alignment(demo_alignment_path()))
    summary, residues = scan(records[:2], family=demo)
    assert by_id(summary)["H93Y"]["departures_invariant"] == 1
    broken = residues[(residues["id"] == "H93Y") & (residues["deviation"] == "breaks-invariant")]
    assert broken[["position", "residue"]].values.tolist() == [[93, "Y"]]
    # Sperm whale myoglobin residue 36 is C1 (mature numbering): helices A and B are gone.
    assert rows["from_C"]["helices_missing"] == "A,B" and rows["from_C"]["is_globin"] == "yes"
    assert rows["stop"]["flags"] == "internal-stop,possible-frameshift"


def test_shuffled_globins_and_non_globins_are_not_globins():
    rng = np.random.default_rng(8)
    records = [("ubiquitin", UBIQUITIN), ("lysozyme", LYSOZYME)]
    records += [(f"shuffled_{c.name}", "".join(rng.permutation(list(c.mature_sequence)))) for c in reference_chains()]
    summary, _ = scan(records)
    assert set(summary["is_globin"]) == {"no"}
    assert by_id(summary)["ubiquitin"]["flags"] == "short"


def test_bad_records_get_a_row_and_do_not_lose_the_others():
    records = [("empty", ""), ("dna", "ACGT" * 10), ("digits", "MVLS1GEW"), ("huge", "MKL" * 2000), ("mb", MB)]
    summary, residues = scan(records)
    rows = by_id(summary)
    assert [rows[k]["flags"] for k in ("empty", "dna", "digits", "huge")] == \
        ["empty", "nucleotide", "invalid-characters", "too-long"]
    assert rows["digits"]["length"] == 8 and rows["empty"]["is_globin"] == "no"
    assert rows["mb"]["pocket"] == "canonical"
    assert set(residues["id"]) == {"mb"}


def test_family_departures_land_on_its_invariant_columns():
    # A synthetic family made from sperm whale myoglobin (seeded): every column is randomised in half
    # the rows except 12 chosen columns, which stay as in myoglobin (invariant by construction).
    family_alignment, keep = planted_family(MB, 12, seed=4)
    family = family_from_alignment(family_alignment)
    invariant = np.flatnonzero(family.classes == "invariant")
    assert set(keep) <= set(invariant)
    # The query is myoglobin with every kept column changed to a residue that differs from it.
    query = np.array(list(MB))
    for column in keep:
        query[column] = "W" if MB[column] != "W" else "A"
    summary, residues = scan([("q", "".join(query))], family=family)
    departures = residues[residues["deviation"] == "breaks-invariant"]
    assert sorted(departures["column"].astype(int) - 1) == sorted(keep.tolist())
    assert summary["departures_invariant"].item() == len(keep)


def test_jobs_one_and_two_give_identical_files(tmp_path):
    fasta = tmp_path / "q.fasta"
    rng = np.random.default_rng(3)
    text = ""
    for index in range(40):
        chain = reference_chains()[index % 4].mature_sequence
        seq = np.array(list(chain))
        change = rng.random(seq.size) < 0.25
        seq[change] = rng.choice(list("ACDEFGHIKLMNPQRSTVWY"), change.sum())
        text += f">q{index}\n{''.join(seq)}\n"
    fasta.write_text(text)
    outputs = []
    for jobs in ("1", "2"):
        summary, residues = tmp_path / f"s{jobs}.tsv", tmp_path / f"r{jobs}.tsv"
        assert main(["scan", str(fasta), "-o", str(summary), "--residues", str(residues), "--jobs", jobs,
                     "--batch-size", "7", "--quiet"]) == 0
        outputs.append((summary.read_bytes(), residues.read_bytes()))
    assert outputs[0] == outputs[1]
    lines = outputs[0][0].decode().splitlines()
    assert len(lines) == 41 and lines[1].startswith("q0\t")


def test_stream_records_reads_line_by_line_gzip_and_stdin(tmp_path, monkeypatch):
    path = tmp_path / "q.fa.gz"
    path.write_bytes(gzip.compress(b"\xef\xbb\xbf>a one\r\nMV LS\r\n\r\n>b\nAC1*\n"))
    records = list(stream_records(path))
    assert [(r.id, r.description, r.sequence, r.line) for r in records] == [("a", "one", "MVLS", 1),
                                                                             ("b", "", "AC1*", 4)]
    truncated = tmp_path / "cut.fa.gz"
    truncated.write_bytes(gzip.compress(b">a\n" + b"MVLS" * 5000 + b"\n")[:60])
    from globcons.errors import InputError

    with pytest.raises(InputError, match="truncated"):
        list(stream_records(truncated))


def test_scan_cli_bad_input_and_summary_line(tmp_path, capsys):
    assert main(["scan", str(tmp_path / "missing.fa")]) == 2
    assert "missing.fa: no such file" in capsys.readouterr().err
    fasta = tmp_path / "q.fa"
    fasta.write_text(f">mb\n{MB}\n>bad\nXX1\n")
    assert main(["scan", str(fasta)]) == 0
    captured = capsys.readouterr()
    assert "scanned 2 sequences: 1 globins" in captured.err
    assert captured.out.splitlines()[2].split("\t")[-1] == "invalid-characters"


def test_scan_heatmap_option_writes_a_figure(tmp_path, capsys):
    fasta = tmp_path / "q.fa"
    fasta.write_text(f">mb\n{MB}\n>H93Y\n{MB[:92]}Y{MB[93:]}\n")
    assert main(["scan", str(fasta), "-o", str(tmp_path / "s.tsv"), "--heatmap", str(tmp_path / "map.svg"),
                 "--quiet"]) == 0
    assert "<svg" in (tmp_path / "map.svg").read_text()[:500]
    assert main(["scan", str(fasta), "--heatmap", str(tmp_path / "map.bmp")]) == 2
    assert not (tmp_path / "map.bmp").exists()
