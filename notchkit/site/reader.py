"""The reader walk: a composed node tree checked against :data:`~notchkit.site.sections.SECTIONS`.

:class:`Reader` visits every mapping of the file, refuses unknown, duplicate and
missing keys (saying where a misplaced key belongs), hands each value to its
field kind (:mod:`notchkit.site.fields`) and collects every problem with its
position, so one run reports them all. It also reads the two scalars every kind
is made of: numbers (with range, units of length, Hz/kHz hints) and text.
"""

from __future__ import annotations

import difflib
import math
from typing import Any

import yaml

from notchkit.errors import Problem
from notchkit.site.fields import (
    _LENGTH_RE,
    _LENGTH_UNITS_M,
    _NAME_ALLOWED,
    _NAME_RE,
    BAD,
    MAX_NUMBER_CHARS,
    Field,
    Num,
    _length_number,
)
from notchkit.site.sections import _ALLOWED_KEYS_TEXT, _MOVED, SECTIONS
from notchkit.site.yamlread import (
    _BOOL,
    _FLOAT,
    _INT,
    _MERGE,
    _NULL,
    _PLAIN_TAGS,
    _STR,
    MAX_DEPTH,
    MAX_NODES,
    _kind,
    _show_tag,
    _shown,
    mark,
)
from notchkit.textsafe import describe_char, unsafe_char

_CON = yaml.constructor.SafeConstructor()


class Stop(Exception):
    """The walk cannot go on (an alias bomb or a self-referring alias was reported)."""


def _join(path: str, key: str) -> str:
    """A dotted field path: ``radios[0]`` + ``name`` -> ``radios[0].name``."""
    return f"{path}.{key}" if path else key


class Reader:
    """Walks a composed node tree against :data:`SECTIONS`, collecting problems."""

    def __init__(self, path: str):
        self.path = path
        self.problems: list[Problem] = []
        self.bad_nodes: set[int] = set()
        self.cable_refs: list[tuple[str, yaml.Node, str]] = []

    def add(self, node: yaml.Node | None, field: str, message: str) -> None:
        line, col = mark(node)
        self.problems.append(Problem(self.path, line, col, field, message))

    # -- whole-tree checks ------------------------------------------------

    def prepass(self, root: yaml.Node) -> None:
        """Refuse alias bombs and self-referring aliases before the walk."""
        visits = 0
        stack: list[tuple[yaml.Node, int]] = [(root, 1)]
        while stack:
            node, depth = stack.pop()
            visits += 1
            if visits > MAX_NODES:
                self.add(
                    node,
                    "",
                    f"more than {MAX_NODES} values, counting each repeat through an alias "
                    "(a site file has a few hundred; use fewer or no aliases)",
                )
                raise Stop
            if depth > MAX_DEPTH:
                self.add(
                    node,
                    "",
                    f"nested deeper than {MAX_DEPTH} levels counting through aliases "
                    "(an alias may refer to itself; a site file nests at most 6)",
                )
                raise Stop
            if isinstance(node, yaml.MappingNode):
                for k, v in node.value:
                    stack.append((k, depth + 1))
                    stack.append((v, depth + 1))
            elif isinstance(node, yaml.SequenceNode):
                stack.extend((item, depth + 1) for item in node.value)

    def tag_bad(self, node: yaml.Node, path: str) -> bool:
        """True (and reported once) when a node carries a tag other than plain YAML's."""
        if node.tag in _PLAIN_TAGS:
            return False
        if id(node) not in self.bad_nodes:
            self.bad_nodes.add(id(node))
            self.add(
                node,
                path,
                f"tag {_show_tag(node.tag)} is not allowed "
                "(plain YAML only: text, numbers, lists and mappings)",
            )
        return True

    # -- sections ---------------------------------------------------------

    def section(self, node: yaml.Node, name: str, path: str) -> dict[str, tuple[Any, yaml.Node]] | None:
        if self.tag_bad(node, path):
            return None
        spec = SECTIONS[name]
        if not isinstance(node, yaml.MappingNode):
            what = f"{_kind(node)} {_shown(node)}" if isinstance(node, yaml.ScalarNode) else _kind(node)
            where = "must be" if path else "the file must be"
            self.add(
                node,
                path,
                f"{where} a mapping of keys, got {what} (allowed keys: {_ALLOWED_KEYS_TEXT[name]})",
            )
            return None
        out: dict[str, tuple[Any, yaml.Node]] = {}
        first: dict[str, yaml.Node] = {}
        for knode, vnode in node.value:
            if knode.tag == _MERGE:
                self.add(knode, path, "merge keys '<<' are not supported (write the keys out in full)")
                continue
            if self.tag_bad(knode, path):
                continue
            if not isinstance(knode, yaml.ScalarNode) or knode.tag not in (_STR, _INT, _FLOAT, _BOOL):
                self.add(knode, path, f"a key must be a plain word, got {_kind(knode)}")
                continue
            key = knode.value
            fpath = _join(path, key)
            if key in first:
                self.add(
                    knode,
                    fpath,
                    f"duplicate key (first given at line {first[key].start_mark.line + 1}; "
                    "give each key once)",
                )
                continue
            first[key] = knode
            fld = spec.get(key)
            if fld is None:
                self.add(knode, fpath, "unknown key " + self._suggest(key, spec, name))
                continue
            value = self.value(vnode, fld, fpath)
            if value is not BAD:
                out[key] = (value, vnode)
        for key, fld in spec.items():
            if fld.required and key not in first:
                self.add(node, _join(path, key), f"missing (required: {fld.doc[:1].lower()}{fld.doc[1:-1]})")
        return out

    @staticmethod
    def _suggest(key: str, spec: dict[str, Field], name: str) -> str:
        moved = _MOVED.get((name, key))
        if moved:
            return f"({moved})"
        close = difflib.get_close_matches(key.lower(), list(spec), n=1, cutoff=0.6)
        if close:
            return f"(did you mean '{close[0]}'?)"
        return f"(allowed: {_ALLOWED_KEYS_TEXT[name]})"

    def value(self, node: yaml.Node, fld: Field, path: str) -> Any:
        """The value of one key, read by its field kind; :data:`BAD` when reported."""
        if self.tag_bad(node, path):
            return BAD
        return fld.read(self, node, path)

    # -- scalars ----------------------------------------------------------

    def number(self, node: yaml.Node, num: Num | None, path: str) -> Any:
        """A number in ``num``'s range (a length may be text with a unit); :data:`BAD` if not."""
        if num is None:  # pragma: no cover - a number field declared without its range
            raise TypeError(f"{path}: number field declared without a Num")
        if self.tag_bad(node, path):
            return BAD
        allowed = num.allowed()
        if num.length_unit_m is not None:
            allowed += " or text with a unit, e.g. '12 ft', '3 1/2 in' (m, cm, mm, ft, in)"
        if not isinstance(node, yaml.ScalarNode):
            self.add(node, path, f"expected a number, got {_kind(node)} (allowed: {allowed})")
            return BAD
        value = self._scalar_number(node, num, path, allowed)
        if value is BAD:
            return BAD
        return self._in_range(node, value, num, path, allowed)

    def _scalar_number(self, node: yaml.ScalarNode, num: Num, path: str, allowed: str) -> Any:
        """The float a scalar node holds (any tag), or :data:`BAD` after a problem."""
        shown = _shown(node)
        if node.tag == _BOOL:
            self.add(
                node,
                path,
                f"{shown} is a boolean, not a number (allowed: {allowed}; YAML reads "
                "yes/no/on/off/true/false as booleans)",
            )
            return BAD
        if node.tag == _NULL:
            self.add(node, path, f"no value given (allowed: {allowed}; remove the key for the default)")
            return BAD
        value: float | None = None
        if node.tag in (_INT, _FLOAT, _STR) and len(node.value.strip()) > MAX_NUMBER_CHARS:
            self.add(node, path, f"{shown} is {len(node.value.strip())} characters long, too long for "
                     f"a number (allowed: {allowed}, written in at most {MAX_NUMBER_CHARS} characters)")
            return BAD
        if node.tag == _INT:
            value = float(_CON.construct_yaml_int(node))
        elif node.tag == _FLOAT:
            value = _CON.construct_yaml_float(node)
        elif node.tag == _STR:
            match = _LENGTH_RE.match(node.value) if num.length_unit_m is not None else None
            if match:
                value = _length_number(match.group(1))
                if value is not None and num.length_unit_m is not None:
                    value *= _LENGTH_UNITS_M[match.group(2)] / num.length_unit_m
            elif not node.style:
                try:  # plain 1e12 or nan: YAML 1.1 reads these as text; read them as numbers
                    value = float(node.value)
                except ValueError:
                    value = None
            if value is None:
                self.add(node, path, f"{shown} is text, not a number (allowed: {allowed})")
                return BAD
        if value is None:  # pragma: no cover - every tag handled above
            return BAD
        return value

    def _in_range(self, node: yaml.ScalarNode, value: float, num: Num, path: str, allowed: str) -> Any:
        """``value`` when finite, whole where it must be and in range; else :data:`BAD`."""
        shown = _shown(node)
        if not math.isfinite(value):
            self.add(node, path, f"{shown} is not a finite number (allowed: {allowed})")
            return BAD
        if num.integer and value != int(value):
            self.add(node, path, f"{shown} is not a whole number (allowed: {allowed})")
            return BAD
        if not num.contains(value):
            if value <= 0 < num.lo or (value <= 0 and num.lo == 0 and num.lo_open):
                what = f"{shown} must be greater than 0"
            elif value < num.lo or (value == num.lo and num.lo_open):
                what = f"{shown} is too low"
            else:
                what = f"{shown} is too high"
            hint = ""
            if num.unit == "MHz" and value > num.hi and num.contains(value / 1e6):
                hint = f"; {shown} looks like Hz: give MHz, e.g. {value / 1e6:g}"
            elif num.unit == "MHz" and value > num.hi and num.contains(value / 1e3):
                hint = f"; {shown} looks like kHz: give MHz, e.g. {value / 1e3:g}"
            self.add(node, path, f"{what} (allowed: {allowed}{hint})")
            return BAD
        return int(value) if num.integer else value

    def text(self, node: yaml.Node, path: str, *, name: bool) -> Any:
        if self.tag_bad(node, path):
            return BAD
        if not isinstance(node, yaml.ScalarNode):
            self.add(node, path, f"expected text, got {_kind(node)}")
            return BAD
        if node.tag == _NULL:
            self.add(node, path, "no value given (allowed: text)")
            return BAD
        if node.tag != _STR:
            self.add(
                node,
                path,
                f"{node.value} is {_kind(node)}, not text (put it in quotes: '{node.value}')",
            )
            return BAD
        value = node.value.strip()
        bad = unsafe_char(value)
        if bad is not None and not name:
            self.add(node, path, f"{describe_char(bad)} is not allowed in text (remove it; a YAML "
                     "escape such as \\e or \\u202e in double quotes makes one; allowed: printable text)")
            return BAD
        if name and not _NAME_RE.match(value):
            self.add(node, path, f"{_shown(node)} is not a valid name (allowed: {_NAME_ALLOWED})")
            return BAD
        if not value:
            self.add(node, path, "empty text (allowed: non-empty text)")
            return BAD
        if len(value) > 200:
            self.add(node, path, f"text is {len(value)} characters long (allowed: at most 200)")
            return BAD
        return value
