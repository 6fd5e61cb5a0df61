"""Progress on a terminal: one line on stderr, rewritten in place, only when stderr is a TTY.

Piped or redirected output (a log, CI, ``2>file``) gets no progress at all, so
nothing but the command's own lines and warnings ever reaches a file.
"""

from __future__ import annotations

import sys
from typing import TextIO

WIDTH = 100
"""Longest progress line shown (the rest of a long message is cut)."""


class TerminalProgress:
    """``progress(message)`` callable for the library; :meth:`done` clears the line."""

    def __init__(self, stream: TextIO) -> None:
        self.stream = stream
        self.shown = False

    def __call__(self, message: str) -> None:
        self.stream.write("\r\x1b[K" + message[:WIDTH])
        self.stream.flush()
        self.shown = True

    def done(self) -> None:
        if self.shown:
            self.stream.write("\r\x1b[K")
            self.stream.flush()
            self.shown = False


def terminal_progress(enabled: bool = True, stream: TextIO | None = None) -> TerminalProgress | None:
    """A :class:`TerminalProgress` on ``stream`` (stderr) when it is a terminal, else ``None``."""
    out = stream if stream is not None else sys.stderr
    if not enabled or not out.isatty():
        return None
    return TerminalProgress(out)


