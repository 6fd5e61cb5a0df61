"""Ctrl-C on the command line: exit 130 with one line, at every phase.

Three phases, three handlers of SIGINT:

start-up (:func:`guard_startup`)
    While ``notchkit`` imports numpy and its own modules nothing has been
    written and nothing needs cleaning up, so Ctrl-C prints
    ``error: interrupted`` and ends the process at once with exit code 130.
    (Raising ``KeyboardInterrupt`` there would print a traceback from inside
    an import, and a half-imported numpy refuses to be imported again.)
    ``notchkit/__init__.py`` installs it first thing, but only when the
    package is being imported to run the command line.

the command (:func:`install`)
    Ctrl-C raises ``KeyboardInterrupt`` as usual, so every ``finally`` runs
    (temporaries removed, worker processes ended), and is remembered:
    :func:`interrupted` stays true even if some library swallowed the
    exception, and the command line then exits 130 whatever the command
    returned. Worker processes ignore SIGINT (:mod:`notchkit.parallel`); the
    parent ends them.

writing the outputs (:func:`notchkit.fileio.hold_interrupts`)
    Held off for the fraction of a second the files take, so an output is
    either not written at all or complete.

after the command (:func:`hold_until_exit`)
    Blocked: the outputs are complete and the exit code is decided.
"""

from __future__ import annotations

import _signal  # the C module: nothing to import or run before Ctrl-C is handled
import os
import sys
from collections.abc import Callable
from typing import Any

_state = {"hit": False}


def _die(_signum: int, _frame: Any) -> None:
    try:
        os.write(2, b"error: interrupted\n")
    finally:
        os._exit(130)


def running_as_command() -> bool:
    """True while the package is imported to run ``notchkit`` (``python -m notchkit`` or the script)."""
    argv0 = sys.argv[0] if sys.argv else ""
    return argv0 == "-m" or os.path.basename(argv0) in ("notchkit", "notchkit.exe")


def guard_startup() -> None:
    """Ctrl-C during start-up: one line, exit 130, nothing else (see the module docstring)."""
    try:
        _signal.signal(_signal.SIGINT, _die)
    except (ValueError, OSError):  # not the main thread or interpreter: leave Python's handler
        pass


def hold_until_exit() -> None:
    """Ignore SIGINT for the rest of the process: the command has finished (its outputs are
    complete), and Python's shutdown restores the default handler, under which a late
    Ctrl-C would kill the process with no message and a signal status.

    Ignoring is process-wide (and Python's shutdown leaves an ignored signal ignored);
    blocking alone is not enough: it holds only in this thread, and a signal sent to the
    process goes to any thread that does not block it (numpy's BLAS threads among them).
    """
    try:
        _signal.signal(_signal.SIGINT, _signal.SIG_IGN)
    except (ValueError, OSError):  # not the main thread: block it here at least
        try:
            _signal.pthread_sigmask(_signal.SIG_BLOCK, [_signal.SIGINT])
        except (AttributeError, OSError, ValueError):
            pass


def _raise(_signum: int, _frame: Any) -> None:
    _state["hit"] = True
    raise KeyboardInterrupt


def install() -> Callable[[], None]:
    """Ctrl-C raises ``KeyboardInterrupt`` and is remembered; returns a function restoring the old handler."""
    _state["hit"] = False
    try:
        old = _signal.signal(_signal.SIGINT, _raise)
    except (ValueError, OSError):  # not the main thread: Python's own handling
        return lambda: None
    old_hook = sys.unraisablehook

    def hook(unraisable: Any) -> None:
        # Ctrl-C that landed in a weakref callback or __del__: Python ignores the exception
        # there and would print its traceback; it is remembered (interrupted()) instead.
        if isinstance(unraisable.exc_type, type) and issubclass(unraisable.exc_type, KeyboardInterrupt):
            _state["hit"] = True
            return
        old_hook(unraisable)

    sys.unraisablehook = hook

    def restore() -> None:
        _signal.signal(_signal.SIGINT, old)
        sys.unraisablehook = old_hook

    return restore


def interrupted() -> bool:
    """True once Ctrl-C came while :func:`install`'s handler was in place."""
    return bool(_state["hit"])


__all__ = ["guard_startup", "hold_until_exit", "install", "interrupted", "running_as_command"]
