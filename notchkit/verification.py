"""Check a built filter from its measured sweep: band by band against its requirements.

:func:`verify` reads a Touchstone sweep of an assembled filter -- ``.s2p``
(radio side on port 1), or ``.s1p`` of the radio side with the antenna side
into a matched load -- and the filter's requirements from the plan JSON (by
filter id), and checks every pass band (insertion loss, SWR) and notch
(attenuation) at the sweep's own frequency points inside each band, with the
same figures the design used. When a requirement is not met (or when asked)
it runs :func:`notchkit.diagnose.diagnose` to say which piece is off.

Figures (the design's, :mod:`notchkit.solver`):

- insertion loss ``-20 log10 |S21|`` (worst: the largest in the band);
- SWR ``(1 + |S11|) / (1 - |S11|)`` at the radio port (worst: the largest);
- notch attenuation ``-20 log10 |S21|`` (worst: the smallest in the band).

A one-port sweep cannot measure ``S21``. A passive filter has
``|S21|^2 <= 1 - |S11|^2``, so it gives a lower bound on the attenuation
(``-10 log10 (1 - |S11|^2)``): a notch whose bound reaches the requirement is
met, else "not measured"; the insertion loss is at least the mismatch loss
``-10 log10 (1 - |S11|^2)``, so it can be shown not met but never met. Any
requirement not measured makes the verdict "not shown" (exit code 1): sweep
S21 to check it.

References
----------
D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 4.3
(S-parameters; ``|S11|^2 + |S21|^2 <= 1`` for a passive two-port) and sec. 2.3
(SWR).
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np

from notchkit.errors import CableError, MeasurementError, UsageError
from notchkit.report.summary import summary_html, summary_repr
from notchkit.requirements import filter_label, guarded
from notchkit.resonance import named

MIN_BAND_POINTS = 3
"""A band with fewer of the sweep's points inside it earns a warning."""
MAX_SWEEPS = 32
"""Most sweep files one check merges."""


@dataclass(frozen=True, slots=True, kw_only=True)
class BandCheck:
    """One band of one requirement, measured.

    ``meets`` is ``None`` where a one-port sweep cannot tell.
    """

    kind: Literal["pass", "notch"]
    lo_mhz: float
    hi_mhz: float
    points: int
    quantity: str
    """``"insertion loss"``, ``"SWR"`` or ``"attenuation"``."""
    required: float
    """The limit: at most (insertion loss dB, SWR) or at least (attenuation dB)."""
    measured: float | None
    """The worst value in the band (a bound for a one-port notch or insertion loss)."""
    worst_mhz: float | None
    meets: bool | None
    designed: float | None = None
    """What the design gave for the same figure (from the plan)."""
    note: str = ""

    def to_json(self) -> dict[str, Any]:
        return {"kind": self.kind, "lo_mhz": self.lo_mhz, "hi_mhz": self.hi_mhz, "points": self.points,
                "quantity": self.quantity, "required": self.required, "measured": self.measured,
                "worst_mhz": self.worst_mhz, "meets": self.meets, "designed": self.designed,
                "note": self.note}


@dataclass(frozen=True, slots=True, kw_only=True)
class VerifyResult:
    """Everything ``notchkit verify`` says about one measured filter."""

    __repr__ = summary_repr
    _repr_html_ = summary_html

    measurement: str
    plan: str
    filter_id: str
    where: str
    ports: int
    sweep_mhz: tuple[float, float]
    checks: tuple[BandCheck, ...]
    diagnosis: Any = None
    warnings: tuple[str, ...] = field(default=())

    @property
    def meets(self) -> bool | None:
        """True: every requirement met; False: one is not; None: one could not be measured."""
        states = [c.meets for c in self.checks]
        if any(s is False for s in states):
            return False
        if any(s is None for s in states):
            return None
        return True

    @property
    def verdict(self) -> str:
        from notchkit.report.summary import state_word

        word = state_word(self.meets, loud=True)
        return word if self.meets is not None else f"{word} (a one-port sweep cannot measure it all)"

    def to_json(self) -> dict[str, Any]:
        return {"measurement": self.measurement, "plan": self.plan, "filter": self.filter_id,
                "where": self.where, "ports": self.ports, "sweep_mhz": list(self.sweep_mhz),
                "meets": self.meets, "verdict": self.verdict, "checks": [c.to_json() for c in self.checks],
                "diagnosis": None if self.diagnosis is None else self.diagnosis.to_json(),
                "warnings": list(self.warnings)}


def _db(x: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return -20.0 * np.log10(np.maximum(np.abs(x), 1e-15))


def check_bands(record: Any, network: Any) -> tuple[tuple[BandCheck, ...], tuple[str, ...]]:
    """Every pass band and notch of ``record`` checked at ``network``'s own points.

    Raises
    ------
    MeasurementError
        A band of the requirement with no point of the sweep inside it.
    """
    f = np.asarray(network.f, dtype=float) / 1e6
    s = np.asarray(network.s)
    s11 = s[:, 0, 0]
    s21 = s[:, 1, 0] if network.nports == 2 else None
    # passive: |S21|^2 <= 1 - |S11|^2; a reflection of 1 or more (noise, calibration) bounds nothing
    refl = np.abs(s11)
    bound = np.where(refl < 1.0, -10.0 * np.log10(np.clip(1.0 - refl ** 2, 1e-30, 1.0)), np.nan)
    checks, warns = [], []
    bands = [("pass", b) for b in record.passes] + [("notch", n) for n in record.notches]
    for kind, b in bands:
        inside = (f >= b.lo_mhz) & (f <= b.hi_mhz)
        n = int(inside.sum())
        if n == 0:
            raise MeasurementError(
                f"the sweep {f[0]:.4g}-{f[-1]:.4g} MHz has no point in the {kind} band "
                f"{b.lo_mhz:g}-{b.hi_mhz:g} MHz of filter {record.id} (give sweeps with points in every "
                "band; several files may be given, e.g. one narrow sweep around each band)")
        if n < MIN_BAND_POINTS:
            warns.append(f"only {n} point(s) of the sweep in the {kind} band {b.lo_mhz:g}-{b.hi_mhz:g} MHz: "
                         "sweep with more points")
        fb = f[inside]
        if kind == "pass":
            rho = np.minimum(np.abs(s11[inside]), 1.0 - 1e-12)
            swr = (1.0 + rho) / (1.0 - rho)
            i = int(np.argmax(swr))
            checks.append(BandCheck(kind="pass", lo_mhz=b.lo_mhz, hi_mhz=b.hi_mhz, points=n, quantity="SWR",
                                    required=b.max_swr, measured=float(swr[i]), worst_mhz=float(fb[i]),
                                    meets=bool(swr[i] <= b.max_swr), designed=b.worst_swr))
            if s21 is not None:
                il = _db(s21[inside])
                i = int(np.argmax(il))
                checks.append(BandCheck(kind="pass", lo_mhz=b.lo_mhz, hi_mhz=b.hi_mhz, points=n,
                                        quantity="insertion loss", required=b.max_insertion_loss_db,
                                        measured=float(il[i]), worst_mhz=float(fb[i]),
                                        meets=bool(il[i] <= b.max_insertion_loss_db),
                                        designed=b.worst_insertion_loss_db))
            else:
                lb = np.nan_to_num(bound[inside], nan=0.0)
                i = int(np.argmax(lb))
                over = bool(lb[i] > b.max_insertion_loss_db)
                checks.append(BandCheck(
                    kind="pass", lo_mhz=b.lo_mhz, hi_mhz=b.hi_mhz, points=n, quantity="insertion loss",
                    required=b.max_insertion_loss_db, measured=float(lb[i]), worst_mhz=float(fb[i]),
                    meets=False if over else None, designed=b.worst_insertion_loss_db,
                    note="at least (mismatch loss; a one-port sweep cannot show the rest)"))
        else:
            if s21 is not None:
                att = _db(s21[inside])
                i = int(np.argmin(att))
                checks.append(BandCheck(kind="notch", lo_mhz=b.lo_mhz, hi_mhz=b.hi_mhz, points=n,
                                        quantity="attenuation", required=b.required_db,
                                        measured=float(att[i]), worst_mhz=float(fb[i]),
                                        meets=bool(att[i] >= b.required_db), designed=b.worst_attenuation_db))
            else:
                lb = bound[inside]
                if np.isnan(lb).any():
                    checks.append(BandCheck(
                        kind="notch", lo_mhz=b.lo_mhz, hi_mhz=b.hi_mhz, points=n, quantity="attenuation",
                        required=b.required_db, measured=None, worst_mhz=None, meets=None,
                        designed=b.worst_attenuation_db,
                        note="|S11| of 1 or more in the band (noise or calibration): no bound"))
                    continue
                i = int(np.argmin(lb))
                ok = bool(lb[i] >= b.required_db)
                checks.append(BandCheck(
                    kind="notch", lo_mhz=b.lo_mhz, hi_mhz=b.hi_mhz, points=n, quantity="attenuation",
                    required=b.required_db, measured=float(lb[i]), worst_mhz=float(fb[i]),
                    meets=True if ok else None, designed=b.worst_attenuation_db,
                    note="at least (from |S11|: a passive filter passes no more than 1 - |S11|^2)"))
    return tuple(checks), tuple(warns)


def read_sweeps(paths: str | os.PathLike[str] | Sequence[str | os.PathLike[str]]) -> Any:
    """One :class:`skrf.Network` from one or several sweeps of the same filter (all one- or
    all two-port), their points merged in frequency order (a repeated frequency: the first
    file's), referred to 50 ohms.

    Raises
    ------
    MeasurementError
        A file that cannot be read (see :func:`notchkit.trimming.read_measurement`) or
        files with different port counts.
    """
    import skrf

    from notchkit.trimming import read_measurement

    items = [paths] if isinstance(paths, str | os.PathLike) else list(paths)
    if not items or len(items) > MAX_SWEEPS:
        raise named(UsageError(f"measurement_path: give 1 to {MAX_SWEEPS} sweep files"), "measurement_path")
    nets = []
    for p in items:
        ntwk = read_measurement(p)
        if not np.allclose(np.asarray(ntwk.z0), 50.0):
            ntwk = ntwk.copy()
            ntwk.renormalize(50.0)
        nets.append(ntwk)
    ports = {n.nports for n in nets}
    if len(ports) != 1:
        raise MeasurementError(f"{', '.join(map(str, items))}: mixes one- and two-port sweeps "
                               "(give one kind)")
    if len(nets) == 1:
        return nets[0]
    f = np.concatenate([n.f for n in nets])
    s = np.concatenate([n.s for n in nets])
    f, first = np.unique(f, return_index=True)
    return skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=s[first], z0=50.0)


def _victims(survey: Any, record: Any) -> list[str]:
    """The victims of the plan's survey threats that ask a notch of ``record``'s location."""
    loc = {"radio": record.radio, "side": record.side}
    threats = survey.get("threats", []) if isinstance(survey, Mapping) else []
    return [str(t.get("victim")) for t in threats
            if isinstance(t, Mapping) and loc in (t.get("filters") or [])]


def verify(
    measurement_path: str | os.PathLike[str] | Sequence[str | os.PathLike[str]],
    *,
    plan_path: str | os.PathLike[str],
    filter_id: str,
    diagnose: bool | None = None,
    cable: Any = None,
) -> VerifyResult:
    """Check a built filter's measured sweep against its requirements from the plan.

    Parameters
    ----------
    measurement_path : path or sequence of paths
        Touchstone ``.s2p`` (radio side on port 1) or ``.s1p`` (radio side; the
        antenna side into a matched load); several files of the same filter (e.g.
        one narrow sweep around each band) are merged. Read only.
    plan_path : path
        The plan JSON (``notchkit plan --outdir``) or design JSON.
    filter_id : str
        The filter in the plan, e.g. ``"F2"``.
    diagnose : bool, optional
        Fit the filter model to the sweep to find the piece that is off
        (:func:`notchkit.diagnose.diagnose`): ``None`` (default) when a
        requirement is not met, ``True`` always, ``False`` never.
    cable : Cable, optional
        The cable for the diagnosis (default: the library's cable of the plan's
        type; a cable defined only in the site file must be given).

    Returns
    -------
    VerifyResult
        ``meets`` True / False / None (a one-port sweep could not measure a figure).

    Raises
    ------
    MeasurementError, PlanFileError, UsageError, CableError
        Messages name the parameters above.
    """
    from notchkit.planfile import PlanFileError, read_plan

    if not isinstance(filter_id, str) or not filter_id:
        raise named(UsageError(f"filter_id: {filter_id!r} must be a filter id such as 'F1'"), "filter_id")
    if diagnose not in (None, True, False):
        raise named(UsageError(f"diagnose: {diagnose!r} must be True, False or None"), "diagnose")
    doc = read_plan(plan_path)
    try:
        record = doc.filter(filter_id)
    except PlanFileError as exc:
        raise named(exc, "filter_id") from None
    ntwk = read_sweeps(measurement_path)
    label = (str(measurement_path) if isinstance(measurement_path, str | os.PathLike)
             else ", ".join(map(str, measurement_path)))
    try:
        checks, warns = check_bands(record, ntwk)
    except MeasurementError as exc:
        raise MeasurementError(f"{label}: {exc}") from None
    meets = all(c.meets for c in checks)
    diag = None
    if diagnose or (diagnose is None and not meets):
        try:
            diag = _diagnose(record, ntwk, cable)
        except CableError as exc:
            warns = (*warns, f"no diagnosis: {exc}")
    f = np.asarray(ntwk.f, dtype=float)
    where = filter_label(record.radio, record.side, guarded(record.radio, _victims(doc.survey, record)))
    return VerifyResult(measurement=label, plan=str(plan_path), filter_id=record.id, where=where,
                        ports=int(ntwk.nports), sweep_mhz=(float(f[0] / 1e6), float(f[-1] / 1e6)),
                        checks=checks, diagnosis=diag, warnings=warns)


def _diagnose(record: Any, ntwk: Any, cable: Any) -> Any:
    from notchkit.cables import get_cable
    from notchkit.diagnose import diagnose

    if cable is None:
        try:
            cable = get_cable(record.cable.type)
        except CableError:
            raise CableError(f"cable: {record.cable.type!r} is not in the cable library (a cable defined in "
                             "the site file): give it to verify(..., cable=) for the diagnosis") from None
    if not math.isclose(float(cable.velocity_factor), record.cable.velocity_factor, rel_tol=1e-9):
        import dataclasses

        cable = dataclasses.replace(cable, velocity_factor=record.cable.velocity_factor)
    return diagnose(record, ntwk, cable=cable)


__all__ = ["verify", "VerifyResult", "BandCheck", "check_bands", "read_sweeps"]
