"""Where a batch's files are audited: an interface and two implementations.

An executor runs one picklable, module-level ``task`` on each item and yields ``(index, value)`` as
items finish, in any order. When the task could not return for an item (its worker process died,
or the cluster lost it), the value is a :class:`TaskFailed` naming what happened, and the other
items go on. The batch turns a :class:`TaskFailed` into that file's internal error.

* :class:`LocalProcesses`: worker processes on this machine. Each worker takes its items over a
  pipe and works through them in order, so the executor always knows which item a dead worker
  died on; it reports that item and starts a new worker for the rest. (CoolProp state objects
  cannot be pickled or shared: every worker builds its own; only plain inputs and results
  travel.)
* :class:`DaskCluster`: a Dask cluster (the optional ``distributed`` extra), by scheduler address
  or with a given client. The files and the output folder must be reachable at the same paths from
  every worker (a shared folder).
"""

from __future__ import annotations

import ctypes
import multiprocessing
import os
import signal
import time
import traceback
from collections import deque
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from multiprocessing.connection import Connection, wait
from typing import Any, Protocol


@dataclass(frozen=True)
class TaskFailed:
    """The task did not return a value for an item; ``message`` says why."""

    message: str


class Executor(Protocol):
    """Runs ``task`` on every item; yields ``(index, value or TaskFailed)`` as items finish."""

    def map_unordered(
        self, task: Callable[[Any], Any], items: Sequence[Any]
    ) -> Iterator[tuple[int, Any]]: ...  # pragma: no cover


def default_workers() -> int:
    """The number of cores this process may run on."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not on Linux
        return max(1, os.cpu_count() or 1)


def _worker_main(connection: Connection, task: Callable[[Any], Any], parent: int) -> None:
    """A worker: receive (index, item), send back (index, ("ok", value) or ("error", text))."""
    _follow_parent(parent)
    while True:
        try:
            message = connection.recv()
        except EOFError:
            return
        if message is None:
            return
        index, item = message
        try:
            reply: tuple[str, Any] = ("ok", task(item))
        except BaseException as exc:  # noqa: BLE001 - any failure is reported for this item only
            reply = ("error", _describe(exc))
        try:
            connection.send((index, reply))
        except Exception as exc:  # the value could not be pickled: say so instead
            connection.send((index, ("error", f"the result could not be sent back: {exc!r}")))


def _follow_parent(parent: int) -> None:
    """Make this worker end with its parent: the parent alone decides on an interrupt (SIGINT
    ignored here), SIGTERM ends the worker at once, and on Linux the kernel kills the worker when
    the parent dies, even by SIGKILL (PR_SET_PDEATHSIG), so no worker goes on writing."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(_PR_SET_PDEATHSIG, signal.SIGKILL, 0, 0, 0)
    except (OSError, AttributeError):  # pragma: no cover - not Linux
        pass
    if os.getppid() != parent:  # the parent died before the line above
        os._exit(1)


_PR_SET_PDEATHSIG = 1


def _describe(exc: BaseException) -> str:
    lines = traceback.format_exception(type(exc), exc, exc.__traceback__, limit=-3)
    return "".join(lines).strip()


class LocalProcesses:
    """Worker processes on this machine (``workers`` of them, at most one per item).

    ``timeout``: seconds one item may take (None: no limit); a worker still on an item after that
    is killed, the item is reported as failed (:class:`TaskFailed`) and a new worker goes on with
    the rest.

    Each worker holds up to :attr:`ahead` items: the one it is auditing and the next, so it never
    waits for this process to hand it work. A worker works through its items in order, so when it
    dies, the first item it held is the one it died on: that item is reported as failed and the
    others go back to the queue for a new worker.
    """

    ahead = 2

    def __init__(self, workers: int | None = None, timeout: float | None = None) -> None:
        self.workers = max(1, workers if workers is not None else default_workers())
        self.timeout = timeout

    def map_unordered(
        self, task: Callable[[Any], Any], items: Sequence[Any]
    ) -> Iterator[tuple[int, Any]]:
        context = multiprocessing.get_context()
        todo = deque(enumerate(items))
        # connection -> (process, indices handed to it and not yet answered, in order)
        busy: dict[Connection, tuple[Any, deque[int]]] = {}
        held: dict[int, Any] = {}
        began: dict[Connection, float] = {}  # when the worker began its first pending item

        def start() -> None:
            parent_end, child_end = context.Pipe(duplex=True)
            process = context.Process(
                target=_worker_main, args=(child_end, task, os.getpid()), daemon=True
            )
            process.start()
            child_end.close()
            busy[parent_end] = (process, deque())
            began[parent_end] = time.monotonic()
            hand_out(parent_end)

        def hand_out(connection: Connection) -> None:
            process, pending = busy[connection]
            while todo and len(pending) < self.ahead:
                index, item = todo.popleft()
                try:
                    connection.send((index, item))
                except OSError:  # the worker is gone; its end of the pipe reports it
                    todo.appendleft((index, item))
                    return
                pending.append(index)
                held[index] = item
            if not pending:
                connection.send(None)
                connection.close()
                process.join()
                del busy[connection]
                began.pop(connection, None)

        def retire(connection: Connection) -> int | None:
            """Forget a dead worker; requeue what it held after its first item (returned)."""
            process, pending = busy.pop(connection)
            began.pop(connection, None)
            connection.close()
            process.join()
            failed = pending.popleft() if pending else None
            for index in reversed(pending):
                todo.appendleft((index, held.pop(index)))
            if failed is not None:
                held.pop(failed, None)
            return failed

        try:
            for _ in range(min(self.workers, len(todo))):
                start()
            while busy:
                late = self._overdue(busy, began)
                if late is not None:
                    busy[late][0].kill()
                    busy[late][0].join()
                    failed = retire(late)
                    if failed is not None:
                        yield (
                            failed,
                            TaskFailed(
                                f"the file took longer than the time limit of {self.timeout:g} s "
                                "(--timeout); its worker was stopped"
                            ),
                        )
                    if todo:
                        start()
                    continue
                sentinels = {process.sentinel: connection for connection, (process, _) in busy.items()}
                for obj in wait([*busy, *sentinels], timeout=self._wait(began)):
                    connection = obj if isinstance(obj, Connection) else sentinels[obj]
                    if connection not in busy:
                        continue  # already handled through its other handle
                    process = busy[connection][0]
                    try:
                        got, (kind, value) = connection.recv()
                    except (EOFError, OSError):
                        failed = retire(connection)
                        if failed is not None:
                            yield (
                                failed,
                                TaskFailed(
                                    f"the worker process ended unexpectedly (exit code "
                                    f"{process.exitcode}) while auditing this file"
                                ),
                            )
                        if todo:
                            start()
                        continue
                    busy[connection][1].remove(got)
                    began[connection] = time.monotonic()
                    held.pop(got, None)
                    yield got, (value if kind == "ok" else TaskFailed(value))
                    hand_out(connection)
        finally:
            for process, _ in list(busy.values()):
                process.terminate()
            for connection, (process, _) in list(busy.items()):
                process.join(5)
                if process.is_alive():  # pragma: no cover - a worker that ignores SIGTERM
                    process.kill()
                    process.join()
                connection.close()

    def _overdue(
        self, busy: dict[Connection, tuple[Any, deque[int]]], began: dict[Connection, float]
    ) -> Connection | None:
        """A worker whose current item has run past the time limit, if any."""
        if self.timeout is None:
            return None
        now = time.monotonic()
        for connection, (_, pending) in busy.items():
            if pending and now - began.get(connection, now) > self.timeout:
                return connection
        return None

    def _wait(self, began: dict[Connection, float]) -> float | None:
        """How long to wait for a worker before looking at the time limits again."""
        if self.timeout is None or not began:
            return None
        return max(0.05, min(began.values()) + self.timeout - time.monotonic() + 0.01)


class DaskCluster:
    """A Dask cluster: ``address`` of its scheduler (``tcp://host:8786``), or a ready ``client``."""

    def __init__(self, address: str | None = None, client: Any = None) -> None:
        if (address is None) == (client is None):
            raise ValueError("give the scheduler address or a client, not both")
        self.address = address
        self.client = client

    def map_unordered(
        self, task: Callable[[Any], Any], items: Sequence[Any]
    ) -> Iterator[tuple[int, Any]]:
        try:
            from dask.distributed import Client, as_completed
        except ImportError:
            from audit.errors import InputError

            raise InputError(
                "running a batch on a Dask cluster needs the 'distributed' extra: "
                "pip install 'plant-audit[distributed]'"
            ) from None
        client = self.client or Client(self.address)
        try:
            futures = client.map(task, list(items), pure=False)
            index_of = {future.key: i for i, future in enumerate(futures)}
            for future in as_completed(futures):
                index = index_of[future.key]
                try:
                    yield index, future.result()
                except Exception as exc:  # a lost worker or task: that item's internal error
                    yield index, TaskFailed(f"the cluster could not audit this file: {exc!r}")
                finally:
                    future.release()
        finally:
            if self.client is None:
                client.close()
