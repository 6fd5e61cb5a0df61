"""The kinds of key a site file has: each reads its node and describes its JSON Schema.

A key of a section (:data:`notchkit.site.sections.SECTIONS`) is declared as one
of the classes here (:class:`NumberField`, :class:`SectionField`, ...). Each
class knows two things about its kind of value:

* ``read(rd, node, path)``: the value of a YAML node, or :data:`BAD` after the
  problem was reported through the reader ``rd`` (:class:`notchkit.site.reader.Reader`);
* ``schema()``: its JSON Schema, with the key's description and documented default.

``kind`` stays a short word per class (``"number"``, ``"section"``, ...) for
code that walks the declaration.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, ClassVar

import yaml

from notchkit.site import model as m
from notchkit.site.yamlread import _NULL, _kind

if TYPE_CHECKING:
    from notchkit.site.reader import Reader

BAD: Any = object()
"""What ``read`` returns for a value that was reported as a problem."""

_LENGTH_UNITS_M = {"m": 1.0, "cm": 0.01, "mm": 0.001, "ft": 0.3048, "in": 0.0254}
"""Metres per unit; the foot and inch are exact by definition (international yard, 1959)."""
_NUMBER_TEXT = r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?"
_FRACTION_TEXT = r"(?:\d+\s+)?\d+/\d+"
LENGTH_PATTERN = rf"^\s*(?:{_NUMBER_TEXT}|{_FRACTION_TEXT})\s*(?:m|cm|mm|ft|in)\s*$"
"""The text form of a length (also the JSON Schema pattern): a number and a unit,
e.g. ``"12 ft"``, ``"3.5 m"``, ``"1/16 in"``, ``"3 1/2 in"``."""
_LENGTH_RE = re.compile(rf"^\s*({_NUMBER_TEXT}|{_FRACTION_TEXT})\s*(m|cm|mm|ft|in)\s*$")
_NAME_RE = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_.-]{0,39}$")
NAME_PATTERN = r"^[A-Za-z0-9][A-Za-z0-9_.-]{0,39}$"
_NAME_ALLOWED = "1-40 letters, digits, '-', '_' or '.', starting with a letter or digit"
MAX_NUMBER_CHARS = 40
"""Longest text of one number (a float's repr is at most 24 characters); longer is refused
before it is converted (Python's int() of thousands of digits is slow or refused)."""


def _length_number(text: str) -> float | None:
    """The number in a length's text: ``12``, ``3.5``, ``1/16`` or ``3 1/2``; ``None`` for x/0."""
    if "/" not in text:
        return float(text)
    whole, _, frac = text.strip().rpartition(" ")
    num, den = frac.split("/")
    if int(den) == 0:
        return None
    return (int(whole) if whole.strip() else 0) + int(num) / int(den)


def _count(node: yaml.Node) -> str:
    """What a node holds, for 'expected two values, got ...'."""
    if isinstance(node, yaml.SequenceNode):
        n = len(node.value)
        return f"{n} value" if n == 1 else f"{n} values"
    return _kind(node)


@dataclass(frozen=True, slots=True, kw_only=True)
class Num:
    """A number's range and unit.

    ``length_unit_m`` is set for lengths, which may also be written as text with
    a unit (``"12 ft"``): it is the size of the field's unit in metres.
    """

    lo: float
    hi: float
    unit: str = ""
    lo_open: bool = False
    integer: bool = False
    length_unit_m: float | None = None

    def allowed(self) -> str:
        unit = f" {self.unit}" if self.unit else ""
        kind = "a whole number" if self.integer else "a number"
        if self.lo_open:
            return f"{kind} greater than {self.lo:g} and at most {self.hi:g}{unit}"
        return f"{kind} from {self.lo:g} to {self.hi:g}{unit}"

    def contains(self, v: float) -> bool:
        low_ok = v > self.lo if self.lo_open else v >= self.lo
        return low_ok and v <= self.hi

    def schema(self) -> dict[str, Any]:
        s: dict[str, Any] = {"type": "integer" if self.integer else "number"}
        s["exclusiveMinimum" if self.lo_open else "minimum"] = self.lo
        s["maximum"] = self.hi
        if self.length_unit_m is None:
            return s
        return {"oneOf": [s, {"type": "string", "pattern": LENGTH_PATTERN}]}


FREQ = Num(lo=m.MIN_FREQ_MHZ, hi=m.MAX_FREQ_MHZ, unit="MHz")
"""A frequency anywhere the program works, in MHz."""
TABLE_FREQ = Num(lo=0.001, hi=100_000.0, unit="MHz")
TABLE_LOSS = Num(lo=0.0, hi=1_000.0, unit="dB/100 m", lo_open=True)


# ---------------------------------------------------------------------------
# The base and the single values
# ---------------------------------------------------------------------------


@dataclass(frozen=True, slots=True, kw_only=True)
class Field:
    """One key of a section: its meaning, whether it is required, its documented default.

    ``default`` is for documentation only; the value objects in
    :mod:`notchkit.site.model` hold the defaults the program uses.
    """

    kind: ClassVar[str] = ""
    doc: str
    required: bool = False
    default: Any = None

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:  # pragma: no cover - abstract
        raise NotImplementedError

    def value_schema(self) -> dict[str, Any]:  # pragma: no cover - abstract
        raise NotImplementedError

    def schema(self) -> dict[str, Any]:
        """The key's JSON Schema: description, the value's schema, the documented default."""
        out = {"description": self.doc, **self.value_schema()}
        if self.default is not None and not isinstance(self.default, tuple):
            out["default"] = self.default
        return out


@dataclass(frozen=True, slots=True, kw_only=True)
class NumberField(Field):
    """A number in the range ``num`` (a length may also be text with a unit)."""

    kind: ClassVar[str] = "number"
    num: Num

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        return rd.number(node, self.num, path)

    def value_schema(self) -> dict[str, Any]:
        return self.num.schema()


@dataclass(frozen=True, slots=True, kw_only=True)
class TextField(Field):
    """Printable text, 1 to 200 characters."""

    kind: ClassVar[str] = "text"

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        return rd.text(node, path, name=False)

    def value_schema(self) -> dict[str, Any]:
        return {"type": "string", "minLength": 1, "maxLength": 200}


@dataclass(frozen=True, slots=True, kw_only=True)
class NameField(Field):
    """A radio's name (:data:`NAME_PATTERN`)."""

    kind: ClassVar[str] = "name"

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        return rd.text(node, path, name=True)

    def value_schema(self) -> dict[str, Any]:
        return {"type": "string", "pattern": NAME_PATTERN}


@dataclass(frozen=True, slots=True, kw_only=True)
class CableField(Field):
    """A cable's name; it is looked up (library or ``cables:``) once the walk is done."""

    kind: ClassVar[str] = "cable"

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        text = rd.text(node, path, name=False)
        if text is not BAD:
            rd.cable_refs.append((text, node, path))
        return text

    def value_schema(self) -> dict[str, Any]:
        return {"type": "string", "minLength": 1, "maxLength": 200}

    def schema(self) -> dict[str, Any]:
        out = {"description": self.doc, **self.value_schema()}
        if self.default == m.DEFAULT_CABLE:
            out["default"] = self.default
        return out


@dataclass(frozen=True, slots=True, kw_only=True)
class ChoiceField(Field):
    """One of the words in ``choices``."""

    kind: ClassVar[str] = "choice"
    choices: tuple[str, ...]

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        text = rd.text(node, path, name=False)
        if text is BAD:
            return BAD
        if text not in self.choices:
            close = difflib.get_close_matches(text, list(self.choices), n=1, cutoff=0.6)
            hint = f"did you mean {close[0]!r}?; " if close else ""
            rd.add(node, path, f"{text!r} is not known ({hint}allowed: {', '.join(self.choices)})")
            return BAD
        return text

    def value_schema(self) -> dict[str, Any]:
        return {"type": "string", "enum": list(self.choices)}


# ---------------------------------------------------------------------------
# Nested sections
# ---------------------------------------------------------------------------


@dataclass(frozen=True, slots=True, kw_only=True)
class SectionField(Field):
    """A nested mapping whose keys are those of the section named ``section``."""

    kind: ClassVar[str] = "section"
    section: str

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        got = rd.section(node, self.section, path)
        return BAD if got is None else got

    def value_schema(self) -> dict[str, Any]:
        return {"$ref": f"#/$defs/{self.section}"}


@dataclass(frozen=True, slots=True, kw_only=True)
class ListField(Field):
    """A list of mappings, each with the keys of the section named ``section``."""

    kind: ClassVar[str] = "list"
    section: str

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        if not isinstance(node, yaml.SequenceNode):
            what = "nothing" if getattr(node, "tag", "") == _NULL else _kind(node)
            rd.add(
                node,
                path,
                f"expected a list of entries (each starting with '- '), got {what} "
                "(remove the key if there are none)",
            )
            return BAD
        out = []
        for i, item in enumerate(node.value):
            got = rd.section(item, self.section, f"{path}[{i}]")
            if got is not None:
                out.append((got, item, f"{path}[{i}]"))
        return out

    def value_schema(self) -> dict[str, Any]:
        return {"type": "array", "items": {"$ref": f"#/$defs/{self.section}"}}


# ---------------------------------------------------------------------------
# Frequencies and bands
# ---------------------------------------------------------------------------


def read_band(rd: Reader, node: yaml.Node, path: str, num: Num = FREQ) -> Any:
    """``[lo, hi]`` in MHz with lo < hi, each in ``num``: a :class:`~notchkit.site.model.Band`."""
    if not isinstance(node, yaml.SequenceNode) or len(node.value) != 2:
        rd.add(
            node,
            path,
            f"expected [lo, hi] in MHz, got {_count(node)} "
            "(allowed: two frequencies, e.g. [144.0, 148.0])",
        )
        return BAD
    lo = rd.number(node.value[0], num, f"{path}[0]")
    hi = rd.number(node.value[1], num, f"{path}[1]")
    if lo is BAD or hi is BAD:
        return BAD
    if lo >= hi:
        rd.add(
            node,
            path,
            f"[{lo:g}, {hi:g}]: the low edge must be below the high edge "
            "(allowed: [lo, hi] with lo < hi; one channel: use freq_mhz)",
        )
        return BAD
    return m.Band(lo_mhz=lo, hi_mhz=hi)


def _band_schema(num: Num) -> dict[str, Any]:
    return {"type": "array", "items": num.schema(), "minItems": 2, "maxItems": 2}


@dataclass(frozen=True, slots=True, kw_only=True)
class BandField(Field):
    """One band, ``[lo, hi]`` in MHz."""

    kind: ClassVar[str] = "band"
    num: Num = FREQ

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        return read_band(rd, node, path, self.num)

    def value_schema(self) -> dict[str, Any]:
        return _band_schema(self.num)


@dataclass(frozen=True, slots=True, kw_only=True)
class FreqsField(Field):
    """One frequency, or a list of channels worked one at a time: a tuple of Bands."""

    kind: ClassVar[str] = "freqs"
    num: Num = FREQ

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        if isinstance(node, yaml.SequenceNode):
            if not node.value:
                rd.add(node, path, "an empty list (allowed: a frequency, or a list of channels "
                       "in MHz, e.g. [146.52, 147.0])")  # fmt: skip
                return BAD
            got = [rd.number(v, self.num, f"{path}[{i}]") for i, v in enumerate(node.value)]
            if any(g is BAD for g in got):
                return BAD
            if len(set(got)) != len(got):
                rd.add(node, path, "a channel is listed twice (allowed: each channel once)")
                return BAD
            return tuple(m.Band(lo_mhz=f, hi_mhz=f) for f in got)
        f = rd.number(node, self.num, path)
        return BAD if f is BAD else (m.Band(lo_mhz=f, hi_mhz=f),)

    def value_schema(self) -> dict[str, Any]:
        item = self.num.schema()
        return {"oneOf": [item, {"type": "array", "items": item, "minItems": 1}]}


@dataclass(frozen=True, slots=True, kw_only=True)
class BandsField(Field):
    """[lo, hi], or a list of such bands worked one at a time: a tuple of Bands."""

    kind: ClassVar[str] = "bands"
    num: Num = FREQ

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        if (
            isinstance(node, yaml.SequenceNode) and node.value
            and all(isinstance(v, yaml.SequenceNode) for v in node.value)
        ):  # fmt: skip
            got = [read_band(rd, v, f"{path}[{i}]", self.num) for i, v in enumerate(node.value)]
            if any(g is BAD for g in got):
                return BAD
            for i, a in enumerate(got):
                for b in got[:i]:
                    if a.overlaps(b):
                        rd.add(node.value[i], f"{path}[{i}]", f"[{a.lo_mhz:g}, {a.hi_mhz:g}] "
                               f"overlaps [{b.lo_mhz:g}, {b.hi_mhz:g}] (allowed: separate bands; "
                               "join overlapping ones into one)")  # fmt: skip
                        return BAD
            return tuple(got)
        b = read_band(rd, node, path, self.num)
        return BAD if b is BAD else (b,)

    def value_schema(self) -> dict[str, Any]:
        pair = _band_schema(self.num)
        return {"oneOf": [pair, {"type": "array", "items": pair, "minItems": 1}]}


# ---------------------------------------------------------------------------
# Radio names
# ---------------------------------------------------------------------------


@dataclass(frozen=True, slots=True, kw_only=True)
class PairField(Field):
    """Two radio names, ``[name-a, name-b]``: ((name, node), (name, node))."""

    kind: ClassVar[str] = "pair"

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        if not isinstance(node, yaml.SequenceNode) or len(node.value) != 2:
            rd.add(
                node, path, f"expected two radio names, got {_count(node)} (allowed: [name-a, name-b])"
            )
            return BAD
        a = rd.text(node.value[0], f"{path}[0]", name=True)
        b = rd.text(node.value[1], f"{path}[1]", name=True)
        if a is BAD or b is BAD:
            return BAD
        return ((a, node.value[0]), (b, node.value[1]))

    def value_schema(self) -> dict[str, Any]:
        return {
            "type": "array",
            "items": {"type": "string", "pattern": NAME_PATTERN},
            "minItems": 2,
            "maxItems": 2,
        }


@dataclass(frozen=True, slots=True, kw_only=True)
class NamesField(Field):
    """A non-empty list of radio names: a tuple of (name, node)."""

    kind: ClassVar[str] = "names"

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        if not isinstance(node, yaml.SequenceNode) or not node.value:
            rd.add(node, path, f"expected a list of radio names, got {_count(node)} "
                   "(allowed: e.g. [run-a, mult-b])")  # fmt: skip
            return BAD
        got = [rd.text(v, f"{path}[{i}]", name=True) for i, v in enumerate(node.value)]
        if any(g is BAD for g in got):
            return BAD
        return tuple(zip(got, node.value, strict=True))

    def value_schema(self) -> dict[str, Any]:
        return {"type": "array", "items": {"type": "string", "pattern": NAME_PATTERN}, "minItems": 1}


# ---------------------------------------------------------------------------
# Tables of two numbers
# ---------------------------------------------------------------------------


@dataclass(frozen=True, slots=True, kw_only=True)
class TableField(Field):
    """Rows of two numbers, rising in the first.

    ``cols`` names the two columns and their ranges; ``None`` is the cable loss table
    (``[freq_mhz, loss_db_per_100m]``, which may be empty and words its problems so).
    """

    kind: ClassVar[str] = "table"
    cols: tuple[tuple[str, Num], tuple[str, Num]] | None = None

    def read(self, rd: Reader, node: yaml.Node, path: str) -> Any:
        if self.cols is not None:
            return self._rows(rd, node, path, self.cols)
        if not isinstance(node, yaml.SequenceNode):
            rd.add(
                node,
                path,
                f"expected a list of [freq_mhz, loss_db_per_100m] pairs, got {_kind(node)} "
                "(allowed: e.g. [[10, 2.0], [100, 6.6]])",
            )
            return BAD
        out: list[tuple[float, float]] = []
        ok = True
        last: float | None = None
        for i, row in enumerate(node.value):
            rpath = f"{path}[{i}]"
            if not isinstance(row, yaml.SequenceNode) or len(row.value) != 2:
                rd.add(
                    row,
                    rpath,
                    f"expected [freq_mhz, loss_db_per_100m], got {_count(row)} "
                    "(allowed: e.g. [100, 6.6])",
                )
                ok = False
                continue
            f = rd.number(row.value[0], TABLE_FREQ, f"{rpath}[0]")
            loss = rd.number(row.value[1], TABLE_LOSS, f"{rpath}[1]")
            if f is BAD or loss is BAD:
                ok = False
                continue
            if last is not None and f <= last:
                rd.add(
                    row,
                    rpath,
                    f"frequency {f:g} MHz does not rise above {last:g} MHz "
                    "(allowed: rows in rising frequency, each once)",
                )
                ok = False
            last = f
            out.append((f, loss))
        return tuple(out) if ok else BAD

    @staticmethod
    def _rows(rd: Reader, node: yaml.Node, path: str, cols) -> Any:  # noqa: ANN001
        """A table of [x, y] rows with x rising (each column's range in ``cols``)."""
        (xn, xnum), (yn, ynum) = cols
        form = f"[{xn}, {yn}]"
        if not isinstance(node, yaml.SequenceNode) or not node.value:
            rd.add(node, path, f"expected a list of {form} rows, got {_count(node)} "
                   f"(allowed: at least one row, e.g. [[{xnum.lo:g}, 0]])")  # fmt: skip
            return BAD
        out: list[tuple[float, float]] = []
        ok = True
        last: float | None = None
        for i, row in enumerate(node.value):
            rpath = f"{path}[{i}]"
            if not isinstance(row, yaml.SequenceNode) or len(row.value) != 2:
                rd.add(row, rpath, f"expected {form}, got {_count(row)} (allowed: two numbers)")
                ok = False
                continue
            x = rd.number(row.value[0], xnum, f"{rpath}[0]")
            y = rd.number(row.value[1], ynum, f"{rpath}[1]")
            if x is BAD or y is BAD:
                ok = False
                continue
            if last is not None and x <= last:
                rd.add(row, rpath, f"{xn} {x:g} does not rise above {last:g} "
                       "(allowed: rows in rising order, each once)")  # fmt: skip
                ok = False
            last = x
            out.append((x, y))
        return tuple(out) if ok else BAD

    def value_schema(self) -> dict[str, Any]:
        xnum, ynum = (TABLE_FREQ, TABLE_LOSS) if self.cols is None else (self.cols[0][1], self.cols[1][1])
        row = {
            "type": "array",
            "prefixItems": [xnum.schema(), ynum.schema()],
            "minItems": 2,
            "maxItems": 2,
        }
        s: dict[str, Any] = {"type": "array", "items": row}
        if self.cols is not None:
            s["minItems"] = 1
        return s
