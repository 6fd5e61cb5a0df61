"""Element kinds: what each kind of filter element is and how it behaves.

An element kind is an object that owns everything the rest of the program
needs to know about one kind of element:

* its **batched two-port** (:meth:`Kind.batch_into`): the per-point quantity
  the fast core (:func:`notchkit.filters.evaluate_batch`) needs, written into
  scratch arrays;
* its **reference two-port** (:meth:`Kind.abcd`): an explicit ABCD matrix
  built from :mod:`notchkit.lines`, independent of the batched path (the tests
  compare both, and both against scikit-rf);
* its **id prefix** (``S`` for stubs, ``L`` for line sections): ids are
  numbered in one place, :func:`element_ids`;
* its **cut hook** (how the end is made, which resonance it has),
  **power hook** (voltage and current along it) and **drawing hook** (the
  end symbol).

A kind is also its own name: :class:`Kind` subclasses ``str``, so
``OPEN == "open"``, a kind is a dict key and sorts like its name, and JSON
writes it as its name. Old code and files that use the names keep working;
:func:`kind_of` maps a name to its object.

Adding a kind: write its class here, register it in :data:`KINDS`, and give
the element that carries it (:mod:`notchkit.filters`) a ``kind``; the core,
the cut list, the power check and the drawing ask the kind.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from notchkit.errors import DesignError
from notchkit.lines import abcd_series_line_scaled, abcd_shunt, yin_open, yin_short

MIN_MODEL_LENGTH_M = 1e-9
"""A zero-length shorted stub is modelled as 1 nm: a finite dead short."""


class Kind(str):
    """An element kind (a ``str`` whose value is the kind's name).

    Class attributes
    ----------------
    prefix : str
        Id prefix (``F1-S1``, ``F1-L1``); kinds sharing a prefix share its count.
    shunt : bool
        True for an element hung at a tee (its admittance adds at a node);
        False for a series section of the through line.
    termination : str or None
        ``"open"`` or ``"short"`` for a stub.
    """

    prefix = "?"
    shunt = False
    termination: str | None = None

    # -- batched two-port (filters._evaluate_chunk) ------------------------------------------------
    def batch_into(self, sweep: Any, x: np.ndarray, y0: float, work: Any, out: np.ndarray) -> np.ndarray:
        """Shunt kinds: the admittance ``Y`` of a column of lengths ``x`` (siemens).
        Series kinds: ``u = e^{-gamma x}``. Written into ``out``; ``work`` is scratch."""
        raise NotImplementedError

    # -- reference two-port (filters.evaluate) ----------------------------------------------------
    def abcd(self, z0: float, g: np.ndarray, length_m: float) -> tuple[np.ndarray, np.ndarray | float]:
        """``(M, log_scale)``: the element's ABCD matrix is ``e^{log_scale} M``, shape (n, 2, 2)."""
        raise NotImplementedError

    def admittance(self, z0: complex, g: Any, length_m: float) -> Any:
        """Input admittance of a shunt element, siemens (reference physics)."""
        raise NotImplementedError

    # -- power hook (power.power_check) -----------------------------------------------------------
    def standing_wave(self, v_tee: complex, z0: complex, g: complex, length_m: float,
                      d: np.ndarray) -> tuple[np.ndarray, np.ndarray, float, float]:
        """Shunt kinds: voltage and current phasors at distances ``d`` from the end, for
        ``v_tee`` at the tee, and the end's ``(|V|, |I|)``."""
        raise NotImplementedError

    # -- cut hook (cutlist.cut_list) --------------------------------------------------------------
    first_order = 1
    """Quarter waves in the first resonance (1 open, 2 shorted)."""
    end_text = ""
    dc_text = ""

    # -- drawing hook (report.drawing) ------------------------------------------------------------
    def draw_end(self, wire: Any, dots: list, x: float, y: float) -> float:
        """Draw the end symbol at ``(x, y)``; returns the y of the label's top."""
        return y - 0.2


class _Stub(Kind):
    prefix = "S"
    shunt = True

    def abcd(self, z0, g, length_m):
        return abcd_shunt(self.admittance(z0, g, length_m)), 0.0


class OpenStub(_Stub):
    """A stub left open at its far end: ``Y = Y0 tanh(gamma l)``."""

    termination = "open"
    first_order = 1
    end_text = (
        "open end: cut square and flush (braid and centre conductor at the same plane), make sure no "
        "braid strand touches the centre conductor, then seal the end against water (the open end "
        "carries the highest voltage of the stub)"
    )
    dc_text = "DC path: an open stub does not give the antenna side a DC path to ground"

    def batch_into(self, sweep, x, y0, work, out):
        return sweep.shunt_y_into(x, y0, False, work, out)

    def admittance(self, z0, g, length_m):
        return yin_open(z0, g, length_m)

    def standing_wave(self, v_tee, z0, g, length_m, d):
        v_end = v_tee / np.cosh(g * length_m)
        gd = g * d
        return v_end * np.cosh(gd), v_end * np.sinh(gd) / z0, float(abs(v_end)), 0.0

    def draw_end(self, wire, dots, x, y):
        from notchkit.report.sketch import Dot

        dots.append(Dot(x, y - 0.09, 0.09, fill=1.0, width=1.2))
        return y - 0.28


class ShortStub(_Stub):
    """A stub shorted at its far end: ``Y = Y0 coth(gamma l)`` (0 m taken as 1 nm)."""

    termination = "short"
    first_order = 2
    end_text = (
        "shorted end: strip the jacket and fold the braid back, then solder the centre conductor to "
        "the braid with the shortest possible joint (a long pigtail adds inductance and lengthens the "
        "stub); seal the end against water"
    )
    dc_text = (
        "DC path: a shorted stub puts the antenna side at DC ground (good for static drain), but it "
        "shorts any DC fed up the coax to a masthead preamplifier or remote antenna switch"
    )

    def batch_into(self, sweep, x, y0, work, out):
        return sweep.shunt_y_into(np.maximum(x, MIN_MODEL_LENGTH_M), y0, True, work, out)

    def admittance(self, z0, g, length_m):
        return yin_short(z0, g, max(length_m, MIN_MODEL_LENGTH_M))

    def standing_wave(self, v_tee, z0, g, length_m, d):
        length_m = max(length_m, MIN_MODEL_LENGTH_M)
        i_end = v_tee / (z0 * np.sinh(g * length_m))
        gd = g * d
        return i_end * z0 * np.sinh(gd), i_end * np.cosh(gd), 0.0, float(abs(i_end))

    def draw_end(self, wire, dots, x, y):
        wire([x, x], [y, y - 0.1])
        for w, dy in ((0.28, 0.1), (0.18, 0.18), (0.08, 0.26)):
            wire([x - w, x + w], [y - dy, y - dy])
        return y - 0.36


class LineSection(Kind):
    """A series section of the filter's own cable between tees."""

    prefix = "L"
    shunt = False

    def batch_into(self, sweep, x, y0, work, out):
        return sweep.decay_into(x, out, work.r1, work.flat)

    def abcd(self, z0, g, length_m):
        return abcd_series_line_scaled(z0, g, length_m)


OPEN = OpenStub("open")
SHORT = ShortStub("short")
LINE = LineSection("line")

KINDS: dict[str, Kind] = {k: k for k in (OPEN, SHORT, LINE)}
"""Every kind by name (the registry: a new kind is added here)."""


def kind_of(name: str | Kind) -> Kind:
    """The kind object of ``name`` (a kind is returned as it is)."""
    if isinstance(name, Kind):
        return name
    k = KINDS.get(name) if isinstance(name, str) else None
    if k is None:
        raise DesignError(f"element kind {name!r} must be one of {', '.join(KINDS)}")
    return k


def element_ids(elements: Any, filter_id: str = "F1") -> tuple[str, ...]:
    """``F1-S1``, ``F1-L1``, ...: each element's id, numbered per prefix, radio side first.

    ``elements`` is a filter (anything with ``.elements``), a sequence of
    elements, or a sequence of kinds / kind names. This is the one place ids
    are numbered. An empty ``filter_id`` gives the bare ``S1``, ``L1``.
    """
    seq = getattr(elements, "elements", elements)
    counts: dict[str, int] = {}
    ids = []
    for e in seq:
        k = kind_of(e if isinstance(e, str) else e.kind)
        counts[k.prefix] = counts.get(k.prefix, 0) + 1
        own = f"{k.prefix}{counts[k.prefix]}"
        ids.append(f"{filter_id}-{own}" if filter_id else own)
    return tuple(ids)
