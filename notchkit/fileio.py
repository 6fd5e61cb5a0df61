"""Atomic output files: the one writer every command uses.

A file is written under a temporary name in its destination folder and renamed
over the final name with :func:`os.replace`, so a reader (or a crash, a
SIGKILL, a Ctrl-C) sees the old file or the complete new one, never half of
one, and no temporary is left behind. The temporary's name is chosen before
it is created, so whatever interrupts the write, ``finally`` knows what to
remove.
"""

from __future__ import annotations

import os
import secrets
from pathlib import Path

from notchkit.errors import InputError


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
    p = Path(path)
    folder = p.parent if str(p.parent) else Path(".")
    tmp = folder / f".{p.name}.{secrets.token_hex(4)}.part"
    label = f"{what} {str(p)!r}" if what else repr(str(p))
    try:
        try:
            with open(tmp, "xb") as fh:  # exclusive create: never someone else's file
                fh.write(data)
            os.replace(tmp, p)
        finally:
            tmp.unlink(missing_ok=True)  # gone already after a successful rename
    except OSError as exc:
        raise InputError(f"{label}: cannot write ({exc.strerror or exc})") from exc
    return p


def write_text_atomic(path: str | os.PathLike, text: str, what: str = "") -> Path:
    """Write UTF-8 ``text`` to ``path`` atomically (see :func:`write_bytes_atomic`)."""
    return write_bytes_atomic(path, text.encode("utf-8"), what)
