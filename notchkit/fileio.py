"""Atomic output files: the one writer every command uses.

A file is written under a temporary name in its destination folder and renamed
over the final name with :func:`os.replace`, so a reader (or a crash, a
SIGKILL, a Ctrl-C) sees the old file or the complete new one, never half of
one, and no temporary is left behind.

A command's outputs are written together (:func:`write_all`): every temporary
is written first; only when all of them are complete are they renamed into
place. A failure on the way (a full disk, a folder that vanished) removes
every temporary and a folder made for the outputs, so nothing is written at
all. Ctrl-C is held off while the temporaries are written and renamed (a
fraction of a second): an interrupt during the writing removes them and then
raises ``KeyboardInterrupt`` (nothing written); one during the renames lets
them finish first (everything written).

The temporary's name is ``.NAME.XXXXXXXX.part`` in the output's folder,
shortened so that it always fits the file system's name limit (``NAME_MAX``):
an output name that fits is never refused because its temporary would not.
"""

from __future__ import annotations

import contextlib
import os
import secrets
import signal
import threading
from collections.abc import Iterator, Sequence
from pathlib import Path

from notchkit.errors import InputError
from notchkit.textsafe import clean

TEMP_SUFFIX = ".part"
NAME_MAX_DEFAULT = 255
"""Longest file name in bytes on Linux, macOS and Windows file systems (POSIX
``NAME_MAX``); used where ``os.pathconf`` cannot say."""


def name_max(folder: str | os.PathLike[str]) -> int:
    """The longest file name (bytes) the file system of ``folder`` takes."""
    try:
        return int(os.pathconf(os.fspath(folder) or ".", "PC_NAME_MAX"))
    except (OSError, ValueError, AttributeError):
        return NAME_MAX_DEFAULT


def temp_name(name: str, limit: int = NAME_MAX_DEFAULT) -> str:
    """A hidden temporary name for output ``name`` that fits ``limit`` bytes.

    ``.NAME.XXXXXXXX.part``, with ``NAME`` cut short (at a character boundary)
    when the whole would be longer than ``limit``.
    """
    tag = f".{secrets.token_hex(4)}{TEMP_SUFFIX}"
    room = limit - 1 - len(tag)
    raw = os.fsencode(name)
    if len(raw) > room:
        raw = raw[:max(room, 1)]
        name = raw.decode("utf-8", errors="ignore") or "x"
    return f".{name}{tag}"


def _label(p: Path, what: str) -> str:
    shown = repr(clean(str(p), one_line=True))
    return f"{what} {shown}" if what else shown


@contextlib.contextmanager
def hold_interrupts() -> Iterator[list[int]]:
    """Hold off SIGINT (Ctrl-C) inside the block; the list collects those that arrived.

    After the block the previous handler is restored and, if a SIGINT came,
    it is delivered (``KeyboardInterrupt`` under Python's default handler).
    Outside the main thread (where signals cannot be handled) it does nothing.
    """
    got: list[int] = []
    if threading.current_thread() is not threading.main_thread():
        yield got
        return
    try:
        old = signal.signal(signal.SIGINT, lambda signum, _frame: got.append(signum))
    except (ValueError, OSError):  # pragma: no cover - not the main interpreter
        yield got
        return
    try:
        yield got
    finally:
        signal.signal(signal.SIGINT, old)
    if got:
        if callable(old):
            old(signal.SIGINT, None)
        elif old != signal.SIG_IGN:
            raise KeyboardInterrupt


def _swallowed_interrupt() -> bool:
    from notchkit.interrupts import interrupted

    return interrupted()


def write_all(files: Sequence[tuple[str | os.PathLike[str], bytes, str]], *,
              make_dir: str | os.PathLike[str] | None = None) -> list[Path]:
    """Write every ``(path, data, what)`` atomically, all or none.

    Parameters
    ----------
    files : sequence of (path, bytes, str)
        Each output, its content and how messages name it (``"PDF"``, ``"--png"``).
    make_dir : path-like, optional
        A folder to create (one level) if missing before writing; removed again
        if the writing fails.

    Raises
    ------
    InputError
        A file could not be written; no temporary is left, no output replaced.
    KeyboardInterrupt
        Ctrl-C while the temporaries were written: none is left, nothing replaced.
    """
    made_dir: Path | None = None
    temps: list[tuple[Path, Path, str]] = []
    with hold_interrupts() as interrupted:
        try:
            if make_dir is not None:
                d = Path(make_dir)
                if not d.is_dir():
                    try:
                        d.mkdir()
                    except OSError as exc:
                        raise InputError(f"{_label(d, 'folder')}: cannot create "
                                         f"({exc.strerror or exc})") from None
                    made_dir = d
            for path, data, what in files:
                p = Path(path)
                folder = p.parent if str(p.parent) else Path(".")
                tmp = folder / temp_name(p.name, name_max(folder))
                temps.append((tmp, p, what))
                try:
                    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_CLOEXEC", 0),
                                 0o666)
                except OSError as exc:
                    temps.pop()  # never created: nothing of ours to remove
                    raise InputError(f"{_label(p, what)}: cannot write ({exc.strerror or exc})") from None
                try:
                    view = memoryview(data)
                    while view:
                        n = os.write(fd, view)
                        view = view[n:]
                except OSError as exc:
                    raise InputError(f"{_label(p, what)}: cannot write ({exc.strerror or exc})") from None
                finally:
                    os.close(fd)
                if interrupted:
                    raise KeyboardInterrupt
            if _swallowed_interrupt():  # a Ctrl-C some library caught: write nothing
                raise KeyboardInterrupt
            done = []
            for tmp, p, what in temps:
                try:
                    os.replace(tmp, p)
                except OSError as exc:
                    raise InputError(f"{_label(p, what)}: cannot write ({exc.strerror or exc})") from None
                done.append(p)
            temps.clear()
            return done
        except BaseException:
            for tmp, _p, _w in temps:
                with contextlib.suppress(OSError):
                    os.unlink(tmp)
            if made_dir is not None:
                with contextlib.suppress(OSError):
                    made_dir.rmdir()
            if interrupted:
                interrupted.clear()
                raise KeyboardInterrupt from None
            raise


def write_bytes_atomic(path: str | os.PathLike, data: bytes, what: str = "") -> Path:
    """Write ``data`` to ``path`` through a temporary file in the same folder and a rename.

    Parameters
    ----------
    path : path-like
        The final file.
    data : bytes
    what : str
        How the message names the output (e.g. ``"--png"``); the path is always shown.

    Raises
    ------
    InputError
        The folder or file cannot be written.
    """
    return write_all([(path, data, what)])[0]


def write_text_atomic(path: str | os.PathLike, text: str, what: str = "") -> Path:
    """Write UTF-8 ``text`` to ``path`` atomically (see :func:`write_bytes_atomic`)."""
    return write_bytes_atomic(path, text.encode("utf-8"), what)
