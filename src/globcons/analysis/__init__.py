"""Layer 5, analyses: the column table, streaming, the family to judge against, scan, contrast."""
