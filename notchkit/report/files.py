"""Atomic file writes and up-front writability checks for every report output.

Every output is written to a temporary file in the destination folder and then
renamed over the final name with :func:`os.replace`, so a reader sees the old
file or the new one, never half of one. :func:`check_writable` runs before any
long computation so an unwritable path fails fast with one line.
"""

from __future__ import annotations

import os
from pathlib import Path

from notchkit.errors import InputError
from notchkit.fileio import write_bytes_atomic, write_text_atomic

__all__ = ["check_writable", "write_bytes_atomic", "write_text_atomic"]


def check_writable(path: str | os.PathLike, what: str = "output") -> Path:
    """Refuse an output file path that cannot be written, before any work is done.

    Parameters
    ----------
    path : path-like
        The file to be written (it may not exist yet).
    what : str
        What the file is, for the message (``"PDF"``, ``"HTML"``).

    Raises
    ------
    InputError
        When the path is a directory, its folder is missing or not a folder, or
        the folder is not writable.
    """
    p = Path(path)
    if p.is_dir():
        raise InputError(f"{what} path {str(p)!r} is a directory (give a file name, e.g. plan.pdf)")
    folder = p.parent if str(p.parent) else Path(".")
    if not folder.exists():
        raise InputError(f"{what} path {str(p)!r}: folder {str(folder)!r} does not exist (create it first)")
    if not folder.is_dir():
        raise InputError(f"{what} path {str(p)!r}: {str(folder)!r} is not a folder")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InputError(f"{what} path {str(p)!r}: folder {str(folder)!r} is not writable")
    if p.exists() and not os.access(p, os.W_OK):
        raise InputError(f"{what} path {str(p)!r} exists and is not writable")
    return p


def check_dir_writable(path: str | os.PathLike, what: str = "output folder") -> Path:
    """Refuse an output folder that cannot be created or written.

    A missing folder is fine when its parent exists and is writable (it is
    created when the outputs are written); a file in its place is refused.
    """
    p = Path(path)
    if p.exists():
        if not p.is_dir():
            raise InputError(f"{what} {str(p)!r} is a file, not a folder")
        if not os.access(p, os.W_OK | os.X_OK):
            raise InputError(f"{what} {str(p)!r} is not writable")
        return p
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise InputError(f"{what} {str(p)!r}: parent folder {str(parent)!r} does not exist")
    if not os.access(parent, os.W_OK | os.X_OK):
        raise InputError(f"{what} {str(p)!r}: parent folder {str(parent)!r} is not writable")
    return p
