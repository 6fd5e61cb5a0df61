"""Bounded, validated reading of the JSON files notchkit reads back (plan, calibration).

One place for the limits and the one-line problems
``FILE:LINE:COL: path.to.key: what is wrong (what is allowed)``:
:func:`read_text_bounded` (size cap, UTF-8), :func:`parse_json` (no NaN or
Infinity, nesting the parser allows), :class:`Reader` (typed look-ups) and
:func:`locate` (the line and column of a key, found only when there is a
problem to report).
"""

from __future__ import annotations

import json
import math
from collections.abc import Iterator, Mapping
from pathlib import Path
from typing import Any, NoReturn

from notchkit.errors import InputError

scanstring = json.decoder.scanstring  # type: ignore[attr-defined]  # the JSON string reader


class JsonFileError(InputError):
    """A JSON file notchkit reads back that cannot be used."""


def read_text_bounded(p: Path, what: str, limit: int, error: type[JsonFileError] = JsonFileError) -> str:
    """The file's text, refusing what is not a readable UTF-8 file of bounded size."""
    from notchkit.bounded import ReadRefused, read_regular

    try:  # a regular file only (a FIFO would hang, /dev/zero never ends), opened without blocking
        data = read_regular(p, limit)
    except ReadRefused as exc:
        reason = {"missing": f"no such {what} file", "directory": f"is a directory, not a {what} JSON file",
                  "too_big": f"larger than {limit // (1024 * 1024)} MiB (not a notchkit {what} JSON)",
                  "special": f"{exc.reason} (give a notchkit {what} JSON file)"}.get(exc.kind, exc.reason)
        raise error(f"{p}: {reason}") from None
    if len(data) > limit:
        raise error(f"{p}: larger than {limit // (1024 * 1024)} MiB (not a notchkit {what} JSON)")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise error(f"{p}: not UTF-8 text (byte {exc.start})") from None


class _Constant(Exception):
    pass


def _no_constant(name: str) -> float:
    raise _Constant(name)


class Reader:
    """Typed look-ups with one-line errors ``FILE:LINE:COL: path: what (allowed)``."""

    def __init__(self, path: str, text: str | None, error: type[JsonFileError] = JsonFileError) -> None:
        self.path, self.source, self.error = path, text, error

    @staticmethod
    def path_of(where: str) -> tuple[str | int, ...]:
        out: list[str | int] = []
        for part in where.replace("]", "").split("."):
            if not part:
                continue
            name, *idx = part.split("[")
            if name:
                out.append(name)
            out += [int(i) for i in idx]
        return tuple(out)

    def fail(self, field_path: str, message: str, pointer: tuple[str | int, ...] = ()) -> NoReturn:
        line, col = locate(self.source, pointer) if self.source is not None else (0, 0)
        where = f"{self.path}:{line}:{col}" if line else self.path
        raise self.error(f"{where}: {field_path or '(top level)'}: {message}")

    def _key(self, where: str, key: str) -> str:
        return f"{where}.{key}" if where else key

    def obj(self, node: Any, where: str) -> Mapping[str, Any]:
        if not isinstance(node, dict):
            self.fail(where, f"must be an object, not {type(node).__name__} "
                      "(is this a notchkit plan JSON?)", self.path_of(where))
        return node

    def need(self, obj: Mapping[str, Any], key: str, where: str) -> Any:
        if key not in obj or obj[key] is None:
            self.fail(self._key(where, key), "missing (written by notchkit plan / design)",
                      self.path_of(where))
        return obj[key]

    def items(self, obj: Mapping[str, Any], key: str, where: str, most: int) -> Iterator[Any]:
        v = self.need(obj, key, where)
        if not isinstance(v, list):
            self.fail(self._key(where, key), f"must be a list, not {type(v).__name__}",
                      (*self.path_of(where), key))
        if len(v) > most:
            self.fail(self._key(where, key), f"has {len(v)} entries (at most {most})",
                      (*self.path_of(where), key))
        return iter(v)

    def num(self, obj: Mapping[str, Any], key: str, where: str, *, optional: bool = False,
            zero: bool = False, signed: bool = False, lo: float | None = None,
            hi: float | None = None) -> Any:
        v = obj.get(key)
        if v is None:
            if optional:
                return None
            v = self.need(obj, key, where)
        ok = isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)
        if ok and not signed:
            ok = v >= 0 if zero else v > 0
        if ok and lo is not None:
            ok = v >= lo
        if ok and hi is not None:
            ok = v <= hi
        if not ok:
            allowed = "a finite number" + ("" if signed else " >= 0" if zero else " > 0")
            if lo is not None:
                allowed += f", at least {lo:g}"
            if hi is not None:
                allowed += f", at most {hi:g}"
            self.fail(self._key(where, key), f"{v!r} is not allowed ({allowed})", (*self.path_of(where), key))
        return float(v)

    def integer(self, obj: Mapping[str, Any], key: str, where: str, *, optional: bool = False) -> Any:
        v = obj.get(key)
        if v is None:
            if optional:
                return None
            v = self.need(obj, key, where)
        if isinstance(v, bool) or not isinstance(v, int) or not 1 <= v <= 100_000:
            self.fail(self._key(where, key), f"{v!r} is not allowed (a whole number from 1 to 100000)",
                      (*self.path_of(where), key))
        return v

    def text(self, obj: Mapping[str, Any], key: str, where: str) -> str:
        v = self.need(obj, key, where)
        if not isinstance(v, str) or not v or len(v) > 200:
            self.fail(self._key(where, key), f"{v!r} is not allowed (text of 1 to 200 characters)",
                      (*self.path_of(where), key))
        return v

    def choice(self, obj: Mapping[str, Any], key: str, where: str, allowed: tuple[str, ...]) -> Any:
        v = self.need(obj, key, where)
        if v not in allowed:
            self.fail(self._key(where, key), f"{v!r} is not allowed ({' or '.join(map(repr, allowed))})",
                      (*self.path_of(where), key))
        return v

    def flag(self, obj: Mapping[str, Any], key: str, where: str) -> bool:
        v = self.need(obj, key, where)
        if not isinstance(v, bool):
            self.fail(self._key(where, key), f"{v!r} is not allowed (true or false)",
                      (*self.path_of(where), key))
        return v

    def band(self, obj: Mapping[str, Any], where: str) -> tuple[float, float]:
        lo, hi = self.num(obj, "lo_mhz", where), self.num(obj, "hi_mhz", where)
        if not lo < hi:
            self.fail(f"{where}.hi_mhz", f"{hi!r} must be above lo_mhz {lo!r}",
                      (*self.path_of(where), "hi_mhz"))
        return lo, hi


def locate(text: str, pointer: tuple[str | int, ...]) -> tuple[int, int]:
    """1-based line and column of the value at ``pointer`` (as deep as it exists) in JSON ``text``."""
    dec = json.JSONDecoder()
    ws = " \t\r\n"

    def skip(i: int) -> int:
        while i < len(text) and text[i] in ws:
            i += 1
        return i

    try:
        pos = skip(0)
        for step in pointer:
            if isinstance(step, int):
                if text[pos] != "[":
                    break
                i, k, found = skip(pos + 1), 0, None
                while i < len(text) and text[i] != "]":
                    if k == step:
                        found = i
                        break
                    _, i = dec.raw_decode(text, i)
                    i = skip(i)
                    i = skip(i + 1) if text[i] == "," else i
                    k += 1
                if found is None:
                    break
                pos = found
            else:
                if text[pos] != "{":
                    break
                i, found = skip(pos + 1), None
                while i < len(text) and text[i] == '"':
                    key, i = scanstring(text, i + 1)
                    i = skip(skip(i) + 1)  # past the colon
                    if key == step:
                        found = i
                        break
                    _, i = dec.raw_decode(text, i)
                    i = skip(i)
                    i = skip(i + 1) if text[i] == "," else i
                if found is None:
                    break
                pos = found
    except (ValueError, IndexError, RecursionError):
        pass
    pos = min(pos, len(text))
    line = text.count("\n", 0, pos) + 1
    return line, pos - (text.rfind("\n", 0, pos) + 1) + 1




def parse_json(text: str, p: Path, error: type[JsonFileError] = JsonFileError) -> Any:
    """``text`` parsed; NaN, Infinity, deep nesting and over-long integers are one-line errors.

    The nesting and the numbers are checked by :func:`notchkit.bounded.load_json` (a depth
    cap before parsing, finite numbers of bounded length), with the line and column."""
    from notchkit.bounded import JsonRefused, load_json

    try:
        return load_json(text)
    except JsonRefused as exc:
        raise error(f"{p}:{exc.line}:{exc.col}: {exc.message}") from None


__all__ = ["JsonFileError", "Reader", "locate", "parse_json", "read_text_bounded"]
