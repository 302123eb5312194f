"""Tests of globcons.mutations.notation: reading and writing single substitutions.

Facts used: beta's sickle-cell change is Glu6Val in traditional (mature) numbering, p.Glu7Val in HGVS
numbering which counts the initiator Met, at frame label A3; beta His92 is F8 (nomenclature from
memory; see the project's shared reference README). Three-letter codes are the IUPAC-IUB ones.
"""

from __future__ import annotations

import dataclasses

import pytest
from hypothesis import given
from hypothesis import strategies as st

from globcons.errors import InputError, OptionError
from globcons.mutations.notation import (
    STYLES,
    Mutation,
    format_mutation,
    parse_mutation,
    parse_mutation_list,
    read_mutation_file,
)

# The 20 standard residues with their IUPAC three-letter codes, typed here independently.
THREE = {
    "A": "Ala", "R": "Arg", "N": "Asn", "D": "Asp", "C": "Cys", "Q": "Gln", "E": "Glu", "G": "Gly",
    "H": "His", "I": "Ile", "L": "Leu", "K": "Lys", "M": "Met", "F": "Phe", "P": "Pro", "S": "Ser",
    "T": "Thr", "W": "Trp", "Y": "Tyr", "V": "Val",
}


# ---------------------------------------------------------------------------------------------
# Accepted notations

@pytest.mark.parametrize(("text", "hgvs", "style"), [
    ("E6V", False, "one-letter"),
    ("e6v", False, "one-letter"),
    ("Glu6Val", False, "three-letter"),
    ("GLU6VAL", False, "three-letter"),
    ("glu6val", False, "three-letter"),
    ("p.Glu6Val", True, "three-letter"),
    ("p.E6V", True, "one-letter"),
    ("p.(Glu6Val)", True, "three-letter"),
    ("  E6V\t", False, "one-letter"),
])
def test_every_notation_of_e6v_agrees(text, hgvs, style):
    m = parse_mutation(text)
    assert (m.wild, m.position, m.new) == ("E", 6, "V")
    assert m.label is None
    assert m.hgvs is hgvs
    assert m.style == style
    assert m.text == text.strip()
    assert not m.is_synonymous


def test_hgvs_position_is_kept_as_written():
    # p. names count from the Met: beta's sickle-cell change is p.Glu7Val. The parser does not renumber.
    m = parse_mutation("p.Glu7Val")
    assert (m.wild, m.position, m.new, m.hgvs, m.predicted) == ("E", 7, "V", True, False)
    assert parse_mutation("p.(Glu7Val)").predicted is True


@pytest.mark.parametrize(("text", "label", "new", "three"), [
    ("A3:V", "A3", "V", False),
    ("A3:Val", "A3", "V", True),
    ("A3:val", "A3", "V", True),
    ("F8:His", "F8", "H", True),
    ("FG3:W", "FG3", "W", False),
    ("CE1:L", "CE1", "L", False),
    ("NA1:Ser", "NA1", "S", True),
    ("E6:V", "E6", "V", False),  # with a colon, "E6" is helix E's sixth residue
])
def test_label_forms(text, label, new, three):
    m = parse_mutation(text)
    assert (m.wild, m.position, m.label, m.new) == (None, None, label, new)
    assert (m.style, m.hgvs, m.three_letter) == ("label", False, three)
    assert not m.is_synonymous


def test_label_without_colon_is_a_residue_letter():
    # "A3V" is Ala3Val, not label A3; "F8H" is Phe8His.
    m = parse_mutation("A3V")
    assert (m.wild, m.position, m.new, m.label) == ("A", 3, "V", None)
    assert (parse_mutation("F8H").wild, parse_mutation("F8H").new) == ("F", "H")


def test_synonymous_is_accepted_and_flagged():
    m = parse_mutation("Glu6Glu")
    assert (m.wild, m.new) == ("E", "E")
    assert m.is_synonymous
    assert parse_mutation("E6E").is_synonymous


def test_mutation_is_frozen():
    m = parse_mutation("E6V")
    with pytest.raises(dataclasses.FrozenInstanceError):
        m.new = "A"  # type: ignore[misc]


# ---------------------------------------------------------------------------------------------
# Rejections: each message names the text and says what is wrong

@pytest.mark.parametrize(("text", "phrase"), [
    ("B6V", "'B' is not one of the 20 standard residues"),
    ("E6B", "'B' is not one of the 20 standard residues"),
    ("Z6V", "'Z' is not one of the 20 standard residues"),
    ("U6V", "'U' is not one of the 20 standard residues"),
    ("Asx6Val", "'Asx' is not a standard three-letter code"),
    ("Glu6Sec", "'Sec' is not a standard three-letter code"),
    ("E0V", "position 0 does not exist"),
    ("Glu0Val", "position 0 does not exist"),
    ("E06V", "leading zero"),
    ("E6", "expected a wild-type residue, a position and a new residue"),
    ("6V", "the wild-type residue comes first"),
    ("EV", "expected a wild-type residue, a position and a new residue"),
    ("E6VK", "got 'E' and 'VK'"),
    ("E6V junk", "contains a space"),
    ("E6V!", "expected a wild-type residue"),
    ("E6Val", "mixed"),
    ("Glu6V", "mixed"),
    ("p.Glu6del", "only single substitutions"),
    ("p.Glu6fs", "only single substitutions"),
    ("p.Glu6ValfsTer3", "frameshifts"),
    ("E6_V8del", "only single substitutions"),
    ("p.Glu6_Val8del", "only single substitutions"),
    ("p.Glu6dup", "only single substitutions"),
    ("p.Glu6_Leu7insVal", "only single substitutions"),
    ("p.Glu6delinsVal", "only single substitutions"),
    ("E6*", "stop changes"),
    ("p.Glu6Ter", "stop changes"),
    ("p.(Glu6*)", "stop changes"),
    ("E6X", "'X' (unknown or stop) is not supported"),
    ("p.Glu6=", "'=' (no change) is not read"),
    ("c.20A>T", "nucleic-acid"),
    ("g.5248232T>A", "nucleic-acid"),
    ("p.", "nothing after the prefix"),
    ("p.(Glu6Val", "unbalanced parentheses"),
    ("(Glu6Val)", "parentheses belong to a predicted HGVS name"),
    ("p.A3:V", "the frame label form takes no prefix"),
    ("a3:v", "written in capitals: A3"),
    ("Z9:V", "'Z9' is not a frame label"),
    ("A0:V", "'A0' is not a frame label"),
    ("E6V:V", "takes no wild-type residue"),
    ("A3:", "either side of ':'"),
    (":V", "either side of ':'"),
    ("A3:B", "'B' is not one of the 20 standard residues"),
    ("A3:V:L", "more than one ':'"),
    ("CD1L", "write CD1:L"),
    ("A3", "A3:V"),
    ("E6V,H92Y", "not a list"),
])
def test_rejections(text, phrase):
    with pytest.raises(OptionError) as caught:
        parse_mutation(text)
    message = str(caught.value)
    assert phrase in message
    assert repr(text.strip()) in message


@pytest.mark.parametrize("text", ["", "   "])
def test_empty_mutation(text):
    with pytest.raises(OptionError, match="empty mutation"):
        parse_mutation(text)


def test_mutation_checks_fields_built_in_code():
    with pytest.raises(OptionError, match="needs a position or a frame label"):
        Mutation(wild=None, position=None, new="V")
    with pytest.raises(OptionError, match="is not a frame label"):
        Mutation(wild=None, position=None, new="V", label="Q3", style="label")
    with pytest.raises(OptionError, match="whole number from 1"):
        Mutation(wild="E", position=0, new="V")
    with pytest.raises(OptionError, match="'B'"):
        Mutation(wild="E", position=6, new="B")
    with pytest.raises(OptionError, match="both a wild-type residue and a position"):
        Mutation(wild="E", position=None, new="V", label="A3", style="label")


# ---------------------------------------------------------------------------------------------
# Formatting

def test_format_each_style_of_e6v():
    m = parse_mutation("glu6val")
    assert format_mutation(m) == "Glu6Val"
    assert format_mutation(m, "one-letter") == "E6V"
    assert format_mutation(m, "three-letter", hgvs=True) == "p.Glu6Val"
    assert format_mutation(m, "one-letter", hgvs=True) == "p.E6V"
    assert format_mutation(m, hgvs=True, predicted=True) == "p.(Glu6Val)"
    assert str(parse_mutation("p.(e7v)")) == "p.(E7V)"
    assert format_mutation(parse_mutation("p.(Glu7Val)"), hgvs=False) == "Glu7Val"


def test_format_label_forms():
    assert format_mutation(parse_mutation("F8:his")) == "F8:His"
    assert format_mutation(parse_mutation("F8:H"), three_letter=True) == "F8:His"
    assert format_mutation(parse_mutation("F8:His"), three_letter=False) == "F8:H"


def test_format_needs_what_the_style_needs():
    with pytest.raises(OptionError, match="no position"):
        format_mutation(parse_mutation("A3:V"), "one-letter")
    with pytest.raises(OptionError, match="no frame label"):
        format_mutation(parse_mutation("E6V"), "label")
    with pytest.raises(OptionError, match="'short'"):
        format_mutation(parse_mutation("E6V"), "short")
    with pytest.raises(OptionError, match="cannot be an HGVS"):
        format_mutation(parse_mutation("A3:V"), "label", hgvs=True)


def test_placed_label_mutation_formats_both_ways():
    # A caller that has placed A3:V on beta fills in the residue and its number.
    placed = dataclasses.replace(parse_mutation("A3:V"), wild="E", position=6)
    assert format_mutation(placed) == "A3:V"
    assert format_mutation(placed, "three-letter") == "Glu6Val"
    assert format_mutation(placed, "one-letter", hgvs=True) == "p.E6V"


@pytest.mark.parametrize("text", ["E6V", "Glu6Val", "p.Glu7Val", "p.E7V", "p.(Glu7Val)", "p.(E7V)",
                                  "A3:V", "A3:Val", "F8:His", "H92Y"])
def test_canonical_text_round_trips_exactly(text):
    assert format_mutation(parse_mutation(text)) == text


# Every label the frame can name: segments with places from 1 (the parser decides via frame.is_label).
SEGMENTS = ["NA", "A", "AB", "B", "C", "CD", "CE", "D", "E", "EF", "F", "FG", "G", "GH", "H", "HC"]
residues = st.sampled_from(sorted(THREE))
labels = st.builds(lambda seg, place: f"{seg}{place}", st.sampled_from(SEGMENTS),
                   st.integers(min_value=1, max_value=40))


@given(wild=residues, new=residues, position=st.integers(min_value=1, max_value=100_000),
       label=labels, style=st.sampled_from(STYLES), hgvs=st.booleans(), predicted=st.booleans(),
       three=st.booleans())
def test_round_trip_every_style(wild, new, position, label, style, hgvs, predicted, three):
    m = Mutation(wild=wild, position=position, new=new, label=label)
    use_hgvs = hgvs and style != "label"
    text = format_mutation(m, style, hgvs=use_hgvs, predicted=predicted and use_hgvs, three_letter=three)
    back = parse_mutation(text)
    assert back.new == new
    assert back.style == style
    if style == "label":
        assert text == f"{label}:{THREE[new] if three else new}"
        assert (back.label, back.wild, back.position, back.three_letter) == (label, None, None, three)
    else:
        if style == "three-letter":
            written = f"{THREE[wild]}{position}{THREE[new]}"
        else:
            written = f"{wild}{position}{new}"
        if predicted and use_hgvs:
            written = f"({written})"
        assert text == (f"p.{written}" if use_hgvs else written)
        assert (back.wild, back.position, back.label) == (wild, position, None)
        assert back.hgvs is use_hgvs
        assert back.predicted is (predicted and use_hgvs)
        assert back.is_synonymous is (wild == new)
    # Formatting what was read gives the same text again.
    assert format_mutation(back) == text


@given(wild=residues, new=residues, position=st.integers(min_value=1, max_value=999),
       data=st.data())
def test_any_letter_case_of_three_letter_codes(wild, new, position, data):
    text = f"{THREE[wild]}{position}{THREE[new]}"
    flips = data.draw(st.lists(st.booleans(), min_size=len(text), max_size=len(text)))
    mixed = "".join(ch.swapcase() if flip else ch for ch, flip in zip(text, flips, strict=True))
    m = parse_mutation(mixed)
    assert (m.wild, m.position, m.new, m.style) == (wild, position, new, "three-letter")


# ---------------------------------------------------------------------------------------------
# Lists and files

def test_list_parsing():
    mutations = parse_mutation_list(" E6V,p.Glu7Val , A3:Val,H92Y ")
    assert [(m.wild, m.position, m.new, m.label) for m in mutations] == [
        ("E", 6, "V", None), ("E", 7, "V", None), (None, None, "V", "A3"), ("H", 92, "Y", None)]
    assert [m.text for m in mutations] == ["E6V", "p.Glu7Val", "A3:Val", "H92Y"]
    assert len(parse_mutation_list("E6V")) == 1


@pytest.mark.parametrize(("text", "phrase"), [
    ("E6V,,H92Y", "item 2 of the mutation list 'E6V,,H92Y' is empty"),
    ("E6V,", "item 2 of the mutation list 'E6V,' is empty"),
    (",E6V", "item 1 of the mutation list ',E6V' is empty"),
    ("E6V, ,H92Y", "item 2 of the mutation list"),
    ("", "empty mutation list"),
    ("E6V,H92Y,p.Glu6del", "item 3 of the mutation list: mutation 'p.Glu6del'"),
])
def test_list_rejections(text, phrase):
    with pytest.raises(OptionError) as caught:
        parse_mutation_list(text)
    assert phrase in str(caught.value)


def test_file_parsing(tmp_path):
    path = tmp_path / "mutations.txt"
    path.write_text("# beta chain\n\nE6V\n  p.Glu7Val   # HGVS, from the Met\nF8:His\n\n", encoding="utf-8")
    mutations = read_mutation_file(path)
    assert [(m.wild, m.position, m.new, m.label) for m in mutations] == [
        ("E", 6, "V", None), ("E", 7, "V", None), (None, None, "H", "F8")]
    assert read_mutation_file(str(path)) == mutations


def test_file_error_names_file_and_line(tmp_path):
    path = tmp_path / "bad.txt"
    path.write_text("E6V\n# comment\n\nGlu6fs\nH92Y\n", encoding="utf-8")
    with pytest.raises(InputError) as caught:
        read_mutation_file(path)
    error = caught.value
    assert (error.source, error.line) == (str(path), 4)
    assert str(error).startswith(f"{path}:4: ")
    assert "only single substitutions" in str(error)


def test_file_line_with_a_list(tmp_path):
    path = tmp_path / "list.txt"
    path.write_text("E6V\nE6V, H92Y\n", encoding="utf-8")
    with pytest.raises(InputError, match="one mutation per line") as caught:
        read_mutation_file(path)
    assert caught.value.line == 2


def test_file_without_mutations(tmp_path):
    path = tmp_path / "empty.txt"
    path.write_text("# nothing yet\n\n", encoding="utf-8")
    with pytest.raises(InputError, match="no mutations") as caught:
        read_mutation_file(path)
    assert caught.value.source == str(path)


def test_missing_file(tmp_path):
    path = tmp_path / "absent.txt"
    with pytest.raises(InputError, match="cannot read the mutation file") as caught:
        read_mutation_file(path)
    assert caught.value.source == str(path)


def test_position_from_numpy_is_stored_as_int():
    import numpy as np

    m = Mutation(wild="E", position=np.int64(6), new="V")
    assert type(m.position) is int
    assert m == Mutation(wild="E", position=6, new="V")
    with pytest.raises(OptionError, match="whole number"):
        Mutation(wild="E", position=6.0, new="V")  # type: ignore[arg-type]


def test_built_mutation_gets_canonical_text():
    assert Mutation(wild="H", position=92, new="Y").text == "H92Y"
    label_form = Mutation(wild=None, position=None, new="H", label="F8", style="label", three_letter=True)
    assert label_form.text == "F8:His"
    assert Mutation(wild="E", position=7, new="V", hgvs=True, style="three-letter", three_letter=True).text \
        == "p.Glu7Val"
