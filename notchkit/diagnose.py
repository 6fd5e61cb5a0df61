"""Which piece of a built filter is off: a least-squares fit of the filter model to its sweep.

:func:`diagnose` fits the planned filter (its kinds of element, from the plan
JSON) to a measured sweep by changing each element's electrical length and the
cable's loss, with :func:`scipy.optimize.least_squares`, and says which piece
is off and by how many millimetres, whether the cable's velocity factor is not
the plan's, whether a stub's end is the other kind (open for short), and
whether the loss is high. It refuses, saying why, when even the best fit does
not explain the measurement.

Method
------
1. The residuals are the differences of ``|S21|`` and ``|S11|`` (``|S11|``
   only for a one-port sweep of the filter into a load) between the sweep and
   the model (:func:`notchkit.filters.evaluate_batch`, the design's own
   model), at up to :data:`MAX_FIT_POINTS` of the sweep's own frequencies.
   Magnitudes do not depend on where the analyser's reference planes are.
2. Every element's cable is ``k_i`` times the plan's electrically. With
   connection hardware a piece's length includes its plugs (one for a stub,
   two for a line section), which are hardware with their own velocity
   factor: they stay as planned and ``k_i`` scales only the cable behind
   them (:func:`notchkit.modelreport.element_plugs_m`). A coarse scan
   of one common ``k`` (all pieces long or short together: a velocity factor
   that is not the plan's) and then of each ``k_i`` alone finds the basin; the
   least-squares fit of all ``k_i`` and a loss scale (times the cable's
   published loss) finishes. The same is done with each stub's end swapped
   (open <-> short); the swap is reported only when it fits far better.
3. Only electrical lengths can be seen in a sweep: a piece cut long and a cable
   with a lower velocity factor look the same. With two or more pieces, the
   median ``k`` is taken as the cable's (``VF = VF_plan / k``) when it is
   clear of 1, and each piece's error in millimetres is what is left,
   ``(k_i / k - 1) L_i`` (``L_i`` its cable, plugs excluded). With one piece
   both readings are given.
4. The standard errors come from the fit's Jacobian (``(J^T J)^-1 s^2``); a
   piece is named when its error exceeds both :data:`REPORT_MM` and three
   standard errors.

References
----------
scipy.optimize.least_squares (trust-region reflective); the line model is
Pozar, *Microwave Engineering*, 4th ed., sec. 2.3 and table 4.2.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

MAX_FIT_POINTS = 800
"""Most frequency points the fit uses (evenly chosen among the sweep's own)."""
MAX_RMS = 0.03
"""Largest RMS residual (linear |S|) of a fit that counts as explaining the measurement."""
REPORT_MM = 1.5
"""Smallest length error named as a fault, mm (about the trim step on an analyser)."""
VF_CLEAR = 0.004
"""A common electrical-length factor further than this from 1 is read as the cable's VF."""
LOSS_HIGH = 1.5
"""Loss above this many times the cable's published figure is reported."""
SWAP_GAIN = 4.0
"""A swapped end is reported when its fit's cost is this many times smaller."""
K_BOUNDS = (0.8, 1.25)


@dataclass(frozen=True, slots=True, kw_only=True)
class ElementFit:
    """One element's fitted length."""

    id: str
    kind: str
    """``"open"``, ``"short"`` (as fitted) or ``"line"``."""
    planned_m: float
    """The plan's electrical path (a stub's includes the tee allowance), m."""
    factor: float
    """Fitted over planned electrical length of the element's cable (its plugs held as planned)."""
    error_mm: float
    """Physical length error once the cable's VF is accounted for, mm (+: long)."""
    error_sd_mm: float

    def to_json(self) -> dict[str, Any]:
        return {"id": self.id, "kind": self.kind, "planned_m": self.planned_m, "factor": _fin(self.factor),
                "error_mm": _fin(self.error_mm), "error_sd_mm": _fin(self.error_sd_mm)}


@dataclass(frozen=True, slots=True, kw_only=True)
class Diagnosis:
    """What the fit says about the built filter (``refused`` set: no finding can be trusted)."""

    rms_residual: float
    elements: tuple[ElementFit, ...]
    velocity_factor: float | None
    """The cable's effective VF when the pieces agree on one (``None``: not distinguishable)."""
    plan_velocity_factor: float
    loss_scale: float
    loss_scale_sd: float
    swapped: str | None
    """Id of a stub whose end is the other kind than planned."""
    findings: tuple[str, ...]
    refused: str | None = None
    points: int = 0
    extra: dict[str, Any] = field(default_factory=dict)

    @property
    def faulty(self) -> tuple[str, ...]:
        """Ids of the pieces named as off."""
        return tuple(e.id for e in self.elements if _named_fault(e))

    def to_json(self) -> dict[str, Any]:
        return {"refused": self.refused, "rms_residual": _fin(self.rms_residual), "points": self.points,
                "velocity_factor": _fin(self.velocity_factor),
                "plan_velocity_factor": self.plan_velocity_factor,
                "loss_scale": _fin(self.loss_scale), "loss_scale_sd": _fin(self.loss_scale_sd),
                "swapped": self.swapped,
                "faulty": list(self.faulty), "elements": [e.to_json() for e in self.elements],
                "findings": list(self.findings)}


def _fin(x: float | None) -> float | None:
    """A finite float for JSON, else ``None`` (an undetermined standard error)."""
    return None if x is None or not math.isfinite(x) else float(x)


def _named_fault(e: ElementFit) -> bool:
    return abs(e.error_mm) > max(REPORT_MM, 3.0 * e.error_sd_mm)


class _Medium:
    """The plan's cable with its loss scaled (a medium for :func:`notchkit.filters.evaluate_batch`)."""

    def __init__(self, cable: Any, scale: float) -> None:
        self.z0_ohm = float(cable.z0_ohm)
        self.velocity_factor = float(cable.velocity_factor)
        self._cable, self._scale = cable, float(scale)

    def alpha_np_per_m(self, freq_hz: Any) -> Any:
        return self._scale * np.asarray(self._cable.alpha_np_per_m(freq_hz), dtype=float)


class _Problem:
    """The measured magnitudes and the model for one topology."""

    def __init__(self, kinds: tuple[str, ...], planned: np.ndarray, cable: Any, f: np.ndarray,
                 s21: np.ndarray | None, s11: np.ndarray, z_system: float, hardware: Any = None) -> None:
        self.kinds, self.planned, self.cable, self.f = kinds, planned, cable, f
        self.hardware = hardware
        self.plugs = _plugs(cable, hardware, kinds)  # fixed: hardware with its own VF
        self.m21 = None if s21 is None else np.abs(s21)
        self.m11 = np.abs(s11)
        self.z = z_system

    def model(self, k: np.ndarray, loss: float) -> np.ndarray:
        """Residual rows for each row of ``k`` (candidates x elements)."""
        from notchkit.filters import evaluate_batch

        k = np.atleast_2d(k)
        medium: Any = _Medium(self.cable, loss)
        if self.hardware is not None:  # the plan's tees, plugs and short (notchkit.hardware.Model)
            from notchkit.hardware import Model

            medium = Model(cable=medium, hardware=self.hardware, depth_ceiling_db=None)
        lengths = self.plugs + k * np.maximum(self.planned - self.plugs, 0.0)
        s21, s11 = evaluate_batch(self.kinds, lengths, medium, self.f, self.z)
        r = [np.abs(s11) - self.m11]
        if self.m21 is not None:
            r.insert(0, np.abs(s21) - self.m21)
        return np.concatenate(r, axis=1)

    def cost(self, k: np.ndarray, loss: float = 1.0) -> np.ndarray:
        return np.sum(self.model(k, loss) ** 2, axis=1)


def _plugs(cable: Any, hardware: Any, kinds: tuple[str, ...]) -> np.ndarray:
    """The plug length each element's planned length includes, m (0 without hardware)."""
    if hardware is None:
        return np.zeros(len(kinds))
    from notchkit.hardware import Model
    from notchkit.modelreport import element_plugs_m

    return element_plugs_m(Model(cable=cable, hardware=hardware, depth_ceiling_db=None), kinds)


def _scan(p: _Problem) -> np.ndarray:
    """Coarse start: one common factor, then each element alone (twice round)."""
    n = len(p.kinds)
    common = np.linspace(0.9, 1.1, 201)
    k = np.ones(n) * common[int(np.argmin(p.cost(np.outer(common, np.ones(n)))))]
    grid = np.linspace(-0.06, 0.06, 121)
    for _ in range(2):
        for i in range(n):
            cand = np.tile(k, (grid.size, 1))
            cand[:, i] = k[i] * (1.0 + grid)
            k = cand[int(np.argmin(p.cost(cand)))].copy()
    return np.clip(k, K_BOUNDS[0] + 1e-6, K_BOUNDS[1] - 1e-6)


def _fit(p: _Problem) -> tuple[np.ndarray, float, float, np.ndarray]:
    """``(k, loss, cost, covariance)`` of the least-squares fit from the scan's start."""
    from scipy.optimize import least_squares

    n = len(p.kinds)
    start = np.r_[_scan(p), 0.0]  # the loss scale as its natural log

    def fun(x: np.ndarray) -> np.ndarray:
        return p.model(x[:n], math.exp(x[n]))[0]

    lo = np.r_[np.full(n, K_BOUNDS[0]), math.log(0.05)]
    hi = np.r_[np.full(n, K_BOUNDS[1]), math.log(50.0)]
    sol = least_squares(fun, start, bounds=(lo, hi), x_scale=np.r_[np.full(n, 1e-3), 0.1],
                        diff_step=1e-7, xtol=1e-12, ftol=1e-12, gtol=1e-12, max_nfev=200 * (n + 1))
    m = sol.fun.size
    s2 = float(np.sum(sol.fun ** 2)) / max(m - n - 1, 1)
    try:
        cov = np.linalg.pinv(sol.jac.T @ sol.jac) * s2
    except np.linalg.LinAlgError:
        cov = np.full((n + 1, n + 1), np.inf)
    return sol.x[:n], math.exp(sol.x[n]), float(np.sum(sol.fun ** 2)), cov


def _fit_points(f: np.ndarray) -> np.ndarray:
    if f.size <= MAX_FIT_POINTS:
        return np.arange(f.size)
    return np.unique(np.linspace(0, f.size - 1, MAX_FIT_POINTS).round().astype(int))


def diagnose(record: Any, network: Any, *, cable: Any = None, z_system: float = 50.0) -> Diagnosis:
    """Fit the planned filter to its measured sweep and name what is off.

    Parameters
    ----------
    record : notchkit.planfile.FilterRecord
        The filter as the plan JSON describes it.
    network : skrf.Network
        The sweep of the assembled filter: two ports (radio side on port 1), or
        one port (radio side, the antenna side into a matched load).
    cable : Cable, optional
        The cable (loss figures); default: the library's cable of the plan's type.
    z_system : float
        Port reference impedance, ohms.

    Returns
    -------
    Diagnosis
        With ``refused`` set when the best fit's RMS residual exceeds
        :data:`MAX_RMS` (the sweep does not look like this filter).
    """
    from notchkit.cables import get_cable

    cab = cable if cable is not None else get_cable(record.cable.type)
    f_all = np.asarray(network.f, dtype=float)
    idx = _fit_points(f_all)
    f = f_all[idx]
    s = np.asarray(network.s)[idx]
    s21 = s[:, 1, 0] if network.nports == 2 else None
    s11 = s[:, 0, 0]
    kinds = tuple(e.termination if e.kind == "stub" else "line" for e in record.elements)
    planned = np.array([e.length_m for e in record.elements], dtype=float)
    hw = plan_hardware(record)
    base = _Problem(kinds, planned, cab, f, s21, s11, z_system, hw)
    best: tuple[Any, ...] = (*_fit(base), None, base)
    stubs = [i for i, kd in enumerate(kinds) if kd != "line"]
    for i in stubs:
        swapped = list(kinds)
        swapped[i] = "short" if kinds[i] == "open" else "open"
        p = _Problem(tuple(swapped), planned, cab, f, s21, s11, z_system, hw)
        k, loss, cost, cov = _fit(p)
        if cost * SWAP_GAIN < best[2]:
            best = (k, loss, cost, cov, i, p)
    k, loss, cost, cov, swap_i, prob = best
    rows = prob.model(k, loss).size
    rms = math.sqrt(cost / rows)
    return _interpret(record, prob.kinds, k, loss, cov, rms, swap_i, float(cab.velocity_factor), f.size,
                      prob.plugs)


def plan_hardware(record: Any) -> Any:
    """The plan filter's connection hardware (``model.hardware``) as a
    :class:`notchkit.hardware.Hardware`, or None (the classic model)."""
    hw = (getattr(record, "extra", None) or {}).get("model") or {}
    hw = hw.get("hardware") if isinstance(hw, dict) else None
    if not isinstance(hw, dict):
        return None
    from notchkit.hardware import Hardware

    figures = {k: float(hw[k]) for k in ("z_pair_ohm", "plug_mm", "tee_z_ohm", "tee_through_mm",
                                         "tee_side_mm", "barrel_z_ohm", "barrel_mm") if k in hw}
    return Hardware.of(str(hw.get("family", "uhf")), short_nh=float(hw.get("short_nh", 3.0)),
                       barrels_per_port=int(hw.get("barrels_per_port", 0)), **figures)


def _interpret(record: Any, kinds: tuple[str, ...], k: np.ndarray, loss: float, cov: np.ndarray, rms: float,
               swap_i: int | None, vf0: float, points: int, plugs: np.ndarray) -> Diagnosis:
    n = k.size
    sd_k = np.sqrt(np.clip(np.diag(cov)[:n], 0.0, None))
    loss_sd = loss * math.sqrt(max(float(cov[n, n]), 0.0))
    ids = [e.id for e in record.elements]
    planned = np.array([e.length_m for e in record.elements], dtype=float)
    cable_m = np.maximum(planned - plugs, 0.0)  # what k scales: each piece's cable, plugs held
    common, vf = 1.0, None
    if n >= 2:
        med = float(np.median(k))
        # pieces that agree with the median within what the fit can tell (or REPORT_MM)
        agree = np.abs(k - med) * cable_m * 1000.0 <= np.maximum(REPORT_MM, 3.0 * sd_k * cable_m * 1000.0)
        if abs(med - 1.0) > VF_CLEAR and int(agree.sum()) > n / 2:
            common, vf = med, vf0 / med
    elements = tuple(
        ElementFit(id=ids[i], kind=kinds[i], planned_m=float(planned[i]), factor=float(k[i]),
                   error_mm=float((k[i] / common - 1.0) * cable_m[i] * 1000.0),
                   error_sd_mm=float(sd_k[i] * cable_m[i] * 1000.0))
        for i in range(n))
    if rms > MAX_RMS:
        return Diagnosis(rms_residual=rms, elements=elements, velocity_factor=None, plan_velocity_factor=vf0,
                         loss_scale=loss, loss_scale_sd=loss_sd, swapped=None, findings=(), points=points,
                         refused=(f"no diagnosis: even the best fit leaves an RMS difference of {rms:.3f} "
                                  f"(|S|; at most {MAX_RMS:g} counts as a fit), so the sweep does not "
                                  f"look like filter {record.id} with any single piece off; check the "
                                  "connections, the calibration and that this is the right filter"))
    findings = _findings(record, elements, vf, vf0, loss, swap_i, kinds)
    return Diagnosis(rms_residual=rms, elements=elements, velocity_factor=vf, plan_velocity_factor=vf0,
                     loss_scale=loss, loss_scale_sd=loss_sd,
                     swapped=None if swap_i is None else ids[swap_i], findings=findings, points=points)


def _findings(record: Any, elements: tuple[ElementFit, ...], vf: float | None, vf0: float, loss: float,
              swap_i: int | None, kinds: tuple[str, ...]) -> tuple[str, ...]:
    from notchkit.cutlist import format_length
    from notchkit.trimming import inches_16ths

    out = []
    if swap_i is not None:
        e = elements[swap_i]
        planned = "short" if kinds[swap_i] == "open" else "open"
        out.append(f"{e.id} behaves as a{'n open' if kinds[swap_i] == 'open' else ' shorted'} stub; the plan "
                   f"says {planned}: remake its end as {'a short' if planned == 'short' else 'an open end'}")
    if vf is not None:
        pct = (vf0 / vf - 1.0) * 100.0
        out.append(f"the cable's effective velocity factor is {vf:.3f}, not the plan's {vf0:.3f}: every "
                   f"piece is {abs(pct):.1f} % {'long' if pct > 0 else 'short'} electrically; record the "
                   "spool's VF (verify --spool --calibration), make the plan again with it, re-trim each "
                   "stub to its resonance and re-cut any line section")
    single = len(elements) == 1
    for e in elements:
        if not _named_fault(e):
            continue
        mm = e.error_mm
        text = (f"{abs(mm):.1f} mm ({inches_16ths(abs(mm) / 1000.0)[1]}, +-{max(e.error_sd_mm, 0.1):.1f} mm "
                "of fit)")
        if e.kind == "line":
            out.append(f"line section {e.id} is {text} too {'long' if mm > 0 else 'short'}: re-cut it to "
                       f"{format_length(e.planned_m)}")
        elif mm > 0:
            end = "open end" if e.kind == "open" else "shorted end (remove the short, cut, short again)"
            out.append(f"{e.id} is {text} too long: cut {abs(mm):.1f} mm off its {end}, or trim it to its "
                       "resonance with notchkit trim")
        else:
            out.append(f"{e.id} is {text} too short: cable cannot be added back; cut a new stub "
                       f"(first cut from the plan) and trim it to its resonance")
        if single:
            out.append(f"(with one piece a cable velocity factor of {vf0 / e.factor:.3f} instead of "
                       f"{vf0:.3f} would look the same; the trim is the same either way)")
    if loss > LOSS_HIGH:
        out.append(f"the loss is {loss:.1f} times the cable's published figure: check the connectors, the "
                   "shorts, the tee and for water in the cable")
    if not out:
        out.append(f"no piece is off by more than {REPORT_MM:g} mm and the loss is as published "
                   f"({loss:.2f} times)")
    return tuple(out)


__all__ = ["diagnose", "Diagnosis", "ElementFit"]
