"""Bounded reading of every input file: regular files only, byte caps, JSON caps.

Every file notchkit reads (a site file, a Touchstone measurement, a plan or
calibration JSON through :mod:`notchkit.jsonread`) goes through
:func:`read_regular`, which

- opens without blocking (``O_NONBLOCK``), so a FIFO with no writer cannot hang
  the command, and refuses anything but a regular file (a FIFO, a socket, a
  character device such as ``/dev/zero`` or ``/dev/urandom``, a block device),
  also through a symbolic link;
- refuses a file whose size is over the caller's cap before reading it, and
  never reads more than the cap plus one byte (a file that grows while it is
  read is refused too).

:func:`load_json` parses JSON with a nesting cap (checked before parsing:
Python's parser recurses and 100 000 ``[`` raise ``RecursionError``), refuses
``NaN``/``Infinity`` and numbers that do not fit a float (``1e999``) or have
more digits than any measurement (an integer of thousands of digits costs
quadratic time to convert), and reports a problem with its line and column.

The limits themselves are documented in docs/robustness.md.
"""

from __future__ import annotations

import errno
import json
import math
import os
import re
import stat
from typing import Any

from notchkit.textsafe import shown_path

MAX_MEASUREMENT_BYTES = 32 * 1024 * 1024
"""Largest Touchstone file ``trim`` reads (32 MiB: about 200 000 two-port points)."""
MAX_SWEEP_POINTS = 100_001
"""Most frequency points in a measured sweep. 100 001 is the largest sweep of the
usual bench vector network analysers (from memory; common practice is 201-1601
points for a stub)."""
MAX_JSON_DEPTH = 64
"""Deepest nesting of a plan JSON (notchkit writes at most 6 levels)."""
MAX_JSON_NUMBER_CHARS = 40
"""Longest number text in a plan JSON (a float's repr is at most 24 characters)."""


class ReadRefused(Exception):
    """A file :func:`read_regular` will not read; ``kind`` says why, ``reason`` in words.

    ``kind`` is one of ``"missing"``, ``"directory"``, ``"special"``,
    ``"too_big"``, ``"denied"``, ``"other"``; ``size`` is the size found for
    ``"too_big"``.
    """

    def __init__(self, kind: str, reason: str, size: int = 0):
        super().__init__(reason)
        self.kind, self.reason, self.size = kind, reason, size


def file_kind(mode: int) -> str | None:
    """``None`` for a regular file, else what it is ("a directory", "a FIFO (named pipe)", ...)."""
    if stat.S_ISREG(mode):
        return None
    if stat.S_ISDIR(mode):
        return "a directory"
    if stat.S_ISFIFO(mode):
        return "a FIFO (named pipe)"
    if stat.S_ISSOCK(mode):
        return "a socket"
    if stat.S_ISCHR(mode):
        return "a character device"
    if stat.S_ISBLK(mode):
        return "a block device"
    return "not a regular file"


def read_regular(path: str | os.PathLike[str], limit: int) -> bytes:
    """The bytes of a regular file of at most ``limit`` bytes.

    Raises
    ------
    ReadRefused
        Missing, a directory, not a regular file (FIFO, socket, device), larger
        than ``limit``, not readable.
    """
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0) \
        | getattr(os, "O_CLOEXEC", 0)
    try:
        fd = os.open(os.fspath(path), flags)
    except FileNotFoundError:
        raise ReadRefused("missing", "no such file") from None
    except IsADirectoryError:
        raise ReadRefused("directory", "is a directory") from None
    except PermissionError:
        raise ReadRefused("denied", "permission denied") from None
    except OSError as exc:
        if exc.errno == errno.ENXIO:  # a socket, or a FIFO opened for writing only elsewhere
            raise ReadRefused("special", "is not a regular file") from None
        raise ReadRefused("other", f"cannot be read ({exc.strerror or exc})") from None
    try:
        st = os.fstat(fd)
        what = file_kind(st.st_mode)
        if what == "a directory":
            raise ReadRefused("directory", "is a directory")
        if what is not None:
            raise ReadRefused("special", f"is {what}, not a regular file")
        if st.st_size > limit:
            raise ReadRefused("too_big", f"is {st.st_size} bytes, over the {limit} byte limit",
                              st.st_size)
        chunks: list[bytes] = []
        got = 0
        while got <= limit:
            chunk = os.read(fd, min(1 << 20, limit + 1 - got))
            if not chunk:
                break
            chunks.append(chunk)
            got += len(chunk)
        if got > limit:
            raise ReadRefused("too_big", f"is over the {limit} byte limit (it grew while read)", got)
        return b"".join(chunks)
    except OSError as exc:
        raise ReadRefused("other", f"cannot be read ({exc.strerror or exc})") from None
    finally:
        os.close(fd)


_DATA_LINE = re.compile(rb"(?m)^[ \t]*[-+.0-9]")


def read_measurement_bytes(path: str | os.PathLike[str]) -> bytes:
    """The bytes of a Touchstone measurement within :data:`MAX_MEASUREMENT_BYTES` and
    (counting data lines before anything is parsed) :data:`MAX_SWEEP_POINTS`.

    Raises
    ------
    MeasurementError
        One line: ``FILE: what is wrong (what is allowed)``.
    """
    from notchkit.errors import MeasurementError

    shown = shown_path(path)
    try:
        data = read_regular(path, MAX_MEASUREMENT_BYTES)
    except ReadRefused as exc:
        hint = {"missing": "no such measurement file",
                "directory": "is a directory, not a Touchstone file",
                "special": f"{exc.reason} (give a Touchstone .s1p/.s2p file)",
                "too_big": f"{exc.reason} (a stub sweep is a few hundred kB; sweep at most "
                           f"{MAX_SWEEP_POINTS} points)"}.get(exc.kind, exc.reason)
        raise MeasurementError(f"{shown}: {hint}") from None
    lines = len(_DATA_LINE.findall(data))
    if lines > 2 * MAX_SWEEP_POINTS:
        raise MeasurementError(f"{shown}: has {lines} data lines; at most {MAX_SWEEP_POINTS} "
                               "frequency points are read (sweep fewer points)")
    return data


class TouchstoneRefused(Exception):
    """Touchstone text scikit-rf cannot read; ``detail`` is its first line (at most 120 characters)."""

    def __init__(self, detail: str):
        super().__init__(detail)
        self.detail = detail


def parse_touchstone(data: bytes, name: str) -> Any:
    """A :class:`skrf.Network` from the bytes of a Touchstone file named ``name``.

    The one reader behind every measured file (trim and verify sweeps, antenna
    loads, installed filters): UTF-8, else Latin-1 (which reads any byte);
    scikit-rf takes the port count from ``name``'s extension; its own warnings
    are silenced because each caller refuses bad sweeps with its own one-line
    error. Whatever scikit-rf raises becomes :class:`TouchstoneRefused`.
    """
    import io
    import warnings

    import numpy as np
    import skrf

    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        text = data.decode("latin-1")
    buf = io.StringIO(text)
    buf.name = name
    try:
        with warnings.catch_warnings(), np.errstate(all="ignore"):
            warnings.simplefilter("ignore")
            return skrf.Network(buf)
    except Exception as exc:  # noqa: BLE001 - scikit-rf raises many kinds on a bad file
        raise TouchstoneRefused(str(exc).splitlines()[0][:120] if str(exc) else type(exc).__name__) from None


# ---------------------------------------------------------------- JSON


class JsonRefused(Exception):
    """JSON that :func:`load_json` will not load, with a 1-based line and column."""

    def __init__(self, message: str, line: int, col: int):
        super().__init__(message)
        self.message, self.line, self.col = message, line, col


_TOKENS = re.compile(r'"[^"\\]*(?:\\.[^"\\]*)*"|[\[\]{}]')


def _line_col(text: str, index: int) -> tuple[int, int]:
    line = text.count("\n", 0, index) + 1
    return line, index - (text.rfind("\n", 0, index) + 1) + 1


def _check_depth(text: str, max_depth: int) -> None:
    depth = 0
    for m in _TOKENS.finditer(text):
        c = m.group(0)
        if c in "[{":
            depth += 1
            if depth > max_depth:
                raise JsonRefused(f"nested deeper than {max_depth} levels "
                                  "(a notchkit plan nests at most 6)", *_line_col(text, m.start()))
        elif c in "]}":
            depth -= 1


def load_json(data: bytes | str, *, max_depth: int = MAX_JSON_DEPTH,
              max_number_chars: int = MAX_JSON_NUMBER_CHARS) -> Any:
    """Parse JSON text within the caps.

    Raises
    ------
    JsonRefused
        Not UTF-8, not JSON, nested deeper than ``max_depth``, ``NaN`` or
        ``Infinity``, a number longer than ``max_number_chars`` or beyond a
        float's range.
    """
    if isinstance(data, bytes):
        if data.startswith(b"\xef\xbb\xbf"):
            data = data[3:]
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError as exc:
            head = data[: exc.start]
            raise JsonRefused(f"byte 0x{data[exc.start]:02x} is not UTF-8 text",
                              head.count(b"\n") + 1, exc.start - (head.rfind(b"\n") + 1) + 1) from None
    else:
        text = data
    _check_depth(text, max_depth)

    def number(s: str) -> float | int:
        if len(s) > max_number_chars:
            raise ValueError(f"a number of {len(s)} characters (allowed: at most {max_number_chars})")
        v = float(s) if any(c in s for c in ".eE") else int(s)
        if isinstance(v, float) and not math.isfinite(v):
            raise ValueError(f"number {s} is beyond a float's range (finite numbers only)")
        return v

    def constant(s: str) -> Any:
        raise ValueError(f"{s} is not a JSON number (finite numbers only)")

    try:
        return json.loads(text, parse_int=number, parse_float=number, parse_constant=constant)
    except json.JSONDecodeError as exc:
        raise JsonRefused(f"not valid JSON ({exc.msg})", exc.lineno, exc.colno) from None
    except ValueError as exc:
        # raised by number()/constant(): json does not say where; find the first such token
        line, col = _first_bad_number(text, max_number_chars)
        raise JsonRefused(str(exc), line, col) from None
    except RecursionError:  # pragma: no cover - the depth check comes first
        raise JsonRefused(f"nested deeper than {max_depth} levels", 0, 0) from None


_NUMBER = re.compile(r'"[^"\\]*(?:\\.[^"\\]*)*"|-?(?:NaN|Infinity)|-?\d[\d.eE+-]*')


def _first_bad_number(text: str, max_chars: int) -> tuple[int, int]:
    for m in _NUMBER.finditer(text):
        s = m.group(0)
        if s.startswith('"'):
            continue
        bad = len(s) > max_chars or "NaN" in s or "Infinity" in s
        if not bad:
            try:
                bad = not math.isfinite(float(s))
            except ValueError:
                bad = False
        if bad:
            return _line_col(text, m.start())
    return 0, 0


__all__ = [
    "MAX_JSON_DEPTH", "MAX_MEASUREMENT_BYTES", "MAX_SWEEP_POINTS", "JsonRefused", "ReadRefused",
    "load_json", "read_measurement_bytes", "read_regular",
]
