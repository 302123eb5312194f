"""Public names of a package that load on first use.

Every subpackage's ``__init__`` lists its public names with the module each lives in; the module is
imported only when a name is first asked for. So importing one light module (the command line's group,
a table of constants) never pays for numpy, pandas, Biopython or matplotlib, and a package's public face
stays one short table.
"""

from __future__ import annotations

import sys
from collections.abc import Callable, Mapping
from importlib import import_module

__all__ = ["lazy_exports"]


def lazy_exports(package: str, exports: Mapping[str, str]) -> tuple[Callable[[str], object], Callable[[], list[str]]]:
    """The module-level ``__getattr__`` and ``__dir__`` of ``package`` for its ``exports`` (name -> module).

    Examples
    --------
    In a package's ``__init__.py``::

        _EXPORTS = {"read_alignment": "globcons.io.alignments"}
        __all__ = list(_EXPORTS)
        __getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
    """

    def __getattr__(name: str) -> object:
        module = exports.get(name)
        if module is None:
            raise AttributeError(f"module {package!r} has no attribute {name!r}")
        value = getattr(import_module(module), name)
        setattr(sys.modules[package], name, value)  # later look-ups skip this function
        return value

    def __dir__() -> list[str]:
        return sorted(set(exports) | set(vars(sys.modules[package])))

    return __getattr__, __dir__
