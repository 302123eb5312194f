"""The built-in reference chains of the globin frame and their helix segments (package data).

The frame names every residue of a reference chain by the trade's helix notation (:mod:`globcons.core.labels`):
sperm whale and human myoglobin, human hemoglobin alpha and beta, each with its segments in mature
(traditional) numbering. The data ships in ``globcons/data/frame`` with its provenance on every record
(see the README there); it is parsed once, checked (the segment tables must tile each mature chain) and
cached.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from importlib import resources

from globcons.core.alphabet import N_STANDARD, encode
from globcons.core.labels import FRAME_ORDER
from globcons.errors import InputError, OptionError

__all__ = ["CHAIN_KINDS", "Segment", "ReferenceChain", "data_text", "reference_chains", "reference_chain",
           "segments", "label_positions"]

#: Kinds of reference chain the frame knows.
CHAIN_KINDS = ("myoglobin", "alpha", "beta")


@dataclass(frozen=True)
class Segment:
    """One helix, corner or terminus of a chain, in mature numbering.

    Attributes
    ----------
    name
        Segment name, e.g. ``"F"`` or ``"FG"``.
    first, last
        First and last mature residue (1-based, inclusive).
    """

    name: str
    first: int
    last: int

    @property
    def length(self) -> int:
        """Number of residues in the segment."""
        return self.last - self.first + 1

    @property
    def label_range(self) -> str:
        """The segment's labels as a range, e.g. ``"F1-F9"``."""
        return f"{self.name}1-{self.name}{self.length}"


@dataclass(frozen=True)
class ReferenceChain:
    """A reference globin chain with its frame labels.

    Attributes
    ----------
    name
        Identifier, e.g. ``"human_hemoglobin_beta"``.
    display_name
        Human-readable name, e.g. ``"human hemoglobin beta"``.
    accession
        Database accession, e.g. ``"UniProt P68871"``.
    kind
        ``"myoglobin"``, ``"alpha"`` or ``"beta"``.
    full_sequence
        The sequence as the database gives it, with the initiator Met.
    mature_sequence
        The sequence without the initiator Met (traditional numbering).
    labels
        One frame label per mature residue: ``labels[i]`` labels mature residue ``i + 1``.
    provenance
        Where the sequence comes from.
    segments
        The chain's segments in mature numbering, in order along the chain.
    """

    name: str
    display_name: str
    accession: str
    kind: str
    full_sequence: str
    mature_sequence: str
    labels: tuple[str, ...]
    provenance: str
    segments: tuple[Segment, ...] = ()



# ---------------------------------------------------------------------------------------------
# Package data


def data_text(name: str) -> str:
    """Text of a file of the frame's package data (``globcons/data/frame/<name>``)."""
    return (resources.files("globcons") / "data" / "frame" / name).read_text(encoding="utf-8")


def _parse_header(header: str, source: str, line: int) -> tuple[str, dict[str, str]]:
    name, _, rest = header.partition(" ")
    fields: dict[str, str] = {}
    for part in rest.split(" | "):
        key, sep, value = part.partition("=")
        if not sep:
            raise InputError(f"header field {part!r} is not key=value", source, line)
        fields[key.strip()] = value.strip()
    missing = {"accession", "kind", "display_name", "provenance"} - fields.keys()
    if missing:
        raise InputError(f"header of {name} lacks {', '.join(sorted(missing))}", source, line)
    return name, fields


def _read_chain_fasta() -> list[tuple[str, dict[str, str], str]]:
    source = "reference_chains.fasta"
    records: list[tuple[str, dict[str, str], list[str]]] = []
    for number, raw in enumerate(data_text(source).splitlines(), 1):
        text = raw.strip()
        if not text:
            continue
        if text.startswith(">"):
            name, fields = _parse_header(text[1:], source, number)
            records.append((name, fields, []))
        elif not records:
            raise InputError("sequence before the first header", source, number)
        else:
            records[-1][2].append(text)
    return [(name, fields, "".join(parts)) for name, fields, parts in records]


def _read_segment_table() -> dict[str, list[Segment]]:
    source = "helix_segments.tsv"
    lines = data_text(source).splitlines()
    header = lines[0].split("\t")
    table: dict[str, list[Segment]] = {}
    for number, raw in enumerate(lines[1:], 2):
        if not raw.strip():
            continue
        row = dict(zip(header, raw.split("\t"), strict=False))
        if not row.get("provenance"):
            raise InputError("record has no provenance", source, number)
        segment = Segment(row["segment"], int(row["first_residue"]), int(row["last_residue"]))
        if segment.name not in FRAME_ORDER or row["labels"] != segment.label_range:
            raise InputError(f"segment {segment} disagrees with labels {row['labels']!r}", source, number)
        table.setdefault(row["chain"], []).append(segment)
    return table


def _chain_labels(name: str, chain_segments: list[Segment], length: int) -> tuple[str, ...]:
    # The tables must tile the mature chain: in order, no gaps, no overlaps, to the last residue.
    expected = 1
    labels: list[str] = []
    for segment in chain_segments:
        if segment.first != expected or segment.last < segment.first:
            raise InputError(f"{name}: segment {segment.name} starts at {segment.first}, expected {expected}",
                             "helix_segments.tsv")
        labels.extend(f"{segment.name}{place}" for place in range(1, segment.length + 1))
        expected = segment.last + 1
    if expected != length + 1:
        raise InputError(f"{name}: segments cover 1-{expected - 1} but the mature chain has "
                         f"{length} residues", "helix_segments.tsv")
    return tuple(labels)


@functools.cache
def reference_chains() -> tuple[ReferenceChain, ...]:
    """The built-in reference chains, in the order of the package's FASTA file.

    Returns
    -------
    tuple of ReferenceChain
        Sperm whale myoglobin, human myoglobin, human hemoglobin alpha and beta.
    """
    table = _read_segment_table()
    chains = []
    for name, fields, full in _read_chain_fasta():
        if not full.startswith("M") or (encode(full) >= N_STANDARD).any():
            raise InputError(f"{name}: sequence must start with Met and hold standard residues only",
                             "reference_chains.fasta")
        if fields["kind"] not in CHAIN_KINDS:
            raise InputError(f"{name}: kind {fields['kind']!r} is not one of {CHAIN_KINDS}",
                             "reference_chains.fasta")
        if name not in table:
            raise InputError(f"{name} has no segment table", "helix_segments.tsv")
        mature = full[1:]
        chains.append(ReferenceChain(
            name=name,
            display_name=fields["display_name"],
            accession=fields["accession"],
            kind=fields["kind"],
            full_sequence=full,
            mature_sequence=mature,
            labels=_chain_labels(name, table[name], len(mature)),
            provenance=fields["provenance"],
            segments=tuple(table[name]),
        ))
    return tuple(chains)


@functools.cache
def _chain_index() -> dict[str, ReferenceChain]:
    return {chain.name: chain for chain in reference_chains()}


def reference_chain(name: str | ReferenceChain) -> ReferenceChain:
    """The built-in reference chain called ``name`` (a chain passes through unchanged).

    Raises
    ------
    OptionError
        If no reference chain has that name; the message lists the valid names.
    """
    if isinstance(name, ReferenceChain):
        return name
    index = _chain_index()
    if name not in index:
        raise OptionError(f"unknown reference chain {name!r}; valid names: {', '.join(index)}")
    return index[name]


@functools.cache
def label_positions(name: str) -> dict[str, int]:
    """Label -> mature position (1-based) of every residue of the reference chain ``name``."""
    return {label: i for i, label in enumerate(reference_chain(name).labels, 1)}


def segments(chain: str | ReferenceChain) -> tuple[Segment, ...]:
    """Segments of a reference chain in mature numbering, in order along the chain."""
    return reference_chain(chain).segments

