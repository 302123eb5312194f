"""Column classes: rules by hand, BLOSUM62 pairs as published, reduced alphabets, thresholds."""

import numpy as np
import pytest
from Bio.Align import substitution_matrices

from globcons.core.alphabet import RESIDUE_LETTERS
from globcons.core.classes import ClassRules, classify
from globcons.core.counts import column_counts
from globcons.core.matrices import compatible_pairs
from globcons.core.scores import gap_fraction, residue_frequencies
from globcons.errors import OptionError
from helpers import alignment_of


def classes_of(*rows, rules=ClassRules(min_neff=0)):
    counts = column_counts(alignment_of(*rows).codes)
    frequencies = residue_frequencies(counts)
    classes, low = classify(frequencies, gap_fraction(counts), counts[:, :22].sum(axis=1), rules)
    return classes.tolist(), low.tolist()


def test_blosum62_entries_equal_biopython_and_the_published_table():
    # Published BLOSUM62 entries (Henikoff & Henikoff 1992 PNAS 89:10915, from memory): W/W 11, C/C 9,
    # A/A 4, I/V 3, D/E 2, K/R 2, E/N 0, A/T 0, F/Y 3, I/L 2. Biopython's copy must agree, and the
    # compatible-pair table must be exactly "score > 0" of Biopython's matrix.
    matrix = substitution_matrices.load("BLOSUM62")
    published = {("W", "W"): 11, ("C", "C"): 9, ("A", "A"): 4, ("I", "V"): 3, ("D", "E"): 2, ("K", "R"): 2,
                  ("E", "N"): 0, ("A", "T"): 0, ("F", "Y"): 3, ("I", "L"): 2}
    for (a, b), value in published.items():
        assert matrix[a][b] == value
    table = compatible_pairs("BLOSUM62")
    for i, a in enumerate(RESIDUE_LETTERS[:20]):
        for j, b in enumerate(RESIDUE_LETTERS[:20]):
            assert table[i, j] == (a == b or matrix[a][b] > 0)


def test_classes_by_hand():
    rows = ["HIKAG", "HLRSG", "HVKT-", "HMRW-"]
    # col 1 H only: invariant; col 2 I L V M: pairwise > 0 in BLOSUM62: conservative;
    # col 3 K R: conservative; col 4 A S T W: A/T = 0: variable; col 5 half gaps: not above 0.5 -> G only: invariant
    classes, _ = classes_of(*rows)
    assert classes == ["invariant", "conservative", "conservative", "variable", "invariant"]
    strict, _ = classes_of(*rows, rules=ClassRules(max_gaps=0.4, min_neff=0))
    assert strict[4] == "gap-rich"


def test_group_min_looks_only_at_the_top_residues():
    # D 6, E 3, W 1 (weights 1): with group-min 1.0 all three must be compatible (D/W = -4): variable.
    # With group-min 0.9 the top residues reaching 0.9 are D and E (0.9): compatible -> conservative.
    rows = list("DDDDDDEEEW")
    assert classes_of(*rows)[0] == ["variable"]
    assert classes_of(*rows, rules=ClassRules(group_min=0.9, min_neff=0))[0] == ["conservative"]
    assert classes_of(*rows, rules=ClassRules(invariant_min=0.6, min_neff=0))[0] == ["invariant"]


def test_reduced_alphabet_groups():
    # Mirny & Shakhnovich six classes: N and Q are both "polar"; BLOSUM62 N/Q = 0 (not compatible).
    rows = ["N", "Q"]
    assert classes_of(*rows)[0] == ["variable"]
    rules = ClassRules(residue_groups="mirny-shakhnovich-6", min_neff=0)
    assert classes_of(*rows, rules=rules)[0] == ["conservative"]


def test_other_biopython_matrices_and_bad_names():
    # PAM250 (Dayhoff) scores N/Q +1 (published table, from memory): conservative there.
    assert classes_of("N", "Q", rules=ClassRules(matrix="PAM250", min_neff=0))[0] == ["conservative"]
    with pytest.raises(OptionError, match="BLOSUM62"):
        ClassRules(matrix="NOSUCH")
    with pytest.raises(OptionError, match="20 amino acids"):
        ClassRules(matrix="NUC.4.4")
    with pytest.raises(OptionError):
        ClassRules(residue_groups="nonsense")


def test_low_data_flag_keeps_the_class():
    classes, low = classes_of("A", "A", "A", rules=ClassRules(min_neff=5))
    assert classes == ["invariant"] and low == [True]


def test_threshold_validation():
    for bad in ({"max_gaps": 1.5}, {"invariant_min": 0}, {"group_min": 2}, {"min_neff": -1}):
        with pytest.raises(OptionError):
            ClassRules(**bad)


def test_selenocysteine_is_scored_as_cysteine():
    # U stands in for C in the matrix: a U/C column is one group; U with A behaves as C/A (0): variable.
    assert classes_of("U", "C")[0] == ["conservative"]
    assert classes_of("U", "A")[0] == ["variable"]


def test_all_unknown_column_is_not_invariant():
    classes, low = classes_of("X", "X", rules=ClassRules(min_neff=1))
    assert classes == ["variable"] and low == [True]


def test_frequencies_equal_to_one_within_rounding_count_as_invariant():
    frequencies = np.zeros((1, 22))
    frequencies[0, 0] = 1.0 - 1e-12
    classes, _ = classify(frequencies, np.zeros(1), np.full(1, 10.0))
    assert classes.tolist() == ["invariant"]
