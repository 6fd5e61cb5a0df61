"""Monte Carlo tolerance of a filter: will it still notch when cut by hand?

:func:`tolerance` draws ``samples`` filters around the nominal one and asks,
for each notch band, how often the worst attenuation over the band still meets
its requirement, and how many dB per mm each element's length is worth.

Model
-----
The build workflow the plan prints: every stub is cut long, measured on an
analyser and trimmed to its target resonance; line sections (and any stub
whose resonance cannot be measured) are cut to length from the cable.

Trimmed stubs (``trimmed``)
    Trimming to a measured resonance takes out the cut error and the cable's
    velocity-factor error together (the resonance depends on the electrical
    length only). What remains is the analyser's reading of the resonance, a
    relative error drawn uniformly within ``+-trim_freq_error_pct`` (the
    electrical length is off by the same fraction), plus the last trim step:
    the crew stops at or just above the target ("never trim past it"), so the
    stub stays long by an amount drawn uniformly in ``[0, trim_step_mm]``.
    Defaults (:data:`DEFAULT_TRIM_FREQ_ERROR_PCT`, :data:`DEFAULT_TRIM_STEP_MM`)
    are common practice: a 101-point sweep over a +-5 % span reads a dip to
    about 0.1 %, and the last cuts near the target are a millimetre or so.
Cut error (untrimmed pieces)
    Each untrimmed element (every line section, and every stub when
    ``trimmed`` is ``None``) independently gets an
    error drawn **uniformly** within ``+-cut_tolerance_mm``: "cut within 2 mm"
    says nothing about a bell shape, so every error in the range is taken as
    equally likely (a harsher assumption than a normal of the same width).
Drift
    Optional: after building, every electrical length of one sample is scaled
    by ``1 + d``, ``d`` drawn uniformly within ``+-drift_pct`` percent (the
    dielectric's velocity factor moving with temperature or age; the same
    for every piece of one filter). Default 0 (not modelled).
Velocity factor
    One draw per sample, uniform within ``+-vf_spread`` (the same reel of
    cable for every piece of one filter). ``vf_spread=None`` takes the cable's
    published ``vf_tolerance``, else 0.01. It moves the untrimmed pieces only
    (a trimmed stub is trimmed on the cable it is made of), and of each piece
    only its cable: the connector plugs a hardware model's lengths include
    (:func:`notchkit.modelreport.element_plugs_m`) keep their own electrical
    length (the same holds for drift).
    The draws are sorted into ``VF_BINS`` equal bins across the spread; each
    bin is evaluated on the cable with the bin's centre velocity factor (same
    impedance and loss per metre), and the small rest of each draw
    (``VF'`` against the bin centre) is applied by scaling the sample's
    lengths by ``VF_bin / VF'``, since electrical length goes as ``l / VF``.
    That scaling keeps the attenuation per metre and so changes a piece's loss
    by the same tiny ratio (at most half a bin, under 0.03 % for a 0.01
    spread on VF 0.66: a few thousandths of a dB at a notch bottom). Scaling
    all the way from the nominal VF instead would change the loss by about
    1.5 %, about 0.13 dB at a loss-limited notch bottom, which is why the bins.
Attenuation
    ``-20 log10 |S21|`` (mismatch included), on a grid from each notch band's
    lower to upper edge; a sample meets a notch when its minimum over the grid
    is at least ``required_db``. A band gets points no further apart than
    ``phase_step_rad`` (0.01 rad) of the filter's whole electrical length, at
    least 3 and at most ``band_points`` (11): a radio channel a few kHz wide is
    its edges and centre, an airband gets 11. On every filter of the example
    sites this gives the same results as 11 points on every band, and worst
    figures within 0.02 dB of 201 points (tests/test_tolerance.py), at a third
    of the time.
Sensitivity
    Central difference of the nominal worst attenuation for +-0.5 mm on one
    element at a time, in dB per mm (positive: a longer piece helps).

The work is one :func:`notchkit.filters.evaluate_batch` call per velocity-factor
bin over (builds in the bin) x (grid points), plus one for the sensitivity
probes, each reduced at once to the worst figure per band: no Python loop over
samples or frequencies. 10,000 builds of a three-element filter take about
0.2 s of CPU (``benchmarks/tolerance.py``).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from notchkit.elements import element_ids as element_ids  # ids are numbered in one place
from notchkit.errors import DesignError
from notchkit.filters import Filter, evaluate_batch
from notchkit.jsonvalues import finite
from notchkit.lines import C0, swr_from_s11
from notchkit.modelreport import element_plugs_m
from notchkit.requirements import NotchSpec
from notchkit.site.model import DEFAULT_MAX_INSERTION_LOSS_DB, DEFAULT_MAX_SWR, Band

DEFAULT_VF_SPREAD = 0.01
"""Velocity-factor spread when the cable publishes none (absolute, +-)."""
DEFAULT_TRIM_STEP_MM = 1.0
"""Last trim step near the target, mm: a trimmed stub stays long by up to this
much (common practice)."""
DEFAULT_TRIM_FREQ_ERROR_PCT = 0.1
"""How closely the analyser reads a stub's resonance, percent (+-): one point of
a 101-point sweep over a +-5 % span (common practice)."""
DEFAULT_DRIFT_PCT = 0.0
"""Drift of every electrical length after building, percent (+-); 0: not modelled."""
SENSITIVITY_STEP_MM = 0.5
VF_BINS = 24
"""Velocity-factor bins of a tolerance run (one batched evaluation each)."""
PHASE_STEP_RAD = 0.01
"""Largest phase change of the filter between neighbouring grid points of a band
(see :func:`band_sizes`)."""


@dataclass(frozen=True, slots=True)
class _Medium:
    """The filter's cable with another velocity factor (impedance and loss per metre kept)."""

    base: Any
    velocity_factor: float

    @property
    def z0_ohm(self) -> float:
        return self.base.z0_ohm

    def alpha_np_per_m(self, freq_hz):
        return self.base.alpha_np_per_m(freq_hz)


@dataclass(frozen=True, slots=True, kw_only=True)
class ElementSensitivity:
    """dB of worst notch attenuation per mm of one element's length."""

    element_id: str
    element_index: int
    db_per_mm: float

    def to_json(self) -> dict[str, Any]:
        return {"id": self.element_id, "element_index": self.element_index,
                "db_per_mm": _f(self.db_per_mm)}


@dataclass(frozen=True, slots=True, kw_only=True)
class NotchTolerance:
    """How one notch band fares over the Monte Carlo samples."""

    lo_mhz: float
    hi_mhz: float
    required_db: float
    nominal_worst_db: float
    probability: float
    """Fraction of samples whose worst attenuation over the band meets ``required_db``."""
    p05_worst_db: float
    """5th percentile of the worst attenuation: 95 % of builds do at least this well."""
    median_worst_db: float
    sensitivity: tuple[ElementSensitivity, ...]

    @property
    def nominal_meets(self) -> bool:
        return self.nominal_worst_db >= self.required_db

    def to_json(self) -> dict[str, Any]:
        return {
            "lo_mhz": _f(self.lo_mhz), "hi_mhz": _f(self.hi_mhz), "required_db": _f(self.required_db),
            "nominal_worst_db": _f(self.nominal_worst_db), "probability": _f(self.probability),
            "p05_worst_db": _f(self.p05_worst_db), "median_worst_db": _f(self.median_worst_db),
            "sensitivity_db_per_mm": [s.to_json() for s in self.sensitivity],
        }


@dataclass(frozen=True, slots=True, kw_only=True)
class PassTolerance:
    """How one pass band fares: insertion loss and SWR both within limits."""

    lo_mhz: float
    hi_mhz: float
    max_insertion_loss_db: float
    max_swr: float
    nominal_worst_insertion_loss_db: float
    nominal_worst_swr: float
    probability: float

    def to_json(self) -> dict[str, Any]:
        return {
            "lo_mhz": _f(self.lo_mhz), "hi_mhz": _f(self.hi_mhz),
            "max_insertion_loss_db": _f(self.max_insertion_loss_db), "max_swr": _f(self.max_swr),
            "nominal_worst_insertion_loss_db": _f(self.nominal_worst_insertion_loss_db),
            "nominal_worst_swr": _f(self.nominal_worst_swr), "probability": _f(self.probability),
        }


@dataclass(frozen=True, slots=True, kw_only=True)
class Tolerance:
    """Result of :func:`tolerance`."""

    samples: int
    seed: int
    cut_tolerance_mm: float
    cut_distribution: str
    vf_nominal: float
    vf_spread: float
    vf_distribution: str
    notches: tuple[NotchTolerance, ...]
    passes: tuple[PassTolerance, ...]
    probability_all: float
    """Fraction of samples meeting every notch and every pass band at once."""
    trimmed: tuple[bool, ...] = ()
    """Per element: trimmed to resonance (``True``) or cut to length."""
    trim_step_mm: float = 0.0
    trim_freq_error_pct: float = 0.0
    drift_pct: float = 0.0

    @property
    def build_yield(self) -> float:
        """Share of simulated builds meeting every requirement (``probability_all``)."""
        return self.probability_all

    @property
    def workflow(self) -> str:
        """``"trimmed"`` when any element is trimmed to resonance, else ``"cut to length"``."""
        return "trimmed" if any(self.trimmed) else "cut to length"

    def to_json(self) -> dict[str, Any]:
        return {
            "samples": self.samples, "seed": self.seed,
            "workflow": self.workflow, "trimmed": list(self.trimmed),
            "trim_step_mm": _f(self.trim_step_mm), "trim_freq_error_pct": _f(self.trim_freq_error_pct),
            "drift_pct": _f(self.drift_pct), "build_yield": _f(self.build_yield),
            "cut_tolerance_mm": _f(self.cut_tolerance_mm), "cut_distribution": self.cut_distribution,
            "vf_nominal": _f(self.vf_nominal), "vf_spread": _f(self.vf_spread),
            "vf_distribution": self.vf_distribution,
            "notch": [n.to_json() for n in self.notches],
            "pass": [p.to_json() for p in self.passes],
            "probability_all": _f(self.probability_all),
        }


def _f(x: float) -> float:
    # attenuation can be huge but finite (db20 floors at -400 dB); clip to stay finite
    return finite(x, "a tolerance result", clip_inf=True)


def band_sizes(bands: Sequence[Any], filt: Filter, most: int, phase_step_rad: float | None) -> list[int]:
    """Grid points across each band: enough that no element's phase moves more than
    ``phase_step_rad`` between neighbours, at least 3 (edges and centre), at most ``most``.

    Across a band from ``lo`` to ``hi`` every phase in the filter changes by at most
    ``theta * (hi - lo) / hi``, ``theta`` being the electrical length of all its
    elements together at ``hi`` (``2 pi f sum(l) / (c VF)``). A radio channel is a few
    thousandths of a radian wide even on metres of cable, so it needs no more than its
    edges and centre; ``phase_step_rad=None`` gives every band ``most`` points.
    """
    if phase_step_rad is None:
        return [most] * len(bands)
    total_m = float(np.sum(filt.lengths_m))
    vf = float(filt.cable.velocity_factor)
    sizes = []
    for b in bands:
        theta = 2.0 * math.pi * b.hi_mhz * 1e6 * total_m / (C0 * vf)
        swing = theta * (b.hi_mhz - b.lo_mhz) / b.hi_mhz
        sizes.append(int(min(most, max(3, math.ceil(swing / phase_step_rad) + 1))))
    return sizes


def _check(value: float, name: str, lo: float, hi: float) -> float:
    v = float(value)
    if not (math.isfinite(v) and lo <= v <= hi):
        raise DesignError(f"{name} {value!r} must be between {lo:g} and {hi:g}")
    return v


def tolerance(
    filt: Filter,
    notches: Sequence[NotchSpec],
    *,
    cut_tolerance_mm: float = 2.0,
    vf_spread: float | None = None,
    samples: int = 10_000,
    seed: int = 0,
    z_system: float = 50.0,
    pass_bands: Sequence[Band] = (),
    max_insertion_loss_db: float = DEFAULT_MAX_INSERTION_LOSS_DB,
    max_swr: float = DEFAULT_MAX_SWR,
    band_points: int = 11,
    phase_step_rad: float | None = PHASE_STEP_RAD,
    filter_id: str = "F1",
    trimmed: Sequence[bool] | None = None,
    trim_step_mm: float = DEFAULT_TRIM_STEP_MM,
    trim_freq_error_pct: float = DEFAULT_TRIM_FREQ_ERROR_PCT,
    drift_pct: float = DEFAULT_DRIFT_PCT,
    sensitivity: bool = True,
) -> Tolerance:
    """Monte Carlo of the build: trimmed stubs, pieces cut to length, velocity-factor spread, drift.

    Parameters
    ----------
    filt : Filter
    notches : sequence of NotchSpec
        Bands to reject and by how much (dB).
    cut_tolerance_mm : float
        Half-width of the uniform cut error of every element, mm.
    vf_spread : float or None
        Half-width of the uniform velocity-factor error (absolute); ``None``:
        the cable's ``vf_tolerance`` if published, else 0.01.
    samples : int
        Number of Monte Carlo builds (1 to 1,000,000).
    seed : int
        Seed of the ``numpy.random.default_rng`` generator (deterministic).
    z_system : float
        Port reference impedance, ohms.
    pass_bands : sequence of Band
        Pass bands to check too (insertion loss <= ``max_insertion_loss_db``
        and SWR <= ``max_swr`` over the band).
    band_points : int
        Most grid points across a band, edges included (3 to 201).
    phase_step_rad : float or None
        A band gets points close enough that the filter's phase moves at most
        this much between neighbours, at least 3 (see :func:`band_sizes`);
        ``None``: every band gets ``band_points``.
    filter_id : str
        Prefix of the element ids in the sensitivities.
    trimmed : sequence of bool, optional
        Per element, ``True`` where it is trimmed to its resonance on an
        analyser; ``None``: nothing is trimmed (every piece cut to length).
    trim_step_mm : float
        A trimmed stub stays long by up to this much (uniform in ``[0, step]``).
    trim_freq_error_pct : float
        Half-width of the uniform relative error of the resonance reading, %.
    drift_pct : float
        Half-width of the uniform drift of every electrical length, %.
    sensitivity : bool
        Compute the dB-per-mm sensitivities (``False``: zeros, a little faster).

    Returns
    -------
    Tolerance

    Notes
    -----
    See the module docstring for the model. With ``cut_tolerance_mm=0`` and
    ``vf_spread=0`` every sample is the nominal filter, so each probability is
    exactly 0 or 1.
    """
    run = _settings(filt, notches, pass_bands, samples=samples, cut_tolerance_mm=cut_tolerance_mm,
                    vf_spread=vf_spread, band_points=band_points, phase_step_rad=phase_step_rad,
                    z_system=z_system, trim_step_mm=trim_step_mm, trim_freq_error_pct=trim_freq_error_pct,
                    drift_pct=drift_pct, max_insertion_loss_db=max_insertion_loss_db, max_swr=max_swr)
    sizes = band_sizes(run.bands, filt, run.npts, run.step_rad)
    freq_hz = np.concatenate([np.linspace(b.lo_mhz, b.hi_mhz, n)
                              for b, n in zip(run.bands, sizes, strict=True)]) * 1e6
    starts = np.concatenate(([0], np.cumsum(sizes)[:-1]))
    builds = _draw(filt, run, trimmed, seed)
    probes, step_mm = _probes(filt.lengths_m, sensitivity)
    worst = _evaluate(filt, run, builds, probes, freq_hz, starts)
    ids = element_ids(filt, filter_id)
    ok_all = np.ones(run.n_samples, dtype=bool)
    notch_results = _notch_results(run, worst, step_mm, ids, sensitivity, ok_all)
    pass_results = _pass_results(run, worst, ok_all)
    trim_mask = builds.trim_mask
    return Tolerance(
        samples=run.n_samples, seed=int(seed), cut_tolerance_mm=run.tol_mm, cut_distribution="uniform",
        vf_nominal=run.vf0, vf_spread=run.spread, vf_distribution="uniform, one draw per sample",
        notches=tuple(notch_results), passes=tuple(pass_results),
        probability_all=float(ok_all.mean()), trimmed=tuple(bool(t) for t in trim_mask),
        trim_step_mm=run.step_trim if trim_mask.any() else 0.0,
        trim_freq_error_pct=run.f_err if trim_mask.any() else 0.0, drift_pct=run.drift,
    )


# ---------------------------------------------------------------- the stages of tolerance


@dataclass(frozen=True, slots=True, kw_only=True)
class _Run:
    """The checked settings of one tolerance run."""

    n_samples: int
    tol_mm: float
    vf0: float
    spread: float
    npts: int
    step_rad: float | None
    zs: float
    step_trim: float
    f_err: float
    drift: float
    notches: tuple[NotchSpec, ...]
    pass_bands: tuple[Band, ...]
    max_insertion_loss_db: float
    max_swr: float

    @property
    def bands(self) -> tuple[NotchSpec | Band, ...]:
        return (*self.notches, *self.pass_bands)


def _settings(filt: Filter, notches: Sequence[NotchSpec], pass_bands: Sequence[Band], *, samples: int,
              cut_tolerance_mm: float, vf_spread: float | None, band_points: int,
              phase_step_rad: float | None, z_system: float, trim_step_mm: float,
              trim_freq_error_pct: float, drift_pct: float, max_insertion_loss_db: float,
              max_swr: float) -> _Run:
    """Every argument checked (DesignError naming it), the cable's VF spread filled in."""
    n_samples = int(_check(samples, "samples", 1, 1_000_000))
    tol_mm = _check(cut_tolerance_mm, "cut_tolerance_mm", 0.0, 1000.0)
    vf0 = float(filt.cable.velocity_factor)
    if vf_spread is None:
        published = getattr(filt.cable, "vf_tolerance", None)
        vf_spread = DEFAULT_VF_SPREAD if published is None else float(published)
    spread = _check(vf_spread, "vf_spread", 0.0, 0.5 * vf0)
    npts = int(_check(band_points, "band_points", 3, 201))
    step_rad = None if phase_step_rad is None else _check(phase_step_rad, "phase_step_rad", 1e-6, 10.0)
    zs = _check(z_system, "z_system", 1e-3, 1e6)
    step_trim = _check(trim_step_mm, "trim_step_mm", 0.0, 100.0)
    f_err = _check(trim_freq_error_pct, "trim_freq_error_pct", 0.0, 20.0)
    drift = _check(drift_pct, "drift_pct", 0.0, 20.0)
    notches = tuple(notches)
    pass_bands = tuple(pass_bands)
    if not notches and not pass_bands:
        raise DesignError("tolerance needs at least one notch or pass band (got none)")
    every: tuple[NotchSpec | Band, ...] = (*notches, *pass_bands)
    for k, band in enumerate(every):
        if not (0 < band.lo_mhz <= band.hi_mhz and math.isfinite(band.hi_mhz)):
            raise DesignError(f"band {k + 1}: {band.lo_mhz!r}-{band.hi_mhz!r} MHz must have 0 < lo <= hi")
    return _Run(n_samples=n_samples, tol_mm=tol_mm, vf0=vf0, spread=spread, npts=npts, step_rad=step_rad,
                zs=zs, step_trim=step_trim, f_err=f_err, drift=drift, notches=notches, pass_bands=pass_bands,
                max_insertion_loss_db=float(max_insertion_loss_db), max_swr=float(max_swr))


@dataclass(frozen=True, slots=True, kw_only=True)
class _Builds:
    """The simulated builds: each sample's lengths on its VF bin's cable."""

    drawn: np.ndarray
    bin_of: np.ndarray
    vf_bin: np.ndarray
    n_bins: int
    trim_mask: np.ndarray


def _draw(filt: Filter, run: _Run, trimmed: Sequence[bool] | None, seed: int) -> _Builds:
    """The random draws, in a fixed order (cut errors, VF, trim readings, drift)."""
    nominal = filt.lengths_m
    n_el = nominal.size
    n_samples, spread, vf0 = run.n_samples, run.spread, run.vf0
    trim_mask = np.zeros(n_el, dtype=bool) if trimmed is None else np.array([bool(t) for t in trimmed])
    if trim_mask.shape != (n_el,):
        raise DesignError(f"trimmed: {len(trim_mask)} flags for a filter of {n_el} elements")
    rng = np.random.default_rng(seed)
    cut_err = rng.uniform(-1.0, 1.0, size=(n_samples, n_el)) * (run.tol_mm * 1e-3)
    u = rng.uniform(-1.0, 1.0, size=n_samples)
    vf = vf0 + u * spread
    n_bins = VF_BINS if spread > 0 else 1
    bin_of = np.minimum(((u + 1.0) * 0.5 * n_bins).astype(int), n_bins - 1)
    vf_bin = vf0 + ((bin_of + 0.5) * 2.0 / n_bins - 1.0) * spread if spread > 0 else np.full(n_samples, vf0)
    # Only the cable part of a piece scales with the cable's VF: the plugs a hardware model's
    # lengths include are hardware with their own VF (modelreport.element_plugs_m).
    plugs = element_plugs_m(filt.cable, filt.kinds)[None, :]
    # untrimmed: the piece as cut, on this sample's cable (VF vf), expressed on the bin's cable
    cut = np.maximum(nominal[None, :] + cut_err, 0.0)
    drawn = np.minimum(cut, plugs) + np.maximum(cut - plugs, 0.0) * (vf_bin / vf)[:, None]
    if trim_mask.any():
        # trimmed: the electrical length the analyser says is right (nominal at vf0, read
        # within +-f_err %), plus the last step left on; its cable part on the bin's cable
        read = rng.uniform(-1.0, 1.0, size=(n_samples, n_el)) * (run.f_err / 100.0)
        left = rng.uniform(0.0, 1.0, size=(n_samples, n_el)) * (run.step_trim * 1e-3)
        electrical = nominal[None, :] * (1.0 + read) + left
        on_bin = plugs + np.maximum(electrical - plugs, 0.0) * (vf_bin / vf0)[:, None]
        drawn = np.where(trim_mask[None, :], on_bin, drawn)
    if run.drift > 0:  # the cable's dielectric drifts, not the plugs'
        scale = 1.0 + rng.uniform(-1.0, 1.0, size=(n_samples, 1)) * (run.drift / 100.0)
        drawn = np.minimum(drawn, plugs) + np.maximum(drawn - plugs, 0.0) * scale
    return _Builds(drawn=drawn, bin_of=bin_of, vf_bin=vf_bin, n_bins=n_bins, trim_mask=trim_mask)


def _probes(nominal: np.ndarray, sensitivity: bool) -> tuple[np.ndarray, np.ndarray]:
    """Sensitivity probes: nominal +- h on one element at a time, then the nominal itself;
    and each probe pair's length step, mm."""
    n_el = nominal.size
    h = SENSITIVITY_STEP_MM * 1e-3
    probes = np.repeat(nominal[None, :], 2 * n_el + 1 if sensitivity else 1, axis=0)
    for j in range(n_el if sensitivity else 0):
        probes[2 * j, j] += h
        probes[2 * j + 1, j] = max(probes[2 * j + 1, j] - h, 0.0)
    step_mm = (np.array([probes[2 * j, j] - probes[2 * j + 1, j] for j in range(n_el)]) * 1e3
               if sensitivity else np.ones(n_el))
    return probes, step_mm


def _evaluate(filt: Filter, run: _Run, builds: _Builds, probes: np.ndarray, freq_hz: np.ndarray,
              starts: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``(notch_worst, pass_il, pass_swr)`` per row (the builds, then the probes) and band:
    each VF bin's builds on its own cable, in batches."""
    kinds = filt.kinds
    nb, npass = len(run.notches), len(run.pass_bands)
    n_samples = run.n_samples
    n_rows = n_samples + probes.shape[0]
    notch_worst = np.empty((n_rows, nb))  # worst (least) attenuation over each notch band, dB
    pass_il = np.empty((n_rows, npass))  # worst (most) insertion loss over each pass band, dB
    pass_swr = np.empty((n_rows, npass))
    notch_starts, pass_starts = starts[:nb], starts[nb:]
    pass_from = int(starts[nb]) if npass else freq_hz.size

    def reduce(rows, lengths, medium):
        s21, s11 = evaluate_batch(kinds, lengths, medium, freq_hz, run.zs)
        m2 = s21.real**2 + s21.imag**2
        if nb:
            top = np.maximum.reduceat(m2[:, :pass_from], notch_starts, axis=1)
            notch_worst[rows] = -10.0 * np.log10(np.maximum(top, 1e-40))
        if npass:
            low = np.minimum.reduceat(m2[:, pass_from:], pass_starts - pass_from, axis=1)
            pass_il[rows] = -10.0 * np.log10(np.maximum(low, 1e-40))
            r = np.maximum.reduceat(np.abs(s11[:, pass_from:]), pass_starts - pass_from, axis=1)
            pass_swr[rows] = swr_from_s11(r)

    for b in range(builds.n_bins):
        rows = np.flatnonzero(builds.bin_of == b)
        if rows.size:
            v = float(builds.vf_bin[rows[0]])
            vary = getattr(filt.cable, "with_velocity_factor", None)  # a hardware.Model keeps its parts
            medium = (vary(v) if vary else _Medium(filt.cable, v)) if run.spread > 0 else filt.cable
            reduce(rows, builds.drawn[rows], medium)
    reduce(slice(n_samples, n_rows), probes, filt.cable)
    return notch_worst, pass_il, pass_swr


def _notch_results(run: _Run, worst: tuple, step_mm: np.ndarray, ids: Sequence[str], sensitivity: bool,
                   ok_all: np.ndarray) -> list[NotchTolerance]:
    """Each notch band's yield, percentiles and dB-per-mm sensitivities (``ok_all`` and-ed in place)."""
    notch_worst = worst[0]
    n_samples, n_el = run.n_samples, step_mm.size
    out = []
    for k, spec in enumerate(run.notches):
        col = notch_worst[:, k]
        ws, wp = col[:n_samples], col[n_samples:]
        ok = ws >= spec.required_db
        ok_all &= ok
        sens = tuple(
            ElementSensitivity(
                element_id=ids[j], element_index=j,
                db_per_mm=float((wp[2 * j] - wp[2 * j + 1]) / (step_mm[j])) if sensitivity else 0.0,
            )
            for j in range(n_el)
        )
        out.append(
            NotchTolerance(
                lo_mhz=spec.lo_mhz, hi_mhz=spec.hi_mhz, required_db=spec.required_db,
                nominal_worst_db=float(wp[-1]), probability=float(ok.mean()),
                p05_worst_db=float(np.percentile(ws, 5)), median_worst_db=float(np.median(ws)),
                sensitivity=sens,
            )
        )
    return out


def _pass_results(run: _Run, worst: tuple, ok_all: np.ndarray) -> list[PassTolerance]:
    """Each pass band's yield and nominal worst figures (``ok_all`` and-ed in place)."""
    _, pass_il, pass_swr = worst
    n_samples = run.n_samples
    out = []
    for k, band in enumerate(run.pass_bands):
        il, swr = pass_il[:, k], pass_swr[:, k]
        ok = (il[:n_samples] <= run.max_insertion_loss_db) & (swr[:n_samples] <= run.max_swr)
        ok_all &= ok
        out.append(
            PassTolerance(
                lo_mhz=band.lo_mhz, hi_mhz=band.hi_mhz, max_insertion_loss_db=run.max_insertion_loss_db,
                max_swr=run.max_swr, nominal_worst_insertion_loss_db=float(il[-1]),
                nominal_worst_swr=float(swr[-1]), probability=float(ok.mean()),
            )
        )
    return out


def model_text(t: Tolerance) -> str:
    """The build model of a tolerance run in one phrase (terminal, PDF and HTML)."""
    parts = []
    n_trim = sum(t.trimmed)
    if n_trim:
        parts.append(f"{n_trim} stub(s) trimmed to resonance (reading +-{t.trim_freq_error_pct:g} %, "
                     f"last step up to {t.trim_step_mm:g} mm long)")
    n_cut = len(t.trimmed) - n_trim if t.trimmed else None
    what = "every piece" if n_cut is None or not n_trim else f"{n_cut} piece(s)"
    if n_cut is None or n_cut:
        parts.append(f"{what} cut to length within +-{t.cut_tolerance_mm:g} mm ({t.cut_distribution}) "
                     f"on VF {t.vf_nominal:g} +-{t.vf_spread:g}")
    if t.drift_pct:
        parts.append(f"drift +-{t.drift_pct:g} %")
    return "; ".join(parts)


def format_tolerance(t: Tolerance) -> str:
    """A few plain-text lines: probability per band and the most sensitive element."""
    lines = [f"build yield {100 * t.build_yield:.1f} % of {t.samples} simulated builds: {model_text(t)}"]
    for n in t.notches:
        top = max(n.sensitivity, key=lambda s: abs(s.db_per_mm), default=None)
        sens = f"; most sensitive {top.element_id} {top.db_per_mm:+.2f} dB/mm" if top else ""
        lines.append(
            f"  notch {n.lo_mhz:g}-{n.hi_mhz:g} MHz >= {n.required_db:g} dB: {100 * n.probability:.1f} % "
            f"of builds meet it (nominal {n.nominal_worst_db:.1f} dB, 95 % >= {n.p05_worst_db:.1f} dB{sens})"
        )
    for p in t.passes:
        lines.append(
            f"  pass {p.lo_mhz:g}-{p.hi_mhz:g} MHz: {100 * p.probability:.1f} % of builds within "
            f"{p.max_insertion_loss_db:g} dB and SWR {p.max_swr:g}"
        )
    lines.append(f"  all bands at once (build yield): {100 * t.probability_all:.1f} %")
    return "\n".join(lines)
