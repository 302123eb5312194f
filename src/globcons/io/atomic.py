"""Safe writing: atomic, never over an input.

Regular files are written to a temporary file beside the target, fsynced and renamed into place, so a
failed or interrupted run never leaves a half-written file. Standard output, pipes and special files such
as /dev/null are written directly and never replaced.
"""

from __future__ import annotations

import contextlib
import os
import stat
import sys
import tempfile
from collections.abc import Iterable, Iterator
from pathlib import Path
from typing import IO

from globcons.errors import OutputError

__all__ = ["atomic_output", "check_not_input"]


def _same_file(a: str | os.PathLike, b: str | os.PathLike) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.abspath(a) == os.path.abspath(b)


def check_not_input(path: str | os.PathLike, inputs: Iterable[str | os.PathLike | None]) -> None:
    """Refuse an output path that is one of the inputs.

    Raises
    ------
    OutputError
        ``path`` names the same file as an input.
    """
    if str(path) == "-":
        return
    for source in inputs:
        if source is None or str(source) == "-" or hasattr(source, "read"):
            continue
        if os.path.exists(source) and _same_file(path, source):
            raise OutputError(f"output would overwrite the input {source}; choose another output path",
                              source=str(path))


@contextlib.contextmanager
def atomic_output(path: str | os.PathLike | None, inputs: Iterable = (), binary: bool = False) -> Iterator[IO]:
    """Open an output for writing, safely.

    Parameters
    ----------
    path
        A file path, or None / ``"-"`` for standard output.
    inputs
        Paths of the run's inputs: an output naming one of them is refused.
    binary
        Yield a binary stream instead of text.

    Yields
    ------
    A stream; for a regular file, the content reaches ``path`` only when the block ends without error.
    """
    if path is None or str(path) == "-":
        stream = sys.stdout.buffer if binary else sys.stdout
        yield stream
        stream.flush()
        return
    target = Path(path)
    check_not_input(target, inputs)
    if target.exists() and target.is_dir():
        raise OutputError("is a folder; give a file name", source=str(target))
    if target.exists() and not target.is_file():  # /dev/null, a FIFO: write through, never replace
        with open(target, "wb" if binary else "w", encoding=None if binary else "utf-8") as stream:
            yield stream
        return
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise OutputError(f"folder {folder} does not exist", source=str(target))
    try:
        handle, temporary = tempfile.mkstemp(dir=folder, prefix=f".{target.name}.", suffix=".part")
    except OSError as exc:
        raise OutputError(f"cannot write in {folder} ({exc.strerror})", source=str(target)) from None
    try:
        mode, encoding, newline = ("wb", None, None) if binary else ("w", "utf-8", "")
        with os.fdopen(handle, mode, encoding=encoding, newline=newline) as stream:
            yield stream
            stream.flush()
            os.fsync(stream.fileno())
        os.chmod(temporary, _mode_for(target))
        os.replace(temporary, target)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
        if isinstance(exc, OSError) and not isinstance(exc, (BrokenPipeError, FileNotFoundError)):
            raise OutputError(f"cannot be written ({exc.strerror or exc}); nothing was left behind",
                              source=str(target)) from exc
        raise


def _mode_for(target: Path) -> int:
    if target.exists():
        return stat.S_IMODE(target.stat().st_mode)
    umask = os.umask(0)
    os.umask(umask)
    return 0o666 & ~umask

