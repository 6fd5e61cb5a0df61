"""Safe reading of a site file: the bytes, the YAML node tree and the positions of its nodes.

The file is read through :func:`notchkit.bounded.read_regular` and refused over
:data:`MAX_FILE_BYTES` before it is parsed. PyYAML's safe loader builds only the
node tree (``yaml.compose``), never Python objects; nesting deeper than
:data:`MAX_DEPTH` and more than :data:`MAX_NODES` values are refused while it is
built, on the libyaml path and the pure-Python one alike. Every problem here is a
:class:`~notchkit.errors.SiteError` with the 1-based line and column PyYAML marks.

The helpers at the end describe a node for a problem line ("a mapping", "text
'abc'"); the reader and the field kinds share them.
"""

from __future__ import annotations

import yaml

from notchkit.errors import Problem, SiteError

MAX_FILE_BYTES = 2 * 1024 * 1024
"""Largest site file read, in bytes (2 MiB); a real site file is a few kB."""
MAX_DEPTH = 32
"""Deepest nesting of lists and mappings accepted (a site file needs 5)."""
MAX_NODES = 20_000
"""Most values visited, counting each repeat through an alias."""

_YAML = "tag:yaml.org,2002:"
_STR, _INT, _FLOAT, _BOOL, _NULL = (_YAML + t for t in ("str", "int", "float", "bool", "null"))
_MAP, _SEQ = _YAML + "map", _YAML + "seq"
_MERGE = _YAML + "merge"
_PLAIN_TAGS = frozenset({_STR, _INT, _FLOAT, _BOOL, _NULL, _MAP, _SEQ})


class _Limit(Exception):
    """The file passes a safety limit at ``mark``: too deep or too many values."""

    def __init__(self, mark: yaml.Mark, message: str):
        self.mark = mark
        self.message = message


_TOO_DEEP = f"nested deeper than {MAX_DEPTH} levels (a site file nests at most 6)"
_TOO_MANY = f"more than {MAX_NODES} values in the file (a site file has a few hundred)"


class _Loader(yaml.SafeLoader):
    """The safe loader, refusing deep nesting (compose recurses) and too many values."""

    def __init__(self, stream: str):
        super().__init__(stream)
        self._depth = 0
        self._nodes = 0

    def compose_node(self, parent, index):  # noqa: ANN001 - PyYAML's signature
        self._depth += 1
        self._nodes += 1
        try:
            if self._depth > MAX_DEPTH:
                raise _Limit(self.peek_event().start_mark, _TOO_DEEP)
            if self._nodes > MAX_NODES:
                raise _Limit(self.peek_event().start_mark, _TOO_MANY)
            return super().compose_node(parent, index)
        finally:
            self._depth -= 1


def _line_col(text: str, index: int) -> tuple[int, int]:
    """1-based line and column of a character index in ``text``."""
    line = text.count("\n", 0, index) + 1
    col = index - (text.rfind("\n", 0, index) + 1) + 1
    return line, col


def _read_text(path: str) -> str:
    def fail(line: int, col: int, msg: str) -> SiteError:
        return SiteError([Problem(path, line, col, "", msg)])

    from notchkit.bounded import ReadRefused, read_regular

    try:
        data = read_regular(path, MAX_FILE_BYTES)
    except ReadRefused as exc:
        msg = {
            "missing": "no such file (give the path of an existing .yaml site file)",
            "directory": "is a directory, not a site file (give the path of a .yaml file)",
            "special": f"{exc.reason} (give the path of a .yaml site file)",
            "too_big": _too_big(exc.size),
            "denied": "permission denied (the site file must be readable)",
        }.get(exc.kind, f"{exc.reason} (give a readable site file)")
        raise fail(0, 0, msg) from None
    if len(data) > MAX_FILE_BYTES:
        raise fail(0, 0, _too_big(len(data)))
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        head = data[: exc.start]
        line = head.count(b"\n") + 1
        line_start = head.rfind(b"\n") + 1
        col = len(head[line_start:].decode("utf-8", errors="replace")) + 1
        byte = data[exc.start]
        raise fail(
            line,
            col,
            f"byte 0x{byte:02x} at offset {exc.start} is not UTF-8 text "
            "(save the file as UTF-8)",
        ) from None


def _too_big(size: int) -> str:
    return (
        f"file is {size} bytes, larger than the {MAX_FILE_BYTES} byte limit "
        "(a site file is a few kB; is this the right file?)"
    )


def _compose(path: str, text: str) -> yaml.Node | None:
    """The node tree, with libyaml's speed where it is installed.

    libyaml's composer recurses in C, so its event stream (which does not) is
    first checked for depth and size. A syntax problem on that path goes to
    PyYAML's own loader, whose positions and wording every problem line uses.
    """
    if getattr(yaml, "__with_libyaml__", False):
        try:
            _check_events(text)
            return yaml.compose(text, Loader=yaml.CSafeLoader)
        except yaml.YAMLError:
            pass
        except _Limit as exc:
            raise _limit_error(path, exc) from None
    return _compose_slow(path, text)


def _check_events(text: str) -> None:
    """Count nodes and nesting in libyaml's event stream, as :class:`_Loader` does."""
    depth = nodes = 0
    for event in yaml.parse(text, Loader=yaml.CSafeLoader):
        if isinstance(event, yaml.CollectionEndEvent):
            depth -= 1
            continue
        if not isinstance(event, yaml.NodeEvent):
            continue
        nodes += 1
        if depth + 1 > MAX_DEPTH:
            raise _Limit(event.start_mark, _TOO_DEEP)
        if nodes > MAX_NODES:
            raise _Limit(event.start_mark, _TOO_MANY)
        if isinstance(event, yaml.CollectionStartEvent):
            depth += 1


def _limit_error(path: str, exc: _Limit) -> SiteError:
    return SiteError([Problem(path, exc.mark.line + 1, exc.mark.column + 1, "", exc.message)])


def _compose_slow(path: str, text: str) -> yaml.Node | None:
    try:
        return yaml.compose(text, Loader=_Loader)
    except _Limit as exc:
        raise _limit_error(path, exc) from None
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line, col = (mark.line + 1, mark.column + 1) if mark else (0, 0)
        what = exc.problem or "cannot be parsed"
        context = ""
        if exc.context:
            context = exc.context
            if exc.context_mark is not None and exc.context_mark.line != getattr(mark, "line", None):
                context += f" from line {exc.context_mark.line + 1}"
            context += "; "
        hint = "check the indentation, quotes and brackets"
        if "'\\t'" in what:
            hint = "indent with spaces, never tabs"
        elif "expected a single document" in context:
            what, context = "a second document starts here", ""
            hint = "one site per file; split the file at the '---'"
        raise SiteError([Problem(path, line, col, "", f"YAML syntax: {what} ({context}{hint})")]) from None
    except yaml.reader.ReaderError as exc:
        line, col = _line_col(text, exc.position)
        raise SiteError(
            [
                Problem(
                    path,
                    line,
                    col,
                    "",
                    f"control character U+{exc.character:04X} is not allowed in YAML "
                    "(remove it; only printable text, tabs and newlines)",
                )
            ]
        ) from None
    except yaml.YAMLError as exc:  # pragma: no cover - any other PyYAML complaint
        raise SiteError([Problem(path, 0, 0, "", f"YAML: {exc} (check the file)")]) from None


# ---------------------------------------------------------------------------
# Walking the nodes


def read_tree(path: str) -> yaml.Node | None:
    """The node tree of the site file at ``path`` (``None`` for an empty file).

    Raises :class:`~notchkit.errors.SiteError` (one problem) when the file cannot be
    read, is too big, is not UTF-8, passes a nesting or size limit or is not YAML.
    """
    return _compose(path, _read_text(path))


# ---------------------------------------------------------------------------
# Describing a node in a problem line
# ---------------------------------------------------------------------------


def mark(node: yaml.Node | None) -> tuple[int, int]:
    """1-based line and column of a node's start; (0, 0) for no node."""
    return (node.start_mark.line + 1, node.start_mark.column + 1) if node else (0, 0)


def _kind(node: yaml.Node) -> str:
    if isinstance(node, yaml.MappingNode):
        return "a mapping"
    if isinstance(node, yaml.SequenceNode):
        return "a list"
    return {
        _STR: "text",
        _INT: "a number",
        _FLOAT: "a number",
        _BOOL: "a boolean",
        _NULL: "nothing",
    }.get(node.tag, f"a {_show_tag(node.tag)} value")


def _show_tag(tag: str) -> str:
    return "!!" + tag[len(_YAML) :] if tag.startswith(_YAML) else tag


def _shown(node: yaml.ScalarNode) -> str:
    """A scalar as written: text quoted, numbers and plain words like 1e12 as they are."""
    text = node.value if len(node.value) <= 40 else node.value[:37] + "..."
    if node.tag != _STR:
        return text
    if not node.style and _looks_numeric(node.value):
        return text
    return repr(text)


def _looks_numeric(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True
