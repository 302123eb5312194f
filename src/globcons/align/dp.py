"""Batched, vectorised placement of protein sequences onto a profile (glocal affine-gap alignment).

A profile has ``M`` columns and gives, for every column ``j`` and residue code ``k``, the score
``S[j, k]`` of aligning a residue with code ``k`` to that column (for example the log-odds profile
scores of Gribskov, McLachlan & Eisenberg 1987, PNAS 84:4355, or a substitution-matrix row of a single
reference chain). Gaps are affine with position-specific costs, as in Gotoh 1982 (J Mol Biol 162:705):
a gap of length ``L`` costs ``open + (L - 1) * extend``, both positive and subtracted from the score.

Model
-----
Query residues are ``x_1 .. x_n`` (``i``), profile columns are ``1 .. M`` (``j``). In the formulas,
``S[j, .]``, ``open_delete[j]`` and ``extend_delete[j]`` belong to column ``j`` (array index
``j - 1``); the insert costs are indexed by the column the insertion follows (array index ``j`` =
after column ``j``, 0 = before the first column, ``M`` = after the last). Three states:

``M[i, j]`` residue ``i`` matched to column ``j``::

    M[i, j] = S[j, x_i] + max(0, M[i-1, j-1], I[i-1, j-1], D[i-1, j-1])

``I[i, j]`` residue ``i`` inserted after column ``j`` (column ``j`` was the last one used)::

    I[i, j] = max(M[i-1, j] - open_insert[j], I[i-1, j] - extend_insert[j])

``D[i, j]`` column ``j`` deleted (residue ``i`` was the last one used)::

    D[i, j] = max(M[i, j-1] - open_delete[j], D[i, j-1] - extend_delete[j])

with every state ``-inf`` outside ``1 <= i <= n``, ``1 <= j <= M``. The score is ``max M[i, j]``
over all cells. The ``0`` in ``M`` is a free start: leading profile columns and leading query
residues are left out at no cost, and taking the maximum over all cells leaves trailing ones out at no
cost too. The alignment therefore runs from one matched pair to another, with free end gaps on both
sequences; since gap costs are positive, an optimal alignment never begins or ends with a gap, so this
is the same optimum as a local alignment that may not start or end in a gap. It always holds at least
one matched pair, so a score can be negative. An insertion may not sit directly next to a deletion
(no ``I <-> D`` transition): query residues facing profile columns are aligned to them (as
mismatches, if need be), so every residue inside the aligned region either has a column or lies in an
insertion between two matched columns. (A Gotoh local aligner that allows the switch at the price of
a further gap opening scores at least as high, and equally unless its optimum uses such a switch.)
Insert costs at index 0 and ``M`` are accepted for uniformity but never used: nothing is inserted
before the first or after the last aligned column.

Computation
-----------
The Python loop runs over the ``M`` profile columns only. In each column, ``M`` and ``D`` follow for
all query positions of all queries of a batch from the previous column by whole-array operations.
``I`` runs along the query within one column, where its cost is constant, so it is a prefix maximum::

    I[i, j] = max_{k < i} (M[k, j] + k * e) - o - (i - 1) * e      (o, e: column j's insert costs)

computed with ``np.maximum.accumulate``. Queries are sorted by length and padded to the longest of
their batch with an extra code whose score is ``-inf``, so padded cells never contribute; every
operation is elementwise per query, so results do not depend on the batch a query lands in. The
arithmetic is ``float64`` throughout: ``float32`` was measured only about 20% faster, with score
errors near 1e-4, not worth losing exact agreement between runs and references.

Compiled kernels
----------------
When numba is installed (``pip install 'globcons[fast]'``), :mod:`globcons.align.dp_compiled` holds the
same recurrences compiled, the same scores and tracebacks, about twelve times faster for scores and five
for tracebacks. Loading them costs time (numba's import and its on-disk cache: about 0.8 s; the
first compilation on a machine, about 4 s, is cached), so a process uses the numpy path until its
dynamic programming reaches :data:`COMPILED_AFTER_CELLS` cells (counting the call at hand) and the
compiled kernels from then on: small runs never pay for the compiler, large ones pay once. The
``kernel`` argument, or the environment variable ``GLOBCONS_DP_KERNEL`` (``numpy``, ``compiled``,
``auto``), forces a choice (benchmarks and tests).

Tie rule of the traceback (deterministic): the end is the maximal ``M`` cell of lowest column, then
lowest query position; a match's predecessor is chosen ``M`` over ``I`` over ``D``, and the free
start is taken when no predecessor is positive (so a prefix scoring exactly 0 is dropped); a gap is
opened rather than extended on equal scores (the shorter gap).
"""

from __future__ import annotations

import functools
import os
from collections.abc import Sequence
from dataclasses import dataclass
from types import ModuleType

import numpy as np

from globcons.errors import OptionError

__all__ = [
    "GapCosts",
    "Placement",
    "align_scores",
    "align",
    "SCORE_CHUNK_CELLS",
    "MAX_POINTER_BYTES",
    "KERNELS",
    "KERNEL_ENVIRONMENT",
    "COMPILED_AFTER_CELLS",
    "compiled_kernels",
    "prepare_kernels",
]

#: Cells (queries x padded length) of one batch in :func:`align_scores` and :func:`align`: large
#: enough that numpy's per-call overhead is negligible, small enough that the working arrays stay in
#: cache (measured best near 2**15; 2**17 is a third slower).
SCORE_CHUNK_CELLS = 1 << 15
#: Upper bound of the traceback pointer memory of one batch in :func:`align` (one byte per cell).
MAX_POINTER_BYTES = 128 * 2**20
#: Choices of the ``kernel`` argument: ``auto`` (see the module notes), ``numpy``, ``compiled`` (numba).
KERNELS = ("auto", "numpy", "compiled")
#: The environment variable that overrides ``kernel="auto"``.
KERNEL_ENVIRONMENT = "GLOBCONS_DP_KERNEL"
#: Cells (query residues x profile columns) of a process's dynamic programming from which ``auto`` uses
#: the compiled kernels: about a second of the numpy path, the cost of loading them from numba's cache.
COMPILED_AFTER_CELLS = 1 << 27

# Traceback pointer bits (one uint8 per cell): bits 0-1 say where a match came from, bit 2 whether an
# insertion was opened from a match, bit 3 whether a deletion was opened from a match (_forward sets
# bits 2 and 3 by shifts of 2 and 3).
_FROM_START, _FROM_M, _FROM_I, _FROM_D = 0, 1, 2, 3
_I_OPENED = 4
_D_OPENED = 8
_STATE_M, _STATE_I, _STATE_D = 1, 2, 3


def _cost_array(values: object, length: int, name: str) -> np.ndarray:
    array = np.array(values, dtype=np.float64)
    if array.shape != (length,):
        raise ValueError(f"{name} must have shape ({length},), got {array.shape}")
    if not (np.all(np.isfinite(array)) and np.all(array > 0)):
        raise ValueError(f"{name} must hold positive finite costs")
    array.setflags(write=False)
    return array


@dataclass(frozen=True, eq=False)
class GapCosts:
    """Position-specific affine gap costs of a profile with ``M`` columns (positive, subtracted).

    A gap of length ``L`` costs ``open + (L - 1) * extend`` (Gotoh 1982).

    Attributes
    ----------
    open_delete, extend_delete
        ``float64``, shape (M,): the cost of deleting column ``j`` (a gap in the query) as the first
        column of a deletion, or as a further one.
    open_insert, extend_insert
        ``float64``, shape (M + 1,): the cost of a query residue inserted after column ``j`` (index 0:
        before the first column, ``M``: after the last) as the first residue of an insertion, or as a
        further one. Indices 0 and ``M`` are never used by the free-end model of this module.

    The arrays are copied, validated (shape, positive and finite) and made read-only.
    """

    open_delete: np.ndarray
    extend_delete: np.ndarray
    open_insert: np.ndarray
    extend_insert: np.ndarray

    def __post_init__(self) -> None:
        od = np.asarray(self.open_delete)
        if od.ndim != 1 or od.shape[0] < 1:
            raise ValueError(f"open_delete must be 1-D with at least one column, got shape {od.shape}")
        m = od.shape[0]
        for name, length in (("open_delete", m), ("extend_delete", m), ("open_insert", m + 1),
                             ("extend_insert", m + 1)):
            object.__setattr__(self, name, _cost_array(getattr(self, name), length, name))

    @classmethod
    def constant(cls, n_columns: int, open: float, extend: float) -> GapCosts:
        """The same opening and extension costs everywhere, for insertions and deletions alike.

        Parameters
        ----------
        n_columns
            Number of profile columns ``M`` (at least 1).
        open, extend
            Positive costs: a gap of length ``L`` costs ``open + (L - 1) * extend``.
        """
        if int(n_columns) != n_columns or n_columns < 1:
            raise ValueError(f"n_columns must be a positive integer, got {n_columns!r}")
        m = int(n_columns)
        return cls(np.full(m, open, dtype=np.float64), np.full(m, extend, dtype=np.float64),
                   np.full(m + 1, open, dtype=np.float64), np.full(m + 1, extend, dtype=np.float64))

    @property
    def n_columns(self) -> int:
        """Number of profile columns ``M``."""
        return int(self.open_delete.shape[0])


@dataclass(frozen=True, eq=False)
class Placement:
    """One query's best placement on the profile.

    Attributes
    ----------
    score
        The alignment score (see the module notes).
    column_of_residue
        ``int64``, shape (n,): the 0-based profile column each query residue is matched to, or -1 for a
        residue that is inserted or lies outside the aligned region.
    query_start, query_end
        The aligned region of the query, 0-based half-open: residues ``query_start .. query_end - 1``
        (the first and last are matched).
    profile_start, profile_end
        The aligned region of the profile, 0-based half-open columns.
    """

    score: float
    column_of_residue: np.ndarray
    query_start: int
    query_end: int
    profile_start: int
    profile_end: int


def _check_profile(profile_scores: np.ndarray, gaps: GapCosts) -> np.ndarray:
    scores = np.asarray(profile_scores, dtype=np.float64)
    if scores.ndim != 2 or scores.shape[0] < 1 or scores.shape[1] < 1:
        raise ValueError(f"profile_scores must be 2-D (columns x codes), got shape {scores.shape}")
    if scores.shape[1] > 255:
        raise ValueError(f"at most 255 residue codes are supported, got {scores.shape[1]}")
    if not np.all(np.isfinite(scores)):
        raise ValueError("profile_scores must be finite")
    if not isinstance(gaps, GapCosts):
        raise TypeError(f"gaps must be a GapCosts, got {type(gaps).__name__}")
    if gaps.n_columns != scores.shape[0]:
        raise ValueError(f"gap costs are for {gaps.n_columns} columns, the profile has {scores.shape[0]}")
    return scores


def _as_queries(queries: Sequence[np.ndarray] | np.ndarray, lengths: Sequence[int] | np.ndarray | None,
                n_codes: int) -> list[np.ndarray]:
    """The queries as a list of 1-D ``uint8`` arrays, validated against the ``n_codes`` codes."""
    if isinstance(queries, np.ndarray) and queries.ndim == 2:
        n, width = queries.shape
        if lengths is None:
            lengths = np.full(n, width)
        lengths = np.asarray(lengths)
        if lengths.shape != (n,) or np.any(lengths < 0) or np.any(lengths > width):
            raise ValueError(f"lengths must be {n} values between 0 and {width}")
        rows = [queries[r, :int(lengths[r])] for r in range(n)]
    else:
        if lengths is not None:
            raise ValueError("lengths are only taken with a padded 2-D query array")
        rows = [np.asarray(q) for q in queries]
    out = []
    for r, row in enumerate(rows):
        if row.ndim != 1 or row.shape[0] == 0:
            raise ValueError(f"query {r} must be a non-empty 1-D code array, got shape {row.shape}")
        if row.dtype != np.uint8:
            if not np.issubdtype(row.dtype, np.integer):
                raise ValueError(f"query {r} must hold integer codes, got dtype {row.dtype}")
            if row.min() < 0 or row.max() >= n_codes:
                raise ValueError(f"query {r} holds codes outside 0..{n_codes - 1}")
            row = row.astype(np.uint8)
        out.append(row)
    if out and int(np.concatenate(out).max()) >= n_codes:
        raise ValueError(f"queries hold codes outside 0..{n_codes - 1}")
    return out


def _batches(lengths: np.ndarray, cells: int) -> list[np.ndarray]:
    """Query indices in batches of similar length (longest first), each of at most ``cells`` padded cells."""
    order = np.argsort(-lengths, kind="stable")
    batches = []
    start = 0
    while start < order.shape[0]:
        size = max(1, cells // (int(lengths[order[start]]) + 1))
        batches.append(order[start:start + size])
        start += size
    return batches


def _pad(rows: list[np.ndarray], members: np.ndarray, pad_code: int) -> np.ndarray:
    """The batch's codes, shape (W, B): query position along axis 0, padded with ``pad_code``."""
    width = max(rows[r].shape[0] for r in members)
    codes = np.full((width, members.shape[0]), pad_code, dtype=np.intp)
    for b, r in enumerate(members):
        codes[:rows[r].shape[0], b] = rows[r]
    return codes


def _forward(table: np.ndarray, gaps: GapCosts, codes: np.ndarray,
             pointers: np.ndarray | None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Fill the DP for one padded batch, column by column.

    The DP arrays have shape (W + 1, B): query position ``i`` along axis 0 (row 0: no residue
    consumed yet, always ``-inf``), queries along axis 1, so the shift ``i - 1`` is a contiguous
    slice and the prefix maximum runs across whole rows.

    Parameters
    ----------
    table
        ``float64``, shape (M, K + 1): profile scores with a last ``-inf`` column for the pad code.
    gaps
        The gap costs.
    codes
        ``intp``, shape (W, B): the batch, padded with code K (native-width indices make ``np.take``
        several times faster than ``uint8`` ones).
    pointers
        ``uint8``, shape (M, W + 1, B), filled with traceback bits, or None for scores only.

    Returns
    -------
    best, end_i, end_j
        ``float64`` shape (B,): best scores; ``int64`` shape (B,): the 1-based query position and
        0-based column of the end cell (only filled when ``pointers`` is given, else empty).
    """
    n_cols = table.shape[0]
    width, n_q = codes.shape
    shape = (width + 1, n_q)
    neg = -np.inf
    m_prev, m_cur = np.full(shape, neg), np.full(shape, neg)
    i_prev, i_cur = np.full(shape, neg), np.full(shape, neg)
    d_prev, d_cur = np.full(shape, neg), np.full(shape, neg)
    h = np.full(shape, neg)  # H = max(M, I, D) of the previous column
    start = np.zeros((width, n_q))  # max(0, H[i-1, j-1]): a match's best predecessor or the free start
    tmp = np.empty(shape)
    ramp = np.arange(width + 1, dtype=np.float64)
    od, ed = gaps.open_delete.tolist(), gaps.extend_delete.tolist()
    oi, ei = gaps.open_insert.tolist(), gaps.extend_insert.tolist()
    trace = pointers is not None
    if trace:
        best = np.full(n_q, neg)
        end_i = np.zeros(n_q, dtype=np.int64)
        end_j = np.zeros(n_q, dtype=np.int64)
        d_opened = np.zeros(shape, dtype=bool)
        flag_a = np.empty((width, n_q), dtype=bool)
        flag_b = np.empty((width, n_q), dtype=bool)
        bits = np.empty(shape, dtype=np.uint8)
    else:
        best_cells = np.full((width, n_q), neg)

    for j in range(n_cols):
        # Match: residue i against column j, after (i-1, j-1) or a free start.
        m_body = m_cur[1:]
        np.take(table[j], codes, out=m_body)
        m_body += start
        # Delete column j (reachable from column j-1 only, so -inf in the first column).
        if j > 0:
            np.subtract(m_prev, od[j], out=tmp)
            np.subtract(d_prev, ed[j], out=d_cur)
            if trace:
                np.greater_equal(tmp, d_cur, out=d_opened)
            np.maximum(d_cur, tmp, out=d_cur)
        if trace:
            # Where each match came from (ties: M over I over D; the free start unless a predecessor > 0).
            # With a = [M != H], b = [I != H] and p = [H > 0]: p * (1 + a * (1 + b)) is 1 (M), 2 (I),
            # 3 (D) or 0 (start), in uint8 arithmetic (np.copyto with where= is far slower).
            h_pred = h[:-1]
            ptr = pointers[j]
            ptr[0] = 0
            body = ptr[1:]
            np.not_equal(m_prev[:-1], h_pred, out=flag_a)
            np.not_equal(i_prev[:-1], h_pred, out=flag_b)
            np.add(flag_b.view(np.uint8), 1, out=body)
            body *= flag_a.view(np.uint8)
            body += 1
            np.greater(h_pred, 0.0, out=flag_a)
            body *= flag_a.view(np.uint8)
            np.left_shift(d_opened.view(np.uint8), 3, out=bits)
            ptr |= bits
            # End cell: strict improvement keeps the lowest column, argmax the lowest position.
            column_best = m_cur.max(axis=0)
            better = column_best > best
            best[better] = column_best[better]
            end_i[better] = m_cur.argmax(axis=0)[better]
            end_j[better] = j
        else:
            np.maximum(best_cells, m_body, out=best_cells)
        if j == n_cols - 1:
            break  # nothing follows the last column: its insertions and H are never used
        # Insert after column j: a prefix maximum along the query (constant costs within the column).
        o, e = oi[j + 1], ei[j + 1]
        np.add(m_cur, (ramp * e)[:, None], out=tmp)
        np.maximum.accumulate(tmp, axis=0, out=tmp)
        np.subtract(tmp[:-1], (o + ramp[:-1] * e)[:, None], out=i_cur[1:])
        if trace:
            np.subtract(m_cur, o, out=tmp)
            np.subtract(i_cur, e, out=h)  # h is free until it is recomputed below
            np.greater_equal(tmp[:-1], h[:-1], out=flag_a)
            np.left_shift(flag_a.view(np.uint8), 2, out=bits[1:])
            pointers[j][1:] |= bits[1:]
        np.maximum(m_cur, i_cur, out=h)
        np.maximum(h, d_cur, out=h)
        np.maximum(h[:-1], 0.0, out=start)
        m_prev, m_cur = m_cur, m_prev
        i_prev, i_cur = i_cur, i_prev
        d_prev, d_cur = d_cur, d_prev

    if not trace:
        best = best_cells.max(axis=0)
        end_i = end_j = np.zeros(0, dtype=np.int64)
    return best, end_i, end_j


@functools.cache
def compiled_kernels() -> ModuleType | None:
    """The compiled kernels (:mod:`globcons.align.dp_compiled`), or None when numba is not installed."""
    try:
        import globcons.align.dp_compiled as dp_compiled  # imports numba
    except (ImportError, RuntimeError):  # no numba, or numba unusable here (e.g. no place for its cache)
        return None
    return dp_compiled


# This process's dynamic programming so far: cells on the numpy path, and whether auto has switched.
_DP_CELLS = {"numpy": 0, "switched": 0}


def _kernel_for(kernel: str, cells: int) -> ModuleType | None:
    """The compiled kernels if this call uses them, else None (the numpy path); see the module notes."""
    if kernel not in KERNELS:
        raise ValueError(f"kernel must be one of {', '.join(KERNELS)}, got {kernel!r}")
    if kernel == "auto":
        kernel = os.environ.get(KERNEL_ENVIRONMENT, "") or "auto"
        if kernel not in KERNELS:
            raise OptionError(f"{KERNEL_ENVIRONMENT} must be one of {', '.join(KERNELS)}, got {kernel!r}")
    if kernel == "auto" and not _DP_CELLS["switched"] and _DP_CELLS["numpy"] + cells < COMPILED_AFTER_CELLS:
        kernel = "numpy"
    module = None if kernel == "numpy" else compiled_kernels()
    if module is None:
        if kernel == "compiled":
            raise OptionError("the compiled alignment kernels need numba: pip install 'globcons[fast]' (or set "
                              f"{KERNEL_ENVIRONMENT}=numpy)")
        _DP_CELLS["numpy"] += cells
    elif kernel == "auto":
        _DP_CELLS["switched"] = 1
    return module


def prepare_kernels(expected_cells: int) -> bool:
    """Load the compiled kernels now if the work ahead (``expected_cells`` cells) will use them.

    Applies the rule of ``kernel="auto"`` (see the module notes) to the work a caller knows is coming,
    without counting it as done: when it reaches :data:`COMPILED_AFTER_CELLS` (and numba is installed),
    both kernels are compiled or loaded from the cache and every later ``auto`` call uses them, so worker
    processes forked afterwards share them instead of each paying for the numpy path first and then the
    loading. Returns whether the compiled kernels are in use.
    """
    if _DP_CELLS["switched"]:
        return True
    if os.environ.get(KERNEL_ENVIRONMENT, "") == "numpy" or _DP_CELLS["numpy"] + expected_cells < COMPILED_AFTER_CELLS:
        return False
    if compiled_kernels() is None:
        return False
    # One tiny call of each kernel, with the argument types of real calls (read-only gap costs).
    scores, gaps, query = np.zeros((2, 2)), GapCosts.constant(2, 1.0, 1.0), [np.zeros(2, dtype=np.uint8)]
    align_scores(scores, gaps, query, kernel="compiled")
    align(scores, gaps, query, kernel="compiled")
    _DP_CELLS["switched"] = 1
    return True


def _packed(rows: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The queries end to end: codes, offsets (N + 1,) and the order longest first (as ``_batches``)."""
    lengths = np.fromiter((r.shape[0] for r in rows), dtype=np.int64, count=len(rows))
    offsets = np.zeros(len(rows) + 1, dtype=np.int64)
    np.cumsum(lengths, out=offsets[1:])
    return np.concatenate(rows), offsets, np.argsort(-lengths, kind="stable")


def _table(scores: np.ndarray) -> np.ndarray:
    table = np.empty((scores.shape[0], scores.shape[1] + 1))
    table[:, :-1] = scores
    table[:, -1] = -np.inf  # the pad code
    return table


def align_scores(profile_scores: np.ndarray, gaps: GapCosts, queries: Sequence[np.ndarray] | np.ndarray,
                 lengths: Sequence[int] | np.ndarray | None = None, *,
                 chunk_cells: int = SCORE_CHUNK_CELLS, kernel: str = "auto") -> np.ndarray:
    """Best glocal alignment score of every query against the profile, without traceback.

    Parameters
    ----------
    profile_scores
        ``float``, shape (M, K): score of residue code ``k`` at profile column ``j``; finite.
    gaps
        Gap costs for the ``M`` columns.
    queries
        A sequence of 1-D integer code arrays (``uint8`` preferred), each non-empty with codes below
        ``K``; or a padded 2-D array, shape (N, W), with ``lengths``.
    lengths
        ``int``, shape (N,): the length of each row of a padded 2-D ``queries`` (default: W).
    chunk_cells
        Padded cells (queries x length) handled per batch by the numpy path; affects speed only.
    kernel
        One of :data:`KERNELS`: the numpy path, the compiled one, or the choice of the module notes.
        Both give identical scores.

    Returns
    -------
    numpy.ndarray
        ``float64``, shape (N,): the scores, in query order (see the module notes for the model).
    """
    scores = _check_profile(profile_scores, gaps)
    rows = _as_queries(queries, lengths, scores.shape[1])
    out = np.empty(len(rows), dtype=np.float64)
    if not rows:
        return out
    table = _table(scores)
    compiled = _kernel_for(kernel, sum(r.shape[0] for r in rows) * scores.shape[0])
    if compiled is not None:
        codes, offsets, order = _packed(rows)
        compiled.scores_kernel(table, gaps.open_delete, gaps.extend_delete, gaps.open_insert, gaps.extend_insert,
                               codes, offsets, order, out)
        return out
    lens = np.array([r.shape[0] for r in rows], dtype=np.int64)
    for members in _batches(lens, max(1, int(chunk_cells))):
        codes = _pad(rows, members, scores.shape[1])
        out[members] = _forward(table, gaps, codes, None)[0]
    return out


def _traceback(ptr: bytes, stride: int, n: int, end_i: int, end_j: int) -> tuple[np.ndarray, int, int]:
    """Follow one query's pointers (``ptr[j * stride + i]``) from its end cell; a path of <= n + M steps."""
    column = np.full(n, -1, dtype=np.int64)
    i, j, state = end_i, end_j, _STATE_M
    while True:
        bits = ptr[j * stride + i]
        if state == _STATE_M:
            column[i - 1] = j
            source = bits & 3
            if source == _FROM_START:
                return column, i - 1, j
            i -= 1
            j -= 1
            state = source  # _FROM_M/_FROM_I/_FROM_D equal _STATE_M/_STATE_I/_STATE_D
        elif state == _STATE_I:
            state = _STATE_M if bits & _I_OPENED else _STATE_I
            i -= 1
        else:
            state = _STATE_M if bits & _D_OPENED else _STATE_D
            j -= 1


def align(profile_scores: np.ndarray, gaps: GapCosts, queries: Sequence[np.ndarray] | np.ndarray,
          lengths: Sequence[int] | np.ndarray | None = None, *,
          chunk_cells: int = SCORE_CHUNK_CELLS,
          max_pointer_bytes: int = MAX_POINTER_BYTES, kernel: str = "auto") -> list[Placement]:
    """Best glocal alignment of every query against the profile, with the residue-to-column placement.

    Parameters
    ----------
    profile_scores
        ``float``, shape (M, K): score of residue code ``k`` at profile column ``j``; finite.
    gaps
        Gap costs for the ``M`` columns.
    queries
        A sequence of 1-D integer code arrays (``uint8`` preferred), each non-empty with codes below
        ``K``; or a padded 2-D array, shape (N, W), with ``lengths``.
    lengths
        ``int``, shape (N,): the length of each row of a padded 2-D ``queries`` (default: W).
    chunk_cells
        Padded cells (queries x length) handled per batch; affects speed only.
    max_pointer_bytes
        Bound on the traceback pointers of one batch, ``M`` bytes per padded cell (so a batch holds
        at most ``min(chunk_cells, max_pointer_bytes // M)`` cells, and at least one query, which may
        exceed the bound alone); the traceback briefly holds a per-query copy too, so the peak is
        twice this. Affects memory and speed only (numpy path; the compiled one holds ``M`` bytes
        per cell of :data:`~globcons.align.dp_compiled.LANES` queries at a time).
    kernel
        One of :data:`KERNELS` (see :func:`align_scores`); both give identical placements.

    Returns
    -------
    list of Placement
        One per query, in query order. Scores equal those of :func:`align_scores`; ties are broken
        as the module notes say.
    """
    scores = _check_profile(profile_scores, gaps)
    rows = _as_queries(queries, lengths, scores.shape[1])
    if not rows:
        return []
    n_cols = scores.shape[0]
    table = _table(scores)
    compiled = _kernel_for(kernel, sum(r.shape[0] for r in rows) * n_cols)
    if compiled is not None:
        return _align_compiled(compiled, table, gaps, rows, int(max_pointer_bytes))
    lens = np.array([r.shape[0] for r in rows], dtype=np.int64)
    out: list[Placement | None] = [None] * len(rows)
    cells = max(1, min(int(chunk_cells), int(max_pointer_bytes) // n_cols))
    for members in _batches(lens, cells):
        codes = _pad(rows, members, scores.shape[1])
        stride = codes.shape[0] + 1
        pointers = np.empty((n_cols, stride, members.shape[0]), dtype=np.uint8)
        best, end_i, end_j = _forward(table, gaps, codes, pointers)
        per_query = np.ascontiguousarray(pointers.transpose(2, 0, 1))  # (B, M, W + 1)
        del pointers
        for b, r in enumerate(members.tolist()):
            # One query's pointers as bytes: indexing bytes is much cheaper than indexing an array.
            ptr = per_query[b].tobytes()
            column, q_start, p_start = _traceback(ptr, stride, int(lens[r]), int(end_i[b]), int(end_j[b]))
            out[r] = Placement(float(best[b]), column, q_start, int(end_i[b]), p_start, int(end_j[b]) + 1)
    return out  # type: ignore[return-value]


def _align_compiled(compiled: ModuleType, table: np.ndarray, gaps: GapCosts, rows: list[np.ndarray],
                    max_pointer_bytes: int) -> list[Placement]:
    """:func:`align` through the compiled traceback kernel."""
    codes, offsets, order = _packed(rows)
    best = np.empty(len(rows))
    columns = np.full(codes.shape[0], -1, dtype=np.int64)
    ends = np.empty((len(rows), 4), dtype=np.int64)
    compiled.traceback_kernel(table, gaps.open_delete, gaps.extend_delete, gaps.open_insert, gaps.extend_insert,
                              codes, offsets, order, max_pointer_bytes, best, columns, ends)
    per_query = np.split(columns, offsets[1:-1])
    return [Placement(score, column, q_start, q_end, p_start, p_end)
            for score, column, (q_start, q_end, p_start, p_end) in zip(best.tolist(), per_query, ends.tolist(),
                                                                       strict=True)]
