"""Layer 2, input and output: reading alignments and sequences, writing alignments and tables."""
