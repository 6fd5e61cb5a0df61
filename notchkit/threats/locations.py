"""Filter locations: turn the threats' notch requests into FilterRequirements."""

from __future__ import annotations

from typing import Any

from notchkit.requirements import FilterRequirement, NotchSpec
from notchkit.site.model import Band, Site

TOO_CLOSE_FRACTION = 0.03
"""A notch closer to one of the filter's pass bands than this fraction of the pass
band's centre frequency (gap < 3 % of f) is not asked of coax stubs: a stub's
response is too broad to reject one and pass the other with the loss and SWR
limits of a site filter (rule of this project, from the trade's experience that
close spacings such as repeater splits need cavities or duplexers)."""

MAX_REASONS = 3
"""Reasons listed per merged notch before '... and N more'."""


def too_close(lo: float, hi: float, pass_bands) -> tuple[float, float] | None:
    """The first pass band that the notch [lo, hi] overlaps or comes within the rule of."""
    for plo, phi in pass_bands:
        gap = max(lo - phi, plo - hi, 0.0)
        if gap < TOO_CLOSE_FRACTION * 0.5 * (plo + phi):
            return (plo, phi)
    return None


def build_filters(site: Site, sa, feeds) -> tuple[FilterRequirement, ...]:
    """One FilterRequirement per (radio, side) that some threat with positive excess needs.

    ``feeds`` are :class:`~notchkit.threats.result.NotchFeed` requests (only threats with
    positive excess make them).

    Overlapping (or touching) notch bands at one location are unioned and the
    deeper requirement kept; pass bands are the radio's own tx and rx bands.

    A radio working several bands one at a time gets one filter that passes
    every band, with ``band_use`` saying which notch each band needs; when a
    notch lies too close to another of its bands (a harmonic of 80 m on 40 m),
    it gets a band-switched set instead: one filter per band, each passing that
    band and holding the notches needed while it is in use.
    """
    by_loc: dict[tuple[str, str], list] = {}
    for f in feeds:
        by_loc.setdefault((f.radio, f.side), []).append(f)
    index = {r.name: i for i, r in enumerate(site.radios)}
    out = []
    for radio in site.radios:
        for side in ("tx", "rx"):
            feeds = by_loc.get((radio.name, side))
            if not feeds:
                continue
            common: dict[str, Any] = {
                "radio": radio.name, "side": side, "cable": radio.stub_cable or site.cable,
                "power_w": None if radio.tx is None else radio.tx.power_w,
                "power_mhz": None if radio.tx is None else radio.tx.band.centre_mhz,
            }  # fmt: skip
            ri = index[radio.name]
            notches, reasons, bands = _merge(feeds)
            all_pass = sa.pass_bands(sa.unit_of(ri))
            units = sa.units_of(ri)
            if len(units) > 1 and any(too_close(n.lo_mhz, n.hi_mhz, all_pass) for n in notches):
                out += _switched_set(sa, units, feeds, common)
                continue
            band_use = _band_use(sa, ri, bands)
            if band_use:
                reasons = tuple(
                    r + " [needed on " + ", ".join(b) + "]" if b else r
                    for r, b in zip(reasons, bands, strict=True)
                )  # fmt: skip
            out.append(
                FilterRequirement(
                    band_use=band_use, notches=notches, reasons=reasons,
                    pass_bands=tuple(Band(lo_mhz=lo, hi_mhz=hi) for lo, hi in all_pass),
                    **common,
                )
            )  # fmt: skip
    return tuple(out)


def _switched_set(sa, units, feeds, common) -> list[FilterRequirement]:
    """One filter per operating band: switched in with the band (a band-switched set)."""
    out = []
    for u in units:
        label = sa.op.labels[u]
        mine = [f for f in feeds if label in f.bands]
        if not mine:
            continue
        notches, reasons, _ = _merge(mine)
        reasons = tuple(f"{r} [band-switched: in line on {label} only]" for r in reasons)
        unit = sa.site.radios[u]
        if unit.tx is not None:  # the carrier through this filter is the band it is switched in on
            common = {**common, "power_mhz": unit.tx.band.centre_mhz}
        out.append(
            FilterRequirement(
                band_use=((label, tuple(range(len(notches)))),), notches=notches, reasons=reasons,
                pass_bands=tuple(Band(lo_mhz=lo, hi_mhz=hi) for lo, hi in sa.unit_pass_bands(u)),
                **common,
            )
        )  # fmt: skip
    return out


def _band_use(sa, radio: int, bands) -> tuple[tuple[str, tuple[int, ...]], ...]:
    """(band, notch indices needed on it) for a radio working several bands, else ()."""
    labels = [sa.op.labels[u] for u in range(len(sa.names)) if int(sa.radio_of[u]) == radio]
    if len(labels) < 2:
        return ()
    return tuple(
        (lab, tuple(k for k, used in enumerate(bands) if lab in used)) for lab in labels
    )  # fmt: skip


def _merge(feeds) -> tuple[tuple[NotchSpec, ...], tuple[str, ...], tuple[tuple[str, ...], ...]]:
    feeds = sorted(feeds, key=lambda f: (f.lo_mhz, f.hi_mhz))
    groups: list[list] = []
    for f in feeds:
        if groups and f.lo_mhz <= groups[-1][1]:
            g = groups[-1]
            g[1] = max(g[1], f.hi_mhz)
            g[2] = max(g[2], f.required_db)
            g[3].setdefault(f.reason, None)
            g[4].update(dict.fromkeys(f.bands))
        else:
            groups.append([f.lo_mhz, f.hi_mhz, f.required_db, {f.reason: None}, dict.fromkeys(f.bands)])
    notches = tuple(NotchSpec(lo_mhz=lo, hi_mhz=hi, required_db=req) for lo, hi, req, *_ in groups)
    bands = tuple(tuple(g[4]) for g in groups)
    reasons = []
    for *_, found, _b in groups:
        rs = list(found)
        text = "; ".join(rs[:MAX_REASONS])
        if len(rs) > MAX_REASONS:
            text += f"; and {len(rs) - MAX_REASONS} more"
        reasons.append(text)
    return notches, tuple(reasons), bands
