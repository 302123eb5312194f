"""Layer 1, the core: residue codes, the Alignment value, counts, weights, scores and column classes.

Everything here is pure computation on numpy arrays: no file is read or written, nothing is printed.
"""

from globcons.core.alignment import Alignment
from globcons.core.classes import CLASSES, ClassRules, ColumnStatistics, column_statistics
from globcons.core.counts import column_counts
from globcons.core.weights import SCHEMES, Weights, compute_weights

__all__ = ["Alignment", "CLASSES", "ClassRules", "ColumnStatistics", "column_statistics", "column_counts",
           "SCHEMES", "Weights", "compute_weights"]
