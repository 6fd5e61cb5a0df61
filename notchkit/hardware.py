"""Connection hardware, real loads and the depth ceiling around a filter's cable.

A built stub filter is more than its cable: every stub hangs from a tee whose
arms are short sections of line, every cable piece ends in a connector whose
mated pair is a short section of (for UHF, clearly not 50 ohm) line, a
shorted stub's short has inductance, the filter works into an antenna that is
not 50 ohm out of its band, and no real filter is deeper than its leakage.

:class:`Model` bundles all of it around a cable. It is a *medium* for
:mod:`notchkit.filters` (it answers ``z0_ohm``, ``velocity_factor``,
``alpha_np_per_m`` and every other attribute from its cable), so a
:class:`~notchkit.filters.Filter` or the solver given a ``Model`` instead of a
bare cable designs and verifies with the hardware, the load and the ceiling
without any change to their code: :func:`notchkit.filters.evaluate_batch`
hands a ``Model`` to :meth:`Model.evaluate_batch`.

Reference planes (the cut list states them): with hardware, a stub's
``length_m`` runs from the mating face of its plug (where it meets the tee's
side port) to its far end, the plug included; a line section's from the
mating face of one plug to that of the other. The tee's arms, from its ports'
mating faces to the junction, are hardware, not cable.

Every figure below carries its source or is marked "from memory" /
"common practice"; docs/hardware.md explains each.

The model itself lives in :mod:`notchkit.hwmodel` (its fast batched path in
:mod:`notchkit.hwbatch`) and what the report says of it in
:mod:`notchkit.modelreport`; their public names are re-exported here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.errors import DesignError
from notchkit.hwmodel import (
    DEFAULT_DEPTH_CEILING_DB as DEFAULT_DEPTH_CEILING_DB,
)
from notchkit.hwmodel import (
    DEFAULT_OUT_OF_BAND_SWR as DEFAULT_OUT_OF_BAND_SWR,
)
from notchkit.hwmodel import Model as Model
from notchkit.hwmodel import apply_ceiling as apply_ceiling
from notchkit.hwmodel import ceiling_note as ceiling_note
from notchkit.hwmodel import terminate as terminate
from notchkit.modelreport import ModelReport as ModelReport
from notchkit.modelreport import model_report as model_report
from notchkit.modelreport import reference_plane as reference_plane
from notchkit.modelreport import stub_plug_m as stub_plug_m

# ---------------------------------------------------------------- connector families


@dataclass(frozen=True, slots=True, kw_only=True)
class ConnectorFamily:
    """One connector family's mated pair, tee and barrel, as short lines.

    Lengths are physical millimetres; each section has its own impedance and
    velocity factor (its dielectric: PTFE about 0.69, air 1.0).
    """

    name: str
    z_pair_ohm: float
    """Characteristic impedance of the mated pair's line section."""
    plug_mm: float
    """Length of the plug from its mating face to where the cable's own line starts."""
    pair_vf: float
    tee_z_ohm: float
    tee_through_mm: float
    """Each through arm: from a through port's mating face to the junction centre."""
    tee_side_mm: float
    """The side arm: from the side port's mating face to the junction centre."""
    tee_vf: float
    barrel_z_ohm: float
    barrel_mm: float
    barrel_vf: float
    sources: tuple[tuple[str, str], ...] = ()
    """(figure, source) pairs."""
    max_voltage_peak_v: float | None = None
    """Working voltage of the connectors, V peak; None: the family's (notchkit.power.CONNECTOR_RATINGS)."""


_PTFE_VF = 1.0 / math.sqrt(2.1)  # PTFE relative permittivity 2.1 (common handbook value) -> VF 0.69

FAMILIES: dict[str, ConnectorFamily] = {
    "uhf": ConnectorFamily(
        name="uhf", z_pair_ohm=35.0, plug_mm=15.0, pair_vf=_PTFE_VF,
        tee_z_ohm=35.0, tee_through_mm=22.0, tee_side_mm=25.0, tee_vf=_PTFE_VF,
        barrel_z_ohm=35.0, barrel_mm=30.0, barrel_vf=_PTFE_VF,
        sources=(
            ("z_pair_ohm", "UHF (PL-259/SO-239) is not a constant-impedance connector; sectioned mated "
                           "pairs measure roughly 30-36 ohm (published sectioned-connector measurements; "
                           "35 ohm taken, from memory)"),
            ("plug_mm", "from memory: a PL-259 is about 15 mm from mating face to the cable's own line"),
            ("tee_*", "from memory: an M-358 tee body is about 45 mm through and 25 mm to the side port"),
            ("barrel_*", "from memory: a PL-258 double-female barrel is about 30 mm long"),
            ("pair_vf", "PTFE relative permittivity 2.1 (handbook value), VF = 1/sqrt(2.1)"),
        ),
    ),
    "n": ConnectorFamily(
        name="n", z_pair_ohm=50.0, plug_mm=12.0, pair_vf=_PTFE_VF,
        tee_z_ohm=50.0, tee_through_mm=23.0, tee_side_mm=23.0, tee_vf=_PTFE_VF,
        barrel_z_ohm=50.0, barrel_mm=20.0, barrel_vf=_PTFE_VF,
        sources=(
            ("z_pair_ohm", "50 ohm: type N interface, MIL-STD-348 / IEC 61169-16"),
            ("plug_mm", "from memory: an N plug is about 12 mm from mating face to the cable's line"),
            ("tee_*", "from memory: a UG-28 (3 x female) tee is about 46 mm through, 23 mm to the side"),
            ("barrel_*", "from memory: a UG-29 barrel is about 20 mm"),
        ),
    ),
    "bnc": ConnectorFamily(
        name="bnc", z_pair_ohm=50.0, plug_mm=10.0, pair_vf=_PTFE_VF,
        tee_z_ohm=50.0, tee_through_mm=16.0, tee_side_mm=16.0, tee_vf=_PTFE_VF,
        barrel_z_ohm=50.0, barrel_mm=15.0, barrel_vf=_PTFE_VF,
        sources=(
            ("z_pair_ohm", "50 ohm: BNC interface, MIL-STD-348 / IEC 61169-8"),
            ("plug_mm", "from memory: a BNC plug is about 10 mm from mating face to the cable's line"),
            ("tee_*", "from memory: a UG-274 tee is about 32 mm through, 16 mm to the side"),
            ("barrel_*", "from memory: a UG-914 barrel is about 15 mm"),
        ),
    ),
}
"""The connector families (docs/hardware.md lists every figure and its source)."""

DEFAULT_FAMILY = "uhf"
"""Common practice on amateur and land-mobile sites at HF-UHF."""
DEFAULT_SHORT_NH = 3.0
"""A soldered short with about 3 mm of pigtail, at about 1 nH per mm of wire (common practice)."""

@dataclass(frozen=True, slots=True, kw_only=True)
class Hardware:
    """The connection hardware of a site's filters (all settable in the site file)."""

    family: ConnectorFamily = FAMILIES[DEFAULT_FAMILY]
    short_nh: float = DEFAULT_SHORT_NH
    barrels_per_port: int = 0
    """Barrels at each filter port (e.g. to join the radio's jumper)."""

    @classmethod
    def of(cls, family: str = DEFAULT_FAMILY, **overrides: Any) -> Hardware:
        """A family by name, with any of its figures (or ``short_nh``, ``barrels_per_port``) replaced."""
        fam = FAMILIES.get(str(family).lower())
        if fam is None:
            raise DesignError(f"connector family {family!r} is not known (allowed: {', '.join(FAMILIES)})")
        own = {k: overrides.pop(k) for k in ("short_nh", "barrels_per_port") if k in overrides}
        extra = {k: v for k, v in overrides.items() if v is not None}
        try:
            fam = replace(fam, **extra) if extra else fam
        except TypeError as exc:
            raise DesignError(f"hardware: {exc}") from None
        return cls(family=fam, **own)

    def to_json(self) -> dict[str, Any]:
        f = self.family
        return {"family": f.name, "z_pair_ohm": f.z_pair_ohm, "plug_mm": f.plug_mm,
                "tee_z_ohm": f.tee_z_ohm, "tee_through_mm": f.tee_through_mm, "tee_side_mm": f.tee_side_mm,
                "barrel_z_ohm": f.barrel_z_ohm, "barrel_mm": f.barrel_mm,
                "short_nh": self.short_nh, "barrels_per_port": self.barrels_per_port,
                **({"connector_peak_v": f.max_voltage_peak_v} if f.max_voltage_peak_v is not None else {})}

    def reference_planes(self) -> str:
        f = self.family
        return (f"{f.name.upper()} hardware: each stub's length runs from the mating face of its plug "
                f"(where it meets the tee's side port) to its far end, the plug's {f.plug_mm:g} mm "
                "included; a line section's from one plug's mating face to the other's. The tee's arms "
                f"({f.tee_through_mm:g} mm through, {f.tee_side_mm:g} mm to the side) are part of the model, "
                "not of the cable.")


# ---------------------------------------------------------------- from a site, and what the report says


@dataclass(frozen=True, slots=True, kw_only=True)
class ConstantZ:
    """A port of one impedance at every frequency (a radio's port)."""

    z: complex

    def z_ohm(self, freq_hz: ArrayLike) -> NDArray[np.complex128]:
        return np.full(np.shape(freq_hz), complex(self.z))


def hardware_of(settings: Any) -> Hardware | None:
    """:class:`Hardware` from a site's ``hardware:`` settings (None or ``family: ideal``: ideal junctions)."""
    if settings is None or str(getattr(settings, "family", "")).lower() == "ideal":
        return None
    over = {k: getattr(settings, k, None) for k in ("z_pair_ohm", "plug_mm", "tee_through_mm", "tee_side_mm")}
    over["max_voltage_peak_v"] = getattr(settings, "connector_peak_v", None)
    if over["z_pair_ohm"] is not None:
        over["tee_z_ohm"] = over["z_pair_ohm"]
    short = settings.short_nh if settings.short_nh is not None else DEFAULT_SHORT_NH
    return Hardware.of(settings.family, short_nh=short, barrels_per_port=int(settings.barrels_per_port),
                       **over)


def model_for(cable: Any, *, settings: Any = None, load: Any = None,
              depth_ceiling_db: float | None = None) -> Model:
    """The :class:`Model` a site asks for: its ``hardware:`` settings, one radio's ``load:``
    (:class:`notchkit.site.model.RadioLoad`) and its ceiling (default :data:`DEFAULT_DEPTH_CEILING_DB`)."""
    from notchkit.loads import read_load

    z_load = source = None
    swr = DEFAULT_OUT_OF_BAND_SWR
    if load is not None:
        if getattr(load, "file", None):
            z_load = read_load(load.file)
        if getattr(load, "swr", None) is not None:
            swr = float(load.swr)
        if getattr(load, "radio_ohm", None) is not None:
            source = ConstantZ(z=complex(load.radio_ohm))
    hw = hardware_of(settings)
    if getattr(cable, "balanced", False):
        hw = None  # coax connectors and tees do not apply to a balanced line (it joins through a balun)
    return Model(cable=cable, hardware=hw, load=z_load, source=source,
                 rlgc=getattr(settings, "line_model", "classic") == "rlgc",
                 depth_ceiling_db=DEFAULT_DEPTH_CEILING_DB if depth_ceiling_db is None else depth_ceiling_db,
                 out_of_band_swr=swr)
