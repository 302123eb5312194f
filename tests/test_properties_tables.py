"""Tests of globcons.core.properties against the published tables.

Expected values are typed here from the papers, independently of the module (both from memory):
Kyte & Doolittle 1982 J Mol Biol 157:105 (hydropathy index) and Zamyatnin 1972 Prog Biophys Mol Biol
24:107 (residue volumes, Å^3). Property changes are worked by hand from those values.
"""

from __future__ import annotations

import numpy as np
import pytest

from globcons.core import properties as rp
from globcons.core.alphabet import STANDARD
from globcons.errors import OptionError

# Kyte & Doolittle 1982 J Mol Biol 157:105, hydropathy index (from memory).
KYTE_DOOLITTLE = {
    "I": 4.5, "V": 4.2, "L": 3.8, "F": 2.8, "C": 2.5, "M": 1.9, "A": 1.8, "G": -0.4, "T": -0.7,
    "S": -0.8, "W": -0.9, "Y": -1.3, "P": -1.6, "H": -3.2, "E": -3.5, "Q": -3.5, "D": -3.5,
    "N": -3.5, "K": -3.9, "R": -4.5,
}
# Zamyatnin 1972 Prog Biophys Mol Biol 24:107, residue volumes in Å^3 (from memory).
ZAMYATNIN = {
    "G": 60.1, "A": 88.6, "S": 89.0, "C": 108.5, "D": 111.1, "P": 112.7, "N": 114.1, "T": 116.1,
    "E": 138.4, "V": 140.0, "Q": 143.8, "H": 153.2, "M": 162.9, "I": 166.7, "L": 166.7, "K": 168.6,
    "R": 173.4, "F": 189.9, "Y": 193.6, "W": 227.8,
}


def test_tables_cover_exactly_the_standard_residues():
    assert set(KYTE_DOOLITTLE) == set(ZAMYATNIN) == set(STANDARD)
    for table in (rp.HYDROPATHY, rp.VOLUME, rp.CHARGE):
        assert set(table) == set(STANDARD)


@pytest.mark.parametrize("letter", sorted(KYTE_DOOLITTLE))
def test_kyte_doolittle_values(letter):
    assert rp.HYDROPATHY[letter] == pytest.approx(KYTE_DOOLITTLE[letter], abs=1e-9)


@pytest.mark.parametrize("letter", sorted(ZAMYATNIN))
def test_zamyatnin_volumes(letter):
    assert rp.VOLUME[letter] == pytest.approx(ZAMYATNIN[letter], abs=1e-9)


def test_charges_at_neutral_ph():
    # +1 Lys, Arg; -1 Asp, Glu; His and everything else 0 (the usual convention).
    expected = dict.fromkeys(STANDARD, 0) | {"K": 1, "R": 1, "D": -1, "E": -1}
    assert dict(rp.CHARGE) == expected


def test_arrays_follow_the_alphabet_order():
    # STANDARD is alphabetical, ACDEFGHIKLMNPQRSTVWY: index 0 is Ala, 3 Glu, 17 Val, 18 Trp.
    assert rp.HYDROPATHY_ARRAY.shape == rp.VOLUME_ARRAY.shape == rp.CHARGE_ARRAY.shape == (20,)
    np.testing.assert_allclose(rp.HYDROPATHY_ARRAY, [KYTE_DOOLITTLE[c] for c in STANDARD])
    np.testing.assert_allclose(rp.VOLUME_ARRAY, [ZAMYATNIN[c] for c in STANDARD])
    assert rp.HYDROPATHY_ARRAY[0] == pytest.approx(1.8)
    assert rp.VOLUME_ARRAY[18] == pytest.approx(227.8)
    assert rp.CHARGE_ARRAY[3] == -1
    assert list(rp.CHARGE_ARRAY).count(0) == 16


def test_tables_are_read_only():
    with pytest.raises(TypeError):
        rp.HYDROPATHY["A"] = 0.0  # type: ignore[index]
    with pytest.raises(ValueError):
        rp.VOLUME_ARRAY[0] = 0.0


def test_sources_name_the_papers():
    assert "Kyte & Doolittle 1982 J Mol Biol 157:105" in rp.SOURCES["hydropathy"]
    assert "Zamyatnin 1972 Prog Biophys Mol Biol 24:107" in rp.SOURCES["volume"]
    assert "His" in rp.SOURCES["charge"]
    assert all("from memory" in rp.SOURCES[name] for name in ("hydropathy", "volume"))


def test_sickle_cell_change_worked_by_hand():
    # Beta E6V: hydropathy -3.5 -> 4.2 = +7.7; volume 140.0 - 138.4 = +1.6; charge -1 -> 0 = +1.
    change = rp.property_change("E", "V")
    assert (change.wild, change.new) == ("E", "V")
    assert change.hydropathy == pytest.approx(7.7)
    assert change.volume == pytest.approx(1.6)
    assert change.charge == 1
    assert change.text() == "hydropathy +7.7; volume +1.6 A^3; charge +1"
    assert change.describe() == "hydropathy -3.5 -> 4.2 (+7.7), volume +1.6 Å³, charge -1 -> 0"


def test_proximal_his_to_tyr_worked_by_hand():
    # Beta H92Y: hydropathy -3.2 -> -1.3 = +1.9; volume 193.6 - 153.2 = +40.4; charge 0 -> 0.
    change = rp.property_change("H", "Y")
    assert change.hydropathy == pytest.approx(1.9)
    assert change.volume == pytest.approx(40.4)
    assert change.charge == 0
    assert change.text() == "hydropathy +1.9; volume +40.4 A^3; charge 0"
    assert change.describe() == "hydropathy -3.2 -> -1.3 (+1.9), volume +40.4 Å³, charge 0 -> 0"


def test_charge_reversal_and_shrinking_worked_by_hand():
    # R -> D: hydropathy -4.5 -> -3.5 = +1.0; volume 111.1 - 173.4 = -62.3; charge +1 -> -1 = -2.
    change = rp.property_change("r", "d")
    assert (change.wild, change.new) == ("R", "D")
    assert change.text() == "hydropathy +1.0; volume -62.3 A^3; charge -2"
    assert change.describe() == "hydropathy -4.5 -> -3.5 (+1.0), volume -62.3 Å³, charge +1 -> -1"


def test_synonymous_change_is_all_zero_without_signs():
    change = rp.property_change("L", "L")
    assert (change.hydropathy, change.volume, change.charge) == (0.0, 0.0, 0)
    assert change.text() == "hydropathy 0.0; volume 0.0 A^3; charge 0"


def test_isoleucine_to_leucine_equal_volumes():
    # Zamyatnin gives I and L the same volume, 166.7; hydropathy 4.5 -> 3.8 = -0.7.
    change = rp.property_change("I", "L")
    assert change.volume == 0.0
    assert change.hydropathy == pytest.approx(-0.7)


def test_property_change_is_frozen():
    change = rp.property_change("E", "V")
    with pytest.raises(AttributeError):
        change.charge = 0  # type: ignore[misc]


@pytest.mark.parametrize("bad", ["B", "X", "U", "*", "", "EV", "Glu"])
def test_property_change_rejects_non_standard(bad):
    with pytest.raises(OptionError, match="20 standard residues"):
        rp.property_change(bad, "V")
    with pytest.raises(OptionError, match=f"new residue {bad!r}"):
        rp.property_change("E", bad)


def test_core_hydrophobicity_is_fauchere_pliska_and_counts_aromatic_and_sulfur_residues():
    # Fauchère & Pliška 1983 Eur J Med Chem 18:369, octanol/water pi of the side chains (values as published,
    # from memory, and as Biopython ships them): W 2.25, I 1.80, F 1.79, L 1.70, C 1.54, M 1.23, V 1.22,
    # Y 0.96; R -1.01, K -0.99, D -0.77.
    published = {"W": 2.25, "I": 1.80, "F": 1.79, "L": 1.70, "C": 1.54, "M": 1.23, "V": 1.22, "Y": 0.96,
                 "R": -1.01, "K": -0.99, "D": -0.77}
    for letter, value in published.items():
        assert rp.CORE_HYDROPHOBICITY[letter] == pytest.approx(value)
    assert {c for c in STANDARD if rp.is_hydrophobic(c)} == set("WIFLCMV")
    assert rp.is_hydrophobic("w")  # Kyte-Doolittle rates Trp -0.9: it is the core scale that decides
    assert {c for c in STANDARD if rp.is_polar(c)} == set("SQNEDKR")
    # The column of an unstable hemoglobin variant's position (beta A12): W 0.82, F 0.13, L 0.04.
    column = np.zeros(20)
    column[[STANDARD.index("W"), STANDARD.index("F"), STANDARD.index("L")]] = 0.82, 0.13, 0.04
    assert rp.core_hydrophobicity(column) == pytest.approx((0.82 * 2.25 + 0.13 * 1.79 + 0.04 * 1.70) / 0.99)
    assert rp.core_hydrophobicity(column) >= rp.HYDROPHOBIC_CORE_MIN


def test_charged_residues():
    assert {c for c in STANDARD if rp.is_charged(c)} == set("KRDE")
    assert not rp.is_charged("H")
    with pytest.raises(OptionError, match="'Z'"):
        rp.is_charged("Z")
