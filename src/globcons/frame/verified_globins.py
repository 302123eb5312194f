"""Real globin sequences across the superfamily, each checked against two public copies of its record.

Package data ``data/family/globins.tsv`` (provenance in ``data/family/README.md`` and the checking logs in
``data/family/logs/``): accession, organism, group (lineage), the residues shipped, the proximal His (F8)
in the record's numbering with its source, and where the two independent copies of the record were
found. ``data/family/globins.sha256`` holds a checksum of every sequence; the tests hold the table
against it, so a changed residue cannot slip in unnoticed.

These are the raw material of the built-in reference family; placing them on the frame is separate work.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from functools import cache
from importlib import resources

__all__ = ["GROUPS", "VerifiedGlobin", "verified_globins", "stored_checksums", "sequence_checksum"]

#: Lineages of the superfamily, in the table's order.
GROUPS = ("vertebrate_myoglobin", "vertebrate_alpha", "vertebrate_beta", "neuroglobin", "cytoglobin", "agnathan",
          "invertebrate", "leghemoglobin", "plant_nonsymbiotic", "bacterial_single_domain", "flavohemoglobin",
          "truncated_2on2")


@dataclass(frozen=True)
class VerifiedGlobin:
    """One row of the table.

    Attributes
    ----------
    accession, entry_name, organism, group
        The record (UniProtKB, or RefSeq where no UniProtKB entry was confirmed) and its lineage.
    first
        Record number of the first residue shipped (1 when the whole record, initiator Met included, is).
    sequence
        The residues shipped, one-letter, upper case.
    proximal_his
        Record number of the proximal His (F8), or None; :attr:`proximal_his_source` says where it is from.
    copies
        Where the two independent public copies of the record were found.
    notes
        Anything a user of the row should know.
    """

    accession: str
    entry_name: str
    organism: str
    group: str
    first: int
    sequence: str
    proximal_his: int | None
    proximal_his_source: str
    copies: tuple[str, str]
    notes: str


def _folder():
    return resources.files("globcons") / "data" / "family"


def sequence_checksum(sequence: str) -> str:
    """SHA-256 of a sequence (upper case, ASCII), as ``globins.sha256`` holds it."""
    return hashlib.sha256(sequence.upper().encode("ascii")).hexdigest()


@cache
def stored_checksums() -> dict[str, str]:
    """Accession -> checksum, from ``globins.sha256``."""
    text = (_folder() / "globins.sha256").read_text(encoding="utf-8")
    pairs = (line.split() for line in text.splitlines() if line.strip() and not line.startswith("#"))
    return {accession: checksum for checksum, accession in pairs}


@cache
def verified_globins() -> tuple[VerifiedGlobin, ...]:
    """Every row of ``globins.tsv``, in the table's order (by group, then accession)."""
    lines = [line for line in (_folder() / "globins.tsv").read_text(encoding="utf-8").splitlines()
             if line and not line.startswith("#")]
    header = lines[0].split("\t")
    rows = []
    for line in lines[1:]:
        cell = dict(zip(header, line.split("\t"), strict=True))
        his = cell["proximal_his"].split(maxsplit=1)
        rows.append(VerifiedGlobin(
            accession=cell["accession"], entry_name=cell["entry_name"], organism=cell["organism"],
            group=cell["group"], first=1 if cell["residues"] == "full" else int(cell["residues"].split("-")[0]),
            sequence=cell["sequence"], proximal_his=int(his[0]) if his else None,
            proximal_his_source=his[1].strip("() ") if len(his) > 1 else "",
            copies=(cell["copy1"], cell["copy2"]), notes=cell["notes"]))
    return tuple(rows)
