"""Physico-chemical tables of the 20 standard residues, and the change a substitution makes to them.

Three tables, each as a read-only mapping by one-letter code and as a read-only ``numpy`` array in the
order of :data:`globcons.core.alphabet.STANDARD` (so ``HYDROPATHY_ARRAY[codes]`` is a vectorised lookup for
codes 0-19):

``hydropathy``
    Kyte & Doolittle 1982 hydropathy index (positive = hydrophobic).
``volume``
    Zamyatnin 1972 residue volumes in cubic ångström.
``charge``
    Side-chain charge at neutral pH: +1 for Lys and Arg, -1 for Asp and Glu, 0 otherwise.
``core hydrophobicity``
    Fauchère & Pliška 1983 octanol/water side-chain hydrophobicity π, as Biopython ships it
    (``Bio.SeqUtils.ProtParamData.fc``). Kyte-Doolittle rates Trp and Tyr as hydrophilic; this scale
    rates the aromatic and sulfur residues of hydrophobic cores (W, F, Y, M, C) as hydrophobic, so it is
    the one that decides whether a column is a hydrophobic core (:func:`core_hydrophobicity`).

Where each table comes from is in :data:`SOURCES`; use it beside any number shown to a user.

>>> change = property_change("E", "V")
>>> change.text()
'hydropathy +7.7; volume +1.6 A^3; charge +1'
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np
from Bio.SeqUtils import ProtParamData

from globcons.core.alphabet import STANDARD
from globcons.errors import OptionError

__all__ = [
    "HYDROPATHY",
    "VOLUME",
    "CHARGE",
    "HYDROPATHY_ARRAY",
    "VOLUME_ARRAY",
    "CHARGE_ARRAY",
    "SOURCES",
    "PropertyChange",
    "property_change",
    "is_hydrophobic",
    "is_charged",
    "CORE_HYDROPHOBICITY",
    "CORE_HYDROPHOBICITY_ARRAY",
    "HYDROPHOBIC_CORE_MIN",
    "POLAR_MAX",
    "is_polar",
    "core_hydrophobicity",
]

# Kyte & Doolittle 1982 J Mol Biol 157:105, table 2 (hydropathy index); values written from memory.
_HYDROPATHY = {
    "I": 4.5, "V": 4.2, "L": 3.8, "F": 2.8, "C": 2.5, "M": 1.9, "A": 1.8,
    "G": -0.4, "T": -0.7, "S": -0.8, "W": -0.9, "Y": -1.3, "P": -1.6,
    "H": -3.2, "E": -3.5, "Q": -3.5, "D": -3.5, "N": -3.5, "K": -3.9, "R": -4.5,
}

# Zamyatnin 1972 Prog Biophys Mol Biol 24:107 (residue volumes in solution, Å^3); values written from
# memory.
_VOLUME = {
    "G": 60.1, "A": 88.6, "S": 89.0, "C": 108.5, "D": 111.1, "P": 112.7, "N": 114.1,
    "T": 116.1, "E": 138.4, "V": 140.0, "Q": 143.8, "H": 153.2, "M": 162.9, "I": 166.7,
    "L": 166.7, "K": 168.6, "R": 173.4, "F": 189.9, "Y": 193.6, "W": 227.8,
}

# Formal side-chain charge at pH 7. His (side-chain pKa near 6) is partly protonated at neutral pH;
# counting it as 0 is common practice, and a buried or ligand-bound His can differ either way.
_CHARGE = dict.fromkeys(STANDARD, 0)
_CHARGE.update({"K": 1, "R": 1, "D": -1, "E": -1})

#: Hydropathy index by one-letter code (Kyte & Doolittle 1982; see :data:`SOURCES`).
HYDROPATHY: Mapping[str, float] = MappingProxyType(_HYDROPATHY)
#: Residue volume in Å^3 by one-letter code (Zamyatnin 1972; see :data:`SOURCES`).
VOLUME: Mapping[str, float] = MappingProxyType(_VOLUME)
#: Side-chain charge at neutral pH by one-letter code (His counted 0; see :data:`SOURCES`).
CHARGE: Mapping[str, int] = MappingProxyType(_CHARGE)


def _as_array(table: Mapping[str, float], dtype: type) -> np.ndarray:
    array = np.array([table[letter] for letter in STANDARD], dtype=dtype)
    array.flags.writeable = False
    return array


#: :data:`HYDROPATHY` in the order of :data:`globcons.core.alphabet.STANDARD`, ``float64``.
HYDROPATHY_ARRAY = _as_array(HYDROPATHY, np.float64)
#: :data:`VOLUME` in the order of :data:`globcons.core.alphabet.STANDARD`, ``float64``, Å^3.
VOLUME_ARRAY = _as_array(VOLUME, np.float64)
#: :data:`CHARGE` in the order of :data:`globcons.core.alphabet.STANDARD`, ``int64``.
CHARGE_ARRAY = _as_array(CHARGE, np.int64)

#: Fauchère & Pliška 1983 hydrophobicity π by one-letter code, from Biopython (see :data:`SOURCES`).
CORE_HYDROPHOBICITY: Mapping[str, float] = MappingProxyType({letter: float(ProtParamData.fc[letter])
                                                              for letter in STANDARD})
#: :data:`CORE_HYDROPHOBICITY` in the order of :data:`globcons.core.alphabet.STANDARD`, ``float64``.
CORE_HYDROPHOBICITY_ARRAY = _as_array(CORE_HYDROPHOBICITY, np.float64)
#: A column is a hydrophobic core when the weighted mean π of its residues is at least this (between Tyr,
#: 0.96, and Val, 1.22: a column of I, L, V, F, W, M or C residues is one, a column of Ala is not).
HYDROPHOBIC_CORE_MIN = 1.0
#: A residue is polar (it leaves a hydrophobic core) when its π is below this: S, Q, N, E, D, K, R.
POLAR_MAX = 0.0

#: Where each table comes from, by table name.
SOURCES: Mapping[str, str] = MappingProxyType({
    "core hydrophobicity": ("Fauchère & Pliška 1983 Eur J Med Chem 18:369 (octanol/water hydrophobicity π of "
                            "the side chains), as shipped by Biopython in Bio.SeqUtils.ProtParamData.fc"),
    "hydropathy": "Kyte & Doolittle 1982 J Mol Biol 157:105 (hydropathy index; values from memory)",
    "volume": "Zamyatnin 1972 Prog Biophys Mol Biol 24:107 (residue volumes, Å^3; values from memory)",
    "charge": ("formal side-chain charge at neutral pH: +1 Lys, Arg; -1 Asp, Glu; 0 otherwise "
               "(His counted 0 although partly protonated, as is common practice)"),
})


def _standard(letter: str, role: str) -> str:
    if not isinstance(letter, str) or len(letter) != 1 or letter.upper() not in _HYDROPATHY:
        raise OptionError(
            f"{role} residue {letter!r} is not one of the 20 standard residues; "
            f"give a one-letter code from {STANDARD}"
        )
    return letter.upper()


def _signed(value: float, digits: int) -> str:
    # Zero is shown without a sign (and never as "-0.0"); other values always carry theirs.
    value = round(value, digits)
    if value == 0:
        return f"{0:.{digits}f}"
    return f"{value:+.{digits}f}"


@dataclass(frozen=True)
class PropertyChange:
    """What a substitution does to hydropathy, volume and charge.

    Every difference is new minus wild type, so a positive ``hydropathy`` means the new residue is
    more hydrophobic, a positive ``volume`` that it is larger.

    Attributes
    ----------
    wild, new
        One-letter codes of the wild-type and the new residue (upper case).
    hydropathy
        Kyte-Doolittle index of ``new`` minus that of ``wild``.
    volume
        Volume of ``new`` minus that of ``wild``, Å^3.
    charge
        Charge of ``new`` minus that of ``wild`` (-2 to +2).
    """

    wild: str
    new: str
    hydropathy: float
    volume: float
    charge: int

    def describe(self) -> str:
        """Plain words, with the values on both sides where they help.

        >>> property_change("E", "V").describe()
        'hydropathy -3.5 -> 4.2 (+7.7), volume +1.6 Å³, charge -1 -> 0'
        """
        charge_wild, charge_new = CHARGE[self.wild], CHARGE[self.new]
        return (
            f"hydropathy {HYDROPATHY[self.wild]:.1f} -> {HYDROPATHY[self.new]:.1f} "
            f"({_signed(self.hydropathy, 1)}), "
            f"volume {_signed(self.volume, 1)} Å³, "
            f"charge {_signed(charge_wild, 0)} -> {_signed(charge_new, 0)}"
        )

    def text(self) -> str:
        """The three differences, compact and ASCII-only, for a table cell.

        >>> property_change("K", "E").text()
        'hydropathy +0.4; volume -30.2 A^3; charge -2'
        """
        return (
            f"hydropathy {_signed(self.hydropathy, 1)}; "
            f"volume {_signed(self.volume, 1)} A^3; "
            f"charge {_signed(self.charge, 0)}"
        )


def property_change(wild: str, new: str) -> PropertyChange:
    """The property differences of substituting ``new`` for ``wild``.

    Parameters
    ----------
    wild, new
        One-letter codes of standard residues (either case).

    Returns
    -------
    PropertyChange
        Differences new minus wild. A synonymous pair gives all zeros.

    Raises
    ------
    OptionError
        If either letter is not one of the 20 standard residues.
    """
    wild = _standard(wild, "wild-type")
    new = _standard(new, "new")
    # The tables have one decimal; rounding keeps float noise (e.g. 7.700000000000001) out of results.
    return PropertyChange(
        wild=wild,
        new=new,
        hydropathy=round(HYDROPATHY[new] - HYDROPATHY[wild], 1),
        volume=round(VOLUME[new] - VOLUME[wild], 1),
        charge=CHARGE[new] - CHARGE[wild],
    )


def is_hydrophobic(letter: str) -> bool:
    """Whether a residue belongs in a hydrophobic core: its π is at least :data:`HYDROPHOBIC_CORE_MIN`.

    By this rule (Fauchère & Pliška 1983) W, I, F, L, C, M and V are hydrophobic; Tyr (0.96), Pro and Ala
    are not.

    Raises
    ------
    OptionError
        If ``letter`` is not one of the 20 standard residues.
    """
    return CORE_HYDROPHOBICITY[_standard(letter, "the")] >= HYDROPHOBIC_CORE_MIN


def is_polar(letter: str) -> bool:
    """Whether a residue is polar enough to leave a hydrophobic core: its π is below :data:`POLAR_MAX`.

    Raises
    ------
    OptionError
        If ``letter`` is not one of the 20 standard residues.
    """
    return CORE_HYDROPHOBICITY[_standard(letter, "the")] < POLAR_MAX


def core_hydrophobicity(frequencies: np.ndarray) -> np.ndarray:
    """Weighted mean π (Fauchère & Pliška) of the standard residues of each column; NaN without residues.

    Parameters
    ----------
    frequencies
        (..., >= 20) residue frequencies, the first 20 in the order of ``STANDARD``.
    """
    standard = np.asarray(frequencies, dtype=np.float64)[..., :len(STANDARD)]
    total = standard.sum(axis=-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total > 0, standard @ CORE_HYDROPHOBICITY_ARRAY / np.where(total > 0, total, 1.0), np.nan)


def is_charged(letter: str) -> bool:
    """Whether a residue carries a side-chain charge at neutral pH (K, R, D, E; His counted neutral).

    Raises
    ------
    OptionError
        If ``letter`` is not one of the 20 standard residues.
    """
    return CHARGE[_standard(letter, "the")] != 0
