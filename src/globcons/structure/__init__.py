"""Layer 7, structures: reading PDB/mmCIF chains and painting column scores into their B-factors."""

from globcons.structure.paint import SCORES, SENTINEL, paint_structure
from globcons.structure.read import chain_residues, read_structure

__all__ = ["SCORES", "SENTINEL", "paint_structure", "read_structure", "chain_residues"]
