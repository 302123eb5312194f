"""Per-column counts of every code: the one pass over the code matrix that every score starts from."""

from __future__ import annotations

import numpy as np

from globcons.core.alphabet import N_CODES

__all__ = ["column_counts", "block_counts", "CHUNK_ROWS", "STEP_CELLS", "step_rows", "scratch", "column_offsets"]

#: Rows per block of a pass over the rows (the unit the in-memory and the streamed paths share, so both
#: sum the same numbers in the same order).
CHUNK_ROWS = 16384
#: Cells (rows x columns) of the inner steps of a pass. Their temporaries are kept and reused
#: (:func:`scratch`): fresh memory pages cost more here than the arithmetic on them.
STEP_CELLS = 1 << 19

_SCRATCH: dict[tuple[str, str], np.ndarray] = {}


def step_rows(n_columns: int) -> int:
    """Rows per inner step for rows of ``n_columns`` cells (about :data:`STEP_CELLS` cells)."""
    return max(1, STEP_CELLS // max(1, n_columns))


def scratch(name: str, shape: tuple[int, ...], dtype: type | np.dtype) -> np.ndarray:
    """A reusable work array of ``shape`` (contents undefined): one buffer per name and type, grown when
    too small, so the steps of a pass reuse the same memory pages."""
    dtype = np.dtype(dtype)
    size = int(np.prod(shape))
    key = (name, dtype.str)
    buffer = _SCRATCH.get(key)
    if buffer is None or buffer.size < size:
        buffer = _SCRATCH[key] = np.empty(max(size, 1), dtype=dtype)
    return buffer[:size].reshape(shape)


def column_offsets(n_columns: int) -> np.ndarray:
    """``j * N_CODES`` for every column ``j`` (int64): the flat index of code 0 of column ``j``."""
    return np.arange(n_columns, dtype=np.int64) * N_CODES


def block_counts(block: np.ndarray, weights: np.ndarray | None = None) -> np.ndarray:
    """Flat (L * N_CODES) weighted counts of one block of rows; ``weights`` per row or None for 1 each.

    One ``np.bincount`` per step of about :data:`STEP_CELLS` cells, on reused index and weight arrays.
    """
    n_rows, n_columns = block.shape
    size = n_columns * N_CODES
    offsets = column_offsets(n_columns)
    total = np.zeros(size, dtype=np.float64)
    step = step_rows(n_columns)
    for start in range(0, n_rows, step):
        part = block[start:start + step]
        index = scratch("count-index", part.shape, np.intp)
        np.add(part, offsets, out=index)
        if weights is None:
            total += np.bincount(index.ravel(), minlength=size)
            continue
        cell_weights = scratch("count-weight", part.shape, np.float64)
        cell_weights[...] = weights[start:start + part.shape[0], None]
        total += np.bincount(index.ravel(), weights=cell_weights.ravel(), minlength=size)
    return total


def column_counts(codes: np.ndarray, weights: np.ndarray | None = None, chunk_rows: int = CHUNK_ROWS) -> np.ndarray:
    """Weighted count of every code in every column.

    Parameters
    ----------
    codes
        ``uint8``, shape (N, L).
    weights
        Row weights, shape (N,), or None for a weight of 1 per row.
    chunk_rows
        Rows per block (memory bound only; the result does not depend on it beyond rounding).

    Returns
    -------
    numpy.ndarray
        ``float64``, shape (L, N_CODES): ``counts[j, c]`` is the summed weight of rows with code ``c``
        in column ``j``.
    """
    n_rows, n_columns = codes.shape
    total = np.zeros(n_columns * N_CODES, dtype=np.float64)
    for start in range(0, n_rows, chunk_rows):
        block_weights = None if weights is None else weights[start:start + chunk_rows]
        total += block_counts(codes[start:start + chunk_rows], block_weights)
    return total.reshape(n_columns, N_CODES)
