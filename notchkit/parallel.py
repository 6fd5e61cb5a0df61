"""Independent jobs in forked worker processes, with an in-process fallback.

Designing several filters, rendering the plan's pages and drawing its images
are each a list of independent jobs; :func:`fork_map` runs them on the
machine's cores. It forks (cheap: the workers share the parent's imports and
data) and only where forking is safe: Linux (macOS has ``fork`` but its system
libraries do not promise to survive it, which is why Python there defaults to
``spawn``), a process running no other thread (a fork copies only the calling
thread), and not inside a daemonic worker of someone else's pool (which may
have no children).
Everywhere else it returns ``None`` and the caller runs the jobs itself, so the
results never depend on whether processes were used.
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
    meanwhile: Callable[[], None] | None = None,
    on_result: Callable[[int, Any, int], None] | None = None,
) -> list[Any] | None:
    """``[fn(item) for item in items]`` in forked worker processes, or ``None``.

    Parameters
    ----------
    fn : callable
        A module-level function (it is sent to the workers by name); its
        argument and result are pickled.
    items : sequence
        Handed out in this order, one at a time, so put the longest jobs first.
    processes : int, optional
        At most this many workers (default: :func:`cores`); fewer than two,
        or fewer than two items, returns ``None``.
    initializer : callable, optional
        Run once in each worker before its first job (after the worker has
        arranged to be killed if this process dies).
    meanwhile : callable, optional
        Run here once the workers are forked and working (so it may import
        modules or start threads without harm to them).
    on_result : callable(index, result, done), optional
        Called here as each job finishes, in finishing order.

    Returns
    -------
    list or None
        The results in the order of ``items``; ``None`` when processes cannot
        be used here (not Linux, other threads running, a daemonic process, no
        processes allowed, a worker killed). ``meanwhile`` may have run before such a failure, so
        a caller that falls back should make it safe to call twice.
    """
    import multiprocessing
    import sys
    import threading
    from concurrent.futures import ProcessPoolExecutor, as_completed
    from concurrent.futures.process import BrokenProcessPool

    n = min(cores() if processes is None else int(processes), len(items))
    if n < 2:
        return None
    if (not sys.platform.startswith("linux") or "fork" not in multiprocessing.get_all_start_methods()
            or threading.active_count() > 1 or multiprocessing.current_process().daemon):
        return None
    out: list[Any] = [None] * len(items)
    try:
        pool = ProcessPoolExecutor(max_workers=n, mp_context=multiprocessing.get_context("fork"),
                                   initializer=_start_worker, initargs=(os.getpid(), initializer))
        try:
            # With fork, every worker is started at the first submit, before the
            # pool's own thread: nothing here runs in a thread while forking.
            futures = {pool.submit(fn, item): k for k, item in enumerate(items)}
            if meanwhile is not None:
                meanwhile()
            for done, fut in enumerate(as_completed(futures), start=1):
                k = futures[fut]
                out[k] = fut.result()
                if on_result is not None:
                    on_result(k, out[k], done)
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
        return None
    return out
