"""Dask distributed for long jobs: a local cluster on 127.0.0.1, or the user's own scheduler.

`connect()` yields a Client: with an address, on that scheduler (its workers must have bitmend and a C
compiler); without one, on a LocalCluster of worker processes (one per core unless told), listening on
127.0.0.1 only, started with SIGINT ignored so that Ctrl-C reaches this process alone and the workers are
shut down by us.  `unordered()` keeps a window of tasks in flight and yields results as they finish; when
interrupted it cancels what is still queued.
"""
from __future__ import annotations

import logging
import os
import signal
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager

CONNECT_TIMEOUT = "10s"


class Unreachable(ConnectionError):
    """No scheduler answered at the given address."""


@contextmanager
def _sigint_ignored():
    old = signal.signal(signal.SIGINT, signal.SIG_IGN)
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, old)


@contextmanager
def connect(scheduler: str | None = None, workers: int | None = None):
    """A distributed Client; closes it (and the local cluster it started) on the way out."""
    from distributed import Client
    if scheduler:
        try:
            client = Client(scheduler, timeout=CONNECT_TIMEOUT)
        except (OSError, TimeoutError, ValueError) as err:
            raise Unreachable(f"no scheduler at {scheduler} ({err})") from None
        try:
            try:
                client.wait_for_workers(1, timeout=CONNECT_TIMEOUT)
            except TimeoutError:
                raise Unreachable(f"the scheduler at {scheduler} has no workers") from None
            yield client
        finally:
            client.close()
        return
    with _sigint_ignored():
        cluster = local(workers or os.cpu_count() or 1)
        client = Client(cluster)
    try:
        yield client
    finally:
        client.close()
        cluster.close()


def local(workers: int):
    """A LocalCluster of `workers` single-threaded worker processes; every port on 127.0.0.1, no dashboard
    (the scheduler's HTTP endpoint takes a free port)."""
    from distributed import LocalCluster
    return LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                        dashboard_address=None, scheduler_kwargs={"dashboard_address": "127.0.0.1:0"},
                        silence_logs=logging.ERROR)


def worker_count(client) -> int:
    return len(client.scheduler_info()["workers"])


def unordered(client, fn: Callable, calls: Iterable[tuple], window: int) -> Iterator[tuple[tuple, object]]:
    """(args, result) of fn(*args) for every call, in the order they finish, at most `window` in flight."""
    from distributed import as_completed
    calls = iter(calls)
    pending: dict = {}

    def submit():
        """Submit the next call; its future, or None when there is none left."""
        args = next(calls, None)
        if args is None:
            return None
        future = client.submit(fn, *args, pure=False)
        pending[future] = args
        return future

    while len(pending) < window and submit() is not None:
        pass
    done = as_completed(list(pending))
    try:
        for future in done:
            args = pending.pop(future)
            result = future.result()
            more = submit()
            if more is not None:
                done.add(more)
            yield args, result
    finally:
        if pending:
            client.cancel(list(pending))
