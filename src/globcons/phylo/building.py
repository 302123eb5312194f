"""A starting tree from the alignment: model-corrected distances and neighbour joining (biotite).

The distance of two rows is the branch length at which the model (with gamma rates) predicts the
proportion of differing residues observed over the columns where both rows hold one of the 20 residues
(a method-of-moments distance under the model; the expected identity is ``sum_k w_k sum_i pi_i P_ii(r_k d)``,
tabulated once and inverted by interpolation). The identities of all pairs come from one BLAS product of
the rows' one-hot residue matrix. Neighbour joining (Saitou & Nei 1987 Mol Biol Evol 4:406) is biotite's
C implementation (``biotite.sequence.phylo.neighbor_joining``).
"""

from __future__ import annotations

import numpy as np

from globcons.core.alphabet import N_STANDARD
from globcons.phylo.gamma import discrete_gamma_rates
from globcons.phylo.models import SubstitutionModel
from globcons.phylo.tree import Tree, tree_from_links

__all__ = ["DISTANCE_ALPHA", "MAX_DISTANCE", "model_distances", "neighbour_joining_tree", "p_distances"]

#: Gamma shape assumed by the distances (the tree's lengths are refitted by likelihood afterwards).
DISTANCE_ALPHA = 1.0
#: Distance given to saturated pairs and to pairs without a shared residue column (substitutions per site).
MAX_DISTANCE = 5.0


def p_distances(states: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Proportion of differing residues and the number of columns compared, for every pair of rows.

    Parameters
    ----------
    states
        (N, L) leaf states (0-19 residues, anything else missing).

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        ``float64`` (N, N) proportions (NaN where no column is shared) and ``float64`` (N, N) counts.
    """
    n_rows, n_columns = states.shape
    present = states < N_STANDARD
    one_hot = np.zeros((n_rows, n_columns * N_STANDARD), dtype=np.float32)
    rows, columns = np.nonzero(present)
    one_hot[rows, columns * N_STANDARD + states[rows, columns]] = 1.0
    same = (one_hot @ one_hot.T).astype(np.float64)
    shared = present.astype(np.float32)
    compared = (shared @ shared.T).astype(np.float64)
    with np.errstate(invalid="ignore", divide="ignore"):
        proportion = np.where(compared > 0, 1.0 - same / compared, np.nan)
    return proportion, compared


def model_distances(states: np.ndarray, model: SubstitutionModel, alpha: float = DISTANCE_ALPHA) -> np.ndarray:
    """Model-corrected distances of every pair of rows (see the module text), (N, N), zero diagonal."""
    proportion, _ = p_distances(states)
    eigen = model.eigen()
    grid = np.concatenate(([0.0], np.geomspace(1e-4, MAX_DISTANCE, 400)))
    rates = discrete_gamma_rates(alpha)
    diagonal = np.diagonal(eigen.transition(grid[:, None] * rates[None, :]), axis1=-2, axis2=-1)  # (G, K, 20)
    expected = 1.0 - (diagonal @ model.frequencies).mean(axis=1)
    expected = np.maximum.accumulate(expected)  # monotone for the interpolation
    distances = np.interp(np.nan_to_num(proportion, nan=1.0), expected, grid, right=MAX_DISTANCE)
    np.fill_diagonal(distances, 0.0)
    return (distances + distances.T) / 2


def neighbour_joining_tree(distances: np.ndarray, names: tuple[str, ...]) -> Tree:
    """The neighbour-joining tree of a distance matrix (biotite), as a :class:`~globcons.phylo.tree.Tree`."""
    from biotite.sequence.phylo import neighbor_joining

    if len(names) == 2:
        half = float(distances[0, 1]) / 2
        return tree_from_links([-1, 0, 0], [0.0, half, half], ["", names[0], names[1]])
    if len(names) == 3:  # biotite needs four; three leaves make one star, lengths by the three-point formula
        d = distances
        lengths = [(d[0, 1] + d[0, 2] - d[1, 2]) / 2, (d[0, 1] + d[1, 2] - d[0, 2]) / 2,
                   (d[0, 2] + d[1, 2] - d[0, 1]) / 2]
        return tree_from_links([-1, 0, 0, 0], [0.0, *map(float, lengths)], ["", *names])
    result = neighbor_joining(np.ascontiguousarray(distances, dtype=np.float64))
    parent, lengths, labels = [-1], [0.0], [""]
    stack = [(result.root, 0)]
    while stack:  # iterative: NJ trees of many rows can be deep
        node, index = stack.pop()
        for child in node.children or ():
            parent.append(index)
            lengths.append(float(child.distance))
            labels.append(names[child.index] if child.is_leaf() else "")
            stack.append((child, len(parent) - 1))
    return tree_from_links(parent, lengths, labels)
