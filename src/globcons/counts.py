"""Per-column counts of every code: the one pass over the code matrix that every score starts from."""

from __future__ import annotations

import numpy as np

from .alphabet import N_CODES

__all__ = ["column_counts", "CHUNK_ROWS"]

#: Rows per block when a pass would otherwise need an (N x L) float array: bounds the temporary memory
#: to about CHUNK_ROWS * L * 8 bytes whatever N is.
CHUNK_ROWS = 16384


def column_counts(codes: np.ndarray, weights: np.ndarray | None = None, chunk_rows: int = CHUNK_ROWS) -> np.ndarray:
    """Weighted count of every code in every column.

    Parameters
    ----------
    codes
        ``uint8``, shape (N, L).
    weights
        Row weights, shape (N,), or None for a weight of 1 per row.
    chunk_rows
        Rows per block (memory bound only; the result does not depend on it).

    Returns
    -------
    numpy.ndarray
        ``float64``, shape (L, N_CODES): ``counts[j, c]`` is the summed weight of rows with code ``c``
        in column ``j``.
    """
    n_rows, n_columns = codes.shape
    offsets = (np.arange(n_columns, dtype=np.int64) * N_CODES)[None, :]
    size = n_columns * N_CODES
    total = np.zeros(size, dtype=np.float64)
    for start in range(0, n_rows, chunk_rows):
        block = codes[start:start + chunk_rows]
        flat = (block + offsets).ravel()
        if weights is None:
            total += np.bincount(flat, minlength=size)
        else:
            row_weights = np.broadcast_to(weights[start:start + chunk_rows, None], block.shape).ravel()
            total += np.bincount(flat, weights=row_weights, minlength=size)
    return total.reshape(n_columns, N_CODES)
