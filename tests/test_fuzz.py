"""Arbitrary input never gives anything but a result or the package's own error (hypothesis fuzz)."""

import io
import warnings

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from globcons.errors import GlobconsError
from globcons.io import read_sequences, stream_records
from globcons.notation import parse_mutation, parse_mutation_list

SETTINGS = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
FASTA_PIECES = st.lists(st.sampled_from([">", ">q", ">q desc", "\n", "\r\n", "MVLS", "acgt", "*", "-", " ", "1",
                                         "\x00", "\xef\xbb\xbf", "\x1f\x8b", "é", "<html>"]), max_size=30)
MUTATION_PIECES = st.lists(st.sampled_from(["E", "Glu", "p.", "(", ")", "6", "0", "V", "Val", ":", "A3", "F8",
                                            "CD1", "del", "fs", "*", "Ter", "=", " ", ",", "x", "_"]), max_size=8)


def _consume(function, *args):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            return list(function(*args))
        except GlobconsError:
            return None


@SETTINGS
@given(st.binary(max_size=300))
def test_streaming_reader_on_arbitrary_bytes(data):
    _consume(stream_records, io.BufferedReader(io.BytesIO(data)))
    _consume(read_sequences, io.BytesIO(data))


@SETTINGS
@given(FASTA_PIECES)
def test_streaming_reader_on_fasta_like_text(pieces):
    data = "".join(pieces).encode("utf-8")
    _consume(stream_records, io.BufferedReader(io.BytesIO(data)))


@SETTINGS
@given(st.one_of(st.text(max_size=30), MUTATION_PIECES.map("".join)))
def test_mutation_parser_on_arbitrary_text(text):
    for function in (parse_mutation, parse_mutation_list):
        try:
            function(text)
        except GlobconsError:
            pass
