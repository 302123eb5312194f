"""Compiled kernels of :mod:`globcons.align.dp` (numba): the same recurrences, a few queries at a time.

Importing this module imports numba (an optional dependency: ``pip install 'globcons[fast]'``) and
compiles nothing yet; the kernels compile on first call and are cached on disk (``cache=True``), so a
later process only loads them. :mod:`globcons.align.dp` decides when to use them (above a size
threshold, when numba is importable) and keeps its numpy path as the reference.

Queries are taken longest first in groups of :data:`LANES`, padded to the group's longest with a code
scoring ``-inf`` (as the numpy path pads its batches), and the innermost loop runs over the lanes of a
group: independent recurrences the processor overlaps. (The compiler does not turn that loop into vector
instructions, because of the score look-up; gathering the scores first vectorises it but measured no
faster.) The traceback bits are integer arithmetic on comparisons, not branches: branches on the data
mispredict, and cost three times the arithmetic. Measured on the development machine (2 shared cores):
about 2 ns per cell for scores and 3 ns with traceback, against 8 and 20 for the numpy path
(``benchmarks/bench_dp.py``).

The kernels give bit for bit the numpy path's scores and tracebacks, so they repeat its floating-point
operations, not just its mathematics: the insertion state is the same prefix maximum
(``max_{k < i}(M[k] + k * e) - (o + (i - 1) * e)``, which rounds differently from the textbook
``max(M[i-1] - o, I[i-1] - e)``), every maximum picks its operands as numpy's ``maximum`` does, no
fast-math flag lets the compiler reassociate or fuse, and the traceback bits follow ``dp._forward`` (ties:
match over insertion over deletion, the free start unless a predecessor is positive, a gap opened rather
than extended, the end cell of lowest column, then lowest position). Two simplifications change no result:
the first column's deletions cost ``+inf`` (they are ``-inf`` either way) and the last column's
insertions are computed with the unused cost at index ``M``; a traceback never reads either.
``tests/test_dp.py`` compares both paths on random and real cases.
"""

from __future__ import annotations

import numpy as np
from numba import njit

__all__ = ["LANES", "scores_kernel", "traceback_kernel"]

#: Queries handled together by the innermost loop (4 and 16 measured no faster; fewer pads than 16).
LANES = 8


@njit(cache=True, nogil=True)
def _group_codes(codes, offsets, order, first, pad, out):  # pragma: no cover - compiled
    """Codes of the group ``order[first:first + LANES]`` into ``out`` (W, LANES), padded; returns lengths."""
    lengths = np.zeros(LANES, dtype=np.int64)
    for b in range(LANES):
        if first + b < order.shape[0]:
            q = order[first + b]
            lengths[b] = offsets[q + 1] - offsets[q]
    width = lengths[0]
    for i in range(width):
        for b in range(LANES):
            if i < lengths[b]:
                out[i, b] = codes[offsets[order[first + b]] + i]
            else:
                out[i, b] = pad
    return lengths


@njit(cache=True, nogil=True)
def _scores_group(table, od, ed, oi, ei, qcodes, width, m_a, d_a, h_a, m_b, d_b, h_b, best):  # pragma: no cover
    """Best score of each lane of one padded group; only M, D and H of the previous column are kept."""
    neg = -np.inf
    n_cols = table.shape[0]
    for i in range(width + 1):
        for b in range(LANES):
            m_a[i, b] = neg
            d_a[i, b] = neg
            h_a[i, b] = neg
            m_b[i, b] = neg
            d_b[i, b] = neg
            h_b[i, b] = neg
    for b in range(LANES):
        best[b] = neg
    acc = np.empty(LANES)
    swap = False
    for j in range(n_cols):
        if swap:
            m_prev, d_prev, h_prev, m_cur, d_cur, h_cur = m_b, d_b, h_b, m_a, d_a, h_a
        else:
            m_prev, d_prev, h_prev, m_cur, d_cur, h_cur = m_a, d_a, h_a, m_b, d_b, h_b
        swap = not swap
        o = oi[j + 1]
        e = ei[j + 1]
        od_j = od[j] if j > 0 else np.inf
        ed_j = ed[j] if j > 0 else np.inf
        row = table[j]
        for b in range(LANES):
            acc[b] = neg
        for i in range(1, width + 1):
            k = float(i - 1)
            ke = k * e
            oke = o + k * e
            for b in range(LANES):
                h = h_prev[i - 1, b]
                start = h if h >= 0.0 else 0.0  # np.maximum(h, 0.0)
                m = row[qcodes[i - 1, b]] + start
                opened = m_prev[i, b] - od_j
                extended = d_prev[i, b] - ed_j
                d = extended if extended >= opened else opened  # np.maximum(extended, opened)
                m_cur[i, b] = m
                d_cur[i, b] = d
                top_best = best[b]
                best[b] = top_best if top_best >= m else m
                shifted = m_cur[i - 1, b] + ke
                a = acc[b]
                a = a if a >= shifted else shifted  # np.maximum.accumulate
                acc[b] = a
                ins = a - oke
                top = m if m >= ins else ins
                h_cur[i, b] = top if top >= d else d


@njit(cache=True, nogil=True)
def scores_kernel(table, od, ed, oi, ei, codes, offsets, order, out):  # pragma: no cover - compiled
    """Best score of every query (``codes[offsets[q]:offsets[q + 1]]``) into ``out``.

    ``table`` is the (M, K + 1) float64 profile whose last column (the pad code) is ``-inf``,
    ``od``/``ed`` (M,) and ``oi``/``ei`` (M + 1,) the gap costs, ``codes`` the queries' codes end to end,
    ``offsets`` (N + 1,) int64, ``order`` the queries longest first.
    """
    n = order.shape[0]
    if n == 0:
        return
    longest = offsets[order[0] + 1] - offsets[order[0]]
    pad = table.shape[1] - 1
    qcodes = np.empty((longest, LANES), dtype=np.intp)
    shape = (longest + 1, LANES)
    m_a, d_a, h_a = np.empty(shape), np.empty(shape), np.empty(shape)
    m_b, d_b, h_b = np.empty(shape), np.empty(shape), np.empty(shape)
    best = np.empty(LANES)
    for first in range(0, n, LANES):
        lengths = _group_codes(codes, offsets, order, first, pad, qcodes)
        _scores_group(table, od, ed, oi, ei, qcodes, lengths[0], m_a, d_a, h_a, m_b, d_b, h_b, best)
        for b in range(min(LANES, n - first)):
            out[order[first + b]] = best[b]


@njit(cache=True, nogil=True)
def _trace_group(table, od, ed, oi, ei, qcodes, width, work, pointers, best, end_i, end_j):  # pragma: no cover
    """Fill one padded group with traceback bits (``pointers[j, i, lane]``, as ``dp._forward`` sets them)."""
    neg = -np.inf
    n_cols = table.shape[0]
    for s in range(work.shape[0]):
        for i in range(width + 1):
            for b in range(LANES):
                work[s, i, b] = neg
    for b in range(LANES):
        best[b] = neg
        end_i[b] = 0
        end_j[b] = 0
    acc = np.empty(LANES)
    for j in range(n_cols):
        base_prev = 4 * (j % 2)
        base_cur = 4 - base_prev
        m_prev, i_prev, d_prev, h_prev = work[base_prev], work[base_prev + 1], work[base_prev + 2], work[base_prev + 3]
        m_cur, i_cur, d_cur, h_cur = work[base_cur], work[base_cur + 1], work[base_cur + 2], work[base_cur + 3]
        o = oi[j + 1]
        e = ei[j + 1]
        od_j = od[j] if j > 0 else np.inf
        ed_j = ed[j] if j > 0 else np.inf
        row = table[j]
        ptr = pointers[j]
        for b in range(LANES):
            acc[b] = neg
        for i in range(1, width + 1):
            k = float(i - 1)
            ke = k * e
            oke = o + k * e
            for b in range(LANES):
                h = h_prev[i - 1, b]
                start = h if h >= 0.0 else 0.0
                m = row[qcodes[i - 1, b]] + start
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
def traceback_kernel(table, od, ed, oi, ei, codes, offsets, order, scores, columns, ends):  # pragma: no cover
    """Score and placement of every query, as ``dp.align`` traces it back.

    Arguments as :func:`scores_kernel`; fills ``scores`` (N,), ``columns`` (the queries' residues end to
    end, int64, set to -1 by the caller: the 0-based column of each matched residue) and ``ends`` (N, 4)
    int64: query start, query end, profile start, profile end of each aligned region (0-based, half-open).
    """
    n = order.shape[0]
    if n == 0:
        return
    longest = offsets[order[0] + 1] - offsets[order[0]]
    pad = table.shape[1] - 1
    qcodes = np.empty((longest, LANES), dtype=np.intp)
    work = np.empty((8, longest + 1, LANES))
    pointers = np.zeros((table.shape[0], longest + 1, LANES), dtype=np.uint8)
    best = np.empty(LANES)
    end_i = np.empty(LANES, dtype=np.int64)
    end_j = np.empty(LANES, dtype=np.int64)
    for first in range(0, n, LANES):
        lengths = _group_codes(codes, offsets, order, first, pad, qcodes)
        _trace_group(table, od, ed, oi, ei, qcodes, lengths[0], work, pointers, best, end_i, end_j)
        for b in range(min(LANES, n - first)):
            q = order[first + b]
            scores[q] = best[b]
            q_start, p_start = _trace_lane(pointers, b, end_i[b], end_j[b], columns, offsets[q])
            ends[q, 0] = q_start
            ends[q, 1] = end_i[b]
            ends[q, 2] = p_start
            ends[q, 3] = end_j[b] + 1
