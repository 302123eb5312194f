"""Structure-aware planning on a real structure: human deoxyhemoglobin, PDB 2HHB (tests/data/structures).

Outside facts checked here, each with its source:
- the proximal His (F8: alpha His87, beta His92) binds the heme iron and the distal His (E7: alpha His58, beta
  His63) lines the ligand site above it, in every chain (Perutz 1970 Nature 228:726; from memory);
- beta Phe42 (CD1) packs against the heme face and Leu28 (B10) lines the distal pocket, both buried in the
  protein (Perutz 1970; Olson & Phillips 1997 J Biol Inorg Chem; from memory);
- beta His97 (FG4) and alpha Asp94 (G1) sit at the alpha1-beta2 interface, touching the other dimer's chain
  (Perutz 1970; Fermi et al. 1984 J Mol Biol 175:159; from memory). In 2HHB, A-B and C-D are the alpha-beta
  dimers, so beta B touches alpha C there, and alpha A touches beta D;
- beta Glu6 (A3), the sickle-cell position, is on the surface of the tetramer (common knowledge);
- the maximum accessibilities are Tien et al. 2013 PLoS ONE 8:e80635 Table 1, theoretical (from memory);
- accessibilities agree with Biopython's own Shrake-Rupley computed here on an independently parsed copy.

The awkward structures (missing residues, alternate locations, insertion codes, several models, no
waters, mmCIF) are built in the tests by editing copies of 2HHB's text in a temporary folder.
"""

from __future__ import annotations

import csv
import gzip
import io
import json
from pathlib import Path

import numpy as np
import pytest
from Bio.PDB import MMCIFIO, PDBParser
from Bio.PDB.SASA import ShrakeRupley

from globcons.analysis.columns import score_columns
from globcons.analysis.family import family_from_alignment
from globcons.cli import main
from globcons.core.vocabulary import CAUTION
from globcons.demo import demo_alignment_path
from globcons.errors import InputError, OptionError
from globcons.frame.reference import reference_chain
from globcons.io.alignments import read_alignment
from globcons.mutations.judge import check, rank_sites
from globcons.mutations.target import prepare_target
from globcons.report.html import write_report
from globcons.structure.context import add_structure_columns, load_features, target_context
from globcons.structure.features import (
    CORE_BELOW,
    HEME_CONTACT_DISTANCE,
    SURFACE_FROM,
    max_accessibility,
    structure_features,
)
from globcons.structure.paint import map_chain_to_alignment, paint_structure
from globcons.structure.read import load_structure

ROOT = Path(__file__).resolve().parents[1]
HHB = ROOT / "tests" / "data" / "structures" / "2hhb.pdb.gz"
ALPHA = reference_chain("human_hemoglobin_alpha")
BETA = reference_chain("human_hemoglobin_beta")


@pytest.fixture(scope="module")
def features():
    return load_features(HHB)


@pytest.fixture(scope="module")
def beta_target():
    return prepare_target(BETA.full_sequence, "beta", numbering="mature")


@pytest.fixture(scope="module")
def beta_context(beta_target, features):
    return target_context(beta_target, features, "B")


def hhb_text() -> str:
    return gzip.decompress(HHB.read_bytes()).decode("ascii")


def residue_index(chain, name: str) -> int:
    return chain.residues.index(name)


def write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text)
    return path


# ---------------------------------------------------------------------------------------------------
# The shipped file


def test_shipped_example_is_the_test_copy():
    import gzip

    assert (ROOT / "data_examples" / "2hhb.pdb").read_bytes() == gzip.decompress(HHB.read_bytes())


def test_chains_are_the_mature_uniprot_sequences(features):
    # UniProt P69905 / P68871 as the package's reference chains carry them (checked against public copies)
    assert features.chain("A").sequence == features.chain("C").sequence == ALPHA.mature_sequence
    assert features.chain("B").sequence == features.chain("D").sequence == BETA.mature_sequence
    assert features.models == 1 and features.hemes == 4 and features.waters == 221


def test_maximum_accessibility_is_tien_2013():
    # Tien et al. 2013 PLoS ONE 8:e80635, Table 1, theoretical values (from memory)
    table = max_accessibility()
    assert (table["ALA"], table["GLY"], table["TRP"], table["ARG"], table["LEU"]) == (129.0, 104.0, 285.0, 274.0,
                                                                                      201.0)
    assert len(table) == 20


def test_features_are_computed_once_per_loaded_structure():
    loaded = load_structure(HHB)
    assert structure_features(loaded) is structure_features(loaded)


# ---------------------------------------------------------------------------------------------------
# Outside facts on 2HHB


@pytest.mark.parametrize("chain,proximal,distal", [("A", "His87", "His58"), ("C", "His87", "His58"),
                                                   ("B", "His92", "His63"), ("D", "His92", "His63")])
def test_proximal_and_distal_his_are_heme_contacts(features, chain, proximal, distal):
    measured = features.chain(chain)
    near, far = residue_index(measured, proximal), residue_index(measured, distal)
    assert measured.heme_contact[near] and measured.heme_contact[far]
    # the proximal His binds the iron (Fe-NE2 about 2.1 A in deoxy hemoglobin; from memory); the distal His
    # does not (no ligand in deoxy): it sits above the iron at 4-5 A
    assert 1.8 < measured.iron_distance[near] < 2.5
    assert 3.5 < measured.iron_distance[far] < 5.5


@pytest.mark.parametrize("chain", ["B", "D"])
def test_beta_phe42_and_leu28_are_buried_heme_contacts(features, chain):
    measured = features.chain(chain)
    for name in ("Phe42", "Leu28"):
        i = residue_index(measured, name)
        assert measured.heme_contact[i], name
        assert measured.burial[i] == "core" and measured.rsa[i] < CORE_BELOW, name


@pytest.mark.parametrize("chain,residue,partner,own_dimer", [
    ("B", "His97", "C", "A"), ("D", "His97", "A", "C"),   # beta FG4 touches the other dimer's alpha
    ("A", "Asp94", "D", "B"), ("C", "Asp94", "B", "D"),   # alpha G1 touches the other dimer's beta
])
def test_alpha1_beta2_residues_touch_the_other_dimer(features, chain, residue, partner, own_dimer):
    measured = features.chain(chain)
    partners = measured.partners[residue_index(measured, residue)]
    assert partner in partners and own_dimer not in partners


@pytest.mark.parametrize("chain", ["B", "D"])
def test_beta_glu6_is_surface_and_far_from_everything(features, chain):
    measured = features.chain(chain)
    i = residue_index(measured, "Glu6")
    assert measured.burial[i] == "surface" and measured.rsa[i] >= SURFACE_FROM
    assert not measured.heme_contact[i] and measured.partners[i] == ()


def test_relative_accessibility_agrees_with_biopython():
    # Biopython's Shrake-Rupley on an independently parsed copy, waters removed, at residue level
    structure = PDBParser(QUIET=True).get_structure("hhb", io.StringIO(hhb_text()))
    model = structure[0]
    for chain in model:
        for residue in [r for r in chain if r.id[0] == "W"]:
            chain.detach_child(residue.id)
    ShrakeRupley().compute(model, level="R")
    tien = {"GLU": 223.0, "HIS": 224.0, "ASP": 193.0, "LYS": 236.0, "PHE": 240.0}  # Tien et al. 2013 (memory)
    measured = load_features(HHB)
    for chain, number, name in [("B", 6, "Glu6"), ("B", 97, "His97"), ("A", 94, "Asp94"), ("B", 120, "Lys120"),
                                ("B", 42, "Phe42")]:
        residue = model[chain][number]
        expected = residue.sasa / tien[residue.get_resname()]
        ours = measured.chain(chain).rsa[residue_index(measured.chain(chain), name)]
        assert ours == pytest.approx(expected, abs=1e-9), (chain, name)


# ---------------------------------------------------------------------------------------------------
# The target mapped to the chain, and the plan


def test_beta_maps_completely_onto_chain_b(beta_context):
    assert (beta_context.mapped, beta_context.counted, beta_context.identical) == (146, 146, 146)
    assert beta_context.residue[0] == ""  # the initiator Met has no residue in the mature chain
    assert beta_context.cells(93)["structure_residue"] == "B:His92"  # given 93 = mature 92


def test_the_best_matching_chain_is_the_default(beta_target, features):
    assert target_context(beta_target, features).chain == "B"  # beta, the first of the two beta chains
    alpha = prepare_target(ALPHA.full_sequence, "alpha", numbering="mature")
    assert target_context(alpha, features).chain == "A"


def test_surface_only_top_ten_are_surface_and_touch_nothing(beta_target, beta_context):
    table = rank_sites(beta_target, context=beta_context, surface_only=True, top=10)
    assert len(table) == 10
    assert set(table["burial"]) == {"surface"}
    assert set(table["heme_contact"]) == {"no"} and set(table["interface"]) == {""}
    assert (table["rsa"] >= SURFACE_FROM).all() and set(table["verdict"]) == {"open"}


def test_buried_heme_and_interface_positions_are_never_open(beta_target, beta_context):
    table = rank_sites(beta_target, context=beta_context)
    closed = (table["burial"] == "core") | (table["heme_contact"] == "yes") | (table["interface"] != "")
    assert closed.sum() > 40
    assert (table.loc[closed, "verdict"] != "open").all()
    for reasons, partners in zip(table["reasons"], table["interface"], strict=True):
        if partners:
            assert f"interface: chain{'s' if ',' in partners else ''} {partners.replace(',', ', ')}" in reasons
    his97 = table[table["mature_position"] == 97].iloc[0]
    assert his97["interface"] == "C" and "interface: chain C" in his97["reasons"]
    # open positions come first, surface ones before the others
    open_rows = table[table["verdict"] == "open"]
    assert list(open_rows.index) == list(range(len(open_rows)))
    surface = open_rows["burial"] == "surface"
    assert surface.iloc[: int(surface.sum())].all()


def test_exclude_interfaces_drops_every_contact(beta_target, beta_context):
    table = rank_sites(beta_target, context=beta_context, exclude_interfaces=True)
    full = rank_sites(beta_target, context=beta_context)
    assert set(table["interface"]) == {""}
    assert len(full) - len(table) == int((full["interface"] != "").sum())


def test_surface_only_without_a_structure_is_refused(beta_target):
    with pytest.raises(OptionError, match="needs a structure"):
        rank_sites(beta_target, surface_only=True)


def test_check_uses_the_structure(beta_target, beta_context):
    table = check(beta_target, ["E6V", "F42L", "H97Q", "K120E"], context=beta_context)
    rows = {row["mutation"]: row for row in table.to_dict("records")}
    assert rows["E6V"]["burial"] == "surface" and rows["E6V"]["verdict"] == "open"
    assert "heme contact:" in rows["F42L"]["reasons"] and "core: buried" in rows["F42L"]["reasons"]
    assert rows["H97Q"]["verdict"] == "guarded" and "interface: chain C" in rows["H97Q"]["reasons"]
    assert rows["K120E"]["verdict"] == "open"


def test_a_user_family_maps_through_its_own_columns(features):
    # beta on the demo myoglobin family: both the target and chain B go through the family profile
    aligned = read_alignment(demo_alignment_path())
    family = family_from_alignment(aligned)
    target = prepare_target(BETA.full_sequence, "beta", family=family, numbering="mature")
    context = target_context(target, features, "B")
    assert context.identical == context.mapped > 0.5 * context.counted
    assert context.cells(93)["structure_residue"] == "B:His92"


def test_too_little_coverage_is_refused(beta_target, tmp_path):
    # chain B cut to its first 30 residues: 30 of 146 target residues map
    kept = [line for line in hhb_text().splitlines()
            if not (line.startswith(("ATOM", "HETATM")) and line[21] == "B" and int(line[22:26]) > 30)]
    path = write(tmp_path, "fragment.pdb", "\n".join(kept) + "\n")
    with pytest.raises(InputError, match=r"chain B covers 30 of the target's 146 residues \(21%\)"):
        target_context(beta_target, path, "B")


# ---------------------------------------------------------------------------------------------------
# Awkward structures, built from 2HHB copies


def _edit(text: str, chain: str, number: int, change) -> str:
    lines = []
    for line in text.splitlines():
        if line.startswith(("ATOM", "HETATM")) and line[21] == chain and int(line[22:26]) == number:
            lines.extend(change(line))
        else:
            lines.append(line)
    return "\n".join(lines) + "\n"


def test_missing_residues_leave_a_gap_and_keep_the_rest(beta_target, tmp_path):
    kept = [line for line in hhb_text().splitlines()
            if not (line.startswith(("ATOM", "HETATM")) and line[21] == "B" and 44 <= int(line[22:26]) <= 50)]
    context = target_context(beta_target, write(tmp_path, "gap.pdb", "\n".join(kept) + "\n"), "B")
    assert context.mapped == 139
    assert context.cells(43)["structure_residue"] == "B:Phe42" and context.cells(43)["heme_contact"] == "yes"
    assert all(context.cells(given)["structure_residue"] == "" for given in range(45, 52))  # mature 44-50
    assert context.cells(93)["structure_residue"] == "B:His92"
    plan = rank_sites(beta_target, context=context)
    gap_rows = plan[plan["mature_position"].between(44, 50)]
    assert gap_rows["reasons"].str.contains("structure: no residue of chain B maps here").all()
    assert rank_sites(beta_target, context=context, surface_only=True)["mature_position"].between(44, 50).sum() == 0


def test_alternate_locations_use_the_most_occupied_one(tmp_path):
    text = hhb_text()
    base = load_features(write(tmp_path, "plain.pdb", text)).chain("B")

    def split(line: str, first: float, second: float) -> list[str]:
        moved = f"{float(line[30:38]) + 6.0:8.3f}"
        return [line[:16] + "A" + line[17:54] + f"{first:6.2f}" + line[60:],
                line[:16] + "B" + line[17:30] + moved + line[38:54] + f"{second:6.2f}" + line[60:]]

    kept_first = _edit(text, "B", 6, lambda line: split(line, 0.6, 0.4))
    measured = load_features(write(tmp_path, "altloc_a.pdb", kept_first)).chain("B")
    i = residue_index(measured, "Glu6")
    assert measured.rsa[i] == pytest.approx(base.rsa[i], abs=1e-9)  # location A, as deposited
    kept_second = _edit(text, "B", 6, lambda line: split(line, 0.4, 0.6))
    moved = load_features(write(tmp_path, "altloc_b.pdb", kept_second)).chain("B")
    assert moved.rsa[i] != pytest.approx(base.rsa[i], abs=1e-3)  # location B, moved away: more exposed
    assert moved.sequence == base.sequence


def test_insertion_codes_name_the_residue(beta_target, tmp_path):
    # beta Ala53 renumbered as 52A (an insertion code), as some numbering schemes do
    text = _edit(hhb_text(), "B", 53, lambda line: [line[:22] + "  52A" + line[27:]])
    measured = load_features(write(tmp_path, "icode.pdb", text)).chain("B")
    assert "Ala52A" in measured.residues and measured.sequence == BETA.mature_sequence
    context = target_context(beta_target, tmp_path / "icode.pdb", "B")
    assert context.cells(54)["structure_residue"] == "B:Ala52A"  # given 54 = mature 53


def test_hydrogens_are_left_out(features, tmp_path):
    # an NMR-style copy: every heavy atom of beta Glu6 and Lys8 gets a hydrogen 1 A away
    def with_hydrogens(line: str) -> list[str]:
        name = f"H{line[13:16].strip()}"[:4]
        moved = f"{float(line[30:38]) + 1.0:8.3f}"
        return [line, line[:12] + f"{name:<4}" + line[16:30] + moved + line[38:76] + " H"]

    text = _edit(_edit(hhb_text(), "B", 6, with_hydrogens), "B", 8, with_hydrogens)
    measured = load_features(write(tmp_path, "hydrogens.pdb", text)).chain("B")
    assert sum(line[76:78] == " H" for line in text.splitlines()) == 18
    np.testing.assert_allclose(measured.rsa, features.chain("B").rsa, atol=1e-9)


def test_waters_are_left_out(features, tmp_path):
    dry = "\n".join(line for line in hhb_text().splitlines() if "HOH" not in line) + "\n"
    measured = load_features(write(tmp_path, "dry.pdb", dry))
    assert measured.waters == 0
    for chain in "AB":
        np.testing.assert_allclose(measured.chain(chain).rsa, features.chain(chain).rsa, atol=1e-9)
        assert measured.chain(chain).partners == features.chain(chain).partners


def test_several_models_measure_the_first(features, tmp_path):
    atoms = [line for line in hhb_text().splitlines() if line.startswith(("ATOM", "HETATM", "TER"))]
    shifted = [line[:30] + f"{float(line[30:38]) + 50.0:8.3f}" + line[38:] if not line.startswith("TER") else line
               for line in atoms]
    text = "\n".join(["MODEL        1", *atoms, "ENDMDL", "MODEL        2", *shifted, "ENDMDL", "END"]) + "\n"
    measured = load_features(write(tmp_path, "models.pdb", text))
    assert measured.models == 2
    np.testing.assert_allclose(measured.chain("B").rsa, features.chain("B").rsa, atol=1e-9)


def test_mmcif_gives_the_same_features(features, tmp_path):
    structure = PDBParser(QUIET=True).get_structure("hhb", io.StringIO(hhb_text()))
    writer = MMCIFIO()
    writer.set_structure(structure)
    writer.save(str(tmp_path / "hhb.cif"))
    measured = load_features(tmp_path / "hhb.cif")
    np.testing.assert_allclose(measured.chain("B").rsa, features.chain("B").rsa, atol=1e-6)
    assert measured.chain("B").heme_contact.tolist() == features.chain("B").heme_contact.tolist()


# ---------------------------------------------------------------------------------------------------
# Column table, painting, command line


def test_column_table_and_painting_use_the_same_mapping(tmp_path):
    aligned = read_alignment(demo_alignment_path())
    table = score_columns(aligned)
    combined, note = add_structure_columns(aligned, table, HHB, "B")
    assert "chain B" in note and combined.attrs["structure"]["heme_contact_distance"] == HEME_CONTACT_DISTANCE
    f8 = combined[combined["frame_label"] == "F8"].iloc[0]
    assert (f8["structure_residue"], f8["burial"], f8["heme_contact"]) == ("B:His92", "core", "yes")
    # paint places chain B on the same columns: every painted residue is the one the table names
    chain_b = load_features(HHB).chain("B")
    columns = map_chain_to_alignment(chain_b.sequence, aligned, table)
    paint_structure(HHB, aligned, table, tmp_path / "painted.pdb", chain="B", score="n_eff")
    named = {row: name for row, name in enumerate(combined["structure_residue"]) if name}
    assert {columns[j] - 1: f"B:{chain_b.residues[j]}" for j in np.flatnonzero(columns > 0)} == named


def test_report_carries_the_structural_columns(tmp_path):
    result = write_report(demo_alignment_path(), tmp_path / "report", logos=False, structure=HHB, chain="B")
    rows = list(csv.DictReader((tmp_path / "report" / "columns.tsv").open(), delimiter="\t"))
    f8 = next(row for row in rows if row["frame_label"] == "F8")
    assert (f8["structure_residue"], f8["burial"], f8["heme_contact"]) == ("B:His92", "core", "yes")
    methods = (tmp_path / "report" / "methods.md").read_text()
    assert "Shrake-Rupley" in methods and "Tien MZ" in methods and f"{HEME_CONTACT_DISTANCE:g} A" in methods
    assert "B:His92" in result.html.read_text() and "chain B" in result.structure_note


def test_plan_command_surface_only(tmp_path, capsys):
    out = tmp_path / "plan.tsv"
    code = main(["plan", "--structure", str(HHB), "--chain", "B", "--numbering", "mature", "--surface-only",
                 "--top", "10", "-o", str(out)])
    err = capsys.readouterr().err
    assert code == 0, err
    rows = list(csv.DictReader(out.open(), delimiter="\t"))
    assert len(rows) == 10
    assert {r["burial"] for r in rows} == {"surface"} and {r["interface"] for r in rows} == {""}
    assert {r["heme_contact"] for r in rows} == {"no"}
    assert CAUTION in err and "chain B: 146 of 146 target residues mapped" in err
    assert main(["plan", "--structure", str(HHB), "--chain", "B", "--surface-only", "-o",
                 str(tmp_path / "plan.json")]) == 0
    meta = json.loads((tmp_path / "plan.json").read_text())["metadata"]
    assert meta["structure_chain"] == "B" and meta["core_below"] == CORE_BELOW and meta["structure_mapped"] == 146


def test_plan_command_reads_gzip_mmcif(tmp_path, capsys):
    structure = PDBParser(QUIET=True).get_structure("hhb", io.StringIO(hhb_text()))
    writer = MMCIFIO()
    writer.set_structure(structure)
    text = io.StringIO()
    writer.save(text)
    path = tmp_path / "hhb.cif.gz"
    path.write_bytes(gzip.compress(text.getvalue().encode("ascii")))
    assert main(["plan", "--structure", str(path), "--chain", "B", "--exclude-interfaces", "--top", "5"]) == 0
    captured = capsys.readouterr()
    rows = list(csv.DictReader(io.StringIO(captured.out), delimiter="\t"))
    assert len(rows) == 5 and {r["interface"] for r in rows} == {""}


def test_check_command_with_a_target_file(tmp_path, capsys):
    target = write(tmp_path, "beta.fasta", f">beta\n{BETA.full_sequence}\n")
    code = main(["check", str(target), "--structure", str(HHB), "--numbering", "mature",
                 "--mutations", "H97Q,E6V"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    rows = list(csv.DictReader(io.StringIO(captured.out), delimiter="\t"))
    assert [r["verdict"] for r in rows] == ["guarded", "open"]
    assert "interface: chain C" in rows[0]["reasons"] and CAUTION in captured.err


@pytest.mark.parametrize("args,message", [
    (["--chain", "Z"], "has no protein chain 'Z'; protein chains: 'A', 'B', 'C', 'D'"),
    (["--chain", "A"], "chain A covers"),
])
def test_plan_command_refuses_bad_chains(tmp_path, capsys, args, message):
    target = write(tmp_path, "beta.fasta", f">beta\n{BETA.full_sequence}\n")
    # alpha's chain maps onto beta through the frame (a homologue): refused only when it covers too little,
    # so cut chain A to 40 residues for the second case
    text = "\n".join(line for line in hhb_text().splitlines()
                     if not (line.startswith("ATOM") and line[21] == "A" and int(line[22:26]) > 40)) + "\n"
    structure = write(tmp_path, "cut.pdb", text)
    assert main(["plan", str(target), "--structure", str(structure), *args]) == 2
    errors = [line for line in capsys.readouterr().err.splitlines() if "error" in line.lower()]
    assert len(errors) == 1 and message in errors[0] and "cut.pdb" in errors[0]


def test_plan_measures_the_structure_once(monkeypatch, capsys):
    # the chain is both the target and the context: Shrake-Rupley (Biopython's) must still run once
    calls = []
    original = ShrakeRupley.compute

    def counted(self, entity, level="A"):
        calls.append(level)
        return original(self, entity, level)

    monkeypatch.setattr(ShrakeRupley, "compute", counted)
    assert main(["plan", "--structure", str(HHB), "--chain", "D", "--top", "3"]) == 0
    assert len(calls) == 1
    assert "chain D: 146 of 146" in capsys.readouterr().err


def test_a_context_of_another_target_is_refused(beta_context):
    alpha = prepare_target(ALPHA.full_sequence, "alpha", numbering="mature")
    with pytest.raises(ValueError, match="structure context has 147 residues, the target 142"):
        rank_sites(alpha, context=beta_context)
