"""Property-based tests (hypothesis): the reader and the scorer on random valid alignments, and the
reader on arbitrary bytes.

(a) A random alignment written as FASTA (random case, wrapping width, line ends) reads back to the exact
    code matrix, worked out independently per row.
(b) The scorer never crashes, and the classes agree with the frequencies it reports. With positive row
    weights and the default thresholds (invariant_min = group_min = 1), whether a column that is not
    gap-rich is invariant, conservative or variable depends only on *which* residues occur in it, not on
    the weights, so those three classes are recomputed here from the letters (BLOSUM62 from Biopython,
    U scored as C and O as K) for every weighting scheme.
(c) Arbitrary bytes give an Alignment or a GlobconsError, never another exception.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

import globcons
from globcons.core.alignment import Alignment
from globcons.core.alphabet import encode
from globcons.core.classes import RESIDUE_BACKGROUND
from globcons.errors import GlobconsError
from globcons.io.alignments import parse_alignment

SETTINGS = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])

STANDARD = "ACDEFGHIKLMNPQRSTVWY"
LETTERS = STANDARD + "UOXBZJ"
GAPS = "-.~"
NUCLEOTIDE = set("ACGTNU")


def _blosum62():
    from Bio.Align import substitution_matrices

    return substitution_matrices.load("BLOSUM62")


B62 = _blosum62()
STAND_IN = {"U": "C", "O": "K"}


def b62_positive(a: str, b: str) -> bool:
    return a == b or B62[STAND_IN.get(a, a)][STAND_IN.get(b, b)] > 0


def looks_nucleotide(rows: list[str]) -> bool:
    """The reader's documented guard: >= 20 letters (gaps aside) with >= 95% of them in ACGTNU."""
    letters = [c.upper() for row in rows for c in row if c not in GAPS]
    return len(letters) >= 20 and sum(c in NUCLEOTIDE for c in letters) >= 0.95 * len(letters)


@st.composite
def alignments(draw):
    n_rows = draw(st.integers(1, 12))
    n_columns = draw(st.integers(1, 40))
    # A small random alphabet per example makes invariant and conservative columns common.
    if draw(st.booleans()):
        letters = "".join(sorted(draw(st.sets(st.sampled_from(LETTERS), min_size=1, max_size=4))))
        gaps = "-"
    else:
        letters, gaps = LETTERS, GAPS
    pool = letters + letters.lower() + gaps  # random case: every letter in both cases
    row = st.text(alphabet=pool, min_size=n_columns, max_size=n_columns)
    return draw(st.lists(row, min_size=n_rows, max_size=n_rows))


@st.composite
def fasta_files(draw):
    rows = draw(alignments())
    width = draw(st.integers(1, len(rows[0]) + 5))
    crlf = draw(st.booleans())
    final_newline = draw(st.booleans())
    end = "\r\n" if crlf else "\n"
    lines = []
    for index, row in enumerate(rows):
        lines.append(f">row{index} synthetic")
        lines.extend(row[i:i + width] for i in range(0, len(row), width))
    text = end.join(lines) + (end if final_newline else "")
    return rows, text.encode("ascii")


def expected_codes(rows: list[str]) -> np.ndarray:
    """Per-row encode (gaps '-', '.', '~' -> 23)."""
    matrix = np.array([encode(row) for row in rows], dtype=np.uint8)
    return matrix


def read_rows(data: bytes) -> Alignment:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return parse_alignment(data, "random.fasta")


# --------------------------------------------------------------------------------------------------
# (a) round trip


@SETTINGS
@given(fasta_files())
def test_random_fasta_reads_to_the_expected_codes(case):
    rows, data = case
    if looks_nucleotide(rows):
        # the reader's guard: refused as nucleotides, whatever else the file holds
        with pytest.raises(globcons.InputError, match="nucleotide"):
            read_rows(data)
        return
    alignment = read_rows(data)
    expected = expected_codes(rows)
    # sanity of the expectation itself: only alphabet codes, gaps as 23, ambiguity codes as 22
    for row, codes in zip(rows, expected, strict=True):
        for char, code in zip(row, codes, strict=True):
            assert (code == 23) == (char in GAPS)
            assert (code == 22) == (char.upper() in "XBZJ")
            assert code <= 23
    assert alignment.codes.shape == (len(rows), len(rows[0]))
    np.testing.assert_array_equal(alignment.codes, expected)
    assert alignment.ids == tuple(f"row{i}" for i in range(len(rows)))


# --------------------------------------------------------------------------------------------------
# (b) the scorer


def parse_residues(text: str) -> list[tuple[str, float]]:
    if not text:
        return []
    pairs = []
    for item in text.split(","):
        letter, value = item.split(":")
        pairs.append((letter, float(value)))
    return pairs


LETTERS = STANDARD + "UO"


def reference_class(column: list[str], n_eff: float, gap: float) -> str:
    """The class rule written out independently: plain shares of the letters present, the greedy group in
    BLOSUM62, and the Beta tail of the posterior share (scipy.stats.beta as the reference); prior weight 1
    spread by the background shares, confidence 0.9, thresholds 0.8 (the defaults)."""
    from scipy.stats import beta

    if gap > 0.5:
        return "gap-rich"
    counts = {c: sum(1 for x in column if x.upper() == c) for c in LETTERS}
    total = sum(counts.values())
    if total == 0:
        return "variable"
    order = sorted((c for c in LETTERS if counts[c]), key=lambda c: (-counts[c], LETTERS.index(c)))
    background = dict(zip(LETTERS, RESIDUE_BACKGROUND, strict=True))

    def probability(letters: list[str]) -> float:
        share = sum(counts[c] for c in letters) / total
        q = sum(background[c] for c in letters)
        return beta.sf(0.8, q + n_eff * share, 1 - q + n_eff * (1 - share))

    if probability(order[:1]) >= 0.9:
        return "invariant"
    group: list[str] = []
    for letter in order:
        if all(b62_positive(letter, other) for other in group):
            group.append(letter)
    return "conservative" if probability(group) >= 0.9 else "variable"


@SETTINGS
@given(alignments(), st.sampled_from(["henikoff", "none", "cluster"]))
def test_scorer_classes_agree_with_reported_frequencies(rows, scheme):
    assume(not looks_nucleotide(rows))
    alignment = Alignment(ids=tuple(f"r{i}" for i in range(len(rows))), codes=expected_codes(rows))
    # frame=False: random alignments are not globins, and placing them is tested elsewhere.
    table = globcons.score_columns(alignment, weights=scheme, min_neff=0, frame=False)
    assert len(table) == len(rows[0])
    assert list(table["column"]) == list(range(1, len(rows[0]) + 1))
    assert set(table["class"]) <= set(globcons.CLASSES)
    assert not table["low_data"].any()  # min_neff = 0

    for index, record in enumerate(table.itertuples(index=False)):
        column = [row[index] for row in rows]
        cls = table["class"].iloc[index]
        gap = float(record.gap_fraction)
        listed = parse_residues(record.residues)
        assert 0.0 <= gap <= 1.0 + 1e-12
        # listed residues: real residues, distinct, descending, each rounding to at least 0.01
        letters = [letter for letter, _ in listed]
        assert len(set(letters)) == len(letters)
        assert set(letters) <= {c.upper() for c in column} & set(LETTERS)
        values = [value for _, value in listed]
        assert values == sorted(values, reverse=True)
        assert all(value >= 0.01 for value in values)
        assert sum(values) == pytest.approx(1.0, abs=0.005 * 22) or not listed
        # a gap-aware score: never above the residues' own conservation, zero without residues
        assert 0.0 <= record.conservation <= 1.0 - gap + 1e-9

        if abs(gap - 0.5) > 1e-9:
            assert (cls == "gap-rich") == (gap > 0.5)
        if cls in ("invariant", "conservative"):
            assert gap <= 0.5 + 1e-9 and listed and record.support >= 0.9 - 1e-9
        if cls == "invariant":
            assert record.consensus == listed[0][0]
        if listed:
            top = max(values)
            assert dict(listed)[record.consensus] == top
        else:
            assert record.consensus == "-"
        # With plain counts the whole rule can be written out independently (borderline probabilities aside).
        if scheme == "none" and abs(gap - 0.5) > 1e-9:
            assert cls == reference_class(column, float(record.n_eff), gap)
            assert gap == pytest.approx(sum(c in GAPS for c in column) / len(column))


# --------------------------------------------------------------------------------------------------
# (c) anything in, an Alignment or a GlobconsError out

PIECES = [">", ">a", ">a desc", ">b", ">a", "\n", "\r\n", "\n\n", "ACDE", "mkvl", "WY", "-", ".", "~", "*",
          " ", "\t", "X", "B", "u", "o", "1", "#", "ACGT", "ACGTACGTACGTACGTACGTAC", "# STOCKHOLM 1.0\n",
          "//\n", "#=GC SS_cons ", "#=GR a SS ", "#=GF ID x\n", "a ACDE\n", "b AC-E\n", "#NEXUS\n",
          "begin data;\n", "matrix\n", ";\nend;\n", "dimensions ntax=2 nchar=4;\n", " 2 4\n", "3 5\n",
          "<html>", "\x00", "\xef\xbb\xbf", "é", "\x1f\x8b"]


def _parse_any(data: bytes, **kwargs) -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            result = parse_alignment(data, **kwargs)
        except GlobconsError:
            return
    assert isinstance(result, Alignment)
    assert result.codes.dtype == np.uint8 and result.codes.ndim == 2
    assert result.n_rows == len(result.ids) == len(set(result.ids))
    assert int(result.codes.max()) <= 23


@SETTINGS
@given(st.binary(max_size=400), st.sampled_from([None, "fasta", "a2m", "stockholm", "phylip", "nexus"]))
def test_arbitrary_bytes(data, fmt):
    _parse_any(data, format=fmt)


@SETTINGS
@given(st.lists(st.sampled_from(PIECES), max_size=40),
       st.sampled_from([None, "fasta", "a2m", "stockholm", "phylip", "nexus"]), st.booleans())
def test_fasta_ish_text(pieces, fmt, keep_inserts):
    data = "".join(pieces).encode("utf-8", errors="surrogateescape")
    _parse_any(data, format=fmt, keep_inserts=keep_inserts)
    _parse_any(data, name="x.a2m", keep_inserts=keep_inserts)
