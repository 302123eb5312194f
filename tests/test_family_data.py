"""The verified real globin sequences shipped as package data (data/family/): checksums, copies, F8 His."""

from collections import Counter

from globcons.frame.reference import reference_chains
from globcons.frame.verified_globins import GROUPS, sequence_checksum, stored_checksums, verified_globins


def test_every_shipped_sequence_matches_its_checksum():
    # The checksums were written when each sequence had been compared residue by residue with two
    # independent public copies of its record; any later change to a residue fails here.
    rows = verified_globins()
    assert {row.accession for row in rows} == set(stored_checksums())
    for row in rows:
        assert sequence_checksum(row.sequence) == stored_checksums()[row.accession], row.accession


def test_every_row_names_two_copies_a_lineage_and_standard_residues():
    rows = verified_globins()
    assert len({row.accession for row in rows}) == len(rows) >= 49
    for row in rows:
        assert row.group in GROUPS, row.accession
        assert all(copy.strip() for copy in row.copies) and row.copies[0] != row.copies[1], row.accession
        assert set(row.sequence) <= set("ACDEFGHIKLMNPQRSTVWY"), row.accession
    # the superfamily's spread so far (issue 14 asks for more of the distant lineages)
    groups = Counter(row.group for row in rows)
    assert groups["vertebrate_myoglobin"] >= 5 and groups["vertebrate_alpha"] >= 5 and groups["vertebrate_beta"] >= 5
    assert groups["truncated_2on2"] >= 2


def test_the_proximal_his_of_every_row_is_a_his():
    # F8 His positions: from the record's annotation where a copy showed it, else the literature or memory
    # (each row says which); every one must point at a His of the shipped sequence.
    for row in verified_globins():
        if row.proximal_his is not None:
            assert row.sequence[row.proximal_his - row.first] == "H", row.accession
            assert row.proximal_his_source, row.accession


def test_the_frame_reference_chains_are_the_verified_sequences():
    # The four chains of the helix frame (data/frame/reference_chains.fasta, first written from memory) are
    # held against the rows checked against public copies: the lesson of human myoglobin 119 (Lys).
    verified = {row.accession: row for row in verified_globins()}
    for chain in reference_chains():
        accession = chain.accession.split()[-1]
        row = verified[accession]
        assert row.first == 1 and row.sequence == chain.full_sequence, accession
    assert verified["P02144"].sequence[118] == "K"  # human myoglobin 119 is Lys (reference README correction)
