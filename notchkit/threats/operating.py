"""How a site operates: operating choices (bands worked one at a time) and scenarios.

This layer decides which (source, victim, band) combinations exist; the threat
mechanisms then run on them unchanged.

* An **operating choice** ("unit") is one radio working one of its bands or
  channels. A radio that lists several bands (``band_mhz: [[21, 21.45], [28,
  29.7]]``) becomes one unit per band; the survey evaluates every unit, and two
  units of the same radio are never active together (the radio works one band
  at a time), so a radio never threatens itself.
* A **scenario** is a set of radios that can be active at the same time
  (``scenarios:`` in the site file). With none given, every radio can be active
  at once (one scenario, ``all at once``). A threat exists only between units
  whose radios share at least one scenario; an intermodulation product only
  when every transmitter of the product and the victim share one.

The units are :class:`~notchkit.site.model.Radio` objects with one band each,
named after their radio (``run-a``) or, for a radio with several choices, after
the radio and the band (``run-a 21-21.45 MHz``).
"""

from __future__ import annotations

import dataclasses
from typing import cast

import numpy as np

from notchkit.site.model import Band, Radio, Site

ALL_AT_ONCE = "all at once"
"""Name of the default scenario: every radio can be active at the same time."""


def band_label(band: Band) -> str:
    """``"21-21.45 MHz"`` for a band, ``"146.52 MHz"`` for a channel."""
    if band.lo_mhz == band.hi_mhz:
        return f"{band.lo_mhz:g} MHz"
    return f"{band.lo_mhz:g}-{band.hi_mhz:g} MHz"


def choice_bands(radio: Radio) -> list[tuple[Band | None, Band | None]]:
    """The (tx band, rx band) of each operating choice of a radio.

    tx and rx lists of the same length pair up by position; a part with one band
    keeps it on every choice.
    """
    n = radio.n_choices
    out = []
    for k in range(n):
        tb = None if radio.tx is None else radio.tx.choices[min(k, len(radio.tx.choices) - 1)]
        rb = None if radio.rx is None else radio.rx.choices[min(k, len(radio.rx.choices) - 1)]
        out.append((tb, rb))
    return out


@dataclasses.dataclass(frozen=True, slots=True, kw_only=True)
class Operating:
    """The site's units and scenarios as arrays (index = unit)."""

    site: Site
    """The original site (physical radios)."""
    units: tuple[Radio, ...]
    """One single-band radio per operating choice."""
    radio_of: np.ndarray
    """Index in ``site.radios`` of each unit's radio."""
    labels: tuple[str, ...]
    """The operating choice of each unit (``""`` for a radio with one choice)."""
    scenario_names: tuple[str, ...]
    active: np.ndarray
    """(n_units, n_scenarios) bool: the unit's radio is in the scenario."""

    @property
    def radio_names(self) -> tuple[str, ...]:
        """Physical radio name of each unit."""
        return tuple(self.site.radios[int(i)].name for i in self.radio_of)

    def pair_ok(self, a: np.ndarray, b: np.ndarray) -> np.ndarray:
        """Units a[k], b[k] belong to different radios that share a scenario."""
        a, b = np.asarray(a, dtype=int), np.asarray(b, dtype=int)
        same = self.radio_of[a] == self.radio_of[b]
        return ~same & (self.active[a] & self.active[b]).any(axis=-1)

    def combos_ok(self, units: np.ndarray) -> np.ndarray:
        """Rows of units (h, k) from k different radios that share a scenario."""
        units = np.asarray(units, dtype=int)
        if units.size == 0:
            return np.zeros(units.shape[:1], dtype=bool)
        radios = np.sort(self.radio_of[units], axis=1)
        distinct = (np.diff(radios, axis=1) != 0).all(axis=1)
        together = np.logical_and.reduce(self.active[units], axis=1).any(axis=-1)
        return distinct & together

    def victims_ok(self, units: np.ndarray, victim: np.ndarray) -> np.ndarray:
        """The victim unit shares a scenario with every unit of its row and is not
        another choice of one of their radios (the same unit is allowed: a radio's
        own transmitter in a product reaching its own receiver is decided by the
        mechanism)."""
        units = np.asarray(units, dtype=int)
        victim = np.asarray(victim, dtype=int)
        if units.size == 0:
            return np.zeros(victim.shape, dtype=bool)
        other_choice = (self.radio_of[units] == self.radio_of[victim][:, None]) & (
            units != victim[:, None]
        )
        acts = np.concatenate([self.active[units], self.active[victim][:, None, :]], axis=1)
        together = np.logical_and.reduce(acts, axis=1).any(axis=-1)
        return together & ~other_choice.any(axis=1)

    def scenarios_of(self, units) -> tuple[str, ...]:
        """Names of the scenarios in which all the given units can be active."""
        idx = np.asarray(list(units), dtype=int)
        both = np.logical_and.reduce(self.active[idx], axis=0)
        return tuple(n for n, ok in zip(self.scenario_names, both.tolist(), strict=True) if ok)


def expand(site: Site) -> Operating:
    """Split the site's radios into operating choices and index the scenarios."""
    units: list[Radio] = []
    radio_of: list[int] = []
    labels: list[str] = []
    for i, r in enumerate(site.radios):
        choices = choice_bands(r)
        for tb, rb in choices:
            label = ""
            name = r.name
            if len(choices) > 1:
                label = band_label(cast(Band, tb if tb is not None else rb))  # a choice has one or both
                if tb is not None and rb is not None and tb != rb:
                    label = f"tx {band_label(tb)} / rx {band_label(rb)}"
                name = f"{r.name} {label}"
            # every choice of a transmitting radio has a tx band, of a receiving one an rx band
            tx = None if r.tx is None else dataclasses.replace(r.tx, band=cast(Band, tb), bands=())
            rx = None if r.rx is None else dataclasses.replace(r.rx, band=cast(Band, rb), bands=())
            units.append(dataclasses.replace(r, name=name, tx=tx, rx=rx))
            radio_of.append(i)
            labels.append(label)
    index = {r.name: i for i, r in enumerate(site.radios)}
    if site.scenarios:
        names = tuple(s.name for s in site.scenarios)
        member = np.zeros((len(site.radios), len(names)), dtype=bool)
        for k, s in enumerate(site.scenarios):
            for name in s.radios:
                if name in index:
                    member[index[name], k] = True
    else:
        names = (ALL_AT_ONCE,)
        member = np.ones((len(site.radios), 1), dtype=bool)
    ro = np.array(radio_of, dtype=int)
    return Operating(
        site=site,
        units=tuple(units),
        radio_of=ro,
        labels=tuple(labels),
        scenario_names=names,
        active=member[ro] if ro.size else np.zeros((0, len(names)), dtype=bool),
    )
