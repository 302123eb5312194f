"""The ``globcons`` command: parses arguments, calls the library, writes outputs. No science here.

Exit status: 0 success, 2 bad input or usage (one line on stderr naming the file, line and problem),
1 an internal failure, 130 interrupted, 141 the reader of the output went away. ``--debug`` shows
tracebacks.

The commands live one module (or small family) each in this package and load only when run; see
:mod:`globcons.cli.group`.
"""

from __future__ import annotations

import os
import sys
import traceback

import click

from globcons.cli.group import cli
from globcons.cli.reporting import PROG
from globcons.errors import GlobconsError

__all__ = ["entry", "main"]


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
        cli.main(args=args, prog_name=PROG, standalone_mode=False)
        return 0
    except GlobconsError as exc:
        if debug:
            traceback.print_exc()
        click.echo(f"{PROG}: error: {exc}", err=True)
        return 2
    except click.exceptions.Exit as exc:
        return exc.exit_code
    except click.ClickException as exc:
        exc.show()
        return exc.exit_code
    except (click.exceptions.Abort, KeyboardInterrupt):
        click.echo(f"{PROG}: interrupted", err=True)
        return 130
    except BrokenPipeError:
        # The reader of our output went away (e.g. `| head`): stop quietly, and point stdout at devnull so
        # that the interpreter's final flush does not fail again.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 141
    except MemoryError:
        click.echo(f"{PROG}: error: not enough memory for this input on this machine", err=True)
        return 2
    except Exception as exc:  # a bug: say so plainly
        if debug:
            traceback.print_exc()
        click.echo(f"{PROG}: internal error: {type(exc).__name__}: {exc} (please report it; --debug shows the "
                   "traceback)", err=True)
        return 1


def entry() -> None:  # pragma: no cover - console script shim
    """The ``globcons`` console script: :func:`main`, its status as the process's exit status."""
    sys.exit(main())
