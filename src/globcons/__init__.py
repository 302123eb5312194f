"""globcons: sequence conservation of globin-family alignments, tied to the globin helix frame.

The Python API mirrors the command line::

    from globcons import read_alignment, score_columns
    table = score_columns(read_alignment("family.fasta"), weights="henikoff", max_gaps=0.5)

The subpackages follow the data flow, each importing only from those before it: ``core`` (codes,
alignment, weights, scores, classes), ``io`` (reading and writing), ``frame`` (reference chains, labels,
sites), ``align`` (placement on the frame), ``analysis`` (column table, family, scan, contrast),
``mutations``, ``plots``, ``structure``, ``report``, and the command line ``cli``.
"""

from globcons._version import __version__
from globcons.analysis.columns import score_columns, summarise
from globcons.analysis.options import ScoreOptions
from globcons.core.alignment import Alignment
from globcons.core.classes import CLASSES, ClassRules
from globcons.core.weights import compute_weights
from globcons.errors import GlobconsError, InputError, InputWarning, OptionError, OutputError
from globcons.io.alignments import read_alignment
from globcons.io.records import read_sequences

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
