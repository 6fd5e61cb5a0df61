"""Design every filter a site needs: survey, solver, cut list, tolerance and power check.

:func:`design` is the library face of ``notchkit design SITE.yaml``;
:func:`design_request` of the ad-hoc ``notchkit design --pass ... --notch ...``.
Both return a :class:`DesignReport` of plain frozen result objects that the
command line, the plan and the reports format; :meth:`DesignReport.to_json`
is the JSON document (keys ``filters``, ``meets``, ``site`` fixed).

Nothing here prints. The physics is in :mod:`notchkit.solver`,
:mod:`notchkit.cutlist`, :mod:`notchkit.buildyield` and :mod:`notchkit.power`.
"""

from __future__ import annotations

import dataclasses
import math
import os
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from notchkit.errors import DesignError
from notchkit.filters import Filter
from notchkit.jsonvalues import finite
from notchkit.report.summary import summary_html, summary_repr
from notchkit.requirements import FilterRequirement, NotchSpec
from notchkit.site.model import (
    DEFAULT_CABLE,
    DEFAULT_HARDWARE_FAMILY,
    MAX_FREQ_MHZ,
    MIN_FREQ_MHZ,
    Allowances,
    Band,
    Limits,
)
from notchkit.solver import Solution, describe, solve, verify_sweep_hz

DEFAULT_NOTCH_DB = 30.0
"""Required rejection of an ad-hoc notch when none is given, dB."""
TOLERANCE_SAMPLES = 2000
"""Monte Carlo builds per filter in the tolerance run (standard error of a
probability at most 1.1 %, and fast enough to keep each filter within a second)."""
TOUCHSTONE_POINTS = 2001
"""Points of the Touchstone sweep (plus each band's verification points)."""

Progress = Callable[[str], None]


@dataclass(frozen=True, slots=True, kw_only=True)
class Design:
    """One designed filter with everything needed to build it.

    ``cuts`` is the cut list (one :class:`notchkit.cutlist.StubCut` per stub),
    ``tolerance`` the Monte Carlo result (:class:`notchkit.buildyield.Tolerance`),
    ``power`` the voltage/current/heat check (:class:`notchkit.power.PowerCheck`)
    or ``None`` when no transmitter's power flows through the filter.
    """

    __repr__ = summary_repr
    _repr_html_ = summary_html

    id: str
    requirement: FilterRequirement
    solution: Solution
    cable: Any
    cuts: tuple[Any, ...] = ()
    tolerance: Any = None
    power: Any = None
    lines: tuple[Any, ...] = ()
    """The line sections to cut (:class:`notchkit.cutlist.LineCut`)."""
    hardware: tuple[str, ...] = ()
    """What joins several stubs at one point (:func:`notchkit.cutlist.hardware_notes`)."""
    build_problems: tuple[str, ...] = ()
    """Parts that break a buildability rule (:func:`notchkit.cutlist.buildability`)."""
    yield_target: float = 0.9
    """Share of simulated builds that must meet (``limits.yield_target_pct`` / 100)."""

    @property
    def meets_as_designed(self) -> bool:
        """The nominal design meets every requirement on the dense sweep."""
        return self.solution.meets

    @property
    def build_yield(self) -> float | None:
        """Share of simulated builds meeting every requirement (the tolerance run)."""
        return None if self.tolerance is None else float(self.tolerance.build_yield)

    @property
    def advice(self) -> tuple[str, ...]:
        """The solver's advice, and what to do when the design meets but too few builds would."""
        out = list(self.solution.advice)
        y = self.build_yield
        if self.solution.meets and y is not None and y < self.yield_target - 1e-12:
            out.insert(0, _yield_advice(self))
        out += [f"cannot be built: {x}" for x in self.build_problems]
        return tuple(out)
    model: Any = None
    """What the filter was verified against (:class:`notchkit.hardware.ModelReport`)."""

    @property
    def meets(self) -> bool:
        """Meets as designed, every part can be built, and the build yield reaches its target."""
        y = self.build_yield
        return (self.solution.meets and not self.build_problems
                and (y is None or y >= self.yield_target - 1e-12))

    @property
    def filter(self) -> Filter:
        return self.solution.filter

    @property
    def where(self) -> str:
        """Where the filter goes, e.g. ``"rx filter at wx-alert"``."""
        return self.requirement.label

    @property
    def cable_note(self) -> str | None:
        """A line when a pass band or notch lies outside the cable's published loss table."""
        from notchkit.cables import extrapolation_note

        s = self.solution
        freqs = [x for b in s.passes for x in (b.lo_mhz, b.hi_mhz)]
        freqs += [x for b in s.notches for x in (b.lo_mhz, b.hi_mhz)]
        return extrapolation_note(getattr(self.cable, "cable", self.cable), freqs)  # a hardware.Model's cable

    def to_json(self) -> dict[str, Any]:
        """This filter as JSON-ready data (one entry of the report's ``filters``)."""
        return _design_json(self)


def _yield_advice(d: Design) -> str:
    """Which band fails most in the simulated builds, and what helps."""
    t = d.tolerance
    bands = [(n.probability, f"notch {n.lo_mhz:g}-{n.hi_mhz:g} MHz (95 % of builds reach "
              f"{n.p05_worst_db:.1f} of {n.required_db:.1f} dB)") for n in t.notches]
    bands += [(b.probability, f"pass band {b.lo_mhz:g}-{b.hi_mhz:g} MHz (insertion loss "
               f"{b.nominal_worst_insertion_loss_db:.2f} of {b.max_insertion_loss_db:g} dB, SWR "
               f"{b.nominal_worst_swr:.2f} of {b.max_swr:g} as designed)") for b in t.passes]
    worst = min(bands, key=lambda x: x[0])
    return (f"meets as designed, but only {100 * t.build_yield:.1f} % of simulated builds do (target "
            f"{100 * d.yield_target:g} %): the {worst[1]} fails in {100 * (1 - worst[0]):.1f} % of builds; "
            f"allow another stub, a lower-loss cable or a looser limit, or lower yield_target_pct if "
            f"every filter will be swept and adjusted after assembly")


@dataclass(frozen=True, slots=True, kw_only=True)
class DesignReport:
    """Every filter designed for a site (or one ad-hoc request)."""

    __repr__ = summary_repr
    _repr_html_ = summary_html

    site_name: str | None
    survey: Any
    designs: tuple[Design, ...]

    @property
    def meets(self) -> bool:
        """True when every filter meets every requirement (true for no filter)."""
        return all(d.meets for d in self.designs)

    def to_json(self) -> dict[str, Any]:
        return {
            "site": self.site_name,
            "meets": self.meets,
            "filters": [d.to_json() for d in self.designs],
        }


# ---------------------------------------------------------------- design


def design_filter(
    req: FilterRequirement,
    *,
    cable: Any,
    limits: Limits,
    allowances: Allowances,
    filter_id: str = "F1",
    z_system: float = 50.0,
    tolerance_samples: int = TOLERANCE_SAMPLES,
    progress: Progress | None = None,
) -> Design:
    """Solve one requirement and add its cut list, tolerance run and power check."""
    say = progress or (lambda _m: None)
    sol = solve(req, cable=cable, limits=limits, tee_allowance_m=allowances.tee_allowance_m,
                z_system=z_system, progress=lambda m: say(f"{filter_id}: {m}"), allowances=allowances)
    cuts, tol, power = _build_checks(req, sol, limits, allowances, filter_id, z_system, tolerance_samples)
    from notchkit.cutlist import buildability, hardware_notes, line_cuts
    from notchkit.hardware import model_report

    centres = [0.5 * (n.lo_mhz + n.hi_mhz) for n in req.notches] + [b.centre_mhz for b in req.pass_bands]
    problems = buildability(sol.filter, cuts, min_stub_cut_m=allowances.min_stub_cut_m,
                            min_line_m=allowances.min_line_m, barrel_m=allowances.barrel_m)
    model = model_report(sol.filter, [0.5 * (n.lo_mhz + n.hi_mhz) for n in req.notches],
                         [b.centre_mhz for b in req.pass_bands], z_system)
    return Design(id=filter_id, requirement=req, solution=sol, cable=cable, cuts=cuts, tolerance=tol,
                  power=power, lines=line_cuts(sol.filter, freq_mhz=centres, filter_id=filter_id,
                                                barrel_m=allowances.barrel_m),
                  hardware=hardware_notes(sol.filter), build_problems=problems,
                  yield_target=float(limits.yield_target_pct) / 100.0, model=model)


def _build_checks(req, sol, limits, allowances, filter_id, z_system, samples):
    from notchkit.buildyield import tolerance
    from notchkit.cutlist import cut_list
    from notchkit.power import power_check

    filt = sol.filter
    cuts = cut_list(
        filt,
        notch_mhz=[0.5 * (n.lo_mhz + n.hi_mhz) for n in req.notches],
        pass_mhz=[b.centre_mhz for b in req.pass_bands],
        trim_margin_pct=allowances.trim_margin_pct,
        filter_id=filter_id,
        analyser_mhz=(allowances.analyser_lo_mhz, allowances.analyser_hi_mhz),
    )
    trimmable = {c.element_index: c.trimmable for c in cuts}
    tol = tolerance(
        filt,
        req.notches,
        cut_tolerance_mm=allowances.cut_tolerance_mm,
        vf_spread=allowances.vf_spread,
        samples=samples,
        seed=0,
        z_system=z_system,
        pass_bands=req.pass_bands,
        max_insertion_loss_db=limits.max_insertion_loss_db,
        max_swr=limits.max_swr,
        filter_id=filter_id,
        trimmed=[trimmable.get(i, False) for i in range(len(filt.elements))],
        trim_step_mm=allowances.trim_step_mm,
        trim_freq_error_pct=allowances.trim_freq_error_pct,
        drift_pct=allowances.drift_pct,
    )
    power = None
    if req.power_w is not None and req.power_mhz is not None:
        power = power_check(filt, power_w=req.power_w, freq_mhz=req.power_mhz, z_system=z_system,
                            filter_id=filter_id)
    return tuple(cuts), tol, power


def design(site: Any, *, progress: Progress | None = None, workers: int | None = None,
           calibration: Sequence[Any] = ()) -> DesignReport:
    """Survey a site and design every filter the survey asks for.

    Parameters
    ----------
    site : notchkit.site.model.Site
    progress : callable(str), optional
        Called with a short message as each filter is designed.
    workers : int, optional
        Processes to design filters in at once. ``None`` or ``1`` (default)
        designs them one after another in this process: on the development
        machine worker processes gave no wall-time gain
        (``benchmarks/plan.py``, docs/performance.md). ``2`` or more designs
        them in at most that many worker processes, no more than the cores
        this process may run on (:func:`notchkit.parallel.fork_map`). The
        results are the same either way: every filter's search is
        deterministic and independent. The designs are returned finished;
        nothing else runs while they are made.
    Returns
    -------
    DesignReport
        Filters ``F1``, ``F2``, ... in the survey's order.
    calibration : sequence of SpoolCalibration or path, optional
        Measured cable spools (:mod:`notchkit.calibration`): their cable types are
        designed with the spool's VF and loss, and the outputs say so.

    Raises
    ------
    CableError
        A requirement names a cable neither the library nor the site defines.
    DesignError
        A requirement no filter can satisfy (a pass band overlapping a notch).
    """
    from notchkit.cables import get_cable
    from notchkit.threats import survey

    say = progress or (lambda _m: None)
    if calibration:
        from notchkit.calibration import apply

        site = apply(site, calibration)
    if workers is not None and int(workers) < 1:
        raise DesignError(f"workers {workers!r} must be at least 1")
    from notchkit.hardware import model_for

    sv = survey(site)
    hw = getattr(site, "hardware", None)
    no_allowance = dataclasses.replace(site.allowances, tee_allowance_m=0.0)  # the tee's arms are modelled

    from notchkit.loads import read_load

    for radio in site.radios:  # every given load file is read (a bad one is refused) before designing
        if getattr(getattr(radio, "load", None), "file", None):
            read_load(radio.load.file)

    def medium(req: FilterRequirement) -> Any:  # the cable with the site's hardware, load and ceiling
        radio = next((r for r in site.radios if r.name == req.radio), None)
        return model_for(get_cable(req.cable, site.cables), settings=hw, load=getattr(radio, "load", None),
                         depth_ceiling_db=getattr(site, "depth_ceiling_db", None))

    jobs = [(req, m, site.limits, site.allowances if m.hardware is None else no_allowance, f"F{i}")
            for i, req, m in ((i, req, medium(req)) for i, req in enumerate(sv.filters, start=1))]
    n = len(jobs)
    if workers is not None and int(workers) > 1 and n > 1:
        done = _design_in_processes(jobs, workers, say)
        return DesignReport(site_name=site.name, survey=sv, designs=tuple(done))
    designs: list[Design] = []
    for i, (req, cable, limits, allowances, fid) in enumerate(jobs, start=1):
        say(f"{fid} ({i}/{n}): {req.label}")
        designs.append(design_filter(req, cable=cable, limits=limits, allowances=allowances,
                                     filter_id=fid, progress=say))
    return DesignReport(site_name=site.name, survey=sv, designs=tuple(designs))


def _design_job(job: tuple) -> Design:
    req, cable, limits, allowances, fid = job
    return design_filter(req, cable=cable, limits=limits, allowances=allowances, filter_id=fid)


def _one_thread() -> None:
    from notchkit import filters

    filters.set_threads(1)  # the processes share the cores already


def _design_in_processes(jobs: list[tuple], workers: int | None, say: Progress) -> list[Design]:
    """Design ``jobs`` with :func:`notchkit.parallel.fork_map` (worker processes where
    they can be used, else here), the largest requirements first so the workers
    finish together; the designs in the order of ``jobs``."""
    from notchkit.parallel import fork_map

    order = sorted(range(len(jobs)), key=lambda k: -(len(jobs[k][0].notches) + len(jobs[k][0].pass_bands)))

    def report(i: int, _d: Design, done: int) -> None:
        req, fid = jobs[order[i]][0], jobs[order[i]][4]
        say(f"{fid} ({done}/{len(jobs)} done): {req.label}")

    results = fork_map(_design_job, [jobs[k] for k in order], processes=workers, initializer=_one_thread,
                       on_result=report)
    out: list[Design] = [None] * len(jobs)  # type: ignore[list-item]
    for k, d in zip(order, results, strict=True):
        out[k] = d
    return out


def _band(item: Any, what: str) -> Band:
    if isinstance(item, Band):
        band = item
    else:
        try:
            lo, hi = item
        except (TypeError, ValueError):
            raise DesignError(f"{what} {item!r} must be a (lo_mhz, hi_mhz) pair") from None
        band = Band(lo_mhz=float(lo), hi_mhz=float(hi))
    _check_range(band.lo_mhz, band.hi_mhz, what)
    return band


def _notch(item: Any) -> NotchSpec:
    if isinstance(item, NotchSpec):
        spec = item
    else:
        try:
            parts = tuple(item)
        except TypeError:
            raise DesignError(f"notch {item!r} must be (lo_mhz, hi_mhz[, required_db])") from None
        if len(parts) == 2:
            parts = (*parts, DEFAULT_NOTCH_DB)
        if len(parts) != 3:
            raise DesignError(f"notch {item!r} must be (lo_mhz, hi_mhz[, required_db])")
        spec = NotchSpec(lo_mhz=float(parts[0]), hi_mhz=float(parts[1]), required_db=float(parts[2]))
    _check_range(spec.lo_mhz, spec.hi_mhz, "notch")
    if not (math.isfinite(spec.required_db) and 0 < spec.required_db <= 200):
        raise DesignError(f"notch {spec.lo_mhz:g}-{spec.hi_mhz:g} MHz: required {spec.required_db!r} dB "
                          f"must be > 0 and <= 200 dB")
    return spec


def _check_range(lo: float, hi: float, what: str) -> None:
    for v in (lo, hi):
        if not (math.isfinite(v) and MIN_FREQ_MHZ <= v <= MAX_FREQ_MHZ):
            raise DesignError(f"{what} {lo:g}-{hi:g} MHz: {v:g} MHz is outside {MIN_FREQ_MHZ:g}-"
                              f"{MAX_FREQ_MHZ:g} MHz")
    if not lo < hi:
        raise DesignError(f"{what} {lo:g}-{hi:g} MHz: the low edge must be below the high edge")


def design_request(
    pass_bands: Sequence[Any],
    notches: Sequence[Any],
    *,
    cable: str | Any = DEFAULT_CABLE,
    max_stubs: int | None = None,
    limits: Limits | None = None,
    allowances: Allowances | None = None,
    power_w: float | None = None,
    power_mhz: float | None = None,
    z_system: float = 50.0,
    progress: Progress | None = None,
    load: str | os.PathLike | None = None,
    hardware: str | Any = DEFAULT_HARDWARE_FAMILY,
    line_model: str = "classic",
) -> DesignReport:
    """Design one ad-hoc filter: pass these bands, notch those.

    Parameters
    ----------
    pass_bands : sequence of Band or (lo_mhz, hi_mhz)
    notches : sequence of NotchSpec or (lo_mhz, hi_mhz[, required_db])
        ``required_db`` defaults to :data:`DEFAULT_NOTCH_DB`.
    cable : str or Cable
        Cable type name from the library (or a cable object).
    max_stubs : int, optional
        Overrides ``limits.max_stubs``.
    limits, allowances : optional
        Defaults of :class:`~notchkit.site.model.Limits` / ``Allowances``.
    power_w, power_mhz : float, optional
        A carrier through the filter for the power check.
    load : path, optional
        The antenna's impedance (``.s1p`` or R+jX table, :mod:`notchkit.loads`): the
        filter is designed and verified into it.
    hardware : str or HardwareSettings
        Connection hardware: a connector family (``"uhf"``, the default as for a site
        without ``hardware:``; ``"n"``, ``"bnc"``), ``"ideal"`` for ideal junctions with
        the tee allowance (the classic model), or a site's
        :class:`~notchkit.site.model.HardwareSettings` (docs/hardware.md).
    line_model : str
        ``"classic"`` or ``"rlgc"`` (when ``hardware`` is a family name).

    Returns
    -------
    DesignReport
        One design, ``F1``, with ``radio`` and ``side`` ``None``.

    Examples
    --------
    >>> r = design_request([(14.0, 14.35), (28.0, 29.7)], [(7.0, 7.3, 15), (21.0, 21.45, 15)],
    ...                    cable="RG-213")  # doctest: +SKIP
    """
    from notchkit.cables import get_cable

    limits = limits or Limits()
    allowances = allowances or Allowances()
    if max_stubs is not None:
        if not (isinstance(max_stubs, int) and not isinstance(max_stubs, bool) and 1 <= max_stubs <= 8):
            raise DesignError(f"max_stubs {max_stubs!r} must be an integer from 1 to 8")
        limits = dataclasses.replace(limits, max_stubs=max_stubs)
    bands = tuple(_band(b, "pass") for b in pass_bands)
    specs = tuple(_notch(n) for n in notches)
    cab = get_cable(cable) if isinstance(cable, str) else cable
    from notchkit.hardware import Model, model_for
    from notchkit.site.model import RadioLoad

    if not isinstance(cab, Model):
        cab = model_for(cab, settings=hardware_settings(hardware, line_model),
                        load=RadioLoad(file=os.fspath(load)) if load is not None else None)
    if cab.hardware is not None:  # the tee's arms are modelled, not an allowance
        allowances = dataclasses.replace(allowances, tee_allowance_m=0.0)
    req = FilterRequirement(radio=None, side=None, pass_bands=bands, notches=specs,
                            cable=getattr(cab, "name", str(cable)), power_w=power_w, power_mhz=power_mhz)
    d = design_filter(req, cable=cab, limits=limits, allowances=allowances, filter_id="F1", z_system=z_system,
                   progress=progress)
    return DesignReport(site_name=None, survey=None, designs=(d,))


def hardware_settings(hardware: str | Any = DEFAULT_HARDWARE_FAMILY, line_model: str = "classic") -> Any:
    """A :class:`~notchkit.site.model.HardwareSettings` from a family name (or one as given).

    Raises
    ------
    DesignError
        An unknown family or line model (the allowed ones are named).
    """
    from notchkit.hardware import FAMILIES
    from notchkit.site.model import IDEAL_HARDWARE, HardwareSettings

    if isinstance(hardware, HardwareSettings):
        return hardware
    allowed = (*FAMILIES, IDEAL_HARDWARE)
    fam = str(hardware).lower()
    if fam not in allowed:
        raise DesignError(f"hardware {hardware!r} is not a known connector family "
                          f"(allowed: {', '.join(allowed)})")
    if line_model not in ("classic", "rlgc"):
        raise DesignError(f"line_model {line_model!r} is not known (allowed: classic, rlgc)")
    return HardwareSettings(family=fam, line_model=line_model)


# ---------------------------------------------------------------- Touchstone


def touchstone_sweep_hz(req: FilterRequirement) -> np.ndarray:
    """A sweep covering every band of ``req``: 0.8x the lowest to 1.2x the highest edge,
    plus every band's verification points, increasing and unique (Hz)."""
    edges = [b.lo_mhz for b in req.pass_bands] + [n.lo_mhz for n in req.notches]
    tops = [b.hi_mhz for b in req.pass_bands] + [n.hi_mhz for n in req.notches]
    lo, hi = 0.8 * min(edges) * 1e6, 1.2 * max(tops) * 1e6
    dense, _ = verify_sweep_hz(req)
    return np.unique(np.r_[np.linspace(lo, hi, TOUCHSTONE_POINTS), dense])


def touchstone_name(d: Design) -> str:
    """File name of a design's Touchstone file, e.g. ``F1-wx-alert-rx.s2p``."""
    r = d.requirement
    parts = [d.id] + [p for p in (r.radio, r.side) if p]
    stem = re.sub(r"[^A-Za-z0-9._-]+", "_", "-".join(parts))
    return f"{stem}.s2p"


def write_touchstones(report: DesignReport, folder: str | os.PathLike,
                      inputs: Sequence[str | os.PathLike | tuple[Any, str] | None] = ()) -> tuple[Path, ...]:
    """Write one ``.s2p`` per filter into ``folder`` (created if missing): all or none.

    ``inputs`` are the files the command read (the site file): no output may be one of them.

    Raises
    ------
    InputError
        The folder cannot be created or written, or an output would replace an
        input or another output (checked before any file is written).
    """
    from notchkit.fileio import write_all
    from notchkit.filters import touchstone_text
    from notchkit.report.files import plan_outputs

    folder = Path(folder)
    paths = plan_outputs([(folder / touchstone_name(d), "Touchstone file") for d in report.designs],
                         inputs=inputs, dirs=[(folder, "--touchstone")])
    files = []
    for d, path in zip(report.designs, paths, strict=True):
        comment = (f"notchkit design {d.id}: {d.where}\n{describe(d.filter)}\n"
                   f"cable {getattr(d.cable, 'name', '?')}, meets: {d.meets}")
        text = touchstone_text(d.filter, touchstone_sweep_hz(d.requirement), d.solution.z_system, comment,
                               name=path.stem)
        files.append((path, text.encode("utf-8"), "Touchstone file"))
    return tuple(write_all(files, make_dir=folder))


# ---------------------------------------------------------------- JSON


def _f(x: float, digits: int | None = None) -> float:
    return finite(x, "a design result", clip_inf=True, digits=digits)


def _design_json(d: Design) -> dict[str, Any]:
    return design_record(d).to_json()


def design_record(d: Design) -> Any:
    """One filter as a :class:`notchkit.planfile.FilterRecord`: the typed record every
    reader of the design and plan JSON shares, plus the keys no reader uses."""
    from notchkit.planfile import filter_record

    r = d.requirement
    s = d.solution
    cab = d.cable
    rng = getattr(cab, "table_range_mhz", None)
    note = d.cable_note
    out: dict[str, Any] = {}
    out["cable_loss"] = {"table_mhz": None if rng is None else [_f(rng[0]), _f(rng[1])],
                         "extrapolated": note is not None, "note": note}
    out["meets_as_designed"] = s.meets
    out["build_yield"] = None if d.build_yield is None else _f(d.build_yield)
    out["yield_target"] = _f(d.yield_target)
    out["build_problems"] = list(d.build_problems)
    out["margin_db"] = _f(s.margin_db)
    out["total_cable_m"] = _f(s.total_cable_m)
    out["max_total_cable_m"] = _f(s.max_total_cable_m)
    out["shortfall"] = [
        {"band": x.band, "lo_mhz": _f(x.lo_mhz), "hi_mhz": _f(x.hi_mhz), "quantity": x.quantity,
         "required": _f(x.required), "achieved": _f(x.achieved), "missing_db": _f(x.missing_db)}
        for x in s.shortfall
    ]
    out["advice"] = list(d.advice)
    if r.reasons:
        out["reasons"] = list(r.reasons)
    out["cut_list"] = [c.to_json() for c in d.cuts]
    out["line_sections"] = [x.to_json() for x in d.lines]
    out["hardware"] = list(d.hardware)
    out["alternatives"] = [
        {"arrangement": a.arrangement, "stubs": a.n_stubs, "total_cable_m": _f(a.total_cable_m),
         "margin_db": _f(a.margin_db), "meets_as_designed": a.meets,
         "build_yield": None if a.build_yield is None else _f(a.build_yield)}
        for a in s.alternatives
    ]
    out["tolerance"] = d.tolerance.to_json() if d.tolerance is not None else None
    out["power"] = d.power.to_json() if d.power is not None else None
    out["model"] = d.model.to_json() if d.model is not None else None
    # the verdict: meets as designed, buildable, and the build yield at its target
    return dataclasses.replace(filter_record(d, extra=out), meets=bool(d.meets))


__all__ = [
    "design",
    "design_request",
    "design_filter",
    "design_record",
    "write_touchstones",
    "touchstone_sweep_hz",
    "touchstone_name",
    "Design",
    "DesignReport",
    "DEFAULT_NOTCH_DB",
]
