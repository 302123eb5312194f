"""The package's exceptions.

Every error a user can cause is a :class:`GlobconsError`; the command line turns it into one line on
stderr and exit status 2. Anything else that escapes is a bug (exit status 1).
"""

from __future__ import annotations

__all__ = ["GlobconsError", "InputError", "OptionError", "OutputError", "RunError", "InputWarning"]


class GlobconsError(Exception):
    """Base class of the errors a user can cause.

    Parameters
    ----------
    message
        What is wrong and, where it helps, what would be valid.
    source
        The file (or ``"<stdin>"``) the problem was found in, if any.
    line
        1-based line number in ``source``, if known.
    """

    def __init__(self, message: str, source: str | None = None, line: int | None = None) -> None:
        super().__init__(message)
        self.message = message
        self.source = source
        self.line = line

    def __str__(self) -> str:
        where = ""
        if self.source is not None:
            where = f"{self.source}:{self.line}: " if self.line is not None else f"{self.source}: "
        return f"{where}{self.message}"


class InputError(GlobconsError):
    """An input file (or stream) cannot be read as what it should be."""


class OptionError(GlobconsError):
    """An option value is out of range or inconsistent with the input."""


class OutputError(GlobconsError):
    """An output cannot be written where it was asked for."""


class RunError(GlobconsError):
    """The run could not finish for a reason outside the inputs (a worker process was killed)."""


class InputWarning(UserWarning):
    """Input was accepted, but something in it deserves the user's attention."""
