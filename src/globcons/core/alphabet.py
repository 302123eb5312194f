"""Residue codes, the byte lookup table, and reduced residue alphabets with their sources.

Every sequence is encoded once into ``uint8`` codes through :data:`BYTE_TO_CODE`, a 256-entry table:

========  =====================================================================
code      meaning
========  =====================================================================
0-19      the 20 standard residues, in the order of :data:`STANDARD` (alphabetical)
20, 21    selenocysteine (U) and pyrrolysine (O): residues, reported as themselves
22        unknown (X and the ambiguity codes B, Z, J): neither residue nor gap
23        gap ('-', '.', '~')
========  =====================================================================

Codes index score tables directly, so ``table[codes]`` is a vectorised lookup.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "STANDARD",
    "RESIDUE_LETTERS",
    "CODE_LETTERS",
    "N_STANDARD",
    "N_RESIDUES",
    "UNKNOWN",
    "GAP",
    "N_CODES",
    "STOP",
    "SPACE",
    "INVALID",
    "BYTE_TO_CODE",
    "MATRIX_STAND_IN",
    "RESIDUE_GROUPS",
    "GROUP_SOURCES",
    "encode",
    "decode",
    "group_index",
]

#: The 20 standard amino acids, one letter each, alphabetical (their codes are 0-19).
STANDARD = "ACDEFGHIKLMNPQRSTVWY"
#: Letters that count as residues: the 20 standard ones, then U and O.
RESIDUE_LETTERS = STANDARD + "UO"
N_STANDARD = 20
N_RESIDUES = 22
UNKNOWN = 22
GAP = 23
N_CODES = 24
#: Printable letter of every code (unknown as 'X', gap as '-').
CODE_LETTERS = RESIDUE_LETTERS + "X-"

# Markers that the readers resolve before an alignment is built; never stored in an Alignment.
STOP = 252  # '*': dropped at the end of a row, unknown elsewhere
SPACE = 253  # space or tab: allowed only at the end of a line
INVALID = 255


def _build_lookup() -> np.ndarray:
    table = np.full(256, INVALID, dtype=np.uint8)
    for code, letter in enumerate(RESIDUE_LETTERS):
        table[ord(letter)] = code
        table[ord(letter.lower())] = code
    for letter in "XBZJ":
        table[ord(letter)] = UNKNOWN
        table[ord(letter.lower())] = UNKNOWN
    for letter in "-.~":
        table[ord(letter)] = GAP
    table[ord("*")] = STOP
    table[ord(" ")] = SPACE
    table[ord("\t")] = SPACE
    table.flags.writeable = False
    return table


#: Byte value -> residue code (upper and lower case alike), or one of the reader's markers.
BYTE_TO_CODE = _build_lookup()

_CODE_TO_BYTE = np.frombuffer(CODE_LETTERS.encode("ascii"), dtype=np.uint8)

#: Substitution matrices have no rows for U and O; they are scored as the residue they derive from
#: (selenocysteine as Cys, pyrrolysine as Lys), the usual practice.
MATRIX_STAND_IN = {"U": "C", "O": "K"}


def encode(sequence: str) -> np.ndarray:
    """Encode one sequence into codes.

    Parameters
    ----------
    sequence
        Letters, gaps; any case.

    Returns
    -------
    numpy.ndarray
        ``uint8`` codes, shape ``(len(sequence),)``. Letters outside the alphabet give :data:`INVALID`,
        '*' gives :data:`STOP`, blanks give :data:`SPACE`; callers decide what those mean.
    """
    raw = np.frombuffer(sequence.encode("ascii", errors="replace"), dtype=np.uint8)
    return BYTE_TO_CODE[raw]


def decode(codes: np.ndarray) -> str:
    """Letters of ``codes`` (residues upper case, unknown as 'X', gap as '-')."""
    return _CODE_TO_BYTE[np.asarray(codes, dtype=np.intp)].tobytes().decode("ascii")


#: Fixed reduced alphabets for ``--residue-groups``: each a tuple of letter groups over the 20 standard
#: residues (U and O go with their stand-ins, see :data:`MATRIX_STAND_IN`).
RESIDUE_GROUPS: dict[str, tuple[str, ...]] = {
    # Six physico-chemical classes used for conservation in Mirny & Shakhnovich 1999.
    "mirny-shakhnovich-6": ("AVLIMC", "FWYH", "STNQ", "KR", "DE", "GP"),
    # The ten-letter reduced alphabet of Murphy, Wallqvist & Levy 2000.
    "murphy-10": ("LVIM", "C", "A", "G", "ST", "P", "FYW", "EDNQ", "KR", "H"),
}

GROUP_SOURCES: dict[str, str] = {
    "mirny-shakhnovich-6": "Mirny & Shakhnovich 1999 J Mol Biol 291:177 (classes as recalled from memory)",
    "murphy-10": "Murphy, Wallqvist & Levy 2000 Protein Eng 13:149 (10-letter alphabet, from memory)",
}


def group_index(name: str) -> np.ndarray:
    """Group number of every residue code under a named reduced alphabet.

    Parameters
    ----------
    name
        A key of :data:`RESIDUE_GROUPS`.

    Returns
    -------
    numpy.ndarray
        ``int64``, shape ``(N_RESIDUES,)``: the group of each residue code (U and O take their
        stand-in's group).
    """
    groups = RESIDUE_GROUPS[name]
    index = np.full(N_RESIDUES, -1, dtype=np.int64)
    for number, letters in enumerate(groups):
        for letter in letters:
            index[RESIDUE_LETTERS.index(letter)] = number
    for odd, stand_in in MATRIX_STAND_IN.items():
        index[RESIDUE_LETTERS.index(odd)] = index[RESIDUE_LETTERS.index(stand_in)]
    return index
