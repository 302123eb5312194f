"""Counting the records of a FASTA file cheaply, for a progress display's total.

One pass over the bytes in 8 MiB blocks (gzip too), counting the header starts: a ``>`` at the start of
the file (after a UTF-8 byte-order mark) or right after a line end (``\\n`` or a lone ``\\r``). No record
is parsed; a header written after blanks on its line is not counted, so the total is a close figure, not
a check of the file (the reader judges the file).
"""

from __future__ import annotations

import stat
from pathlib import Path

from globcons.io.opening import BOM, InputSource, PathLike, read_checked

__all__ = ["BLOCK_BYTES", "count_records"]

#: Bytes read at a time.
BLOCK_BYTES = 8 << 20


def count_records(source: PathLike) -> int | None:
    """The number of FASTA header lines of a regular file (gzip-compressed or not).

    Parameters
    ----------
    source
        A path; ``"-"``, pipes and other special files give None (their content can be read only once).

    Returns
    -------
    int or None
        Lines starting with ``>``; None when the input is not a regular file or cannot be read.

    Examples
    --------
    >>> import tempfile, os
    >>> with tempfile.NamedTemporaryFile("wb", suffix=".fa", delete=False) as f:
    ...     _ = f.write(b">a\\nMKV\\r\\n>b x>y\\rAC\\r>c\\n")
    >>> count_records(f.name), count_records("-")
    (3, None)
    >>> os.unlink(f.name)
    """
    if str(source) == "-":
        return None
    path = Path(source)
    try:
        if not stat.S_ISREG(path.stat().st_mode):
            return None
    except OSError:
        return None
    opened = InputSource(path)
    count, previous, first = 0, b"", True
    try:
        with opened.open() as stream:
            while True:
                block = read_checked(stream, BLOCK_BYTES, opened.name)
                if not block:
                    break
                if first:
                    start = block[len(BOM):] if block.startswith(BOM) else block
                    count += start.startswith(b">")
                    first = False
                joined = previous + block  # a line end and its '>' may fall either side of a block boundary
                count += joined.count(b"\n>") + joined.count(b"\r>")
                previous = block[-1:]
    except Exception:  # a count for a progress display never stops the job; the reader reports the problem
        return None
    return count
