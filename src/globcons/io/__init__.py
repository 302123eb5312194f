"""Layer 2, input and output: reading alignments and sequences, writing alignments and tables.

Every input goes through one opener (:class:`~globcons.io.opening.InputSource`: paths, ``-`` for standard
input, binary streams, gzip); every output through one atomic writer (:func:`~globcons.io.atomic.atomic_output`).
"""

from globcons.io.alignments import parse_alignment, read_alignment
from globcons.io.atomic import atomic_output, check_not_input
from globcons.io.records import SequenceRecord, read_sequences, stream_records
from globcons.io.sniff import FORMATS, sniff_format
from globcons.io.tables import TABLE_FORMATS, format_table, write_table
from globcons.io.writers import ALIGNMENT_OUTPUTS, format_alignment

__all__ = ["FORMATS", "ALIGNMENT_OUTPUTS", "TABLE_FORMATS", "SequenceRecord", "parse_alignment", "read_alignment",
           "read_sequences", "stream_records", "sniff_format", "format_alignment", "format_table", "write_table",
           "atomic_output", "check_not_input"]
