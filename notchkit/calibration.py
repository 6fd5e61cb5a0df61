"""A cable spool's measured velocity factor and loss, learnt from the first trims.

Every stub trimmed on an analyser measures its spool's effective velocity
factor (``VF = 4 L f / (n c)``, :func:`notchkit.trimming.effective_vf`) and, from its
Q against the cable's own ``beta / (2 alpha)``, how lossy the spool is against
its published figures. :func:`record` keeps these per named spool in a JSON
file (one file per spool); :func:`calibrated_cable` and :func:`apply` give the
design a cable with the spool's mean VF and loss, so the first cuts and trim
targets of the remaining pieces come from the real cable. Every output of a
calibrated design says so (the JSON's ``cable.calibration``, the plan's
filter pages, the design text).

The file is written and read by the types here (one format, one module),
atomically, bounded (:data:`MAX_CALIBRATION_BYTES`, :mod:`notchkit.jsonread`),
and every bad value is one line naming its key.

Which samples count: a VF from a trim whose length was known, within
``notchkit.trimming.MIN_VF``-1 (trim refuses the rest); a loss scale only where the
resonance's Q was resolved (not at the noise floor). The spool's figure is the
mean of its samples; the spread (sample standard deviation) is kept so a user
can see how consistent the pieces were.
"""

from __future__ import annotations

import dataclasses
import json
import math
import os
import statistics
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from notchkit.errors import UsageError
from notchkit.jsonread import JsonFileError, Reader, parse_json, read_text_bounded

NOTE_PREFIX = "calibrated "
"""How a calibrated :class:`notchkit.cables.Cable` carries its calibration (in ``notes``)."""
MAX_SAMPLES = 10_000


MAX_CALIBRATION_BYTES = 16 * 1024 * 1024
"""Largest calibration file read, bytes."""


class CalibrationError(JsonFileError):
    """A calibration file that cannot be used."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Sample:
    """One measured piece of the spool."""

    source: str
    """``"trim"`` or ``"verify"``."""
    piece: str
    """The stub id (``F1-S2``), filter id or measurement file it came from."""
    velocity_factor: float | None
    """The effective VF: the phase velocity over c at ``freq_mhz`` (trim), or the fit's (verify)."""
    loss_scale: float | None = None
    """Measured loss over the cable's published loss (from Q, or from the verify fit)."""
    measurement: str = ""
    freq_mhz: float | None = None
    """Where the VF was measured (a trim's resonance); ``None``: not known (taken at any frequency)."""

    def to_json(self) -> dict[str, Any]:
        return {"source": self.source, "piece": self.piece, "velocity_factor": self.velocity_factor,
                "loss_scale": self.loss_scale, "measurement": self.measurement, "freq_mhz": self.freq_mhz}

    @classmethod
    def from_json(cls, r: Reader, node: Any, where: str) -> Sample:
        obj = r.obj(node, where)
        return cls(source=r.choice(obj, "source", where, ("trim", "verify")),
                   piece=r.text(obj, "piece", where),
                   velocity_factor=r.num(obj, "velocity_factor", where, optional=True, lo=0.3, hi=1.0),
                   loss_scale=r.num(obj, "loss_scale", where, optional=True, hi=100.0),
                   measurement=str(obj.get("measurement") or ""),
                   freq_mhz=r.num(obj, "freq_mhz", where, optional=True, lo=0.1, hi=6000.0))


@dataclass(frozen=True, slots=True, kw_only=True)
class SpoolCalibration:
    """What the pieces measured so far say about one spool of one cable type."""

    spool: str
    cable: str
    samples: tuple[Sample, ...] = ()

    @property
    def vf_samples(self) -> list[float]:
        return [s.velocity_factor for s in self.samples if s.velocity_factor is not None]

    @property
    def velocity_factor(self) -> float | None:
        """Mean effective VF of the samples (``None`` without one)."""
        v = self.vf_samples
        return statistics.fmean(v) if v else None

    def high_frequency_vf(self, cable: Any) -> float | None:
        """The mean VF for the RLGC line (notchkit.rlgc): each sample's phase VF at its frequency
        turned into the high-frequency VF the RLGC model is given.

        On the RLGC line ``beta ~ omega / (c VF_hf) + alpha_c(f)`` (docs/hardware.md), so the
        slowing term ``1 / VF_phase - 1 / VF_hf = c alpha_c / omega`` depends on the cable's
        loss, hardly its VF: taken from the published cable at the sample's frequency,
        ``1 / VF_hf = 1 / VF_measured - (1 / VF_rlgc(f) - 1 / VF_published)``, then refined until
        the RLGC line with that VF has the measured phase velocity there. Samples without a
        frequency are taken as they are.
        """
        from notchkit.rlgc import phase_velocity_factor

        out = []
        for s in self.samples:
            if s.velocity_factor is None:
                continue
            if s.freq_mhz is None:
                out.append(s.velocity_factor)
                continue
            vp = float(np.asarray(phase_velocity_factor(cable, [s.freq_mhz * 1e6])).ravel()[0])
            slow = 1.0 / vp - 1.0 / float(cable.velocity_factor)
            vf = 1.0 / (1.0 / s.velocity_factor - slow)
            for _ in range(4):  # refine: the slowing term depends a little on the VF itself
                trial = dataclasses.replace(cable, velocity_factor=vf)
                got = float(np.asarray(phase_velocity_factor(trial, [s.freq_mhz * 1e6])).ravel()[0])
                vf *= s.velocity_factor / got
            out.append(vf)
        return statistics.fmean(out) if out else None

    @property
    def vf_spread(self) -> float | None:
        """Sample standard deviation of the VFs (``None`` with fewer than two)."""
        v = self.vf_samples
        return statistics.stdev(v) if len(v) >= 2 else None

    @property
    def loss_scale(self) -> float | None:
        v = [s.loss_scale for s in self.samples if s.loss_scale is not None]
        return statistics.fmean(v) if v else None

    def note(self) -> dict[str, Any]:
        """The summary a calibrated design's outputs carry."""
        return {"spool": self.spool, "velocity_factor": self.velocity_factor, "vf_spread": self.vf_spread,
                "pieces": len(self.vf_samples), "loss_scale": self.loss_scale}

    def to_json(self) -> dict[str, Any]:
        return {"spool": self.spool, "cable": self.cable, "velocity_factor": self.velocity_factor,
                "vf_spread": self.vf_spread, "loss_scale": self.loss_scale,
                "samples": [s.to_json() for s in self.samples]}

    @classmethod
    def from_json(cls, doc: Any, *, path: str, text: str | None = None) -> SpoolCalibration:
        r = Reader(path, text, CalibrationError)
        obj = r.obj(doc, "")
        samples = tuple(Sample.from_json(r, s, f"samples[{i}]")
                        for i, s in enumerate(r.items(obj, "samples", "", MAX_SAMPLES)))
        return cls(spool=r.text(obj, "spool", ""), cable=r.text(obj, "cable", ""), samples=samples)


def read_calibration(path: str | os.PathLike[str]) -> SpoolCalibration:
    """Read and validate a spool's calibration file.

    Raises
    ------
    CalibrationError
        Missing, unreadable, too large, not JSON, or a bad value (one line naming the key).
    """
    p = Path(path)
    text = read_text_bounded(p, "calibration", MAX_CALIBRATION_BYTES, CalibrationError)
    doc = parse_json(text, p, CalibrationError)
    return SpoolCalibration.from_json(doc, path=str(p), text=text)


def write_calibration(path: str | os.PathLike[str], cal: SpoolCalibration) -> Path:
    """Write ``cal`` atomically (temporary file in the same folder, then a rename)."""
    from notchkit.fileio import write_bytes_atomic

    return write_bytes_atomic(path, calibration_bytes(cal), what="calibration")


def sample_from_trim(result: Any, piece: str | None = None) -> Sample:
    """A sample from a :class:`notchkit.trimming.TrimResult` (its length must have been known).

    The loss scale is ``q_expected / q`` (the cable's own resonator Q over the
    measured one, Pozar eq. 6.33), only where Q was resolved.

    Raises
    ------
    UsageError
        No VF in the result (the trim had no length: give ``length_m`` or a plan stub).
    """
    from notchkit.resonance import named

    if result.velocity_factor is None:
        raise named(UsageError("calibration_path: a trim without a length measures no velocity factor "
                               "(give length_m or a plan stub)"), "calibration_path", "length_m")
    q, qe = result.resonance.q, result.q_expected
    loss = qe / q if (q and qe and not result.resonance.q_noise_limited) else None
    return Sample(source="trim", piece=piece or Path(result.measurement).name,
                  velocity_factor=float(result.velocity_factor), loss_scale=loss,
                  measurement=str(result.measurement),
                  freq_mhz=getattr(result, "velocity_factor_at_mhz", None))


def sample_from_verify(result: Any) -> Sample:
    """A sample from a :class:`notchkit.verification.VerifyResult` with a diagnosis.

    Raises
    ------
    UsageError
        No diagnosis, a refused one, or one that could not tell the cable's VF
        from the pieces' lengths.
    """
    from notchkit.resonance import named

    d = result.diagnosis
    if d is None or d.refused or d.velocity_factor is None and d.loss_scale is None:
        raise named(UsageError("calibration_path: this verify has no usable diagnosis to learn the spool "
                               "from (use diagnose, and a sweep the fit explains)"), "calibration_path")
    vf = d.velocity_factor
    if vf is None and not d.faulty and d.swapped is None:
        vf = d.plan_velocity_factor  # every piece as planned: the plan's VF is confirmed
    return Sample(source="verify", piece=result.filter_id, velocity_factor=vf,
                  loss_scale=float(d.loss_scale), measurement=str(result.measurement))


def record(path: str | os.PathLike[str], *, spool: str, cable: str, sample: Sample,
           write: bool = True) -> SpoolCalibration:
    """Add ``sample`` to the spool's calibration file (created if missing) and write it
    (``write=False``: only check and return the new content, for a caller that writes it
    together with its other outputs: :func:`calibration_bytes`).

    Raises
    ------
    UsageError
        An empty spool name, or a file that belongs to another spool or cable type.
    CalibrationError
        An existing file that cannot be read.
    """
    from notchkit.resonance import named

    if not isinstance(spool, str) or not spool.strip() or len(spool) > 200:
        raise named(UsageError(f"spool: {spool!r} must be a name of 1 to 200 characters"), "spool")
    p = Path(path)
    if p.exists():
        cal = read_calibration(p)
        if cal.spool != spool or _key(cal.cable) != _key(cable):
            raise named(UsageError(f"calibration_path {p}: is spool {cal.spool!r} of {cal.cable}, not spool "
                                   f"{spool!r} of {cable} (one file per spool)"), "calibration_path", "spool")
    else:
        cal = SpoolCalibration(spool=spool, cable=cable)
    cal = dataclasses.replace(cal, samples=(*cal.samples, sample))
    if write:
        write_calibration(p, cal)
    return cal


def calibration_bytes(cal: SpoolCalibration) -> bytes:
    """The file content :func:`write_calibration` writes."""
    from notchkit.jsonvalues import dumps

    return (dumps(cal.to_json(), indent=2) + "\n").encode("utf-8")


def _key(name: str) -> str:
    from notchkit.cables import _normalise

    return _normalise(name)


def calibrated_cable(cable: Any, cal: SpoolCalibration, line_model: str = "classic") -> Any:
    """``cable`` with the spool's mean VF and loss (a :class:`notchkit.cables.Cable`).

    Each trim sample's VF is the phase velocity at its resonance. On the classic line
    (one VF at every frequency) that VF is used as it is; on the RLGC line
    (``line_model="rlgc"``) the model is given the high-frequency VF that reproduces the
    measured phase velocity at each sample's frequency
    (:meth:`SpoolCalibration.high_frequency_vf`), so the slower HF wave is not counted twice.
    The calibration travels in the cable's ``notes`` (:func:`note_of` reads it back),
    so every output of a design made with it can say so.
    """
    changes: dict[str, Any] = {}
    scale = cal.loss_scale
    if scale is not None:
        changes.update(k_sqrt=cable.k_sqrt * scale, k_lin=cable.k_lin * scale,
                       loss_table=tuple((f, db * scale) for f, db in cable.loss_table))
    lossy = dataclasses.replace(cable, **changes)  # the slowing on the RLGC line follows the loss
    vf = cal.high_frequency_vf(lossy) if line_model == "rlgc" else cal.velocity_factor
    if vf is not None:
        changes["velocity_factor"] = vf
    note = {**cal.note(), "published_velocity_factor": cable.velocity_factor, "line_model": line_model}
    if line_model == "rlgc" and vf is not None:
        note["velocity_factor"] = vf  # what the RLGC model is given (the high-frequency VF)
    changes["notes"] = NOTE_PREFIX + json.dumps(note, sort_keys=True)
    return dataclasses.replace(cable, **changes)


def note_of(cable: Any) -> dict[str, Any] | None:
    """The calibration a cable was made with (:func:`calibrated_cable`), else ``None``."""
    notes = getattr(cable, "notes", "")
    if isinstance(notes, str) and notes.startswith(NOTE_PREFIX + "{"):
        try:
            return json.loads(notes[len(NOTE_PREFIX):])
        except ValueError:
            return None
    return None


def apply(site: Any, calibrations: Iterable[SpoolCalibration | str | os.PathLike[str]]) -> Any:
    """The site with each calibrated spool's cable in place of its type's figures.

    The calibrated cable is added to the site's own cables (which take precedence
    over the library), so every filter designed on that cable type uses it.

    Raises
    ------
    UsageError
        Two calibrations for one cable type (design with one spool per type).
    """
    from notchkit.cables import get_cable
    from notchkit.resonance import named

    cals = [c if isinstance(c, SpoolCalibration) else read_calibration(c) for c in calibrations]
    seen: dict[str, str] = {}
    extra = []
    for cal in cals:
        k = _key(cal.cable)
        if k in seen:
            raise named(UsageError(f"calibration: spools {seen[k]!r} and {cal.spool!r} are both {cal.cable} "
                                   "(give one spool per cable type)"), "calibration")
        seen[k] = cal.spool
        extra.append(calibrated_cable(get_cable(cal.cable, site.cables), cal,
                                      getattr(getattr(site, "hardware", None), "line_model", "classic")))
    if not extra:
        return site
    return dataclasses.replace(site, cables=(*site.cables, *extra))


def calibration_lines(cables: Sequence[Any]) -> list[str]:
    """One sentence per calibrated cable among ``cables`` (for the text outputs)."""
    out = []
    for c in cables:
        n = note_of(c)
        if n is None:
            continue
        vf = n.get("velocity_factor")
        loss = n.get("loss_scale")
        text = (f"Lengths use spool {n.get('spool')!r} of {c.name} as measured: VF {vf:.3f} "
                f"(published {n.get('published_velocity_factor'):.3f}) from {n.get('pieces')} measured "
                "piece(s)"
                if vf is not None else f"Lengths use spool {n.get('spool')!r} of {c.name}")
        if loss is not None and math.isfinite(loss):
            text += f"; loss {loss:.2f} x published"
        out.append(text + ".")
    return out


__all__ = [
    "SpoolCalibration",
    "Sample",
    "CalibrationError",
    "read_calibration",
    "write_calibration",
    "calibration_bytes",
    "record",
    "sample_from_trim",
    "sample_from_verify",
    "calibrated_cable",
    "note_of",
    "apply",
    "calibration_lines",
]
