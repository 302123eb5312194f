"""Placement on the globin frame: anchor facts of real chains, distant globins, significance, layouts.

Sources: sequences are the UniProt entries in globcons/data/frame (P02185 sperm whale myoglobin, P02144
human myoglobin, P69905 human hemoglobin alpha, P68871 human hemoglobin beta); the helix nomenclature
and anchor facts are from memory of the standard globin notation (see shared reference notes).
"""

import numpy as np
import pytest
from Bio.Align import PairwiseAligner, substitution_matrices

from globcons import score_columns
from globcons.align.frame_columns import reference_alignment
from globcons.align.layout import align_to_frame
from globcons.align.placement import place, place_many
from globcons.frame.reference import reference_chain, reference_chains
from globcons.io.frame_labels import decode_labels, encode_labels

SW_MB, HU_MB = "sperm_whale_myoglobin", "human_myoglobin"
ALPHA, BETA = "human_hemoglobin_alpha", "human_hemoglobin_beta"

# Anchor facts (mature numbering; nomenclature from memory, widely cited).
ANCHORS = {
    SW_MB: {"B10": (29, "L"), "CD1": (43, "F"), "E7": (64, "H"), "E11": (68, "V"), "F8": (93, "H")},
    BETA: {"A3": (6, "E"), "CD1": (42, "F"), "E7": (63, "H"), "F8": (92, "H")},
    ALPHA: {"E7": (58, "H"), "F8": (87, "H")},
}

# Human neuroglobin (UniProt Q9NPG2), written down from memory: a distant vertebrate globin. Its distal
# His64 (E7) and proximal His96 (F8), Phe28 (B10), Phe42 (CD1) and Val68 (E11) are well known.
NEUROGLOBIN = ("MERPEPELIRQSWRAVSRSPLEHGTVLFARLFALEPDLLPLFQYNCRQFSSPEDCLSSPEFLDHIRKVMLVIDAALTNVEDLSSLEEYLASLG"
               "RKHRAVGVKLSSFSTVGESLLYMLEKCLGPAFTPATRAAWSQLYGAVVQAMSRGWDGE")
# Non-globins, from memory: human ubiquitin (UniProt P0CG48, one 76-residue unit) and hen egg-white
# lysozyme (UniProt P00698, mature chain).
UBIQUITIN = "MQIFVKTLTGKTITLEVEPSDTIENVKAKIQDKEGIPPDQQRLIFAGKQLEDGRTLSDYNIQKESTLHLVLRLRGG"
LYSOZYME = ("KVFGRCELAAAMKRHGLDNYRGYSLGNWVCAAKFESNFNTQATNRNTDGSTDYGILQINSRWWCNDGRTPGSRNLCNIPCSALLSSDITASVNCAK"
            "KIVSDGNGMNAWVAWRNRCKGTDVQAWIRGCRL")


@pytest.mark.parametrize("chain", list(ANCHORS))
@pytest.mark.parametrize("with_met", [True, False])
def test_anchor_facts_come_out_of_placement(chain, with_met):
    reference = reference_chain(chain)
    sequence = reference.full_sequence if with_met else reference.mature_sequence
    placed = place(sequence, id=chain)
    offset = 1 if with_met else 0
    for label, (mature, residue) in ANCHORS[chain].items():
        assert placed.residue_at(label) == (mature + offset, residue), label
    assert placed.nearest_reference == chain and placed.identity == 100.0
    assert placed.is_globin


def test_every_reference_residue_gets_its_own_label():
    # The frame reproduces each chain's own helix table, residue by residue (alpha keeps its CE names).
    for chain in reference_chains():
        placed = place(chain.full_sequence)
        assert placed.labels[0] == ""  # the initiator Met has no frame position
        assert placed.labels[1:] == chain.labels


def test_distant_globin_keeps_its_key_residues():
    placed = place(NEUROGLOBIN, id="neuroglobin")
    assert placed.residue_at("F8") == (96, "H") and placed.residue_at("E7") == (64, "H")
    assert placed.residue_at("CD1") == (42, "F") and placed.residue_at("B10") == (28, "F")
    assert placed.residue_at("E11") == (68, "V")
    assert placed.is_globin and 15 < placed.identity < 35


def test_plain_pairwise_alignment_to_myoglobin_alone_misplaces_the_distant_proximal_his():
    # Why the frame uses all chains and helix-aware gaps: Biopython's global aligner (BLOSUM62, gaps
    # 11/1) with sperm whale myoglobin alone puts neuroglobin's His96 on FG3, not F8.
    mb = reference_chain(SW_MB)
    aligner = PairwiseAligner(mode="global", substitution_matrix=substitution_matrices.load("BLOSUM62"),
                              open_gap_score=-11, extend_gap_score=-1)
    alignment = aligner.align(mb.mature_sequence, NEUROGLOBIN)[0]
    column = alignment.inverse_indices[1][95]
    assert mb.labels[alignment.indices[0][column]] != "F8"


def test_non_globins_and_shuffled_globins_are_not_called_globins():
    rng = np.random.default_rng(5)
    shuffled = ["".join(rng.permutation(list(c.mature_sequence))) for c in reference_chains()]
    queries = [("ubiquitin", UBIQUITIN), ("lysozyme", LYSOZYME)] + [(f"shuffled{i}", s) for i, s in enumerate(shuffled)]
    placed = place_many(queries)
    assert [p.is_globin for p in placed] == [False] * len(queries)
    assert all(p.evalue > 1e-3 for p in placed)


def test_results_do_not_depend_on_batch_composition():
    chains = [(c.name, c.full_sequence) for c in reference_chains()] + [("ngb", NEUROGLOBIN)]
    together = place_many(chains)
    alone = [place(sequence, id=name) for name, sequence in chains]
    for a, b in zip(together, alone, strict=True):
        assert a.labels == b.labels and a.score == b.score and a.evalue == b.evalue


def test_helix_coverage_of_an_n_terminal_truncation():
    beta = reference_chain(BETA).mature_sequence
    truncated = beta[40:]  # starts at C7 (beta 41): helices A and B are gone
    placed = place(truncated)
    assert placed.coverage["A"] == 0.0 and placed.coverage["B"] == 0.0
    assert placed.coverage["E"] == 1.0 and placed.coverage["F"] == 1.0
    assert placed.residue_at("F8") == (92 - 40, "H")


def test_three_chains_identical_at_about_eighteen_percent():
    # Fact of the trade (common textbook figure): human myoglobin, hemoglobin alpha and hemoglobin beta
    # are identical at only about 18% of aligned positions. Placed on the frame, the columns all three fill
    # with one residue must be 15-21% of the columns all three fill.
    records = [(name, reference_chain(name).mature_sequence) for name in (HU_MB, ALPHA, BETA)]
    placed = align_to_frame(records).to_alignment()
    codes = placed.codes
    filled = (codes < 22).all(axis=0)
    identical = filled & (codes == codes[0]).all(axis=0)
    assert 0.15 <= identical.sum() / filled.sum() <= 0.21
    labels = np.array(placed.frame_labels)
    assert set(labels[identical]) >= {"F8", "E7", "CD1"}
    # Three sequences are thin evidence: the classes say so rather than call these columns invariant.
    table = score_columns(placed, max_gaps=0.0, weights="none")
    assert table.attrs["thin_family"] and "invariant" not in set(table["class"]) and table["low_data"].all()


def test_frame_layout_keep_inserts_a2m_convention():
    mb = reference_chain(SW_MB).mature_sequence
    with_insert = mb[:50] + "GGG" + mb[50:]  # three extra residues in the CD corner
    dropped = align_to_frame([("mb", mb), ("ins", with_insert)])
    assert dropped.unplaced == (0, 3) and len(dropped.rows[1]) == len(reference_alignment().columns)
    kept = align_to_frame([("mb", mb), ("ins", with_insert)], keep_inserts=True)
    assert len(kept.rows[0]) == len(kept.labels) == len(reference_alignment().columns) + 3
    assert kept.rows[1].count("g") == 3 and kept.rows[0].count(".") == 3
    assert kept.rows[1].replace(".", "").replace("-", "").upper() == with_insert
    assert kept.labels.count("") == 3


def test_labels_round_trip_through_annotation_lines():
    labels = reference_alignment().labels
    encoded = encode_labels(list(labels) + [""])
    assert all(len(text) == len(labels) + 1 for text in encoded.values())
    assert decode_labels(encoded) == list(labels) + [""]
    assert decode_labels({}) is None


def test_places_of_100_and_more_get_a_hundreds_line_only_when_needed():
    encoded = encode_labels(["F8", "NA1", "H26"])
    assert set(encoded) == {"frame_segment", "frame_tens", "frame_units"}  # no globin segment reaches 100
    long = encode_labels(["H109", "", "B7", "GH120"])
    assert long == {"frame_segment": "H.Bg", "frame_hundreds": "1..1", "frame_tens": "0..2", "frame_units": "9.70"}
    assert decode_labels(long) == ["H109", "", "B7", "GH120"]


def test_the_stored_calibration_is_what_the_built_in_profile_gives_now():
    # The Gumbel scale of the built-in profile is package data so that no run recomputes it; if the
    # profile changes, its digest changes and this test says how to regenerate the file.
    import json
    from importlib import resources

    from globcons.align.scoring_profile import frame_profile
    from globcons.align.significance import calibrated_scale, gumbel_scale, profile_digest

    stored = json.loads((resources.files("globcons") / "data" / "frame" / "calibration.json").read_text())
    entry = stored["profiles"][0]
    profile = frame_profile()
    assert entry["profile_digest"] == profile_digest(profile), "regenerate data/frame/calibration.json (see 'about')"
    assert entry["gumbel_scale"] == calibrated_scale(profile)  # deterministic: shuffles are seeded by the chains
    assert gumbel_scale(profile) == entry["gumbel_scale"]
