"""The user's defaults file: what the command line uses when an option is not given.

``$XDG_CONFIG_HOME/notchkit/defaults.yaml`` (``~/.config/notchkit/defaults.yaml``
when ``XDG_CONFIG_HOME`` is unset), next to the personal cable library
``cables.yaml``. Every key is optional::

    units: imperial            # metric | imperial | both     (plan --units)
    page_size: letter          # a4 | letter                  (plan --page-size)
    analyser_mhz: [1, 600]     # the range your analyser sweeps (a site file's
                               # allowances.analyser_lo_mhz/hi_mhz win over it)
    cables: ~/radio/cables.yaml  # the personal cable library (default: cables.yaml here)

An option given on the command line wins over the file; the library functions
never read it (``notchkit.plan(...)`` takes its arguments as given), except that
:func:`notchkit.cables.library` reads the personal cable library it names.
A problem in the file is one line ``FILE:LINE:COL: key: what is wrong (what is
allowed)`` and exit code 2, like a site file.
"""

from __future__ import annotations

import functools
import math
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from notchkit.errors import InputError
from notchkit.textsafe import shown_path

DEFAULTS_NAME = "defaults.yaml"
MAX_BYTES = 64 * 1024
"""A defaults file is a few lines; anything larger is refused unread."""

UNITS = ("metric", "imperial", "both")
PAGE_SIZES = ("a4", "letter")


class DefaultsError(InputError):
    """A problem in the user's defaults file."""


@dataclass(frozen=True, slots=True, kw_only=True)
class UserDefaults:
    """The user's defaults (each ``None`` when the file does not set it)."""

    units: str | None = None
    page_size: str | None = None
    analyser_mhz: tuple[float, float] | None = None
    cables: Path | None = None
    path: Path | None = None
    """The file read (``None``: there is none)."""


def config_dir() -> Path:
    """``$XDG_CONFIG_HOME/notchkit`` (``~/.config/notchkit`` by default)."""
    base = os.environ.get("XDG_CONFIG_HOME") or os.path.join(os.path.expanduser("~"), ".config")
    return Path(base) / "notchkit"


def defaults_path() -> Path:
    """Where the defaults file is looked for."""
    return config_dir() / DEFAULTS_NAME


def _fail(path: Path, node: Any, key: str, message: str) -> DefaultsError:
    mark = node.start_mark
    return DefaultsError(f"{shown_path(path)}:{mark.line + 1}:{mark.column + 1}: {key}: {message}")


def _scalar(path: Path, node: Any, key: str) -> str:
    import yaml

    if not isinstance(node, yaml.ScalarNode):
        raise _fail(path, node, key, "must be a single value")
    return str(node.value)


def _number(path: Path, node: Any, key: str) -> float:
    text = _scalar(path, node, key)
    try:
        x = float(text)
    except ValueError:
        raise _fail(path, node, key, f"{text!r} is not a number (a frequency in MHz)") from None
    if not math.isfinite(x) or not 0.0 < x <= 1e6:
        raise _fail(path, node, key, f"{text} is out of range (0 < MHz <= 1000000)")
    return x


def load_defaults(path: str | os.PathLike[str] | None = None) -> UserDefaults:
    """Read the defaults file (:func:`defaults_path` unless ``path`` is given).

    A missing file gives empty defaults. Raises :class:`DefaultsError` for an
    unreadable or malformed file, one line naming the key. The file is read
    again only when it changed (the cable library asks on every look-up).
    """
    p = Path(path) if path is not None else defaults_path()
    try:
        if not p.exists():
            return UserDefaults()
        st = p.stat()
    except OSError as exc:
        raise DefaultsError(f"{shown_path(p)}:1:1: cannot read the defaults file ({exc.strerror})") from None
    return _load(str(p), st.st_mtime_ns, st.st_size)


@functools.lru_cache(maxsize=8)
def _load(path: str, _mtime_ns: int, _size: int) -> UserDefaults:
    import yaml

    from notchkit.bounded import ReadRefused, read_regular

    p = Path(path)
    try:
        text = read_regular(p, MAX_BYTES).decode("utf-8")
    except ReadRefused as exc:
        raise DefaultsError(f"{shown_path(p)}:1:1: the defaults file {exc} (a regular file of at most "
                            f"{MAX_BYTES // 1024} KiB)") from None
    except UnicodeDecodeError:
        raise DefaultsError(f"{shown_path(p)}:1:1: the defaults file is not UTF-8 text") from None
    try:
        root = yaml.compose(text, Loader=yaml.SafeLoader)
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f"{mark.line + 1}:{mark.column + 1}" if mark is not None else "1:1"
        problem = getattr(exc, "problem", exc)
        raise DefaultsError(f"{shown_path(p)}:{where}: not valid YAML ({problem})") from None
    if root is None:
        return UserDefaults(path=p)
    if not isinstance(root, yaml.MappingNode):
        raise _fail(p, root, "(top)", "must be a mapping of keys (units, page_size, analyser_mhz, cables)")
    values: dict[str, Any] = {}
    for knode, vnode in root.value:
        key = str(knode.value)
        if key in values:
            raise _fail(p, knode, key, "is given twice")
        if key == "units" or key == "page_size":
            allowed = UNITS if key == "units" else PAGE_SIZES
            v = _scalar(p, vnode, key)
            if v not in allowed:
                raise _fail(p, vnode, key, f"{v!r} is not allowed ({', '.join(allowed)})")
            values[key] = v
        elif key == "analyser_mhz":
            if not isinstance(vnode, yaml.SequenceNode) or len(vnode.value) != 2:
                raise _fail(p, vnode, key, "must be [low, high] in MHz")
            lo, hi = (_number(p, n, key) for n in vnode.value)
            if lo >= hi:
                raise _fail(p, vnode, key, f"low {lo:g} must be below high {hi:g} MHz")
            values[key] = (lo, hi)
        elif key == "cables":
            v = _scalar(p, vnode, key)
            if not v.strip():
                raise _fail(p, vnode, key, "must be a file path")
            c = Path(os.path.expanduser(v))
            values[key] = c if c.is_absolute() else p.parent / c
        else:
            raise _fail(p, knode, key, "unknown key (units, page_size, analyser_mhz, cables)")
    return UserDefaults(path=p, **values)


def with_analyser(site: Any, flag: tuple[float, float] | None,
                  mine: tuple[float, float] | None) -> Any:
    """``site`` with the analyser range the user chose: ``flag`` (a command-line option) wins;
    else the site file's ``allowances.analyser_lo_mhz/hi_mhz`` when it sets them; else ``mine``
    (the defaults file). A site whose range is the built-in default counts as not setting it."""
    import dataclasses

    from notchkit.site.model import DEFAULT_ANALYSER_MHZ

    al = site.allowances
    given = (al.analyser_lo_mhz, al.analyser_hi_mhz) != tuple(DEFAULT_ANALYSER_MHZ)
    chosen = flag if flag is not None else (None if given else mine)
    if chosen is None:
        return site
    lo, hi = chosen
    allowances = dataclasses.replace(al, analyser_lo_mhz=lo, analyser_hi_mhz=hi)
    return dataclasses.replace(site, allowances=allowances)
