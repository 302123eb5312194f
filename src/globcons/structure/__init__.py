"""Layer 7, structures: reading PDB/mmCIF chains, measuring their residues, painting scores into B-factors."""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "SCORES": "globcons.structure.paint",
    "SENTINEL": "globcons.structure.paint",
    "paint_structure": "globcons.structure.paint",
    "read_structure": "globcons.structure.read",
    "load_structure": "globcons.structure.read",
    "chain_residues": "globcons.structure.read",
    "structure_features": "globcons.structure.features",
    "StructureFeatures": "globcons.structure.features",
    "ChainFeatures": "globcons.structure.features",
    "load_features": "globcons.structure.context",
    "target_context": "globcons.structure.context",
    "add_structure_columns": "globcons.structure.context",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
