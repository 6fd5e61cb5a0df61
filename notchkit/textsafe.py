"""One sanitiser for every text notchkit shows: terminal lines, HTML, PDF, plots.

A name in a site file (YAML double-quoted escapes such as ``"\\e[2J"``), a file
name given on the command line, or a message quoting either can carry
characters that a terminal or a reader acts on instead of showing: C0 control
characters (ESC starts a terminal escape sequence, CR rewrites the line), DEL,
C1 controls (U+009B is a one-byte CSI on many terminals), Unicode bidi
controls (U+202E turns the rest of a line around, the "Trojan source" trick)
and lone surrogates (which cannot even be encoded as UTF-8 and used to crash
the output with ``UnicodeEncodeError``).

:func:`clean` shows each such character as a visible escape (``\\x1b``,
``\\u202e``) and leaves every other character alone, so ordinary names in any
script (``Überlingen``, ``Ретранслятор``) print as written. The site loader
refuses these characters in names in the first place (with the position);
this is the second line of defence for everything else that is printed: file
names, messages quoting input, warnings from libraries.

References
----------
Unicode Standard Annex #9, *Unicode Bidirectional Algorithm*, table 4
(explicit directional formatting characters); ECMA-48 (ISO/IEC 6429),
section 5 (C0 and C1 control functions, CSI = 0x9B in the 8-bit form).
"""

from __future__ import annotations

import re

BIDI_CONTROLS = frozenset(
    "\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069"
)
"""The bidi formatting characters of UAX #9: ALM, LRM, RLM, LRE, RLE, PDF, LRO,
RLO, LRI, RLI, FSI, PDI."""

_OTHER = "\u2028\u2029\ufeff"
"""Line and paragraph separators (a line break to some terminals and editors)
and the zero-width no-break space (invisible)."""

_UNSAFE_CLASS = (
    "\x00-\x08\x0b-\x1f\x7f-\x9f"  # C0 except TAB and LF, DEL, C1
    + "".join(sorted(BIDI_CONTROLS)) + _OTHER
    + "\ud800-\udfff"  # lone surrogates (never valid in UTF-8)
)
_UNSAFE = re.compile(f"[{_UNSAFE_CLASS}]")
_UNSAFE_ONE_LINE = re.compile(f"[\t\n{_UNSAFE_CLASS}]")


def _escape(m: re.Match[str]) -> str:
    c = ord(m.group(0))
    return f"\\x{c:02x}" if c < 0x100 else f"\\u{c:04x}"


def clean(text: object, *, one_line: bool = False) -> str:
    """``text`` with every control, C1, bidi and surrogate character shown as an escape.

    Parameters
    ----------
    text : object
        Anything; it is converted with ``str``.
    one_line : bool
        Also escape TAB and LF (for a value shown inside one line: a file
        name, a name in a message). Otherwise they are kept, as layout.

    Examples
    --------
    >>> clean("net\\x1b[2J-2m")
    'net\\\\x1b[2J-2m'
    >>> clean("a\\nb", one_line=True)
    'a\\\\nb'
    """
    s = text if isinstance(text, str) else str(text)
    pattern = _UNSAFE_ONE_LINE if one_line else _UNSAFE
    if not pattern.search(s):
        return s
    if one_line:
        s = s.replace("\n", "\\n").replace("\t", "\\t")
    return pattern.sub(_escape, s)


def unsafe_char(text: str) -> str | None:
    """The first character :func:`clean` would escape (TAB and LF included), else ``None``."""
    m = _UNSAFE_ONE_LINE.search(text)
    return m.group(0) if m else None


def describe_char(c: str) -> str:
    """``U+001B`` with what kind of character it is, for a message."""
    o = ord(c)
    if c in BIDI_CONTROLS:
        kind = "bidi control"
    elif 0xD800 <= o <= 0xDFFF:
        kind = "lone surrogate"
    elif 0x80 <= o <= 0x9F:
        kind = "C1 control character"
    elif o < 0x20 or o == 0x7F:
        kind = "control character"
    else:
        kind = "invisible separator"
    return f"{kind} U+{o:04X}"


def shown_path(path: object) -> str:
    """A file name as messages print it: quoted like ``repr`` when it needs escapes, else as is."""
    s = str(path)
    return s if unsafe_char(s) is None else repr(s)


class SafeStream:
    """A text stream wrapper that passes every write through :func:`clean`.

    The command line wraps ``sys.stdout`` and ``sys.stderr`` in it while a
    command runs, so no code path can print a raw escape sequence, a bidi
    override or an unencodable surrogate to the terminal.
    """

    def __init__(self, stream):  # noqa: ANN001 - any text stream
        self._stream = stream

    def write(self, s: str) -> int:
        self._stream.write(clean(s))
        return len(s)

    def write_control(self, s: str) -> int:
        """Write a control sequence the program itself composed (redrawing a progress line)."""
        return self._stream.write(s)

    def writelines(self, lines) -> None:  # noqa: ANN001
        for line in lines:
            self.write(line)

    def __getattr__(self, name: str):  # flush, fileno, isatty, encoding, buffer, ...
        return getattr(self._stream, name)


__all__ = ["BIDI_CONTROLS", "SafeStream", "clean", "describe_char", "shown_path", "unsafe_char"]
