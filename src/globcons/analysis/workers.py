"""Worker processes that hand back results in input order, and that can always be stopped.

:func:`ordered_map` runs a function over batches in ``jobs`` processes, batch ``i`` on worker ``i % jobs``,
one batch in flight per worker, and yields the results in input order. Unlike a general process pool it
owns its processes outright: on any exception in the caller (Ctrl-C, SIGTERM turned into an exception,
the consumer stopping) every worker is terminated at once, and a worker that dies (killed, out of memory)
is noticed through its sentinel and reported as :class:`~globcons.errors.RunError` instead of a hang.
"""

from __future__ import annotations

import multiprocessing
import signal
import traceback
from collections.abc import Callable, Iterable, Iterator
from multiprocessing.connection import Connection, wait
from typing import Any

from globcons.errors import RunError

__all__ = ["ordered_map"]

#: Seconds a worker gets to end after terminate() before it is killed.
_GRACE = 5.0


def _serve(function: Callable[..., Any], state: tuple, tasks: Connection, results: Connection) -> None:
    """A worker's loop: receive a batch, send back ("ok", result) or ("error", text); None ends it."""
    for name in ("SIGTERM", "SIGHUP"):  # a stop signal ends a worker at once; the parent cleans up
        if hasattr(signal, name):
            signal.signal(getattr(signal, name), signal.SIG_DFL)
    while True:
        try:
            batch = tasks.recv()
        except (EOFError, OSError):
            return
        if batch is None:
            return
        try:
            results.send(("ok", function(batch, *state)))
        except Exception as exc:  # the parent re-raises it with the worker's traceback
            results.send(("error", f"{type(exc).__name__}: {exc}\n{traceback.format_exc()}"))


class _Worker:
    def __init__(self, context: Any, function: Callable[..., Any], state: tuple) -> None:
        task_read, self.tasks = context.Pipe(duplex=False)
        self.results, result_write = context.Pipe(duplex=False)
        self.process = context.Process(target=_serve, args=(function, state, task_read, result_write), daemon=True)
        self.process.start()
        task_read.close()
        result_write.close()

    def receive(self) -> Any:
        """The result of the batch in flight; RunError if the worker died first."""
        ready = wait([self.results, self.process.sentinel])
        if self.results in ready:
            try:
                status, value = self.results.recv()
            except (EOFError, OSError):
                status, value = "died", None
        else:
            status, value = "died", None
        if status == "ok":
            return value
        if status == "error":
            raise RuntimeError(f"in a worker process: {value}")
        raise RunError("a worker process ended unexpectedly (killed, or out of memory?); no output was left; "
                       "rerun, or use --jobs 1")

    def stop(self) -> None:
        if self.process.is_alive():
            self.process.terminate()

    def reap(self) -> None:
        self.process.join(_GRACE)
        if self.process.is_alive():
            self.process.kill()
            self.process.join(_GRACE)
        self.tasks.close()
        self.results.close()


def ordered_map(function: Callable[..., Any], batches: Iterable[Any], jobs: int, state: tuple = ()) -> Iterator[Any]:
    """Yield ``function(batch, *state)`` for every batch, in input order, computed in ``jobs`` processes.

    Parameters
    ----------
    function
        A module-level function (it must be picklable where processes are spawned).
    batches
        The work, consumed lazily: at most ``jobs`` batches are held at once.
    jobs
        Worker processes (at least 1).
    state
        Further arguments of every call, handed to each worker once.

    Raises
    ------
    RunError
        A worker died (killed, out of memory).
    RuntimeError
        ``function`` raised in a worker (its traceback is in the message).
    """
    context = multiprocessing.get_context()
    workers = [_Worker(context, function, state) for _ in range(jobs)]
    try:
        source = iter(batches)
        in_flight = 0
        for worker in workers:  # one batch each to start
            batch = next(source, None)
            if batch is None:
                break
            worker.tasks.send(batch)
            in_flight += 1
        turn = 0
        while in_flight:
            worker = workers[turn % jobs]
            result = worker.receive()
            in_flight -= 1
            batch = next(source, None)
            if batch is not None:
                worker.tasks.send(batch)
                in_flight += 1
            turn += 1
            yield result
        for worker in workers:
            worker.tasks.send(None)
    finally:  # normal end, an error, Ctrl-C, SIGTERM or the consumer stopping: no worker outlives the run
        for worker in workers:
            worker.stop()
        for worker in workers:
            worker.reap()
