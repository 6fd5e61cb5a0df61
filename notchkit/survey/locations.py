"""Filter locations: turn the threats' notch requests into FilterRequirements."""

from __future__ import annotations

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

    ``feeds`` are :class:`~notchkit.survey.result.NotchFeed` requests (only threats with
    positive excess make them).

    Overlapping (or touching) notch bands at one location are unioned and the
    deeper requirement kept; pass bands are the radio's own tx and rx bands.
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
            notches, reasons, bands = _merge(feeds)
            i = sa.unit_of(index[radio.name])
            band_use = _band_use(sa, index[radio.name], bands)
            if band_use:
                reasons = tuple(
                    r + " [needed on " + ", ".join(b) + "]" if b else r
                    for r, b in zip(reasons, bands, strict=True)
                )  # fmt: skip
            out.append(
                FilterRequirement(
                    radio=radio.name,
                    side=side,
                    band_use=band_use,
                    pass_bands=tuple(Band(lo_mhz=lo, hi_mhz=hi) for lo, hi in sa.pass_bands(i)),
                    notches=notches,
                    cable=radio.stub_cable or site.cable,
                    power_w=None if radio.tx is None else radio.tx.power_w,
                    power_mhz=None if radio.tx is None else radio.tx.band.centre_mhz,
                    reasons=reasons,
                )
            )
    return tuple(out)


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
