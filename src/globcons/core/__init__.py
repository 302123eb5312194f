"""Layer 1, the core: residue codes, the Alignment value, counts, weights, scores and column classes."""
