"""Relative evolutionary rate of every column: empirical Bayes under a model with discrete gamma rates.

The pipeline: the rows (all of them up to ``max_rows``, else a representative subset, see
:func:`representative_rows`) -> a tree (neighbour joining on model-corrected distances, or the user's)
-> branch lengths and gamma shape by maximum likelihood (:func:`globcons.phylo.fit.fit_tree`, four
categories) -> for every column, the posterior over ``posterior_categories`` equal-probability slices of
the fitted gamma (a finer quadrature of the same prior): its mean is the column's relative rate (the
prior mean is 1) and its quantiles the credible interval. Empirical Bayes as in Yang (1994 J Mol Evol
39:306): the tree and alpha are fixed at their estimates, so their uncertainty is not carried.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.neighbours import NEFF_IDENTITY, neighbour_counts, row_keys
from globcons.phylo.building import model_distances, neighbour_joining_tree
from globcons.phylo.fit import BRANCH_ITERATIONS, FitResult, fit_tree
from globcons.phylo.gamma import DEFAULT_CATEGORIES, discrete_gamma_rates
from globcons.phylo.likelihood import RateModel, site_likelihoods, tip_states
from globcons.phylo.models import MODELS, load_model
from globcons.phylo.tree import Tree

__all__ = ["EXACT_MAX_ROWS", "POSTERIOR_CATEGORIES", "ColumnRates", "RateOptions", "column_rates",
           "posterior_rates", "representative_rows"]

#: Up to this many rows every row is a leaf of the tree; above, a representative subset of this size.
EXACT_MAX_ROWS = 500
#: Equal-probability gamma slices of the posterior (the model itself is fitted with four).
POSTERIOR_CATEGORIES = 16


@dataclass(frozen=True)
class RateOptions:
    """How the rates are estimated (recorded in the table's metadata).

    Attributes
    ----------
    model
        A shipped model (:data:`globcons.phylo.models.MODELS`).
    categories
        Discrete gamma categories of the fitted model.
    posterior_categories
        Gamma slices of the per-column posterior.
    interval
        Probability of the central credible interval.
    max_rows
        Rows used exactly; above it, a subset of that size.
    identity
        Identity threshold of the clusters that weigh the subset.
    max_iterations
        Cap on the L-BFGS-B iterations of the branch lengths.
    """

    model: str = "LG"
    categories: int = DEFAULT_CATEGORIES
    posterior_categories: int = POSTERIOR_CATEGORIES
    interval: float = 0.9
    max_rows: int = EXACT_MAX_ROWS
    identity: float = NEFF_IDENTITY
    max_iterations: int = BRANCH_ITERATIONS

    def __post_init__(self) -> None:
        if self.model not in MODELS:
            raise ValueError(f"unknown model {self.model!r}; shipped: {', '.join(MODELS)}")
        if not 0 < self.interval < 1 or self.max_rows < 3 or self.categories < 1 or self.posterior_categories < 2:
            raise ValueError("interval must be in (0, 1), max_rows >= 3, categories >= 1, posterior_categories >= 2")


@dataclass(frozen=True, eq=False)
class ColumnRates:
    """Per-column rates and what they were estimated on.

    Attributes
    ----------
    rate, lower, upper
        (L,) posterior mean rate and the credible interval's ends (relative: the prior mean is 1).
    fit
        The fitted tree and gamma shape.
    rows
        Indices of the alignment rows used (all of them unless ``subset``).
    subset
        Whether a representative subset was used.
    tree_source
        ``"neighbour joining"`` or the user's file.
    options
        The options used.
    """

    rate: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    fit: FitResult
    rows: np.ndarray
    subset: bool
    tree_source: str
    options: RateOptions = field(default_factory=RateOptions)

    def describe(self) -> str:
        """One line for the summary."""
        used = (f"a representative subset of {self.rows.size} rows (weighted by clusters at "
                f"{self.options.identity:.0%} identity)" if self.subset else f"all {self.rows.size} rows")
        line = (f"rates: {self.options.model}+G{self.options.categories} (alpha {self.fit.alpha:.3g}) on "
                f"{used}, tree by {self.tree_source}, total length {self.fit.tree.total_length():.3g}")
        if not self.fit.converged:
            line += (f"; the branch lengths stopped after {self.fit.iterations} iterations before meeting the "
                     "tolerance")
        return line

    def metadata(self) -> dict[str, object]:
        """What the table's metadata records about the rates."""
        return {
            "model": self.options.model,
            "model_citation": MODELS[self.options.model],
            "gamma_categories": self.options.categories,
            "posterior_categories": self.options.posterior_categories,
            "alpha": round(self.fit.alpha, 6),
            "interval": self.options.interval,
            "log_likelihood": round(self.fit.log_likelihood, 4),
            "branch_iterations": self.fit.iterations,
            "branch_fit_converged": self.fit.converged,
            "rows_used": int(self.rows.size),
            "exact_max_rows": self.options.max_rows,
            "subset": self.subset,
            "subset_method": (f"weighted sample without replacement, weights 1/m from clusters at "
                              f"{self.options.identity:.0%} identity" if self.subset else None),
            "tree_source": self.tree_source,
            "tree_total_length": round(self.fit.tree.total_length(), 6),
            "tree_newick": self.fit.tree.newick(),
        }


def representative_rows(codes: np.ndarray, max_rows: int, identity: float = NEFF_IDENTITY) -> np.ndarray:
    """All rows, or ``max_rows`` of them drawn so that each cluster is about equally represented.

    A weighted sample without replacement (Efraimidis & Spirakis 2006 Inf Process Lett 97:181): row ``i``
    gets the key ``-log(u_i) / w_i``, ``w_i = 1 / m_i`` its cluster weight at ``identity``
    (:func:`globcons.core.neighbours.neighbour_counts`) and ``u_i`` a fixed pseudo-random number of its index
    (:func:`globcons.core.neighbours.row_keys`); the rows of smallest key are kept. The same file always
    gives the same subset. Returns sorted indices.
    """
    n_rows = codes.shape[0]
    if n_rows <= max_rows:
        return np.arange(n_rows)
    weights = neighbour_counts(codes, identity).weights
    uniform = ((row_keys(np.arange(n_rows, dtype=np.uint64)) >> np.uint64(11)).astype(np.float64) + 0.5) / 2.0**53
    keys = -np.log(uniform) / weights
    return np.sort(np.argpartition(keys, max_rows - 1)[:max_rows])


def posterior_rates(tree: Tree, states: np.ndarray, model_name: str, alpha: float, categories: int,
                    interval: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Posterior mean rate and central credible interval of every column (see the module text).

    Returns
    -------
    (rate, lower, upper)
        (L,) each. The interval's ends are category rates: the first slice at which the posterior's
        cumulative probability reaches ``(1 - interval) / 2``, and ``(1 + interval) / 2``.
    """
    rates = discrete_gamma_rates(alpha, categories)
    sites = site_likelihoods(tree, states, RateModel(load_model(model_name).eigen(), rates))
    posterior = sites.scaled / sites.scaled.sum(axis=0, keepdims=True)  # equal priors cancel
    cumulative = np.cumsum(posterior, axis=0)
    low = np.argmax(cumulative >= (1 - interval) / 2 - 1e-12, axis=0)
    high = np.argmax(cumulative >= (1 + interval) / 2 - 1e-12, axis=0)
    return rates @ posterior, rates[low], rates[high]


def column_rates(alignment: Alignment, options: RateOptions | None = None, tree: Tree | None = None,
                 tree_source: str | None = None) -> ColumnRates:
    """Relative evolutionary rate of every column of an alignment.

    Parameters
    ----------
    alignment
        The alignment (at least three rows).
    options
        A :class:`RateOptions`.
    tree
        A user's tree whose leaves are the alignment's ids (:func:`globcons.phylo.newick.read_tree`);
        its topology is kept and its branch lengths refitted. Default: neighbour joining.
    tree_source
        How to name that tree in the metadata (its file).

    Examples
    --------
    >>> from globcons import read_alignment
    >>> from globcons.demo import demo_alignment_path
    >>> result = column_rates(read_alignment(demo_alignment_path()))
    >>> result.rate.shape, bool(0.5 < result.rate.mean() < 1.5)
    ((156,), True)
    """
    options = options or RateOptions()
    if alignment.n_rows < 3:
        raise ValueError(f"rates need at least three sequences, {alignment.source} has {alignment.n_rows}")
    model = load_model(options.model)
    if tree is None:
        rows = representative_rows(alignment.codes, options.max_rows, options.identity)
        names = tuple(alignment.ids[row] for row in rows)
        states = tip_states(alignment.codes[rows])
        tree = neighbour_joining_tree(model_distances(states, model), names)
        tree_source = "neighbour joining"
    else:
        index = {name: row for row, name in enumerate(alignment.ids)}
        rows = np.sort(np.array([index[name] for name in tree.names]))
    index = {name: row for row, name in enumerate(alignment.ids)}
    states = tip_states(alignment.codes[[index[name] for name in tree.names]])
    fit = fit_tree(tree, states, model, options.categories, options.max_iterations)
    rate, lower, upper = posterior_rates(fit.tree, states, options.model, fit.alpha, options.posterior_categories,
                                         options.interval)
    return ColumnRates(rate, lower, upper, fit, rows, bool(rows.size < alignment.n_rows), tree_source or "user tree",
                       options)
