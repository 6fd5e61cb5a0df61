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

On the RLGC line (``line_model: rlgc``) ``gamma`` and ``Z0`` are the line's own at the
carrier, ``Z0`` complex (:func:`notchkit.rlgc.line_constants`).

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
from dataclasses import dataclass, field
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


CONNECTOR_RATINGS: dict[str, tuple[float, str]] = {
    "uhf": (500.0, "from memory: UHF (PL-259/SO-239) maker data sheets give a working voltage of "
                   "500 V peak"),
    "n": (1000.0, "from memory: type N maker data sheets give a working voltage of 1000 V peak"),
    "bnc": (500.0, "from memory: BNC maker data sheets give a working voltage of 500 V peak"),
}
"""Working voltage of a family's connectors, tees and barrels, V peak, with its source
(settable in the site file: ``hardware: {connector_peak_v: ...}``; docs/hardware.md)."""


def connector_rating_peak_v(hw: Any) -> float | None:
    """The connectors' working voltage, V peak: the site's figure, else the family's."""
    own = getattr(hw.family, "max_voltage_peak_v", None)
    if own is not None:
        return float(own)
    known = CONNECTOR_RATINGS.get(hw.family.name)
    return known[0] if known else None


@dataclass(frozen=True, slots=True, kw_only=True)
class ConnectorVoltage:
    """The largest peak voltage on one connector section (a tee body, a plug, a barrel)."""

    where: str
    voltage_peak_v: float
    rating_peak_v: float | None
    margin: float | None
    """``rating_peak_v / voltage_peak_v``; ``None`` when unrated."""

    def to_json(self) -> dict[str, Any]:
        return {"where": self.where, "voltage_peak_v": _f(self.voltage_peak_v),
                "rating_peak_v": None if self.rating_peak_v is None else _f(self.rating_peak_v),
                "margin": None if self.margin is None else _f(self.margin)}


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
    connector_family: str | None = None
    """The connection hardware's family; ``None``: ideal junctions (no connector checked)."""
    connector_rating_peak_v: float | None = None
    connectors: tuple[ConnectorVoltage, ...] = ()
    """Every tee body, plug and barrel with connection hardware, radio side first."""

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
            "connector_family": self.connector_family,
            "connector_rating_peak_v": (None if self.connector_rating_peak_v is None
                                        else _f(self.connector_rating_peak_v)),
            "connectors": [c.to_json() for c in self.connectors],
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
        With a :class:`notchkit.hardware.Model` carrying connection hardware as its
        cable, the walk includes the tee arms, plugs, barrels and the short's
        inductance, and the voltage at every connector is checked against the
        family's rating (:data:`CONNECTOR_RATINGS`).
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
    _check_inputs(power_w, freq_mhz, z_system, power_is)
    cable = filt.cable
    f_hz = freq_mhz * 1e6
    g, z0, wavelength = _line_at(filt, f_hz, freq_mhz, filter_id)
    hw = getattr(cable, "hardware", None)
    ids = element_ids(filt, filter_id)
    walk = (_walk_hardware(filt, g, z0, f_hz, z_system, ids) if hw is not None
            else _walk(filt, g, z0, z_system))
    k, delivered, output = _scale(walk, z_system, power_w, power_is, freq_mhz)
    rating = getattr(cable, "max_voltage_v", None)
    rating_peak = math.sqrt(2.0) * float(rating) if rating else None
    heat_limit = (default_heat_limit_w_per_m(cable) if heat_limit_w_per_m is None
                  else float(heat_limit_w_per_m))
    if not (math.isfinite(heat_limit) and heat_limit > 0):
        raise DesignError(f"heat_limit_w_per_m {heat_limit_w_per_m!r} must be > 0 W/m")
    a_c, a_d = _loss_split(cable, f_hz)
    z_hf = float(cable.z0_ohm)  # R and G of the loss split (the RLGC line's own, notchkit.rlgc)
    rate = _Rating(rating_rms=rating, rating_peak=rating_peak, heat_limit=heat_limit,
                   r_per_m=2.0 * a_c * z_hf, g_per_m=2.0 * a_d / z_hf)
    warnings_: list[str] = []
    cautions: list[str] = []
    stubs, lines_ = [], []
    for idx, e in enumerate(filt.elements):
        if isinstance(e, Stub):
            stubs.append(_stub_power(ids[idx], idx, e, walk, k, g, z0, wavelength, rate, warnings_, cautions))
        else:
            lines_.append(_line_power(ids[idx], idx, e, walk, k, g, z0, wavelength, rate, warnings_))
    v_matched = math.sqrt(2.0 * power_w * z_system)
    nodes = _nodes(filt, walk, k, v_matched, rate, warnings_)
    connectors, conn_peak = _connectors(hw, walk, k, warnings_)
    notes = _notes(cable, rating, hw, conn_peak, vswr_note, z_system)
    total = sum(x.dissipated_w for x in stubs) + sum(x.dissipated_w for x in lines_)
    return PowerCheck(
        power_w=float(power_w), freq_mhz=float(freq_mhz), z_system=float(z_system),
        cable=str(getattr(cable, "name", type(cable).__name__)), delivered_w=float(delivered),
        output_w=float(output), total_dissipated_w=float(total), rating_peak_v=rating_peak,
        heat_limit_w_per_m=heat_limit, stubs=tuple(stubs), lines=tuple(lines_), nodes=tuple(nodes),
        warnings=tuple(warnings_), cautions=tuple(cautions), notes=tuple(notes),
        connector_family=None if hw is None else hw.family.name, connector_rating_peak_v=conn_peak,
        connectors=tuple(connectors),
    )


# ---------------------------------------------------------------- the stages of power_check


@dataclass(frozen=True, slots=True, kw_only=True)
class _Rating:
    """The limits every figure is checked against."""

    rating_rms: float | None
    rating_peak: float | None
    heat_limit: float
    r_per_m: float
    g_per_m: float


@dataclass(slots=True, kw_only=True)
class _Walk:
    """Node states for a 1 V load voltage, from the load back to the radio port.

    ``stub_end[idx]``: ``(V_end, I_end, cable_m, offset_m)``: the end's phasors of the
    stub's cable, its length, and how far its cable starts from the tee's side port
    (the plug). ``sections``: ``(where, largest |V| along a connector section)``.
    """

    v1: complex = 0j
    i1: complex = 0j
    stub_state: dict = field(default_factory=dict)
    stub_end: dict = field(default_factory=dict)
    line_state: dict = field(default_factory=dict)
    tee_v: dict = field(default_factory=dict)
    sections: list = field(default_factory=list)


def _check_inputs(power_w: float, freq_mhz: float, z_system: float, power_is: str) -> None:
    if not (math.isfinite(power_w) and power_w > 0):
        raise DesignError(f"power_w {power_w!r} must be a finite power > 0 W")
    if not (math.isfinite(freq_mhz) and freq_mhz > 0):
        raise DesignError(f"freq_mhz {freq_mhz!r} must be a finite frequency > 0 MHz")
    if not (math.isfinite(z_system) and z_system > 0):
        raise DesignError(f"z_system {z_system!r} must be > 0 ohm")
    if power_is not in ("available", "delivered"):
        raise DesignError(f"power_is {power_is!r} must be 'available' or 'delivered'")


def _line_at(filt: Filter, f_hz: float, freq_mhz: float, filter_id: str) -> tuple[complex, complex, float]:
    """``(gamma, Z0, wavelength)`` of the cable at the carrier; refuses a filter too lossy to model.

    On the RLGC line (``line_model: rlgc``) both are the line's own at the carrier
    (:func:`notchkit.rlgc.line_constants`): complex ``Z0`` and the slower ``gamma``, with or
    without connection hardware, so the walk is the model the design was verified on."""
    cable: Any = filt.cable
    alpha = float(np.asarray(cable.alpha_np_per_m(f_hz)))
    total_m = sum(max(float(e.length_m), MIN_MODEL_LENGTH_M) for e in filt.elements)
    if not (math.isfinite(total_m) and alpha * total_m <= MAX_MODEL_LOSS_NP):
        raise DesignError(
            f"{filter_id}: {total_m:g} m of {getattr(cable, 'name', 'cable')} loses "
            f"{alpha * total_m * 8.685889638:.0f} dB at {freq_mhz:g} MHz, too much to model its "
            f"voltages (allowed: at most {MAX_MODEL_LOSS_NP * 8.685889638:.0f} dB of cable in one "
            "filter; a stub is a fraction of a wavelength to a few wavelengths long)")
    g = complex(gamma(f_hz, alpha, cable.velocity_factor))
    z0 = complex(float(cable.z0_ohm))
    if getattr(cable, "rlgc", False):
        zc, gc = cable.line_constants(np.array([f_hz]))
        z0, g = complex(np.asarray(zc).ravel()[0]), complex(np.asarray(gc).ravel()[0])
    return g, z0, C0 * cable.velocity_factor / f_hz


def _walk(filt: Filter, g: complex, z0: complex, z_system: float) -> _Walk:
    """The classic model: ideal junctions, the stubs' and line sections' cable only."""
    w = _Walk()
    v, i = 1.0 + 0j, 1.0 / z_system + 0j
    for idx in range(len(filt.elements) - 1, -1, -1):
        e = filt.elements[idx]
        if isinstance(e, Stub):
            y = complex(e.kind.admittance(z0, g, e.length_m))
            w.stub_state[idx] = (v, y * v)
            i = i + y * v
            w.tee_v[idx] = v
        else:
            gl = g * e.length_m
            v_in = np.cosh(gl) * v + z0 * np.sinh(gl) * i
            i_in = np.sinh(gl) / z0 * v + np.cosh(gl) * i
            w.line_state[idx] = (v, i, complex(v_in), complex(i_in))
            v, i = complex(v_in), complex(i_in)
    w.v1, w.i1 = v, i
    return w


def _through(z: complex, g: complex, length_m: float, v: complex,
             i: complex) -> tuple[complex, complex, float]:
    """``(V_in, I_in, largest |V|)`` of a line section ``z``, ``gamma``, ``length_m`` whose far end
    carries ``(v, i)`` (Pozar sec. 2.3: ``V(d) = V cosh(gamma d) + Z I sinh(gamma d)``)."""
    d = np.linspace(0.0, max(length_m, 0.0), 33)
    vd = np.cosh(g * d) * v + z * np.sinh(g * d) * i
    gl = g * length_m
    return complex(vd[-1]), complex(np.sinh(gl) / z * v + np.cosh(gl) * i), float(np.abs(vd).max())


def _walk_hardware(filt: Filter, g: complex, z0: complex, f_hz: float, z_system: float,
                   ids: tuple[str, ...]) -> _Walk:
    """The connection hardware model (notchkit.hardware.Model): barrels, tee arms, plugs and
    the short's inductance as in :meth:`Model.abcd`, each connector section's voltage kept."""
    hw: Any = getattr(filt.cable, "hardware", None)
    fam = hw.family
    mm, w2 = 1e-3, 2.0 * math.pi * f_hz

    def lossless(vf: float) -> complex:  # the hardware sections are lossless lines (docs/hardware.md)
        return 1j * w2 / (C0 * vf)

    plug = (fam.z_pair_ohm, lossless(fam.pair_vf), fam.plug_mm * mm)
    arm = (fam.tee_z_ohm, lossless(fam.tee_vf), fam.tee_through_mm * mm)
    side = (fam.tee_z_ohm, lossless(fam.tee_vf), fam.tee_side_mm * mm)
    barrel = (fam.barrel_z_ohm, lossless(fam.barrel_vf), fam.barrel_mm * mm)
    w = _Walk()
    v, i = 1.0 + 0j, 1.0 / z_system + 0j

    def section(where: str, sec: tuple, v: complex, i: complex) -> tuple[complex, complex]:
        v_in, i_in, top = _through(sec[0], sec[1], sec[2], v, i)
        w.sections.append((where, max(top, abs(v), abs(v_in))))
        return v_in, i_in

    for _ in range(hw.barrels_per_port):
        v, i = section("antenna port barrel", barrel, v, i)
    els = filt.elements
    tee_of = {j: t for t, group in enumerate(filt.tees(), start=1) for j in group}
    for idx in range(len(els) - 1, -1, -1):
        e = els[idx]
        if isinstance(e, Stub):
            t = tee_of[idx]
            if idx == len(els) - 1 or not isinstance(els[idx + 1], Stub):
                v, i = section(f"tee {t}", arm, v, i)
            y, end = _hw_branch(e, g, z0, plug, side, hw.short_nh * 1e-9, w2)
            w.stub_state[idx] = (v, y * v)
            w.stub_end[idx] = (end[0] * v, end[1] * v, end[2], plug[2])
            w.sections.append((f"tee {t}", max(end[3] * abs(v), abs(v))))
            w.sections.append((f"{ids[idx]} plug", end[4] * abs(v)))
            i = i + y * v
            w.tee_v[idx] = v
            if idx == 0 or not isinstance(els[idx - 1], Stub):
                v, i = section(f"tee {t}", arm, v, i)
        else:
            v, i = section(f"{ids[idx]} plugs", plug, v, i)
            v_out, i_out = v, i
            v, i, _ = _through(z0, g, max(e.length_m - 2 * plug[2], 0.0), v, i)
            w.line_state[idx] = (v_out, i_out, v, i)
            v, i = section(f"{ids[idx]} plugs", plug, v, i)
    for _ in range(hw.barrels_per_port):
        v, i = section("radio port barrel", barrel, v, i)
    w.v1, w.i1 = v, i
    return w


def _hw_branch(e: Stub, g: complex, z0: complex, plug: tuple, side: tuple, short_h: float,
               w2: float) -> tuple[complex, tuple]:
    """A stub branch at its junction: admittance and, per 1 V at the junction, its cable end's
    ``(V, I)``, the cable's length, and the largest |V| on the side arm and on the plug."""
    cable_m = max(e.length_m - plug[2], MIN_MODEL_LENGTH_M)
    if e.termination == "open":
        v, i = 1.0 + 0j, 0j
    else:
        v, i = 1j * w2 * short_h + 0j, 1.0 + 0j  # the short's inductance (0: an ideal short)
    v_end, i_end = v, i
    v, i, _ = _through(z0, g, cable_m, v, i)
    v, i, top_plug = _through(plug[0], plug[1], plug[2], v, i)
    v_plug_in = v
    v, i, top_side = _through(side[0], side[1], side[2], v, i)
    s = 1.0 / v  # scale to 1 V at the junction
    top_plug = max(top_plug, abs(v_plug_in))
    return i / v, (v_end * s, i_end * s, cable_m, top_side * abs(s), top_plug * abs(s))


def _scale(w: _Walk, z_system: float, power_w: float, power_is: str,
           freq_mhz: float) -> tuple[float, float, float]:
    """``(k, delivered, output)``: the factor from the unit walk to the carrier's power."""
    emf = w.v1 + z_system * w.i1
    p_in_unit = 0.5 * (w.v1 * np.conj(w.i1)).real
    if power_is == "available":
        k = math.sqrt(8.0 * z_system * power_w) / abs(emf)
    else:
        if p_in_unit <= 0:
            raise DesignError(f"the filter takes no power at {freq_mhz:g} MHz; use power_is='available'")
        k = math.sqrt(power_w / p_in_unit)
    return k, float(k * k * p_in_unit), k * k * 0.5 / z_system  # |V2|^2 / (2 Z) with V2 = k


def _stub_power(sid: str, idx: int, e: Stub, w: _Walk, k: float, g: complex, z0: complex, wavelength: float,
                rate: _Rating, warnings_: list[str], cautions: list[str]) -> StubPower:
    """One stub: its standing wave, heat, and the margins (warnings and cautions appended)."""
    vt, it = (k * x for x in w.stub_state[idx])
    if idx in w.stub_end:  # connection hardware: the cable beyond the plug, its end as walked
        v_end, i_end, length, offset = w.stub_end[idx]
        v_end, i_end = k * v_end, k * i_end
        d = _grid(length, wavelength)
        vz = np.cosh(g * d) * v_end + z0 * np.sinh(g * d) * i_end
        iz = np.sinh(g * d) / z0 * v_end + np.cosh(g * d) * i_end
        end_v, end_i = float(abs(v_end)), float(abs(i_end))
    else:
        length, offset = max(e.length_m, MIN_MODEL_LENGTH_M), 0.0
        d = _grid(length, wavelength)  # distance from the end
        vz, iz, end_v, end_i = e.kind.standing_wave(vt, z0, g, length, d)
    av, ai = np.abs(vz), np.abs(iz)
    j = int(np.argmax(av))
    diss = 0.5 * (vt * np.conj(it)).real
    heat = 0.5 * (ai**2 * rate.r_per_m + av**2 * rate.g_per_m)
    peak_heat = float(heat.max())
    vmax = float(av[j])
    at = float(offset + length - d[j])
    vmargin = rate.rating_peak / vmax if (rate.rating_peak and vmax > 0) else None
    hmargin = rate.heat_limit / peak_heat if peak_heat > 0 else 1e12
    where = f"{sid} ({e.termination} stub), {at:.3f} m from the tee"
    _margin_warnings(warnings_, vmargin, vmax, rate.rating_rms, where)
    if hmargin < THIN_MARGIN:
        warnings_.append(
            f"{sid}: local heat {peak_heat:.2f} W/m is within {THIN_MARGIN:g}x of the "
            f"{rate.heat_limit:g} W/m rule of thumb (margin {hmargin:.2f}x); "
            "check the cable's power rating"
        )
    if vmax >= KILOVOLT_V:
        cautions.append(KV_CAUTION.format(v=vmax, what=where))
    return StubPower(
        stub_id=sid, element_index=idx, termination=e.termination, length_m=float(e.length_m),
        tee_voltage_peak_v=abs(vt), max_voltage_peak_v=vmax, max_voltage_at_m=at,
        end_voltage_peak_v=end_v, end_current_peak_a=end_i, max_current_peak_a=float(ai.max()),
        dissipated_w=float(diss), heat_w_per_m=float(diss / max(e.length_m, MIN_MODEL_LENGTH_M)),
        peak_heat_w_per_m=peak_heat, voltage_margin=vmargin, heat_margin=float(min(hmargin, 1e12)),
    )


def _line_power(lid: str, idx: int, e: Any, w: _Walk, k: float, g: complex, z0: complex, wavelength: float,
                rate: _Rating, warnings_: list[str]) -> LinePower:
    """One line section: the largest voltage along its cable and its heat."""
    vo, io, vi, ii = (k * x for x in w.line_state[idx])
    d = _grid(max(e.length_m, MIN_MODEL_LENGTH_M), wavelength)  # from the antenna-side end
    vz = np.cosh(g * d) * vo + z0 * np.sinh(g * d) * io
    vmax = float(np.abs(vz).max())
    diss = 0.5 * ((vi * np.conj(ii)).real - (vo * np.conj(io)).real)
    vmargin = rate.rating_peak / vmax if (rate.rating_peak and vmax > 0) else None
    _margin_warnings(warnings_, vmargin, vmax, rate.rating_rms, f"{lid} (line section)")
    return LinePower(line_id=lid, element_index=idx, max_voltage_peak_v=vmax, dissipated_w=float(diss))


def _nodes(filt: Filter, w: _Walk, k: float, v_matched: float, rate: _Rating,
           warnings_: list[str]) -> list[NodeVoltage]:
    """The radio port, every tee's junction and the antenna port."""
    nodes = [NodeVoltage(where="radio port", voltage_peak_v=abs(k * w.v1),
                         ratio_to_matched=abs(k * w.v1) / v_matched)]
    for t, group in enumerate(filt.tees(), start=1):
        vt = abs(k * w.tee_v[group[0]])
        nodes.append(NodeVoltage(where=f"tee {t}", voltage_peak_v=vt, ratio_to_matched=vt / v_matched))
        _margin_warnings(warnings_, rate.rating_peak / vt if (rate.rating_peak and vt > 0) else None, vt,
                         rate.rating_rms, f"tee {t} (through line)")
    nodes.append(NodeVoltage(where="antenna port", voltage_peak_v=k, ratio_to_matched=k / v_matched))
    return nodes


def _connectors(hw: Any, w: _Walk, k: float,
                warnings_: list[str]) -> tuple[list[ConnectorVoltage], float | None]:
    """The largest voltage on every connector section (tee bodies, plugs, barrels), against the
    family's rating (``hardware.family.max_voltage_peak_v``, else :data:`CONNECTOR_RATINGS`)."""
    if hw is None:
        return [], None
    rating = connector_rating_peak_v(hw)
    worst: dict[str, float] = {}
    for where, v in w.sections:
        worst[where] = max(worst.get(where, 0.0), k * v)
    out = []
    for name, v in reversed(worst.items()):  # radio side first
        margin = rating / v if (rating and v > 0) else None
        out.append(ConnectorVoltage(where=name, voltage_peak_v=v, rating_peak_v=rating, margin=margin))
        if margin is not None and margin < THIN_MARGIN:
            word = "EXCEEDS" if margin < 1.0 else "is within 2x of"
            warnings_.append(f"{name}: {v:.0f} V peak {word} the {hw.family.name.upper()} connectors' "
                             f"rating {rating:.0f} V peak (margin {margin:.2f}x)")
    return out, rating


def _notes(cable: Any, rating: float | None, hw: Any, conn_peak: float | None, vswr_note: bool,
           z_system: float) -> list[str]:
    notes = []
    if rating is None:
        notes.append(f"cable {getattr(cable, 'name', '?')} has no published voltage rating: "
                     "voltages not checked")
    if hw is not None:
        src = CONNECTOR_RATINGS.get(hw.family.name, (None, "the site's figure"))[1]
        notes.append(f"connectors ({hw.family.name.upper()}) checked at every tee, plug and barrel "
                     + (f"against {conn_peak:.0f} V peak ({src})" if conn_peak else
                        "(no rating known: not checked)"))
    if vswr_note:
        notes.append(VSWR_NOTE.format(z=z_system))
    return notes


def _margin_warnings(out: list[str], margin: float | None, vmax: float, rating_rms: float | None,
                     where: str) -> None:
    if margin is None or margin >= THIN_MARGIN or rating_rms is None:
        return
    word = "EXCEEDS" if margin < 1.0 else "is within 2x of"
    out.append(
        f"{where}: {vmax:.0f} V peak {word} the cable's rating {rating_rms:g} V RMS "
        f"({math.sqrt(2.0) * rating_rms:.0f} V peak; margin {margin:.2f}x)"
    )

