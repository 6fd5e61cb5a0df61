"""The published schema and format page stay in step with the loader and the model.

- docs/site-schema.json is exactly what the loader's declaration produces, and
  its properties, section by section, are the keys the loader accepts;
- every example site, and the complete example in docs/site-format.md, is valid
  under the schema, checked by a small validator written here from the JSON
  Schema 2020-12 validation vocabulary (json-schema.org, "JSON Schema
  Validation", sections 6.1-6.5: type, minimum, exclusiveMinimum, maximum,
  minLength, maxLength, pattern, minItems, maxItems, required,
  additionalProperties; core sections 10.3.1-10.3.2: prefixItems, items,
  properties; 10.2.1.3: oneOf); in JSON Schema a boolean is not a number;
- docs/site-format.md documents every key with an example, and the defaults it
  states are the model's.
"""

from __future__ import annotations

import dataclasses
import json
import math
import re
from pathlib import Path
from typing import Any

import pytest
import yaml

from notchkit.errors import SiteError
from notchkit.site import load_site, model
from notchkit.site.loader import SECTIONS, site_schema

ROOT = Path(__file__).resolve().parent.parent
SCHEMA_FILE = ROOT / "docs" / "site-schema.json"
FORMAT_FILE = ROOT / "docs" / "site-format.md"


def _schema() -> dict[str, Any]:
    return json.loads(SCHEMA_FILE.read_text(encoding="utf-8"))


# ---------------------------------------------------------------- a small validator


def validate(value: Any, schema: dict[str, Any], root: dict[str, Any], path: str = "$") -> list[str]:
    """Errors of ``value`` under ``schema`` (the subset of JSON Schema 2020-12 the file uses)."""
    if "$ref" in schema:
        name = schema["$ref"].removeprefix("#/$defs/")
        return validate(value, root["$defs"][name], root, path)
    if "oneOf" in schema:
        passing = [s for s in schema["oneOf"] if not validate(value, s, root, path)]
        return [] if len(passing) == 1 else [f"{path}: matches {len(passing)} of oneOf"]
    errors: list[str] = []
    kind = schema.get("type")
    checks = {
        "object": lambda v: isinstance(v, dict),
        "array": lambda v: isinstance(v, list),
        "string": lambda v: isinstance(v, str),
        "number": lambda v: isinstance(v, int | float) and not isinstance(v, bool),
        "integer": lambda v: isinstance(v, int) and not isinstance(v, bool),
    }
    if kind is not None and not checks[kind](value):
        return [f"{path}: {value!r} is not of type {kind}"]
    if kind in ("number", "integer"):
        if "minimum" in schema and value < schema["minimum"]:
            errors.append(f"{path}: {value} < minimum")
        if "exclusiveMinimum" in schema and value <= schema["exclusiveMinimum"]:
            errors.append(f"{path}: {value} <= exclusiveMinimum")
        if "maximum" in schema and value > schema["maximum"]:
            errors.append(f"{path}: {value} > maximum")
    if kind == "string":
        if "enum" in schema and value not in schema["enum"]:
            errors.append(f"{path}: {value!r} is not one of the allowed words")
        if len(value) < schema.get("minLength", 0) or len(value) > schema.get("maxLength", 1 << 30):
            errors.append(f"{path}: length {len(value)} out of bounds")
        if "pattern" in schema and not re.search(schema["pattern"], value):
            errors.append(f"{path}: {value!r} does not match pattern")
    if kind == "array":
        if not schema.get("minItems", 0) <= len(value) <= schema.get("maxItems", 1 << 30):
            errors.append(f"{path}: {len(value)} items out of bounds")
        prefix = schema.get("prefixItems", [])
        for i, item in enumerate(value):
            sub = prefix[i] if i < len(prefix) else schema.get("items")
            if sub is not None:
                errors += validate(item, sub, root, f"{path}[{i}]")
    if kind == "object":
        props = schema.get("properties", {})
        for key in schema.get("required", []):
            if key not in value:
                errors.append(f"{path}: missing {key}")
        for key, item in value.items():
            if key in props:
                errors += validate(item, props[key], root, f"{path}.{key}")
            elif schema.get("additionalProperties") is False:
                errors.append(f"{path}: unknown key {key}")
    return errors


def _load_file(folder: Path) -> None:
    """The antenna table the complete example names (docs/hardware.md: freq_mhz r_ohm x_ohm)."""
    (folder / "paging-antenna.txt").write_text("140 40 -20\n160 60 20\n", encoding="utf-8")


def _complete_example() -> str:
    text = FORMAT_FILE.read_text(encoding="utf-8")
    section = text.split("## Complete example", 1)[1]
    return section.split("```yaml\n", 1)[1].split("```", 1)[0]


EXAMPLES = sorted((ROOT / "sites").glob("*.yaml"))


# ---------------------------------------------------------------- schema == loader


def test_published_schema_is_what_the_loader_declares():
    assert _schema() == site_schema(), (
        "docs/site-schema.json is stale; regenerate it as the site_schema() docstring says"
    )


def test_schema_properties_are_the_keys_the_loader_accepts():
    schema = _schema()
    assert set(schema["properties"]) == set(SECTIONS["site"])
    assert set(schema["$defs"]) == set(SECTIONS) - {"site"}
    for name, fields in SECTIONS.items():
        node = schema if name == "site" else schema["$defs"][name]
        assert set(node["properties"]) == set(fields), name
        assert set(node.get("required", [])) == {k for k, f in fields.items() if f.required}, name
        assert node["additionalProperties"] is False


def _add_extra_key(data: Any, section: str, paths: list[str], path: str = "") -> None:
    """Put an unknown key into every mapping of every section, noting the field paths."""
    if not isinstance(data, dict):
        return
    for key, value in list(data.items()):
        fld = SECTIONS[section].get(key)
        sub = f"{path}.{key}" if path else key
        if fld is not None and fld.kind == "section":
            _add_extra_key(value, fld.section, paths, sub)
        elif fld is not None and fld.kind == "list":
            for i, item in enumerate(value):
                _add_extra_key(item, fld.section, paths, f"{sub}[{i}]")
    data["zz_extra"] = 1
    paths.append(f"{path}.zz_extra" if path else "zz_extra")


def test_loader_refuses_every_key_outside_the_schema(tmp_path):
    data = yaml.safe_load(_complete_example())
    paths: list[str] = []
    _add_extra_key(data, "site", paths)
    _load_file(tmp_path)
    _write_preselector(tmp_path)
    p = tmp_path / "x.yaml"
    p.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    with pytest.raises(SiteError) as info:
        load_site(p)
    fields = sorted(pr.field for pr in info.value.problems)
    assert fields == sorted(paths)
    assert all(pr.message.startswith("unknown key") for pr in info.value.problems)
    assert len(paths) > len(SECTIONS)


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_example_sites_are_valid_under_the_schema(path):
    schema = _schema()
    data = yaml.safe_load(path.read_text(encoding="utf-8"))
    assert validate(data, schema, schema) == []


def test_the_validator_can_fail():
    schema = _schema()
    bad = {"site": "x", "transmitters": [{"name": "a", "freq_mhz": True, "power_w": True, "colour": 1}]}
    errors = validate(bad, schema, schema)
    assert "$.transmitters[0].power_w: True is not of type number" in errors
    # a frequency is one number or a list of channels: a boolean is neither
    assert "$.transmitters[0].freq_mhz: matches 0 of oneOf" in errors
    assert "$.transmitters[0]: unknown key colour" in errors
    # a receiver class is one of the documented words
    errors = validate({"site": "x", "receivers": [{"name": "r", "freq_mhz": 5, "receiver_class": "hf-rig"}]},
                      schema, schema)  # fmt: skip
    assert errors == ["$.receivers[0].receiver_class: 'hf-rig' is not one of the allowed words"]
    assert validate({"site": "x", "limits": {"max_swr": 1.0}}, schema, schema) == [
        "$.limits.max_swr: 1.0 <= exclusiveMinimum"
    ]
    assert validate({"allowances": {"tee_allowance_m": "3 furlongs"}}, schema, schema) == [
        "$: missing site",
        "$.allowances.tee_allowance_m: matches 0 of oneOf",
    ]


# ---------------------------------------------------------------- the format page


def _keys_used(data: Any, section: str, used: dict[str, set[str]]) -> None:
    """Record which keys the YAML uses in each section of SECTIONS."""
    if not isinstance(data, dict):
        return
    used.setdefault(section, set()).update(data)
    for key, value in data.items():
        fld = SECTIONS[section].get(key)
        if fld is None:
            continue
        if fld.kind == "section":
            _keys_used(value, fld.section, used)
        elif fld.kind == "list":
            for item in value:
                _keys_used(item, fld.section, used)


def _write_preselector(folder: Path) -> None:
    """The measured .s2p the complete example names: a series-LC band-pass two-port built
    with scikit-rf's own media (its -20 log10 |S21| is what the loader reads)."""
    import skrf

    freq = skrf.Frequency(300, 700, 81, unit="MHz")
    line = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=50)
    f0 = 453.5e6
    l_h = 2e-6
    c_f = 1.0 / ((2 * math.pi * f0) ** 2 * l_h)
    ntw = line.inductor(l_h) ** line.capacitor(c_f)
    ntw.write_touchstone(str(folder / "presel"))


def test_complete_example_loads_and_uses_every_key(tmp_path):
    text = _complete_example()
    _load_file(tmp_path)
    p = tmp_path / "complete.yaml"
    p.write_text(text, encoding="utf-8")
    _write_preselector(tmp_path)
    site = load_site(p)
    assert site.name
    schema = _schema()
    data = yaml.safe_load(text)
    assert validate(data, schema, schema) == []
    used: dict[str, set[str]] = {}
    _keys_used(data, "site", used)
    for name, fields in SECTIONS.items():
        assert used.get(name, set()) == set(fields), f"complete example lacks keys of {name}"


def _doc_rows() -> dict[str, dict[str, list[str]]]:
    """{section heading: {key: [meaning, value, default, example]}} from the key tables."""
    rows: dict[str, dict[str, list[str]]] = {}
    heading = ""
    for line in FORMAT_FILE.read_text(encoding="utf-8").splitlines():
        if line.startswith("### "):
            heading = line[4:]
            rows[heading] = {}
        m = re.match(r"^\| `([a-z0-9_]+)` \|(.*)\|$", line)
        if m and heading:
            rows[heading][m.group(1)] = [c.strip() for c in m.group(2).split(" | ")]
    return rows


# Where each section's defaults live in the model (the single source of defaults).
_MODEL = {
    "site": model.Site,
    "transmitter": model.Transmit,
    "receiver": model.Receive,
    "transceiver": model.Transmit,
    "tx": model.Transmit,
    "rx": model.Receive,
    "antenna": model.Antenna,
    "feedline": model.Feedline,
    "coupling": model.Coupling,
    "installed": model.InstalledFilter,
    "scenario": model.Scenario,
    "limits": model.Limits,
    "allowances": model.Allowances,
    "cable": model.CableDef,
    "hardware": model.HardwareSettings,
    "load": model.RadioLoad,
}


def _heading_for(section: str, rows: dict[str, dict[str, list[str]]]) -> str:
    wanted = {
        "site": "Top level",
        "transmitter": "`transmitters:`",
        "receiver": "`receivers:`",
        "transceiver": "`transceivers:`",
        "tx": "`tx:`",
        "rx": "`rx:`",
        "antenna": "`antenna:`",
        "feedline": "`feedline:`",
        "coupling": "`couplings:`",
        "installed": "`installed:`",
        "scenario": "`scenarios:`",
        "limits": "`limits:`",
        "allowances": "`allowances:`",
        "cable": "`cables:`",
        "hardware": "`hardware:`",
        "load": "`load:`",
    }[section]
    (heading,) = [h for h in rows if wanted in h]
    return heading


def test_format_page_documents_every_key_with_an_example():
    rows = _doc_rows()
    for section, fields in SECTIONS.items():
        table = rows[_heading_for(section, rows)]
        assert set(table) == set(fields), section
        for key, cells in table.items():
            example = cells[-1].strip("`")
            assert example.startswith(f"{key}:"), (section, key)
            # the example is valid YAML for that key
            assert key in yaml.safe_load(example.split("  or  ")[0]), (section, key)


def test_format_page_defaults_are_the_models():
    rows = _doc_rows()
    checked = 0
    for section, fields in SECTIONS.items():
        table = rows[_heading_for(section, rows)]
        model_defaults = {
            f.name: f.default
            for f in dataclasses.fields(_MODEL[section])
            if f.default is not dataclasses.MISSING
        }
        for key, cells in table.items():
            stated = cells[-2]
            if fields[key].required:
                assert stated == "required", (section, key)
                continue
            if key == "cable" and section == "site":
                assert stated == f"`{model.DEFAULT_CABLE}`"
                checked += 1
            elif stated == "empty":
                assert model_defaults[key] == "", (section, key)
                checked += 1
            elif key in model_defaults and stated.startswith("`"):
                assert yaml.safe_load(stated.strip("`")) == model_defaults[key], (section, key)
                checked += 1
            elif key in model_defaults and model_defaults[key] is None:
                assert stated == "-", (section, key)
    assert checked >= 15
