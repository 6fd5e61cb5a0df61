"""The site survey: which transmitter threatens which receiver, by how many dB.

See docs/survey.md for the model. Every mechanism is evaluated with numpy over
index arrays (transmitter x receiver x harmonic / product), and Python only
builds the result objects. The mechanisms are run here; the direct ones
(fundamental, harmonics, noise) are in :mod:`notchkit.threats.direct`, the
context they share (notch feeds, clashes) in :mod:`notchkit.threats.context`.
"""

from __future__ import annotations

import dataclasses
from operator import attrgetter
from typing import Any

import numpy as np

from notchkit.requirements import guarded
from notchkit.site.model import Site
from notchkit.threats import limits, products
from notchkit.threats.blocking import blocking_threats
from notchkit.threats.context import _Ctx
from notchkit.threats.direct import _fundamental, _harmonics, _noise
from notchkit.threats.intermod import DEFAULT_MAX_THREATS, intermod_threats
from notchkit.threats.locations import build_filters
from notchkit.threats.paths import OUT_PORTS, SiteArrays, check_max_harmonic
from notchkit.threats.result import SurveyResult, Threat


def survey(
    site: Site, *, max_harmonic: int | None = None, max_threats: int | None = None
) -> SurveyResult:
    """Find every threat between the site's transmitters and receivers.

    Parameters
    ----------
    site : notchkit.site.model.Site
        The site.
    max_harmonic : int, optional
        Highest harmonic evaluated (>= 1; 1: none); default ``site.max_harmonic``.
    max_threats : int, optional
        Intermodulation threats kept as objects, the worst first (default
        :data:`notchkit.threats.intermod.DEFAULT_MAX_THREATS`); the rest are counted
        in ``left_out`` and still reach the matrix.

    Returns
    -------
    SurveyResult
        Threats sorted by excess (worst first), filter requirements per location.

    Raises
    ------
    SiteError
        Values that would make the numbers meaningless (power <= 0, bad bands).
    UsageError
        ``max_harmonic`` not an integer >= 1.

    Notes
    -----
    level = P_tx - suppression - feedline(tx) - isolation - feedline(rx);
    excess = level - threshold; required notch depth = excess + rejection margin.
    """
    n_harm = check_max_harmonic(site.max_harmonic if max_harmonic is None else max_harmonic)
    sa = SiteArrays(site)
    margin = float(site.limits.rejection_margin_db)
    units = sa.site.radios  # one per operating choice (survey/operating.py)
    tx = np.array([i for i, r in enumerate(units) if r.tx is not None], dtype=int)
    rx = np.array([i for i, r in enumerate(units) if r.rx is not None], dtype=int)
    notes = list(sa.notes)
    both = [r.name for r in site.radios if r.tx is not None and r.rx is not None]
    if both:
        notes.append(
            "transceivers not evaluated against their own receivers (shared antenna: "
            "that is the duplexer's job): " + ", ".join(both)
        )
    ctx = _Ctx(sa, margin)
    notes += _default_notes(sa, ctx)
    notes += _operating_notes(sa)
    threats: list[Threat] = []
    left_out: list[tuple[str, int, int]] = []
    left_worst: tuple[tuple[str, str, float], ...] = ()
    if tx.size and rx.size:
        # The operating layer: only pairs of different radios that share a scenario.
        tt, rr = (a.ravel() for a in np.meshgrid(tx, rx, indexing="ij"))
        keep = sa.op.pair_ok(tt, rr)
        tt, rr = tt[keep], rr[keep]
        threats += _fundamental(ctx, tt, rr)
        if n_harm >= 2:
            threats += _harmonics(ctx, tt, rr, n_harm)
        threats += _noise(ctx, tt, rr)
        im, outcome = intermod_threats(
            ctx, tx, rx, max_order=getattr(site, "max_im_order", products.DEFAULT_MAX_ORDER),
            max_threats=DEFAULT_MAX_THREATS if max_threats is None else max_threats,
        )
        threats += im
        notes += outcome.notes or []
        threats += blocking_threats(ctx, tx, rx)
        if outcome.left_over or outcome.left_under:
            left_out.append(("intermod", outcome.left_over, outcome.left_under))
            ww = outcome.worst if outcome.worst is not None else np.empty((0, 0))
            worst_by_radio: dict[tuple[str, str], float] = {}  # units -> their radios (operating layer)
            for t, r in np.argwhere(np.isfinite(ww)).tolist():
                key = (sa.radio_names[t], sa.radio_names[r])
                worst_by_radio[key] = max(worst_by_radio.get(key, -np.inf), float(ww[t, r]))
            left_worst = tuple((a, b, v) for (a, b), v in worst_by_radio.items())
            notes.append(
                f"intermodulation: {outcome.products} products land in receivers; the "
                f"{len(im)} worst are listed, {outcome.left_over} more above the limit and "
                f"{outcome.left_under} below it are counted only (they still count in the matrix)"
            )
    threats = _operate(ctx, threats)
    # Stable sort on excess only: ties keep the (deterministic) order of generation.
    threats.sort(key=attrgetter("excess_db"), reverse=True)
    return SurveyResult(
        site=site.name,
        transmitters=tuple(r.name for r in site.radios if r.tx is not None),
        receivers=tuple(r.name for r in site.radios if r.rx is not None),
        threats=tuple(threats),
        filters=_with_protects(build_filters(site, sa, ctx.all_feeds()), threats),
        notes=tuple(notes),
        max_harmonic=n_harm,
        rejection_margin_db=margin,
        max_im_order=getattr(site, "max_im_order", products.DEFAULT_MAX_ORDER),
        left_out=tuple(left_out),
        left_out_worst=left_worst,
    )



def _with_protects(filters: tuple[Any, ...], threats: list[Threat]) -> tuple[Any, ...]:
    """Each filter requirement with whose reception it guards (``protects``), from the
    threats that ask a notch of its location."""
    victims: dict[tuple[str, str], set[str]] = {}
    for t in threats:
        for loc in t.filters:
            victims.setdefault(loc, set()).add(t.victim)
    return tuple(dataclasses.replace(f, protects=guarded(f.radio, victims.get((f.radio, f.side), ())))
                 for f in filters)

def _default_notes(sa: SiteArrays, ctx) -> list[str]:
    """Which radios rest on the survey's documented defaults."""
    site = sa.physical
    out = []
    supp = sorted({src for i, (_, src) in ctx.supp.items() if src.startswith("default")})
    for src in supp:
        who = [ctx.names[i] for i, (_, s) in ctx.supp.items() if s == src]
        out.append(f"harmonic suppression {src} for: " + ", ".join(who))
    blocking = [
        r.name for r in site.radios
        if r.rx is not None and r.rx.blocking_dbm is None and not r.rx.selectivity
        and r.rx.receiver_class is None
    ]  # fmt: skip
    rxs = [(r.name, r.rx) for r in site.receivers if r.rx is not None]
    for cls in sorted({rx.receiver_class for _, rx in rxs if rx.receiver_class}):
        who = [name for name, rx in rxs if rx.receiver_class == cls and not rx.selectivity]
        first = next(rx for name, rx in rxs if name == who[0]) if who else None
        if first is not None:
            out.append(
                "blocking by offset from the " + limits.selectivity_table(
                    dataclasses.replace(first, selectivity=())
                )[1] + " for: " + ", ".join(who)
            )  # fmt: skip
    if blocking:
        out.append(
            f"default blocking level {limits.DEFAULT_BLOCKING_DBM:g} dBm (documented default, "
            "from memory: ETSI EN 300 086 order of magnitude) for: " + ", ".join(blocking)
        )
    conv = [r.name for r in site.radios if r.tx is not None and r.tx.im_conversion_db is None]
    if conv:
        out.append(
            f"default IM conversion loss {limits.DEFAULT_IM_CONVERSION_DB:g} dB (3rd order, "
            "common practice) for: " + ", ".join(conv)
        )
    return out


def _operating_notes(sa: SiteArrays) -> list[str]:
    """What the survey took into account about how the site operates."""
    site = sa.physical
    out = []
    if site.scenarios:
        out.append(
            "scenarios (radios active together; threats only within one): "
            + "; ".join(f"{s.name}: {', '.join(s.radios)}" for s in site.scenarios)
        )
        idle = [r.name for r in site.radios if not any(r.name in s.radios for s in site.scenarios)]
        if idle:
            out.append("in no scenario, so never evaluated: " + ", ".join(idle))
    multi = [r for r in site.radios if r.n_choices > 1]
    if multi:
        out.append(
            "radios working several bands one at a time (each band evaluated on its own, "
            "never against the same radio): "
            + "; ".join(
                f"{r.name}: " + ", ".join(
                    lab for lab, k in zip(sa.op.labels, sa.radio_of.tolist(), strict=True)
                    if sa.physical.radios[k] is r
                )
                for r in multi
            )
        )  # fmt: skip
    for r in site.radios:
        for f in r.installed:
            where = {"tx": "transmit path", "rx": "receive path", "antenna": "antenna port"}[f.port]
            src = f"measured {f.touchstone}" if f.touchstone else "rejection table"
            when = "" if f.for_band is None else (
                f", in line on {f.for_band.lo_mhz:g}-{f.for_band.hi_mhz:g} MHz"
            )
            out.append(
                f"installed filter taken into account: {r.name}: {f.name} ({f.kind}, {where}, "
                f"{src} {f.rejection[0][0]:g}-{f.rejection[-1][0]:g} MHz{when}; no rejection "
                "credited outside)"
            )
    near = sa.near_field_db
    out.append(
        f"near field (d < lambda/2pi): no isolation formula used; bound {near:g} dB unless measured"
    )
    return out


def _operate(ctx, threats: list[Threat]) -> list[Threat]:
    """Name the physical radios, the scenario, the operating choices, the installed
    rejection used and the remedy class of every threat (the mechanisms name units).

    The threats are new objects that nothing else has seen yet, so their new fields
    are set in place (``object.__setattr__`` on the frozen, slotted dataclass): a
    ``dataclasses.replace`` per threat took most of a large survey's time.
    """
    if not threats:
        return threats
    sa = ctx.sa
    op = sa.op
    uidx = {n: i for i, n in enumerate(sa.names)}
    phys = sa.radio_names
    labels = op.labels
    any_label = any(labels)
    one_scenario = op.scenario_names if len(op.scenario_names) == 1 else None
    src_u = [uidx[t.mixer if t.mixer is not None else t.sources[0]] for t in threats]
    vic_u = [uidx[t.victim] for t in threats]
    f_lo = np.array([t.f_lo_mhz for t in threats], dtype=float)
    if sa.has_installed:
        inst_db = (sa.installed_db(np.array(src_u), f_lo, OUT_PORTS)
                   + sa.installed_db(np.array(vic_u), f_lo, ("rx", "antenna"))).tolist()  # fmt: skip
    else:
        inst_db = [0.0] * len(threats)
    names_of: dict[tuple[str, ...], tuple] = {}
    scen_of: dict[frozenset, tuple[str, ...]] = {}
    inst_of: dict[tuple[int, int], tuple[str, ...]] = {}
    setf = object.__setattr__
    for k, t in enumerate(threats):
        units = names_of.get(t.sources)
        if units is None:
            su = tuple(uidx[n] for n in t.sources)
            units = names_of[t.sources] = (su, tuple(phys[u] for u in su))
        su, sources = units
        v, src = vic_u[k], src_u[k]
        if one_scenario is not None:
            scen = one_scenario
        else:
            rk = frozenset(int(sa.radio_of[u]) for u in (*su, v))
            scen = scen_of.get(rk)
            if scen is None:
                scen = scen_of[rk] = op.scenarios_of((*su, v))
        ops = tuple(f"{phys[u]}: {labels[u]}" for u in (*su, v) if labels[u]) if any_label else ()
        inst = inst_of.get((src, v))
        if inst is None:
            inst = inst_of[(src, v)] = tuple(
                f"{phys[u]}: {n}" for u, ports in ((src, OUT_PORTS), (v, ("rx", "antenna")))
                for n in sa.installed_names(u, ports)
            )  # fmt: skip
        setf(t, "sources", sources)
        setf(t, "victim", phys[v])
        if t.mixer is not None:
            setf(t, "mixer", phys[uidx[t.mixer]])
        setf(t, "scenario", scen)
        setf(t, "operating", ops)
        if getattr(t, "route", None) == "receiver" and sa.has_installed:
            # formed in the victim's front end: the carriers passed the filters, at their frequencies
            f_src = np.array([sa.tx_lo[u] for u in su])
            per = sa.installed_db(np.array(su), f_src, OUT_PORTS) + sa.installed_db(
                np.full(len(su), v), f_src, ("rx", "antenna"))
            inst_db[k] = float(per.min())
        setf(t, "installed_db", inst_db[k])
        setf(t, "installed", inst)
        rclass, remedy, filters = _classify(ctx, t, src)
        setf(t, "remedy_class", rclass)
        setf(t, "remedy", remedy)
        setf(t, "filters", filters)
    return threats


def _classify(ctx, t: Threat, source: int) -> tuple[str, str, tuple]:
    """Remedy class: none, stub, or not a stub job (band-pass filter, cavity, spacing, time-sharing)."""
    if t.excess_db <= 0:
        return "none", t.remedy, t.filters
    if "coordinate frequencies or time-share" in t.remedy:
        return "time-sharing", t.remedy, t.filters
    ceiling = ctx.ceiling
    f = t.f_mhz
    sa = ctx.sa
    if t.mechanism == "noise" and not t.filters and (
        t.f_lo_mhz <= sa.tx_hi[source] * 1.03 and sa.tx_lo[source] * 0.97 <= t.f_hi_mhz
    ):
        # transmitter noise on (or next to) its own band: no filter at the transmitter can
        # pass its carrier and stop its noise; only distance or taking turns
        cls = "spacing" if t.required_db <= ceiling + limits.SPACING_PLUS_DB else "time-sharing"
        return cls, (
            f"not a stub job: transmitter noise on its own band; remedy class: {cls} ("
            + _class_hint(cls, t) + "); " + t.remedy
        ), ()
    if t.required_db > ceiling:
        cls = limits.remedy_class(t.required_db, ceiling, f)
        return cls, (
            f"not a stub job: needs {t.required_db:.1f} dB, more than stubs plausibly give "
            f"({ceiling:g} dB); remedy class: {cls} (" + _class_hint(cls, t) + "); " + t.remedy
        ), ()
    if t.filters:
        return "stub", t.remedy, t.filters
    return ("band-pass filter" if f < 30.0 else "cavity"), t.remedy, t.filters


def _class_hint(cls: str, t: Threat) -> str:
    if cls == "band-pass filter":
        at = t.victim if t.mechanism == "fundamental" else (t.mixer or t.sources[0])
        return f"a band-pass filter at {at}, stubs for what is left"
    if cls == "cavity":
        at = t.victim if t.mechanism == "fundamental" else (t.mixer or t.sources[0])
        return f"a cavity or duplexer at {at}, stubs for what is left"
    if cls == "spacing":
        return "more antenna separation, then filters"
    return "do not operate these together (or give the scenario that keeps them apart)"
