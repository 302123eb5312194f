"""Layer 8, the offline report (self-contained HTML, tables, figures) and its methods text."""

from globcons.report.html import ReportResult, write_report
from globcons.report.methods import methods_text

__all__ = ["ReportResult", "write_report", "methods_text"]
