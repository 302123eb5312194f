"""Arbitrary input never gives anything but a result or the package's own error (hypothesis fuzz)."""

import io
import warnings

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from globcons.errors import GlobconsError
from globcons.io.records import read_sequences, stream_records
from globcons.mutations.notation import parse_mutation, parse_mutation_list

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


STRUCTURE_PIECES = st.lists(st.sampled_from([
    "ATOM      1  CA  HIS A  93      11.104   6.134  -6.504  1.00 10.00           C\n",
    "HETATM    2  O   HOH W   1       0.000   0.000   0.000  1.00  0.00           O\n",
    "ATOM      3  CA  GLY A  9x      1.0   2.0\n", "data_x\n", "_atom_site.id\n", "loop_\n", "END\n", "\x00",
    "MODEL 1\n", "ENDMDL\n", "garbage line\n"]), max_size=12)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(STRUCTURE_PIECES)
def test_structure_reader_on_structure_like_text(tmp_path, pieces):
    from globcons.structure.read import chain_residues, read_structure

    path = tmp_path / "fuzz.pdb"
    path.write_text("".join(pieces), encoding="utf-8")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            structure, _ = read_structure(path)
            for chain in structure[0]:
                chain_residues(structure, chain.id)
        except GlobconsError:
            pass


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.sampled_from(["label", "column", "role", "kind", "\t", "\n", "F8", "CE1", "12", "0", "x",
                                 "#", "all", "human_hemoglobin_alpha", ","]), max_size=20))
def test_site_table_reader_on_arbitrary_text(tmp_path, pieces):
    from globcons.frame.functional_sites import sites

    path = tmp_path / "sites.tsv"
    path.write_text("".join(pieces), encoding="utf-8")
    try:
        sites(path=path)
    except GlobconsError:
        pass


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.sampled_from(["id", "group", "\t", "\n", "a", "b", "myo", "#", " ", "\t\t", "x\ty\tz"]),
                max_size=20))
def test_groups_and_label_tables_on_arbitrary_text(tmp_path, pieces):
    from globcons.analysis.contrast import read_groups
    from globcons.io.frame_labels import read_label_sidecar

    path = tmp_path / "table.tsv"
    path.write_text("".join(pieces), encoding="utf-8")
    for call in (lambda: read_groups(path), lambda: read_label_sidecar(path, 5)):
        try:
            call()
        except GlobconsError:
            pass
