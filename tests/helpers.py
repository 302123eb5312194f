"""Small builders shared by the tests."""

from __future__ import annotations

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE


def alignment_of(*rows: str, ids: list[str] | None = None) -> Alignment:
    """An Alignment from equal-length strings ('-' gaps); ids r1, r2, ... unless given."""
    raw = np.frombuffer("".join(rows).encode("ascii"), dtype=np.uint8)
    codes = BYTE_TO_CODE[raw].reshape(len(rows), len(rows[0])).copy()
    return Alignment(ids=tuple(ids or [f"r{i + 1}" for i in range(len(rows))]), codes=codes)


def write_fasta(path, rows: list[str], ids: list[str] | None = None) -> str:
    ids = ids or [f"r{i + 1}" for i in range(len(rows))]
    path.write_text("".join(f">{i}\n{r}\n" for i, r in zip(ids, rows, strict=True)))
    return str(path)


def planted_family(sequence: str, n_kept: int, seed: int, rows: int = 40) -> tuple[Alignment, np.ndarray]:
    """A synthetic family from ``sequence``: ``n_kept`` columns (seeded choice) stay as in it (invariant by
    construction); every other column is randomised in about half the rows. Returns (alignment, kept columns)."""
    rng = np.random.default_rng(seed)
    keep = np.sort(rng.choice(len(sequence), n_kept, replace=False))
    letters = np.array(list("ACDEFGHIKLMNPQRSTVWY"))
    texts = []
    for _ in range(rows):
        row = np.array(list(sequence))
        change = rng.random(row.size) < 0.5
        change[keep] = False
        row[change] = rng.choice(letters, change.sum())
        texts.append("".join(row))
    return alignment_of(*texts, ids=[f"f{i}" for i in range(rows)]), keep
