"""Layer 5, analyses: the column table (in memory or streamed), the family to judge against, scan, contrast."""

from globcons.analysis.columns import COLUMN_ORDER, score_columns, summarise
from globcons.analysis.contrast import assign_groups, contrast_columns
from globcons.analysis.family import Family, family_from_alignment, frame_family
from globcons.analysis.options import ScoreOptions
from globcons.analysis.scan import iter_scan, scan
from globcons.analysis.streaming import stream_columns

__all__ = ["COLUMN_ORDER", "ScoreOptions", "score_columns", "stream_columns", "summarise", "Family", "frame_family",
           "family_from_alignment", "scan", "iter_scan", "assign_groups", "contrast_columns"]
