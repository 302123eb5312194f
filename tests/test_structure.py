"""Painting column scores onto a structure: chain residues, mapping, B-factors after a round trip.

The structure is built here: chain A holds four Trp (numbered 81-84, which no column takes) and then
residues 85-100 of sperm whale myoglobin (ELKPLAQSHATKHKIP, the F helix around the proximal His93,
F8), two atoms each (CA and C along a line), Pro88's CA in two alternate locations, plus a heme iron
and a water in chain A, and chain B of waters only. The alignment is the packaged demo (48 synthetic
myoglobins), whose F8 column is column 96.
"""

from __future__ import annotations

import gzip
import math

import numpy as np
import pytest
from Bio.PDB import MMCIFIO, MMCIFParser, PDBParser
from Bio.PDB.MMCIF2Dict import MMCIF2Dict
from Bio.SeqUtils import seq3

from globcons.analysis.columns import score_columns
from globcons.cli import main
from globcons.demo import demo_alignment_path
from globcons.errors import InputError, InputWarning, OptionError
from globcons.frame.reference import reference_chain
from globcons.io.alignments import read_alignment
from globcons.structure.paint import (
    SCORES,
    SENTINEL,
    map_chain_to_alignment,
    mapping_stats,
    paint_structure,
    score_values,
)
from globcons.structure.read import chain_residues, read_structure

FIRST = 81  # residue number of the first Trp
LEADING = "WWWW"
F_STRETCH = reference_chain("sperm_whale_myoglobin").mature_sequence[84:100]
SEQUENCE = LEADING + F_STRETCH
HIS_F8 = 93
ALTLOC_RESIDUE = 88  # Pro88: CA in locations A and B
F8_COLUMN = 96


def _atom_line(record: str, serial: int, name: str, resname: str, chain: str, number: int, x: float,
               altloc: str = " ", element: str = "C", bfactor: float = 20.0, occupancy: float = 1.0) -> str:
    return (f"{record:<6}{serial:>5} {name:<4}{altloc}{resname:>3} {chain}{number:>4}    "
            f"{x:8.3f}{0.0:8.3f}{0.0:8.3f}{occupancy:6.2f}{bfactor:6.2f}          {element:>2}")


def pdb_text(models: int = 1) -> str:
    lines = ["HEADER    TEST STRUCTURE"]
    for model in range(1, models + 1):
        serial = 1
        if models > 1:
            lines.append(f"MODEL     {model:>4}")

        def add(*args, **kwargs):
            nonlocal serial
            lines.append(_atom_line(args[0], serial, *args[1:], **kwargs))
            serial += 1

        for i, letter in enumerate(SEQUENCE):
            number, resname, x = FIRST + i, seq3(letter).upper(), 3.8 * i
            if number == ALTLOC_RESIDUE:
                add("ATOM", " CA ", resname, "A", number, x, altloc="A", occupancy=0.6)
                add("ATOM", " CA ", resname, "A", number, x + 0.3, altloc="B", occupancy=0.4)
            else:
                add("ATOM", " CA ", resname, "A", number, x)
            add("ATOM", " C  ", resname, "A", number, x + 1.5)
        lines.append("TER")
        add("HETATM", "FE  ", "HEM", "A", 154, 40.0, element="FE")
        add("HETATM", " O  ", "HOH", "A", 201, 45.0, element="O")
        add("HETATM", " O  ", "HOH", "B", 301, 50.0, element="O")
        add("HETATM", " O  ", "HOH", "B", 302, 53.0, element="O")
        if models > 1:
            lines.append("ENDMDL")
    lines.append("END")
    return "\n".join(lines) + "\n"


@pytest.fixture(scope="module")
def demo():
    alignment = read_alignment(demo_alignment_path())
    return alignment, score_columns(alignment)


@pytest.fixture()
def pdb_path(tmp_path):
    path = tmp_path / "model.pdb"
    path.write_text(pdb_text())
    return path


@pytest.fixture()
def cif_path(tmp_path, pdb_path):
    """The same structure as mmCIF (written by MMCIFIO), with one metadata item added."""
    structure = PDBParser(QUIET=True).get_structure("model", str(pdb_path))
    writer = MMCIFIO()
    writer.set_structure(structure)
    path = tmp_path / "model.cif"
    writer.save(str(path))
    with open(path, "a") as handle:
        handle.write("#\n_struct.title 'a small test structure'\n#\n")
    return path


def read_back(path):
    parser = MMCIFParser(QUIET=True) if str(path).endswith(".cif") else PDBParser(QUIET=True)
    return parser.get_structure("out", str(path))


def residue_bfactors(structure, chain="A") -> dict[int, list[float]]:
    """Residue number -> the B-factor of every atom (every alternate location) of chain A's residues."""
    return {residue.id[1]: [atom.get_bfactor() for atom in residue.get_unpacked_list()]
            for residue in structure[0][chain] if residue.id[0] == " "}


def expected_scores(demo, score="conservation") -> dict[int, float]:
    alignment, table = demo
    columns = map_chain_to_alignment(SEQUENCE, alignment, table)
    values = score_values(table, score)
    return {FIRST + i: (float(values[c - 1]) if c > 0 else SENTINEL) for i, c in enumerate(columns)}


# --- chain residues ---------------------------------------------------------------------------------

def test_chain_residues_skip_waters_and_ligands_and_map_modified_residues(tmp_path):
    lines = [_atom_line("ATOM", 1, " CA ", "GLY", "A", 1, 0.0),
             _atom_line("HETATM", 2, " CA ", "MSE", "A", 2, 3.8),
             _atom_line("ATOM", 3, " CA ", "UNK", "A", 3, 7.6),
             _atom_line("ATOM", 4, " CA ", "HIS", "A", 4, 11.4),
             _atom_line("HETATM", 5, "FE  ", "HEM", "A", 154, 20.0, element="FE"),
             _atom_line("HETATM", 6, " O  ", "HOH", "A", 201, 25.0, element="O"), "END"]
    path = tmp_path / "small.pdb"
    path.write_text("\n".join(lines) + "\n")
    structure, fmt = read_structure(path)
    assert fmt == "pdb"
    residues = chain_residues(structure, "A")
    assert "".join(letter for _, letter in residues) == "GMXH"
    assert [residue.id[1] for residue, _ in residues] == [1, 2, 3, 4]


def test_the_chain_maps_onto_the_demo_columns_with_his_f8_on_column_96(demo, pdb_path):
    alignment, table = demo
    structure, _ = read_structure(pdb_path)
    residues = chain_residues(structure, "A")
    sequence = "".join(letter for _, letter in residues)
    assert sequence == SEQUENCE
    columns = map_chain_to_alignment(sequence, alignment, table)
    assert columns.dtype == np.int64 and columns.shape == (len(SEQUENCE),)
    his = HIS_F8 - FIRST
    assert sequence[his] == "H" and columns[his] == F8_COLUMN
    assert table["frame_label"].iloc[F8_COLUMN - 1] == "F8"
    assert list(columns[:len(LEADING)]) == [0] * len(LEADING)  # the Trp run takes no column
    mapped = columns[columns > 0]
    assert list(mapped) == list(range(mapped[0], mapped[0] + len(F_STRETCH)))  # consecutive, no gap
    stats = mapping_stats(sequence, columns, table)
    assert (stats.residues, stats.mapped, stats.unmapped) == (20, 16, 4)
    assert stats.identity == pytest.approx(
        np.mean([sequence[i] == table["consensus"].iloc[c - 1] for i, c in enumerate(columns) if c > 0]))


# --- painting ---------------------------------------------------------------------------------------

def test_pdb_round_trip_b_factors_are_the_scores_of_the_mapped_columns(demo, pdb_path, tmp_path):
    alignment, table = demo
    out = tmp_path / "painted.pdb"
    result = paint_structure(pdb_path, alignment, table, out)
    assert (result.chain, result.residues, result.mapped, result.unmapped) == ("A", 20, 16, 4)
    assert result.score == "conservation" and result.sentinel == SENTINEL == -1.0
    assert result.output_format == "pdb"
    expected = expected_scores(demo)
    painted = read_back(out)
    got = residue_bfactors(painted)
    assert sorted(got) == sorted(expected)
    for number, values in got.items():
        assert len(set(values)) == 1, f"residue {number}: atoms differ {values}"
        assert values[0] == pytest.approx(round(expected[number], 2), abs=0.0051)
    assert len(got[ALTLOC_RESIDUE]) == 3  # CA A, CA B and C: all painted
    assert got[HIS_F8][0] == pytest.approx(round(float(table["conservation"].iloc[F8_COLUMN - 1]), 2), abs=1e-9)
    assert got[HIS_F8][0] == 1.0  # the proximal His column: one residue, no gaps
    for number in range(FIRST, FIRST + len(LEADING)):
        assert got[number] == [SENTINEL, SENTINEL]
    # Ligand, waters and the water chain carry the sentinel, not their old B-factor.
    others = [atom.get_bfactor() for residue in painted[0]["A"] if residue.id[0] != " " for atom in residue]
    others += [atom.get_bfactor() for atom in painted[0]["B"].get_atoms()]
    assert others == [SENTINEL] * 4
    assert " -1.00" in out.read_text()


def test_mmcif_round_trip_is_exact_and_keeps_the_metadata(demo, cif_path, tmp_path):
    alignment, table = demo
    out = tmp_path / "painted.cif"
    result = paint_structure(cif_path, alignment, table, out, score="property_conservation")
    assert result.output_format == "mmcif" and result.mapped == 16
    expected = expected_scores(demo, "property_conservation")
    got = residue_bfactors(read_back(out))
    for number, values in got.items():
        assert values == [expected[number]] * len(values)  # exact, all atoms and altlocs
    assert got[HIS_F8][0] == float(table["property_conservation"].iloc[F8_COLUMN - 1])
    data = MMCIF2Dict(str(out))
    assert data["_struct.title"] == ["a small test structure"]
    assert data["_atom_site.auth_asym_id"].count("B") == 2


def test_pdb_to_mmcif_and_mmcif_to_pdb(demo, pdb_path, cif_path, tmp_path):
    alignment, table = demo
    expected = expected_scores(demo, "jsd")
    paint_structure(pdb_path, alignment, table, tmp_path / "a.cif", score="jsd")
    for number, values in residue_bfactors(read_back(tmp_path / "a.cif")).items():
        assert values == [expected[number]] * len(values)
    paint_structure(cif_path, alignment, table, tmp_path / "b.pdb", score="jsd")
    for number, values in residue_bfactors(read_back(tmp_path / "b.pdb")).items():
        assert values == pytest.approx([round(expected[number], 2)] * len(values), abs=0.0051)


def test_a_column_without_a_score_gets_the_sentinel(demo, pdb_path, tmp_path):
    alignment, table = demo
    holed = table.copy()
    holed.loc[F8_COLUMN - 1, "conservation"] = math.nan
    result = paint_structure(pdb_path, alignment, holed, tmp_path / "p.pdb")
    assert result.mapped == 16 and result.painted == 15
    got = residue_bfactors(read_back(tmp_path / "p.pdb"))
    assert got[HIS_F8] == [SENTINEL, SENTINEL]
    assert got[HIS_F8 + 1][0] == pytest.approx(float(table["conservation"].iloc[F8_COLUMN]), abs=0.0051)


def test_every_model_is_painted(demo, tmp_path):
    alignment, table = demo
    path = tmp_path / "ensemble.pdb"
    path.write_text(pdb_text(models=2))
    result = paint_structure(path, alignment, table, tmp_path / "e.cif", score="n_eff")
    assert result.models == 2
    painted = read_back(tmp_path / "e.cif")
    first, second = ({r.id[1]: [a.get_bfactor() for a in r.get_unpacked_list()] for r in model["A"]}
                     for model in painted)
    assert first == second
    assert first[HIS_F8][0] == float(table["n_eff"].iloc[F8_COLUMN - 1])


def test_a_chosen_sentinel_and_the_describe_line(demo, pdb_path, tmp_path):
    alignment, table = demo
    result = paint_structure(pdb_path, alignment, table, tmp_path / "s.pdb", unmapped=-5.5)
    got = residue_bfactors(read_back(tmp_path / "s.pdb"))
    assert got[FIRST] == [-5.5, -5.5]
    line = result.describe()
    assert "\n" not in line
    assert line.startswith("chain A: 16 of 20 residues mapped to columns ")
    assert "conservation" in line and "-5.50" in line


# --- errors -----------------------------------------------------------------------------------------

def test_unknown_score_lists_the_valid_ones(demo, pdb_path, tmp_path):
    alignment, table = demo
    with pytest.raises(OptionError) as caught:
        paint_structure(pdb_path, alignment, table, tmp_path / "x.pdb", score="entropy")
    for name in SCORES:
        assert name in str(caught.value)


def test_unknown_output_extension(demo, pdb_path, tmp_path):
    alignment, table = demo
    with pytest.raises(OptionError, match=r"\.pdb.*\.cif"):
        paint_structure(pdb_path, alignment, table, tmp_path / "x.txt")


def test_a_structure_of_waters_only_has_no_protein_chain(demo, tmp_path):
    alignment, table = demo
    path = tmp_path / "waters.pdb"
    path.write_text(_atom_line("HETATM", 1, " O  ", "HOH", "W", 1, 0.0, element="O") + "\nEND\n")
    with pytest.raises(InputError, match="no protein chain") as caught:
        paint_structure(path, alignment, table, tmp_path / "x.pdb")
    assert str(path) in str(caught.value)


def test_a_file_that_is_no_structure_names_the_file(demo, tmp_path):
    alignment, table = demo
    path = tmp_path / "notes.pdb"
    path.write_text("just some words\n")
    with pytest.raises(InputError) as caught:
        paint_structure(path, alignment, table, tmp_path / "x.pdb")
    assert str(path) in str(caught.value)
    binary = tmp_path / "blob.cif"
    binary.write_bytes(b"\xff\xfe\x00\x81" * 10)
    with pytest.raises(InputError, match="blob.cif"):
        paint_structure(binary, alignment, table, tmp_path / "x.pdb")


def test_a_missing_chain_lists_the_chains_present(demo, pdb_path, tmp_path):
    alignment, table = demo
    with pytest.raises(InputError) as caught:
        paint_structure(pdb_path, alignment, table, tmp_path / "x.pdb", chain="Z")
    message = str(caught.value)
    assert "'Z'" in message and "'A'" in message and "'B'" in message


def test_a_chain_without_protein_is_refused(demo, pdb_path, tmp_path):
    alignment, table = demo
    with pytest.raises(InputError, match="chain 'B' holds no protein.*'A'"):
        paint_structure(pdb_path, alignment, table, tmp_path / "x.pdb", chain="B")


# --- command line -----------------------------------------------------------------------------------

def run(capsys, *args) -> tuple[int, str, str]:
    status = main([str(a) for a in args])
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def test_cli_round_trip(demo, pdb_path, tmp_path, capsys):
    out = tmp_path / "cli.cif"
    status, _, err = run(capsys, "paint", pdb_path, "--alignment", demo_alignment_path(), "--chain", "A",
                         "--score", "jsd", "-o", out)
    assert status == 0, err
    assert "16 of 20 residues mapped" in err and f"wrote {out}" in err
    expected = expected_scores(demo, "jsd")
    for number, values in residue_bfactors(read_back(out)).items():
        assert values == [expected[number]] * len(values)


def test_cli_chain_without_protein_exits_2(pdb_path, tmp_path, capsys):
    status, _, err = run(capsys, "paint", pdb_path, "--alignment", demo_alignment_path(), "--chain", "B",
                         "-o", tmp_path / "x.pdb")
    assert status == 2
    assert "error:" in err and "chain 'B' holds no protein" in err
    assert not (tmp_path / "x.pdb").exists()


def test_cli_wrong_chain_lists_chains(pdb_path, tmp_path, capsys):
    status, _, err = run(capsys, "paint", pdb_path, "--alignment", demo_alignment_path(), "--chain", "Q",
                         "-o", tmp_path / "x.pdb")
    assert status == 2 and "chains present" in err and "'A'" in err and "'B'" in err


def test_cli_refuses_to_overwrite_the_structure(pdb_path, capsys):
    before = pdb_path.read_text()
    status, _, err = run(capsys, "paint", pdb_path, "--alignment", demo_alignment_path(), "-o", pdb_path)
    assert status == 2 and "overwrite" in err
    assert pdb_path.read_text() == before


def test_cli_unknown_score_is_a_usage_error(pdb_path, tmp_path, capsys):
    status, _, err = run(capsys, "paint", pdb_path, "--alignment", demo_alignment_path(), "--score", "nope",
                         "-o", tmp_path / "x.pdb")
    assert status == 2 and "conservation" in err and "property_conservation" in err


def test_a_chain_of_another_family_is_painted_with_a_warning(demo, tmp_path):
    alignment, table = demo
    other = "MQIFVKTLTGKTITLEVEPSDTIENVKAKIQDKEGIPPDQQRLIFAGKQLEDGRTLSDYNIQKESTLHLVLRLRGG" * 2  # not a globin
    lines = [_atom_line("ATOM", i + 1, " CA ", seq3(c).upper(), "A", i + 1, 3.8 * i) for i, c in enumerate(other)]
    path = tmp_path / "other.pdb"
    path.write_text("\n".join(lines) + "\nEND\n")
    with pytest.warns(InputWarning, match="chain A of .*other.pdb"):
        result = paint_structure(path, alignment, table, tmp_path / "o.pdb")
    assert result.residues == len(other)


def test_gzip_input_and_standard_output(demo, pdb_path, tmp_path, capsys):
    packed = tmp_path / "model.pdb.gz"
    packed.write_bytes(gzip.compress(pdb_path.read_bytes()))
    status, out, err = run(capsys, "paint", packed, "--alignment", demo_alignment_path(), "-o", "-", "-q")
    assert status == 0, err
    written = tmp_path / "from_stdout.pdb"
    written.write_text(out)
    expected = expected_scores(demo)
    for number, values in residue_bfactors(read_back(written)).items():
        assert values == pytest.approx([round(expected[number], 2)] * len(values), abs=0.0051)
