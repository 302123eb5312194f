"""Small builders shared by the tests."""

from __future__ import annotations

import numpy as np

from globcons.alignment import Alignment
from globcons.alphabet import BYTE_TO_CODE


def alignment_of(*rows: str, ids: list[str] | None = None) -> Alignment:
    """An Alignment from equal-length strings ('-' gaps); ids r1, r2, ... unless given."""
    raw = np.frombuffer("".join(rows).encode("ascii"), dtype=np.uint8)
    codes = BYTE_TO_CODE[raw].reshape(len(rows), len(rows[0])).copy()
    return Alignment(ids=tuple(ids or [f"r{i + 1}" for i in range(len(rows))]), codes=codes)


def write_fasta(path, rows: list[str], ids: list[str] | None = None) -> str:
    ids = ids or [f"r{i + 1}" for i in range(len(rows))]
    path.write_text("".join(f">{i}\n{r}\n" for i, r in zip(ids, rows)))
    return str(path)
