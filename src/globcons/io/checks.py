"""Rules every alignment reader applies at its end, whatever the format: stops, nucleotides, duplicate ids,
the length of ids (:data:`MAX_ID_LENGTH`) and, when asked, the number of columns (:func:`check_columns`).

Also the shared shape of the readers' error messages (line numbers found from newline offsets, a bad
character shown as itself or as its byte value).
"""

from __future__ import annotations

import warnings

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.alphabet import STOP, UNKNOWN, looks_like_nucleotide
from globcons.core.counts import CHUNK_ROWS
from globcons.errors import InputError, InputWarning

__all__ = ["PROTEIN_SAMPLE", "MAX_ID_LENGTH", "MAX_COLUMNS", "check_id_length", "check_columns", "unique_ids",
           "check_protein", "stops_to_unknown", "finish_alignment", "line_number", "bad_character"]

#: Codes that decide whether an input is protein: a nucleotide file is nucleotides throughout.
PROTEIN_SAMPLE = 4_000_000
#: Longest sequence id read (characters). Database ids are far shorter; a longer one is a broken file, and
#: writers that align ids (Stockholm pads every row to the longest) would multiply it by the rows.
MAX_ID_LENGTH = 1000
#: Most columns a command takes by default (``--max-columns`` raises it): figures, scans against a family
#: and reports do work per column, and a globin alignment has a few hundred.
MAX_COLUMNS = 20_000


def check_id_length(identifier: str, name: str, line: int | None = None) -> None:
    """Refuse an id longer than :data:`MAX_ID_LENGTH` characters."""
    if len(identifier) > MAX_ID_LENGTH:
        raise InputError(f"sequence id of {len(identifier)} characters (starts {identifier[:20]!r}); ids may "
                         f"have at most {MAX_ID_LENGTH}", source=name, line=line)


def check_columns(alignment: Alignment, max_columns: int | None) -> None:
    """Refuse an alignment wider than ``max_columns`` (None: no limit), saying how to raise the limit."""
    if max_columns is not None and alignment.n_columns > max_columns:
        raise InputError(f"{alignment.n_columns} columns, more than the {max_columns} this command takes "
                         f"(--max-columns); give --max-columns {alignment.n_columns} to go on",
                         source=alignment.source)


def unique_ids(ids: list[str], name: str) -> list[str]:
    """``ids`` with repeats made unique (``id_2``, ``id_3``...), with one warning saying how many and the first."""
    if len(set(ids)) == len(ids):
        return list(ids)
    seen: dict[str, int] = {}
    taken = set(ids)
    result = []
    renamed: list[tuple[str, str]] = []
    for identifier in ids:
        if identifier not in seen:
            seen[identifier] = 1
            result.append(identifier)
            continue
        count = seen[identifier]
        while True:
            count += 1
            candidate = f"{identifier}_{count}"
            if candidate not in taken:
                break
        seen[identifier] = count
        taken.add(candidate)
        result.append(candidate)
        renamed.append((identifier, candidate))
    if renamed:
        first_old, first_new = renamed[0]
        warnings.warn(
            f"{name}: {len(renamed)} duplicate id(s) made unique (first: {first_old!r} -> {first_new!r})",
            InputWarning, stacklevel=3,
        )
    return result


def check_protein(codes: np.ndarray, name: str) -> None:
    """Refuse codes that look like nucleotides (judged on the first :data:`PROTEIN_SAMPLE` of them)."""
    if looks_like_nucleotide(codes.reshape(-1)[:PROTEIN_SAMPLE]):
        raise InputError(
            "looks like nucleotide sequences (almost only A, C, G, T/U, N); globcons reads protein "
            "alignments: translate first",
            source=name,
        )


def stops_to_unknown(codes: np.ndarray, chunk_rows: int = CHUNK_ROWS) -> int:
    """Turn internal stops into unknowns in place, in row blocks (no whole-matrix mask); return their count."""
    count = 0
    for start in range(0, codes.shape[0], chunk_rows):
        block = codes[start:start + chunk_rows]
        stops = block == STOP
        if stops.any():
            count += int(stops.sum())
            block[stops] = UNKNOWN
    return count


def finish_alignment(ids: list[str], descriptions: list[str], codes: np.ndarray, name: str, fmt: str,
                     annotations: dict[str, str] | None = None, notes: dict | None = None) -> Alignment:
    """Rules shared by every format; ``codes`` must hold only alphabet codes and STOP."""
    if codes.shape[0] == 0:
        raise InputError("no sequences found", source=name)
    if codes.shape[1] == 0:
        raise InputError("the sequences are empty (no columns)", source=name)
    notes = dict(notes or {})
    count = stops_to_unknown(codes)
    if count:
        notes["internal_stops"] = count
        warnings.warn(f"{name}: {count} internal stop(s) '*' counted as unknown residues", InputWarning, stacklevel=3)
    check_protein(codes, name)
    check_id_length(max(ids, key=len), name)
    ids = unique_ids(ids, name)
    codes.flags.writeable = False
    return Alignment(ids=tuple(ids), codes=codes, descriptions=tuple(descriptions),
                     column_annotations=annotations or {}, source=name, format=fmt, notes=notes)


def line_number(newlines: np.ndarray, offset: int) -> int:
    """1-based line of byte ``offset``, from the sorted offsets of the newlines."""
    return int(np.searchsorted(newlines, offset, side="right")) + 1


def bad_character(data: bytes, newlines: np.ndarray, offset: int, name: str, what: str) -> InputError:
    """The error for the character at ``offset``: shown as itself if printable, else as its byte value."""
    char = data[offset:offset + 1].decode("latin-1")
    shown = repr(char) if char.isprintable() else f"byte 0x{data[offset]:02x}"
    return InputError(f"{shown} {what}", source=name, line=line_number(newlines, offset))

