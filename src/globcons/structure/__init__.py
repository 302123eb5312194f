"""Layer 7, structures: reading PDB/mmCIF chains and painting column scores into their B-factors."""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "SCORES": "globcons.structure.paint",
    "SENTINEL": "globcons.structure.paint",
    "paint_structure": "globcons.structure.paint",
    "read_structure": "globcons.structure.read",
    "chain_residues": "globcons.structure.read",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
