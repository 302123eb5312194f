"""The ``globcons`` command: parses arguments, calls the library, writes outputs. No science here.

Exit status: 0 success, 2 bad input or usage (one line on stderr naming the file, line and problem),
1 an internal failure, 130 interrupted (Ctrl-C), 128 + the signal's number when stopped by SIGTERM (143) or
SIGHUP (129), after removing the temporary files and stopping the worker processes; 141 the reader of the
output went away (quietly). ``--debug`` shows tracebacks. Text that came from the input (ids, file
names) reaches the terminal with its control characters escaped (:func:`~globcons.cli.reporting.printable`).

The commands live one module (or small family) each in this package and load only when run; see
:mod:`globcons.cli.group`.
"""

from __future__ import annotations

import contextlib
import os
import signal
import sys
import threading
import traceback
from collections.abc import Iterator

import click

from globcons.cli.group import cli
from globcons.cli.reporting import PROG, OutputClosed, printable
from globcons.errors import GlobconsError

__all__ = ["Stopped", "entry", "main"]

#: Signals that stop a run cleanly (schedulers, ``timeout`` and closed terminals send them).
STOP_SIGNALS = tuple(getattr(signal, name) for name in ("SIGTERM", "SIGHUP") if hasattr(signal, name))


class Stopped(BaseException):  # noqa: N818 - a stop, like KeyboardInterrupt, not an error
    """Raised in the main thread by SIGTERM or SIGHUP, so that every ``finally`` and cleanup runs."""

    def __init__(self, signum: int) -> None:
        super().__init__(signum)
        self.signum = signum


def _stop(signum: int, _frame: object) -> None:
    raise Stopped(signum)


@contextlib.contextmanager
def _stop_signals() -> Iterator[None]:
    """SIGTERM and SIGHUP raise :class:`Stopped` while a command runs (main thread only); restored after."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    previous = {number: signal.signal(number, _stop) for number in STOP_SIGNALS}
    try:
        yield
    finally:
        for number, handler in previous.items():
            signal.signal(number, handler)


def _quiet_stdout() -> None:
    """Point stdout at /dev/null, so that the interpreter's final flush into a closed pipe stays quiet."""
    with contextlib.suppress(OSError, AttributeError, ValueError):
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())


def main(argv: list[str] | None = None) -> int:
    """Run the ``globcons`` command and return its exit status (it never calls ``sys.exit``).

    Parameters
    ----------
    argv
        The arguments after the program name (default: ``sys.argv[1:]``).

    Returns
    -------
    int
        0 success; 2 bad input or usage, told in one line ``globcons: error: ...``; 1 an internal
        error; 130 interrupted; 141 broken pipe. With ``--debug`` anywhere in ``argv``, errors also
        show their traceback.
    """
    args = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in args
    try:
        with _stop_signals():
            cli.main(args=args, prog_name=PROG, standalone_mode=False)
        return 0
    except GlobconsError as exc:
        if debug:
            traceback.print_exc()
        _say(f"{PROG}: error: {printable(str(exc))}")
        return 2
    except click.exceptions.Exit as exc:
        return exc.exit_code
    except click.ClickException as exc:
        exc.message = printable(exc.message)
        exc.show()
        return exc.exit_code
    except (click.exceptions.Abort, KeyboardInterrupt):
        _say(f"{PROG}: interrupted; no partial output was left")
        return 130
    except Stopped as exc:
        _say(f"{PROG}: stopped by {signal.Signals(exc.signum).name}; no partial output was left")
        return 128 + exc.signum
    except (BrokenPipeError, OutputClosed):
        # The reader of our output went away (e.g. `| head`): stop quietly.
        _quiet_stdout()
        return 141
    except MemoryError:
        _say(f"{PROG}: error: not enough memory for this input on this machine")
        return 2
    except Exception as exc:  # a bug: say so plainly
        if debug:
            traceback.print_exc()
        _say(f"{PROG}: internal error: {type(exc).__name__}: {printable(str(exc))} (please report it; --debug "
             "shows the traceback)")
        return 1


def _say(text: str) -> None:
    """One line to stderr (nothing if stderr itself is gone)."""
    with contextlib.suppress(OSError, AttributeError, ValueError):
        click.echo(text, err=True)


def entry() -> None:  # pragma: no cover - console script shim
    """The ``globcons`` console script: :func:`main`, its status as the process's exit status."""
    sys.exit(main())
