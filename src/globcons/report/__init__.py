"""Layer 8, the offline report (self-contained HTML, tables, figures) and its methods text."""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "ReportResult": "globcons.report.html",
    "write_report": "globcons.report.html",
    "methods_text": "globcons.report.methods",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
