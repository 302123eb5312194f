"""Felsenstein pruning over all columns and rate categories at once, and the gradient in the branch lengths.

Partial likelihoods are arrays of shape (K, L, 20): rate categories x columns x states, so every numpy
call handles a whole node; the Python loop runs over the tree's nodes only (post-order for the likelihood,
pre-order for the gradient). Each internal node's partials are rescaled per column by their maximum and
the logarithms of the scale factors summed, so thousands of leaves never underflow. A leaf's partial is
the indicator of its residue; a gap or an unknown residue is missing data (all states possible).

Felsenstein J (1981) J Mol Evol 17:368 (pruning). The gradient multiplies, for each branch, the partial
below it (from the post-order pass) with the partial of everything above it (from a pre-order pass).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from globcons.core.alphabet import N_STANDARD
from globcons.phylo.models import EigenSystem
from globcons.phylo.tree import Tree

__all__ = ["MISSING", "RateModel", "SiteLikelihoods", "log_likelihood_and_gradient", "site_likelihoods",
           "tip_states"]

#: State code of a leaf's missing data (gaps, X, B, Z, J, U, O): every residue possible.
MISSING = N_STANDARD


@dataclass(frozen=True, eq=False)
class RateModel:
    """A substitution model's eigen system with rate categories of equal probability."""

    eigen: EigenSystem
    rates: np.ndarray

    @property
    def weights(self) -> np.ndarray:
        """Prior probability of each category (equal)."""
        return np.full(self.rates.size, 1.0 / self.rates.size)


@dataclass(frozen=True, eq=False)
class SiteLikelihoods:
    """Per-column likelihoods of every rate category.

    Attributes
    ----------
    scaled
        (K, L): likelihood of each column under each category, divided by ``exp(log_scale)``.
    log_scale
        (L,): the logarithm of the factor taken out of each column.
    """

    scaled: np.ndarray
    log_scale: np.ndarray

    def column_log_likelihood(self, weights: np.ndarray) -> np.ndarray:
        """(L,) log-likelihood of each column, the categories mixed with ``weights``."""
        return np.log(weights @ self.scaled) + self.log_scale


def tip_states(codes: np.ndarray) -> np.ndarray:
    """Leaf states (0-19, or :data:`MISSING`) from residue codes: everything but the 20 residues is missing."""
    codes = np.asarray(codes)
    return np.where(codes < N_STANDARD, codes, MISSING).astype(np.intp)


def _leaf_rows(p: np.ndarray) -> np.ndarray:
    """(..., 20, 20) -> (..., 21, 20): row ``s`` holds ``P[:, s]`` (the message of a leaf in state ``s``), and
    row 20, all ones, the message of missing data; indexing it with a leaf's states gives (..., L, 20)."""
    rows = np.swapaxes(p, -1, -2)
    ones = np.ones(rows.shape[:-2] + (1, rows.shape[-1]))
    return np.ascontiguousarray(np.concatenate((rows, ones), axis=-2))


def _transitions(tree: Tree, model: RateModel) -> np.ndarray:
    """P(r_k t_c) for every node c and category k: (n_nodes, K, 20, 20)."""
    return model.eigen.transition(tree.lengths[:, None] * model.rates[None, :])


def _down_pass(tree: Tree, states: np.ndarray, p: np.ndarray,
               keep: bool = False) -> tuple[dict[int, np.ndarray], np.ndarray, dict[int, np.ndarray]]:
    """Scaled partials of every internal node (K, L, 20), the summed log scale factors (L,) and, with
    ``keep``, the message every non-root node sends its parent (else an empty dict)."""
    if tree.n_leaves < 2:
        raise ValueError("a tree needs at least two leaves")
    leaf_rows = _leaf_rows(p[:tree.n_leaves])
    down: dict[int, np.ndarray] = {}
    messages: dict[int, np.ndarray] = {}
    log_scale = np.zeros(states.shape[1])
    for node in range(tree.n_nodes):
        if node >= tree.n_leaves:
            partial = down[node]
            peak = partial.max(axis=(0, 2))
            peak = np.where(peak > 0, peak, 1.0)
            partial /= peak[None, :, None]
            log_scale += np.log(peak)
            if node == tree.root:
                break
            message = partial @ p[node].transpose(0, 2, 1)
        else:
            message = leaf_rows[node][:, states[node], :]
        if keep:
            messages[node] = message
        up = int(tree.parent[node])
        if up in down:
            down[up] = down[up] * message
        else:
            down[up] = message.copy()
    return down, log_scale, messages


def site_likelihoods(tree: Tree, states: np.ndarray, model: RateModel) -> SiteLikelihoods:
    """Likelihood of every column under every rate category.

    Parameters
    ----------
    tree
        The tree; leaf ``i`` holds row ``i`` of ``states``.
    states
        ``intp`` (n_leaves, L) from :func:`tip_states`.
    model
        Eigen system and category rates.
    """
    p = _transitions(tree, model)
    down, log_scale, _ = _down_pass(tree, states, p)
    scaled = down[tree.root] @ model.eigen.frequencies  # (K, L)
    return SiteLikelihoods(scaled, log_scale)


def log_likelihood_and_gradient(tree: Tree, states: np.ndarray, model: RateModel) -> tuple[float, np.ndarray]:
    """The log-likelihood of the alignment and its derivative in every branch length.

    For the branch above node c, with ``A`` the partial of everything outside c's subtree (at c's parent,
    the root frequencies included) and ``D`` the partial of c's subtree,
    ``dL_lk / dt_c = sum_ij A_lki r_k [Q P(r_k t_c)]_ij D_lkj``; the per-column scale factors cancel in
    ``d log L_l / dt_c``. One post-order pass and one pre-order pass.

    Returns
    -------
    (float, numpy.ndarray)
        The log-likelihood and the gradient, shape (n_nodes,) (0 for the root).
    """
    p = _transitions(tree, model)
    dp = model.eigen.transition_derivative(tree.lengths[:, None] * model.rates[None, :])
    dp *= model.rates[None, :, None, None]  # d/dt P(r t) = r Q P(r t)
    down, log_scale, sent = _down_pass(tree, states, p, keep=True)
    weights = model.weights
    site = weights @ (down[tree.root] @ model.eigen.frequencies)
    log_likelihood = float(np.log(site).sum() + log_scale.sum())
    leaf_slopes = _leaf_rows(dp[:tree.n_leaves])
    leaf_slopes[..., -1, :] = 0.0  # missing data: the row of ones does not change with t
    gradient = np.zeros(tree.n_nodes)
    children = tree.children()
    above = {tree.root: np.broadcast_to(model.eigen.frequencies, down[tree.root].shape)}
    for node in range(tree.n_nodes - 1, tree.n_leaves - 1, -1):
        outside = above.pop(node)
        kids = children[node]
        for child in kids:
            rest = outside
            for other in kids:
                if other != child:
                    rest = rest * sent[int(other)]
            if child < tree.n_leaves:
                slope_message = leaf_slopes[child][:, states[child], :]
            else:
                slope_message = down[int(child)] @ dp[child].transpose(0, 2, 1)
            value = weights @ np.einsum("klj,klj->kl", rest, sent[int(child)])
            slope = weights @ np.einsum("klj,klj->kl", rest, slope_message)
            gradient[child] = float((slope / value).sum())
            if child >= tree.n_leaves:
                upper = rest @ p[child]
                peak = upper.max(axis=(0, 2))
                above[int(child)] = upper / np.where(peak > 0, peak, 1.0)[None, :, None]
        for child in kids:  # what the subtrees below have sent is used: free it as the pass goes
            sent.pop(int(child))
            down.pop(int(child), None)
    return log_likelihood, gradient
