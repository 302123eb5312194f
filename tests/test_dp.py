"""Tests of globcons.align.dp against a plain pure-Python DP and against Biopython's local aligner."""

from __future__ import annotations

import math

import numpy as np
import pytest
from Bio.Align import PairwiseAligner, substitution_matrices
from hypothesis import given, settings
from hypothesis import strategies as st

from globcons.align.dp import GapCosts, Placement, align, align_scores
from globcons.core.alphabet import N_CODES, STANDARD

NEG = -math.inf


# ---------------------------------------------------------------------------------------------------
# Independent references
# ---------------------------------------------------------------------------------------------------

def reference_score(S, gaps: GapCosts, query) -> float:
    """The model's recurrences written out cell by cell (1-based i over the query, j over columns).

    ``S[j-1][k]``, ``open_delete[j-1]``, ``extend_delete[j-1]`` belong to column j; ``open_insert[j]``,
    ``extend_insert[j]`` to insertions after column j.
    """
    S = [list(map(float, row)) for row in S]
    od, ed = list(gaps.open_delete), list(gaps.extend_delete)
    oi, ei = list(gaps.open_insert), list(gaps.extend_insert)
    n, m = len(query), len(S)
    Mx = [[NEG] * (m + 1) for _ in range(n + 1)]
    Ix = [[NEG] * (m + 1) for _ in range(n + 1)]
    Dx = [[NEG] * (m + 1) for _ in range(n + 1)]
    best = NEG
    for i in range(1, n + 1):
        for j in range(1, m + 1):
            before = max(0.0, Mx[i - 1][j - 1], Ix[i - 1][j - 1], Dx[i - 1][j - 1])
            Mx[i][j] = S[j - 1][int(query[i - 1])] + before
            Ix[i][j] = max(Mx[i - 1][j] - oi[j], Ix[i - 1][j] - ei[j])
            Dx[i][j] = max(Mx[i][j - 1] - od[j - 1], Dx[i][j - 1] - ed[j - 1])
            best = max(best, Mx[i][j])
    return best


def path_score(S, gaps: GapCosts, query, placement: Placement) -> float:
    """Score of the alignment that ``placement.column_of_residue`` describes, checking it is a valid path."""
    col = [int(c) for c in placement.column_of_residue]
    assert len(col) == len(query)
    matched = [(i, c) for i, c in enumerate(col) if c >= 0]
    assert matched, "a placement holds at least one matched pair"
    assert all(0 <= c < len(S) for _, c in matched)
    assert matched[0] == (placement.query_start, placement.profile_start)
    assert matched[-1] == (placement.query_end - 1, placement.profile_end - 1)
    total = sum(float(S[c][int(query[i])]) for i, c in matched)
    for (i1, c1), (i2, c2) in zip(matched, matched[1:], strict=False):
        inserted, deleted = i2 - i1 - 1, c2 - c1 - 1
        assert inserted >= 0 and deleted >= 0, "matches must advance on both sequences"
        assert not (inserted and deleted), "the model has no insertion next to a deletion"
        if inserted:
            total -= gaps.open_insert[c1 + 1] + (inserted - 1) * gaps.extend_insert[c1 + 1]
        if deleted:
            total -= gaps.open_delete[c1 + 1] + sum(gaps.extend_delete[c] for c in range(c1 + 2, c2))
    return total


def random_gaps(rng: np.random.Generator, m: int, integer: bool = False) -> GapCosts:
    if integer:
        draw = lambda size: rng.integers(1, 5, size).astype(float)  # noqa: E731
    else:
        draw = lambda size: rng.uniform(0.05, 4.0, size)  # noqa: E731
    return GapCosts(draw(m), draw(m), draw(m + 1), draw(m + 1))


def random_scores(rng: np.random.Generator, m: int, integer: bool = False) -> np.ndarray:
    if integer:  # integer scores and costs make ties common, which exercises the traceback rules
        return rng.integers(-4, 5, (m, N_CODES)).astype(float)
    return rng.normal(0.0, 3.0, (m, N_CODES))


def random_queries(rng: np.random.Generator, count: int, max_len: int) -> list[np.ndarray]:
    """Codes 0-23, lengths 1..max_len."""
    lengths = rng.integers(1, max_len + 1, count)
    return [rng.integers(0, N_CODES, int(n)).astype(np.uint8) for n in lengths]


# ---------------------------------------------------------------------------------------------------
# Against the pure-Python reference
# ---------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("integer", [False, True])
def test_scores_and_paths_match_reference(integer):
    rng = np.random.default_rng(20240 + integer)
    for _ in range(40):
        m = int(rng.integers(1, 13))
        S = random_scores(rng, m, integer)
        gaps = random_gaps(rng, m, integer)
        queries = random_queries(rng, 8, 15)
        expected = np.array([reference_score(S, gaps, q) for q in queries])
        got = align_scores(S, gaps, queries)
        assert got.dtype == np.float64 and got.shape == (len(queries),)
        np.testing.assert_allclose(got, expected, rtol=0, atol=1e-9)
        placements = align(S, gaps, queries)
        for q, p, e in zip(queries, placements, expected, strict=True):
            assert p.column_of_residue.dtype == np.int64
            assert p.score == pytest.approx(e, abs=1e-9)
            assert path_score(S, gaps, q, p) == pytest.approx(e, abs=1e-9)


@settings(max_examples=80, deadline=None)
@given(m=st.integers(1, 12), seed=st.integers(0, 2**32 - 1), lengths=st.lists(st.integers(1, 15), min_size=1,
                                                                              max_size=5))
def test_reference_property(m, seed, lengths):
    rng = np.random.default_rng(seed)
    S = random_scores(rng, m, integer=bool(seed % 2))
    gaps = random_gaps(rng, m, integer=bool(seed % 3 == 0))
    queries = [rng.integers(0, N_CODES, n).astype(np.uint8) for n in lengths]
    expected = [reference_score(S, gaps, q) for q in queries]
    np.testing.assert_allclose(align_scores(S, gaps, queries), expected, rtol=0, atol=1e-9)
    for q, p, e in zip(queries, align(S, gaps, queries), expected, strict=True):
        assert path_score(S, gaps, q, p) == pytest.approx(e, abs=1e-9)


def test_longer_queries_match_reference():
    # Long enough that insertions, deletions and the prefix maximum span many positions.
    rng = np.random.default_rng(77)
    m = 40
    consensus = rng.integers(0, 20, m)
    S = rng.normal(-1.0, 1.0, (m, N_CODES))
    S[np.arange(m), consensus] += 5.0
    gaps = random_gaps(rng, m)
    queries = []
    for _ in range(6):
        q = consensus[rng.random(m) > 0.15].copy()
        for _ in range(3):
            at = int(rng.integers(0, q.shape[0] + 1))
            q = np.insert(q, at, rng.integers(0, 20, int(rng.integers(1, 9))))
        queries.append(q.astype(np.uint8))
    expected = np.array([reference_score(S, gaps, q) for q in queries])
    np.testing.assert_allclose(align_scores(S, gaps, queries), expected, rtol=0, atol=1e-9)
    for q, p, e in zip(queries, align(S, gaps, queries), expected, strict=True):
        assert path_score(S, gaps, q, p) == pytest.approx(e, abs=1e-9)


def test_align_scores_equal_align():
    rng = np.random.default_rng(5)
    S = random_scores(rng, 30, integer=True)
    gaps = random_gaps(rng, 30, integer=True)
    queries = random_queries(rng, 50, 60)
    fast = align_scores(S, gaps, queries)
    assert np.array_equal(fast, [p.score for p in align(S, gaps, queries)])


# ---------------------------------------------------------------------------------------------------
# Against Biopython's local aligner (constant gap costs)
# ---------------------------------------------------------------------------------------------------

B62 = substitution_matrices.load("BLOSUM62")

# Made-up globin-like sequences (not copies of real proteins).
TARGETS = [
    "MSLTAEDKKLVQESWAKIGSHAEEYGAEALHRLFTAYPQTKTYFSHWADLSPGSAPVKKHGKTVLGALAEAVKNLDDIKGALSKLSELHA",
    "GLSDAEWKLVLNAWGKVEPDLAGHGQEVLIRLFTSHPETLEKFDKFKNLKTEAEMKASEDLKKHGVTVLTALGAILKQKGHHEAE",
]


def profile_from_sequence(seq: str) -> np.ndarray:
    """S[j, a] = BLOSUM62[seq_j, a] for the 20 standard residues; other codes get the matrix's X score."""
    S = np.empty((len(seq), N_CODES))
    for j, letter in enumerate(seq):
        S[j, :20] = [B62[letter, a] for a in STANDARD]
        S[j, 20:] = B62[letter, "X"]
    return S


def encode_standard(seq: str) -> np.ndarray:
    return np.array([STANDARD.index(a) for a in seq], dtype=np.uint8)


def switches_gap_side(alignment) -> bool:
    """Whether a Biopython alignment has a gap in one sequence directly next to a gap in the other."""
    steps = np.diff(alignment.coordinates, axis=1)
    kinds = ["T" if dq == 0 else "Q" if dt == 0 else "M" for dt, dq in steps.T]
    return any({a, b} == {"T", "Q"} for a, b in zip(kinds, kinds[1:], strict=False))


def make_fragments(rng: np.random.Generator, target: str) -> list[str]:
    """Fragments of ``target`` with substitutions, insertions, deletions and unrelated end tags."""
    out = []
    for _ in range(6):
        a = int(rng.integers(0, len(target) // 3))
        b = int(rng.integers(2 * len(target) // 3, len(target) + 1))
        seq = list(target[a:b])
        for k in range(len(seq)):
            if rng.random() < 0.2:
                seq[k] = STANDARD[int(rng.integers(0, 20))]
        for _ in range(int(rng.integers(0, 3))):
            at = int(rng.integers(1, len(seq) - 1))
            if rng.random() < 0.5:
                del seq[at:at + int(rng.integers(1, 5))]
            else:
                seq[at:at] = [STANDARD[int(x)] for x in rng.integers(0, 20, int(rng.integers(1, 5)))]
        tag_left = "".join(STANDARD[int(x)] for x in rng.integers(0, 20, int(rng.integers(0, 8))))
        tag_right = "".join(STANDARD[int(x)] for x in rng.integers(0, 20, int(rng.integers(0, 8))))
        out.append(tag_left + "".join(seq) + tag_right)
    return out


@pytest.mark.parametrize("open_cost, extend_cost", [(11.0, 1.0), (8.0, 2.0), (5.0, 0.5)])
def test_matches_biopython_local(open_cost, extend_cost):
    # Our model is Biopython's local Gotoh model minus its insertion<->deletion transitions (each
    # paying another gap opening). Biopython's score is therefore an upper bound, reached exactly
    # when its optimal alignment has no gap next to a gap in the other sequence.
    rng = np.random.default_rng(int(open_cost * 10 + extend_cost))
    aligner = PairwiseAligner(mode="local", substitution_matrix=B62,
                              open_gap_score=-open_cost, extend_gap_score=-extend_cost)
    exact = 0
    for target in TARGETS:
        S = profile_from_sequence(target)
        gaps = GapCosts.constant(len(target), open_cost, extend_cost)
        fragments = make_fragments(rng, target) + [TARGETS[1 - TARGETS.index(target)][10:70]]
        ours = align_scores(S, gaps, [encode_standard(f) for f in fragments])
        for fragment, score in zip(fragments, ours, strict=True):
            theirs = aligner.score(target, fragment)
            assert theirs > 0  # Biopython's local score is floored at 0; ours is not
            assert score <= theirs + 1e-9
            if not switches_gap_side(aligner.align(target, fragment)[0]):
                assert score == pytest.approx(theirs, abs=1e-9)
                exact += 1
    assert exact == 2 * 7  # every case here is one where the models must agree


def test_gap_switch_is_the_only_difference_from_biopython():
    # With cheap gaps, Biopython prefers deleting C and inserting G next to it (-1 - 1) over the C/G
    # mismatch (-3); our model forbids that transition, so it takes the mismatch: one point less.
    target, query = "WWWWWCWWWWW", "WWWWWGWWWWW"
    aligner = PairwiseAligner(mode="local", substitution_matrix=B62,
                              open_gap_score=-1.0, extend_gap_score=-1.0)
    assert aligner.score(target, query) == 10 * B62["W", "W"] - 2
    S = profile_from_sequence(target)
    gaps = GapCosts.constant(len(target), 1.0, 1.0)
    q = encode_standard(query)
    assert reference_score(S, gaps, q) == 10 * B62["W", "W"] + B62["C", "G"]
    assert align_scores(S, gaps, [q])[0] == pytest.approx(10 * B62["W", "W"] + B62["C", "G"], abs=1e-12)


# ---------------------------------------------------------------------------------------------------
# Batching
# ---------------------------------------------------------------------------------------------------

def test_batching_does_not_change_results():
    rng = np.random.default_rng(99)
    m = 25
    S = random_scores(rng, m)
    gaps = random_gaps(rng, m)
    queries = random_queries(rng, 60, 80)
    reference = align_scores(S, gaps, queries)
    placements = align(S, gaps, queries)
    for cells in (1, 50, 300, 10_000):
        assert np.array_equal(align_scores(S, gaps, queries, chunk_cells=cells), reference)
        other = align(S, gaps, queries, chunk_cells=cells)
        for p, o in zip(placements, other, strict=True):
            assert o.score == p.score
            assert np.array_equal(o.column_of_residue, p.column_of_residue)
            assert (o.query_start, o.query_end, o.profile_start, o.profile_end) == \
                (p.query_start, p.query_end, p.profile_start, p.profile_end)
    # Pointer memory bound: a few queries per batch.
    small = align(S, gaps, queries, max_pointer_bytes=m * 200)
    assert [p.score for p in small] == [p.score for p in placements]
    # Order and company: each query scores the same alone, shuffled, or in a subset.
    order = rng.permutation(len(queries))
    assert np.array_equal(align_scores(S, gaps, [queries[k] for k in order]), reference[order])
    assert np.array_equal(align_scores(S, gaps, queries[::3]), reference[::3])
    for k in (0, 17, 59):
        assert align_scores(S, gaps, [queries[k]])[0] == reference[k]


def test_padded_array_input_equals_list_input():
    rng = np.random.default_rng(3)
    S = random_scores(rng, 12)
    gaps = random_gaps(rng, 12)
    queries = random_queries(rng, 10, 20)
    lengths = np.array([q.shape[0] for q in queries])
    padded = np.full((10, 25), 23, dtype=np.uint8)  # pad content must not matter
    for r, q in enumerate(queries):
        padded[r, :q.shape[0]] = q
    padded[:, 22:] = 0
    assert np.array_equal(align_scores(S, gaps, padded, lengths), align_scores(S, gaps, queries))
    full = np.stack([rng.integers(0, 24, 7).astype(np.uint8) for _ in range(4)])
    assert np.array_equal(align_scores(S, gaps, full), align_scores(S, gaps, list(full)))


# ---------------------------------------------------------------------------------------------------
# Planted alignments
# ---------------------------------------------------------------------------------------------------

def planted_setup(m: int = 40):
    """A consensus over codes 0-17 scoring +5 on match and -3 otherwise; codes 18, 19 (W, Y) match nowhere."""
    rng = np.random.default_rng(2)
    consensus = rng.integers(0, 18, m)
    S = np.full((m, N_CODES), -3.0)
    S[np.arange(m), consensus] = 5.0
    return consensus, S, GapCosts.constant(m, 4.0, 1.0)


def test_planted_insertion_and_missing_start():
    consensus, S, gaps = planted_setup()
    m = consensus.shape[0]
    inserted = np.array([18, 19, 18])
    query = np.concatenate([consensus[5:20], inserted, consensus[20:]]).astype(np.uint8)
    expected = np.concatenate([np.arange(5, 20), [-1, -1, -1], np.arange(20, m)])
    (p,) = align(S, gaps, [query])
    assert np.array_equal(p.column_of_residue, expected)
    assert p.score == 5.0 * (m - 5) - (4.0 + 2 * 1.0)
    assert (p.query_start, p.query_end, p.profile_start, p.profile_end) == (0, query.shape[0], 5, m)
    assert align_scores(S, gaps, [query])[0] == p.score


def test_planted_deletion_and_unaligned_tags():
    consensus, S, gaps = planted_setup()
    tag = np.array([18, 19, 19, 18])  # scores -3 everywhere: left out at no cost
    query = np.concatenate([tag, consensus[:12], consensus[16:33], tag[:2]]).astype(np.uint8)
    expected = np.concatenate([[-1] * 4, np.arange(0, 12), np.arange(16, 33), [-1, -1]])
    (p,) = align(S, gaps, [query])
    assert np.array_equal(p.column_of_residue, expected)
    assert p.score == 5.0 * 29 - (4.0 + 3 * 1.0)
    assert (p.query_start, p.query_end, p.profile_start, p.profile_end) == (4, 33, 0, 33)


# ---------------------------------------------------------------------------------------------------
# Edge cases and validation
# ---------------------------------------------------------------------------------------------------

def test_query_of_length_one():
    rng = np.random.default_rng(8)
    S = random_scores(rng, 9)
    gaps = random_gaps(rng, 9)
    queries = [np.array([k], dtype=np.uint8) for k in range(N_CODES)]
    np.testing.assert_array_equal(align_scores(S, gaps, queries), S.max(axis=0))
    for k, p in enumerate(align(S, gaps, queries)):
        assert p.column_of_residue.tolist() == [int(np.argmax(S[:, k]))]  # first best column on ties


def test_profile_of_one_column():
    rng = np.random.default_rng(9)
    S = random_scores(rng, 1)
    gaps = random_gaps(rng, 1)
    queries = random_queries(rng, 20, 12)
    np.testing.assert_array_equal(align_scores(S, gaps, queries), [S[0, q].max() for q in queries])
    for q, p in zip(queries, align(S, gaps, queries), strict=True):
        best = int(np.argmax(S[0, q]))
        assert p.column_of_residue.tolist() == [0 if i == best else -1 for i in range(q.shape[0])]


def test_documented_tie_rules():
    # Equal best cells: the lowest column wins.
    S = np.zeros((3, N_CODES))
    S[:, 0] = 1.0
    (p,) = align(S, GapCosts.constant(3, 2.0, 1.0), [np.array([0], dtype=np.uint8)])
    assert p.column_of_residue.tolist() == [0]
    # A prefix scoring exactly 0 is dropped (free start rather than extension).
    S = np.full((2, N_CODES), -5.0)
    S[0, 1], S[1, 0] = 0.0, 3.0
    (p,) = align(S, GapCosts.constant(2, 2.0, 1.0), [np.array([1, 0], dtype=np.uint8)])
    assert p.score == 3.0
    assert p.column_of_residue.tolist() == [-1, 1]
    assert (p.query_start, p.profile_start) == (1, 1)


def test_empty_query_list():
    S = np.zeros((5, N_CODES))
    gaps = GapCosts.constant(5, 3.0, 1.0)
    out = align_scores(S, gaps, [])
    assert out.shape == (0,) and out.dtype == np.float64
    assert align(S, gaps, []) == []


def test_smaller_alphabet_and_integer_codes():
    # Any code below K is allowed; non-uint8 integer arrays are accepted.
    rng = np.random.default_rng(10)
    S = rng.normal(size=(6, 4))
    gaps = random_gaps(rng, 6)
    queries = [rng.integers(0, 4, 9) for _ in range(5)]
    np.testing.assert_allclose(align_scores(S, gaps, queries),
                               [reference_score(S, gaps, q) for q in queries], rtol=0, atol=1e-9)


def test_gap_costs_validation():
    g = GapCosts.constant(3, 5.0, 1.0)
    assert g.n_columns == 3 and g.open_insert.shape == (4,) and g.open_delete.dtype == np.float64
    with pytest.raises(ValueError):
        g.open_delete[0] = 1.0  # read-only
    with pytest.raises(ValueError, match="open_insert"):
        GapCosts(np.ones(3), np.ones(3), np.ones(3), np.ones(4))
    with pytest.raises(ValueError, match="extend_delete"):
        GapCosts(np.ones(3), np.array([1.0, 0.0, 1.0]), np.ones(4), np.ones(4))
    with pytest.raises(ValueError, match="positive finite"):
        GapCosts(np.ones(3), np.ones(3), np.ones(4), np.array([1.0, np.nan, 1.0, 1.0]))
    with pytest.raises(ValueError):
        GapCosts.constant(0, 5.0, 1.0)
    with pytest.raises(ValueError):
        GapCosts.constant(4, -5.0, 1.0)


def test_input_validation():
    S = np.zeros((4, 6))
    gaps = GapCosts.constant(4, 2.0, 1.0)
    with pytest.raises(ValueError, match="codes outside"):
        align_scores(S, gaps, [np.array([0, 6], dtype=np.uint8)])
    with pytest.raises(ValueError, match="codes outside"):
        align_scores(S, gaps, [np.array([0, -1])])
    with pytest.raises(ValueError, match="non-empty"):
        align(S, gaps, [np.zeros(0, dtype=np.uint8)])
    with pytest.raises(ValueError, match="columns"):
        align_scores(S, GapCosts.constant(5, 2.0, 1.0), [np.zeros(2, dtype=np.uint8)])
    with pytest.raises(ValueError, match="finite"):
        align_scores(np.full((4, 6), np.inf), gaps, [np.zeros(2, dtype=np.uint8)])
    with pytest.raises(TypeError):
        align_scores(S, (1, 2, 3, 4), [np.zeros(2, dtype=np.uint8)])
