"""Compiled kernels of :mod:`globcons.align.dp` (numba): the same recurrences, a few queries at a time.

Importing this module imports numba (an optional dependency: ``pip install 'globcons[fast]'``) and
compiles nothing yet; the kernels compile on first call and are cached on disk (``cache=True``), so a
later process only loads them. :mod:`globcons.align.dp` decides when to use them (above a size
threshold, when numba is importable) and keeps its numpy path as the reference.

Queries are taken longest first in groups of up to :data:`LANES`, padded to the group's longest with a
code scoring ``-inf`` (as the numpy path pads its batches), and the innermost loop runs over the lanes of
a group, which the compiler turns into vector instructions: for that the score look-up is done apart,
column by column, and the previous and current column's arrays are chosen by parity rather than swapped
(either change alone kept the loop scalar, three times slower). The traceback bits are integer
arithmetic on comparisons, not branches: branches on the data mispredict and cost three times as much.
Measured on the development machine (2 shared cores, ``benchmarks/bench_dp.py``): about 0.6 ns per
cell for scores and 3.5 with traceback, against 8 and 20 for the numpy path.

The kernels give the numpy path's scores and tracebacks exactly, so they repeat its floating-point
operations, not just its mathematics: the insertion state is the same prefix maximum
(``max_{k < i}(M[k] + k * e) - (o + (i - 1) * e)``, which rounds differently from the textbook
``max(M[i-1] - o, I[i-1] - e)``), each maximum takes the same two operands, nothing is reordered or
fused (the only fast-math assumptions are no NaN and no signed zero, see :data:`_FLAGS`), and the
traceback bits follow ``dp._forward`` (ties: match over insertion over deletion, the free start unless a
predecessor is positive, a gap opened rather than extended, the end cell of lowest column, then lowest
position). Three rearrangements change no value: the first column's deletions cost ``+inf`` (they are
``-inf`` either way), the last column's insertions are computed with the unused cost at index ``M`` (a
traceback never reads them), and the scores kernel computes ``D[i, j + 1]`` while filling column ``j``
(it depends on that column only). ``tests/test_dp_compiled.py`` compares both paths on random,
tie-heavy and real cases.
"""

from __future__ import annotations

import numpy as np
from numba import njit

__all__ = ["LANES", "scores_kernel", "traceback_kernel"]

#: Queries of one group (at most): the compiler vectorises loops of 40 or more lanes; 64 measured best.
LANES = 64
#: Floating-point assumptions the compiler may make (they let it use the processor's max instruction,
#: a quarter faster): no NaN (none arises: scores are finite, and infinities only meet finite values or
#: each other with the same sign) and no signed zeros (zeros compare equal, so no comparison, traceback
#: or printed table changes). Nothing that reorders or fuses arithmetic.
_FLAGS = {"nnan", "nsz"}


@njit(cache=True, nogil=True)
def _group_codes(codes, offsets, order, first, pad, lanes):  # pragma: no cover - compiled
    """Codes of the group ``order[first:first + lanes]``, (W, lanes) padded with ``pad``."""
    width = offsets[order[first] + 1] - offsets[order[first]]  # the longest: queries come longest first
    out = np.empty((width, lanes), dtype=np.intp)
    for b in range(lanes):
        q = order[first + b]
        start = offsets[q]
        length = offsets[q + 1] - start
        for i in range(width):
            out[i, b] = codes[start + i] if i < length else pad
    return out


@njit(cache=True, nogil=True, fastmath=_FLAGS)
def _scores_group(table, od, ed, oi, ei, qcodes, best):  # pragma: no cover - compiled
    """Best score of each lane of one padded group into ``best``.

    Only H of the previous column and D of the current one are kept: D[i, j + 1] depends on column j
    alone, so it is computed there (the same two subtractions and maximum as the numpy path).
    """
    neg = -np.inf
    n_cols = table.shape[0]
    width, lanes = qcodes.shape
    h_a, h_b = np.full((width + 1, lanes), neg), np.full((width + 1, lanes), neg)
    d_a, d_b = np.full((width + 1, lanes), neg), np.full((width + 1, lanes), neg)
    s = np.empty((width, lanes))
    acc = np.empty(lanes)  # running max_{k < i} (M[k] + k * e): the insertion's prefix maximum
    m_before = np.empty(lanes)  # M[i - 1] of the current column
    best[:lanes] = neg
    for j in range(n_cols):
        if j % 2:  # by parity: swapping names in the loop keeps the compiler from vectorising it
            h_prev, d_here, h_cur, d_next = h_b, d_b, h_a, d_a
        else:
            h_prev, d_here, h_cur, d_next = h_a, d_a, h_b, d_b
        o = oi[j + 1]
        e = ei[j + 1]
        od_next = od[j + 1] if j + 1 < n_cols else np.inf
        ed_next = ed[j + 1] if j + 1 < n_cols else np.inf
        row = table[j]
        for i in range(width):  # the look-up apart, so that the main loop vectorises
            for b in range(lanes):
                s[i, b] = row[qcodes[i, b]]
        for b in range(lanes):
            acc[b] = neg
            m_before[b] = neg
        for i in range(1, width + 1):
            k = float(i - 1)
            ke = k * e
            oke = o + k * e
            for b in range(lanes):
                h = h_prev[i - 1, b]
                start = h if h >= 0.0 else 0.0  # np.maximum(h, 0.0)
                m = s[i - 1, b] + start
                d = d_here[i, b]
                top_best = best[b]
                best[b] = top_best if top_best >= m else m
                shifted = m_before[b] + ke
                a = acc[b]
                a = a if a >= shifted else shifted  # np.maximum.accumulate
                acc[b] = a
                m_before[b] = m
                ins = a - oke
                top = m if m >= ins else ins
                h_cur[i, b] = top if top >= d else d
                opened = m - od_next
                extended = d - ed_next
                d_next[i, b] = extended if extended >= opened else opened  # np.maximum(extended, opened)


@njit(cache=True, nogil=True)
def scores_kernel(table, od, ed, oi, ei, codes, offsets, order, out):  # pragma: no cover - compiled
    """Best score of every query (``codes[offsets[q]:offsets[q + 1]]``) into ``out``.

    ``table`` is the (M, K + 1) float64 profile whose last column (the pad code) is ``-inf``,
    ``od``/``ed`` (M,) and ``oi``/``ei`` (M + 1,) the gap costs, ``codes`` the queries' codes end to end,
    ``offsets`` (N + 1,) int64, ``order`` the queries longest first.
    """
    n = order.shape[0]
    pad = table.shape[1] - 1
    best = np.empty(LANES)
    for first in range(0, n, LANES):
        lanes = min(LANES, n - first)
        qcodes = _group_codes(codes, offsets, order, first, pad, lanes)
        _scores_group(table, od, ed, oi, ei, qcodes, best)
        for b in range(lanes):
            out[order[first + b]] = best[b]


@njit(cache=True, nogil=True, fastmath=_FLAGS)
def _trace_group(table, od, ed, oi, ei, qcodes, pointers, best, end_i, end_j):  # pragma: no cover - compiled
    """Fill one padded group with traceback bits (``pointers[j, i, lane]``, as ``dp._forward`` sets them)."""
    neg = -np.inf
    n_cols = table.shape[0]
    width, lanes = qcodes.shape
    work = np.full((8, width + 1, lanes), neg)  # M, I, D, H of two columns
    s = np.empty((width, lanes))
    acc = np.empty(lanes)
    for b in range(lanes):
        best[b] = neg
        end_i[b] = 0
        end_j[b] = 0
    for j in range(n_cols):
        # The previous and current column's arrays chosen by parity: swapping names in the loop keeps the
        # compiler from vectorising it.
        if j % 2:
            m_prev, i_prev, d_prev, h_prev = work[4], work[5], work[6], work[7]
            m_cur, i_cur, d_cur, h_cur = work[0], work[1], work[2], work[3]
        else:
            m_prev, i_prev, d_prev, h_prev = work[0], work[1], work[2], work[3]
            m_cur, i_cur, d_cur, h_cur = work[4], work[5], work[6], work[7]
        o = oi[j + 1]
        e = ei[j + 1]
        od_j = od[j] if j > 0 else np.inf
        ed_j = ed[j] if j > 0 else np.inf
        row = table[j]
        ptr = pointers[j]
        for i in range(width):
            for b in range(lanes):
                s[i, b] = row[qcodes[i, b]]
        for b in range(lanes):
            acc[b] = neg
        for i in range(1, width + 1):
            k = float(i - 1)
            ke = k * e
            oke = o + k * e
            for b in range(lanes):
                h = h_prev[i - 1, b]
                start = h if h >= 0.0 else 0.0
                m = s[i - 1, b] + start
                # where the match came from: 1 M, 2 I, 3 D, 0 the free start (no positive predecessor),
                # as integer arithmetic on comparisons: branches on these data would mispredict
                not_m = np.uint8(m_prev[i - 1, b] != h)
                not_i = np.uint8(i_prev[i - 1, b] != h)
                bits = np.uint8(h > 0.0) * (np.uint8(1) + not_m * (np.uint8(1) + not_i))
                opened = m_prev[i, b] - od_j
                extended = d_prev[i, b] - ed_j
                d = extended if extended >= opened else opened
                bits |= np.uint8(opened >= extended) << np.uint8(3)
                m_cur[i, b] = m
                d_cur[i, b] = d
                better = m > best[b]  # strict: the lowest column, then the lowest position, keeps a tie
                best[b] = m if better else best[b]
                end_i[b] = i if better else end_i[b]
                end_j[b] = j if better else end_j[b]
                m_before = m_cur[i - 1, b]
                shifted = m_before + ke
                a = acc[b]
                a = a if a >= shifted else shifted
                acc[b] = a
                ins = a - oke
                bits |= np.uint8(m_before - o >= i_cur[i - 1, b] - e) << np.uint8(2)
                i_cur[i, b] = ins
                top = m if m >= ins else ins
                h_cur[i, b] = top if top >= d else d
                ptr[i, b] = bits


@njit(cache=True, nogil=True)
def _trace_lane(pointers, lane, end_i, end_j, columns, base):  # pragma: no cover - compiled
    """Follow one lane's pointers from its end cell; returns (query start, profile start)."""
    i, j, state = end_i, end_j, 1
    while True:
        bits = pointers[j, i, lane]
        if state == 1:  # match
            columns[base + i - 1] = j
            source = bits & 3
            if source == 0:
                return i - 1, j
            i -= 1
            j -= 1
            state = source
        elif state == 2:  # insertion
            state = 1 if bits & 4 else 2
            i -= 1
        else:  # deletion
            state = 1 if bits & 8 else 3
            j -= 1


@njit(cache=True, nogil=True)
def traceback_kernel(table, od, ed, oi, ei, codes, offsets, order, max_pointer_bytes, scores, columns,
                     ends):  # pragma: no cover - compiled
    """Score and placement of every query, as ``dp.align`` traces it back.

    Arguments as :func:`scores_kernel`; a group holds fewer lanes where its pointers (M bytes per cell)
    would pass ``max_pointer_bytes`` (at least one query). Fills ``scores`` (N,), ``columns`` (the
    queries' residues end to end, int64, set to -1 by the caller: the 0-based column of each matched
    residue) and ``ends`` (N, 4) int64: query start, query end, profile start, profile end of each
    aligned region (0-based, half-open).
    """
    n = order.shape[0]
    n_cols = table.shape[0]
    pad = table.shape[1] - 1
    best = np.empty(LANES)
    end_i = np.empty(LANES, dtype=np.int64)
    end_j = np.empty(LANES, dtype=np.int64)
    first = 0
    while first < n:
        width = offsets[order[first] + 1] - offsets[order[first]]
        lanes = min(LANES, n - first, max(1, max_pointer_bytes // (n_cols * (width + 1))))
        qcodes = _group_codes(codes, offsets, order, first, pad, lanes)
        pointers = np.zeros((n_cols, width + 1, lanes), dtype=np.uint8)
        _trace_group(table, od, ed, oi, ei, qcodes, pointers, best, end_i, end_j)
        for b in range(lanes):
            q = order[first + b]
            scores[q] = best[b]
            q_start, p_start = _trace_lane(pointers, b, end_i[b], end_j[b], columns, offsets[q])
            ends[q, 0] = q_start
            ends[q, 1] = end_i[b]
            ends[q, 2] = p_start
            ends[q, 3] = end_j[b] + 1
        first += lanes
