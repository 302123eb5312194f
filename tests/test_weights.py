"""Sequence weights: Henikoff & Henikoff 1994 worked by hand, cluster weights, the row-count guard."""

import numpy as np
import pytest

from globcons import score_columns
from globcons.core.counts import column_counts
from globcons.core.neighbours import (
    cluster_weights,
    estimate_neighbours,
    estimated_column_counts,
    exact_neighbours,
    neighbour_counts,
    query_neighbours,
    sample_rows,
)
from globcons.core.weights import compute_weights, distinct_rows, henikoff_weights
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
    expected = (identity >= 0.8).sum(axis=1)
    np.testing.assert_array_equal(exact_neighbours(codes, 0.8, block_rows=13), expected)
    np.testing.assert_allclose(cluster_weights(codes, 0.8), 1.0 / expected)


def _python_reference_neff(rows: list[str], identity: float = 0.8) -> float:
    """The effective number written out in plain Python: for each row, count the rows (itself included) at
    least ``identity`` identical to it over all columns; sum 1 / count (Morcos et al. 2011 PNAS 108:E1293)."""
    total = 0.0
    for a in rows:
        neighbours = sum(1 for b in rows if sum(x == y for x, y in zip(a, b, strict=True)) >= identity * len(a))
        total += 1.0 / neighbours
    return total


def test_fifty_near_copies_and_five_distinct_sequences_are_about_six_effective_sequences():
    # 50 copies of one 100-residue chain with one substitution each (99% identical to it, 98% to each
    # other), and 5 unrelated chains: by hand, the copies form one cluster (50 rows of weight 1/50) and the
    # others one each: n_eff = 1 + 5 = 6.
    rng = np.random.default_rng(3)
    letters = np.array(list("ACDEFGHIKLMNPQRSTVWY"))
    base = rng.choice(letters, 100)
    rows = []
    for k in range(50):
        row = base.copy()
        row[k] = letters[(np.flatnonzero(letters == row[k])[0] + 1) % 20]  # a different residue at k
        rows.append("".join(row))
    rows += ["".join(rng.choice(letters, 100)) for _ in range(5)]
    alignment = alignment_of(*rows)
    neighbours = neighbour_counts(alignment.codes)
    assert neighbours.method == "exact" and neighbours.n_eff == pytest.approx(6.0)
    assert neighbours.n_eff == pytest.approx(_python_reference_neff(rows))
    assert 5 <= score_columns(alignment, frame=False).attrs["effective_sequences"] <= 7
    # Henikoff weights alone would count 55 distinct rows: the frequencies may use them, n_eff does not.
    assert compute_weights(alignment.codes, "henikoff").n_eff == pytest.approx(55.0)


def test_above_the_exact_limit_the_count_comes_from_a_fixed_sample():
    rng = np.random.default_rng(5)
    letters = np.array(list("ACDEFGHIKLMNPQRSTVWY"))
    clusters = [rng.choice(letters, 60) for _ in range(30)]
    rows = []
    for k in range(600):  # 30 clusters of 20 close copies (one substitution each)
        row = clusters[k % 30].copy()
        row[rng.integers(60)] = rng.choice(letters)
        rows.append("".join(row))
    codes = alignment_of(*rows).codes
    exact = neighbour_counts(codes)
    sampled = neighbour_counts(codes, exact_max_rows=100, sample_size=300)
    assert exact.n_eff == pytest.approx(30.0)
    assert sampled.method == "sampled" and sampled.sample_rows == 300
    assert sampled.n_eff == pytest.approx(exact.n_eff, rel=0.15)  # clusters of 20 are seen by a 1-in-2 sample
    assert "300 sampled rows" in sampled.describe()
    # The sample is fixed by the row index, so a file read in chunks picks the same rows.
    np.testing.assert_array_equal(sample_rows(600, 300), sample_rows(600, 300))
    assert len(set(sample_rows(600, 300).tolist())) == 300
    with pytest.raises(OptionError, match="identity"):
        neighbour_counts(codes, 1.5)


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


def _clustered_rows(rng, n_clusters, copies, singles, width=80):
    letters = np.array(list("ACDEFGHIKLMNPQRSTVWY"))
    rows = []
    for _ in range(n_clusters):
        parent = rng.choice(letters, width)
        for _ in range(copies):
            row = parent.copy()
            row[rng.integers(width)] = rng.choice(letters)  # one substitution: 98-100% identical
            rows.append("".join(row))
    rows += ["".join(rng.choice(letters, width)) for _ in range(singles)]
    return rows


def test_sampled_rows_compared_with_every_row_get_their_exact_counts():
    # query_neighbours against all rows must equal the all-pairs count for those rows, cut into any blocks.
    rng = np.random.default_rng(11)
    codes = alignment_of(*_clustered_rows(rng, 12, 15, 40)).codes
    exact = exact_neighbours(codes)
    queries = np.array([0, 3, 17, 100, 190, 219])
    whole = query_neighbours(codes, codes[queries])
    pieces = sum(query_neighbours(codes[start:start + 37], codes[queries]) for start in range(0, codes.shape[0], 37))
    np.testing.assert_array_equal(whole, exact[queries])
    np.testing.assert_array_equal(pieces, exact[queries])


def test_the_estimated_effective_number_is_unbiased_and_says_its_error():
    # 30 clusters of 20 near-copies plus 300 rows alone: 330 effective sequences by hand. The estimate
    # (128 sampled rows compared with all 900) is a sample mean of 1/m times N, so it lies within a few
    # standard errors of the truth (simple random sampling; Cochran 1977, ch. 2).
    rng = np.random.default_rng(12)
    codes = alignment_of(*_clustered_rows(rng, 30, 20, 300)).codes
    exact = neighbour_counts(codes)
    assert exact.n_eff == pytest.approx(330.0)
    estimated = estimate_neighbours(codes, exact_max_rows=100, query_rows=128)
    assert estimated.method == "estimated" and not estimated.per_row and estimated.values.size == 128
    assert 0 < estimated.standard_error < 0.1 * exact.n_eff
    assert abs(estimated.n_eff - exact.n_eff) < 3 * estimated.standard_error
    assert "128 sampled rows each compared with all 900" in estimated.describe()
    with pytest.raises(ValueError, match="sample"):
        _ = estimated.weights
    # Over many different samples the mean estimate approaches the truth (unbiased, unlike per-row
    # scaling from a sample, which undercounts small clusters).
    estimates = []
    for shift in range(40):
        order = np.roll(np.arange(codes.shape[0]), 23 * shift)
        estimates.append(estimate_neighbours(codes[order], exact_max_rows=100, query_rows=64).n_eff)
    assert np.mean(estimates) == pytest.approx(330.0, rel=0.03)


def test_estimated_column_counts_are_the_plain_counts_when_every_row_is_alone():
    rng = np.random.default_rng(13)
    codes = alignment_of(*_clustered_rows(rng, 0, 0, 200)).codes
    estimated = estimate_neighbours(codes, exact_max_rows=50, query_rows=32)
    assert estimated.n_eff == pytest.approx(200.0) and estimated.standard_error == pytest.approx(0.0)
    chosen = sample_rows(codes.shape[0], 32)
    plain = column_counts(codes).reshape(codes.shape[1], -1)
    np.testing.assert_allclose(estimated_column_counts(plain, codes[chosen], estimated), plain)
