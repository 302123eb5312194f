"""Safe writing: atomic, never over an input, never two outputs on one file.

Regular files are written to a temporary file beside the target, fsynced and renamed into place, so a
failed or interrupted run never leaves a half-written file. Inside :func:`atomic_batch` the renames wait
until the whole batch is written (a table and its ``.meta.json`` land together or not at all). A folder
of outputs (the report) is written into a temporary sibling folder and swapped in as a whole
(:func:`atomic_folder`). Standard output, pipes and special files such as /dev/null are written directly
and never replaced.
"""

from __future__ import annotations

import contextlib
import os
import shutil
import stat
import sys
import tempfile
from collections.abc import Iterable, Iterator, Mapping
from pathlib import Path
from typing import IO

from globcons.errors import OutputError

__all__ = ["atomic_output", "atomic_batch", "atomic_folder", "check_folder_output", "check_not_input",
           "check_outputs", "is_special", "make_folder", "FOLDER_MARKER"]

#: The file that makes a folder a report folder :func:`atomic_folder` may replace as a whole.
FOLDER_MARKER = "report.html"

#: Renames waiting for the end of the innermost :func:`atomic_batch` (temporary, target) pairs.
_BATCHES: list[list[tuple[str, Path]]] = []


def _same_file(a: str | os.PathLike, b: str | os.PathLike) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.abspath(a) == os.path.abspath(b)


def is_special(path: str | os.PathLike | None) -> bool:
    """True for standard output (None, ``"-"``) and existing non-regular files (/dev/null, a FIFO)."""
    if path is None or str(path) == "-":
        return True
    target = Path(path)
    return target.exists() and not target.is_file() and not target.is_dir()


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


def check_outputs(outputs: Mapping[str, str | os.PathLike | None], inputs: Iterable = ()) -> None:
    """Refuse outputs that name an input, or that name the same file as another output of the run.

    Parameters
    ----------
    outputs
        What each output is called in messages (an option, e.g. ``"--residues"``) -> its path (None:
        not asked for). Standard output and special files (/dev/null) may be named more than once.
    inputs
        The run's inputs.

    Raises
    ------
    OutputError
        Naming both outputs, e.g. ``-o and --residues both name same.tsv; give each output its own file``.
    """
    inputs = list(inputs)
    seen: list[tuple[str, str]] = []
    for what, path in outputs.items():
        if path is None or is_special(path):
            continue
        check_not_input(path, inputs)
        for other, earlier in seen:
            if os.path.abspath(earlier) == os.path.abspath(path) or (
                    os.path.exists(path) and os.path.exists(earlier) and _same_file(path, earlier)):
                raise OutputError(f"{other} and {what} both name {path}; give each output its own file",
                                  source=str(path))
        seen.append((what, str(path)))


def _write_error(exc: OSError, target: object, left: str = "nothing was left behind") -> OutputError:
    return OutputError(f"cannot be written ({exc.strerror or exc}); {left}", source=str(target))


@contextlib.contextmanager
def _direct(path: str | os.PathLike | None, binary: bool) -> Iterator[IO]:
    """Standard output or a special file, written through (never replaced)."""
    try:
        if path is None or str(path) == "-":
            stream = sys.stdout.buffer if binary and sys.stdout is not None else sys.stdout
            if stream is None:
                raise OutputError("standard output is closed; give -o FILE")
            yield stream
            stream.flush()
            return
        with open(path, "wb" if binary else "w", encoding=None if binary else "utf-8") as stream:
            yield stream
    except BrokenPipeError:
        raise
    except OSError as exc:
        raise _write_error(exc, "<stdout>" if path is None or str(path) == "-" else path,
                           "the output is incomplete") from None


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
    A stream; for a regular file, the content reaches ``path`` only when the block ends without error
    (inside :func:`atomic_batch`, when the batch ends).
    """
    if is_special(path):
        with _direct(path, binary) as stream:
            yield stream
        return
    target = Path(path)  # type: ignore[arg-type]
    check_not_input(target, inputs)
    if target.is_dir():
        raise OutputError("is a folder; give a file name", source=str(target))
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        what = "is not a folder" if folder.exists() else "does not exist"
        raise OutputError(f"folder {folder} {what}", source=str(target))
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
        if _BATCHES:
            _BATCHES[-1].append((temporary, target))
        else:
            os.replace(temporary, target)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
        if isinstance(exc, OSError) and not isinstance(exc, (BrokenPipeError, FileNotFoundError)):
            raise _write_error(exc, target) from exc
        raise


@contextlib.contextmanager
def atomic_batch() -> Iterator[None]:
    """Hold back the renames of every :func:`atomic_output` inside the block until it ends without error.

    On an error (a full disk on the second file, Ctrl-C) every temporary file of the batch is removed
    and no target is touched: the files are replaced together or not at all.
    """
    pending: list[tuple[str, Path]] = []
    _BATCHES.append(pending)
    try:
        yield
    except BaseException:
        for temporary, _ in pending:
            with contextlib.suppress(OSError):
                os.unlink(temporary)
        raise
    finally:
        _BATCHES.remove(pending)
    for temporary, target in pending:
        if _BATCHES:  # nested: the outer batch commits
            _BATCHES[-1].append((temporary, target))
        else:
            os.replace(temporary, target)


def check_folder_output(path: str | os.PathLike, inputs: Iterable = ()) -> None:
    """Refuse a folder :func:`atomic_folder` must not replace (before any work starts).

    Raises
    ------
    OutputError
        ``path`` is a file, the current folder, a folder of other files (no :data:`FOLDER_MARKER`), or
        holds one of ``inputs``.
    """
    target = Path(path)
    absolute = Path(os.path.abspath(target))
    if target.exists() and not target.is_dir():
        raise OutputError("exists and is not a folder", source=str(target))
    for source in inputs:
        if source is None or str(source) == "-" or hasattr(source, "read"):
            continue
        if Path(os.path.abspath(source)).is_relative_to(absolute):
            raise OutputError(f"the input {source} lies inside the output folder, which is replaced as a whole; "
                              "choose another folder or move the input out", source=str(target))
    if Path.cwd().is_relative_to(absolute):
        raise OutputError("is the current folder (or holds it); give a new folder or an earlier report's",
                          source=str(target))
    if target.is_dir() and any(target.iterdir()) and not (target / FOLDER_MARKER).is_file():
        raise OutputError(f"holds other files and no {FOLDER_MARKER}: only an empty folder or an earlier report "
                          "is replaced; choose a new folder", source=str(target))


def make_folder(folder: str | os.PathLike, named: str | os.PathLike | None = None) -> None:
    """Create ``folder`` and its missing parents, with one-line errors naming ``named`` (default: the folder).

    Raises
    ------
    OutputError
        A file stands in the path, or the system refuses (read-only, permission denied).
    """
    folder = Path(os.path.abspath(folder))
    shown = str(named if named is not None else folder)
    existing = next((p for p in (folder, *folder.parents) if p.exists()), None)
    if existing is not None and not existing.is_dir():
        raise OutputError(f"{existing} is a file, not a folder", source=shown)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"cannot create the folder {folder} ({exc.strerror or exc})", source=shown) from None


def _folder_error(exc: OSError, target: Path, left: str) -> OutputError:
    return OutputError(f"cannot be written ({exc.strerror or exc}); {left}", source=str(target))


@contextlib.contextmanager
def atomic_folder(path: str | os.PathLike, inputs: Iterable = ()) -> Iterator[Path]:
    """A folder of outputs replaced as a whole: yields a temporary sibling folder to write into.

    When the block ends without error, the temporary folder takes the place of ``path`` (an earlier
    folder there is removed, so no stale file of an old run survives); on any error it is removed and
    ``path`` is left as it was. An existing ``path`` must be empty or hold :data:`FOLDER_MARKER` (a
    folder of other files is never replaced), and no input may lie inside it.

    Raises
    ------
    OutputError
        ``path`` is a file, a folder of other files, holds an input, or cannot be created.
    """
    target = Path(path)
    absolute = Path(os.path.abspath(target))
    check_folder_output(target, inputs)
    parent = absolute.parent
    make_folder(parent, target)
    try:
        temporary = Path(tempfile.mkdtemp(dir=parent, prefix=f".{absolute.name}.", suffix=".part"))
    except OSError as exc:
        raise _folder_error(exc, target, "nothing was written") from None
    kept = f"{target} was left as it was" if target.exists() else "nothing was left behind"
    try:
        yield temporary
        os.chmod(temporary, _mode_for(absolute, folder=True))
        _swap_in(temporary, absolute)
    except BaseException as exc:
        shutil.rmtree(temporary, ignore_errors=True)
        if isinstance(exc, OSError) and not isinstance(exc, BrokenPipeError):
            raise _folder_error(exc, target, kept) from exc
        if isinstance(exc, OutputError) and exc.source is not None and str(exc.source).startswith(str(temporary)):
            inner = Path(exc.source).relative_to(temporary)
            reason = exc.message.split("; nothing was left behind")[0]
            raise OutputError(f"{inner} {reason}; {kept}", source=str(target)) from exc
        raise


def _swap_in(temporary: Path, target: Path) -> None:
    """Put the folder ``temporary`` in the place of ``target``, removing an earlier ``target``."""
    if not target.exists():
        os.replace(temporary, target)
        return
    old = Path(tempfile.mkdtemp(dir=target.parent, prefix=f".{target.name}.", suffix=".old"))
    os.replace(target, old / "previous")
    try:
        os.replace(temporary, target)
    except OSError:
        os.replace(old / "previous", target)  # put the earlier folder back
        raise
    finally:
        shutil.rmtree(old, ignore_errors=True)


def _mode_for(target: Path, folder: bool = False) -> int:
    if target.exists():
        return stat.S_IMODE(target.stat().st_mode)
    umask = os.umask(0)
    os.umask(umask)
    return (0o777 if folder else 0o666) & ~umask
