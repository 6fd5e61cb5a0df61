"""Library parameter names in error messages shown as the command line's flags.

The library names its parameters (``length_m: ...``); an error marked with the
names it mentions (``exc.params``) is re-raised here with each name replaced by
its flag (``--length-m: ...``). Only the marked names are replaced, and only as
whole words not part of a key path (``cut_length_m`` and ``elements[0].length_m``
stay as they are).
"""

from __future__ import annotations

import re
from collections.abc import Mapping

from notchkit.errors import NotchkitError, SiteError


def with_flags(exc: NotchkitError, flags: Mapping[str, str]) -> NotchkitError:
    """``exc`` with the parameter names it is marked with replaced by ``flags[name]``."""
    params = [p for p in getattr(exc, "params", ()) if p in flags]
    if not params or isinstance(exc, SiteError):
        return exc
    text = str(exc)
    for name in params:
        text = re.sub(rf"(?<![\w.\[/-]){re.escape(name)}(?![\w\]]|\.\w)", flags[name], text)
    try:
        new = type(exc)(text)
    except TypeError:  # an error class with another constructor: keep the original
        return exc
    new.params = ()  # type: ignore[attr-defined]
    return new
