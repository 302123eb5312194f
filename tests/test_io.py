"""Tests of globcons.io.readers: the alignment and sequence readers.

Every input is a tiny hand-made file written to ``tmp_path``; every expected code matrix is worked out
by hand from the code table below (written out here, not taken from the package):

    A0 C1 D2 E3 F4 G5 H6 I7 K8 L9 M10 N11 P12 Q13 R14 S15 T16 V17 W18 Y19 | U20 O21 | X/B/Z/J 22 | gap 23
"""

from __future__ import annotations

import gzip
import io
import sys
import warnings

import numpy as np
import pytest

from globcons.errors import InputError, InputWarning
from globcons.io.alignments import parse_alignment, read_alignment
from globcons.io.records import read_sequences
from globcons.io.sniff import sniff_format

# The code table of the module docstring, typed out by hand (independent of globcons.core.alphabet).
_HAND_CODES = {letter: code for code, letter in enumerate("ACDEFGHIKLMNPQRSTVWY")}
_HAND_CODES.update({"U": 20, "O": 21, "X": 22, "B": 22, "Z": 22, "J": 22, "-": 23, ".": 23, "~": 23})


def hand(*rows: str) -> list[list[int]]:
    """Code matrix of upper-case rows, from the hand-typed table."""
    return [[_HAND_CODES[c] for c in row] for row in rows]


def write(tmp_path, name: str, data: bytes):
    path = tmp_path / name
    path.write_bytes(data)
    return path


def read_quietly(path, **kwargs):
    """read_alignment, failing the test on any warning (the input should be clean)."""
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        return read_alignment(path, **kwargs)


# --------------------------------------------------------------------------------------------------
# aligned FASTA


def test_wrapped_and_unwrapped_fasta_give_identical_codes(tmp_path):
    unwrapped = write(tmp_path, "one_line.fasta", b">h1 first\nMVHLTPEEK\n>h2\nMV-LSPADK\n")
    wrapped = write(tmp_path, "wrapped.fasta", b">h1 first\nMVHL\nTPEE\nK\n>h2\nMV-\nLSP\nADK\n")
    a = read_quietly(unwrapped)
    b = read_quietly(wrapped)
    expected = hand("MVHLTPEEK", "MV-LSPADK")
    assert a.codes.tolist() == expected
    assert b.codes.tolist() == expected
    assert a.ids == b.ids == ("h1", "h2")
    assert a.descriptions == ("first", "")
    assert a.codes.dtype == np.uint8
    assert (a.n_rows, a.n_columns) == (2, 9)
    assert a.format == "fasta"


def test_crlf_and_utf8_bom_accepted(tmp_path):
    path = write(tmp_path, "win.fasta", b"\xef\xbb\xbf>w1\r\nKLM\r\nNP\r\n>w2\r\nK-MNA\r\n")
    alignment = read_quietly(path)
    assert alignment.ids == ("w1", "w2")  # no BOM glued to the first id, no '\r' on any id
    assert alignment.codes.tolist() == hand("KLMNP", "K-MNA")


def test_bom_accepted_by_parse_alignment_too():
    # parse_alignment takes a file's bytes; a BOM at their start is not part of the alignment.
    alignment = parse_alignment(b"\xef\xbb\xbf>b1\nHK\n>b2\nHR\n")
    assert alignment.ids == ("b1", "b2")
    assert alignment.codes.tolist() == hand("HK", "HR")


def test_blank_lines_anywhere_are_ignored(tmp_path):
    path = write(tmp_path, "blanks.fasta", b"\n\n>e1\nAC\n\nDE\n\n\n>e2\n\nACD-\n\n")
    assert read_quietly(path).codes.tolist() == hand("ACDE", "ACD-")


def test_trailing_blanks_on_a_line_are_tolerated(tmp_path):
    path = write(tmp_path, "trail.fasta", b">t1\nAC \t\nDE\n>t2\nACDE  \n")
    assert read_quietly(path).codes.tolist() == hand("ACDE", "ACDE")


def test_final_stop_dropped(tmp_path):
    path = write(tmp_path, "stops.fasta", b">s1\nMKV*\n>s2\nMRV*\n")
    alignment = read_quietly(path)
    assert alignment.codes.tolist() == hand("MKV", "MRV")


def test_final_stop_on_a_wrapped_row_dropped(tmp_path):
    # the '*' sits alone on the last line of the first record
    path = write(tmp_path, "stops2.fasta", b">s1\nMKV\n*\n>s2\nMRV\n")
    assert read_quietly(path).codes.tolist() == hand("MKV", "MRV")


def test_internal_stop_is_unknown_with_a_warning(tmp_path):
    path = write(tmp_path, "inner.fasta", b">s1\nMK*VL\n>s2\nMKAVL\n")
    with pytest.warns(InputWarning, match="stop"):
        alignment = read_alignment(path)
    # the '*' inside the row becomes the unknown code 22; the row keeps its length
    assert alignment.codes.tolist() == [[10, 8, 22, 17, 9], [10, 8, 0, 17, 9]]


def test_lower_case_plain_fasta_read_case_insensitively(tmp_path):
    lower = read_quietly(write(tmp_path, "lower.fasta", b">l1\nvlspadk\n>l2\nvl-eadk\n"))
    upper = read_quietly(write(tmp_path, "upper.fasta", b">l1\nVLSPADK\n>l2\nVL-EADK\n"))
    assert lower.codes.tolist() == upper.codes.tolist() == hand("VLSPADK", "VL-EADK")


def test_all_three_gap_characters_are_gap_code_23(tmp_path):
    path = write(tmp_path, "gaps.fasta", b">g1\nA-.~C\n>g2\nA~-.C\n")
    assert read_quietly(path).codes.tolist() == [[0, 23, 23, 23, 1], [0, 23, 23, 23, 1]]


def test_ambiguity_codes_unknown_and_u_o_kept(tmp_path):
    path = write(tmp_path, "odd.fasta", b">o1\nXBZJxbzj\n>o2\nUOuoCKck\n")
    alignment = read_quietly(path)
    assert alignment.codes.tolist() == [[22] * 8, [20, 21, 20, 21, 1, 8, 1, 8]]


# --------------------------------------------------------------------------------------------------
# A2M

# Match states: upper case and '-'; insert states: lower case and '.'.


def test_a2m_drops_inserts_by_default_with_format_option(tmp_path):
    # m1: A C - | g | D ; m2: A C E | . | D ; m3: A C - | h h | D  (each: 4 match states)
    path = write(tmp_path, "plain_name.txt", b">m1\nAC-gD\n>m2\nACE.D\n>m3\nAC-hhD\n")
    alignment = read_quietly(path, format="a2m")
    assert alignment.codes.tolist() == hand("AC-D", "ACED", "AC-D")
    assert alignment.format == "a2m"


def test_a2m_chosen_by_file_extension(tmp_path):
    path = write(tmp_path, "family.a2m", b">m1\nAC-gD\n>m2\nACE.D\n>m3\nAC-hhD\n")
    alignment = read_quietly(path)
    assert alignment.format == "a2m"
    assert alignment.codes.tolist() == hand("AC-D", "ACED", "AC-D")


def test_same_a2m_text_as_fasta_keeps_lower_case_as_residues(tmp_path):
    # Without the A2M choice the file is plain FASTA: lower case are residues, '.' a gap, rows must agree.
    path = write(tmp_path, "padded.fasta", b">m1\nAC-gD\n>m2\nACE.D\n")
    assert read_quietly(path).codes.tolist() == hand("AC-GD", "ACE-D")


def test_a2m_keep_inserts_padded_rows(tmp_path):
    # Inserts already padded with '.': kept columns as they stand, lower case read as residues.
    path = write(tmp_path, "padded.a2m", b">m1\nACghD\n>m2\nAC.hD\n>m3\nAC..D\n")
    alignment = read_quietly(path, keep_inserts=True)
    assert alignment.codes.tolist() == hand("ACGHD", "AC-HD", "AC--D")


def test_a2m_keep_inserts_unpadded_rows_are_padded(tmp_path):
    # Rows with different insert lengths and no '.' padding:
    #   m1: A C [g h] D       match states A C D
    #   m2: A C D             match states A C D
    #   m3: A [m] C -         match states A C -
    # Insert slots: after A at most 1 (m3), after C at most 2 (m1). Padded layout:
    #   col:  1  2     3  4   5   6
    #         A  ins1  C  ins ins D
    #   m1:   A  -     C  G   H   D
    #   m2:   A  -     C  -   -   D
    #   m3:   A  M     C  -   -   -
    path = write(tmp_path, "ragged.a2m", b">m1\nACghD\n>m2\nACD\n>m3\nAmC-\n")
    alignment = read_quietly(path, keep_inserts=True)
    assert alignment.codes.tolist() == hand("A-CGHD", "A-C--D", "AMC---")


def test_a2m_keep_inserts_at_both_ends(tmp_path):
    #   k1: [m] A C D         k2: A C D [k k]        k3: A C -
    # slot before A: width 1; slot after the last match: width 2. Layout: ins A C D ins ins
    #   k1: M A C D - -
    #   k2: - A C D K K
    #   k3: - A C - - -
    path = write(tmp_path, "ends.a2m", b">k1\nmACD\n>k2\nACDkk\n>k3\nAC-\n")
    alignment = read_quietly(path, keep_inserts=True)
    assert alignment.codes.tolist() == hand("MACD--", "-ACDKK", "-AC---")


def test_a2m_default_drops_the_same_ragged_inserts(tmp_path):
    path = write(tmp_path, "ragged.a2m", b">m1\nACghD\n>m2\nACD\n>m3\nAmC-\n")
    assert read_quietly(path).codes.tolist() == hand("ACD", "ACD", "AC-")


# --------------------------------------------------------------------------------------------------
# Stockholm

STOCKHOLM = b"""# STOCKHOLM 1.0
#=GF ID synthetic_demo
#=GS st1 DE made-up sequence one
st1   MVLS
st2   MV-S
st3   MKLT
#=GR st1 SS HHHH
#=GC SS_cons HHH-

st1   PADK
st2   PE-K
st3   PA.R
#=GR st1 SS HCCC
#=GC SS_cons HC-C
//
"""


def test_stockholm_multiblock_rows_concatenated(tmp_path):
    alignment = read_quietly(write(tmp_path, "family.sto", STOCKHOLM))
    assert alignment.format == "stockholm"
    assert alignment.ids == ("st1", "st2", "st3")  # no '#=GR' row among them
    assert alignment.codes.tolist() == hand("MVLSPADK", "MV-SPE-K", "MKLTPA-R")


def test_stockholm_column_annotation(tmp_path):
    alignment = read_quietly(write(tmp_path, "family.sto", STOCKHOLM))
    assert dict(alignment.column_annotations) == {"SS_cons": "HHH-HC-C"}


def test_stockholm_crlf(tmp_path):
    alignment = read_quietly(write(tmp_path, "win.sto", STOCKHOLM.replace(b"\n", b"\r\n")))
    assert alignment.codes.tolist() == hand("MVLSPADK", "MV-SPE-K", "MKLTPA-R")
    assert alignment.column_annotations["SS_cons"] == "HHH-HC-C"


def test_stockholm_without_terminator(tmp_path):
    path = write(tmp_path, "cut.sto", STOCKHOLM.replace(b"//\n", b""))
    with pytest.raises(InputError, match="//") as info:
        read_alignment(path)
    assert str(path) in str(info.value)


def test_stockholm_blocks_of_unequal_length_name_the_row(tmp_path):
    # st2 loses one column in the second block: 7 columns against 8 for the two others.
    path = write(tmp_path, "short.sto", STOCKHOLM.replace(b"st2   PE-K", b"st2   PE-"))
    with pytest.raises(InputError, match="st2") as info:
        read_alignment(path)
    assert str(path) in str(info.value)
    assert "st1" not in info.value.message and "st3" not in info.value.message


# --------------------------------------------------------------------------------------------------
# PHYLIP and NEXUS


def test_phylip_relaxed_long_names(tmp_path):
    # ids longer than the strict 10 characters, one row per line
    data = b"3 6\nalpha_globin_like MVLSPA\nbeta_x MV-SPE\ngamma MKLTPA\n"
    alignment = read_quietly(write(tmp_path, "family.phy", data))
    assert alignment.ids == ("alpha_globin_like", "beta_x", "gamma")
    assert alignment.codes.tolist() == hand("MVLSPA", "MV-SPE", "MKLTPA")


def test_phylip_relaxed_interleaved(tmp_path):
    data = b"3 8\nalpha_globin_like MVLSP\nbeta_x MV-SP\ngamma MKLTP\n\nADK\nE-K\nA-R\n"
    alignment = read_quietly(write(tmp_path, "inter.phy", data))
    assert alignment.ids == ("alpha_globin_like", "beta_x", "gamma")
    assert alignment.codes.tolist() == hand("MVLSPADK", "MV-SPE-K", "MKLTPA-R")


def test_phylip_sequential_wrapped_strict_names(tmp_path):
    # Strict PHYLIP: ids padded to 10 characters; each sequence continues on the next line.
    data = b" 2 8\nseqA      MVLSP\nADK\nseqB      MV-SP\nE-K\n"
    alignment = read_quietly(write(tmp_path, "seq.phy", data))
    assert alignment.ids == ("seqA", "seqB")
    assert alignment.codes.tolist() == hand("MVLSPADK", "MV-SPE-K")


def test_nexus_protein(tmp_path):
    data = b"""#NEXUS
begin data;
  dimensions ntax=3 nchar=6;
  format datatype=protein missing=? gap=-;
  matrix
  heme_one MKV-LS
  heme_two MRVQL-
  heme_three MKV?LS
  ;
end;
"""
    alignment = read_quietly(write(tmp_path, "family.nex", data))
    assert alignment.format == "nexus"
    assert alignment.ids == ("heme_one", "heme_two", "heme_three")
    # '?' (missing) is read as unknown, code 22
    assert alignment.codes.tolist() == [[10, 8, 17, 23, 9, 15], [10, 14, 17, 13, 9, 23], [10, 8, 17, 22, 9, 15]]


def test_phylip_header_without_rows_is_an_input_error(tmp_path):
    # Biopython reads " 2 4" alone as two empty rows; that must be our error, not a crash (the header's
    # counts are checked against the file's size first)
    err = _error(write(tmp_path, "head_only.phy", b" 2 4\n"))
    assert err.message == "PHYLIP header says 2 sequences of 4 columns, more than a file of 5 bytes can hold"


def test_phylip_fewer_rows_than_declared(tmp_path):
    _error(write(tmp_path, "short.phy", b"3 5\nalpha ACDEF\nbeta AC-EF\n"))


@pytest.mark.parametrize("data, expected", [
    (b">a\nAC\n>b\nAD\n", "fasta"),
    (b"\n\n>a\nAC\n", "fasta"),
    (b"# STOCKHOLM 1.0\na AC\n//\n", "stockholm"),
    (b"#NEXUS\nbegin data;\n", "nexus"),
    (b" 2 4\na ACDE\nb ACDE\n", "phylip"),
])
def test_sniff_format(data, expected):
    assert sniff_format(data) == expected


def test_format_option_overrides_sniffing(tmp_path):
    # FASTA content read with format="a2m": lower case dropped although nothing in the name says A2M
    path = write(tmp_path, "x.fasta", b">a\nAcD\n>b\nA.D\n")
    assert read_quietly(path, format="a2m").codes.tolist() == hand("AD", "AD")
    assert read_quietly(path).codes.tolist() == hand("ACD", "A-D")


# --------------------------------------------------------------------------------------------------
# gzip and standard input


def test_gzip_detected_by_magic_bytes_without_gz_name(tmp_path):
    path = write(tmp_path, "family.txt", gzip.compress(b">z1\nMKV\n>z2\nM-V\n"))
    assert read_quietly(path).codes.tolist() == hand("MKV", "M-V")


def test_gzip_with_gz_name_and_a2m_extension(tmp_path):
    path = write(tmp_path, "family.a2m.gz", gzip.compress(b">z1\nMkKV\n>z2\nM.-V\n"))
    alignment = read_quietly(path)
    assert alignment.format == "a2m"
    assert alignment.codes.tolist() == hand("MKV", "M-V")


def test_truncated_gzip_is_an_input_error(tmp_path):
    whole = gzip.compress(b">z1\n" + b"MKVLSPADKTNVKAAWGKVGAHAGEYGAEALERMFLSFPTTKTYFPHF\n" * 20)
    path = write(tmp_path, "cut.fasta.gz", whole[: len(whole) // 2])
    with pytest.raises(InputError, match="gzip") as info:
        read_alignment(path)
    assert str(path) in str(info.value)


class _FakeStdin:
    def __init__(self, data: bytes) -> None:
        self.buffer = io.BytesIO(data)


def test_stdin_dash(monkeypatch):
    monkeypatch.setattr(sys, "stdin", _FakeStdin(b">in1\nHKL\n>in2\nHR-\n"))
    alignment = read_quietly("-")
    assert alignment.ids == ("in1", "in2")
    assert alignment.codes.tolist() == hand("HKL", "HR-")
    assert alignment.source == "<stdin>"


def test_stdin_gzip(monkeypatch):
    monkeypatch.setattr(sys, "stdin", _FakeStdin(gzip.compress(b">in1\nHKL\n>in2\nHR-\n")))
    assert read_quietly("-").codes.tolist() == hand("HKL", "HR-")


def test_stdin_error_names_stdin(monkeypatch):
    monkeypatch.setattr(sys, "stdin", _FakeStdin(b">in1\nHKL\n>in2\nH9L\n"))
    with pytest.raises(InputError) as info:
        read_alignment("-")
    assert str(info.value).startswith("<stdin>:4:")


def test_binary_file_object():
    alignment = read_quietly(io.BytesIO(b">f1\nWY\n>f2\nW-\n"))
    assert alignment.codes.tolist() == hand("WY", "W-")


# --------------------------------------------------------------------------------------------------
# errors


def _error(path, **kwargs) -> InputError:
    with pytest.raises(InputError) as info:
        read_alignment(path, **kwargs)
    err = info.value
    assert str(path) in str(err), "the message must name the file"
    return err


def test_unequal_rows_name_the_row_and_suggest_align(tmp_path):
    # line 1 >r1, 2 seq, 3 >r2, 4 seq (one short), 5 >r3, 6 seq
    path = write(tmp_path, "ragged.fasta", b">r1\nMVLSPA\n>r2\nMVLSP\n>r3\nMKLTPA\n")
    err = _error(path)
    assert "'r2'" in err.message
    assert "r1" not in err.message and "r3" not in err.message
    assert "globcons align" in err.message
    assert err.line == 3  # the header of the odd row
    assert str(err).startswith(f"{path}:3:")


def test_digit_inside_a_sequence_gives_its_line(tmp_path):
    # lines: 1 >d1, 2 MVLS, 3 PADK, 4 >d2, 5 MVLS, 6 PA3K
    path = write(tmp_path, "digit.fasta", b">d1\nMVLS\nPADK\n>d2\nMVLS\nPA3K\n")
    err = _error(path)
    assert err.line == 6
    assert "'3'" in err.message


def test_digit_line_number_with_crlf(tmp_path):
    path = write(tmp_path, "digit.fasta", b">d1\r\nMVLS\r\n>d2\r\nM1LS\r\n")
    assert _error(path).line == 4


def test_blank_inside_a_sequence_line(tmp_path):
    # lines: 1 >b1, 2 MVLS, 3 >b2, 4 "MV LS"
    path = write(tmp_path, "blank.fasta", b">b1\nMVLS\n>b2\nMV LS\n")
    err = _error(path)
    assert err.line == 4
    assert "blank" in err.message


def test_data_before_the_first_header(tmp_path):
    # lines: 1 blank, 2 "MVLS" (stray data), 3 >a, 4 MVLS
    path = write(tmp_path, "stray.fasta", b"\nMVLS\n>a\nMVLS\n>b\nMVLT\n")
    err = _error(path, format="fasta")
    assert err.line == 2
    assert "before the first" in err.message
    # sniffed, the same file is no recognisable format; the line is still named
    assert _error(path).line == 2


def test_empty_file(tmp_path):
    err = _error(write(tmp_path, "empty.fasta", b""))
    assert "empty" in err.message


def test_whitespace_only_file(tmp_path):
    _error(write(tmp_path, "blank.fasta", b"\n  \n\t\n"))


def test_headers_only(tmp_path):
    err = _error(write(tmp_path, "heads.fasta", b">a\n>b\n>c\n"))
    assert "no sequence" in err.message


def test_html_page(tmp_path):
    err = _error(write(tmp_path, "page.fasta", b"<!DOCTYPE html>\n<html><body>Not found</body></html>\n"))
    assert "HTML" in err.message


def test_binary_data(tmp_path):
    err = _error(write(tmp_path, "blob.fasta", bytes(range(256)) * 4))
    assert "binary" in err.message


def test_nucleotide_alignment(tmp_path):
    # 2 x 24 letters, all A/C/G/T: clearly DNA
    path = write(tmp_path, "dna.fasta", b">n1\nATGGCTAGCTAGGACTTACGATCG\n>n2\nATGGCTAGCTA-GACTTACGATCG\n")
    err = _error(path)
    assert "nucleotide" in err.message


def test_short_protein_made_of_nucleotide_letters_is_accepted(tmp_path):
    # "ACGT" are protein letters too; 8 letters are too few to call it DNA
    path = write(tmp_path, "short.fasta", b">p1\nACGT\n>p2\nAGGT\n")
    assert read_quietly(path).codes.tolist() == hand("ACGT", "AGGT")


def test_missing_file(tmp_path):
    err = _error(tmp_path / "nowhere.fasta")
    assert "no such file" in err.message


def test_folder(tmp_path):
    folder = tmp_path / "a_folder"
    folder.mkdir()
    err = _error(folder)
    assert "folder" in err.message


def test_empty_header(tmp_path):
    # lines: 1 >a, 2 MVLS, 3 ">" with no id, 4 MVLT
    path = write(tmp_path, "nohead.fasta", b">a\nMVLS\n>\nMVLT\n")
    err = _error(path)
    assert err.line == 3
    assert "id" in err.message


def test_header_of_blanks_is_empty(tmp_path):
    path = write(tmp_path, "nohead2.fasta", b">a\nMVLS\n>   \nMVLT\n")
    assert _error(path).line == 3


# --------------------------------------------------------------------------------------------------
# duplicate ids


def test_duplicate_ids_made_unique_with_a_warning(tmp_path):
    path = write(tmp_path, "dups.fasta", b">a\nMK\n>b\nMR\n>a\nMV\n")
    with pytest.warns(InputWarning, match="duplicate"):
        alignment = read_alignment(path)
    assert alignment.ids == ("a", "b", "a_2")
    assert alignment.codes.tolist() == hand("MK", "MR", "MV")


def test_duplicate_ids_avoid_existing_names(tmp_path):
    # 'a_2' is already taken by the second record, so the third 'a' must become something else
    path = write(tmp_path, "dups2.fasta", b">a\nMK\n>a_2\nMR\n>a\nMV\n")
    with pytest.warns(InputWarning):
        alignment = read_alignment(path)
    assert alignment.ids[:2] == ("a", "a_2")
    assert len(set(alignment.ids)) == 3


# --------------------------------------------------------------------------------------------------
# the alignment object a reader returns


def test_returned_codes_are_read_only(tmp_path):
    alignment = read_quietly(write(tmp_path, "ro.fasta", b">a\nMK\n>b\nMR\n"))
    with pytest.raises(ValueError):
        alignment.codes[0, 0] = 3


# --------------------------------------------------------------------------------------------------
# read_sequences (unaligned FASTA)


def test_read_sequences_cleans_and_numbers(tmp_path):
    # line: 1 >q1 first one, 2 ac-gh., 3 KL~M*, 4 blank, 5 >q2, 6 MKV*, 7 >q3, 8 wr, 9 AP
    path = write(tmp_path, "queries.fa", b">q1 first one\nac-gh.\nKL~M*\n\n>q2\nMKV*\n>q3\nwr\nAP\n")
    records = list(read_sequences(path))
    assert [(r.id, r.description, r.sequence, r.line) for r in records] == [
        ("q1", "first one", "ACGHKLM", 1),
        ("q2", "", "MKV", 5),
        ("q3", "", "WRAP", 7),
    ]


def test_read_sequences_unequal_lengths_are_fine(tmp_path):
    path = write(tmp_path, "q.fa", b">long\nMVLSPADKTNV\n>short\nMV\n")
    assert [r.sequence for r in read_sequences(path)] == ["MVLSPADKTNV", "MV"]


def test_read_sequences_gzip_and_crlf(tmp_path):
    path = write(tmp_path, "q.dat", gzip.compress(b"\xef\xbb\xbf>q1\r\nMK\r\nV\r\n"))
    assert [(r.id, r.sequence) for r in read_sequences(path)] == [("q1", "MKV")]


def test_read_sequences_bad_character_line(tmp_path):
    # line 4 holds the digit
    path = write(tmp_path, "q.fa", b">q1\nACD\n>q2\nAC3D\n")
    with pytest.raises(InputError) as info:
        list(read_sequences(path))
    assert info.value.line == 4
    assert str(path) in str(info.value)


def test_read_sequences_data_before_header(tmp_path):
    path = write(tmp_path, "q.fa", b"MKV\n>q1\nMKV\n")
    with pytest.raises(InputError) as info:
        list(read_sequences(path))
    assert info.value.line == 1


def test_read_sequences_empty_header(tmp_path):
    path = write(tmp_path, "q.fa", b">q1\nMKV\n>\nMKV\n")
    with pytest.raises(InputError) as info:
        list(read_sequences(path))
    assert info.value.line == 3


def _careful_rows(data: bytes, name: str = "x.fasta"):
    from globcons.io import fasta

    original = fasta.clean_fasta_rows
    fasta.clean_fasta_rows = lambda *args, **kwargs: None
    try:
        return fasta.parse_fasta_rows(data, name, False, False)
    finally:
        fasta.clean_fasta_rows = original


@pytest.mark.parametrize("text", [
    ">a one\nMKV-LA\n>b\nmkv.la\n>c  two  words \nMKXBZJ\n",
    ">a\nMK*VLA\n>b\nMKVLAW\n",  # an internal stop: kept as STOP for finish_alignment, as the careful path does
    ">é ü\nACDEFG\n>b\tdesc\nHIKLMN\n",
])
def test_clean_fasta_fast_path_gives_what_the_careful_path_gives(text):
    from globcons.io.fasta import clean_fasta_rows

    data = text.encode("utf-8")
    fast = clean_fasta_rows(data, "x.fasta")
    careful = _careful_rows(data)
    assert fast is not None
    assert fast[0] == careful[0] and fast[1] == careful[1] and fast[3] == careful[3]
    np.testing.assert_array_equal(fast[2], careful[2])
    consumed = bytearray(data)  # codes written over the buffer's own bytes give the same matrix
    np.testing.assert_array_equal(clean_fasta_rows(consumed, "x.fasta", consume=True)[2], careful[2])


@pytest.mark.parametrize("text", [
    ">a\nMKV\nLA\n>b\nMKVLA\n",  # wrapped lines
    ">a\r\nMKVLA\r\n>b\r\nMKVLA\r\n",  # CRLF
    ">a\nMKVLA*\n>b\nMKVLA*\n",  # final stops are dropped by the careful path
    ">a\nMKVLA \n>b\nMKVLA \n",  # trailing blanks
    "> a\nMKVLA\n>b\nMKVLA\n",  # a blank before the id
    ">a\nMKVLA\n>b\nMKVL\n",  # unequal rows: the careful path words the error
    ">a\nMKVLA\n>b\nMKVLA",  # no final newline
    "\n>a\nMKVLA\n",  # a leading blank line
])
def test_anything_unclean_leaves_the_fast_path_untouched(text):
    from globcons.io.fasta import clean_fasta_rows

    data = bytearray(text.encode())
    assert clean_fasta_rows(data, "x.fasta", consume=True) is None
    assert data == bytearray(text.encode())  # nothing written


def test_a_bad_letter_in_a_clean_layout_is_the_careful_paths_error():
    from globcons.io.fasta import clean_fasta_rows

    data = b">a\nMKVLA\n>b\nMK!LA\n>c\nMKVLA\n"
    with pytest.raises(InputError) as fast:
        clean_fasta_rows(bytearray(data), "x.fasta", consume=True)
    with pytest.raises(InputError) as careful:
        _careful_rows(data)
    assert str(fast.value) == str(careful.value) and fast.value.line == careful.value.line == 4
    data = b">a\nMKVLA\n>b\nMK LA\n"
    with pytest.raises(InputError, match="blank"):
        clean_fasta_rows(data, "x.fasta")
