"""Numbering of reference-chain residues: frame label <-> residue number, and HGVS protein names.

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
"""

from __future__ import annotations

from globcons.core.alphabet import three_letter
from globcons.core.labels import split_label
from globcons.errors import OptionError
from globcons.frame.reference import ReferenceChain, label_positions, reference_chain

__all__ = ["NUMBERINGS", "label_of", "position_of", "hgvs_name"]

#: Accepted values of the ``numbering`` argument.
NUMBERINGS: tuple[str, ...] = ("mature", "database", "hgvs")


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
    segment, _ = split_label(label)
    positions = label_positions(ref.name)
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
    name = f"p.{three_letter(old)}{mature_position + 1}"
    if new_residue is None:
        return name
    try:
        new = three_letter(new_residue)
    except ValueError as exc:
        raise OptionError(str(exc)) from None
    return name + ("=" if new_residue.upper() == old else new)

