"""The compiled kernels (globcons.align.dp_compiled) against the numpy path of globcons.align.dp.

Both must give identical scores (bit for bit, ``np.array_equal``) and identical tracebacks (columns of every
residue, aligned regions) on random cases, on cases full of ties (integer scores and costs) and on real ones:
the four reference chains and the demo's queries against the frame profile and against the demo family's
profile, and their shuffled copies as the significance scores them. The numpy path itself is checked
against a pure-Python DP and Biopython in tests/test_dp.py, so agreement here carries those checks over.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from globcons.align import dp
from globcons.align.dp import GapCosts, align, align_scores
from globcons.core.alphabet import N_CODES
from globcons.errors import OptionError

pytest.importorskip("numba", reason="numba is not installed (pip install 'globcons[fast]'): only the numpy path "
                                    "is there to test")


def random_case(rng: np.random.Generator, m: int, integer: bool) -> tuple[np.ndarray, GapCosts]:
    if integer:  # integer scores and costs make ties common, which exercises the tie rules
        scores = rng.integers(-4, 5, (m, N_CODES)).astype(float)
        draw = lambda size: rng.integers(1, 5, size).astype(float)  # noqa: E731
    else:
        scores = rng.normal(0.0, 3.0, (m, N_CODES))
        draw = lambda size: rng.uniform(0.05, 4.0, size)  # noqa: E731
    return scores, GapCosts(draw(m), draw(m), draw(m + 1), draw(m + 1))


def assert_same(scores: np.ndarray, gaps: GapCosts, queries: list[np.ndarray]) -> None:
    """Scores and placements of both kernels identical, query by query."""
    expected = align_scores(scores, gaps, queries, kernel="numpy")
    got = align_scores(scores, gaps, queries, kernel="compiled")
    assert got.dtype == np.float64
    assert np.array_equal(got, expected)
    numpy_placements = align(scores, gaps, queries, kernel="numpy")
    compiled_placements = align(scores, gaps, queries, kernel="compiled")
    for n, c in zip(numpy_placements, compiled_placements, strict=True):
        assert c.score == n.score
        assert c.column_of_residue.dtype == np.int64
        assert np.array_equal(c.column_of_residue, n.column_of_residue)
        assert (c.query_start, c.query_end, c.profile_start, c.profile_end) == \
            (n.query_start, n.query_end, n.profile_start, n.profile_end)
    assert np.array_equal([p.score for p in compiled_placements], expected)


@pytest.mark.parametrize("integer", [False, True])
def test_random_cases_identical(integer):
    rng = np.random.default_rng(515 + integer)
    for _ in range(60):
        m = int(rng.integers(1, 40))
        scores, gaps = random_case(rng, m, integer)
        count = int(rng.integers(1, 30))  # groups of 8 lanes: full, partial and single queries
        lengths = rng.integers(1, 60, count)
        queries = [rng.integers(0, N_CODES, int(n)).astype(np.uint8) for n in lengths]
        assert_same(scores, gaps, queries)


def test_many_queries_in_full_and_partial_groups_identical():
    # 150 queries: two full groups of dp_compiled.LANES (64) and a partial one; lengths from 1 to 120.
    rng = np.random.default_rng(64)
    scores, gaps = random_case(rng, 30, integer=True)
    queries = [rng.integers(0, N_CODES, int(n)).astype(np.uint8) for n in rng.integers(1, 121, 150)]
    assert_same(scores, gaps, queries)


def test_pointer_bound_narrows_the_groups_and_changes_nothing():
    from globcons.align import dp_compiled

    rng = np.random.default_rng(8)
    m = 25
    scores, gaps = random_case(rng, m, integer=False)
    queries = [rng.integers(0, N_CODES, int(n)).astype(np.uint8) for n in rng.integers(20, 80, 70)]
    reference = align(scores, gaps, queries, kernel="numpy")
    for bound in (1, m * 81 * 3, m * 81 * dp_compiled.LANES):  # one query per group, three, a full group
        narrow = align(scores, gaps, queries, kernel="compiled", max_pointer_bytes=bound)
        for n, c in zip(reference, narrow, strict=True):
            assert c.score == n.score and np.array_equal(c.column_of_residue, n.column_of_residue)
            assert (c.query_start, c.profile_start) == (n.query_start, n.profile_start)


@settings(max_examples=60, deadline=None)
@given(m=st.integers(1, 20), seed=st.integers(0, 2**32 - 1),
       lengths=st.lists(st.integers(1, 25), min_size=1, max_size=20))
def test_property_identical(m, seed, lengths):
    rng = np.random.default_rng(seed)
    scores, gaps = random_case(rng, m, integer=bool(seed % 2))
    queries = [rng.integers(0, N_CODES, n).astype(np.uint8) for n in lengths]
    assert_same(scores, gaps, queries)


def test_globin_like_queries_with_indels_identical():
    # Mutated copies of a consensus with insertions and deletions, and shuffled ones (as bench_dp.py).
    rng = np.random.default_rng(11)
    m = 150
    consensus = rng.integers(0, 20, m)
    scores = rng.normal(-1.0, 1.5, (m, N_CODES))
    scores[np.arange(m), consensus] += 6.0
    gaps = GapCosts(rng.uniform(8, 12, m), rng.uniform(0.5, 1.5, m), rng.uniform(8, 12, m + 1),
                    rng.uniform(0.5, 1.5, m + 1))
    queries = []
    for q in range(40):
        seq = consensus[rng.random(m) > 0.05].copy()
        seq[rng.random(seq.size) < 0.3] = rng.integers(0, 20)
        for _ in range(int(rng.integers(0, 4))):
            at = int(rng.integers(0, seq.size))
            seq = np.insert(seq, at, rng.integers(0, 20, int(rng.integers(1, 25))))
        queries.append((rng.permutation(seq) if q % 3 == 0 else seq).astype(np.uint8))
    assert_same(scores, gaps, queries)


def real_queries() -> list[np.ndarray]:
    from globcons.align.scoring_profile import query_codes
    from globcons.align.significance import shuffled
    from globcons.demo import demo_file
    from globcons.frame.reference import reference_chains
    from globcons.io.records import read_sequences

    texts = [c.full_sequence for c in reference_chains()] + [c.mature_sequence for c in reference_chains()]
    texts += [r.sequence for r in read_sequences(demo_file("demo_queries.fasta"))]
    codes = [query_codes(t) for t in texts]
    return codes + shuffled(codes, 3)


def test_real_chains_on_the_frame_profile_identical():
    from globcons.align.scoring_profile import frame_profile

    profile = frame_profile()
    assert_same(profile.scores, profile.gaps, real_queries())


def test_real_chains_on_a_family_profile_identical():
    from globcons.analysis.family import family_from_alignment
    from globcons.demo import demo_file
    from globcons.io.alignments import read_alignment

    family = family_from_alignment(read_alignment(demo_file("demo_family.fasta")))
    assert_same(family.profile.scores, family.profile.gaps, real_queries())


def test_place_many_is_the_same_with_either_kernel(monkeypatch):
    from globcons.align.placement import place_many
    from globcons.frame.reference import reference_chains

    records = [(c.name, c.full_sequence) for c in reference_chains()]
    results = {}
    for kernel in ("numpy", "compiled"):
        monkeypatch.setenv(dp.KERNEL_ENVIRONMENT, kernel)
        results[kernel] = place_many(records)
    for n, c in zip(results["numpy"], results["compiled"], strict=True):
        assert (c.score, c.evalue, c.labels, c.nearest_reference) == (n.score, n.evalue, n.labels, n.nearest_reference)


# ---------------------------------------------------------------------------------------------------
# the choice of kernel

def test_auto_uses_numpy_for_small_work_and_compiled_once_it_adds_up(monkeypatch):
    monkeypatch.delenv(dp.KERNEL_ENVIRONMENT, raising=False)
    monkeypatch.setattr(dp, "_DP_CELLS", {"numpy": 0, "switched": 0})
    monkeypatch.setattr(dp, "COMPILED_AFTER_CELLS", 1000)
    assert dp._kernel_for("auto", 600) is None  # 600 cells: numpy
    assert dp._kernel_for("auto", 300) is None  # 900 so far
    assert dp._kernel_for("auto", 200) is dp.compiled_kernels()  # 1,100 reach the threshold
    assert dp._kernel_for("auto", 1) is dp.compiled_kernels()  # switched: every call from now on
    assert dp._kernel_for("numpy", 10**9) is None


def test_environment_forces_a_kernel_and_bad_names_are_refused(monkeypatch):
    monkeypatch.setattr(dp, "_DP_CELLS", {"numpy": 0, "switched": 0})
    monkeypatch.setenv(dp.KERNEL_ENVIRONMENT, "compiled")
    assert dp._kernel_for("auto", 1) is dp.compiled_kernels()
    monkeypatch.setenv(dp.KERNEL_ENVIRONMENT, "numpy")
    assert dp._kernel_for("auto", 10**12) is None
    assert dp._kernel_for("compiled", 1) is dp.compiled_kernels()  # an explicit argument wins
    monkeypatch.setenv(dp.KERNEL_ENVIRONMENT, "fastest")
    with pytest.raises(OptionError, match="GLOBCONS_DP_KERNEL must be one of auto, numpy, compiled"):
        dp._kernel_for("auto", 1)
    with pytest.raises(ValueError, match="kernel must be one of"):
        align_scores(np.zeros((2, N_CODES)), GapCosts.constant(2, 3.0, 1.0), [np.zeros(3, np.uint8)], kernel="gpu")


def test_compiled_without_numba_says_how_to_get_it(monkeypatch):
    monkeypatch.setattr(dp, "compiled_kernels", lambda: None)
    with pytest.raises(OptionError, match=r"need numba: pip install 'globcons\[fast\]'"):
        dp._kernel_for("compiled", 1)
    monkeypatch.setattr(dp, "_DP_CELLS", {"numpy": 0, "switched": 0})
    monkeypatch.setattr(dp, "COMPILED_AFTER_CELLS", 1)
    monkeypatch.delenv(dp.KERNEL_ENVIRONMENT, raising=False)
    assert dp._kernel_for("auto", 10) is None  # auto falls back to numpy


def test_prepare_kernels_loads_them_only_for_enough_work(monkeypatch):
    monkeypatch.delenv(dp.KERNEL_ENVIRONMENT, raising=False)
    monkeypatch.setattr(dp, "_DP_CELLS", {"numpy": 0, "switched": 0})
    assert dp.prepare_kernels(dp.COMPILED_AFTER_CELLS - 1) is False  # a small run: nothing loaded
    assert dp._kernel_for("auto", 10) is None
    monkeypatch.setenv(dp.KERNEL_ENVIRONMENT, "numpy")
    assert dp.prepare_kernels(10**12) is False  # the numpy path forced
    monkeypatch.delenv(dp.KERNEL_ENVIRONMENT)
    assert dp.prepare_kernels(dp.COMPILED_AFTER_CELLS) is True
    assert dp._kernel_for("auto", 10) is dp.compiled_kernels()  # from now on, whatever the size
    assert dp._DP_CELLS["numpy"] == 10  # only the work done is counted, not the work announced
