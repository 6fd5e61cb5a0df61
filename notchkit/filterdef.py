"""A stub filter as ordered elements on one cable: :class:`Stub`, :class:`Line`, :class:`Filter`.

A filter runs from the radio side (port 1) to the antenna side (port 2). Its
elements are shunt stubs (open or shorted, at a tee) and series line sections.
Consecutive stubs with no line between them share one tee: their admittances
add at one node, which is exactly what cascading their shunt ABCD matrices does.

The medium is anything with ``z0_ohm``, ``velocity_factor`` and
``alpha_np_per_m(freq_hz)`` (a :class:`notchkit.cables.Cable`, a
:class:`notchkit.hardware.Model`, or a user's own object). These names are
re-exported by :mod:`notchkit.filters`, where the rest of the program imports them.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal, Protocol

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.elements import LINE, Kind, kind_of
from notchkit.errors import DesignError

Termination = Literal["open", "short"]


class Medium(Protocol):
    """What the filter model needs to know about a cable."""

    @property
    def z0_ohm(self) -> float: ...

    @property
    def velocity_factor(self) -> float: ...

    def alpha_np_per_m(self, freq_hz: ArrayLike) -> NDArray[np.float64]: ...


@dataclass(frozen=True, slots=True, kw_only=True)
class Stub:
    """A shunt stub at a tee.

    ``length_m`` is the full electrical path in metres of the stub's cable,
    from the tee's reference plane to the stub's end, tee allowance included.
    """

    termination: Termination
    length_m: float

    def __post_init__(self) -> None:
        if self.termination not in ("open", "short"):
            raise DesignError(f"stub termination {self.termination!r} must be 'open' or 'short'")
        _check_length(self.length_m, "stub")

    @property
    def kind(self) -> Kind:
        return kind_of(self.termination)


@dataclass(frozen=True, slots=True, kw_only=True)
class Line:
    """A series line section of the filter's cable between two tees."""

    length_m: float

    def __post_init__(self) -> None:
        _check_length(self.length_m, "line section")

    @property
    def kind(self) -> Kind:
        return LINE


Element = Stub | Line


def check_freq(f: NDArray[np.float64]) -> None:
    """Frequencies must be finite and positive (DesignError otherwise)."""
    if f.size == 0 or not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise DesignError("frequencies must be finite and > 0 Hz")


def _check_length(length_m: float, what: str) -> None:
    if not np.isfinite(length_m) or length_m < 0:
        raise DesignError(f"{what} length {length_m!r} m must be finite and >= 0")


@dataclass(frozen=True, slots=True, kw_only=True)
class Filter:
    """A stub filter: elements from the radio side to the antenna side on one cable."""

    elements: tuple[Element, ...]
    cable: Medium
    tee_allowance_m: float = 0.0

    def __post_init__(self) -> None:
        if not self.elements:
            raise DesignError("a filter needs at least one element")
        if not any(isinstance(e, Stub) for e in self.elements):
            raise DesignError("a filter needs at least one stub")

    @property
    def kinds(self) -> tuple[Kind, ...]:
        return tuple(e.kind for e in self.elements)

    @property
    def lengths_m(self) -> NDArray[np.float64]:
        return np.array([e.length_m for e in self.elements], dtype=float)

    @property
    def stubs(self) -> tuple[Stub, ...]:
        return tuple(e for e in self.elements if isinstance(e, Stub))

    @property
    def total_cable_m(self) -> float:
        """All cable the filter uses: stubs (as cut) and line sections."""
        return float(sum(self.cut_length_m(e) if isinstance(e, Stub) else e.length_m
                         for e in self.elements))

    def cut_length_m(self, stub: Stub) -> float:
        """Length of cable to cut for ``stub``: its path less the tee allowance."""
        return stub.length_m - self.tee_allowance_m

    def tees(self) -> list[list[int]]:
        """Indices of the stubs at each tee, radio side first."""
        groups: list[list[int]] = []
        open_group = False
        for i, e in enumerate(self.elements):
            if isinstance(e, Stub):
                if not open_group:
                    groups.append([])
                    open_group = True
                groups[-1].append(i)
            else:
                open_group = False
        return groups
