"""Layer 7, structures: scores painted into B-factors."""
