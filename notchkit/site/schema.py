"""The JSON Schema of a site file, built from the declaration of its keys.

Each field kind describes its own schema (:meth:`notchkit.site.fields.Field.schema`);
this module puts the sections together. ``docs/site-schema.json`` is
:func:`site_schema` written with ``json.dumps(..., indent=2)`` (a test keeps the two equal).
"""

from __future__ import annotations

from typing import Any

from notchkit.site.sections import SECTIONS


def _section_schema(name: str) -> dict[str, Any]:
    spec = SECTIONS[name]
    s: dict[str, Any] = {
        "type": "object",
        "properties": {k: f.schema() for k, f in spec.items()},
        "additionalProperties": False,
    }
    required = [k for k, f in spec.items() if f.required]
    if required:
        s["required"] = required
    return s


def site_schema() -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of a site file, built from :data:`~notchkit.site.sections.SECTIONS`.

    ``docs/site-schema.json`` is this, written with ``json.dumps(..., indent=2)``;
    regenerate it with::

        python -c "import json, notchkit.site as s; print(json.dumps(s.site_schema(), indent=2))" \\
            > docs/site-schema.json

    The schema cannot say everything the loader checks (unique names, known
    cables, lo < hi, exactly one of freq_mhz / band_mhz).
    """
    root = _section_schema("site")
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": "https://notchkit.invalid/site-schema.json",
        "title": "notchkit site file",
        "description": "A radio site: transmitters, receivers and transceivers sharing one place.",
        **root,
        "$defs": {name: _section_schema(name) for name in SECTIONS if name != "site"},
    }

