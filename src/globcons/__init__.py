"""globcons: sequence conservation of globin-family alignments, tied to the globin helix frame.

The Python API mirrors the command line::

    from globcons import read_alignment, score_columns
    table = score_columns(read_alignment("family.fasta"), weights="henikoff", max_gaps=0.5)

The subpackages follow the data flow, each importing only from those before it: ``core`` (codes,
alignment, weights, scores, classes), ``io`` (reading and writing), ``frame`` (reference chains, labels,
sites), ``align`` (placement on the frame), ``analysis`` (column table, family, scan, contrast),
``mutations``, ``plots``, ``structure``, ``report``, and the command line ``cli``.
"""

from globcons._lazy import lazy_exports
from globcons._version import __version__
from globcons.errors import GlobconsError, InputError, InputWarning, OptionError, OutputError

# Names that need numpy, pandas or Biopython load on first use, so that importing a light module (the
# command line's group and its --help) does not pay for the whole library.
_EXPORTS = {
    "Alignment": "globcons.core.alignment",
    "CLASSES": "globcons.core.classes",
    "ClassRules": "globcons.core.classes",
    "ScoreOptions": "globcons.analysis.options",
    "score_columns": "globcons.analysis.columns",
    "summarise": "globcons.analysis.columns",
    "read_alignment": "globcons.io.alignments",
    "read_sequences": "globcons.io.records",
    "compute_weights": "globcons.core.weights",
}
__all__ = ["__version__", *_EXPORTS, "GlobconsError", "InputError", "InputWarning", "OptionError", "OutputError"]
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
