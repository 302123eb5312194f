"""What the commands say on stderr: the :class:`Reporter` and the :func:`common` decorator.

Light to import (click only), like every module the command group loads before a command runs.
"""

from __future__ import annotations

import contextlib
import functools
import re
import sys
import warnings
from collections.abc import Callable, Iterator
from typing import TYPE_CHECKING, Any

import click

if TYPE_CHECKING:
    import pandas as pd
    from rich.progress import Progress

__all__ = ["PROG", "OutputClosed", "Reporter", "common", "count_progress", "printable", "shows_progress",
           "step_progress", "warn_low_data"]

PROG = "globcons"

#: C0 and C1 control characters (ESC, BEL, CR, ...), DEL, and the Unicode bidirectional overrides.
_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")


class OutputClosed(Exception):  # noqa: N818 - a state, not a failure
    """The reader of standard output went away (``| head``): the run ends quietly (exit status 141)."""


def printable(text: str) -> str:
    r"""``text`` safe for a terminal: control characters (escape sequences from ids or file names) written
    as ``\x1b``-style escapes, so they are shown, never obeyed.

    Examples
    --------
    >>> printable("id\x1b[2Jx")
    'id\\x1b[2Jx'
    """
    return _CONTROL.sub(lambda m: m.group().encode("unicode_escape").decode("ascii"), text)


class Reporter:
    """Messages to stderr, honouring --quiet; each distinct warning is shown once.

    Parameters
    ----------
    quiet
        Drop the informational messages (:meth:`info`); warnings are always shown.
    """

    def __init__(self, quiet: bool = False) -> None:
        self.quiet = quiet
        self._seen: set[str] = set()

    def info(self, text: str) -> None:
        """Write ``globcons: TEXT`` to stderr unless quiet."""
        if not self.quiet:
            click.echo(f"{PROG}: {printable(text)}", err=True)

    def warn(self, text: str) -> None:
        """Write ``globcons: warning: TEXT`` to stderr, the first time this text is given."""
        if text not in self._seen:
            self._seen.add(text)
            click.echo(f"{PROG}: warning: {printable(text)}", err=True)


def common(command: Callable[..., Any]) -> Callable[..., Any]:
    """Add --quiet and --debug to a command and hand it a :class:`Reporter` as ``reporter``.

    Warnings the library raises while the command runs are shown as one line each (once per text). A
    closed standard output becomes :class:`OutputClosed` (click would turn it into exit status 1).
    ``--debug`` itself is read by :func:`globcons.cli.main`, which decides whether to show tracebacks.
    """

    @click.option("--quiet", "-q", is_flag=True, help="No summary or progress on stderr (warnings still shown).")
    @click.option("--debug", is_flag=True, help="Show the full traceback of an error.")
    @functools.wraps(command)
    def wrapper(*args: Any, quiet: bool, debug: bool, **kwargs: Any) -> Any:
        reporter = Reporter(quiet)
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            try:
                return command(*args, reporter=reporter, **kwargs)
            except BrokenPipeError:
                raise OutputClosed() from None
            finally:
                for item in caught:
                    reporter.warn(str(item.message))

    return wrapper


def warn_low_data(table: pd.DataFrame, reporter: Reporter) -> None:
    """Warn when columns of a column table rest on few effective sequences (``low_data`` flag).

    Parameters
    ----------
    table
        A column table (:func:`globcons.analysis.columns.score_columns`) with its ``attrs``.
    reporter
        Where the warning goes.
    """
    meta = table.attrs
    min_neff = meta["rules"]["min_neff"]
    if meta.get("thin_family"):
        reporter.warn(f"the family holds only {meta['effective_sequences']:.1f} effective sequences (fewer than "
                      f"{min_neff:g}; {meta.get('effective_sequences_method', 'clusters')}): it is thin, and every "
                      "class rests on little evidence")
        return
    low = meta["low_data_columns"]
    if low:
        reporter.warn(f"{low} of {meta['columns']} columns have fewer than {min_neff:g} effective sequences "
                      "(flagged low_data): their classes rest on little evidence")


def shows_progress(reporter: Reporter) -> bool:
    """Whether a progress display is due: standard error is a terminal and the command is not --quiet."""
    return not reporter.quiet and sys.stderr.isatty()


def _progress_display(unit: str, known_total: bool) -> Progress:
    """A rich progress display on stderr that clears itself when done (rich loads only here)."""
    from rich.console import Console
    from rich.progress import (
        BarColumn,
        MofNCompleteColumn,
        Progress,
        SpinnerColumn,
        TextColumn,
        TimeElapsedColumn,
        TimeRemainingColumn,
    )

    columns: list = [SpinnerColumn(), TextColumn("{task.description}")]
    if known_total:  # done/total ("?" until the total is known), elapsed and an estimate of the time left
        columns += [BarColumn(), MofNCompleteColumn(), TextColumn(unit), TimeElapsedColumn(), TextColumn("left"),
                    TimeRemainingColumn()]
    else:
        columns += [TextColumn(f"{{task.completed}} {unit}"), TimeElapsedColumn()]
    return Progress(*columns, console=Console(stderr=True), transient=True)


@contextlib.contextmanager
def count_progress(reporter: Reporter, what: str, unit: str, total: int | None) -> Iterator[Callable[[int], None]]:
    """A progress display of items done (of ``total`` when known), on a terminal only.

    Yields
    ------
    callable
        ``advance(n)``: n more items done (does nothing off a terminal or with --quiet).
    """
    if not shows_progress(reporter):
        yield lambda n: None
        return
    with _progress_display(unit, total is not None) as progress:
        task = progress.add_task(what, total=total)
        yield lambda n: progress.update(task, advance=n)


@contextlib.contextmanager
def step_progress(reporter: Reporter, what: str) -> Iterator[Callable[[str, int, int], None] | None]:
    """A progress display of a job's steps, on a terminal only.

    Yields
    ------
    callable or None
        ``progress(step, done, total)`` for the library to call after each step (e.g.
        :func:`globcons.report.html.write_report`); None off a terminal or with --quiet.
    """
    if not shows_progress(reporter):
        yield None
        return
    with _progress_display("steps", True) as progress:
        task = progress.add_task(what, total=None)

        def update(step: str, done: int, total: int) -> None:
            progress.update(task, description=f"{what}: {step}", completed=done, total=total)
            progress.refresh()  # draw every step: a fast one would otherwise fall between two refreshes

        yield update
