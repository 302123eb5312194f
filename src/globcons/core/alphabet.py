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
from Bio.Data.IUPACData import protein_letters_1to3_extended

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
    "THREE_LETTER",
    "ONE_LETTER",
    "three_letter",
    "NUCLEOTIDE_SHARE",
    "MIN_LETTERS_FOR_NUCLEOTIDE",
    "looks_like_nucleotide",
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


#: One-letter code -> three-letter code ("Ala", ..., "Sec" for U, "Pyl" for O), from Biopython's IUPAC table.
THREE_LETTER: dict[str, str] = {letter: protein_letters_1to3_extended[letter] for letter in RESIDUE_LETTERS}
#: Three-letter code in upper case -> one-letter code, for the 20 standard residues and U, O.
ONE_LETTER: dict[str, str] = {three.upper(): one for one, three in THREE_LETTER.items()}


def three_letter(letter: str) -> str:
    """Three-letter code of a one-letter residue code (any case); ``"*"`` gives ``"Ter"``.

    Raises
    ------
    ValueError
        For a letter that is not one of :data:`RESIDUE_LETTERS` or ``*``.
    """
    if letter == "*":
        return "Ter"
    try:
        return THREE_LETTER[letter.upper()]
    except (KeyError, AttributeError):
        raise ValueError(f"{letter!r} is not a one-letter residue code; valid: {RESIDUE_LETTERS} or *") from None


#: Share of the letters that must be A, C, G, T, U or N for a sequence or a file to be taken as nucleotides.
NUCLEOTIDE_SHARE = 0.95
#: Fewer letters than this are never judged nucleotides (a short peptide may well be all Ala, Gly, Thr).
MIN_LETTERS_FOR_NUCLEOTIDE = 20
_NUCLEOTIDE_CODES = np.array([RESIDUE_LETTERS.index(c) for c in "ACGTNU"], dtype=np.intp)


def looks_like_nucleotide(codes: np.ndarray) -> bool:
    """Whether codes (any shape) look like nucleotides rather than protein.

    Letters are residue codes and unknowns (gaps, stops and markers are not letters); the codes look
    like nucleotides when at least :data:`MIN_LETTERS_FOR_NUCLEOTIDE` letters are present and at least
    :data:`NUCLEOTIDE_SHARE` of them are A, C, G, T, U or N.

    >>> looks_like_nucleotide(encode("ACGT" * 6)), looks_like_nucleotide(encode("MVLSEGEWQLVLHVWAKVEAD"))
    (True, False)
    """
    counts = np.bincount(np.asarray(codes, dtype=np.uint8).reshape(-1), minlength=256)
    letters = int(counts[: UNKNOWN + 1].sum())
    return bool(letters >= MIN_LETTERS_FOR_NUCLEOTIDE and counts[_NUCLEOTIDE_CODES].sum() >= NUCLEOTIDE_SHARE * letters)


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
