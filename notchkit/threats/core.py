"""The site survey: which transmitter threatens which receiver, by how many dB.

See docs/survey.md for the model. Every mechanism is evaluated with numpy over
index arrays (transmitter x receiver x harmonic / product), and Python only
builds the result objects.
"""

from __future__ import annotations

import dataclasses
from operator import attrgetter
from typing import Any

import numpy as np

from notchkit.requirements import guarded
from notchkit.site.model import Radio, Site
from notchkit.threats import limits, products
from notchkit.threats.blocking import blocking_threats
from notchkit.threats.intermod import DEFAULT_MAX_THREATS, intermod_threats
from notchkit.threats.isolation import C0_M_PER_S, ISOLATION_FLOOR_DB
from notchkit.threats.locations import build_filters, too_close
from notchkit.threats.paths import OUT_PORTS, SiteArrays, check_max_harmonic
from notchkit.threats.result import NotchFeed, SurveyResult, Threat


def _noise_of(radio: Radio) -> float | None:
    """A transmitter's broadband noise, dBc/Hz (``None``: not given)."""
    return radio.tx.noise_dbc_hz if radio.tx is not None else None

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


class _Ctx:
    """Shared state of one survey run."""

    def __init__(self, sa: SiteArrays, margin: float):
        self.sa = sa
        self.margin = margin
        lim = sa.physical.limits
        self.ceiling = limits.stub_ceiling_db(
            lim.max_stub_rejection_db, getattr(sa.physical, "depth_ceiling_db", None), lim.max_stubs
        )
        self.names = sa.names
        self.d = np.hypot(
            np.hypot(sa.x[:, None] - sa.x[None, :], sa.y[:, None] - sa.y[None, :]),
            sa.h[:, None] - sa.h[None, :],
        ).tolist()
        # a notch is checked against the bands of the operating choice that asks for it;
        # build_filters makes a band-switched set when one filter cannot pass every band
        self.pass_bands = [sa.unit_pass_bands(i) for i in range(len(sa.names))]
        self._iso_cache: dict[tuple, str] = {}
        self._clash_cache: dict[tuple, tuple[float, float] | None] = {}
        self._feeds: dict[tuple, list] = {}
        self._im: dict[tuple[int, int], list] = {}
        self.supp = {}
        for i, r in enumerate(sa.site.radios):
            if r.tx is None:
                continue
            if r.tx.harmonic_suppression_dbc is not None:
                self.supp[i] = (float(r.tx.harmonic_suppression_dbc), "radio's harmonic_suppression_dbc")
            else:
                self.supp[i] = limits.spurious_suppression_dbc(r.tx.band.centre_mhz, r.tx.power_w)

    def iso_text(self, a: int, b: int, f: float, iso: float, method: int) -> str:
        """Isolation description, cached on what changes its wording."""
        key = (a, b, method, iso <= ISOLATION_FLOOR_DB, self.d[a][b] < C0_M_PER_S / (f * 1e6))
        text = self._iso_cache.get(key)
        if text is None:
            text = self._iso_cache[key] = self.sa.describe_isolation(a, b, f, iso, method)
        return text

    def clash(self, radio: int, lo: float, hi: float):
        """The pass band of radio's filter that a notch [lo, hi] is too close to, or None."""
        key = (radio, lo, hi)
        if key not in self._clash_cache:
            self._clash_cache[key] = too_close(lo, hi, self.pass_bands[radio])
        return self._clash_cache[key]

    def feed(self, radio: int, side: str, lo: float, hi: float, required: float, reason: str):
        """Ask radio's filter for a notch; returns its location, or the pass band it clashes with.

        A notch deeper than the stub ceiling is not asked of stubs: ``(None, None)``.
        """
        clash = self.clash(radio, lo, hi)
        if clash is not None:
            return None, clash
        if required > self.ceiling:
            return None, None
        r = self.sa.site.radios[radio]
        if r.tx is not None and r.rx is not None:
            # A transceiver has one feedline, so one filter at its radio port carries
            # both its transmit- and receive-side notches; "tx" because its power flows through.
            side = "tx"
        phys = int(self.sa.radio_of[radio])
        band = self.sa.op.labels[radio]
        entry = self._feeds.get((phys, side, lo, hi, band))
        if entry is None:
            self._feeds[(phys, side, lo, hi, band)] = [required, {reason: None}, {band: None}]
        else:
            entry[0] = max(entry[0], required)
            entry[1].setdefault(reason, None)
            entry[2].setdefault(band, None)
        return (self.sa.radio_names[radio], side), None

    def feed_im(
        self, mixer: int, other: int, required: float, product: str, victim: int, count: int = 1
    ) -> None:
        """IM notches are aggregated per (mixer, other transmitter): worst depth and a count."""
        if required > self.ceiling:
            return
        entry = self._im.get((mixer, other))
        if entry is None:
            self._im[(mixer, other)] = [required, count, product, victim]
        else:
            entry[1] += count
            if required > entry[0]:
                entry[0], entry[2], entry[3] = required, product, victim

    # -- the operating layer's filters for the mechanisms (survey/operating.py) --
    def combos_ok(self, units: np.ndarray) -> np.ndarray:
        """Rows of transmitter units that can be active together (distinct radios, one scenario)."""
        return self.sa.op.combos_ok(units)

    def victims_ok(self, units: np.ndarray, victim: np.ndarray) -> np.ndarray:
        """Victim units that can be active with every unit of their row."""
        return self.sa.op.victims_ok(units, victim)

    def all_feeds(self) -> list[NotchFeed]:
        names = self.sa.radio_names
        labels = self.sa.op.labels
        out = [
            NotchFeed(radio=self.sa.physical.radios[r].name, side=side, lo_mhz=lo, hi_mhz=hi,
                      required_db=req, reason="; ".join(reasons), bands=tuple(b for b in bands if b))
            for (r, side, lo, hi, _), (req, reasons, bands) in self._feeds.items()
        ]  # fmt: skip
        for (m, o), (req, count, product, v) in self._im.items():
            more = f" and {count - 1} more" if count > 1 else ""
            out.append(
                NotchFeed(
                    radio=names[m], side="tx", lo_mhz=float(self.sa.tx_lo[o]),
                    hi_mhz=float(self.sa.tx_hi[o]), required_db=req,
                    reason=f"{self.names[o]} entering {self.names[m]}'s output stage: IM {product} "
                    f"into {self.names[v]}{more}",
                    bands=(labels[m],) if labels[m] else (),
                )
            )  # fmt: skip
        return out


def _no_stub(where: str, lo: float, hi: float, clash: tuple[float, float] | None, alternative: str) -> str:
    if clash is None:  # deeper than the stub ceiling: see _classify
        return f"stubs alone cannot: {alternative}"
    return (
        f"no stub: the notch {lo:.4f}-{hi:.4f} MHz at {where} lies within a few % of its pass band "
        f"{clash[0]:.4f}-{clash[1]:.4f} MHz (too close for coax stubs); {alternative}"
    )


def _fundamental(ctx: _Ctx, tt: np.ndarray, rr: np.ndarray) -> list[Threat]:
    sa = ctx.sa
    f = sa.tx_lo[tt]
    total, iso, meth = sa.path_db(tt, rr, f)
    level = sa.p_dbm[tt] - total
    cochannel = (sa.tx_lo[tt] <= sa.rx_hi[rr]) & (sa.rx_lo[rr] <= sa.tx_hi[tt])
    thr = np.where(cochannel, sa.rx_threshold[rr], sa.blocking_dbm(rr, sa.tx_lo[tt], sa.tx_hi[tt]))
    out = []
    for k in range(tt.size):
        t, r = int(tt[k]), int(rr[k])
        lo, hi = float(sa.tx_lo[t]), float(sa.tx_hi[t])
        excess = float(level[k] - thr[k])
        src, vic = ctx.names[t], ctx.names[r]
        where: tuple[Any, ...] = ()
        if cochannel[k]:
            tsrc = sa.rx_threshold_source[r] + " (carrier inside the receiver's band)"
            remedy = (
                "carrier inside the receiver's band: no filter can separate them; "
                "coordinate frequencies or time-share"
            )
        else:
            tsrc = sa.rx_blocking_source[r]
            # a transceiver's one filter sits at its radio port (see _Ctx.feed)
            at = "filter at transceiver" if sa.site.radios[r].tx is not None else "rx-side filter at"
            remedy = f"{at} {vic}: notch {src}'s band, pass {vic}'s band"
            if excess > 0:
                fd, clash = ctx.feed(
                    r, "rx", lo, hi, excess + ctx.margin, f"{src} fundamental overloads {vic}"
                )
                if fd is None:
                    remedy = _no_stub(
                        f"{vic}'s input", lo, hi, clash,
                        "use cavities or a duplexer, or more antenna separation",
                    )
                else:
                    where = (fd,)
            else:
                remedy = "none needed (" + remedy + " if it were)"
        out.append(
            Threat(
                sources=(src,), victim=vic, mechanism="fundamental", order=1, product=src,
                f_mhz=0.5 * (lo + hi), f_lo_mhz=lo, f_hi_mhz=hi,
                level_dbm=float(level[k]), threshold_dbm=float(thr[k]), threshold_source=tsrc,
                excess_db=excess, required_db=excess + ctx.margin, isolation_db=float(iso[k]),
                isolation_method=ctx.iso_text(t, r, float(f[k]), float(iso[k]), int(meth[k])),
                remedy=remedy, filters=where,
            )
        )  # fmt: skip
    return out


def _harmonics(ctx: _Ctx, tt: np.ndarray, rr: np.ndarray, n_harm: int) -> list[Threat]:
    sa = ctx.sa
    nh = np.arange(2, n_harm + 1, dtype=float)[:, None]
    hlo, hhi = nh * sa.tx_lo[tt][None, :], nh * sa.tx_hi[tt][None, :]
    olo, ohi, hit = products.intersect(hlo, hhi, sa.rx_lo[rr][None, :], sa.rx_hi[rr][None, :])
    hi_idx, pair = np.nonzero(hit)
    if pair.size == 0:
        return []
    t, r = tt[pair], rr[pair]
    n = nh[hi_idx, 0]
    f = olo[hi_idx, pair]
    total, iso, meth = sa.path_db(t, r, f)
    supp = np.array([ctx.supp[int(i)][0] for i in t])
    level = sa.p_dbm[t] - supp - total
    thr = sa.rx_threshold[r]
    out = []
    for k in range(pair.size):
        ti, ri, order = int(t[k]), int(r[k]), int(n[k])
        lo, hi = float(olo[hi_idx[k], pair[k]]), float(ohi[hi_idx[k], pair[k]])
        excess = float(level[k] - thr[k])
        src, vic = ctx.names[ti], ctx.names[ri]
        remedy = (
            f"tx-side filter at {src}: notch its harmonic {order} ({lo:.4f}-{hi:.4f} MHz), "
            f"pass {src}'s fundamental (a harmonic inside {vic}'s band can only be removed "
            "at the transmitter)"
        )
        where: tuple[Any, ...] = ()
        if excess > 0:
            reason = f"{src} harmonic {order} into {vic}"
            fd, clash = ctx.feed(ti, "tx", lo, hi, excess + ctx.margin, reason)
            if fd is None:
                alt = "use a cavity or low-pass filter at the transmitter"
                remedy = _no_stub(f"{src}'s output", lo, hi, clash, alt)
            else:
                where = (fd,)
        else:
            remedy = "none needed (" + remedy + ")"
        out.append(
            Threat(
                sources=(src,), victim=vic, mechanism="harmonic", order=order, product=f"{order}*{src}",
                f_mhz=products.product_centre(order * sa.tx_lo[ti], order * sa.tx_hi[ti], lo, hi),
                f_lo_mhz=lo, f_hi_mhz=hi, level_dbm=float(level[k]), threshold_dbm=float(thr[k]),
                threshold_source=sa.rx_threshold_source[ri], excess_db=excess,
                required_db=excess + ctx.margin, isolation_db=float(iso[k]),
                isolation_method=ctx.iso_text(ti, ri, float(f[k]), float(iso[k]), int(meth[k])),
                remedy=remedy, details=(f"suppression {supp[k]:.1f} dB: {ctx.supp[ti][1]}",),
                filters=where,
            )
        )  # fmt: skip
    return out


def _noise(ctx: _Ctx, tt: np.ndarray, rr: np.ndarray) -> list[Threat]:
    sa = ctx.sa
    radios = sa.site.radios
    has = np.array([_noise_of(radios[int(t)]) is not None for t in tt], dtype=bool)
    if not has.any():
        return []
    t, r = tt[has], rr[has]
    dbc = np.array([_noise_of(radios[int(i)]) for i in t], dtype=float)
    f = sa.rx_lo[r]
    total, iso, meth = sa.path_db(t, r, f)
    level = sa.p_dbm[t] + dbc + 10.0 * np.log10(sa.rx_bandwidth_hz[r]) - total
    thr = sa.rx_floor[r]
    out = []
    for k in range(t.size):
        ti, ri = int(t[k]), int(r[k])
        lo, hi = float(sa.rx_lo[ri]), float(sa.rx_hi[ri])
        excess = float(level[k] - thr[k])
        src, vic = ctx.names[ti], ctx.names[ri]
        remedy = f"tx-side filter at {src}: notch {vic}'s band, pass {src}'s band"
        where: tuple[Any, ...] = ()
        if excess > 0:
            fd, clash = ctx.feed(ti, "tx", lo, hi, excess + ctx.margin, f"{src} noise into {vic}")
            if fd is None:
                remedy = _no_stub(f"{src}'s output", lo, hi, clash,
                                  "use a band-pass cavity at the transmitter, or more separation")
            else:
                where = (fd,)
        else:
            remedy = "none needed (" + remedy + ")"
        out.append(
            Threat(
                sources=(src,), victim=vic, mechanism="noise", order=0, product=f"{src} noise",
                f_mhz=0.5 * (lo + hi), f_lo_mhz=lo, f_hi_mhz=hi, level_dbm=float(level[k]),
                threshold_dbm=float(thr[k]),
                threshold_source=sa.rx_floor_source[ri], excess_db=excess,
                required_db=excess + ctx.margin, isolation_db=float(iso[k]),
                isolation_method=ctx.iso_text(ti, ri, float(f[k]), float(iso[k]), int(meth[k])),
                remedy=remedy, details=(f"transmitter noise {dbc[k]:g} dBc/Hz",), filters=where,
            )
        )  # fmt: skip
    return out
