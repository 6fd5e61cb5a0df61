"""Voltage, current and heat in a stub filter at a transmitter's power.

:func:`power_check` solves the filter as a circuit at one frequency: a matched
source (``z_system``) at port 1 (radio side) whose available power is
``power_w`` (the transmitter's rating into a matched load), and ``z_system``
at port 2 (antenna side). Working back from the load through the ABCD
cascade gives the voltage at every tee; along each stub the exact lossy
standing-wave solution gives voltage and current at every point.

Model
-----
At distance ``d`` from a stub's end, with ``gamma`` the propagation constant
[1]_ (sec. 2.3, 2.7)::

    open end:     V(d) = V_end cosh(gamma d),        I(d) = V_end sinh(gamma d) / Z0
                  V_end = V_tee / cosh(gamma l)
    shorted end:  V(d) = I_end Z0 sinh(gamma d),     I(d) = I_end cosh(gamma d)
                  I_end = V_tee / (Z0 sinh(gamma l))

The largest ``|V|`` over the stub is taken on a fine grid (at least 720
points per wavelength, both ends included). The power a stub dissipates is
``Re(V_tee conj(I_in)) / 2`` at its input (peak phasors). All voltages and
currents here are **peak** values; a cable's published ``max_voltage_v`` is
RMS, so the limit is ``sqrt(2) max_voltage_v``.

Heat
----
No published average-power rating per cable and frequency is in the library,
so heat is flagged, not rated: the largest local heat per metre along a stub,
``|I|^2 R'/2 + |V|^2 G'/2`` with ``R' = 2 alpha_c Z0`` and
``G' = 2 alpha_d / Z0`` (low-loss line; ``alpha_c`` the square-root,
conductor part of the cable's loss fit, ``alpha_d`` the linear, dielectric
part) is compared with ``heat_limit_w_per_m``. The default rule is 1 W per
metre per mm of the cable's outer diameter, or 5 W/m when the diameter is not
known: a rule of thumb from memory (matched-line average-power ratings of
solid-PE coax work out at roughly this heat per metre in still air), meant to
say "look at this", not to certify a cable.

References
----------
.. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from notchkit.elements import element_ids
from notchkit.errors import DesignError
from notchkit.filters import MIN_MODEL_LENGTH_M, Filter, Stub
from notchkit.jsonvalues import finite
from notchkit.lines import C0, gamma

NEPER_DB = 20.0 / math.log(10.0)
THIN_MARGIN = 2.0
"""A rating less than this many times the computed figure is a warning."""
KILOVOLT_V = 1000.0
HEAT_W_PER_M_PER_MM_OD = 1.0
DEFAULT_HEAT_LIMIT_W_PER_M = 5.0
KV_CAUTION = (
    "CAUTION: {v:.0f} V peak at {what}. High voltage at an open stub end at this power: insulate and "
    "seal the end, keep it out of reach, never touch a stub or tee while transmitting (RF burns), "
    "and follow local electrical codes and licensed practice"
)
VSWR_NOTE = (
    "voltages assume the antenna side is a matched {z:g} ohm load; an antenna with SWR s raises the "
    "through-line peak by up to sqrt(s) for the same delivered power, and stub voltages with it"
)


@dataclass(frozen=True, slots=True, kw_only=True)
class StubPower:
    """Voltage, current and heat of one stub."""

    stub_id: str
    element_index: int
    termination: str
    length_m: float
    tee_voltage_peak_v: float
    max_voltage_peak_v: float
    max_voltage_at_m: float
    """Where the largest voltage is, metres from the tee along the stub."""
    end_voltage_peak_v: float
    """Voltage at the stub's end (0 for a shorted stub)."""
    end_current_peak_a: float
    """Current through the stub's end (0 for an open stub)."""
    max_current_peak_a: float
    dissipated_w: float
    heat_w_per_m: float
    """Average heat over the stub's length, W/m."""
    peak_heat_w_per_m: float
    """Largest local heat along the stub, W/m."""
    voltage_margin: float | None
    """Cable's peak voltage rating over ``max_voltage_peak_v``; ``None`` when unrated."""
    heat_margin: float

    def to_json(self) -> dict[str, Any]:
        return {
            "id": self.stub_id, "element_index": self.element_index, "termination": self.termination,
            "length_m": _f(self.length_m), "tee_voltage_peak_v": _f(self.tee_voltage_peak_v),
            "max_voltage_peak_v": _f(self.max_voltage_peak_v), "max_voltage_at_m": _f(self.max_voltage_at_m),
            "end_voltage_peak_v": _f(self.end_voltage_peak_v),
            "end_current_peak_a": _f(self.end_current_peak_a),
            "max_current_peak_a": _f(self.max_current_peak_a), "dissipated_w": _f(self.dissipated_w),
            "heat_w_per_m": _f(self.heat_w_per_m), "peak_heat_w_per_m": _f(self.peak_heat_w_per_m),
            "voltage_margin": None if self.voltage_margin is None else _f(self.voltage_margin),
            "heat_margin": _f(self.heat_margin),
        }


@dataclass(frozen=True, slots=True, kw_only=True)
class NodeVoltage:
    """Peak voltage on the through line at a tee (or a port)."""

    where: str
    voltage_peak_v: float
    ratio_to_matched: float
    """``voltage_peak_v / sqrt(2 P z_system)``: 1 on a matched line."""

    def to_json(self) -> dict[str, Any]:
        return {"where": self.where, "voltage_peak_v": _f(self.voltage_peak_v),
                "ratio_to_matched": _f(self.ratio_to_matched)}


@dataclass(frozen=True, slots=True, kw_only=True)
class LinePower:
    """A series line section: largest voltage along it and heat."""

    line_id: str
    element_index: int
    max_voltage_peak_v: float
    dissipated_w: float

    def to_json(self) -> dict[str, Any]:
        return {"id": self.line_id, "element_index": self.element_index,
                "max_voltage_peak_v": _f(self.max_voltage_peak_v), "dissipated_w": _f(self.dissipated_w)}


@dataclass(frozen=True, slots=True, kw_only=True)
class PowerCheck:
    """Result of :func:`power_check`."""

    power_w: float
    freq_mhz: float
    z_system: float
    cable: str
    delivered_w: float
    """Power entering port 1 (equals ``power_w`` when the filter is matched)."""
    output_w: float
    """Power leaving port 2 into the antenna side."""
    total_dissipated_w: float
    rating_peak_v: float | None
    heat_limit_w_per_m: float
    stubs: tuple[StubPower, ...]
    lines: tuple[LinePower, ...]
    nodes: tuple[NodeVoltage, ...]
    warnings: tuple[str, ...]
    cautions: tuple[str, ...]
    notes: tuple[str, ...]

    @property
    def ok(self) -> bool:
        """No warning (every margin at least 2x)."""
        return not self.warnings

    def to_json(self) -> dict[str, Any]:
        return {
            "power_w": _f(self.power_w), "freq_mhz": _f(self.freq_mhz), "z_system": _f(self.z_system),
            "cable": self.cable, "delivered_w": _f(self.delivered_w), "output_w": _f(self.output_w),
            "total_dissipated_w": _f(self.total_dissipated_w),
            "rating_peak_v": None if self.rating_peak_v is None else _f(self.rating_peak_v),
            "heat_limit_w_per_m": _f(self.heat_limit_w_per_m),
            "stubs": [s.to_json() for s in self.stubs], "lines": [x.to_json() for x in self.lines],
            "nodes": [n.to_json() for n in self.nodes], "warnings": list(self.warnings),
            "cautions": list(self.cautions), "notes": list(self.notes), "ok": self.ok,
        }


def _f(x: float) -> float:
    return finite(x, "a power check")


def _loss_split(cable: Any, freq_hz: float) -> tuple[float, float]:
    """``(alpha_c, alpha_d)`` in Np/m: conductor (sqrt f) and dielectric (f) parts of the loss."""
    split = getattr(cable, "alpha_split_np_per_m", None)
    if split is not None:  # the cable's own split (copper-clad-steel rise included)
        a_c, a_d = split(freq_hz)
        return float(a_c), float(a_d)
    alpha = float(np.asarray(cable.alpha_np_per_m(freq_hz)))
    ks, kl = float(getattr(cable, "k_sqrt", 0.0) or 0.0), float(getattr(cable, "k_lin", 0.0) or 0.0)
    f_mhz = freq_hz / 1e6
    a_c, a_d = ks * math.sqrt(f_mhz), kl * f_mhz
    if a_c + a_d <= 0.0:
        return alpha, 0.0  # unknown split: all conductor loss (the larger heat at a shorted end)
    return alpha * a_c / (a_c + a_d), alpha * a_d / (a_c + a_d)


def default_heat_limit_w_per_m(cable: Any) -> float:
    """The rule of thumb of the module docstring: 1 W/m per mm of outer diameter, else 5 W/m."""
    od = getattr(cable, "outer_diameter_mm", None)
    return HEAT_W_PER_M_PER_MM_OD * float(od) if od else DEFAULT_HEAT_LIMIT_W_PER_M


MAX_MODEL_LOSS_NP = 300.0
"""Most cable loss (nepers, about 2600 dB) in one filter the voltage model takes:
``cosh`` of the line's ``gamma l`` overflows a float near 710 Np, and a product
of two such terms near half that. A real stub loses a few dB."""


def _grid(length_m: float, wavelength_m: float) -> np.ndarray:
    n = int(min(100_001, max(721, math.ceil(720.0 * length_m / wavelength_m) + 1)))
    return np.linspace(0.0, length_m, n)


def power_check(
    filt: Filter,
    *,
    power_w: float,
    freq_mhz: float,
    z_system: float = 50.0,
    vswr_note: bool = True,
    power_is: str = "available",
    heat_limit_w_per_m: float | None = None,
    filter_id: str = "F1",
) -> PowerCheck:
    """Peak voltage, current and heat in every stub at one carrier.

    Parameters
    ----------
    filt : Filter
    power_w : float
        The transmitter's rated power, W.
    freq_mhz : float
        The carrier frequency, MHz.
    z_system : float
        Source and load impedance, ohms.
    vswr_note : bool
        Add the note that an antenna mismatch raises the voltages.
    power_is : {"available", "delivered"}
        ``"available"`` (default): ``power_w`` is what the source delivers into
        a matched load; the filter takes ``(1 - |S11|^2)`` of it.
        ``"delivered"``: scale so that ``power_w`` enters the filter (higher
        voltages when the filter reflects; do not use at a notch frequency).
    heat_limit_w_per_m : float or None
        Local heat that counts as the cable's limit, W/m; ``None``: the rule
        of thumb of the module docstring.
    filter_id : str
        Prefix of the element ids.

    Returns
    -------
    PowerCheck
    """
    if not (math.isfinite(power_w) and power_w > 0):
        raise DesignError(f"power_w {power_w!r} must be a finite power > 0 W")
    if not (math.isfinite(freq_mhz) and freq_mhz > 0):
        raise DesignError(f"freq_mhz {freq_mhz!r} must be a finite frequency > 0 MHz")
    if not (math.isfinite(z_system) and z_system > 0):
        raise DesignError(f"z_system {z_system!r} must be > 0 ohm")
    if power_is not in ("available", "delivered"):
        raise DesignError(f"power_is {power_is!r} must be 'available' or 'delivered'")
    cable = filt.cable
    f_hz = freq_mhz * 1e6
    alpha = float(np.asarray(cable.alpha_np_per_m(f_hz)))
    total_m = sum(max(float(e.length_m), MIN_MODEL_LENGTH_M) for e in filt.elements)
    if not (math.isfinite(total_m) and alpha * total_m <= MAX_MODEL_LOSS_NP):
        raise DesignError(
            f"{filter_id}: {total_m:g} m of {getattr(cable, 'name', 'cable')} loses "
            f"{alpha * total_m * 8.685889638:.0f} dB at {freq_mhz:g} MHz, too much to model its "
            f"voltages (allowed: at most {MAX_MODEL_LOSS_NP * 8.685889638:.0f} dB of cable in one "
            "filter; a stub is a fraction of a wavelength to a few wavelengths long)")
    g = complex(gamma(f_hz, alpha, cable.velocity_factor))
    z0 = float(cable.z0_ohm)
    wavelength = C0 * cable.velocity_factor / f_hz

    # Back from the load: state (V, I) at each node for a 1 V load voltage.
    v, i = 1.0 + 0j, 1.0 / z_system + 0j
    stub_state: dict[int, tuple[complex, complex]] = {}  # element -> (V_tee, I into stub)
    line_state: dict[int, tuple[complex, complex, complex, complex]] = {}  # (V_out, I_out, V_in, I_in)
    tee_v: dict[int, complex] = {}
    for idx in range(len(filt.elements) - 1, -1, -1):
        e = filt.elements[idx]
        if isinstance(e, Stub):
            y = complex(e.kind.admittance(z0, g, e.length_m))
            stub_state[idx] = (v, y * v)
            i = i + y * v
            tee_v[idx] = v
        else:
            gl = g * e.length_m
            v_in = np.cosh(gl) * v + z0 * np.sinh(gl) * i
            i_in = np.sinh(gl) / z0 * v + np.cosh(gl) * i
            line_state[idx] = (v, i, complex(v_in), complex(i_in))
            v, i = complex(v_in), complex(i_in)
    v1, i1 = v, i
    emf = v1 + z_system * i1
    p_in_unit = 0.5 * (v1 * np.conj(i1)).real
    if power_is == "available":
        k = math.sqrt(8.0 * z_system * power_w) / abs(emf)
    else:
        if p_in_unit <= 0:
            raise DesignError(f"the filter takes no power at {freq_mhz:g} MHz; use power_is='available'")
        k = math.sqrt(power_w / p_in_unit)
    delivered = k * k * p_in_unit
    output = k * k * 0.5 / z_system  # |V2|^2 / (2 Z) with V2 = k
    v_matched = math.sqrt(2.0 * power_w * z_system)

    rating = getattr(cable, "max_voltage_v", None)
    rating_peak = math.sqrt(2.0) * float(rating) if rating else None
    heat_limit = (default_heat_limit_w_per_m(cable) if heat_limit_w_per_m is None
                  else float(heat_limit_w_per_m))
    if not (math.isfinite(heat_limit) and heat_limit > 0):
        raise DesignError(f"heat_limit_w_per_m {heat_limit_w_per_m!r} must be > 0 W/m")
    a_c, a_d = _loss_split(cable, f_hz)
    r_per_m, g_per_m = 2.0 * a_c * z0, 2.0 * a_d / z0

    warnings_: list[str] = []
    cautions: list[str] = []
    stubs, lines_ = [], []
    ids = element_ids(filt, filter_id)
    for idx, e in enumerate(filt.elements):
        if isinstance(e, Stub):
            sid = ids[idx]
            vt, it = (k * x for x in stub_state[idx])
            length = max(e.length_m, MIN_MODEL_LENGTH_M)
            d = _grid(length, wavelength)  # distance from the end
            vz, iz, end_v, end_i = e.kind.standing_wave(vt, z0, g, length, d)
            av, ai = np.abs(vz), np.abs(iz)
            j = int(np.argmax(av))
            diss = 0.5 * (vt * np.conj(it)).real
            heat = 0.5 * (ai**2 * r_per_m + av**2 * g_per_m)
            peak_heat = float(heat.max())
            vmax = float(av[j])
            vmargin = rating_peak / vmax if (rating_peak and vmax > 0) else None
            hmargin = heat_limit / peak_heat if peak_heat > 0 else 1e12
            stubs.append(StubPower(
                stub_id=sid, element_index=idx, termination=e.termination, length_m=float(e.length_m),
                tee_voltage_peak_v=abs(vt), max_voltage_peak_v=vmax,
                max_voltage_at_m=float(length - d[j]), end_voltage_peak_v=float(end_v),
                end_current_peak_a=float(end_i), max_current_peak_a=float(ai.max()),
                dissipated_w=float(diss), heat_w_per_m=float(diss / length),
                peak_heat_w_per_m=peak_heat, voltage_margin=vmargin, heat_margin=float(min(hmargin, 1e12)),
            ))
            where = f"{sid} ({e.termination} stub), {length - d[j]:.3f} m from the tee"
            _margin_warnings(warnings_, vmargin, vmax, rating, where)
            if hmargin < THIN_MARGIN:
                warnings_.append(
                    f"{sid}: local heat {peak_heat:.2f} W/m is within {THIN_MARGIN:g}x of the "
                    f"{heat_limit:g} W/m rule of thumb (margin {hmargin:.2f}x); "
                    "check the cable's power rating"
                )
            if vmax >= KILOVOLT_V:
                cautions.append(KV_CAUTION.format(v=vmax, what=where))
        else:
            lid = ids[idx]
            vo, io, vi, ii = (k * x for x in line_state[idx])
            d = _grid(max(e.length_m, MIN_MODEL_LENGTH_M), wavelength)  # from the antenna-side end
            vz = np.cosh(g * d) * vo + z0 * np.sinh(g * d) * io
            vmax = float(np.abs(vz).max())
            diss = 0.5 * ((vi * np.conj(ii)).real - (vo * np.conj(io)).real)
            lines_.append(LinePower(line_id=lid, element_index=idx, max_voltage_peak_v=vmax,
                                    dissipated_w=float(diss)))
            vmargin = rating_peak / vmax if (rating_peak and vmax > 0) else None
            _margin_warnings(warnings_, vmargin, vmax, rating, f"{lid} (line section)")
    nodes = [NodeVoltage(where="radio port", voltage_peak_v=abs(k * v1),
                         ratio_to_matched=abs(k * v1) / v_matched)]
    for t, group in enumerate(filt.tees(), start=1):
        vt = abs(k * tee_v[group[0]])
        nodes.append(NodeVoltage(where=f"tee {t}", voltage_peak_v=vt, ratio_to_matched=vt / v_matched))
        _margin_warnings(warnings_, rating_peak / vt if (rating_peak and vt > 0) else None, vt, rating,
                         f"tee {t} (through line)")
    nodes.append(NodeVoltage(where="antenna port", voltage_peak_v=k, ratio_to_matched=k / v_matched))
    notes = []
    if rating is None:
        notes.append(f"cable {getattr(cable, 'name', '?')} has no published voltage rating: "
                     "voltages not checked")
    if vswr_note:
        notes.append(VSWR_NOTE.format(z=z_system))
    total = sum(s.dissipated_w for s in stubs) + sum(x.dissipated_w for x in lines_)
    return PowerCheck(
        power_w=float(power_w), freq_mhz=float(freq_mhz), z_system=float(z_system),
        cable=str(getattr(cable, "name", type(cable).__name__)), delivered_w=float(delivered),
        output_w=float(output), total_dissipated_w=float(total), rating_peak_v=rating_peak,
        heat_limit_w_per_m=heat_limit, stubs=tuple(stubs), lines=tuple(lines_), nodes=tuple(nodes),
        warnings=tuple(warnings_), cautions=tuple(cautions), notes=tuple(notes),
    )


def _margin_warnings(out: list[str], margin: float | None, vmax: float, rating_rms: float | None,
                     where: str) -> None:
    if margin is None or margin >= THIN_MARGIN or rating_rms is None:
        return
    word = "EXCEEDS" if margin < 1.0 else "is within 2x of"
    out.append(
        f"{where}: {vmax:.0f} V peak {word} the cable's rating {rating_rms:g} V RMS "
        f"({math.sqrt(2.0) * rating_rms:.0f} V peak; margin {margin:.2f}x)"
    )


def format_power(pc: PowerCheck) -> str:
    """Plain-text lines: per stub voltage/current/heat, then warnings and cautions."""
    lines = [f"power check: {pc.power_w:g} W at {pc.freq_mhz:g} MHz on {pc.cable} "
             f"({pc.delivered_w:.1f} W into the filter, {pc.total_dissipated_w:.2f} W heat)"]
    for s in pc.stubs:
        extra = (f"end {s.end_voltage_peak_v:.0f} V" if s.termination == "open"
                 else f"end current {s.end_current_peak_a:.2f} A")
        margin = f", margin {s.voltage_margin:.1f}x" if s.voltage_margin is not None else ""
        lines.append(f"  {s.stub_id} {s.termination}: max {s.max_voltage_peak_v:.0f} V peak{margin}, "
                     f"{extra}, {s.dissipated_w:.2f} W ({s.peak_heat_w_per_m:.2f} W/m peak)")
    for n in pc.nodes:
        lines.append(f"  {n.where}: {n.voltage_peak_v:.0f} V peak ({n.ratio_to_matched:.2f}x matched)")
    lines += [f"  warning: {w}" for w in pc.warnings]
    lines += [f"  {c}" for c in pc.cautions]
    lines += [f"  note: {n}" for n in pc.notes]
    return "\n".join(lines)
