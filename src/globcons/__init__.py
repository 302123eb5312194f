"""globcons: sequence conservation of globin-family alignments, tied to the globin helix frame.

The Python API mirrors the command line::

    from globcons import read_alignment, score_columns
    table = score_columns(read_alignment("family.fasta"), weights="henikoff", max_gaps=0.5)
"""

from ._version import __version__
from .alignment import Alignment
from .classes import CLASSES, ClassRules
from .columns import ScoreOptions, score_columns, summarise
from .errors import GlobconsError, InputError, InputWarning, OptionError, OutputError
from .io import read_alignment, read_sequences
from .weights import compute_weights

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
