"""Per-column evolutionary rates (globcons.phylo): the model's data, the likelihood, the fit and the rates.

External references, each named where it is used: the LG file as the authors distributed it (a few
entries, from memory) and pyvolve 1.1.0's built-in LG (an independent copy, all entries); scipy.linalg.expm
for transition matrices and hand-summed likelihoods of two and three sequences; scipy.stats.gamma with
scipy.integrate.quad for the discrete gamma means, and Yang 1994's alpha = 0.5 example (from memory);
Bio.Phylo's path lengths for the trees; finite differences (scipy.optimize.approx_fprime) for the
gradient; alignments simulated by pyvolve along a known tree with known per-column rates.
"""

from __future__ import annotations

import json
import re

import numpy as np
import pytest
from Bio import Phylo
from scipy.integrate import quad
from scipy.linalg import expm
from scipy.optimize import approx_fprime
from scipy.stats import gamma as gamma_distribution
from scipy.stats import spearmanr

from globcons.analysis.columns import score_columns
from globcons.analysis.rate_columns import add_rate_columns, rates_of
from globcons.cli import main
from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE, STANDARD
from globcons.demo import demo_alignment_path
from globcons.errors import InputError
from globcons.io.alignments import read_alignment
from globcons.phylo.building import model_distances, neighbour_joining_tree
from globcons.phylo.fit import fit_tree, log_likelihood
from globcons.phylo.gamma import discrete_gamma_rates
from globcons.phylo.likelihood import MISSING, RateModel, log_likelihood_and_gradient, site_likelihoods, tip_states
from globcons.phylo.models import load_model
from globcons.phylo.newick import parse_newick, read_tree
from globcons.phylo.rates import RateOptions, column_rates, posterior_rates, representative_rows
from globcons.phylo.tree import tree_from_links

LG = load_model("LG")
DEMO = str(demo_alignment_path())


def codes_of(text: str) -> np.ndarray:
    return BYTE_TO_CODE[np.frombuffer(text.encode("ascii"), dtype=np.uint8)].copy()


def index(letter: str) -> int:
    return STANDARD.index(letter)


def states_for(tree, rows: dict[str, str]) -> np.ndarray:
    """Leaf states in the tree's leaf order (leaf i holds row i of the states)."""
    return tip_states(np.array([codes_of(rows[name]) for name in tree.names]))


# --- the model's data ---------------------------------------------------------------------------------

@pytest.mark.parametrize("first,second,value", [
    ("A", "R", 0.425093), ("N", "D", 5.076149), ("I", "V", 10.649107), ("C", "W", 0.670128),
    ("Y", "F", 7.803902), ("K", "R", 6.326067),
])
def test_lg_exchangeabilities_as_in_the_distributed_file(first, second, value):
    """Entries as the file distributed with Le & Gascuel 2008 prints them (from memory of that file)."""
    s = LG.exchangeabilities
    assert s[index(first), index(second)] == value
    assert s[index(second), index(first)] == value


def test_lg_frequencies_as_in_the_distributed_file():
    """Le & Gascuel 2008's frequencies of A, L and W (from memory of the file), renormalised by globcons."""
    for letter, value in (("A", 0.079066), ("L", 0.099081), ("W", 0.012066)):
        assert LG.frequencies[index(letter)] == pytest.approx(value, abs=2e-6)
    assert LG.frequencies.sum() == pytest.approx(1.0, abs=1e-12)


def test_lg_matches_the_independent_copy_in_pyvolve():
    """pyvolve 1.1.0 ships LG in alphabetical order (globcons' order): every entry and its rate matrix agree."""
    import pyvolve  # a test dependency (pyproject's test extra)
    from pyvolve import empirical_matrices as empirical
    np.testing.assert_allclose(LG.exchangeabilities, np.array(empirical.lg_matrix), rtol=0, atol=5e-7)
    np.testing.assert_allclose(LG.frequencies, np.array(empirical.lg_freqs), rtol=1e-5)
    theirs = pyvolve.Model("LG").extract_rate_matrix()
    np.testing.assert_allclose(LG.rate_matrix(), theirs, atol=1e-9)


def test_rate_matrix_is_reversible_scaled_and_its_exponential_is_scipys():
    q = LG.rate_matrix()
    pi = LG.frequencies
    np.testing.assert_allclose(q.sum(axis=1), 0.0, atol=1e-12)
    np.testing.assert_allclose(pi[:, None] * q, (pi[:, None] * q).T, atol=1e-14)  # detailed balance
    assert -(pi * np.diag(q)).sum() == pytest.approx(1.0)  # one substitution per unit time
    eigen = LG.eigen()
    for t in (1e-4, 0.05, 0.7, 3.0):
        np.testing.assert_allclose(eigen.transition(np.array(t)), expm(q * t), atol=1e-12)  # scipy reference
        np.testing.assert_allclose(eigen.transition_derivative(np.array(t)), q @ expm(q * t), atol=1e-12)
    np.testing.assert_allclose(pi @ eigen.transition(np.array(0.4)), pi, atol=1e-12)  # stationary


# --- discrete gamma -----------------------------------------------------------------------------------

def test_discrete_gamma_matches_yang_1994_example():
    """Yang 1994's four categories at alpha = 0.5 (from memory of the paper's example)."""
    np.testing.assert_allclose(discrete_gamma_rates(0.5, 4), [0.0334, 0.2519, 0.8203, 2.8944], atol=6e-5)


@pytest.mark.parametrize("alpha,categories", [(0.3, 4), (1.0, 4), (2.5, 8), (0.8, 16)])
def test_discrete_gamma_means_are_the_slice_means_scipy_integrates(alpha, categories):
    dist = gamma_distribution(alpha, scale=1 / alpha)
    bounds = dist.ppf(np.linspace(0, 1, categories + 1))
    expected = [categories * quad(lambda r: r * dist.pdf(r), lo, hi)[0] for lo, hi in zip(bounds[:-1], bounds[1:],
                                                                                          strict=True)]
    rates = discrete_gamma_rates(alpha, categories)
    np.testing.assert_allclose(rates, expected, rtol=2e-4)
    assert rates.mean() == pytest.approx(1.0)


# --- likelihood ---------------------------------------------------------------------------------------

def test_two_sequence_likelihood_is_the_matrix_exponential_sum():
    """Two leaves: L = sum_k w_k pi_a P_ab(r_k (t1 + t2)), worked with scipy's expm; a gap is missing data."""
    tree = parse_newick("(a:0.13,b:0.29);")
    states = states_for(tree, {"a": "AWHK-", "b": "SWYK-"})
    rates = discrete_gamma_rates(0.7)
    model = RateModel(LG.eigen(), rates)
    got = site_likelihoods(tree, states, model).column_log_likelihood(model.weights)
    q, pi = LG.rate_matrix(), LG.frequencies
    for column, (x, y) in enumerate(zip("AWHK", "SWYK", strict=True)):
        value = np.mean([pi[index(x)] * expm(q * r * 0.42)[index(x), index(y)] for r in rates])
        assert got[column] == pytest.approx(np.log(value), rel=1e-10)
    assert got[4] == pytest.approx(0.0, abs=1e-12)  # both gaps: probability one


def test_three_sequence_likelihood_sums_over_the_inner_state():
    """Three leaves on a star: L = sum_k w_k sum_i pi_i P_ia P_ib P_ic, each P from scipy's expm."""
    tree = parse_newick("(a:0.1,b:0.4,c:0.25);")
    rows = ["MHLV", "MQLI", "MH-F"]
    states = states_for(tree, dict(zip("abc", rows, strict=True)))
    rates = discrete_gamma_rates(1.3)
    model = RateModel(LG.eigen(), rates)
    got = site_likelihoods(tree, states, model).column_log_likelihood(model.weights)
    q, pi = LG.rate_matrix(), LG.frequencies
    for column in range(4):
        total = 0.0
        for r in rates:
            product = pi.copy()
            for row, t in zip(rows, (0.1, 0.4, 0.25), strict=True):
                letter = row[column]
                product = product * (expm(q * r * t)[:, index(letter)] if letter != "-" else 1.0)
            total += product.sum() / rates.size
        assert got[column] == pytest.approx(np.log(total), rel=1e-10)


def test_four_leaves_equal_the_sum_over_both_inner_states():
    """((a,b),(c,d)) unrooted: L = sum_k w_k sum_xy pi_x P_xa P_xb P_xy P_yc P_yd, every P from scipy's expm."""
    tree = parse_newick("(a:0.2,b:0.05,(c:0.3,d:0.12):0.4);")
    rows = dict(zip("abcd", ["MHLVKW", "MQLIKW", "MHAF-Y", "LHAFRG"], strict=True))
    rates = discrete_gamma_rates(0.9)
    model = RateModel(LG.eigen(), rates)
    got = site_likelihoods(tree, states_for(tree, rows), model).column_log_likelihood(model.weights)
    q, pi = LG.rate_matrix(), LG.frequencies

    def leaf(letter, t, r):
        return expm(q * r * t)[:, index(letter)] if letter != "-" else np.ones(20)

    for column in range(6):
        total = 0.0
        for r in rates:
            x_side = pi * leaf(rows["a"][column], 0.2, r) * leaf(rows["b"][column], 0.05, r)  # over x
            y_side = leaf(rows["c"][column], 0.3, r) * leaf(rows["d"][column], 0.12, r)      # over y
            total += x_side @ expm(q * r * 0.4) @ y_side / rates.size
        assert got[column] == pytest.approx(np.log(total), rel=1e-10)


def test_a_rooted_tree_and_its_unrooted_form_have_the_same_likelihood():
    rows = dict(zip("abcd", ["MHLVK", "MQLIK", "MHAFR", "LHAFK"], strict=True))
    rooted = parse_newick("((a:0.1,b:0.2):0.05,(c:0.3,d:0.15):0.1);")
    unrooted = parse_newick("(a:0.1,b:0.2,(c:0.3,d:0.15):0.15);")
    assert log_likelihood(rooted, states_for(rooted, rows), LG, 0.8) == pytest.approx(
        log_likelihood(unrooted, states_for(unrooted, rows), LG, 0.8), rel=1e-12)


def test_gradient_is_the_finite_difference_of_the_likelihood():
    rng = np.random.default_rng(3)
    tree = parse_newick("((a:0.1,b:0.2):0.05,(c:0.3,(d:0.15,e:0.4):0.2):0.1,(f:0.05,g:0.6):0.3);")
    states = rng.integers(0, MISSING + 1, size=(tree.n_leaves, 60))
    model = RateModel(LG.eigen(), discrete_gamma_rates(0.6))
    value, gradient = log_likelihood_and_gradient(tree, states, model)
    edges = np.arange(tree.n_nodes - 1)

    def at(lengths):
        return site_likelihoods(tree.with_lengths(np.append(lengths, 0.0)), states,
                                model).column_log_likelihood(model.weights).sum()

    assert value == pytest.approx(at(tree.lengths[edges]))
    numeric = approx_fprime(np.asarray(tree.lengths[edges]), at, 1e-7)
    np.testing.assert_allclose(gradient[edges], numeric, rtol=1e-4, atol=1e-3)


def test_many_leaves_do_not_underflow():
    """600 leaves of one residue: the scaled pruning gives a finite log-likelihood close to the star's."""
    names = [f"s{i}" for i in range(600)]
    tree = tree_from_links([-1] + [0] * 600, [0.0] + [0.01] * 600, [""] + names)
    states = np.zeros((600, 3), dtype=np.intp)
    model = RateModel(LG.eigen(), np.ones(1))
    got = site_likelihoods(tree, states, model).column_log_likelihood(model.weights)
    p = expm(LG.rate_matrix() * 0.01)[:, 0]
    expected = np.log(np.sum(LG.frequencies * np.exp(600 * np.log(p))))
    np.testing.assert_allclose(got, expected, rtol=1e-9)


# --- trees --------------------------------------------------------------------------------------------

def _path_lengths(newick: str, names: list[str]) -> np.ndarray:
    """Leaf-to-leaf path lengths by Bio.Phylo (the reference)."""
    from io import StringIO

    tree = Phylo.read(StringIO(newick), "newick")
    return np.array([[tree.distance(a, b) if a != b else 0.0 for b in names] for a in names])


def test_newick_round_trip_keeps_every_path_length_bio_phylo_measures():
    text = "(((a:0.1,b:0.2):0.05,c:0.3):0.1,('d e':0.4,f:0.5):0.2);"  # rooted; a quoted name
    tree = parse_newick(text)
    assert sorted(tree.names) == ["a", "b", "c", "d e", "f"]
    assert len(tree.children()[tree.root]) == 3  # the bifurcating root was dissolved
    names = list(tree.names)
    np.testing.assert_allclose(_path_lengths(tree.newick(), names), _path_lengths(text, names), atol=1e-6)
    assert np.all(tree.parent[:-1] > np.arange(tree.n_nodes - 1))  # post-order numbering


def test_names_with_newick_characters_survive_the_round_trip():
    """Ids are free text: quoted (a quote doubled) so that Bio.Phylo reads them back as they were."""
    names = ["it's", "a b:c", "x[1]", "p(2),q;"]
    tree = tree_from_links([-1, 0, 0, 0, 0], [0.0, 0.1, 0.2, 0.3, 0.4], ["", *names])
    assert parse_newick(tree.newick()).names == tuple(names)


def test_neighbour_joining_recovers_an_additive_tree():
    text = "((a:0.1,b:0.2):0.05,(c:0.3,(d:0.15,e:0.4):0.2):0.1,(f:0.05,g:0.6):0.3);"
    names = list("abcdefg")
    distances = _path_lengths(text, names)
    tree = neighbour_joining_tree(distances, tuple(names))
    np.testing.assert_allclose(_path_lengths(tree.newick(), names), distances, atol=1e-5)


def test_three_rows_make_a_star_with_the_three_point_lengths():
    names = ["a", "b", "c"]
    text = "(a:0.1,b:0.25,c:0.4);"
    tree = neighbour_joining_tree(_path_lengths(text, names), tuple(names))
    np.testing.assert_allclose(_path_lengths(tree.newick(), names), _path_lengths(text, names), atol=1e-6)


def test_model_distance_inverts_the_expected_identity_under_the_model():
    """The distance d of a pair satisfies 1 - sum_k w_k sum_i pi_i P_ii(r_k d) = p (expm as the reference)."""
    first = codes_of("MVLSEGEWQLVLHVWAKVEADVAGHGQDILIRLFKSHPETLEKF")
    second = first.copy()
    second[::4] = codes_of("A" * second[::4].size)
    states = tip_states(np.array([first, second]))
    p = float(np.mean(states[0] != states[1]))
    d = model_distances(states, LG)[0, 1]
    rates = discrete_gamma_rates(1.0)
    expected_p = 1 - np.mean([np.sum(LG.frequencies * np.diag(expm(LG.rate_matrix() * r * d))) for r in rates])
    assert expected_p == pytest.approx(p, abs=2e-3)
    assert model_distances(states[[0, 0]], LG)[0, 1] == 0.0


# --- user trees ---------------------------------------------------------------------------------------

def test_read_tree_checks_names_against_the_alignment(tmp_path):
    path = tmp_path / "t.nwk"
    path.write_text("((a,b),(c,d));\n")
    tree = read_tree(path, ["a", "b", "c", "d"])
    assert sorted(tree.names) == ["a", "b", "c", "d"]
    # no lengths in the file: the starting value 0.1 each (the two root branches join into one of 0.2)
    assert sorted(tree.lengths[:-1]) == pytest.approx([0.1, 0.1, 0.1, 0.1, 0.2])
    with pytest.raises(InputError, match="1 row of the alignment is not a leaf of the tree: 'e'"):
        read_tree(path, ["a", "b", "c", "d", "e"])
    with pytest.raises(InputError, match="2 leaves of the tree are not ids of the alignment: 'c', 'd'"):
        read_tree(path, ["a", "b", "x", "y"])
    path.write_text("((a,b),(c,d));\n((a,b),(c,d));\n")
    with pytest.raises(InputError, match="one Newick tree, found 2"):
        read_tree(path, ["a", "b", "c", "d"])


# --- rates on simulated alignments --------------------------------------------------------------------

def _coalescent_newick(n: int, depth: float, rng: np.random.Generator) -> str:
    """A random coalescent-like tree of ``n`` leaves (random joins, exponential waits), root depth ``depth``."""
    nodes, heights, height = [f"s{i:03d}" for i in range(n)], [0.0] * n, 0.0
    while len(nodes) > 1:
        k = len(nodes)
        height += rng.exponential(2.0 / (k * (k - 1)))
        i, j = sorted(rng.choice(k, 2, replace=False), reverse=True)
        joined = f"({nodes[i]}:{height - heights[i]:.8f},{nodes[j]}:{height - heights[j]:.8f})"
        for gone in (i, j):
            nodes.pop(gone)
            heights.pop(gone)
        nodes.append(joined)
        heights.append(height)
    scale = depth / height
    return re.sub(r":([0-9.]+)", lambda m: f":{float(m.group(1)) * scale:.6f}", nodes[0]) + ";"


@pytest.fixture(scope="module")
def simulated(tmp_path_factory):
    """200 sequences x 300 columns simulated by pyvolve under LG along a known tree; per-column rates drawn
    from 12 equal-probability gamma(0.8) quantiles, read back from pyvolve's rate file."""
    import pyvolve  # a test dependency (pyproject's test extra)

    rng = np.random.default_rng(7)
    newick = _coalescent_newick(200, 1.0, rng)
    factors = gamma_distribution.ppf((np.arange(12) + 0.5) / 12, a=0.8, scale=1 / 0.8)
    model = pyvolve.Model("LG", rate_factors=list(factors), rate_probs=[1 / 12] * 12)
    # pyvolve 1.1 draws the sites' rate categories from numpy's global generator and takes its own seed at
    # the call, not in the constructor: both are fixed here, so the data (and the figures) are the same
    # in every run.
    saved = np.random.get_state()
    np.random.seed(11)
    try:
        evolver = pyvolve.Evolver(partitions=pyvolve.Partition(models=model, size=300),
                                  tree=pyvolve.read_tree(tree=newick))
        folder = tmp_path_factory.mktemp("pyvolve")
        evolver(seqfile=None, ratefile=str(folder / "rates.txt"), infofile=None, seed=11)
    finally:
        np.random.set_state(saved)
    sequences = evolver.get_sequences()
    categories = np.loadtxt(folder / "rates.txt", skiprows=1, dtype=int)[:, 2] - 1
    ids = sorted(sequences)
    alignment = Alignment(tuple(ids), np.stack([codes_of(sequences[i]) for i in ids]))
    return alignment, factors[categories], newick


def test_simulated_rates_are_recovered_better_than_by_entropy(simulated, record_property):
    alignment, true_rates, _ = simulated
    result = column_rates(alignment)
    table = score_columns(alignment, frame=False)
    rho_rates = spearmanr(result.rate, true_rates)[0]
    rho_entropy = spearmanr(1 - table["entropy_norm"], true_rates)[0]  # conservation: expected negative
    record_property("spearman_rates", rho_rates)
    record_property("spearman_one_minus_entropy", rho_entropy)
    print(f"Spearman with the true rates: rates {rho_rates:.3f}, 1 - normalised entropy {rho_entropy:.3f}")
    assert rho_rates >= 0.8, f"rates: Spearman {rho_rates:.3f} (1 - entropy: {rho_entropy:.3f})"
    assert rho_rates > -rho_entropy, f"rates {rho_rates:.3f} vs 1 - entropy {rho_entropy:.3f} (sign reversed)"
    assert result.subset is False and result.rows.size == 200
    assert result.rate.mean() == pytest.approx(1.0, abs=0.2)  # relative rates: the prior mean is 1
    assert np.all(result.lower <= result.upper)
    inside = (result.lower <= result.rate) & (result.rate <= result.upper)
    assert inside.mean() >= 0.9  # a mean can fall outside a central interval of a very skewed posterior


def test_the_true_tree_as_user_tree_recovers_the_rates_too(simulated, tmp_path):
    alignment, true_rates, newick = simulated
    path = tmp_path / "true.nwk"
    path.write_text(newick + "\n")
    result = rates_of(alignment, RateOptions(), path)
    assert result.tree_source == f"the user's tree {path}"
    assert spearmanr(result.rate, true_rates)[0] >= 0.8


def test_a_column_without_residues_keeps_the_prior():
    alignment = read_alignment(demo_alignment_path())
    codes = np.array(alignment.codes)
    codes[:, 5] = codes_of("-")[0]
    result = column_rates(Alignment(alignment.ids, codes))
    prior = discrete_gamma_rates(result.fit.alpha, 16)
    assert result.rate[5] == pytest.approx(1.0, abs=1e-9)
    assert result.lower[5] == prior[0] and result.upper[5] == prior[-1]


def test_a_gappy_column_is_never_slower_than_a_filled_invariant_one():
    """The counterpart of test_columns' gap rule for the one shown score where lower means more conserved."""
    from globcons.analysis.columns import SCORE_COLUMNS
    from globcons.plots.conservation import draw_profile
    from globcons.structure.paint import score_values

    rng = np.random.default_rng(2)
    letters = np.array(list(STANDARD))
    rows = ["H" + ("H" if k < 26 else "-") + "".join(rng.choice(letters, 30)) for k in range(100)]
    alignment = Alignment(tuple(f"r{k}" for k in range(100)), np.stack([codes_of(row) for row in rows]))
    table, _ = add_rate_columns(score_columns(alignment, frame=False, max_gaps=0.8), alignment)
    assert SCORE_COLUMNS == {"rates": "rate"}
    assert table.loc[0, "rate"] < table.loc[1, "rate"]
    values = score_values(table, "rates")  # what paint writes
    assert values[0] < values[1]
    plotted = draw_profile(table, score="rates").axes[0].lines[0].get_ydata()
    assert plotted[0] < plotted[1]


def test_posterior_mean_of_a_uniform_posterior_is_the_prior_mean():
    tree = parse_newick("(a:0.1,b:0.2,c:0.3);")
    states = np.full((3, 2), MISSING)
    prior = discrete_gamma_rates(0.5, 16)
    rate, low, high = posterior_rates(tree, states, "LG", 0.5, 16, 0.9)
    np.testing.assert_allclose(rate, 1.0)
    assert (low[0], high[0]) == (prior[0], prior[15])  # 5% and 95% fall inside the first and last sixteenth
    _, low, high = posterior_rates(tree, states, "LG", 0.5, 16, 0.75)
    assert (low[0], high[0]) == (prior[1], prior[13])  # 12.5% and 87.5%: the ends of the 2nd and 14th


# --- the demo family and the built-in family ----------------------------------------------------------

@pytest.fixture(scope="module")
def demo_rates():
    alignment = read_alignment(demo_alignment_path())
    table, result = add_rate_columns(score_columns(alignment), alignment)
    return table, result


def test_demo_pocket_and_planted_columns_are_among_the_slowest(demo_rates):
    """The synthetic demo holds 11 classic positions fixed (data_examples/README.md): they evolve slowest."""
    table, _ = demo_rates
    rank = table["rate"].rank(pct=True)
    by_label = dict(zip(table["frame_label"], rank, strict=True))
    for label in ("F8", "E7", "CD1"):
        assert by_label[label] <= 0.10, f"{label} at the {by_label[label]:.0%} point of the rates"
    for label in ("B6", "B10", "C2", "CD4", "E8", "E11", "F4", "G8"):
        assert by_label[label] <= 0.15, f"{label} at the {by_label[label]:.0%} point of the rates"
    means = table.groupby("class")["rate"].mean()
    assert means["invariant"] < means["conservative"] < means["variable"]


def _builtin_family() -> Alignment:
    """The built-in family's rows on the frame (what ``frame_family()`` scores: today the reference chains)."""
    from globcons.align.frame_columns import reference_alignment

    reference = reference_alignment()
    return Alignment(tuple(chain.name for chain in reference.chains), reference.codes, frame_labels=reference.labels)


#: Fewer effective rows than this leave a rate ranking of 150 columns to chance.
BUILTIN_MIN_ROWS = 20


def _assert_heme_pocket_among_the_slowest(family: Alignment, share: float = 0.10) -> None:
    """F8, E7 and CD1 rank among the slowest ``share`` of the family's columns by rate."""
    result = column_rates(family)
    rank = (np.argsort(np.argsort(result.rate)) + 1) / result.rate.size
    labels = list(family.frame_labels)
    for label in ("F8", "E7", "CD1"):
        assert rank[labels.index(label)] <= share, f"{label} at the {rank[labels.index(label)]:.0%} point"


def test_builtin_family_heme_pocket_columns_are_among_the_slowest():
    family = _builtin_family()
    if family.n_rows < BUILTIN_MIN_ROWS:
        pytest.skip(f"the built-in family has {family.n_rows} sequences; ranking the rates of its columns needs "
                    f"at least {BUILTIN_MIN_ROWS} (the ~60-sequence superfamily will run this check)")
    _assert_heme_pocket_among_the_slowest(family)


def test_heme_pocket_columns_of_real_globins_are_among_the_slowest():
    # The 49 real globins shipped in data/family (each checked against two public copies of its record;
    # vertebrate myoglobins and hemoglobins, neuroglobin, a lamprey, invertebrate, plant, flavo- and
    # truncated globins) placed on the frame: the proximal His F8, the distal E7 and Phe CD1 are the
    # family's most conserved positions (common knowledge of the trade; Bashford, Chothia & Lesk 1987
    # J Mol Biol 196:199), so their rates rank among the slowest 10% of the columns.
    from globcons.align.layout import align_to_frame
    from globcons.frame.verified_globins import verified_globins

    placed = align_to_frame([(row.accession, row.sequence) for row in verified_globins()], shuffles=0)
    family = placed.to_alignment()
    _assert_heme_pocket_among_the_slowest(family)


# --- subsets, metadata, command line ------------------------------------------------------------------

def test_representative_subset_is_fixed_and_spreads_over_clusters():
    base = codes_of("MVLSEGEWQLVLHVWAKVEADVAGHGQDILIRLFKSHPETLEKF")
    rng = np.random.default_rng(5)
    copies = np.repeat(base[None, :], 50, axis=0)
    distinct = rng.integers(0, 20, size=(10, base.size)).astype(np.uint8)
    codes = np.concatenate((copies, distinct))
    chosen = representative_rows(codes, 11)
    assert chosen.size == 11 and np.all(np.diff(chosen) > 0)
    np.testing.assert_array_equal(chosen, representative_rows(codes, 11))
    assert (chosen >= 50).sum() >= 8  # each distinct row weighs as much as all 50 copies together
    np.testing.assert_array_equal(representative_rows(codes, 60), np.arange(60))


def test_above_the_limit_a_subset_is_used_and_recorded(demo_rates):
    alignment = read_alignment(demo_alignment_path())
    table, result = add_rate_columns(score_columns(alignment), alignment, RateOptions(max_rows=20))
    meta = table.attrs["rates"]
    assert result.subset and result.rows.size == 20 and result.fit.tree.n_leaves == 20
    assert meta["subset"] is True and meta["rows_used"] == 20 and "1/m" in meta["subset_method"]
    assert "representative subset of 20 rows" in meta["summary"]
    full = demo_rates[0]["rate"]
    assert spearmanr(table["rate"], full)[0] > 0.7  # the subset sees the same slow and fast columns


def test_fit_improves_on_the_starting_tree(demo_rates):
    _, result = demo_rates
    alignment = read_alignment(demo_alignment_path())
    states = tip_states(alignment.codes[[alignment.ids.index(n) for n in result.fit.tree.names]])
    start = neighbour_joining_tree(model_distances(states, LG), result.fit.tree.names)
    assert result.fit.log_likelihood > log_likelihood(start, states, LG, 1.0) + 10
    refit = fit_tree(result.fit.tree, states, LG)
    assert refit.log_likelihood == pytest.approx(result.fit.log_likelihood, abs=0.5)  # at an optimum already


def test_columns_rates_writes_the_table_and_the_tree_beside_it(tmp_path, capsys):
    out = tmp_path / "columns.tsv"
    assert main(["columns", DEMO, "--rates", "-o", str(out)]) == 0
    err = capsys.readouterr().err
    assert "rates: LG+G4" in err and "columns.tsv.tree.nwk" in err
    header = out.read_text().splitlines()[0].split("\t")
    assert header[-3:] == ["rate", "rate_low", "rate_high"]
    meta = json.loads((tmp_path / "columns.tsv.meta.json").read_text())
    tree_text = (tmp_path / "columns.tsv.tree.nwk").read_text().strip()
    assert meta["rates"]["tree_newick"] == tree_text and meta["rates"]["model"] == "LG"
    assert sorted(parse_newick(tree_text).names) == sorted(read_alignment(demo_alignment_path()).ids)
    assert not [p.name for p in tmp_path.iterdir() if p.name.endswith(".part")]
    # the same tree given back: the same topology, lengths refitted from where they are, so the same rates
    again = tmp_path / "again.tsv"
    assert main(["columns", DEMO, "--rates", "--tree", str(tmp_path / "columns.tsv.tree.nwk"),
                 "-o", str(again), "--tree-output", str(tmp_path / "again.nwk")]) == 0
    first = np.loadtxt(out, delimiter="\t", skiprows=1, usecols=[header.index("rate")])
    second = np.loadtxt(again, delimiter="\t", skiprows=1, usecols=[header.index("rate")])
    np.testing.assert_allclose(second, first, atol=0.02)
    assert (tmp_path / "again.nwk").exists()


def test_columns_rates_to_stdout_writes_no_tree_file(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(["columns", DEMO, "--rates", "-q"]) == 0
    out = capsys.readouterr().out
    assert out.splitlines()[0].endswith("rate\trate_low\trate_high") and len(out.splitlines()) == 157
    assert list(tmp_path.iterdir()) == []


def test_profile_and_paint_take_the_rates_score(tmp_path, capsys, demo_rates):
    from Bio.PDB import PDBParser

    from test_structure import F8_COLUMN, HIS_F8, pdb_text

    assert main(["profile", DEMO, "--score", "rates", "-o", str(tmp_path / "p.svg")]) == 0
    assert "evolutionary rate" in (tmp_path / "p.svg").read_text()
    structure = tmp_path / "model.pdb"
    structure.write_text(pdb_text())
    assert main(["paint", str(structure), "--alignment", DEMO, "--score", "rates",
                 "-o", str(tmp_path / "painted.pdb")]) == 0
    painted = PDBParser(QUIET=True).get_structure("p", str(tmp_path / "painted.pdb"))
    values = {atom.get_bfactor() for atom in painted[0]["A"].get_atoms() if atom.get_parent().id[0] == " "}
    assert -1.0 in values and any(0.0 < v < 5.0 for v in values)  # rates where mapped, the sentinel elsewhere
    his = painted[0]["A"][HIS_F8]["CA"].get_bfactor()
    assert his == pytest.approx(round(float(demo_rates[0]["rate"].iloc[F8_COLUMN - 1]), 2), abs=0.0051)


def test_report_with_rates_writes_the_tree_the_profile_and_the_methods(tmp_path):
    from globcons.report.html import write_report

    result = write_report(DEMO, tmp_path / "report", logos=False, rates={})
    folder = tmp_path / "report"
    for name in ("tree.nwk", "rates_profile.svg", "rates_profile.png", "columns.tsv", "methods.md"):
        assert (folder / name).is_file(), name
    assert {"rate", "rate_low", "rate_high"} <= set(result.table.columns)
    assert (folder / "tree.nwk").read_text().strip() == result.table.attrs["rates"]["tree_newick"]
    methods = (folder / "methods.md").read_text()
    assert "under the LG model (Le and Gascuel 2008) with 4 discrete gamma rate categories (Yang 1994)" in methods
    assert "Le SQ, Gascuel O (2008)" in methods and "Saitou N, Nei M (1987)" in methods
    assert f"alpha = {result.table.attrs['rates']['alpha']:.3g}" in methods
    html = (folder / "report.html").read_text()
    assert 'id="rates"' in html and "rates: LG+G4" in html
    plain = write_report(DEMO, tmp_path / "plain", logos=False)
    assert "rate" not in plain.table.columns and not (tmp_path / "plain" / "tree.nwk").exists()
    assert "LG model" not in (tmp_path / "plain" / "methods.md").read_text()


def test_columns_says_when_the_rates_use_a_subset(tmp_path, capsys):
    out = tmp_path / "c.tsv"
    assert main(["columns", DEMO, "--rates", "--rates-max-rows", "20", "-o", str(out)]) == 0
    err = capsys.readouterr().err
    assert "48 rows are more than --rates-max-rows 20; the tree and rates use a representative subset of 20" in err
    meta = json.loads((tmp_path / "c.tsv.meta.json").read_text())["rates"]
    assert (meta["subset"], meta["rows_used"], meta["exact_max_rows"]) == (True, 20, 20)
    assert len(parse_newick((tmp_path / "c.tsv.tree.nwk").read_text()).names) == 20


def test_a_fit_stopped_by_the_iteration_cap_says_so():
    result = column_rates(read_alignment(DEMO), RateOptions(max_iterations=3))
    assert result.fit.converged is False and result.fit.iterations == 3
    assert result.metadata()["branch_fit_converged"] is False
    assert result.describe().endswith("the branch lengths stopped after 3 iterations before meeting the tolerance")
