"""Independent jobs in forked worker processes where that is safe, else in this one.

Designing several filters, rendering the plan's pages and drawing its images
are each a list of independent jobs; :func:`fork_map` runs them on the
machine's cores. It forks (cheap: the workers share the parent's imports and
data) and only where forking is safe: Linux (macOS has ``fork`` but its system
libraries do not promise to survive it, which is why Python there defaults to
``spawn``), a process running no other thread (a fork copies only the calling
thread), and not inside a daemonic worker of someone else's pool (which may
have no children).
Everywhere else it runs the jobs itself, one after another, so it always
returns the results, and they never depend on whether processes were used.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Sequence
from typing import Any


def cores() -> int:
    """The cores this process may run on."""
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def _start_worker(parent_pid: int, initializer: Callable[[], None] | None) -> None:
    """First thing in every worker: die with the parent, then the caller's initializer.

    A worker blocks reading its job queue; if the parent were killed (SIGKILL,
    the out-of-memory killer, a timeout) the workers would wait forever, since
    each holds the others' ends of the queue's pipe. Linux's
    ``PR_SET_PDEATHSIG`` sends the worker SIGKILL when its parent exits.
    """
    import ctypes
    import signal

    try:
        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(1, int(signal.SIGKILL), 0, 0, 0)  # 1 = PR_SET_PDEATHSIG
    except (OSError, AttributeError):
        pass
    if os.getppid() != parent_pid:  # the parent died before prctl took effect
        os._exit(1)
    # Ctrl-C reaches the whole process group: the parent handles it (and ends the workers).
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    if initializer is not None:
        initializer()


def fork_map(
    fn: Callable[[Any], Any],
    items: Sequence[Any],
    *,
    processes: int | None = None,
    initializer: Callable[[], None] | None = None,
    on_result: Callable[[int, Any, int], None] | None = None,
) -> list[Any]:
    """``[fn(item) for item in items]``, in forked worker processes where they can be used.

    Parameters
    ----------
    fn : callable
        A module-level function (it is sent to the workers by name); its
        argument and result are pickled.
    items : sequence
        Handed out in this order, one at a time, so put the longest jobs first.
    processes : int, optional
        At most this many workers, and never more than :func:`cores` (the
        cores this process may run on, the default). With fewer than two, or
        fewer than two items, the jobs run here.
    initializer : callable, optional
        Run once in each worker before its first job (after the worker has
        arranged to be killed if this process dies); never in this process.
    on_result : callable(index, result, done), optional
        Called here as each job finishes, in finishing order (``done`` counts
        from 1).

    Returns
    -------
    list
        The results in the order of ``items``. Where processes cannot be used
        (not Linux, other threads running, a daemonic process, no processes
        allowed) the jobs run in this process; a worker killed mid-way leaves
        its unfinished jobs to this process too.
    """
    out: list[Any] = [None] * len(items)
    finished: set[int] = set()

    def keep(k: int, result: Any) -> None:
        out[k] = result
        finished.add(k)
        if on_result is not None:
            on_result(k, result, len(finished))

    _in_workers(fn, items, processes, initializer, keep)
    for k, item in enumerate(items):
        if k not in finished:
            keep(k, fn(item))
    return out


def _in_workers(fn: Callable[[Any], Any], items: Sequence[Any], processes: int | None,
                initializer: Callable[[], None] | None, keep: Callable[[int, Any], None]) -> None:
    """Run what jobs it can in forked workers, handing each result to ``keep``; returns
    quietly (leaving the rest to the caller) where processes cannot be used."""
    import multiprocessing
    import sys
    import threading
    from concurrent.futures import ProcessPoolExecutor, as_completed
    from concurrent.futures.process import BrokenProcessPool

    n = min(cores(), cores() if processes is None else int(processes), len(items))
    if n < 2:
        return
    if (not sys.platform.startswith("linux") or "fork" not in multiprocessing.get_all_start_methods()
            or threading.active_count() > 1 or multiprocessing.current_process().daemon):
        return
    try:
        pool = ProcessPoolExecutor(max_workers=n, mp_context=multiprocessing.get_context("fork"),
                                   initializer=_start_worker, initargs=(os.getpid(), initializer))
        try:
            # With fork, every worker is started at the first submit, before the
            # pool's own thread: nothing here runs in a thread while forking.
            futures = {pool.submit(fn, item): k for k, item in enumerate(items)}
            for fut in as_completed(futures):
                keep(futures[fut], fut.result())
        except BaseException:
            # An error or Ctrl-C here: end the workers now rather than wait for every job.
            for proc in list((getattr(pool, "_processes", None) or {}).values()):
                try:
                    proc.kill()
                except (OSError, AttributeError):
                    pass
            pool.shutdown(wait=False, cancel_futures=True)
            raise
        pool.shutdown(wait=True)
    except (OSError, ImportError, BrokenProcessPool):
        # OSError: no processes or pipes allowed; ImportError: no working sem_open
        # (no /dev/shm in some containers); BrokenProcessPool: a worker was killed.
        return
