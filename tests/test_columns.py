"""The column table end to end: classes known by construction, reference numbering, metadata, demo data."""

from pathlib import Path

import numpy as np
import pytest

from globcons import read_alignment, score_columns, summarise
from globcons.analysis.columns import COLUMN_ORDER
from globcons.core.alignment import Alignment
from globcons.core.alphabet import GAP, STANDARD
from globcons.demo import demo_alignment_path
from globcons.errors import OptionError
from helpers import alignment_of

ROOT = Path(__file__).resolve().parent.parent


def planted_alignment(seed: int = 3, rows: int = 80):
    """Columns of each class planted by construction, in blocks of 10:
    invariant (one residue), conservative (residues drawn from I/L/V/M or from K/R, all BLOSUM62-positive
    pairs), variable (any residue, including clashing pairs), gap-rich (70% gaps)."""
    rng = np.random.default_rng(seed)
    index = {c: i for i, c in enumerate(STANDARD)}
    blocks, truth = [], []
    for _ in range(10):
        blocks.append(np.full(rows, index[rng.choice(list("HFWGP"))]))
        truth.append("invariant")
    for k in range(10):
        group = "ILVM" if k % 2 else "KR"
        column = np.array([index[c] for c in rng.choice(list(group), rows)])
        column[:2] = [index[group[0]], index[group[1]]]  # make sure it is not invariant
        blocks.append(column)
        truth.append("conservative")
    for _ in range(10):
        column = rng.integers(0, 20, rows)
        column[:2] = [index["W"], index["D"]]  # W/D = -4: never one group
        blocks.append(column)
        truth.append("variable")
    for _ in range(10):
        column = rng.integers(0, 20, rows)
        column[rng.permutation(rows)[: int(0.7 * rows)]] = GAP
        blocks.append(column)
        truth.append("gap-rich")
    codes = np.stack(blocks, axis=1).astype(np.uint8)
    order = rng.permutation(codes.shape[1])
    return Alignment(ids=tuple(f"s{i}" for i in range(rows)), codes=codes[:, order]), [truth[i] for i in order]


@pytest.mark.parametrize("weights", ["none", "henikoff", "cluster"])
def test_planted_classes_are_all_recovered(weights):
    alignment, truth = planted_alignment()
    table = score_columns(alignment, weights=weights)
    assert table["class"].tolist() == truth


def test_table_columns_and_contract_names():
    table = score_columns(alignment_of("HA", "HC"), min_neff=0)
    assert tuple(table.columns) == COLUMN_ORDER
    for name in ("column", "class", "entropy_bits", "gap_fraction", "n_eff", "consensus"):
        assert name in table.columns
    assert table["column"].tolist() == [1, 2]


def test_reference_numbering_skips_gaps():
    alignment = alignment_of("A-CD", "AECD", ids=["ref", "other"])
    table = score_columns(alignment, reference="ref", min_neff=0)
    assert table["ref_position"].tolist()[0] == 1 and table["ref_position"].isna().tolist()[1]
    assert table["ref_position"].tolist()[2:] == [2, 3]
    assert table["ref_residue"].tolist() == ["A", "", "C", "D"]
    with pytest.raises(OptionError, match="not an id"):
        score_columns(alignment, reference="nobody")


def test_metadata_records_every_threshold():
    table = score_columns(alignment_of("HA", "HC"), max_gaps=0.3, group_min=0.9, confidence=0.8, weights="none")
    meta = table.attrs
    assert meta["rules"]["max_gaps"] == 0.3 and meta["rules"]["group_min"] == 0.9
    assert meta["rules"]["confidence"] == 0.8 and meta["rules"]["prior_weight"] == 1.0
    assert meta["weights"] == "none" and meta["effective_sequences"] == 2.0 and meta["identity"] == 0.8
    assert meta["effective_sequences_method"] == "sequences clustered at 80% identity (all pairs compared)"
    assert meta["thin_family"] is True  # 2 effective sequences < min_neff 5
    # two sequences prove nothing: H 2 of 2 has P(share >= 0.8) = 1 - 0.8^2 = 0.36 under the near-flat prior
    assert meta["class_counts"] == {"invariant": 0, "conservative": 0, "variable": 2, "gap-rich": 0}
    assert summarise(table).startswith("2 sequences (2.0 effective at 80% identity; none weights for the "
                                       "frequencies), 2 columns: 0 invariant")


def test_weighting_changes_what_the_column_says():
    # Nine copies of one row and one distinct row: unweighted, column 1 is 90% A; with Henikoff weights
    # the single distinct row carries as much as the nine copies together.
    rows = ["AK"] * 9 + ["CR"]
    plain = score_columns(alignment_of(*rows), weights="none", min_neff=0)
    weighted = score_columns(alignment_of(*rows), weights="henikoff", min_neff=0)
    assert plain["residues"][0] == "A:0.90,C:0.10"
    assert weighted["residues"][0] == "A:0.50,C:0.50"
    assert weighted["n_eff"][0] == pytest.approx(2.0)


def test_same_input_same_table():
    alignment, _ = planted_alignment()
    first = score_columns(alignment)
    second = score_columns(alignment)
    assert first.equals(second)


def test_packaged_demo_equals_data_examples():
    from globcons.demo import demo_file

    for name in ("demo_family.fasta", "demo_queries.fasta", "demo_target.fasta", "demo_mutations.txt"):
        assert demo_file(name).read_bytes() == (ROOT / "data_examples" / name).read_bytes(), name


def test_demo_family_shows_every_class_and_keeps_the_fixed_sites():
    table = score_columns(read_alignment(demo_alignment_path()))
    counts = table.attrs["class_counts"]
    assert all(counts[name] > 0 for name in counts)
    # The generator holds the proximal His (sperm whale myoglobin His93, F8) fixed; its column is
    # column 96 of the demo: 93 + the 3 inserted CD-corner columns after mature position 47.
    assert table.loc[95, "class"] == "invariant" and table.loc[95, "consensus"] == "H"
    assert table.loc[95, "support"] > 0.999 and table.attrs["effective_sequences"] > 40


def test_a_gappy_column_scores_below_a_filled_invariant_one_in_every_shown_score():
    # 100 distinct rows; column 1 His in all, column 2 His in 26 and gaps in 74 (74% gaps): its residues
    # are as uniform as column 1's, so a gap-blind score would rate both 1.0.
    from globcons.analysis.columns import SCORE_COLUMNS, SHOWN_SCORES
    from globcons.plots.conservation import draw_profile
    from globcons.structure.paint import score_values

    rng = np.random.default_rng(2)
    letters = np.array(list(STANDARD))
    rows = ["H" + ("H" if k < 26 else "-") + "".join(rng.choice(letters, 30)) for k in range(100)]
    table = score_columns(alignment_of(*rows), frame=False, max_gaps=0.8, weights="none")
    assert table.loc[0, "class"] == "invariant" and table.loc[1, "gap_fraction"] == pytest.approx(0.74)
    assert table.loc[1, "entropy_bits"] == 0.0  # the residues alone look invariant
    for score in set(SHOWN_SCORES) - set(SCORE_COLUMNS):  # rates (lower = more conserved): test_rates.py
        assert table.loc[1, score] < table.loc[0, score], score
        values = score_values(table, score)  # what paint writes
        assert values[1] < values[0], score
        plotted = draw_profile(table, score=score).axes[0].lines[0].get_ydata()
        assert plotted[1] < plotted[0], score
    assert table.loc[0, "conservation"] == 1.0 and table.loc[1, "conservation"] == pytest.approx(0.26)
