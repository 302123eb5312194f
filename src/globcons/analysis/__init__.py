"""Layer 5, analyses: the column table (in memory or streamed), the family to judge against, scan, contrast."""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "COLUMN_ORDER": "globcons.analysis.columns",
    "ScoreOptions": "globcons.analysis.options",
    "score_columns": "globcons.analysis.columns",
    "stream_columns": "globcons.analysis.streaming",
    "summarise": "globcons.analysis.columns",
    "Family": "globcons.analysis.family",
    "frame_family": "globcons.analysis.family",
    "family_from_alignment": "globcons.analysis.family",
    "scan": "globcons.analysis.scanning",
    "iter_scan": "globcons.analysis.scanning",
    "iter_scan_batches": "globcons.analysis.scanning",
    "ScanBatch": "globcons.analysis.scanning",
    "assign_groups": "globcons.analysis.contrast",
    "contrast_columns": "globcons.analysis.contrast",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
