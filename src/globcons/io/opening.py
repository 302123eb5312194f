"""The one way inputs are opened: a path, ``"-"`` for standard input, or an open binary stream.

:class:`InputSource` turns any of them into bytes (:meth:`~InputSource.read_bytes`), a fresh binary
stream from the start (:meth:`~InputSource.open`, as often as needed when ``rereadable``), or text
(:func:`read_text`, for small tables). Gzip is recognised by its magic bytes, a UTF-8 byte-order mark is
dropped, and the operating system's refusals become one-line :class:`~globcons.errors.InputError`\\ s that
name the input.
"""

from __future__ import annotations

import contextlib
import gzip
import io
import os
import shutil
import sys
import tempfile
import zlib
from collections.abc import Iterator
from pathlib import Path
from typing import BinaryIO

from globcons.errors import InputError

__all__ = ["PathLike", "GZIP_MAGIC", "BOM", "InputSource", "os_errors", "read_input_bytes", "read_checked",
           "read_text", "is_blank"]

PathLike = str | os.PathLike

GZIP_MAGIC = b"\x1f\x8b"
BOM = b"\xef\xbb\xbf"
#: Bytes copied per read when standard input is spooled to a temporary file.
_SPOOL_BYTES = 1 << 22


@contextlib.contextmanager
def os_errors(name: str) -> Iterator[None]:
    """Turn the operating system's refusals to open or read ``name`` into one-line input errors."""
    try:
        yield
    except FileNotFoundError:
        raise InputError("no such file", source=name) from None
    except IsADirectoryError:
        raise InputError("is a folder, not a file", source=name) from None
    except PermissionError:
        raise InputError("cannot be read (permission denied)", source=name) from None
    except OSError as exc:
        raise InputError(f"cannot be read ({exc.strerror or exc})", source=name) from None


def _gzip_error(name: str, exc: BaseException) -> InputError:
    detail = "truncated" if isinstance(exc, EOFError) else "corrupt"
    return InputError(f"gzip data is {detail}; the file may be an incomplete download", source=name)


def read_checked(stream: BinaryIO, size: int, name: str) -> bytes:
    """``stream.read(size)``, with a truncated or corrupt gzip stream reported as an input error."""
    try:
        return stream.read(size)
    except (EOFError, zlib.error, gzip.BadGzipFile, OSError) as exc:
        raise _gzip_error(name, exc) from None


def is_blank(data: bytes) -> bool:
    """True if ``data`` holds only whitespace (without the whole-file copy ``data.strip()`` makes)."""
    return not data or data.isspace()


class InputSource:
    """An input to read: a path, ``"-"`` (standard input) or an open binary stream.

    Parameters
    ----------
    source
        The input.
    rereadable
        Standard input and streams are spooled to a temporary file on first use, so that :meth:`open`
        can start again from the beginning (a file read in two passes). Paths are always rereadable.

    Attributes
    ----------
    name
        What messages call it: the path, ``"<stdin>"`` or the stream's name.
    path
        The path, or None for standard input and streams.
    """

    def __init__(self, source: PathLike | BinaryIO, rereadable: bool = False) -> None:
        self._stream: BinaryIO | None = None
        self._spool: BinaryIO | None = None
        self.rereadable = rereadable
        if hasattr(source, "read"):
            self._stream = source  # type: ignore[assignment]
            self.name, self.path = str(getattr(source, "name", "<stream>")), None
        elif str(source) == "-":
            self._stream = sys.stdin.buffer
            self.name, self.path = "<stdin>", None
        else:
            self.name, self.path = str(source), Path(source)

    def check_readable(self) -> None:
        """Raise the input error a path deserves before any work starts (missing, a folder, unreadable)."""
        if self.path is None:
            return
        if not self.path.exists():
            raise InputError("no such file", source=self.name)
        if self.path.is_dir():
            raise InputError("is a folder, not a file", source=self.name)
        if not os.access(self.path, os.R_OK):
            raise InputError("cannot be read (permission denied)", source=self.name)

    def _raw(self) -> tuple[BinaryIO, bool]:
        """The raw stream from the start and whether the caller closes it."""
        if self.path is not None:
            with os_errors(self.name):
                return open(self.path, "rb"), True
        assert self._stream is not None
        if not self.rereadable:
            return self._stream, False
        if self._spool is None:
            self._spool = tempfile.TemporaryFile(prefix="globcons-stream-")
            shutil.copyfileobj(self._stream, self._spool, _SPOOL_BYTES)
        self._spool.seek(0)
        return self._spool, False

    @contextlib.contextmanager
    def open(self) -> Iterator[BinaryIO]:
        """A binary stream of the content from its start, un-gzipped (the BOM is left to the caller)."""
        raw, owned = self._raw()
        buffered = raw if hasattr(raw, "peek") else io.BufferedReader(raw)  # type: ignore[arg-type]
        try:
            magic = buffered.peek(2)[:2]  # type: ignore[union-attr]
        except OSError as exc:
            raise InputError(f"cannot be read ({exc.strerror or exc})", source=self.name) from None
        stream: BinaryIO = gzip.GzipFile(fileobj=buffered) if magic == GZIP_MAGIC else buffered  # type: ignore
        try:
            yield stream
        except (EOFError, zlib.error, gzip.BadGzipFile) as exc:
            raise _gzip_error(self.name, exc) from None
        finally:
            if stream is not buffered:
                stream.close()
            if owned:
                raw.close()

    def read_bytes(self) -> bytes | bytearray:
        """The whole content, un-gzipped and without a UTF-8 byte-order mark.

        A plain file comes back in a ``bytearray`` of its own, so a reader may encode it in place.
        """
        if self.path is not None:
            with os_errors(self.name):
                raw: bytes | bytearray = _read_owned(self.path)
        elif self._spool is not None or self.rereadable:
            with self.open() as stream:
                raw = read_checked(stream, -1, self.name)
        else:
            assert self._stream is not None
            raw = self._stream.read()
            if isinstance(raw, str):
                raw = raw.encode("utf-8")
        if raw[:2] == GZIP_MAGIC:
            try:
                raw = gzip.decompress(raw)
            except (EOFError, OSError, zlib.error) as exc:
                raise _gzip_error(self.name, exc) from None
        if raw.startswith(BOM):
            if isinstance(raw, bytearray):
                del raw[:len(BOM)]  # in place: no second copy of a large file
            else:
                raw = raw[len(BOM):]
        return raw

    def close(self) -> None:
        """Drop the spool file, if any."""
        if self._spool is not None:
            self._spool.close()
            self._spool = None


def _read_owned(path: Path) -> bytearray:
    """A file's bytes in a buffer of its own, so that a reader may encode it in place."""
    with open(path, "rb") as stream:
        size = os.fstat(stream.fileno()).st_size
        buffer = bytearray(size)
        filled = stream.readinto(buffer)
        rest = stream.read()  # a file that grew while being read (or a size the system does not report)
    if filled < size:
        del buffer[filled:]
    if rest:
        buffer += rest
    return buffer


def read_input_bytes(source: PathLike | BinaryIO) -> tuple[bytes | bytearray, str]:
    """Read a whole input into memory, un-gzipped and without a UTF-8 byte-order mark.

    Returns
    -------
    data, name
        The bytes (a ``bytearray`` owned by the caller when read from a plain file) and the name to use in
        messages.

    Raises
    ------
    InputError
        Missing file, a folder, unreadable file, truncated or corrupt gzip.
    """
    source = InputSource(source)
    return source.read_bytes(), source.name


def read_text(source: PathLike, what: str) -> str:
    """A small text input (a site, group or mutation table) as text: UTF-8, gzip allowed, BOM dropped.

    Parameters
    ----------
    source
        A path, or ``"-"`` for standard input.
    what
        What the file should hold, for the message when it cannot be read (e.g. ``"site table"``).

    Raises
    ------
    InputError
        The file cannot be opened or is not UTF-8 text (the message names the file and ``what``).
    """
    opened = InputSource(source)
    try:
        data = opened.read_bytes()
    except InputError as exc:
        raise InputError(f"cannot read the {what}: {exc.message}", source=exc.source, line=exc.line) from None
    try:
        return bytes(data).decode("utf-8")
    except UnicodeDecodeError as exc:
        line = bytes(data[:exc.start]).count(b"\n") + 1
        raise InputError(f"cannot read the {what}: not UTF-8 text (byte 0x{data[exc.start]:02x})",
                         source=opened.name, line=line) from None
