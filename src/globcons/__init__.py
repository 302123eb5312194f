"""globcons: sequence conservation of globin-family alignments, tied to the globin helix frame.

The Python API mirrors the command line::

    from globcons import read_alignment, score_columns
    table = score_columns(read_alignment("family.fasta"), weights="henikoff", max_gaps=0.5)
"""

from __future__ import annotations

from importlib import import_module as _import_module
from typing import TYPE_CHECKING

from globcons._version import __version__
from globcons.errors import GlobconsError, InputError, InputWarning, OptionError, OutputError

if TYPE_CHECKING:  # the names below load lazily; these imports are for readers and type checkers only
    from globcons.analysis.columns import ScoreOptions, score_columns, summarise
    from globcons.core.alignment import Alignment
    from globcons.core.classes import CLASSES, ClassRules
    from globcons.core.weights import compute_weights
    from globcons.io.readers import read_alignment, read_sequences

# The public names that need numpy/pandas/Biopython load on first use, so that importing a light
# submodule (the command line's group and its --help) does not pay for the whole library.
_LAZY = {
    "Alignment": "globcons.core.alignment",
    "CLASSES": "globcons.core.classes",
    "ClassRules": "globcons.core.classes",
    "ScoreOptions": "globcons.analysis.columns",
    "score_columns": "globcons.analysis.columns",
    "summarise": "globcons.analysis.columns",
    "read_alignment": "globcons.io.readers",
    "read_sequences": "globcons.io.readers",
    "compute_weights": "globcons.core.weights",
}

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


def __getattr__(name: str) -> object:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'globcons' has no attribute {name!r}")
    value = getattr(_import_module(module), name)
    globals()[name] = value  # later look-ups skip this function
    return value


def __dir__() -> list[str]:
    return sorted(__all__)
