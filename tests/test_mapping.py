"""Tying alignment columns to the frame: labels from the file, a sidecar, or an anchor row; sites."""

import numpy as np

from globcons import read_alignment, score_columns
from globcons.align.anchor import map_columns
from globcons.cli import main
from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE
from globcons.demo import demo_alignment_path
from globcons.frame.functional_sites import column_sites
from globcons.frame.reference import reference_chain

MB = reference_chain("sperm_whale_myoglobin")


def synthetic_family_with_anchor():
    """Rows: the sperm whale myoglobin mature chain (the anchor) with 5 gap columns spliced in after
    residue 20 and 2 before it, plus 6 synthetic rows made from it by random substitution (seeded)."""
    rng = np.random.default_rng(2)
    anchor = "--" + MB.mature_sequence[:20] + "-----" + MB.mature_sequence[20:]
    rows = [anchor]
    letters = np.array(list("ACDEFGHIKLMNPQRSTVWY"))
    for _ in range(6):
        row = np.array(list(anchor))
        change = (rng.random(row.size) < 0.2) & (row != "-")
        row[change] = rng.choice(letters, change.sum())
        row[:2] = rng.choice(letters, 2)  # the others hold residues where the anchor has gaps
        rows.append("".join(row))
    raw = np.frombuffer("".join(rows).encode(), dtype=np.uint8)
    codes = BYTE_TO_CODE[raw].reshape(len(rows), len(anchor)).copy()
    return Alignment(ids=tuple(["anchor"] + [f"s{i}" for i in range(6)]), codes=codes)


def test_labels_transfer_exactly_through_a_known_anchor_row():
    alignment = synthetic_family_with_anchor()
    mapping = map_columns(alignment, anchor="anchor")
    # By construction: columns 1-2 and 23-27 are gaps in the anchor (no label); the anchor's residue k
    # (1-based, mature numbering) sits at column k + 2 for k <= 20 and k + 7 after.
    expected = ["", ""] + list(MB.labels[:20]) + [""] * 5 + list(MB.labels[20:])
    assert list(mapping.labels) == expected
    assert mapping.source == "anchor" and mapping.nearest_reference == "sperm_whale_myoglobin"


def test_best_placing_row_is_chosen_without_a_reference():
    alignment = synthetic_family_with_anchor()
    mapping = map_columns(alignment)
    assert mapping.source == "anchor"
    assert mapping.labels[93 + 7 - 1] == "F8"  # the anchor's His93 sits at column 100


def test_non_globin_family_gets_no_labels():
    rng = np.random.default_rng(9)
    codes = rng.integers(0, 20, size=(8, 120)).astype(np.uint8)
    mapping = map_columns(Alignment(ids=tuple(f"r{i}" for i in range(8)), codes=codes))
    assert mapping.source == "none" and set(mapping.labels) == {""}
    assert "no row places" in mapping.note


def test_demo_columns_carry_frame_labels_and_sites():
    table = score_columns(read_alignment(demo_alignment_path()))
    f8 = table[table["frame_label"] == "F8"]
    assert len(f8) == 1 and f8["column"].item() == 96 and f8["sites"].item() == "heme-ligand"
    assert table.loc[table["frame_label"] == "E7", "sites"].item() == "distal-pocket"
    # the three inserted CD-corner columns of the demo have no frame position
    assert (table["frame_label"] == "").sum() == 3
    assert table.attrs["frame"]["source"] == "anchor"


def test_column_sites_user_table_by_label_and_by_column(tmp_path):
    labels = ("F8", "E7", "", "CD1")
    assert column_sites(labels) == ["heme-ligand", "distal-pocket", "", "heme-contact"]
    path = tmp_path / "mine.tsv"
    path.write_text("label\trole\tkind\nF8\tiron ligand\tmy-ligand\n", encoding="utf-8")
    from globcons.frame.functional_sites import sites
    user = sites(path=path)
    assert column_sites(labels, user_sites=user)[0] == "heme-ligand,my-ligand"
    assert column_sites(labels, user_sites=user, replace=True) == ["my-ligand", "", "", ""]
    path.write_text("column\trole\tkind\n3\tcatalytic\tactive-site\n", encoding="utf-8")
    assert column_sites(labels, user_sites=sites(path=path), replace=True) == ["", "", "active-site", ""]


def test_align_then_columns_through_the_command_line(tmp_path, capsys):
    # Unaligned real chains (UniProt entries, with Met) -> align -> columns: labels come back from the file.
    fasta = tmp_path / "chains.fasta"
    fasta.write_text("".join(f">{n}\n{reference_chain(n).full_sequence}\n" for n in
                             ("human_myoglobin", "human_hemoglobin_alpha", "human_hemoglobin_beta")))
    for out in ("placed.sto", "placed.fasta"):
        assert main(["align", str(fasta), "-o", str(tmp_path / out), "--quiet"]) == 0
        capsys.readouterr()
        assert main(["columns", str(tmp_path / out), "--quiet", "--min-neff", "0"]) == 0
        lines = capsys.readouterr().out.splitlines()
        header = lines[0].split("\t")
        rows = [dict(zip(header, line.split("\t"), strict=True)) for line in lines[1:]]
        f8 = [r for r in rows if r["frame_label"] == "F8"]
        assert len(f8) == 1 and f8[0]["consensus"] == "H" and f8[0]["residues"] == "H:1.00"
        assert f8[0]["sites"] == "heme-ligand"
        # three chains are three effective sequences: His in all three is not yet a confident invariant
        assert f8[0]["class"] == "variable" and 0.4 < 1 - float(f8[0]["support"]) < 0.6
    assert (tmp_path / "placed.fasta.frame.tsv").is_file()


def test_align_rejects_bad_input_with_one_line(tmp_path, capsys):
    bad = tmp_path / "bad.fasta"
    bad.write_text(">x\nMVLS1EGE\n")
    assert main(["align", str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "bad.fasta:2" in err


def test_user_sites_through_the_command_line(tmp_path, capsys):
    sites_file = tmp_path / "sites.tsv"
    sites_file.write_text("column\trole\tkind\n1\tN-terminus\tmy-terminus\n")
    assert main(["columns", str(demo_alignment_path()), "--sites", str(sites_file), "--replace-sites",
                 "--quiet"]) == 0
    lines = capsys.readouterr().out.splitlines()
    header = lines[0].split("\t")
    values = [dict(zip(header, line.split("\t"), strict=True))["sites"] for line in lines[1:]]
    assert values[0] == "my-terminus" and set(values[1:]) == {""}


def test_a2m_sidecar_fits_both_reading_modes(tmp_path, capsys):
    # An A2M written with insert columns is read either with them (--keep-inserts) or without (default);
    # the sidecar carries both numberings, so F8 is found either way.
    mb = reference_chain("sperm_whale_myoglobin").mature_sequence
    fasta = tmp_path / "in.fasta"
    fasta.write_text(f">mb\n{mb}\n>ins\n{mb[:50]}GGG{mb[50:]}\n")
    out = tmp_path / "placed.a2m"
    assert main(["align", str(fasta), "-o", str(out), "--keep-inserts", "--quiet"]) == 0
    for extra, width, f8_column in (([], 154, 94), (["--keep-inserts"], 157, 97)):
        capsys.readouterr()
        assert main(["columns", str(out), "--quiet", "--min-neff", "0", *extra]) == 0
        lines = capsys.readouterr().out.splitlines()[1:]
        assert len(lines) == width
        f8 = [line.split("\t")[0] for line in lines if line.split("\t")[1] == "F8"]
        assert f8 == [str(f8_column)]


def test_labels_are_read_with_the_file_never_looked_up_while_scoring(tmp_path):
    """A sidecar beside the FASTA is the reader's business: scoring the same codes gives the same table
    whatever lies on disk, and the labels come only through ``Alignment.frame_labels``."""
    alignment = synthetic_family_with_anchor()
    path = tmp_path / "family.fasta"
    path.write_text("".join(f">{i}\n{alignment.row(k)}\n" for k, i in enumerate(alignment.ids)))
    planted = [f"A{k + 1}" if k < 16 else "" for k in range(alignment.n_columns)]  # labels no anchor would give
    (tmp_path / "family.fasta.frame.tsv").write_text(
        "column\tframe_label\n" + "".join(f"{k + 1}\t{label}\n" for k, label in enumerate(planted)))

    read = read_alignment(path)
    assert read.frame_labels == tuple(planted) and read.frame_labels_from == str(path) + ".frame.tsv"
    from_file = score_columns(read)
    assert list(from_file["frame_label"]) == planted and from_file.attrs["frame"]["source"] == "sidecar"

    # The same codes with the file's path as their source, but without labels: the anchor decides.
    bare = Alignment(ids=read.ids, codes=read.codes, source=str(path))
    in_memory = score_columns(bare)
    assert in_memory.attrs["frame"]["source"] == "anchor"
    assert list(in_memory["frame_label"]) == list(map_columns(alignment).labels)
    (tmp_path / "family.fasta.frame.tsv").unlink()
    assert list(score_columns(bare)["frame_label"]) == list(in_memory["frame_label"])
