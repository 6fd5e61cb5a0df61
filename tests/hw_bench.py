"""A stub on the bench with its connection hardware, built with scikit-rf (test helper).

A plan made with a site's ``hardware:`` block cuts each stub from the mating
face of its plug, the plug included, and sets its trim target on that model
(docs/hardware.md). A simulated measurement of such a stub must then hold the
same plug (and, through the tee, the tee's arms; a shorted stub's short with
its inductance), or it measures another stub than the plan's. The figures are
read from the plan JSON (``filters[i].model.hardware``, what ``notchkit plan``
wrote); the network is built from scikit-rf's own media
(``skrf.media.DefinedGammaZ0``: ``line``, ``inductor``, ``open``, ``short``,
``shunt``) and cascaded with ``**``.

The hardware sections are lossless PTFE lines, VF ``1 / sqrt(2.1)`` (PTFE
relative permittivity 2.1, handbook value).

The truth (the cut a stub needs) is the textbook lossless input impedance of a
terminated line, ``Z_in = Z0 (Z_L + j Z0 tan bl) / (Z0 + j Z_L tan bl)``
(Pozar, *Microwave Engineering*, 4th ed., eq. 2.44), solved in closed form for
the series resonance ``Z_in = 0`` at the plug's mating face.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import numpy as np
import skrf
from skrf.media import DefinedGammaZ0

C = 299_792_458.0  # m/s, exact (SI definition)
PTFE_VF = 1.0 / math.sqrt(2.1)  # PTFE relative permittivity 2.1 (handbook value)


def plan_hardware(plan_json: Path, stub_id: str) -> dict[str, Any] | None:
    """The hardware figures of the filter holding ``stub_id``, as the plan JSON carries them."""
    raw = json.loads(Path(plan_json).read_text())
    fid = stub_id.split("-")[0]
    f = next(x for x in raw["filters"] if x["id"] == fid)
    model = f.get("model") or {}
    assert model.get("line_model", "classic") == "classic"  # this helper builds the classic line only
    return model.get("hardware")


def _media(freq: skrf.Frequency, z0: float, vf: float, alpha: Any = 0.0) -> DefinedGammaZ0:
    gamma = alpha + 1j * 2 * np.pi * freq.f / (C * vf)
    return DefinedGammaZ0(frequency=freq, z0=z0, z0_port=50.0, gamma=gamma)


def stub_network(freq: skrf.Frequency, *, termination: str, length_m: float, vf: float, cable: Any,
                 hw: dict[str, Any], ports: int) -> skrf.Network:
    """The stub (plug included in ``length_m``) alone at its plug's mating face (one port), or
    on the tee's side port measured through the tee (two ports)."""
    mm = 1e-3
    plug = _media(freq, hw["z_pair_ohm"], PTFE_VF)
    line = _media(freq, cable.z0_ohm, vf, cable.alpha_np_per_m(freq.f))
    cable_m = length_m - hw["plug_mm"] * mm
    assert cable_m > 0
    body = plug.line(hw["plug_mm"] * mm, "m") ** line.line(cable_m, "m")
    if termination == "open":
        end = line.open()
    else:
        end = line.inductor(hw["short_nh"] * 1e-9) ** line.short()
    alone = body ** end
    if ports == 1:
        return alone
    tee = _media(freq, hw["tee_z_ohm"], PTFE_VF)
    side = tee.line(hw["tee_side_mm"] * mm, "m") ** alone
    arm = tee.line(hw["tee_through_mm"] * mm, "m")
    return arm ** tee.shunt(side) ** arm


def truth_length_m(*, termination: str, quarter_waves: int, resonance_hz: float, vf: float, z0: float,
                   hw: dict[str, Any]) -> float:
    """The stub length (plug included) whose series resonance alone at the plug's mating face
    is ``resonance_hz``, the ``quarter_waves``-th: lossless lines (Pozar eq. 2.44).

    ``Z_in = 0`` at the mating face needs ``Z_c = -j Zp tan(bp lp)`` at the cable's input
    (the plug's end); the cable ends in an open (``Z_c = -j Z0 cot(b l)``) or in the short's
    inductance (``Z_c = j Z0 tan(b l + phi)``, ``tan phi = w L / Z0``).
    """
    w = 2 * math.pi * resonance_hz
    lp = hw["plug_mm"] * 1e-3
    bp, b = w / (C * PTFE_VF), w / (C * vf)
    x = hw["z_pair_ohm"] * math.tan(bp * lp) / z0  # -Im(Z_c) / Z0 that the plug needs
    if termination == "open":
        # cot(b l) = x: b l = atan(1/x) + k pi, the k-th branch is quarter wave 2k+1
        k = (quarter_waves - 1) // 2
        bl = math.atan2(1.0, x) + k * math.pi
    else:
        # tan(b l + phi) = -x: b l = -phi - atan(x) + k pi, quarter wave 2k
        phi = math.atan(w * hw["short_nh"] * 1e-9 / z0)
        k = quarter_waves // 2
        bl = k * math.pi - phi - math.atan(x)
    return bl / b + lp


def filter_network(fjson: dict[str, Any], freq_hz: Any, *, cable: Any = None) -> skrf.Network:
    """A designed filter (its design/plan JSON: ``elements``, ``cable``, ``model.hardware``) built
    from scikit-rf parts only, radio port first.

    Without hardware (``model.hardware`` null: the ideal model): each stub is
    ``shunt_delay_open`` / ``shunt_delay_short`` of its ``length_m`` (the tee allowance inside it),
    each line section ``line``. With hardware: every run of stubs hangs at one junction between two
    through arms, each stub behind the side arm, its plug (``length_m`` includes it), its cable and
    its end (open, or the short's inductance then a short); a line section is plug, cable, plug;
    ``barrels_per_port`` barrels sit at each port. Hardware sections are lossless PTFE lines
    (docs/hardware.md). The cable is the JSON's type (``cable`` overrides it), on the classic line
    ``gamma = alpha + j 2 pi f / (c VF)`` (Pozar sec. 2.7).
    """
    from notchkit.cables import get_cable

    freq = skrf.Frequency.from_f(np.asarray(freq_hz, dtype=float), unit="hz")
    cab = cable if cable is not None else get_cable(fjson["cable"]["type"])
    model = fjson.get("model") or {}
    assert model.get("line_model", "classic") == "classic"  # this helper builds the classic line only
    line = _media(freq, fjson["cable"]["z0_ohm"], fjson["cable"]["velocity_factor"],
                  cab.alpha_np_per_m(freq.f))
    hw = model.get("hardware")
    parts: list[skrf.Network] = []
    if hw is None:
        for e in fjson["elements"]:
            if e["kind"] == "line":
                parts.append(line.line(e["length_m"], unit="m"))
            elif e["termination"] == "open":
                parts.append(line.shunt_delay_open(e["length_m"], unit="m"))
            else:
                parts.append(line.shunt_delay_short(e["length_m"], unit="m"))
    else:
        mm = 1e-3
        tee = _media(freq, hw["tee_z_ohm"], PTFE_VF)
        plug = _media(freq, hw["z_pair_ohm"], PTFE_VF).line(hw["plug_mm"] * mm, "m")
        arm = tee.line(hw["tee_through_mm"] * mm, "m")
        barrels = [_media(freq, hw["barrel_z_ohm"], PTFE_VF).line(hw["barrel_mm"] * mm, "m")] * int(
            hw["barrels_per_port"])
        parts += barrels
        prev_stub = False
        for e in fjson["elements"]:
            if e["kind"] == "stub":
                if not prev_stub:
                    parts.append(arm)
                side = stub_network(freq, termination=e["termination"], length_m=e["length_m"],
                                    vf=fjson["cable"]["velocity_factor"], cable=cab, hw=hw, ports=1)
                parts.append(line.shunt(tee.line(hw["tee_side_mm"] * mm, "m") ** side))
                prev_stub = True
            else:
                if prev_stub:
                    parts.append(arm)
                parts += [plug, line.line(e["length_m"] - 2 * hw["plug_mm"] * mm, unit="m"), plug]
                prev_stub = False
        if prev_stub:
            parts.append(arm)
        parts += barrels
    net = parts[0]
    for p in parts[1:]:
        net = net ** p
    return net
