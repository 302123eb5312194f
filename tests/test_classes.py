"""Column classes: the posterior rule by hand (scipy's Beta as the reference), BLOSUM62 pairs as published,
greedy substitution groups, reduced alphabets, and recovery of planted truth under noise."""

import numpy as np
import pytest
from Bio.Align import substitution_matrices
from scipy.stats import beta

from globcons import score_columns
from globcons.core.alphabet import RESIDUE_LETTERS, STANDARD
from globcons.core.classes import RESIDUE_BACKGROUND, ClassRules, classify, share_above, substitution_groups
from globcons.core.counts import column_counts
from globcons.core.matrices import compatible_pairs
from globcons.core.scores import gap_fraction, residue_frequencies
from globcons.errors import OptionError
from helpers import alignment_of

H, Q = RESIDUE_LETTERS.index("H"), RESIDUE_LETTERS.index("Q")


def classes_of(*rows, rules=ClassRules(min_neff=0)):
    """Classes with every row one effective sequence (n_eff = the number of rows holding a residue)."""
    counts = column_counts(alignment_of(*rows).codes)
    frequencies = residue_frequencies(counts)
    classes, support, low, _ = classify(frequencies, gap_fraction(counts), counts[:, :22].sum(axis=1), rules)
    return classes.tolist(), support, low.tolist()


def one_column(shares: dict[str, float]) -> np.ndarray:
    frequencies = np.zeros((1, 22))
    for letter, share in shares.items():
        frequencies[0, RESIDUE_LETTERS.index(letter)] = share
    return frequencies


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


def test_support_is_the_beta_tail_of_the_dirichlet_posterior():
    # Reference: scipy.stats.beta. Column H 0.94, Q 0.06 with 30 effective sequences; prior weight 1 spread
    # by the BLOSUM62 background: the share of H is Beta(q_H + 30 * 0.94, 1 - q_H + 30 * 0.06).
    q = RESIDUE_BACKGROUND[H]
    expected = beta.sf(0.8, q + 30 * 0.94, 1 - q + 30 * 0.06)
    got = share_above(np.array(0.94), np.array(q), np.array(30.0), 0.8, 1.0)
    assert float(got) == pytest.approx(expected, rel=1e-9)
    classes, support, _, _ = classify(one_column({"H": 0.94, "Q": 0.06}), np.zeros(1), np.array([30.0]))
    assert classes.tolist() == ["invariant"] and float(support[0]) == pytest.approx(expected, rel=1e-9)
    assert expected > 0.9  # the distal His of a real family (His 0.94, Gln 0.06) is confidently invariant


def test_three_sequences_cannot_make_a_column_confidently_invariant():
    # Beta(3 + q, 1 - q) puts about half its mass above 0.8 (1 - 0.8^3 = 0.488 without the prior).
    classes, support, low = classes_of("H", "H", "H", rules=ClassRules(min_neff=5))
    assert classes == ["variable"] and low == [True]
    assert 0.45 < 1.0 - support[0] < 0.55  # the invariant share's own probability, as the variable support says
    assert classes_of(*["H"] * 11)[0] == ["invariant"]  # about eleven agreeing sequences are needed
    assert classes_of(*["H"] * 9)[0] == ["variable"]


def test_one_outlier_in_fifty_does_not_flip_the_class():
    assert classes_of(*(["H"] * 49 + ["Q"]))[0] == ["invariant"]
    assert classes_of(*(["H"] * 50))[0] == ["invariant"]
    # 10 of 50 elsewhere: share 0.8 exactly is not confidently above 0.8.
    assert classes_of(*(["H"] * 40 + ["Q"] * 10))[0] == ["variable"]


def test_groups_are_built_greedily_from_the_most_frequent_residue():
    # D 0.6, E 0.3, W 0.1: D/E = 2 joins, D/W = -4 does not: the group is D, E (share 0.9).
    groups = substitution_groups(one_column({"D": 0.6, "E": 0.3, "W": 0.1}))
    assert [RESIDUE_LETTERS[k] for k in np.flatnonzero(groups[0])] == ["D", "E"]
    rows = list("DDDDDDEEEW") * 5  # 50 sequences
    assert classes_of(*rows)[0] == ["conservative"]
    # I, L, V, M score above 0 pairwise: one group; with A (A/I -1) the group stops short of it.
    groups = substitution_groups(one_column({"I": 0.3, "L": 0.3, "V": 0.2, "M": 0.1, "A": 0.1}))
    assert [RESIDUE_LETTERS[k] for k in np.flatnonzero(groups[0])] == ["I", "L", "M", "V"]


def test_classes_by_hand():
    rows = ["HIKAG", "HLRSG", "HVKT-", "HMRW-"] * 5  # 20 sequences
    # col 1 H only: invariant; col 2 I L V M (pairwise > 0 in BLOSUM62): conservative; col 3 K R:
    # conservative; col 4 A S T W: the best group (A, S: 1) holds half: variable; col 5 G with half gaps:
    # not above 0.5 gaps, G only: invariant.
    classes, support, _ = classes_of(*rows)
    assert classes == ["invariant", "conservative", "conservative", "variable", "invariant"]
    assert np.all(support[[0, 1, 2, 4]] > 0.9)
    strict, gap_support, _ = classes_of(*rows, rules=ClassRules(max_gaps=0.4, min_neff=0))
    assert strict[4] == "gap-rich"
    # Its support: the gap share (10 of 20) above 0.4, Jeffreys prior (reference: scipy.stats.beta).
    assert gap_support[4] == pytest.approx(beta.sf(0.4, 0.5 + 10, 0.5 + 10), rel=1e-9)


def test_reduced_alphabet_groups():
    # Mirny & Shakhnovich six classes: N and Q are both "polar"; BLOSUM62 N/Q = 0 (not compatible).
    rows = ["N", "Q"] * 20
    assert classes_of(*rows)[0] == ["variable"]
    rules = ClassRules(residue_groups="mirny-shakhnovich-6", min_neff=0)
    assert classes_of(*rows, rules=rules)[0] == ["conservative"]


def test_other_biopython_matrices_and_bad_names():
    # PAM250 (Dayhoff) scores N/Q +1 (published table, from memory): conservative there.
    assert classes_of(*(["N", "Q"] * 20), rules=ClassRules(matrix="PAM250", min_neff=0))[0] == ["conservative"]
    with pytest.raises(OptionError, match="BLOSUM62"):
        ClassRules(matrix="NOSUCH")
    with pytest.raises(OptionError, match="20 amino acids"):
        ClassRules(matrix="NUC.4.4")
    with pytest.raises(OptionError):
        ClassRules(residue_groups="nonsense")


def test_low_data_flag_keeps_the_class():
    # With a looser confidence four agreeing sequences are enough (Beta(4 + q, 1 - q): P(> 0.8) = 0.59).
    classes, support, low = classes_of("A", "A", "A", "A", rules=ClassRules(min_neff=5, confidence=0.5))
    assert classes == ["invariant"] and low == [True] and 0.55 < support[0] < 0.65


def test_threshold_validation():
    for bad in ({"max_gaps": 1.5}, {"invariant_min": 0}, {"group_min": 2}, {"min_neff": -1}, {"confidence": 1.0},
                {"confidence": 0}, {"prior_weight": 0}):
        with pytest.raises(OptionError):
            ClassRules(**bad)


def test_selenocysteine_is_scored_as_cysteine():
    # U stands in for C in the matrix: a U/C column is one group; U with A behaves as C/A (0): variable.
    assert classes_of(*(["U", "C"] * 20))[0] == ["conservative"]
    assert classes_of(*(["U", "A"] * 20))[0] == ["variable"]


def test_all_unknown_column_is_not_invariant():
    classes, support, low = classes_of("X", "X", rules=ClassRules(min_neff=1))
    assert classes == ["variable"] and low == [True] and np.isnan(support[0])


def test_frequencies_equal_to_one_within_rounding_count_as_invariant():
    frequencies = one_column({"A": 1.0 - 1e-12})
    classes, _, _, _ = classify(frequencies, np.zeros(1), np.full(1, 40.0))
    assert classes.tolist() == ["invariant"]


# ------------------------------------------------------------------------------------------------------
# planted truth with noise

GROUPS = ("ILVM", "FYW", "KR", "DE", "ST")


def planted_truth(rows: int, noise: float, seed: int, per_kind: int = 20):
    """Columns whose truth is known: invariant (one residue), conservative (uniform within a BLOSUM62 group),
    free (uniform over the 20); then every cell is replaced by a random residue with probability ``noise``."""
    rng = np.random.default_rng(seed)
    letters = np.array(list(STANDARD))
    columns, truth = [], []
    for _ in range(per_kind):
        columns.append(np.full(rows, rng.choice(letters)))
        truth.append("invariant")
        columns.append(rng.choice(list(GROUPS[rng.integers(len(GROUPS))]), rows))
        truth.append("conservative")
        columns.append(rng.choice(letters, rows))
        truth.append("variable")
    matrix = np.stack(columns, axis=1)
    noisy = rng.random(matrix.shape) < noise
    matrix[noisy] = rng.choice(letters, int(noisy.sum()))
    return alignment_of(*("".join(row) for row in matrix)), truth


@pytest.mark.parametrize("rows", [50, 500, 5000])
@pytest.mark.parametrize("noise", [0.02, 0.05])
def test_classes_recover_planted_truth_under_noise(rows, noise):
    alignment, truth = planted_truth(rows, noise, seed=rows + int(noise * 100))
    table = score_columns(alignment, frame=False)
    agree = np.mean(table["class"].to_numpy() == np.array(truth))
    assert agree >= 0.95, table.assign(truth=truth)[["class", "support", "residues", "truth"]].to_string()
    assert table.attrs["effective_sequences"] > 0.9 * rows  # rows this diverse are their own clusters


def test_at_three_rows_no_planted_column_is_confidently_invariant():
    alignment, truth = planted_truth(3, 0.0, seed=1)
    table = score_columns(alignment, frame=False)
    assert "invariant" not in set(table["class"])
    assert table["low_data"].all()


def test_the_incomplete_beta_agrees_with_scipy_over_a_wide_grid():
    # Reference implementation: scipy.special.betainc (Cephes). Parameters from 1e-12 to 1e7 cover
    # prior-only columns up to a million effective sequences.
    from scipy.special import betainc

    from globcons.core.incomplete_beta import regularized_incomplete_beta

    rng = np.random.default_rng(21)
    a = 10 ** rng.uniform(-12, 7, 4000)
    b = 10 ** rng.uniform(-12, 7, 4000)
    for x in (0.01, 0.2, 0.5, 0.8, 0.95, 0.999):
        np.testing.assert_allclose(regularized_incomplete_beta(a, b, x), betainc(a, b, x), rtol=0, atol=1e-8)
    # Worked values: I_x(1, 1) = x; I_x(a, 1) = x**a; I_0.5(a, a) = 1/2 (symmetry).
    np.testing.assert_allclose(regularized_incomplete_beta(1.0, 1.0, [0.0, 0.3, 1.0]), [0.0, 0.3, 1.0])
    np.testing.assert_allclose(regularized_incomplete_beta(3.0, 1.0, 0.8), 0.8 ** 3)
    np.testing.assert_allclose(regularized_incomplete_beta([2.5, 40.0, 3e5], [2.5, 40.0, 3e5], 0.5), 0.5)


def test_matrices_read_from_biopythons_files_equal_biopythons_own():
    # Reference: Bio.Align.substitution_matrices.load, for every matrix Biopython ships.
    from globcons.core.matrices import load_matrix, shipped_matrices

    assert list(shipped_matrices()) == sorted(substitution_matrices.load())
    for name in shipped_matrices():
        theirs = substitution_matrices.load(name)
        try:
            ours = load_matrix(name)
        except OptionError:
            assert not set(STANDARD) <= set(theirs.alphabet)  # refused only when not a protein matrix
            continue
        assert ours.alphabet == "".join(theirs.alphabet)
        assert all(ours[a][b] == theirs[a][b] for a in ours.alphabet for b in ours.alphabet)
