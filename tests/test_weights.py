"""Sequence weights: Henikoff & Henikoff 1994 worked by hand, cluster weights, the row-count guard."""

import numpy as np
import pytest

from globcons.core.weights import cluster_weights, compute_weights, distinct_rows, henikoff_weights
from globcons.errors import OptionError
from helpers import alignment_of


def test_henikoff_matches_the_papers_formula_worked_by_hand():
    # Henikoff & Henikoff 1994 J Mol Biol 243:574: in a column with r distinct residues, a sequence whose
    # residue occurs s times gets 1/(r*s); a sequence's weight is the sum over columns (then normalised).
    #   col 1: A A A C   -> r=2; A: 1/(2*3) = 1/6, C: 1/(2*1) = 1/2
    #   col 2: D D E E   -> r=2; each 1/(2*2) = 1/4
    #   col 3: F G H H   -> r=3; F: 1/3, G: 1/3, H: 1/(3*2) = 1/6
    # raw sums: r1 = 1/6+1/4+1/3 = 3/4, r2 = 1/6+1/4+1/3 = 3/4, r3 = 1/6+1/4+1/6 = 7/12, r4 = 1/2+1/4+1/6 = 11/12
    # sum of raw = 3 (one per column); proportions = raw / 3. All four rows differ: scaled to sum to 4.
    alignment = alignment_of("ADF", "ADG", "AEH", "CEH")
    expected = np.array([3 / 4, 3 / 4, 7 / 12, 11 / 12]) / 3 * 4
    np.testing.assert_allclose(henikoff_weights(alignment.codes), expected, rtol=1e-12)


def test_henikoff_identical_rows_weigh_one_in_all():
    alignment = alignment_of("ACDE", "ACDE", "ACDE")
    weights = compute_weights(alignment.codes, "henikoff")
    np.testing.assert_allclose(weights.values, [1 / 3] * 3)
    assert weights.n_eff == pytest.approx(1.0)


def test_henikoff_gaps_contribute_nothing_and_rows_average_over_their_residues():
    # col 1: A A -> r=1, s=2 -> 1/2 each; col 2: C - -> r=1, s=1 -> r1 gets 1, r2 nothing.
    # per residue position: r1 = (1/2 + 1) / 2 = 3/4, r2 = (1/2) / 1 = 1/2; proportions 0.6, 0.4;
    # two distinct rows -> scaled to sum 2: 1.2, 0.8.
    alignment = alignment_of("AC", "A-")
    np.testing.assert_allclose(henikoff_weights(alignment.codes), [1.2, 0.8])


def test_henikoff_rows_without_residues_weigh_as_an_average_row():
    # r1, r2 as in the paper's formula: col 1 A C -> 1/2 each; col 2 D D -> 1/2 each: raw 1/2 and 1/2;
    # the all-gap row takes their mean, 1/2. Three distinct rows -> 1 each; its gaps count fully.
    alignment = alignment_of("AD", "CD", "--")
    np.testing.assert_allclose(henikoff_weights(alignment.codes), [1.0, 1.0, 1.0])
    np.testing.assert_allclose(henikoff_weights(alignment_of("--", "--").codes), [0.5, 0.5])


def test_henikoff_is_independent_of_the_block_size():
    rng = np.random.default_rng(1)
    codes = rng.integers(0, 24, size=(300, 25)).astype(np.uint8)
    np.testing.assert_allclose(henikoff_weights(codes, chunk_rows=7), henikoff_weights(codes), rtol=1e-12)


def test_cluster_weights_by_hand():
    # 10 columns. r1 and r2 differ at 1 column (90% identical), r3 differs from both at 5 (50%).
    # At identity 0.8: r1 and r2 are each other's neighbours (m = 2), r3 alone (m = 1).
    rows = ["ACDEFGHIKL", "ACDEFGHIKM", "ACDEFWWWWW"]
    alignment = alignment_of(*rows)
    np.testing.assert_allclose(cluster_weights(alignment.codes, 0.8), [0.5, 0.5, 1.0])
    # At identity 0.5 all three pairs qualify (r1-r3 and r2-r3 share 5 of 10 columns).
    np.testing.assert_allclose(cluster_weights(alignment.codes, 0.5), [1 / 3] * 3)
    assert compute_weights(alignment.codes, "cluster").n_eff == pytest.approx(2.0)


def test_cluster_weights_match_a_plain_pairwise_count():
    # Reference: the definition computed pair by pair (numpy comparisons, no BLAS).
    rng = np.random.default_rng(7)
    base = rng.integers(0, 20, size=40)
    codes = np.array([np.where(rng.random(40) < 0.15, rng.integers(0, 24, 40), base) for _ in range(60)],
                     dtype=np.uint8)
    identity = (codes[:, None, :] == codes[None, :, :]).mean(axis=2)
    expected = 1.0 / (identity >= 0.8).sum(axis=1)
    np.testing.assert_allclose(cluster_weights(codes, 0.8, chunk_rows=13), expected)


def test_cluster_weights_refuse_too_many_rows_and_say_why():
    codes = np.zeros((11, 5), dtype=np.uint8)
    with pytest.raises(OptionError, match="henikoff"):
        cluster_weights(codes, 0.8, max_rows=10)
    with pytest.raises(OptionError, match="identity"):
        cluster_weights(codes, 1.5)


def test_distinct_rows_counts_unique_rows():
    alignment = alignment_of("ACD", "ACD", "ACE", "-CD", "ACE")
    assert distinct_rows(alignment.codes) == 3
    assert distinct_rows(alignment.codes, chunk_rows=2) == 3


def test_none_weights_are_one():
    alignment = alignment_of("ACD", "ACD")
    weights = compute_weights(alignment.codes, "none")
    assert weights.values.tolist() == [1.0, 1.0] and weights.n_eff == 2.0


def test_unknown_scheme_is_an_option_error():
    with pytest.raises(OptionError, match="henikoff, none, cluster"):
        compute_weights(np.zeros((1, 1), dtype=np.uint8), "equal")
