"""What the design report says of the filter model: hardware, line model, load (or its spread), ceiling.

Also where every cut length is measured from (:func:`reference_plane`, stated
in the cut list) and how much of a stub's length is its plug
(:func:`stub_plug_m`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from notchkit.hwmodel import Model, ceiling_note


@dataclass(frozen=True, slots=True, kw_only=True)
class ModelReport:
    """What the design was verified against, and how far an unknown load can move it."""

    lines: tuple[str, ...]
    data: dict

    def to_json(self) -> dict[str, Any]:
        return self.data


def stub_plug_m(cable: Any) -> float:
    """Length of the plug a stub's ``length_m`` includes under ``cable``'s connector hardware,
    metres (0 on a plain cable, where the cut length is all cable and the tee allowance is
    added apart). A stub's own cable is its length less this."""
    hw = getattr(cable, "hardware", None) if isinstance(cable, Model) else None
    return hw.family.plug_mm * 1e-3 if hw is not None else 0.0


def element_plugs_m(cable: Any, kinds: Any) -> np.ndarray:
    """Length of connector plug each element's ``length_m`` includes under ``cable``'s hardware,
    metres: a stub's one plug, a line section's two (0 on a plain cable). The plugs are hardware
    with their own velocity factor: a cable VF that is not the plan's moves only the rest."""
    from notchkit.elements import kind_of

    plug = stub_plug_m(cable)
    return np.array([plug if kind_of(k).shunt else 2.0 * plug for k in kinds], dtype=float)


def reference_plane(filt: Any) -> str:
    """Where every cut length of ``filt`` is measured from (stated in the cut list)."""
    hw = getattr(filt.cable, "hardware", None) if isinstance(filt.cable, Model) else None
    if hw is None:
        return (f"from the tee's port reference plane (the connector's mating face) to the stub's end, "
                f"the tee allowance of {filt.tee_allowance_m * 1000:.0f} mm already taken off")
    return (f"from the mating face of the stub's {hw.family.name.upper()} plug to the stub's end, the plug's "
            f"{hw.family.plug_mm:g} mm included (tee arms modelled separately)")


def model_report(filt: Any, notch_mhz: Any, pass_mhz: Any, z_system: float = 50.0) -> ModelReport:
    """The model's facts for the report: hardware, line model, load (or its spread), ceiling."""
    from notchkit.loads import load_spread, spread_lines

    m = filt.cable if isinstance(filt.cable, Model) else Model(cable=filt.cable, depth_ceiling_db=None)
    lines: list[str] = []
    data: dict[str, Any] = {}
    if m.hardware is None and getattr(m.cable, "balanced", False):
        lines.append("Model: balanced line: no coax connector model (the junctions are the tee allowance; "
                     "the line joins coax through a balun).")
        data["hardware"] = None
    elif m.hardware is None:
        lines.append(f"Model: ideal tees; tee allowance {filt.tee_allowance_m * 1000:.0f} mm of stub cable "
                     "per stub; cut lengths run from the tee's port reference plane (the connector's mating "
                     "face) to the stub's end, the allowance taken off.")
        data["hardware"] = None
    else:
        f = m.hardware.family
        lines.append(f"Model: {f.name.upper()} hardware, mated pair {f.z_pair_ohm:g} ohm, tee arms "
                     f"{f.tee_through_mm:g} mm through / {f.tee_side_mm:g} mm side ({f.tee_z_ohm:g} ohm), "
                     f"short {m.hardware.short_nh:g} nH, {m.hardware.barrels_per_port} barrel(s) per port.")
        lines.append(m.hardware.reference_planes())
        data["hardware"] = m.hardware.to_json()
    lines.append("Line: RLGC (internal inductance: phase velocity falls at HF, complex Z0)." if m.rlgc else
                 "Line: lossless-VF phase with the cable's loss (classic model).")
    data["line_model"] = "rlgc" if m.rlgc else "classic"
    data["other_line_model"] = None
    if notch_mhz and hasattr(m.cable, "z0_ohm"):
        # The same filter on the other line model, at each notch centre: how much the choice matters.
        f_hz = np.asarray(list(notch_mhz), dtype=float) * 1e6
        other = m.with_(rlgc=not m.rlgc)
        try:
            rows = filt.lengths_m[None, :]
            a = -20 * np.log10(np.abs(m.evaluate_batch(filt.kinds, rows, f_hz, z_system)[0][0]))
            b = -20 * np.log10(np.abs(other.evaluate_batch(filt.kinds, rows, f_hz, z_system)[0][0]))
        except (ValueError, ZeroDivisionError, FloatingPointError):  # a cable without a loss split
            a = b = None
        if a is not None:
            name = "RLGC" if other.rlgc else "classic"
            data["other_line_model"] = {"model": name, "notch_mhz": [float(x) for x in notch_mhz],
                                        "this_db": [round(float(x), 2) for x in a],
                                        "other_db": [round(float(x), 2) for x in b]}
            moved = [(x, y, z) for x, y, z in zip(notch_mhz, a, b, strict=True) if abs(y - z) >= 1.0]
            if moved:
                lines.append(f"On the {name} line the notch centres would read "
                             + ", ".join(f"{x:g} MHz {z:.1f} dB (here {y:.1f})" for x, y, z in moved)
                             + ("; at HF the conductor's internal inductance slows the wave "
                                "(docs/hardware.md)." if other.rlgc else "."))
    if m.load is not None:
        lo, hi = m.load.freq_hz[0] / 1e6, m.load.freq_hz[-1] / 1e6
        lines.append(f"Verified into the given antenna load ({m.load.source}, {lo:g}-{hi:g} MHz); outside "
                     "that range the load is taken as 50 ohm.")
        data["load"] = m.load.to_json()
        freqs = [x for x in list(notch_mhz) + list(pass_mhz) if not lo <= x <= hi]
        uncovered = [x for x in notch_mhz if not lo <= x <= hi]
        passes = [x for x in pass_mhz if not lo <= x <= hi]
        spreads = (load_spread(filt, uncovered, passes, swr=m.out_of_band_swr, z_system=z_system)
                   if freqs else ())
    else:
        data["load"] = None
        spreads = load_spread(filt, notch_mhz, pass_mhz, swr=m.out_of_band_swr, z_system=z_system)
    lines += spread_lines(spreads, m.out_of_band_swr)
    data["load_spread_swr"] = m.out_of_band_swr
    data["load_spread"] = [s.to_json() for s in spreads]
    note = ceiling_note(m.depth_ceiling_db)
    lines.append(note[0].upper() + note[1:] + ".")
    data["depth_ceiling_db"] = m.depth_ceiling_db
    return ModelReport(lines=tuple(lines), data=data)
