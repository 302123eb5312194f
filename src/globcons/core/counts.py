"""Per-column counts of every code: the one pass over the code matrix that every score starts from."""

from __future__ import annotations

import numpy as np

from globcons.core.alphabet import N_CODES

__all__ = ["column_counts", "block_counts", "CHUNK_ROWS"]

#: Rows per block when a pass would otherwise need an (N x L) float array: bounds the temporary memory
#: to about CHUNK_ROWS * L * 8 bytes whatever N is.
CHUNK_ROWS = 16384


def block_counts(block: np.ndarray, weights: np.ndarray | None = None) -> np.ndarray:
    """Flat (L * N_CODES) weighted counts of one block of rows; ``weights`` per row or None for 1 each."""
    n_columns = block.shape[1]
    size = n_columns * N_CODES
    flat = (block + (np.arange(n_columns, dtype=np.int64) * N_CODES)[None, :]).ravel()
    if weights is None:
        return np.bincount(flat, minlength=size).astype(np.float64)
    row_weights = np.broadcast_to(weights[:, None], block.shape).ravel()
    return np.bincount(flat, weights=row_weights, minlength=size)


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
