"""globcons: sequence conservation of globin-family alignments, tied to the globin helix frame.

The Python API mirrors the command line::

    from globcons import read_alignment, score_columns
    table = score_columns(read_alignment("family.fasta"), weights="henikoff", max_gaps=0.5)
"""

from globcons._version import __version__
from globcons.core.alignment import Alignment
from globcons.core.classes import CLASSES, ClassRules
from globcons.analysis.columns import ScoreOptions, score_columns, summarise
from globcons.errors import GlobconsError, InputError, InputWarning, OptionError, OutputError
from globcons.io.readers import read_alignment, read_sequences
from globcons.core.weights import compute_weights

__all__ = [
    "__version__",
    "Alignment",
    "CLASSES",
    "ClassRules",
    "ScoreOptions",
    "score_columns",
    "summarise",
    "read_alignment",
    "read_sequences",
    "compute_weights",
    "GlobconsError",
    "InputError",
    "InputWarning",
    "OptionError",
    "OutputError",
]
