"""Substitution matrices: Biopython's tables, checked, and the two views of them the package uses.

- :func:`substitution_table`: scores of every residue code against every code, as floats, for profiles;
- :func:`compatible_pairs`: which residue pairs may share a conservative column (every pair of a
  substitution group scores above 0 in the matrix, or both residues fall in one group of a reduced
  alphabet).

Substitution matrices have no rows for U and O: they are scored as the residue they derive from
(:data:`~globcons.core.alphabet.MATRIX_STAND_IN`, selenocysteine as Cys, pyrrolysine as Lys).
"""

from __future__ import annotations

from functools import cache
from importlib import resources

import numpy as np

from globcons.core.alphabet import MATRIX_STAND_IN, N_CODES, N_RESIDUES, RESIDUE_LETTERS, STANDARD, UNKNOWN, group_index
from globcons.errors import OptionError

__all__ = ["DEFAULT_MATRIX", "load_matrix", "matrix_score", "substitution_table", "compatible_pairs",
           "SubstitutionMatrix", "shipped_matrices", "parse_matrix_text"]

DEFAULT_MATRIX = "BLOSUM62"
#: Score of a residue against an unknown (X) when the matrix has no X row.
UNKNOWN_SCORE = -1.0


class SubstitutionMatrix:
    """A substitution matrix as Biopython ships it: ``alphabet`` and scores by letter, ``matrix[a][b]``."""

    def __init__(self, name: str, alphabet: str, scores: np.ndarray) -> None:
        self.name, self.alphabet = name, alphabet
        self.scores = scores
        self._index = {letter: i for i, letter in enumerate(alphabet)}

    def __getitem__(self, letter: str) -> dict[str, float]:
        row = self.scores[self._index[letter]]
        return {other: float(row[j]) for other, j in self._index.items()}


def _matrix_folder():
    # Biopython's own data files, read without importing Bio.Align (which costs about 0.1 s).
    return resources.files("Bio") / "Align" / "substitution_matrices" / "data"


@cache
def shipped_matrices() -> tuple[str, ...]:
    """Names of the substitution matrices Biopython ships, as ``substitution_matrices.load()`` lists them."""
    return tuple(sorted(entry.name for entry in _matrix_folder().iterdir()
                        if entry.is_file() and not entry.name.startswith((".", "_"))))


def parse_matrix_text(name: str, text: str) -> SubstitutionMatrix:
    """A matrix from the text of one of Biopython's matrix files (``#`` comments, a header row of letters,
    then one row per letter)."""
    lines = [line.split() for line in text.splitlines() if line.strip() and not line.lstrip().startswith("#")]
    if any(len(letter) != 1 for letter in lines[0]):  # a codon matrix: not for proteins
        raise OptionError(f"matrix {name} is not an amino-acid matrix; choose a protein matrix such as BLOSUM62")
    alphabet = "".join(lines[0])
    rows = {fields[0]: [float(value) for value in fields[1:]] for fields in lines[1:]}
    scores = np.array([rows[letter] for letter in alphabet], dtype=np.float64)
    return SubstitutionMatrix(name, alphabet, scores)


@cache
def load_matrix(name: str = DEFAULT_MATRIX) -> SubstitutionMatrix:
    """A substitution matrix Biopython ships, checked to cover the 20 residues.

    Read from Biopython's data files (``Bio/Align/substitution_matrices/data``); a test holds every one
    against ``Bio.Align.substitution_matrices.load``.

    Raises
    ------
    OptionError
        An unknown name (the message lists what Biopython ships) or a matrix that is not for proteins.
    """
    available = shipped_matrices()
    if name not in available:
        raise OptionError(f"unknown --matrix {name!r}; Biopython ships: {', '.join(available)}")
    matrix = parse_matrix_text(name, (_matrix_folder() / name).read_text(encoding="ascii"))
    missing = set(STANDARD) - set(matrix.alphabet)
    if missing:
        raise OptionError(f"matrix {name} does not cover the 20 amino acids (missing {''.join(sorted(missing))}); "
                          "choose a protein matrix such as BLOSUM62")
    return matrix


def matrix_score(name: str, wild: str, new: str) -> float:
    """Score of one substitution in a named matrix (U and O as their stand-ins); NaN for letters it lacks."""
    matrix = load_matrix(name)
    a, b = MATRIX_STAND_IN.get(wild, wild), MATRIX_STAND_IN.get(new, new)
    if a not in matrix.alphabet or b not in matrix.alphabet:
        return float("nan")
    return float(matrix[a][b])


@cache
def substitution_table(matrix: str = DEFAULT_MATRIX) -> np.ndarray:
    """(22, 24) scores of residue code a (rows) against every code b (columns), as floats.

    U and O score as C and K; unknown (X) takes the matrix's X entry where it has one, else
    :data:`UNKNOWN_SCORE`; a gap scores -inf (queries never hold gaps). Read-only.
    """
    scores = load_matrix(matrix)
    letters = [MATRIX_STAND_IN.get(c, c) for c in RESIDUE_LETTERS]
    table = np.full((N_RESIDUES, N_CODES), -np.inf)
    for i, a in enumerate(letters):
        for j, b in enumerate(letters):
            table[i, j] = scores[a][b]
        table[i, UNKNOWN] = scores[a]["X"] if "X" in scores.alphabet else UNKNOWN_SCORE
    table.flags.writeable = False
    return table


@cache
def compatible_pairs(matrix: str = DEFAULT_MATRIX, residue_groups: str | None = None) -> np.ndarray:
    """Which residue pairs may share a conservative column.

    Returns
    -------
    numpy.ndarray
        Read-only bool, shape (22, 22) over :data:`~globcons.core.alphabet.RESIDUE_LETTERS`; the diagonal is True.
    """
    if residue_groups is not None:
        index = group_index(residue_groups)
        table = index[:, None] == index[None, :]
    else:
        scores = substitution_table(matrix)[:, :N_RESIDUES]
        table = scores > 0
        np.fill_diagonal(table, True)
    table.flags.writeable = False
    return table
