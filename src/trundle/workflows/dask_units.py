"""Running work units on Dask (or in this process): the one engine of the fleet and permit jobs.

By default the units run on a ``distributed.LocalCluster`` on this machine (one worker process
per core, one thread each, on 127.0.0.1), started and stopped here; ``scheduler`` set to an
address runs them on an existing Dask cluster instead; ``scheduler="none"`` runs them in this
process (the reference the Dask run must equal). A worker that dies is replaced and its units
run again elsewhere (Dask reschedules them); every unit must be a pure function of its
inputs, so a unit that runs twice gives the same result.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Sequence
from typing import Any


def execute(function: Callable[..., Any], arguments: Sequence[tuple[Any, ...]],
            keys: Sequence[str], on_result: Callable[[int, Any], None],
            scheduler: str | None = None, n_workers: int | None = None,
            progress: bool = True, on_started: Callable[[Any], None] | None = None) -> str:
    """``function(*arguments[i])`` for every unit; ``on_result(i, value)`` on the driver as
    each completes (any order). Returns a description of the engine used.

    ``keys`` name the Dask tasks (unique per unit); ``on_started`` gets the Dask client once
    the work is submitted (for monitoring), or None when running in this process.
    """
    if scheduler == "none":
        if on_started is not None:
            on_started(None)
        with _bar(progress, len(arguments)) as advance:
            for i, args in enumerate(arguments):
                on_result(i, function(*args))
                advance()
        return "this process"
    from distributed import Client, LocalCluster, as_completed

    cluster = None
    if scheduler is None:
        n_workers = n_workers or os.cpu_count() or 1
        cluster = LocalCluster(n_workers=n_workers, threads_per_worker=1, processes=True,
                               host="127.0.0.1", dashboard_address=None, silence_logs=50)
        engine = f"LocalCluster ({n_workers} worker processes on this machine)"
        address: Any = cluster
    else:
        engine = f"Dask scheduler {scheduler}"
        address = scheduler
    try:
        with Client(address, set_as_default=False) as client:
            futures = {}
            for i, (args, key) in enumerate(zip(arguments, keys, strict=True)):
                futures[client.submit(function, *args, key=key, pure=False)] = i
            if on_started is not None:
                on_started(client)
            with _bar(progress, len(arguments)) as advance:
                for future in as_completed(futures, loop=client.loop):
                    on_result(futures[future], future.result())
                    future.release()
                    advance()
    finally:
        if cluster is not None:
            cluster.close()
    return engine


class _bar:
    """A rich progress bar over completed work units (nothing when ``show`` is off)."""

    def __init__(self, show: bool, total: int):
        self.show, self.total = show, total

    def __enter__(self) -> Callable[[], None]:
        if not self.show:
            return lambda: None
        from rich.console import Console
        from rich.progress import BarColumn, MofNCompleteColumn, Progress, TimeElapsedColumn

        self.progress = Progress("work units", BarColumn(), MofNCompleteColumn(),
                                 TimeElapsedColumn(), console=Console(stderr=True),
                                 transient=True)
        self.progress.__enter__()
        task = self.progress.add_task("units", total=self.total)
        return lambda: self.progress.advance(task)

    def __exit__(self, *exc: Any) -> None:
        if self.show:
            self.progress.__exit__(*exc)
