"""The target of a mutation check: one sequence placed on the frame and on the family's columns, with its numberings.

Numbering (``numbering``): ``"given"`` counts the target as given (1 = its first residue); ``"mature"``
counts the traditional way, without the initiator Met (a target that starts with M is taken to carry it;
one that does not is taken as the mature chain with its Met removed). HGVS ``p.`` names always count from
the initiator Met.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from globcons.align.placement import PlacedSequence, place
from globcons.analysis.family import Family, frame_family
from globcons.core.alphabet import RESIDUE_LETTERS, THREE_LETTER
from globcons.errors import OptionError
from globcons.mutations.notation import Mutation

__all__ = ["NUMBERINGS", "HGVS_UNKNOWN", "Target", "prepare_target", "as_target", "hgvs_cell", "hgvs_note"]

#: How plain mutation names count the target.
NUMBERINGS = ("given", "mature")
#: Why a target's HGVS names are blank: HGVS counts from the initiator Met, and this target's Met status is unknown.
HGVS_UNKNOWN = ("HGVS numbering unknown: the target does not start with Met, so it is not known where the initiator "
                "Met stood; if the Met was removed (a mature chain), use --numbering mature")
#: Letters a target may hold: residues and the unknowns (X and the ambiguity codes).
_TARGET_LETTERS = RESIDUE_LETTERS + "XBZJ"


@dataclass(frozen=True, eq=False)
class Target:
    """A target sequence placed on the frame and on the family's columns.

    Attributes
    ----------
    id, sequence
        As given (upper case).
    placed
        Its placement on the frame (labels, nearest reference chain).
    columns
        (n,) the family column of each residue (0-based), -1 where it has none.
    family
        What it is judged against.
    numbering
        ``"given"`` or ``"mature"``.
    """

    id: str
    sequence: str
    placed: PlacedSequence
    columns: np.ndarray
    family: Family
    numbering: str = "given"

    @property
    def starts_with_met(self) -> bool:
        return self.sequence.startswith("M")

    def mature_position(self, given: int) -> int | None:
        """Traditional number of the residue at ``given`` (None for the initiator Met)."""
        mature = given - 1 if self.starts_with_met else given
        return mature if mature >= 1 else None

    def hgvs_position(self, given: int) -> int | None:
        """HGVS ``p.`` number (from the initiator Met), or None if the target's Met status is unknown."""
        if self.starts_with_met:
            return given
        return given + 1 if self.numbering == "mature" else None

    def given_position(self, mutation: Mutation) -> int:
        """1-based position in the target as given that ``mutation`` names.

        Raises
        ------
        OptionError
            The position is outside the target, a label the target lacks, or a ``p.`` name on a target
            without its Met and without ``numbering="mature"``.
        """
        if mutation.label is not None:
            hit = self.placed.residue_at(mutation.label)
            if hit is None:
                raise OptionError(f"{mutation.text}: the target has no residue at frame label {mutation.label}")
            return hit[0]
        position = mutation.position
        if mutation.hgvs:
            if self.starts_with_met:
                given = position
            elif self.numbering == "mature":
                given = position - 1
            else:
                raise OptionError(f"{mutation.text}: p. names count from the initiator Met, and this target does not "
                                  "start with Met; if its Met was removed, add --numbering mature")
        elif self.numbering == "mature":
            given = position + (1 if self.starts_with_met else 0)
        else:
            given = position
        if not 1 <= given <= len(self.sequence):
            raise OptionError(f"{mutation.text}: position {position} is outside the target "
                              f"({len(self.sequence)} residues as given)")
        return given


def prepare_target(sequence: str, id: str = "target", family: Family | None = None, numbering: str = "given",
                   row_columns: np.ndarray | None = None) -> Target:
    """Place a target on the frame and on the family's columns.

    Parameters
    ----------
    sequence
        Protein letters.
    family
        :func:`globcons.analysis.family.frame_family` (default) or a user's family.
    numbering
        ``"given"`` or ``"mature"``.
    row_columns
        When the target is a row of the family's alignment: the column of each of its residues (skips the
        alignment to the family profile).
    """
    if numbering not in NUMBERINGS:
        raise OptionError(f"unknown numbering {numbering!r}; choose {' or '.join(NUMBERINGS)}")
    sequence = sequence.upper()
    if not sequence:
        raise OptionError("the target sequence is empty")
    bad = sorted({c for c in sequence if c not in _TARGET_LETTERS})
    if bad:
        raise OptionError(f"the target holds characters that are not amino-acid letters: {''.join(bad)}")
    family = family or frame_family()
    placed = place(sequence, id=id)
    if row_columns is not None:
        columns = np.asarray(row_columns, dtype=np.int64)
    elif family.profile is None:
        columns = placed.column_of_residue
    else:
        columns = family.columns_of(sequence)
    return Target(id, sequence, placed, columns, family, numbering)


def as_target(target, family: Family | None, numbering: str) -> Target:
    """A :class:`Target` as it is, or one prepared from a sequence or an ``(id, sequence)`` pair."""
    if isinstance(target, Target):
        return target
    if isinstance(target, tuple):
        return prepare_target(target[1], target[0], family, numbering)
    return prepare_target(str(target), "target", family, numbering)



def hgvs_cell(target: Target, given: int, new: str | None = None) -> str:
    """HGVS name of the residue at ``given`` (``p.Glu7``; with ``new``, ``p.Glu7Val``); '' if the Met is unknown."""
    number = target.hgvs_position(given)
    if not number:
        return ""
    wild = target.sequence[given - 1]
    name = f"p.{THREE_LETTER.get(wild, 'Xaa')}{number}"
    return name + THREE_LETTER.get(new, new) if new else name


def hgvs_note(target: Target) -> str:
    """Why the target's ``hgvs`` cells are blank (:data:`HGVS_UNKNOWN`), or '' when its HGVS numbering is known.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> hgvs_note(SimpleNamespace(starts_with_met=False, numbering="given"))[:23]
    'HGVS numbering unknown:'
    >>> hgvs_note(SimpleNamespace(starts_with_met=False, numbering="mature"))
    ''
    """
    known = target.starts_with_met or target.numbering == "mature"
    return "" if known else HGVS_UNKNOWN
