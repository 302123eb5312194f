"""Layer 1, the core: residue codes, the Alignment value, counts, weights, scores and column classes.

Everything here is pure computation on numpy arrays: no file is read or written, nothing is printed.
"""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "Alignment": "globcons.core.alignment",
    "CLASSES": "globcons.core.classes",
    "ClassRules": "globcons.core.classes",
    "ColumnStatistics": "globcons.core.classes",
    "column_statistics": "globcons.core.classes",
    "column_counts": "globcons.core.counts",
    "SCHEMES": "globcons.core.weights",
    "Weights": "globcons.core.weights",
    "compute_weights": "globcons.core.weights",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
