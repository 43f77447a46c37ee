"""Where a study's tasks run: one run at a time per output folder (a lock file), a local
pool or a Dask cluster, results gathered as they finish, Ctrl-C honoured."""

from __future__ import annotations

import contextlib
import json
import os
import sys
import time
from collections.abc import Callable
from pathlib import Path

from .task import failed_row, filter_recording


# How the local cluster's workers start. On Linux they are forked from this
# process: they start in 0.2 s instead of 2.8 s, find NumPy, SciPy, MNE and
# gainshape already imported, and keep this process's allocator (a spawned
# worker inherits Dask's MALLOC_TRIM_THRESHOLD_, which freezes glibc's mmap
# threshold: every array over 128 KiB is then a fresh mmap whose pages fault
# in, 1.1 s instead of 0.65 s per 10-minute, 32-channel recording). Elsewhere
# fork is unsafe, so they are spawned.
_LOCAL_WORKERS = {
    "distributed.worker.multiprocessing-method": "fork" if sys.platform == "linux" else "spawn",
    # Dask's sampling profiler walks the task's stack every 10 ms; without it a
    # recording took 0.89 s instead of 0.99 s on two busy workers (two A/B runs)
    "distributed.worker.profile.enabled": False,
    # the event loop's watchdog tick (20 ms) and the system and memory monitors (0.5 s,
    # 0.1 s) woke each worker 60 times a second: at 1 s each, 16 recordings on two
    # workers took 8.3-8.5 s instead of 8.8-9.3 s and 15.4-16.2 s of CPU instead of
    # 16.3-17.1 s (two A/B rounds); a worker's memory is still watched every second
    "distributed.admin.tick.interval": "1s",
    "distributed.admin.system-monitor.interval": "1s",
    "distributed.worker.memory.monitor-interval": "1s",
}


_LOCK_NAME = ".gainshape-run.lock"


@contextlib.contextmanager
def one_run_at_a_time(out_dir: Path):
    """Hold the output folder's lock file for the run: a second run on the
    same folder refuses (a lock left by a process that is gone is taken over)."""
    import socket

    lock = out_dir / _LOCK_NAME
    me: dict = {"pid": os.getpid(), "host": socket.gethostname(), "since": time.strftime("%Y-%m-%d %H:%M:%S")}
    for _ in range(2):
        try:
            with open(lock, "x", encoding="utf-8") as stream:
                stream.write(json.dumps(me))
            break
        except FileExistsError:
            holder = _lock_holder(lock)
            if holder is None or _alive(holder, me["host"]):
                raise FileExistsError(
                    f"Another gainshape run is writing to {out_dir} ({_holder_words(holder)}); "
                    "nothing was done. Run again when it has finished; if no run is going on, "
                    f"remove {lock}.") from None
            lock.unlink(missing_ok=True)  # its process is gone
    try:
        yield
    finally:
        lock.unlink(missing_ok=True)


def _lock_holder(lock: Path) -> dict | None:
    try:
        return json.loads(lock.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None


def _alive(holder: dict, host: str) -> bool:
    """Whether the lock's process may still run (on another host it is assumed so)."""
    if holder.get("host") != host:
        return True
    import psutil  # distributed's own dependency

    return psutil.pid_exists(int(holder.get("pid", -1)))


def _holder_words(holder: dict | None) -> str:
    if holder is None:
        return "its lock file cannot be read"
    return f"process {holder.get('pid')} on {holder.get('host')}, since {holder.get('since')}"


@contextlib.contextmanager
def connected(client, workers=None):
    """The client to use: the given one, one for an address, or a local cluster."""
    import distributed

    if isinstance(client, distributed.Client):
        yield client
        return
    if client is None:
        import dask

        if _LOCAL_WORKERS["distributed.worker.multiprocessing-method"] == "fork":
            _import_what_workers_use()
        with dask.config.set(_LOCAL_WORKERS), distributed.LocalCluster(
                n_workers=workers or os.cpu_count() or 1, threads_per_worker=1, processes=True,
                dashboard_address=":0") as cluster, distributed.Client(cluster) as own:
            yield own
        return
    with distributed.Client(client) as own:
        yield own


def _import_what_workers_use() -> None:
    """Import here what every worker would import on its first task (the
    plotting stack with its font list, MNE's FIF reader and writer), so that
    forked workers start with it: the report's figure took 4.8 s on a fresh
    worker and 3.1 s on one that had it, the first recording 1.7 s and 1.25 s
    (benchmarks/study.py's recordings)."""
    import importlib

    for name in ("matplotlib.pyplot", "mne.io.fiff.raw"):
        importlib.import_module(name)


def gathered(connection, sources, task_arguments, show: bool,
             when_a_worker_is_free: Callable[[], object] | None = None) -> list:
    """Each recording's (row, extras) from one task per recording, in
    input order, with a bar over recordings as they finish.

    A result is let go of as soon as it is gathered, so a worker that dies
    later does not make the cluster run finished recordings again; a task
    lost with its worker (after Dask's retries) becomes a failed row.
    ``when_a_worker_is_free`` is called once, when fewer recordings are left
    than there are workers (a core would idle), or at the end.
    """
    import distributed
    from tqdm.std import tqdm

    content, outputs, overwrite, limits = task_arguments
    count = len(sources)
    pending = {future.key: (i, future) for i, future in enumerate(connection.map(
        filter_recording, sources, [content] * count, outputs, [overwrite] * count,
        [limits] * count, pure=False))}
    rows: list = [None] * count
    cores = max(len(connection.scheduler_info().get("workers", {})), 1)
    calls = [when_a_worker_is_free] if when_a_worker_is_free else []

    def left(n: int) -> None:  # n recordings left: a core idles when they are fewer
        if calls and n < cores:
            calls.pop()()

    left(count)
    try:
        with tqdm(total=count, unit="recording", disable=not show) as bar:
            for future in distributed.as_completed([f for _, f in pending.values()]):
                i, _ = pending.pop(future.key)
                rows[i] = task_result(future, sources[i], outputs[i])
                bar.update(1)
                left(len(pending))
    except KeyboardInterrupt as err:  # what has not started does not start
        connection.cancel([f for _, f in pending.values()])
        raise Interrupted(sum(r is not None for r in rows), count) from err
    except BaseException:
        connection.cancel([f for _, f in pending.values()])
        raise
    left(0)
    return rows


class Interrupted(KeyboardInterrupt):
    """Ctrl-C during a study, with how many of its recordings were done."""

    def __init__(self, done: int, total: int):
        super().__init__(f"{done} of {total} recordings done")
        self.done, self.total = done, total


def task_result(future, source: Path, output: Path) -> tuple:
    """The task's (row, extras), or a failed row if its worker died."""
    try:
        return future.result()
    except Exception as err:  # e.g. KilledWorker: the process died running it
        written, error = failed_row(source, output, err)
        return [str(source), "failed", float("nan"), float("nan"), written, error, ""], {
            "band_change": None, "methods": None}
    finally:
        future.release()


