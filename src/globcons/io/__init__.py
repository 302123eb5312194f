"""Layer 2, input and output: reading alignments and sequences, writing alignments and tables.

Every input goes through one opener (:class:`~globcons.io.opening.InputSource`: paths, ``-`` for standard
input, binary streams, gzip); every output through one atomic writer (:func:`~globcons.io.atomic.atomic_output`).
"""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "FORMATS": "globcons.io.formats",
    "ALIGNMENT_OUTPUTS": "globcons.io.formats",
    "TABLE_FORMATS": "globcons.io.formats",
    "SequenceRecord": "globcons.io.records",
    "parse_alignment": "globcons.io.alignments",
    "read_alignment": "globcons.io.alignments",
    "read_sequences": "globcons.io.records",
    "stream_records": "globcons.io.records",
    "sniff_format": "globcons.io.sniff",
    "format_alignment": "globcons.io.writers",
    "format_table": "globcons.io.tables",
    "write_table": "globcons.io.tables",
    "atomic_output": "globcons.io.atomic",
    "check_not_input": "globcons.io.atomic",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
