"""Maximum-likelihood branch lengths and gamma shape on a fixed topology (scipy.optimize).

What is optimised, in this order:

1. a common scale of all branch lengths and the gamma shape alpha, jointly (L-BFGS-B on their
   logarithms, finite-difference gradient): this brings a distance tree to the model's units;
2. every branch length, jointly (L-BFGS-B, bounds ``[MIN_LENGTH, MAX_LENGTH]``, the analytic gradient of
   :func:`globcons.phylo.likelihood.log_likelihood_and_gradient`, at most ``max_iterations`` iterations),
   alpha fixed;
3. alpha once more, alone (bounded scalar search on its logarithm), the branch lengths fixed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from globcons.phylo.gamma import DEFAULT_CATEGORIES, discrete_gamma_rates
from globcons.phylo.likelihood import RateModel, log_likelihood_and_gradient, site_likelihoods
from globcons.phylo.models import SubstitutionModel
from globcons.phylo.tree import MIN_LENGTH, Tree

__all__ = ["ALPHA_BOUNDS", "BRANCH_ITERATIONS", "MAX_LENGTH", "FitResult", "fit_tree", "log_likelihood"]

#: Longest branch allowed (substitutions per site).
MAX_LENGTH = 10.0
#: Range of the gamma shape.
ALPHA_BOUNDS = (0.02, 50.0)
#: Iterations of the joint branch-length step.
BRANCH_ITERATIONS = 200


@dataclass(frozen=True, eq=False)
class FitResult:
    """The fitted tree and gamma shape.

    Attributes
    ----------
    tree
        Topology as given, branch lengths by maximum likelihood.
    alpha
        Fitted gamma shape.
    log_likelihood
        At the optimum.
    iterations
        L-BFGS-B iterations of the branch-length step.
    converged
        Whether that step met its tolerance within ``max_iterations``.
    """

    tree: Tree
    alpha: float
    log_likelihood: float
    iterations: int
    converged: bool


def _rate_model(model: SubstitutionModel, alpha: float, categories: int) -> RateModel:
    return RateModel(model.eigen(), discrete_gamma_rates(alpha, categories))


def log_likelihood(tree: Tree, states: np.ndarray, model: SubstitutionModel, alpha: float,
                   categories: int = DEFAULT_CATEGORIES) -> float:
    """Log-likelihood of the alignment on ``tree`` under ``model`` with discrete gamma rates."""
    rate_model = _rate_model(model, alpha, categories)
    return float(site_likelihoods(tree, states, rate_model).column_log_likelihood(rate_model.weights).sum())


def _scale_and_alpha(tree: Tree, states: np.ndarray, model: SubstitutionModel, categories: int) -> tuple[Tree, float]:
    from scipy.optimize import minimize

    def cost(x: np.ndarray) -> float:
        scaled = tree.with_lengths(np.clip(tree.lengths * np.exp(x[0]), MIN_LENGTH, MAX_LENGTH))
        return -log_likelihood(scaled, states, model, float(np.exp(x[1])), categories)

    bounds = [(np.log(0.02), np.log(50.0)), tuple(np.log(ALPHA_BOUNDS))]
    best = minimize(cost, np.array([0.0, 0.0]), method="L-BFGS-B", bounds=bounds, options={"maxiter": 50})
    scaled = tree.with_lengths(np.clip(tree.lengths * np.exp(best.x[0]), MIN_LENGTH, MAX_LENGTH))
    return scaled, float(np.exp(best.x[1]))


def _branches(tree: Tree, states: np.ndarray, model: SubstitutionModel, alpha: float, categories: int,
              max_iterations: int) -> tuple[Tree, int, bool]:
    from scipy.optimize import minimize

    rate_model = _rate_model(model, alpha, categories)
    edges = np.arange(tree.n_nodes - 1)

    def cost(lengths: np.ndarray) -> tuple[float, np.ndarray]:
        value, gradient = log_likelihood_and_gradient(tree.with_lengths(np.append(lengths, 0.0)), states, rate_model)
        return -value, -gradient[edges]

    best = minimize(cost, np.asarray(tree.lengths[edges]), jac=True, method="L-BFGS-B",
                    bounds=[(MIN_LENGTH, MAX_LENGTH)] * edges.size,
                    options={"maxiter": max_iterations, "ftol": 1e-9 * states.shape[1]})
    return tree.with_lengths(np.append(best.x, 0.0)), int(best.nit), bool(best.success)


def _alpha(tree: Tree, states: np.ndarray, model: SubstitutionModel, alpha: float, categories: int) -> float:
    from scipy.optimize import minimize_scalar

    best = minimize_scalar(lambda x: -log_likelihood(tree, states, model, float(np.exp(x)), categories),
                           bounds=tuple(np.log(ALPHA_BOUNDS)), method="bounded", options={"xatol": 1e-3})
    start = -log_likelihood(tree, states, model, alpha, categories)
    return float(np.exp(best.x)) if best.fun < start else alpha


def fit_tree(tree: Tree, states: np.ndarray, model: SubstitutionModel, categories: int = DEFAULT_CATEGORIES,
             max_iterations: int = BRANCH_ITERATIONS) -> FitResult:
    """Branch lengths and gamma shape by maximum likelihood (the three steps of the module text).

    Parameters
    ----------
    tree
        Starting tree (topology kept).
    states
        (n_leaves, L) leaf states, row ``i`` for leaf ``i``.
    model
        The substitution model.
    categories
        Discrete gamma categories.
    max_iterations
        Cap on the L-BFGS-B iterations of the branch-length step.
    """
    scaled, alpha = _scale_and_alpha(tree, states, model, categories)
    fitted, iterations, converged = _branches(scaled, states, model, alpha, categories, max_iterations)
    alpha = _alpha(fitted, states, model, alpha, categories)
    return FitResult(fitted, alpha, log_likelihood(fitted, states, model, alpha, categories), iterations, converged)
