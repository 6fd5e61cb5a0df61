"""Site files: the YAML a user writes, read into immutable value objects.

``load_site(path)`` is the only way in; every problem in the file is reported at
once as ``FILE:LINE:COL: field.path: what is wrong (what is allowed)``.
"""

from __future__ import annotations

from notchkit.site.loader import check, load_site, site_schema
from notchkit.site.model import (
    Allowances,
    Antenna,
    Band,
    CableDef,
    Coupling,
    Feedline,
    Limits,
    Radio,
    Receive,
    Site,
    Transmit,
)

__all__ = [
    "load_site",
    "check",
    "site_schema",
    "Site",
    "Radio",
    "Transmit",
    "Receive",
    "Band",
    "Antenna",
    "Feedline",
    "Coupling",
    "Limits",
    "Allowances",
    "CableDef",
]
