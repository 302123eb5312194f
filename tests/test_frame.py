"""Tests of globcons.frame.reference: reference chains, helix labels, numberings, sites.

Expected values are facts of the trade, each with its source beside it; none is copied from the
module's own output.
"""

from __future__ import annotations

import pytest

from globcons import frame
from globcons.errors import InputError, OptionError

SW_MB = "sperm_whale_myoglobin"
HU_MB = "human_myoglobin"
ALPHA = "human_hemoglobin_alpha"
BETA = "human_hemoglobin_beta"
ALL_CHAINS = (SW_MB, HU_MB, ALPHA, BETA)

# Anchor facts, mature numbering. Nomenclature from memory (widely cited; listed in the project's
# shared reference README); residues from UniProt P02185 / P68871 / P69905.
ANCHORS = [
    (SW_MB, 29, "L", "B10"),
    (SW_MB, 43, "F", "CD1"),
    (SW_MB, 64, "H", "E7"),   # distal His
    (SW_MB, 68, "V", "E11"),
    (SW_MB, 93, "H", "F8"),   # proximal His
    (BETA, 6, "E", "A3"),     # the sickle-cell position
    (BETA, 42, "F", "CD1"),
    (BETA, 63, "H", "E7"),
    (BETA, 92, "H", "F8"),
    (ALPHA, 58, "H", "E7"),
    (ALPHA, 87, "H", "F8"),
    (ALPHA, 43, "F", "CE1"),  # alpha's CE1 is the residue called CD1 elsewhere (shared README)
]


@pytest.mark.parametrize(("chain", "position", "residue", "label"), ANCHORS)
def test_anchor_facts_mature_numbering(chain, position, residue, label):
    ref = frame.reference_chain(chain)
    assert frame.label_of(chain, position) == label
    assert ref.mature_sequence[position - 1] == residue
    assert frame.position_of(chain, label) == position


@pytest.mark.parametrize(("chain", "position", "residue", "label"), ANCHORS)
def test_anchor_facts_database_numbering(chain, position, residue, label):
    # Database entries carry the initiator Met, so database position = mature + 1.
    ref = frame.reference_chain(chain)
    assert frame.label_of(chain, position + 1, numbering="database") == label
    assert ref.full_sequence[position] == residue  # 0-based index of database position + 1
    assert frame.position_of(chain, label, numbering="database") == position + 1
    assert frame.label_of(chain, position + 1, numbering="hgvs") == label


# Human myoglobin keeps sperm whale's key residues at the same labels (from memory of the two
# sequences, UniProt P02144 and P02185).
@pytest.mark.parametrize(("position", "residue", "label"),
                         [(29, "L", "B10"), (43, "F", "CD1"), (64, "H", "E7"), (68, "V", "E11"),
                          (93, "H", "F8")])
def test_human_myoglobin_key_residues(position, residue, label):
    for chain in (HU_MB, SW_MB):
        assert frame.label_of(chain, position) == label
        assert frame.reference_chain(chain).mature_sequence[position - 1] == residue


def test_hgvs_counts_from_the_met():
    # HGVS p. numbering counts the initiator Met: traditional beta 6 is p.7 (sickle cell is
    # p.Glu7Val, HbC p.Glu7Lys, HbE -- traditional beta 26 Glu->Lys -- p.Glu27Lys; from memory).
    assert frame.label_of(BETA, 7, numbering="hgvs") == "A3"
    assert frame.position_of(BETA, "A3", numbering="hgvs") == 7
    assert frame.hgvs_name(BETA, 6, "V") == "p.Glu7Val"
    assert frame.hgvs_name(BETA, 6, "K") == "p.Glu7Lys"
    assert frame.hgvs_name(BETA, 26, "K") == "p.Glu27Lys"
    assert frame.hgvs_name(BETA, 6) == "p.Glu7"
    assert frame.hgvs_name(BETA, 6, "E") == "p.Glu7="  # HGVS: unchanged residue is written '='
    assert frame.hgvs_name(BETA, 6, "*") == "p.Glu7Ter"
    assert frame.hgvs_name(ALPHA, 87, "y") == "p.His88Tyr"


def test_hgvs_rejects_bad_residue_and_position():
    with pytest.raises(OptionError):
        frame.hgvs_name(BETA, 6, "Val")
    with pytest.raises(OptionError):
        frame.hgvs_name(BETA, 6, "#")
    with pytest.raises(OptionError, match="1-146"):
        frame.hgvs_name(BETA, 147, "V")


@pytest.mark.parametrize("chain", ALL_CHAINS)
def test_initiator_met_has_no_label(chain):
    ref = frame.reference_chain(chain)
    assert ref.full_sequence[0] == "M"
    assert ref.full_sequence[1:] == ref.mature_sequence
    assert frame.label_of(chain, 1, numbering="database") == ""
    assert frame.label_of(chain, 1, numbering="hgvs") == ""
    assert frame.label_of(chain, 2, numbering="database") == "NA1"


# Chain lengths: mature 153 (both myoglobins), 141 (alpha), 146 (beta); with the Met one more
# (UniProt P02185, P02144, P69905, P68871; from memory).
LENGTHS = {SW_MB: 153, HU_MB: 153, ALPHA: 141, BETA: 146}


@pytest.mark.parametrize("chain", ALL_CHAINS)
def test_segments_tile_the_mature_chain(chain):
    ref = frame.reference_chain(chain)
    assert len(ref.mature_sequence) == LENGTHS[chain]
    assert len(ref.full_sequence) == LENGTHS[chain] + 1
    covered = [i for seg in frame.segments(chain) for i in range(seg.first, seg.last + 1)]
    assert covered == list(range(1, LENGTHS[chain] + 1))
    assert len(ref.labels) == LENGTHS[chain]
    order = [frame.FRAME_ORDER.index(seg.name) for seg in frame.segments(chain)]
    assert order == sorted(order)


def test_segment_shapes_from_the_nomenclature():
    # Shared README (from memory): alpha has no D helix and names its C-E stretch CE1-CE9; beta has
    # NA1-NA3 and a shorter A helix; myoglobin's H helix runs to H26.
    names = {chain: [s.name for s in frame.segments(chain)] for chain in ALL_CHAINS}
    assert "D" not in names[ALPHA] and "CD" not in names[ALPHA] and "CE" in names[ALPHA]
    assert "CE" not in names[BETA] and "D" in names[BETA]
    assert frame.position_of(ALPHA, "CE9") == 51
    assert frame.position_of(BETA, "NA3") == 3
    assert frame.label_of(SW_MB, 149) == "H26"
    assert frame.label_of(BETA, 146) == "HC3"


def test_chain_metadata():
    ref = frame.reference_chain(BETA)
    assert ref.accession == "UniProt P68871"
    assert ref.kind == "beta"
    assert ref.display_name == "human hemoglobin beta"
    assert "P68871" in ref.provenance
    assert ref.labels[91] == "F8"  # beta His92
    assert {c.kind for c in frame.reference_chains()} == {"myoglobin", "alpha", "beta"}
    assert [c.name for c in frame.reference_chains()] == list(ALL_CHAINS)


@pytest.mark.parametrize("chain", ALL_CHAINS)
@pytest.mark.parametrize("numbering", frame.NUMBERINGS)
def test_round_trip_every_position(chain, numbering):
    offset = 0 if numbering == "mature" else 1
    for position in range(1 + offset, LENGTHS[chain] + 1 + offset):
        label = frame.label_of(chain, position, numbering)
        assert frame.is_label(label)
        assert frame.position_of(chain, label, numbering) == position


@pytest.mark.parametrize(("numbering", "bad", "valid"),
                         [("mature", 0, "1-146"), ("mature", 147, "1-146"),
                          ("database", 148, "1-147"), ("hgvs", -1, "1-147")])
def test_label_of_out_of_range(numbering, bad, valid):
    with pytest.raises(OptionError, match=valid):
        frame.label_of(BETA, bad, numbering)


def test_bad_numbering_and_chain():
    with pytest.raises(OptionError, match="mature"):
        frame.label_of(BETA, 6, "uniprot")
    with pytest.raises(OptionError) as info:
        frame.reference_chain("horse_myoglobin")
    for name in ALL_CHAINS:
        assert name in str(info.value)


def test_position_of_unknown_label_suggests_valid_ones():
    # Beta's A helix is A1-A15 (shared helix table), so A16 does not exist in beta.
    with pytest.raises(OptionError) as info:
        frame.position_of(BETA, "A16")
    assert BETA in str(info.value) and "A1-A15" in str(info.value)
    with pytest.raises(OptionError) as info:
        frame.position_of(ALPHA, "CD1")
    assert ALPHA in str(info.value) and "CE1" in str(info.value)
    with pytest.raises(OptionError):
        frame.position_of(BETA, "Q5")


def test_label_notation():
    assert [frame.segment_of(x) for x in ("F8", "FG3", "NA1", "CE4", "C7", "CD1", "HC3")] == \
        ["F", "FG", "NA", "CE", "C", "CD", "HC"]
    for good in ("A1", "H26", "CD1", "CE9", "NA3", "HC4", "GH5", "AB1", "EF8"):
        assert frame.is_label(good)
    for bad in ("", "F", "F0", "F08", "f8", "I1", "BC1", "CDE1", "8F", "F8 ", "E-7"):
        assert not frame.is_label(bad)
    with pytest.raises(OptionError):
        frame.segment_of("X3")
    assert [s for s in frame.FRAME_ORDER if frame.is_helix(s)] == list("ABCDEFGH")
    for corner in ("NA", "AB", "CD", "CE", "EF", "FG", "GH", "HC"):
        assert not frame.is_helix(corner)
    assert frame.FRAME_ORDER == ("NA", "A", "AB", "B", "C", "CD", "CE", "D", "E", "EF", "F",
                                   "FG", "G", "GH", "H", "HC")


# ---------------------------------------------------------------------------------------------
# Sites


def test_f8_is_the_heme_ligand_of_every_chain():
    # Proximal His F8 binds the heme iron in every globin (from memory; Perutz 1979).
    (site,) = frame.sites_at("F8")
    assert site.kind == "heme-ligand"
    for chain in ALL_CHAINS:
        assert site.applies_to(chain)
        assert frame.sites_at("F8", chain=chain) == (site,)
        assert frame.reference_chain(chain).mature_sequence[frame.position_of(chain, "F8") - 1] == "H"


def test_c7_is_an_alpha_interface_site():
    # alpha Tyr42 (C7) sits at the alpha1-beta2 interface (from memory; Perutz 1970).
    (site,) = frame.sites_at("C7")
    assert site.applies_to(ALPHA) and not site.applies_to(SW_MB) and not site.applies_to(HU_MB)
    assert frame.reference_chain(ALPHA).mature_sequence[42 - 1] == "Y"
    assert frame.sites_at("C7", chain=SW_MB) == ()


def test_every_builtin_site_exists_in_every_chain_it_is_listed_for():
    for site in frame.sites():
        assert site.reference and site.certainty and site.role
        listed = site.chains or ALL_CHAINS
        for chain in listed:
            position = frame.position_of(chain, site.label)  # raises if the chain lacks the label
            assert frame.reference_chain(chain).mature_sequence[position - 1] in "ACDEFGHIKLMNPQRSTVWY"


# Residues the site roles name, checked against the sequences (UniProt P69905 / P68871; roles from
# memory, see the package's functional_sites.tsv).
@pytest.mark.parametrize(("chain", "label", "residue", "position"),
                         [(ALPHA, "FG4", "R", 92), (ALPHA, "G1", "D", 94), (BETA, "G1", "D", 99),
                          (BETA, "C3", "W", 37), (BETA, "G4", "N", 102), (BETA, "NA2", "H", 2),
                          (BETA, "EF6", "K", 82), (BETA, "H21", "H", 143), (BETA, "F9", "C", 93),
                          (ALPHA, "HC3", "R", 141), (BETA, "HC3", "H", 146), (ALPHA, "HC2", "Y", 140),
                          (BETA, "HC2", "Y", 145), (ALPHA, "CE1", "F", 43)])
def test_sites_sit_on_the_named_residues(chain, label, residue, position):
    assert frame.sites_at(label, chain=chain)
    assert frame.position_of(chain, label) == position
    assert frame.reference_chain(chain).mature_sequence[position - 1] == residue


def test_alpha_carries_cd_sites_under_ce_labels():
    assert frame.sites_at("CD1", chain=ALPHA) == ()
    assert [s.kind for s in frame.sites_at("CE1", chain=ALPHA)] == ["heme-contact"]
    assert [s.kind for s in frame.sites_at("CD1", chain=BETA)] == ["heme-contact"]
    assert len(frame.sites(SW_MB)) < len(frame.sites()) and len(frame.sites(BETA)) > len(frame.sites(SW_MB))


def test_user_site_table_loads(tmp_path):
    path = tmp_path / "my_sites.tsv"
    path.write_text(
        "# our own list\n"
        "column\trole\tchains\tkind\n"
        "E7\tgate\tall\tpocket\n"
        "\n"
        "CD4\tcontact\t\n"
        "G1\tinterface\thuman_hemoglobin_alpha, human_hemoglobin_beta\tinterface\n",
        encoding="utf-8",
    )
    found = frame.sites(path=path)
    assert [s.label for s in found] == ["E7", "CD4", "G1"]
    assert found[0].chains == () and found[0].kind == "pocket"
    assert found[2].chains == (ALPHA, BETA)
    # CD4 is listed for all chains but alpha has no CD4 (it names that stretch CE).
    assert [s.label for s in frame.sites(ALPHA, path=path)] == ["E7", "G1"]
    assert [s.label for s in frame.sites(SW_MB, path=str(path))] == ["E7", "CD4"]
    assert frame.sites_at("G1", chain=BETA, site_list=found) == (found[2],)


def test_user_site_table_by_alignment_column(tmp_path):
    # Families without frame labels name their sites by alignment column (1-based).
    path = tmp_path / "by_column.tsv"
    path.write_text("column\trole\tkind\n12\tcatalytic Cys\tactive-site\nF8\tligand\theme-ligand\n", encoding="utf-8")
    found = frame.sites(path=path)
    assert (found[0].column, found[0].label, found[0].kind) == (12, "", "active-site")
    assert (found[1].column, found[1].label) == (None, "F8")
    path.write_text("column\trole\n0\tnothing\n", encoding="utf-8")
    with pytest.raises(InputError, match="alignment column"):
        frame.sites(path=path)


def test_user_site_table_missing_role(tmp_path):
    path = tmp_path / "no_role.tsv"
    path.write_text("label\tkind\nF8\theme\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        frame.sites(path=path)
    assert info.value.source == str(path) and info.value.line == 1
    assert "role" in str(info.value) and "no_role.tsv" in str(info.value)


def test_user_site_table_bad_label(tmp_path):
    path = tmp_path / "bad_label.tsv"
    path.write_text("label\trole\nF8\tligand\nHis92\tligand\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        frame.sites(path=path)
    assert info.value.source == str(path) and info.value.line == 3
    assert "His92" in str(info.value)


def test_user_site_table_other_problems(tmp_path):
    path = tmp_path / "bad_chain.tsv"
    path.write_text("label\trole\tchains\nF8\tligand\thorse_myoglobin\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        frame.sites(path=path)
    assert info.value.line == 2 and "horse_myoglobin" in str(info.value)
    path = tmp_path / "empty_role.tsv"
    path.write_text("label\trole\nF8\t\n", encoding="utf-8")
    with pytest.raises(InputError, match="empty role"):
        frame.sites(path=path)
    with pytest.raises(InputError) as info:
        frame.sites(path=tmp_path / "absent.tsv")
    assert "absent.tsv" in str(info.value)


def test_the_stored_alpha_ce_placement_is_what_the_pairwise_alignment_gives():
    # Stored as package data so that no run loads Bio.Align; recomputed here with Biopython's aligner.
    from globcons.align.frame_columns import alpha_ce_alignment, stored_alpha_ce_placement
    from globcons.frame.reference import reference_chains

    chains = {chain.kind: chain for chain in reference_chains()}
    assert stored_alpha_ce_placement() == alpha_ce_alignment(chains["alpha"], chains["beta"])
    # alpha Phe43 (CE1) is the residue myoglobin and beta call CD1 (reference README, from memory)
    assert stored_alpha_ce_placement()["CE1"] == "CD1"
