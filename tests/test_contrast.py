"""Tests of group contrast (:mod:`globcons.analysis.contrast`, ``globcons contrast``).

Data: synthetic alignments with planted columns (built here from a seeded generator), and the four
reference chains packaged in ``src/globcons/data/frame`` (UniProt P02185, P02144, P69905, P68871) placed
on the frame with :func:`globcons.align.placement.align_to_frame`.

Reference values come from hand computation (written out beside each test) and from scipy:
``scipy.stats.entropy`` (Shannon entropy), ``scipy.spatial.distance.jensenshannon`` (Jensen-Shannon
distance), ``scipy.stats.chi2_contingency(lambda_="log-likelihood")`` (the G-test), ``scipy.stats.kstest``.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.spatial.distance import jensenshannon
from scipy.stats import chi2, chi2_contingency, entropy, kstest

from globcons.analysis.contrast import assign_groups, contrast_columns, group_counts, read_groups
from globcons.cli import main
from globcons.core.alphabet import N_CODES
from globcons.core.counts import column_counts
from globcons.core.vocabulary import CONTRAST_CLASSES
from globcons.errors import InputError, OptionError
from globcons.plots.contrast import draw_contrast
from helpers import alignment_of

LETTERS = np.array(list("ACDEFGHIKLMNPQRSTVWY"))


def planted(seed: int = 7, per_group: int = 30):
    """Three groups of ``per_group`` rows; columns 1-6 group-specific (group k all one residue, a different one
    per group), 7-12 shared (every row the same residue), 13-20 mixed (uniform over the 20 residues)."""
    rng = np.random.default_rng(seed)
    specific = ["KYW", "DNR", "LEG", "PSF", "ACT", "MQV"]
    shared = "HGPCWF"
    rows, groups = [], []
    for g in range(3):
        for _ in range(per_group):
            text = "".join(s[g] for s in specific) + shared + "".join(rng.choice(LETTERS, 8))
            rows.append(text)
            groups.append(f"grp{g}")
    ids = [f"grp{g}_{i}" for g in range(3) for i in range(per_group)]
    return alignment_of(*rows, ids=ids), np.array(groups, dtype=object)


def test_planted_columns_are_recovered():
    aln, groups = planted()
    table = contrast_columns(aln, groups, frame=False)
    assert list(table["class"][:6]) == ["group-specific"] * 6
    assert list(table["class"][6:12]) == ["shared"] * 6
    assert list(table["class"][12:]) == ["mixed"] * 8
    assert (table["contrast"][6:12] < 0.01).all()
    # Three groups each of one residue: the JSD is the entropy of the group weights, log2(3) = 1.585 for
    # equal weights; Henikoff weights make the groups slightly unequal.
    assert (table["contrast"][:6] > 1.5).all() and (table["contrast"][:6] <= math.log2(3) + 1e-12).all()
    assert list(table.loc[0, ["consensus_grp0", "consensus_grp1", "consensus_grp2"]]) == ["K", "Y", "W"]
    assert (table.loc[:11, ["conservation_grp0", "conservation_grp1", "conservation_grp2"]].to_numpy() == 1.0).all()
    assert (table["pvalue"][:6] < 1e-20).all() and (table["pvalue"][6:12] == 1.0).all()
    assert table.attrs["class_counts"] == {"group-specific": 6, "shared": 6, "mixed": 8, "gap-rich": 0}
    assert set(table.attrs["groups"]) == {"grp0", "grp1", "grp2"}


def test_group_specific_jsd_equals_entropy_of_group_weights():
    # Each group of one residue, different residues: JSD = H(mixture) - 0 = H(pi), pi the group weights.
    aln, groups = planted(per_group=10)
    table = contrast_columns(aln, groups, weights="none", frame=False)
    assert table["contrast"][0] == pytest.approx(math.log2(3), abs=1e-12)


def test_gap_rich_and_unconserved_group():
    # column 1: 4 of 6 gaps -> gap-rich; column 2: group b half K half R -> mixed, group a all K.
    aln = alignment_of("-K", "-K", "AK", "-K", "-R", "AR", ids=["a1", "a2", "a3", "b1", "b2", "b3"])
    table = contrast_columns(aln, ["a", "a", "a", "b", "b", "b"], weights="none", min_group_neff=1, frame=False)
    assert list(table["class"]) == ["gap-rich", "mixed"]
    assert table["gap_fraction"][0] == pytest.approx(4 / 6)


def test_group_counts_match_per_group_column_counts():
    rng = np.random.default_rng(3)
    codes = rng.integers(0, N_CODES, size=(40, 9)).astype(np.uint8)
    labels = rng.integers(0, 3, size=40)
    weights = rng.random(40)
    counts = group_counts(codes, labels, 3, weights)
    for g in range(3):
        np.testing.assert_allclose(counts[g], column_counts(codes[labels == g], weights[labels == g]))


# ---------------------------------------------------------------------------------------------------
# Reference values


def test_mutual_information_by_hand_and_scipy():
    """One column, two groups of four rows, weights none:

        group a: K K K Y        contingency O (rows: group, columns: residue K, Y)
        group b: Y Y Y K            a  3 1
                                    b  1 3      N = 8, margins 4, 4 / 4, 4

    plug-in MI = sum O/N log2((O/N) / (p_g p_r)) = 2 * 3/8 log2(1.5) + 2 * 1/8 log2(0.5) = 0.75 log2 1.5 - 0.25
    Miller-Madow: m_rg = 4 non-empty cells, m_r = m_g = 2: mi = MI - (4 - 2 - 2 + 1) / (2 * 8 * ln 2).
    G = 2 sum O ln(O/E), E = 2 everywhere: 2 * (2 * 3 ln 1.5 + 2 * 1 ln 0.5); df = 1.
    """
    aln = alignment_of("K", "K", "K", "Y", "Y", "Y", "Y", "K")
    table = contrast_columns(aln, ["a"] * 4 + ["b"] * 4, weights="none", frame=False)
    plugin = 0.75 * math.log2(1.5) - 0.25
    by_hand = plugin - 1 / (2 * 8 * math.log(2))
    assert table["mi"][0] == pytest.approx(by_hand, abs=1e-12)
    # Reference: scipy.stats.entropy, MI = H(residue) + H(group) - H(residue, group)
    joint = np.array([[3, 1], [1, 3]], dtype=float)
    scipy_mi = (entropy(joint.sum(axis=0), base=2) + entropy(joint.sum(axis=1), base=2)
                - entropy(joint.ravel(), base=2))
    assert scipy_mi == pytest.approx(plugin, abs=1e-12)
    assert table["mi"][0] == pytest.approx(scipy_mi - 1 / (2 * 8 * math.log(2)), abs=1e-12)
    g = 2 * (2 * 3 * math.log(1.5) + 2 * 1 * math.log(0.5))
    assert table["pvalue"][0] == pytest.approx(chi2.sf(g, 1), rel=1e-12)
    # Reference: scipy.stats.chi2_contingency with the log-likelihood (G) statistic.
    statistic, pvalue, dof, _ = chi2_contingency(joint, correction=False, lambda_="log-likelihood")
    assert (statistic, dof) == (pytest.approx(g, rel=1e-12), 1)
    assert table["pvalue"][0] == pytest.approx(pvalue, rel=1e-12)
    # Equal group sizes, no gaps: the contrast is the squared Jensen-Shannon distance, and the plug-in MI.
    js = jensenshannon([0.75, 0.25], [0.25, 0.75], base=2) ** 2
    assert table["contrast"][0] == pytest.approx(js, abs=1e-12)
    assert table["contrast"][0] == pytest.approx(plugin, abs=1e-12)


def test_jsd_of_two_groups_matches_scipy_on_many_columns():
    rng = np.random.default_rng(11)
    rows = ["".join(rng.choice(LETTERS[:5], 12)) for _ in range(40)]
    aln = alignment_of(*rows)
    groups = ["x"] * 20 + ["y"] * 20
    table = contrast_columns(aln, groups, weights="none", frame=False)
    codes = aln.codes
    for j in range(12):
        p = np.bincount(codes[:20, j], minlength=22) / 20
        q = np.bincount(codes[20:, j], minlength=22) / 20
        assert table["contrast"][j] == pytest.approx(jensenshannon(p, q, base=2) ** 2, abs=1e-12)


# ---------------------------------------------------------------------------------------------------
# Calibration under the null


def null_alignment(rng, n_rows: int, n_columns: int):
    """Columns of three residues with frequencies 0.5, 0.3, 0.2 independent of anything: with ~n/3 rows per
    group, the smallest expected cell is ~0.2 n/3, large enough for the chi-square approximation of G."""
    letters = rng.choice(np.array(list("KLE")), size=(n_rows, n_columns), p=[0.5, 0.3, 0.2])
    return alignment_of(*("".join(row) for row in letters))


def test_g_test_pvalues_are_uniform_under_random_labels():
    rng = np.random.default_rng(2024)
    aln = null_alignment(rng, 300, 300)
    groups = rng.choice(np.array(["a", "b", "c"], dtype=object), size=300)
    table = contrast_columns(aln, groups, weights="none", frame=False)
    assert table["pvalue"].between(0, 1).all()
    assert kstest(table["pvalue"], "uniform").pvalue > 0.01
    # The same p-values with the degrees of freedom wrong (df 2 instead of (3-1)(3-1) = 4) are not uniform.
    g = chi2.isf(table["pvalue"], 4)
    assert kstest(chi2.sf(g, 2), "uniform").pvalue < 0.01


def test_permutation_pvalues_are_uniform_under_random_labels():
    rng = np.random.default_rng(99)
    aln = null_alignment(rng, 60, 120)
    groups = rng.choice(np.array(["a", "b", "c"], dtype=object), size=60)
    table = contrast_columns(aln, groups, weights="none", permutations=399, seed=5, frame=False)
    p = table["pvalue_permutation"]
    assert ((p >= 1 / 400) & (p <= 1)).all()
    assert kstest(p, "uniform").pvalue > 0.01
    again = contrast_columns(aln, groups, weights="none", permutations=399, seed=5, frame=False)
    np.testing.assert_array_equal(p, again["pvalue_permutation"])


def test_permutation_pvalue_of_planted_columns():
    aln, groups = planted()
    table = contrast_columns(aln, groups, permutations=99, seed=1, frame=False)
    assert (table["pvalue_permutation"][:6] == 1 / 100).all()  # no shuffle reaches a perfect split
    assert (table["pvalue_permutation"][6:12] == 1.0).all()  # every shuffle ties G = 0


# ---------------------------------------------------------------------------------------------------
# Groups


def test_groups_file_with_and_without_header(tmp_path):
    aln, _ = planted(per_group=4)
    with_header = tmp_path / "with.tsv"
    with_header.write_text("id\tgroup\n# comment\ngrp0_0\tA\ngrp0_1\tA\n\ngrp1_0\tB\n")
    without = tmp_path / "without.tsv"
    without.write_text("grp0_0\tA\ngrp0_1\tA\ngrp1_0\tB\n")
    assert read_groups(with_header) == read_groups(without) == {"grp0_0": "A", "grp0_1": "A", "grp1_0": "B"}
    with pytest.warns(UserWarning, match="9 of 12 rows have no group"):
        groups = assign_groups(aln, groups_file=without)
    assert list(groups[:5]) == ["A", "A", "", "", "B"]


@pytest.mark.parametrize("text, line", [("a\tX\nb X\n", 2), ("a\tX\nb\tY\nc\t\n", 3), ("a\tX\tZ\n", 1),
                                        ("id\tgroup\na\tX\na\tY\n", 3)])
def test_bad_groups_file_names_file_and_line(tmp_path, text, line):
    path = tmp_path / "groups.tsv"
    path.write_text(text)
    with pytest.raises(InputError) as caught:
        read_groups(path)
    assert caught.value.line == line and caught.value.source == str(path)
    assert str(caught.value).startswith(f"{path}:{line}: ")


def test_group_by_regex():
    aln, _ = planted(per_group=3)
    groups = assign_groups(aln, group_by=r"^(grp\d)_")
    assert list(groups) == ["grp0"] * 3 + ["grp1"] * 3 + ["grp2"] * 3
    with pytest.raises(OptionError, match="one capture group"):
        assign_groups(aln, group_by=r"^grp\d_")
    with pytest.raises(OptionError, match="not a regular expression"):
        assign_groups(aln, group_by=r"(grp")
    with pytest.raises(OptionError):
        assign_groups(aln)


def test_small_group_is_left_out_and_reported():
    aln, groups = planted(per_group=10)
    groups = groups.copy()
    groups[:8] = ""  # grp0 keeps 2 rows: below the minimum effective size of 3
    table = contrast_columns(aln, groups, weights="none", frame=False)
    assert set(table.attrs["groups"]) == {"grp1", "grp2"}
    assert table.attrs["left_out_groups"] == {"grp0": {"rows": 2, "effective_size": 2.0}}
    assert table.attrs["ungrouped_rows"] == 8 and table.attrs["grouped_rows"] == 20
    assert "consensus_grp0" not in table.columns
    assert table["contrast"][0] == pytest.approx(1.0)  # two groups of 10, Y against W
    with pytest.raises(OptionError, match="at least two groups"):
        contrast_columns(aln, groups, weights="none", min_group_neff=11, frame=False)


# ---------------------------------------------------------------------------------------------------
# Real chains


@pytest.fixture(scope="module")
def reference_frame():
    from globcons.align.layout import align_to_frame
    from globcons.frame.reference import reference_chains

    chains = [(c.name, c.mature_sequence) for c in reference_chains()]
    return align_to_frame(chains, shuffles=0).to_alignment()


REFERENCE_GROUPS = {"sperm_whale_myoglobin": "myoglobin", "human_myoglobin": "myoglobin",
                    "human_hemoglobin_alpha": "alpha", "human_hemoglobin_beta": "beta"}


def test_reference_chains_frame_labels(reference_frame):
    # Three groups of one or two chains give no statistical power: only the mapping is asserted here.
    table = contrast_columns(reference_frame, REFERENCE_GROUPS, min_group_neff=0.5)
    assert set(table.attrs["groups"]) == {"myoglobin", "alpha", "beta"}
    by_label = table.set_index("frame_label")
    for label in ("F8", "E7"):  # proximal and distal His in all three kinds of chain
        row = by_label.loc[label]
        assert [row[f"consensus_{g}"] for g in ("myoglobin", "alpha", "beta")] == ["H", "H", "H"]
        assert row["class"] == "shared" and row["contrast"] == pytest.approx(0.0, abs=1e-12)
    assert "heme-ligand" in by_label.loc["F8", "sites"]
    assert by_label.loc["CD1", "consensus_alpha"] == "F"


def test_group_by_nearest(reference_frame):
    from globcons.core.alignment import Alignment
    from globcons.core.alphabet import encode

    rng = np.random.default_rng(0)
    decoy = encode("".join(rng.choice(LETTERS, reference_frame.n_columns)))
    aln = Alignment(ids=reference_frame.ids + ("decoy",), codes=np.vstack([reference_frame.codes, decoy]))
    groups = assign_groups(aln, group_by="nearest")
    assert list(groups) == ["myoglobin-like", "myoglobin-like", "alpha-like", "beta-like", "other"]


# ---------------------------------------------------------------------------------------------------
# Command line and figure


def write_planted(tmp_path):
    aln, groups = planted()
    path = tmp_path / "planted.fasta"
    path.write_text("".join(f">{i}\n{aln.row(k)}\n" for k, i in enumerate(aln.ids)))
    groups_path = tmp_path / "groups.tsv"
    groups_path.write_text("".join(f"{i}\t{g}\n" for i, g in zip(aln.ids, groups, strict=True)))
    return str(path), str(groups_path)


def test_cli_contrast_writes_table_and_figure(tmp_path, capsys):
    import pandas as pd

    alignment, groups = write_planted(tmp_path)
    out, figure = tmp_path / "contrast.tsv", tmp_path / "contrast.png"
    status = main(["contrast", alignment, "--groups", groups, "--no-frame", "-o", str(out), "--figure", str(figure),
                   "--permutations", "49"])
    err = capsys.readouterr().err
    assert status == 0, err
    table = pd.read_csv(out, sep="\t")
    assert list(table.columns[:11]) == ["column", "frame_label", "sites", "class", "contrast", "mi", "pvalue",
                                        "qvalue", "pvalue_permutation", "qvalue_permutation", "gap_fraction"]
    assert list(table["class"][:12]) == ["group-specific"] * 6 + ["shared"] * 6
    assert (tmp_path / "contrast.tsv.meta.json").is_file()
    assert figure.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "6 group-specific, 6 shared, 8 mixed, 0 gap-rich" in err
    status = main(["contrast", alignment, "--group-by", r"^(grp\d)_", "--no-frame", "--table", "csv"])
    assert status == 0
    assert capsys.readouterr().out.startswith("column,frame_label,sites,class,contrast")


def test_cli_contrast_bad_input(tmp_path, capsys):
    alignment, _ = write_planted(tmp_path)
    bad = tmp_path / "bad.tsv"
    bad.write_text("grp0_0\tgrp0\ngrp0_1 grp0\n")
    assert main(["contrast", alignment, "--groups", str(bad), "--no-frame"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert err == [f"globcons: error: {bad}:2: expected 'id<TAB>group', got 'grp0_1 grp0'"]
    assert main(["contrast", alignment, "--no-frame"]) == 2
    assert "--groups FILE or --group-by" in capsys.readouterr().err
    assert not (tmp_path / "out.tsv").exists()


def test_figure_has_one_logo_per_group(reference_frame):
    table = contrast_columns(reference_frame, REFERENCE_GROUPS, min_group_neff=0.5)
    fig = draw_contrast(table, reference_frame, REFERENCE_GROUPS, top=8)
    axes = fig.get_axes()
    assert len(axes) == 2 + 3
    assert [ax.get_ylabel().split("\n")[0] for ax in axes[2:]] == list(table.attrs["groups"])
    assert len(axes[-1].get_xticklabels()) == 8
    assert all(c in CONTRAST_CLASSES for c in table["class"])


def test_report_gains_a_contrast_section(tmp_path, capsys):
    import pandas as pd

    alignment, groups = write_planted(tmp_path)
    escaped = tmp_path / "escaped.tsv"  # a group name with markup must reach the HTML escaped
    escaped.write_text(Path(groups).read_text().replace("\tgrp2\n", "\t<b>g2</b>\n"))
    out = tmp_path / "report"
    status = main(["report", alignment, "-o", str(out), "--groups", str(escaped), "--no-frame", "--no-logos"])
    assert status == 0, capsys.readouterr().err
    html = (out / "report.html").read_text()
    assert '<h2 id="contrast">Group contrast</h2>' in html
    assert "&lt;b&gt;g2&lt;/b&gt;" in html and "<b>g2</b>" not in html
    assert 'src="data:image/svg+xml;base64,' in html and "http://" not in html.split("<body>")[1].split("<script>")[0]
    table = pd.read_csv(out / "contrast.tsv", sep="\t")
    assert list(table["class"][:12]) == ["group-specific"] * 6 + ["shared"] * 6
    assert main(["report", alignment, "-o", str(out), "--groups", str(escaped), "--group-by", "(x)"]) == 2


# Benjamini-Hochberg q-values. Reference implementation: scipy.stats.false_discovery_control (method "bh").
# Worked example: the 15 p-values of Benjamini & Hochberg 1995 (J R Stat Soc B 57:289, section 4.1, from
# memory); at a false discovery rate of 0.05 the step-up procedure rejects the four smallest.
BH_1995_PVALUES = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.3240, 0.4262,
                   0.5719, 0.6528, 0.7590, 1.0000]


def test_bh_qvalues_of_the_1995_example():
    from scipy.stats import false_discovery_control

    from globcons.core.multiple_testing import bh_qvalues

    q = bh_qvalues(np.array(BH_1995_PVALUES))
    assert int((q <= 0.05).sum()) == 4
    np.testing.assert_allclose(q, false_discovery_control(BH_1995_PVALUES, method="bh"), rtol=1e-12)
    assert q[3] == pytest.approx(0.0095 * 15 / 4)  # worked by hand: p_(4) m / 4 = 0.035625


def test_bh_qvalues_against_scipy_on_random_pvalues_with_ties_and_gaps():
    from scipy.stats import false_discovery_control

    from globcons.core.multiple_testing import bh_qvalues

    rng = np.random.default_rng(7)
    p = np.round(rng.random(500) ** 3, 3)  # many small values and ties
    p[rng.choice(500, 40, replace=False)] = np.nan
    tested = rng.random(500) < 0.9
    q = bh_qvalues(p, tested)
    family = np.isfinite(p) & tested
    np.testing.assert_allclose(q[family], false_discovery_control(p[family], method="bh"), rtol=1e-12)
    assert np.isnan(q[np.isnan(p)]).all() and (q[np.isfinite(p) & ~tested] == 1.0).all()


def test_contrast_qvalues_are_bh_over_the_tested_columns(tmp_path):
    from scipy.stats import false_discovery_control

    table = contrast_columns(*planted(), permutations=99, seed=3, frame=False)
    tested = table["pvalue"].notna() & ~table["class"].eq("shared")  # shared columns: one residue, df 0
    assert table.attrs["tested_columns"] == int(tested.sum()) == 14
    for p_name, q_name in (("pvalue", "qvalue"), ("pvalue_permutation", "qvalue_permutation")):
        np.testing.assert_allclose(table.loc[tested, q_name],
                                   false_discovery_control(table.loc[tested, p_name], method="bh"), rtol=1e-12)
        assert (table.loc[~tested, q_name] == 1.0).all()
    assert (table["qvalue"] >= table["pvalue"]).all()
