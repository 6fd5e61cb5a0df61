"""Every output of a command planned and checked together, before any work.

:func:`plan_outputs` takes all the files a command will write, the folder it
may create and the files it reads, and refuses, with one line, before anything
is computed or written:

- an output that exists and is not a regular file: a directory, a character
  or block device (``-o /dev/null`` would otherwise replace the device node
  with a file when run as root), a FIFO, a socket;
- an output that is one of the inputs (the site file, a measurement, a plan
  JSON), by path or as the same file under another name (a hard or symbolic
  link);
- two outputs on one path (``-o out/plan.json --outdir out``);
- a file name longer than the file system takes (``NAME_MAX``, 255 bytes on
  common file systems) or a path longer than ``PATH_MAX``;
- a folder that is missing, not a folder or not writable; an existing output
  that is not writable.

The files are then written together by :func:`notchkit.fileio.write_all`
(all or none, atomically each).
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Sequence
from pathlib import Path

from notchkit.bounded import file_kind
from notchkit.errors import InputError
from notchkit.fileio import name_max, write_all, write_bytes_atomic, write_text_atomic
from notchkit.textsafe import clean

__all__ = ["check_dir_writable", "check_writable", "plan_outputs", "write_all", "write_bytes_atomic",
           "write_text_atomic"]

PATH_MAX_DEFAULT = 4096
"""Longest path in bytes on Linux (``PATH_MAX``); used where ``os.pathconf`` cannot say."""


def _q(p: object) -> str:
    return repr(clean(str(p), one_line=True))


def _path_max(folder: Path) -> int:
    try:
        return int(os.pathconf(os.fspath(folder) or ".", "PC_PATH_MAX"))
    except (OSError, ValueError, AttributeError):
        return PATH_MAX_DEFAULT


def _nearest_existing(folder: Path) -> Path:
    p = folder
    while not p.exists() and p != p.parent:
        p = p.parent
    return p


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
        The path is not a regular file (a directory, a device, a FIFO), its
        name is too long, its folder is missing or not a folder, or the folder
        or the file is not writable.
    """
    p = Path(path)
    label = f"{what} path {_q(p)}"
    if not str(path) or p.name in ("", ".", ".."):
        raise InputError(f"{label} is not a file name (give a file name, e.g. plan.pdf)")
    folder = p.parent if str(p.parent) else Path(".")
    limit = name_max(_nearest_existing(folder))
    if len(os.fsencode(p.name)) > limit:
        raise InputError(f"{label}: the file name is {len(os.fsencode(p.name))} bytes long "
                         f"(allowed: at most {limit} bytes)")
    full = os.fsencode(os.path.abspath(p))
    if len(full) >= _path_max(_nearest_existing(folder)):
        raise InputError(f"{label}: the path is {len(full)} bytes long (allowed: less than "
                         f"{_path_max(_nearest_existing(folder))} bytes)")
    try:
        st = os.stat(p)
    except FileNotFoundError:
        st = None
    except OSError as exc:
        raise InputError(f"{label}: cannot be checked ({exc.strerror or exc})") from None
    if st is not None:
        kind = file_kind(st.st_mode)
        if kind == "a directory":
            raise InputError(f"{label} is a directory (give a file name, e.g. plan.pdf)")
        if kind is not None:
            raise InputError(f"{label} is {kind}, not a regular file (notchkit writes only regular "
                             "files; give a file name)")
    if not folder.exists():
        raise InputError(f"{label}: folder {_q(folder)} does not exist (create it first)")
    if not folder.is_dir():
        raise InputError(f"{label}: {_q(folder)} is not a folder")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InputError(f"{label}: folder {_q(folder)} is not writable")
    if st is not None and not os.access(p, os.W_OK):
        raise InputError(f"{label} exists and is not writable")
    return p


def check_dir_writable(path: str | os.PathLike, what: str = "output folder") -> Path:
    """Refuse an output folder that cannot be created or written.

    A missing folder is fine when its parent exists and is writable (it is
    created when the outputs are written); a file in its place is refused.
    """
    p = Path(path)
    if p.exists():
        if not p.is_dir():
            raise InputError(f"{what} {_q(p)} is a file, not a folder")
        if not os.access(p, os.W_OK | os.X_OK):
            raise InputError(f"{what} {_q(p)} is not writable")
        return p
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise InputError(f"{what} {_q(p)}: parent folder {_q(parent)} does not exist")
    if not os.access(parent, os.W_OK | os.X_OK):
        raise InputError(f"{what} {_q(p)}: parent folder {_q(parent)} is not writable")
    if len(os.fsencode(p.name)) > name_max(parent):
        raise InputError(f"{what} {_q(p)}: the folder name is too long "
                         f"(allowed: at most {name_max(parent)} bytes)")
    return p


def _where(p: Path) -> tuple[str, str]:
    """The real folder and name of ``p`` (the folder's symbolic links resolved)."""
    folder = p.parent if str(p.parent) else Path(".")
    base = _nearest_existing(folder)
    real = os.path.realpath(base)
    rest = os.path.relpath(os.path.abspath(folder), os.path.abspath(base))
    return os.path.normpath(os.path.join(real, rest)), p.name


def _identity(p: Path) -> tuple[int, int] | None:
    try:
        st = os.stat(p)
    except OSError:
        return None
    return (st.st_dev, st.st_ino)


_Path = str | os.PathLike[str]


def plan_outputs(outputs: Sequence[tuple[_Path, str]], *,
                 inputs: Iterable[_Path | tuple[_Path | None, str] | None] = (),
                 dirs: Sequence[tuple[str | os.PathLike[str], str]] = ()) -> list[Path]:
    """Check every output of a command together, before any work; see the module docstring.

    Parameters
    ----------
    outputs : sequence of (path, what)
        Every file the command will write and how messages name it.
    inputs : iterable of path-like, (path-like, what) or None
        Every file the command reads, optionally with how messages name it
        (default ``"input file"``); ``None`` entries are skipped.
    dirs : sequence of (path, what)
        Folders the command will create if missing (``--outdir``).

    Returns
    -------
    list of Path
        The outputs, in order.

    Raises
    ------
    InputError
        One line naming the first output that cannot be written as planned.
    """
    for d, what in dirs:
        check_dir_writable(d, what)
    out: list[Path] = []
    seen: dict[tuple[str, str], tuple[Path, str]] = {}
    ids: dict[tuple[int, int], tuple[Path, str]] = {}
    for path, what in outputs:
        p = Path(path)
        folder = p.parent if str(p.parent) else Path(".")
        if any(Path(d).resolve() == folder.resolve() for d, _w in dirs) and not folder.exists():
            limit = name_max(_nearest_existing(folder))
            if len(os.fsencode(p.name)) > limit:
                raise InputError(f"{what} path {_q(p)}: the file name is too long "
                                 f"(allowed: at most {limit} bytes)")
        else:
            check_writable(p, what)
        key = _where(p)
        other = seen.get(key)
        ident = _identity(p)
        if other is None and ident is not None:
            other = ids.get(ident)
        if other is not None:
            raise InputError(f"{what} {_q(p)} and {other[1]} {_q(other[0])} are the same file "
                             "(give each output its own name)")
        seen[key] = (p, what)
        if ident is not None:
            ids[ident] = (p, what)
        out.append(p)
    for entry in inputs:
        src, iw = entry if isinstance(entry, tuple) else (entry, "input file")
        if src is None:
            continue
        s = Path(src)
        key = _where(s)
        ident = _identity(s)
        hit = seen.get(key) or (ids.get(ident) if ident is not None else None)
        if hit is not None:
            also = "" if str(s) == str(hit[0]) else f" {_q(s)}"
            raise InputError(f"{hit[1]} {_q(hit[0])} is the {iw}{also} itself (choose another "
                             "output name; notchkit never writes over its inputs)")
    return out
