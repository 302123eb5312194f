"""Column scores against hand computations and reference implementations (scipy, Biopython)."""

import numpy as np
import pytest
from Bio.Align import substitution_matrices
from scipy.optimize import brentq
from scipy.spatial.distance import jensenshannon
from scipy.stats import entropy as scipy_entropy

from globcons.core.alphabet import GAP, N_CODES, STANDARD, UNKNOWN
from globcons.core.counts import column_counts
from globcons.core.scores import (
    BLOSUM62_BACKGROUND,
    JSD_PSEUDOCOUNT,
    consensus,
    entropy_bits,
    gap_fraction,
    jsd_scores,
    property_entropy,
    residue_frequencies,
    residue_strings,
    smooth_window,
)
from helpers import alignment_of


def counts_of(*rows, weights=None):
    return column_counts(alignment_of(*rows).codes, None if weights is None else np.asarray(weights, float))


def test_counts_by_hand_weighted_and_chunked():
    codes = alignment_of("AC", "A-", "XC").codes
    counts = column_counts(codes, np.array([1.0, 2.0, 0.5]), chunk_rows=2)
    assert counts.shape == (2, N_CODES)
    assert counts[0, STANDARD.index("A")] == 3.0 and counts[0, UNKNOWN] == 0.5
    assert counts[1, STANDARD.index("C")] == 1.5 and counts[1, GAP] == 2.0


def test_entropy_equals_scipy():
    # Reference: scipy.stats.entropy(p, base=2) on the same weighted frequencies.
    rows = ["AAL", "ACL", "ADI", "ACV", "ACI", "-CX"]
    weights = [1.0, 0.5, 2.0, 1.0, 0.25, 1.0]
    counts = counts_of(*rows, weights=weights)
    ours = entropy_bits(counts)
    for column in range(3):
        standard = counts[column, :20]
        assert ours[column] == pytest.approx(scipy_entropy(standard / standard.sum(), base=2), abs=1e-12)


def test_entropy_of_an_invariant_column_is_zero_and_of_a_uniform_one_is_log2():
    counts = counts_of("AA", "AC", "AD", "AE")
    np.testing.assert_allclose(entropy_bits(counts), [0.0, 2.0])


def test_entropy_ignores_gaps_and_unknowns_and_is_nan_without_residues():
    counts = counts_of("A-", "X-", "C-")
    assert entropy_bits(counts)[0] == pytest.approx(1.0)
    assert np.isnan(entropy_bits(counts)[1])


def test_gap_fraction_is_weighted():
    counts = counts_of("A", "-", "-", weights=[2.0, 1.0, 1.0])
    assert gap_fraction(counts)[0] == pytest.approx(0.5)


def test_property_entropy_uses_the_six_classes():
    # Mirny & Shakhnovich 1999 classes: I, L, V are all aliphatic -> 0 bits; K (positive) with D (negative)
    # half and half -> 1 bit.
    counts = counts_of("IK", "LD", "VK", "ID")
    np.testing.assert_allclose(property_entropy(counts), [0.0, 1.0])


def test_jsd_equals_scipy_jensen_shannon_distance_squared():
    # Reference: scipy.spatial.distance.jensenshannon(p, q, base=2) ** 2 is the Jensen-Shannon divergence;
    # Capra & Singh 2007 then multiply by the fraction of non-gap weight.
    rows = ["AH", "AH", "CH", "-Q"]
    counts = counts_of(*rows)
    ours = jsd_scores(counts)
    for column in range(2):
        standard = counts[column, :20]
        p = (standard / standard.sum() + JSD_PSEUDOCOUNT) / (1 + 20 * JSD_PSEUDOCOUNT)
        reference = jensenshannon(p, BLOSUM62_BACKGROUND, base=2) ** 2
        non_gap = 1 - counts[column, GAP] / counts[column].sum()
        assert ours[column] == pytest.approx(reference * non_gap, rel=1e-9)


def test_jsd_is_larger_for_conserved_columns():
    counts = counts_of("WA", "WL", "WG", "WK")
    score = jsd_scores(counts)
    assert score[0] > score[1]


def test_blosum62_background_is_consistent_with_biopythons_matrix():
    # BLOSUM62 is scaled in half-bits (Henikoff & Henikoff 1992), so with its own background frequencies
    # the Karlin-Altschul lambda solving sum p_i p_j exp(lambda s_ij) = 1 is close to ln(2)/2; the
    # expected score must be negative. Matrix from Biopython; background from memory (see scores.py).
    matrix = substitution_matrices.load("BLOSUM62")
    s = np.array([[matrix[a][b] for b in STANDARD] for a in STANDARD])
    p = BLOSUM62_BACKGROUND
    assert p.sum() == pytest.approx(1.0)
    lam = brentq(lambda x: (np.outer(p, p) * np.exp(x * s)).sum() - 1.0, 0.01, 2.0)
    assert lam == pytest.approx(np.log(2) / 2, rel=0.1)
    assert (np.outer(p, p) * s).sum() < 0


def test_smoothing_window_by_hand():
    score = np.array([1.0, 0.0, 0.0, 1.0])
    # window 1, weight 0.5: j=0 neighbours {0.0} -> 0.5; j=1 {1,0} -> 0.25; j=2 {0,1} -> 0.25; j=3 {0} -> 0.5
    np.testing.assert_allclose(smooth_window(score, 1), [0.5, 0.25, 0.25, 0.5])
    np.testing.assert_allclose(smooth_window(score, 0), score)


def test_consensus_and_residue_strings():
    counts = counts_of("HA-", "HC-", "QC-", "HA-", weights=[1, 1, 1, 1])
    assert consensus(counts).tolist() == ["H", "A", "-"]  # A/C tie: alphabetical
    assert residue_strings(residue_frequencies(counts)) == ["H:0.75,Q:0.25", "A:0.50,C:0.50", ""]


def test_residue_frequencies_keep_u_and_o_but_entropy_does_not():
    counts = counts_of("U", "C")
    assert residue_strings(residue_frequencies(counts)) == ["C:0.50,U:0.50"]
    assert entropy_bits(counts)[0] == pytest.approx(0.0)
