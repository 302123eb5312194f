"""The globin reference frame: reference chains, helix labels and functional sites.

The frame names every residue of a reference chain by the trade's helix notation: helices ``A``-``H``,
corners named by their two helices (``AB``, ``CD``, ``EF``, ``FG``, ``GH``; alpha's ``CE``), termini
``NA`` and ``HC``, each followed by the residue's place in its segment (beta His92 is ``F8``).

Three numberings of a chain's residues are supported:

``"mature"``
    The traditional numbering of myoglobins and hemoglobins: the chain without its initiator Met,
    1-based. The helix tables are written in it.
``"database"``
    The sequence-database entry, with the initiator Met, 1-based: database = mature + 1.
``"hgvs"``
    HGVS protein (``p.``) numbering, which counts from the Met: the same count as ``"database"``
    (traditional beta 6 is ``p.7``).

Position 1 in ``"database"`` and ``"hgvs"`` numbering is the initiator Met; it is a real residue but
has no frame label, so :func:`label_of` returns ``""`` for it.

All built-in data (chains, segment tables, sites) ships as package data in ``globcons/data/frame``
with its provenance; it is parsed once and cached.
"""

from __future__ import annotations

import functools
import os
import re
from dataclasses import dataclass
from importlib import resources

from Bio.SeqUtils import seq3

from globcons.core.alphabet import RESIDUE_LETTERS, STANDARD, encode
from globcons.errors import InputError, OptionError

__all__ = [
    "FRAME_ORDER",
    "HELICES",
    "NUMBERINGS",
    "ReferenceChain",
    "Segment",
    "Site",
    "frame_order",
    "hgvs_name",
    "is_helix",
    "is_label",
    "label_of",
    "position_of",
    "reference_chain",
    "reference_chains",
    "segment_of",
    "segments",
    "sites",
    "sites_at",
]

#: Segments of the globin fold in their order along the chain (alpha's ``CE`` stands where the
#: others have ``CD`` and ``D``).
FRAME_ORDER: tuple[str, ...] = (
    "NA", "A", "AB", "B", "C", "CD", "CE", "D", "E", "EF", "F", "FG", "G", "GH", "H", "HC",
)
#: The eight helices; every other segment is a corner or a terminus.
HELICES: tuple[str, ...] = ("A", "B", "C", "D", "E", "F", "G", "H")
#: Accepted values of the ``numbering`` argument.
NUMBERINGS: tuple[str, ...] = ("mature", "database", "hgvs")

# Two-letter segments first so that "CD1" is never read as helix C.
_LABEL_RE = re.compile(r"^(NA|HC|AB|CD|CE|EF|FG|GH|[A-H])([1-9][0-9]*)$")
_CHAIN_KINDS = ("myoglobin", "alpha", "beta")
_SITE_COLUMNS = ("label", "chains", "role", "kind", "reference", "certainty", "note")


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


@dataclass(frozen=True)
class Site:
    """A functionally important frame position.

    Attributes
    ----------
    label
        Frame label, e.g. ``"F8"``.
    chains
        Names of the reference chains the site is listed for; empty means every chain.
    role
        What the residue does.
    kind
        Short category, e.g. ``"heme-ligand"``.
    reference
        Literature pointer.
    note
        Free text (numbering per chain, caveats).
    certainty
        How sure the entry is, e.g. ``"from memory"`` or ``"uncertain (from memory)"``.
    column
        For a user's site given by alignment column (1-based) instead of a label; None otherwise.
    """

    label: str
    chains: tuple[str, ...]
    role: str
    kind: str = ""
    reference: str = ""
    note: str = ""
    certainty: str = ""
    column: int | None = None

    def applies_to(self, chain_name: str) -> bool:
        """Whether the site is listed for ``chain_name`` (every chain when :attr:`chains` is empty).

        This looks at the listing only; :func:`sites` with a ``chain`` also drops sites whose label
        the chain does not have (e.g. a ``CD4`` site listed for all chains, in alpha).
        """
        return not self.chains or chain_name in self.chains


# ---------------------------------------------------------------------------------------------
# Labels


def frame_order() -> tuple[str, ...]:
    """Segments of the globin fold in order along the chain (see :data:`FRAME_ORDER`)."""
    return FRAME_ORDER


def is_label(text: str) -> bool:
    """Whether ``text`` is a label in the trade's notation (segment then place, e.g. ``"FG3"``).

    Segments are those of :data:`FRAME_ORDER`; places count from 1 without leading zeros. Case
    matters (``"f8"`` is not a label). Whether a given chain has the label is a separate question
    (see :func:`position_of`).
    """
    return isinstance(text, str) and _LABEL_RE.match(text) is not None


def _split_label(label: str) -> tuple[str, int]:
    match = _LABEL_RE.match(label) if isinstance(label, str) else None
    if match is None:
        raise OptionError(
            f"{label!r} is not a frame label; labels are a segment "
            f"({', '.join(FRAME_ORDER)}) then a place from 1, e.g. F8, FG3, NA1"
        )
    return match.group(1), int(match.group(2))


def segment_of(label: str) -> str:
    """Segment of a label: ``"F8"`` -> ``"F"``, ``"FG3"`` -> ``"FG"``, ``"CE4"`` -> ``"CE"``.

    Raises
    ------
    OptionError
        If ``label`` is not in the trade's notation.
    """
    return _split_label(label)[0]


def is_helix(segment: str) -> bool:
    """Whether ``segment`` is one of the helices A-H (corners and termini are not)."""
    return segment in HELICES


# ---------------------------------------------------------------------------------------------
# Package data


def _data_file(name: str):
    return resources.files("globcons") / "data" / "frame" / name


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
    for number, raw in enumerate(_data_file(source).read_text(encoding="utf-8").splitlines(), 1):
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
    lines = _data_file(source).read_text(encoding="utf-8").splitlines()
    header = lines[0].split("\t")
    table: dict[str, list[Segment]] = {}
    for number, raw in enumerate(lines[1:], 2):
        if not raw.strip():
            continue
        row = dict(zip(header, raw.split("\t")))
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


@functools.lru_cache(maxsize=None)
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
        if not full.startswith("M") or (encode(full) >= len(STANDARD)).any():
            raise InputError(f"{name}: sequence must start with Met and hold standard residues only",
                             "reference_chains.fasta")
        if fields["kind"] not in _CHAIN_KINDS:
            raise InputError(f"{name}: kind {fields['kind']!r} is not one of {_CHAIN_KINDS}",
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


@functools.lru_cache(maxsize=None)
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


@functools.lru_cache(maxsize=None)
def _label_positions(name: str) -> dict[str, int]:
    return {label: i for i, label in enumerate(reference_chain(name).labels, 1)}


def segments(chain: str | ReferenceChain) -> tuple[Segment, ...]:
    """Segments of a reference chain in mature numbering, in order along the chain."""
    return reference_chain(chain).segments


# ---------------------------------------------------------------------------------------------
# Numbering


def _check_numbering(numbering: str) -> None:
    if numbering not in NUMBERINGS:
        raise OptionError(f"unknown numbering {numbering!r}; valid: {', '.join(NUMBERINGS)}")


def label_of(chain: str | ReferenceChain, position: int, numbering: str = "mature") -> str:
    """Frame label of a residue of a reference chain.

    Parameters
    ----------
    chain
        Reference chain or its name.
    position
        1-based residue number in ``numbering``.
    numbering
        ``"mature"`` (traditional, no Met), ``"database"`` or ``"hgvs"`` (both count the Met as 1).

    Returns
    -------
    str
        The label, e.g. ``"F8"``; ``""`` for the initiator Met (database/hgvs position 1), which
        has no frame label.

    Raises
    ------
    OptionError
        If the position is outside the chain (the message names the valid range) or the
        numbering is unknown.

    Examples
    --------
    >>> label_of("human_hemoglobin_beta", 6)          # the sickle-cell position
    'A3'
    >>> label_of("human_hemoglobin_beta", 93, numbering="database")   # His92 counted with the Met
    'F8'
    """
    ref = reference_chain(chain)
    _check_numbering(numbering)
    offset = 0 if numbering == "mature" else 1
    last = len(ref.mature_sequence) + offset
    if isinstance(position, bool) or not isinstance(position, int) or not 1 <= position <= last:
        raise OptionError(f"position {position!r} is outside {ref.name} in {numbering} numbering; "
                          f"valid: 1-{last}")
    if position - offset == 0:
        return ""
    return ref.labels[position - offset - 1]


def position_of(chain: str | ReferenceChain, label: str, numbering: str = "mature") -> int:
    """Residue number of a frame label in a reference chain (inverse of :func:`label_of`).

    Raises
    ------
    OptionError
        If ``label`` is not in the trade's notation or the chain has no such label; the message
        names the chain and the nearest valid labels (the segment's range, or the chain's segments).

    Examples
    --------
    >>> position_of("sperm_whale_myoglobin", "E7"), position_of("human_hemoglobin_alpha", "F8", "hgvs")
    (64, 88)
    """
    ref = reference_chain(chain)
    _check_numbering(numbering)
    segment, place = _split_label(label)
    positions = _label_positions(ref.name)
    if label not in positions:
        by_name = {s.name: s for s in ref.segments}
        if segment in by_name:
            hint = f"its {segment} segment is {by_name[segment].label_range}"
        else:
            hint = "its segments are " + ", ".join(s.label_range for s in ref.segments)
            if segment in ("CD", "D") and "CE" in by_name:
                hint += " (alpha names its C-E stretch CE; its CE1 is the residue called CD1 elsewhere)"
        raise OptionError(f"{ref.name} has no label {label}; {hint}")
    return positions[label] + (0 if numbering == "mature" else 1)


def _three_letter(letter: str) -> str:
    if letter == "*":
        return "Ter"
    if len(letter) != 1 or letter.upper() not in RESIDUE_LETTERS:
        raise OptionError(f"{letter!r} is not a one-letter residue code; valid: {RESIDUE_LETTERS} or *")
    return seq3(letter.upper())


def hgvs_name(chain: str | ReferenceChain, mature_position: int, new_residue: str | None = None) -> str:
    """HGVS protein name of a residue or a substitution, from a mature (traditional) position.

    Parameters
    ----------
    chain
        Reference chain or its name.
    mature_position
        Traditional residue number (without the Met).
    new_residue
        One-letter code of the substituting residue (``"*"`` for a stop), or None for the residue
        alone.

    Returns
    -------
    str
        E.g. ``"p.Glu7Val"`` for beta 6 to Val, ``"p.Glu7"`` with no new residue, ``"p.Glu7="``
        when the new residue equals the old.

    Examples
    --------
    >>> hgvs_name("human_hemoglobin_beta", 6, "V")
    'p.Glu7Val'
    """
    ref = reference_chain(chain)
    label_of(ref, mature_position, "mature")  # range check
    old = ref.mature_sequence[mature_position - 1]
    name = f"p.{seq3(old)}{mature_position + 1}"
    if new_residue is None:
        return name
    new = _three_letter(new_residue)
    return name + ("=" if new_residue.upper() == old else new)


# ---------------------------------------------------------------------------------------------
# Sites


def _parse_chains(text: str, source: str, line: int | None) -> tuple[str, ...]:
    text = text.strip()
    if text in ("", "all"):
        return ()
    names = tuple(part.strip() for part in text.split(","))
    valid = _chain_index()
    for part in names:
        if part not in valid:
            raise InputError(f"unknown chain {part!r} in chains; valid: all, or a comma-separated list of "
                             f"{', '.join(valid)}", source, line)
    return names


def _read_sites(text: str, source: str) -> tuple[Site, ...]:
    rows = [(number, raw.rstrip("\r")) for number, raw in enumerate(text.splitlines(), 1)]
    rows = [(number, raw) for number, raw in rows if raw.strip() and not raw.lstrip().startswith("#")]
    if not rows:
        raise InputError("no header row; expected tab-separated columns label, role", source)
    header_line, header_text = rows[0]
    header = [name.strip().lower() for name in header_text.split("\t")]
    if len(set(header)) != len(header):
        raise InputError(f"repeated column name in header {header_text!r}", source, header_line)
    if "label" not in header and "column" not in header:
        raise InputError(f"missing column 'label' (or 'column'); header has {', '.join(header)}",
                         source, header_line)
    if "role" not in header:
        raise InputError(f"missing column 'role'; header has {', '.join(header)}", source, header_line)
    found = []
    for number, raw in rows[1:]:
        cells = raw.split("\t")
        if len(cells) > len(header):
            raise InputError(f"{len(cells)} fields but the header has {len(header)}", source, number)
        row = dict(zip(header, (cell.strip() for cell in cells)))
        label = row.get("label", "")
        column_text = row.get("column", "")
        column = None
        if column_text and not label and is_label(column_text):
            label, column_text = column_text, ""  # a frame label under a "column" heading
        if column_text:
            if not column_text.isdigit() or int(column_text) < 1:
                raise InputError(f"column {column_text!r} is not an alignment column number (1, 2, ...)",
                                 source, number)
            column = int(column_text)
        elif not is_label(label):
            raise InputError(f"{label!r} is not a frame label (segment then place, e.g. F8, FG3, NA1)",
                             source, number)
        if label and not is_label(label):
            raise InputError(f"{label!r} is not a frame label (segment then place, e.g. F8, FG3, NA1)",
                             source, number)
        if not row.get("role"):
            raise InputError(f"site {label or column} has an empty role", source, number)
        found.append(Site(
            label=label,
            column=column,
            chains=_parse_chains(row.get("chains", ""), source, number),
            role=row["role"],
            kind=row.get("kind", ""),
            reference=row.get("reference", ""),
            note=row.get("note", ""),
            certainty=row.get("certainty", ""),
        ))
    return tuple(found)


@functools.lru_cache(maxsize=None)
def _builtin_sites() -> tuple[Site, ...]:
    name = "functional_sites.tsv"
    return _read_sites(_data_file(name).read_text(encoding="utf-8"), name)


def _read_user_sites(path: str | os.PathLike[str]) -> tuple[Site, ...]:
    source = os.fspath(path)
    try:
        with open(source, encoding="utf-8") as handle:
            text = handle.read()
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read site table: {exc}", source) from exc
    return _read_sites(text, source)


def _on_chain(site: Site, name: str) -> bool:
    return site.applies_to(name) and site.label in _label_positions(name)


def sites(chain: str | ReferenceChain | None = None,
          path: str | os.PathLike[str] | None = None) -> tuple[Site, ...]:
    """Functional sites: the built-in list, or a user's table.

    Parameters
    ----------
    chain
        If given, only the sites listed for that chain whose label the chain has (a site listed for
        all chains at ``CD4`` is left out for alpha, which names that stretch ``CE``).
    path
        A tab-separated table to use instead of the built-in list. Columns: ``label`` or ``column``
        (a 1-based alignment column, for families without frame labels) and ``role`` required; ``kind``, ``chains`` (``all`` or comma-separated chain
        names; empty means all), ``reference``, ``note``, ``certainty`` optional; other columns are
        ignored. Blank lines and lines starting with ``#`` are skipped.

    Raises
    ------
    InputError
        If the user's table cannot be read or is malformed (names the file and line).
    OptionError
        If ``chain`` is not a reference chain.
    """
    found = _builtin_sites() if path is None else _read_user_sites(path)
    if chain is None:
        return found
    name = reference_chain(chain).name
    return tuple(site for site in found if _on_chain(site, name))


def sites_at(label: str, chain: str | ReferenceChain | None = None,
             site_list: tuple[Site, ...] | None = None) -> tuple[Site, ...]:
    """Sites at one frame label, optionally only those on ``chain`` (as in :func:`sites`).

    ``site_list`` defaults to the built-in list.
    """
    _split_label(label)
    found = _builtin_sites() if site_list is None else site_list
    if chain is None:
        return tuple(site for site in found if site.label == label)
    name = reference_chain(chain).name
    return tuple(site for site in found if site.label == label and _on_chain(site, name))
