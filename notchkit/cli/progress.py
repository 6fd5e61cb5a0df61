"""Progress on a terminal: one line on stderr, rewritten in place, only when stderr is a TTY.

Piped or redirected output (a log, CI, ``2>file``) gets no progress at all, so
nothing but the command's own lines and warnings ever reaches a file; with
``--verbose`` each message is a plain line there instead, and ``--quiet``
shows none (:func:`configure`, called once by :func:`notchkit.cli.main`).
"""

from __future__ import annotations

import sys
from typing import TextIO

WIDTH = 100
"""Longest progress line shown (the rest of a long message is cut)."""

_LEVEL = {"quiet": False, "verbose": False}


def configure(*, quiet: bool = False, verbose: bool = False) -> None:
    """The command line's ``--quiet`` / ``--verbose`` for every progress display of this command."""
    _LEVEL["quiet"], _LEVEL["verbose"] = bool(quiet), bool(verbose)


def is_quiet() -> bool:
    """``--quiet`` was given: warnings are counted, not printed."""
    return _LEVEL["quiet"]


class TerminalProgress:
    """``progress(message)`` callable for the library; :meth:`done` clears the line.

    ``lines``: each message on a line of its own (``--verbose`` into a file or pipe).
    """

    def __init__(self, stream: TextIO, *, lines: bool = False) -> None:
        self.stream = stream
        self.lines = lines
        self.shown = False

    def __call__(self, message: str) -> None:
        if self.lines:
            self.stream.write(message + "\n")
            self.stream.flush()
            return
        self._control("\r\x1b[K")
        self.stream.write(message[:WIDTH])
        self.stream.flush()
        self.shown = True

    def _control(self, seq: str) -> None:
        """A terminal control sequence, past the command line's sanitiser (``textsafe.SafeStream``)."""
        getattr(self.stream, "write_control", self.stream.write)(seq)

    def done(self) -> None:
        if self.shown:
            self._control("\r\x1b[K")
            self.stream.flush()
            self.shown = False


def terminal_progress(enabled: bool = True, stream: TextIO | None = None) -> TerminalProgress | None:
    """A :class:`TerminalProgress` on ``stream`` (stderr) when it is a terminal, else ``None``
    (with ``--verbose``: plain lines when it is not; with ``--quiet``: ``None``)."""
    out = stream if stream is not None else sys.stderr
    if not enabled or _LEVEL["quiet"]:
        return None
    if not out.isatty():
        return TerminalProgress(out, lines=True) if _LEVEL["verbose"] else None
    return TerminalProgress(out)


