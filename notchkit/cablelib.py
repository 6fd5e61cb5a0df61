"""The cable library files (the shipped one, the user's, a site's), lookup by name, and
the ``notchkit cables`` table. The types are :mod:`notchkit.cables`'s, which re-exports
the public names here (and imports this module at its end).
"""

from __future__ import annotations

import difflib
import os
import re
from collections.abc import Iterable
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

import numpy as np

from notchkit.cablefit import _finite
from notchkit.cables import (
    DEFAULT_AT_MHZ,
    LOSS_UNITS,
    SITE_LIBRARY_NAME,
    USER_LIBRARY_NAME,
    VALID_FREQ_MHZ,
    Cable,
    LossSource,
)
from notchkit.errors import CableError

# ---------------------------------------------------------------- the library


def _normalise(name: str) -> str:
    """Fold a type name for lookup: case, spaces, hyphens and a trailing '/U' ignored."""
    key = re.sub(r"[\s\-_]", "", str(name).upper())
    return re.sub(r"/U$", "", key)


def _value(entry: dict, key: str) -> Any:
    """A YAML figure is either a bare value or ``{value: ..., source: ...}``."""
    item = entry.get(key)
    if isinstance(item, dict):
        return item.get("value")
    return item


_FLOAT_KEYS = ("vf_tolerance", "max_voltage_v", "outer_diameter_mm", "inner_diameter_mm",
               "dielectric_diameter_mm", "cladding_um")
_CITED_KEYS = ("z0_ohm", "velocity_factor", "vf_tolerance", "max_voltage_v", "outer_diameter_mm",
               "inner_diameter_mm", "dielectric_diameter_mm", "dielectric", "centre_conductor",
               "cladding_um", "conductor_diameter_mm", "spacing_mm", "dielectric_er",
               "loss_tangent", "max_power_w")


MEMORY = "from memory (recalled, not re-read; never a test's check value)"


def _cite(source: str, source_names: dict[str, str]) -> str:
    """A source key's citation; every "from memory ..." note becomes one "from memory" entry."""
    source = str(source)
    m = re.fullmatch(r"from memory \((.+)\)", source)
    if m and m.group(1) in source_names:
        return source_names[m.group(1)]
    if source.startswith("from memory"):
        return MEMORY
    return source_names.get(source, source)


def _cable_from_entry(entry: dict, source_names: dict[str, str]) -> Cable:
    name = entry["name"]
    points: list[tuple[float, float]] = []
    cited: list[str] = []
    groups: list[LossSource] = []
    published: list[float] = []
    for table in entry.get("loss", ()):
        if table.get("compare_only"):
            continue
        scale = LOSS_UNITS[table["unit"]]
        pts = tuple(sorted((float(f), float(loss) * scale) for f, loss in table["points"]))
        points.extend(pts)
        if not str(table["source"]).startswith("from memory"):
            published.extend(p[0] for p in pts)
        cited.append(table["source"])
        groups.append(LossSource(source=_cite(table["source"], source_names), points=pts))
    for key in _CITED_KEYS:
        item = entry.get(key)
        if isinstance(item, dict) and "source" in item:
            cited.append(item["source"])
    sources = tuple(dict.fromkeys(_cite(s, source_names) for s in cited))
    memory = tuple(
        key for key in _CITED_KEYS
        if isinstance(entry.get(key), dict)
        and str(entry[key].get("source", "")).startswith("from memory")
    ) + (("loss",) if any(str(t.get("source", "")).startswith("from memory")
                          for t in entry.get("loss", ())) else ())
    extra: dict[str, Any] = {
        key: float(_value(entry, key)) for key in _FLOAT_KEYS if _value(entry, key) is not None
    }
    power = _value(entry, "max_power_w")
    if power:
        extra["max_power_w"] = tuple((float(f), float(w)) for f, w in power)
    common = dict(
        name=name,
        velocity_factor=float(_value(entry, "velocity_factor")),
        dielectric=str(_value(entry, "dielectric") or ""),
        sources=sources,
        notes=str(entry.get("notes", "")),
        aliases=tuple(str(a) for a in entry.get("aliases", ())),
        loss_sources=tuple(groups),
        centre_conductor=str(_value(entry, "centre_conductor") or "copper"),
        published_range_mhz=(min(published), max(published)) if published else None,
        from_memory=memory,
    )
    if entry.get("kind") == "balanced":
        extra.pop("cladding_um", None)
        return Cable.from_geometry(
            conductor_diameter_mm=float(_value(entry, "conductor_diameter_mm")),
            spacing_mm=float(_value(entry, "spacing_mm")),
            dielectric_er=float(_value(entry, "dielectric_er") or 1.0),
            loss_tangent=float(_value(entry, "loss_tangent") or 0.0),
            cladding_um=_value(entry, "cladding_um"),
            conductor_factor=float(_value(entry, "conductor_factor") or 1.0),
            loss_table=sorted(points),
            **common,
            **extra,
        )
    return Cable.from_table(
        z0_ohm=float(_value(entry, "z0_ohm")),
        loss_table=points,
        **common,
        **extra,
    )


def _read_library(text: str, origin: str) -> tuple[Cable, ...]:
    import yaml

    # libyaml's safe loader where PyYAML was built with it: the same document, a tenth of
    # the time (the pure-Python parser took about 50 ms of every command).
    try:
        doc = yaml.load(text, Loader=getattr(yaml, "CSafeLoader", yaml.SafeLoader))
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f"{origin}:{mark.line + 1}:{mark.column + 1}" if mark else origin
        raise CableError(f"{where}: cables: not valid YAML ({getattr(exc, 'problem', exc)})") from None
    if not isinstance(doc, dict) or not isinstance(doc.get("cables"), list):
        raise CableError(f"{origin}: cables: missing (a cable library is a mapping with a "
                         f"'cables:' list and optional 'sources:')")
    source_names = {key: item["cite"] for key, item in (doc.get("sources") or {}).items()
                    if isinstance(item, dict) and "cite" in item}
    out = []
    for i, entry in enumerate(doc["cables"]):
        try:
            out.append(_cable_from_entry(entry, source_names))
        except CableError as exc:
            raise CableError(f"{origin}: cables[{i}]: {exc}") from None
        except (KeyError, TypeError, ValueError) as exc:
            raise CableError(
                f"{origin}: cables[{i}]: missing or malformed field {exc} (each cable needs "
                f"name, z0_ohm, velocity_factor and loss tables of [freq_mhz, loss] points)"
            ) from None
    return tuple(out)


@lru_cache(maxsize=1)
def _load() -> tuple[Cable, ...]:
    text = resources.files("notchkit").joinpath("data/cables.yaml").read_text(encoding="utf-8")
    return _read_library(text, "notchkit/data/cables.yaml")


@lru_cache(maxsize=8)
def _load_file(path: str, mtime_ns: int) -> tuple[Cable, ...]:
    return _read_library(Path(path).read_text(encoding="utf-8"), path)


def load_library_file(path: str | os.PathLike) -> tuple[Cable, ...]:
    """Read a cable library file (same format as ``data/cables.yaml``).

    Raises
    ------
    CableError
        The file cannot be read or a cable in it is malformed (the message names the file).
    """
    p = Path(path)
    try:
        st = p.stat()
    except OSError as exc:
        raise CableError(f"{p}: cannot read the cable library ({exc.strerror})") from None
    return _load_file(str(p), st.st_mtime_ns)


def user_library_path() -> Path:
    """``$XDG_CONFIG_HOME/notchkit/cables.yaml`` (``~/.config/notchkit/cables.yaml`` by default),
    or the file the user's defaults file names (``cables:``, :mod:`notchkit.defaults`)."""
    from notchkit.defaults import config_dir, load_defaults

    chosen = load_defaults().cables
    return chosen if chosen is not None else config_dir() / USER_LIBRARY_NAME


def site_library_path(site_path: str | os.PathLike) -> Path:
    """The cable library kept next to a site file: ``notchkit-cables.yaml`` in its folder."""
    return Path(site_path).resolve().parent / SITE_LIBRARY_NAME


def site_library(site_path: str | os.PathLike | None) -> tuple[Cable, ...]:
    """Cables of the library file next to ``site_path`` (empty when there is none)."""
    if not site_path:
        return ()
    p = site_library_path(site_path)
    return load_library_file(p) if p.is_file() else ()


def library() -> tuple[Cable, ...]:
    """Every cable type shipped with notchkit, then the user's own library.

    The user's library (:func:`user_library_path`) is read when it exists; a
    type there replaces a shipped type of the same name.
    """
    base = _load()
    p = user_library_path()
    if not p.is_file():
        from notchkit.defaults import load_defaults

        named = load_defaults()
        if named.cables is not None:
            raise CableError(f"{named.path}: cables: {p} is not a file (the personal cable library it names)")
        return base
    own = load_library_file(p)
    keys = {_normalise(c.name) for c in own}
    return tuple(c for c in base if _normalise(c.name) not in keys) + own


def cable_from_def(defn: Any) -> Cable:
    """Build a :class:`Cable` from a site file's cable definition.

    Parameters
    ----------
    defn : notchkit.site.model.CableDef
        ``name``, ``z0_ohm``, ``velocity_factor``, ``loss_table`` ((freq_mhz,
        loss_db_per_100m), ...), optional ``max_voltage_v``, ``outer_diameter_mm``,
        ``dielectric``.
    """
    if isinstance(defn, Cable):
        return defn
    extra = {}
    for key in ("max_voltage_v", "outer_diameter_mm"):
        value = getattr(defn, key, None)
        if value is not None:
            extra[key] = value
    return Cable.from_table(
        name=defn.name,
        z0_ohm=defn.z0_ohm,
        velocity_factor=defn.velocity_factor,
        loss_table=tuple(defn.loss_table),
        dielectric=getattr(defn, "dielectric", "") or "",
        sources=("site file",),
        **extra,
    )


_SIZE_FAMILIES = {
    "200": "foam-240", "240": "foam-240", "400": "foam-400", "500": "foam-400",
    "600": "foam-600", "900": "hardline-7/8",
}
"""Size numbers of trade-style names and the generic library type of about that size."""


def generic_hint(name: str) -> str | None:
    """For a trade-style name (letters and a size number, e.g. ``XYZ-400``), the library's
    generic type of that size; ``None`` when the name has no such size."""
    key = _normalise(name)
    if key.startswith("RG"):
        return None
    m = re.search(r"(\d{3,4})", key)
    if not m:
        return None
    target = _SIZE_FAMILIES.get(m.group(1))
    if target is None:
        return None
    for c in library():
        if _normalise(c.name) == _normalise(target):
            return c.name
    return None


def unknown_cable_hint(name: str, known: Iterable[str]) -> str:
    """The hint of an unknown-cable message: a generic equivalent, or the closest names."""
    generic = generic_hint(name)
    if generic is not None:
        return (f"trade names are not used; the generic type of that size is {generic!r} "
                f"(see `notchkit cables`)")
    names = {_normalise(k): k for k in known}
    close = difflib.get_close_matches(_normalise(name), list(names), n=3, cutoff=0.5)
    if close:
        return f"did you mean {', '.join(names[k] for k in close)}?"
    return "see `notchkit cables` for the known types"


def get_cable(name: str, site_cables: Iterable[Any] = ()) -> Cable:
    """Look a cable type up by name (case, spaces, hyphens and '/U' ignored).

    Parameters
    ----------
    name : str
        Type name or alias, e.g. ``"rg213"``, ``"RG-213/U"`` or ``"ladder line"``.
    site_cables : iterable of Cable or CableDef
        Cables defined in the site file; they take precedence over the library.

    Raises
    ------
    CableError
        Unknown name; the message offers the generic type of a trade-style
        name's size, or the closest known names.
    """
    key = _normalise(name)
    # Site definitions first (they override the library); only the match is built,
    # so a lossless definition warns when it is used, not on every lookup.
    site = list(site_cables)
    for item in reversed(site):
        if _normalise(item.name) == key:
            return item if isinstance(item, Cable) else cable_from_def(item)
    lib = library()
    for c in lib:
        if _normalise(c.name) == key or key in {_normalise(a) for a in c.aliases}:
            return c
    known = [c.name for c in lib] + [item.name for item in site]
    raise CableError(f"cable {name!r} is not a known cable type; {unknown_cable_hint(name, known)}")


# ---------------------------------------------------------------- the table


@dataclass(frozen=True, slots=True, kw_only=True)
class CableRow:
    """One line of the ``notchkit cables`` table: a cable and its loss at the asked frequencies."""

    cable: Cable
    at_mhz: tuple[float, ...]
    loss_db_per_100m: tuple[float, ...]
    loss_db_per_100ft: tuple[float, ...]
    extrapolated: tuple[bool, ...] = ()

    def to_json(self) -> dict[str, Any]:
        """The JSON form: the cable's figures, its loss at ``at_mhz`` and where they come from."""
        c = self.cable
        rng = c.table_range_mhz
        return {
            "type": c.name,
            "kind": c.kind,
            "z0_ohm": c.z0_ohm,
            "velocity_factor": c.velocity_factor,
            "dielectric": c.dielectric or None,
            "centre_conductor": c.centre_conductor,
            "cladding_um": c.cladding_um,
            "outer_diameter_mm": c.outer_diameter_mm,
            "inner_diameter_mm": c.inner_diameter_mm,
            "conductor_diameter_mm": c.conductor_diameter_mm,
            "spacing_mm": c.spacing_mm,
            "max_voltage_v": c.max_voltage_v,
            "max_power_w": [{"freq_mhz": f, "watts": w} for f, w in c.max_power_w],
            "at_mhz": list(self.at_mhz),
            "loss_db_per_100m": list(self.loss_db_per_100m),
            "loss_db_per_100ft": list(self.loss_db_per_100ft),
            "extrapolated": list(self.extrapolated),
            "loss_table_mhz": None if rng is None else [rng[0], rng[1]],
            "k_sqrt": c.k_sqrt,
            "k_lin": c.k_lin,
            "fit_error_pct": c.fit_residual_pct,
            "fit_error_by_source": [{"source": s, "max_error_pct": e}
                                    for s, e in c.fit_error_by_source()],
            "sources": list(c.sources),
            "aliases": list(c.aliases),
        }


def cable_table(
    at_mhz: Iterable[float] = DEFAULT_AT_MHZ, site_cables: Iterable[Any] = ()
) -> tuple[CableRow, ...]:
    """The library's cables with the model loss at each frequency in ``at_mhz``.

    Parameters
    ----------
    at_mhz : iterable of float
        Frequencies, MHz, each within 0.1-6000 MHz.
    site_cables : iterable of Cable or CableDef
        Extra cables to list after the library's.

    Raises
    ------
    CableError
        A frequency outside 0.1-6000 MHz or not a number.
    """
    freqs = tuple(at_mhz)
    lo, hi = VALID_FREQ_MHZ
    if not freqs:
        raise CableError("at_mhz: empty; give at least one frequency in 0.1-6000 MHz")
    for f in freqs:
        if not (_finite(f) and lo <= f <= hi):
            raise CableError(f"at_mhz: {f!r} MHz is outside the model's range {lo:g}-{hi:g} MHz")
    cables = list(library())
    for item in site_cables:
        cables.append(item if isinstance(item, Cable) else cable_from_def(item))
    fs = np.array(freqs, dtype=float)
    return tuple(
        CableRow(
            cable=c,
            at_mhz=tuple(float(x) for x in fs),
            loss_db_per_100m=tuple(float(x) for x in c.loss_db_per_100m(fs)),
            loss_db_per_100ft=tuple(float(x) for x in c.loss_db_per_100ft(fs)),
            extrapolated=tuple(bool(x) for x in c.extrapolated(fs)),
        )
        for c in cables
    )
