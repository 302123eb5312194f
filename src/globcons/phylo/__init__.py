"""Layer 4 (beside ``align``): trees and per-column evolutionary rates under an amino-acid model.

Substitution models shipped as package data, discrete gamma rates, the tree value, neighbour joining on
model-corrected distances, vectorised pruning likelihood with its gradient, maximum-likelihood branch
lengths and the empirical Bayes rate of every column; a user's Newick tree read with Bio.Phylo.
"""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "MODELS": "globcons.phylo.models",
    "load_model": "globcons.phylo.models",
    "discrete_gamma_rates": "globcons.phylo.gamma",
    "Tree": "globcons.phylo.tree",
    "read_tree": "globcons.phylo.newick",
    "ColumnRates": "globcons.phylo.rates",
    "RateOptions": "globcons.phylo.rates",
    "column_rates": "globcons.phylo.rates",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
