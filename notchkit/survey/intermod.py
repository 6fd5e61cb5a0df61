"""Intermodulation formed in a transmitter's output stage.

Model (docs/survey.md): transmitter o's carrier reaches transmitter m's output
stage through o's feedline, the antenna isolation o->m and m's feedline; m's
output stage mixes it with its own carrier and re-radiates the product, lower by
a conversion ("turnaround") loss; the product reaches the victim through m's
feedline, the isolation m->victim and the victim's feedline. For a
three-transmitter product the weaker of the two incoming signals is used (an
upper bound). Each transmitter of a combination is tried as the mixer; the
threat's level is the worst route, and every mixer whose route is above
threshold is asked for notches at its output for the other transmitters'
fundamentals.

Enumeration is numpy broadcasting over (combination x coefficient x receiver)
index arrays; Python only builds the result objects.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from notchkit.survey import limits, products
from notchkit.survey.isolation import C0_M_PER_S, ISOLATION_FLOOR_DB
from notchkit.survey.result import Threat


def intermod_threats(ctx, tx: np.ndarray, rx: np.ndarray) -> list[Threat]:
    """Every 2-transmitter 3rd/5th-order and 3-transmitter 3rd-order product in a receiver's band.

    Parameters
    ----------
    ctx : notchkit.survey.core._Ctx
        The survey run (site arrays, margin, notch collection).
    tx, rx : ndarray of int
        Radio indices of the transmitters and receivers.
    """
    sa = ctx.sa
    if tx.size < 2 or rx.size == 0:
        return []
    n = len(sa.names)
    # Carrier of transmitter o arriving at transmitter m's output stage: inc[o, m] (dBm).
    oo, mm = (a.ravel() for a in np.meshgrid(tx, tx, indexing="ij"))
    total, iso_in, meth_in = sa.path_db(oo, mm, sa.tx_lo[oo])
    inc = np.full((n, n), -np.inf)
    inc_iso = np.zeros((n, n))
    inc_meth = np.zeros((n, n), dtype=int)
    inc[oo, mm] = sa.p_dbm[oo] - total
    inc_iso[oo, mm], inc_meth[oo, mm] = iso_in, meth_in
    inc[tx, tx] = -np.inf
    # Notch for o's band at m's output too close to m's own pass bands?
    clash = np.zeros((n, n), dtype=bool)
    for m, o in zip(mm.tolist(), oo.tolist(), strict=True):
        if m != o:
            clash[m, o] = ctx.clash(m, float(sa.tx_lo[o]), float(sa.tx_hi[o])) is not None
    conv = {}
    for order in (3, 5):
        arr = np.zeros(n)
        for i in tx.tolist():
            arr[i] = limits.im_conversion_db(sa.site.radios[i].tx.im_conversion_db, order)[0]
        conv[order] = arr
    state = _State(ctx, inc, inc_iso, inc_meth, clash, conv)
    out: list[Threat] = []
    for coeffs, combos in ((products.TWO_TONE, products.pairs(tx.size)),
                           (products.THREE_TONE, products.triples(tx.size))):  # fmt: skip
        if combos.size == 0:
            continue
        radios_c = tx[combos]  # (n_comb, k) radio indices
        plo, phi = products.combine(coeffs, sa.tx_lo[radios_c], sa.tx_hi[radios_c])
        olo, ohi, hit = products.intersect(
            plo[:, :, None], phi[:, :, None], sa.rx_lo[rx][None, None, :], sa.rx_hi[rx][None, None, :]
        )
        ci, ki, ri = np.nonzero(hit)
        if ci.size:
            # A simplex radio (transmit and receive bands overlap) does not receive while
            # it transmits, so a product that needs its own carrier cannot reach its receiver.
            vic = rx[ri]
            member = (radios_c[ci] == vic[:, None]).any(axis=1)
            with np.errstate(invalid="ignore"):
                simplex = (sa.tx_lo[vic] <= sa.rx_hi[vic]) & (sa.rx_lo[vic] <= sa.tx_hi[vic])
            keep = ~(member & simplex)
            ci, ki, ri = ci[keep], ki[keep], ri[keep]
        if ci.size:
            out += state.threats(
                coeffs, radios_c[ci], ki, rx[ri], plo[ci, ki], phi[ci, ki],
                olo[ci, ki, ri], ohi[ci, ki, ri],
            )  # fmt: skip
    return out


class _State:
    """Per-run caches for the intermod threats."""

    def __init__(self, ctx, inc, inc_iso, inc_meth, clash, conv):
        self.ctx = ctx
        self.inc, self.inc_iso, self.inc_meth = inc, inc_iso, inc_meth
        self.clash = clash
        self.conv = conv
        self.labels: dict[tuple, str] = {}
        self.mixer_text: dict[tuple, str] = {}
        self.incoming: dict[tuple[int, int], str] = {}
        self.conv_text: dict[tuple[int, int], str] = {}
        self.remedies: dict[tuple, tuple[tuple[tuple[str, str], ...], str]] = {}

    def threats(self, coeffs, src, ki, victim, plo, phi, flo, fhi) -> list[Threat]:
        ctx = self.ctx
        sa = ctx.sa
        h, k = src.shape
        order = products.orders(coeffs)[ki]
        thr = sa.rx_threshold[victim]
        route = np.full((h, k), -np.inf)
        formed = np.full((h, k), -np.inf)
        iso_out = np.zeros((h, k))
        meth_out = np.zeros((h, k), dtype=int)
        for p in range(k):  # k is 2 or 3: the mixer's position in the combination
            mixer = src[:, p]
            others = np.delete(src, p, axis=1)
            incoming = self.inc[others, mixer[:, None]].min(axis=1)
            formed[:, p] = incoming - np.where(order == 3, self.conv[3][mixer], self.conv[5][mixer])
            total, iso, meth = sa.path_db(mixer, victim, flo)
            iso_out[:, p], meth_out[:, p] = iso, meth
            route[:, p] = np.where(mixer == victim, -np.inf, formed[:, p] - total)
        best = np.argmax(route, axis=1)
        rows = np.arange(h)
        level = route[rows, best]
        excess_route = route - thr[:, None]
        positive = excess_route > 0
        self._collect_notches(src, victim, coeffs, ki, excess_route, positive)

        names = ctx.names
        margin = ctx.margin
        coef_l = coeffs.tolist()
        src_l, victim_l, best_l, ki_l = src.tolist(), victim.tolist(), best.tolist(), ki.tolist()
        flo_l, fhi_l, thr_l, level_l = flo.tolist(), fhi.tolist(), thr.tolist(), level.tolist()
        order_l, pos_l = order.tolist(), positive.tolist()
        # f_mhz: the product's centre when the whole product lies in the band, else the overlap's
        inside = (flo <= plo) & (phi <= fhi)
        f_l = np.where(inside, 0.5 * (plo + phi), 0.5 * (flo + fhi)).tolist()
        iso_bv, meth_bv = iso_out[rows, best], meth_out[rows, best]
        mixer_v = src[rows, best]
        dist = np.asarray(ctx.d)[mixer_v, victim]
        near = (dist < C0_M_PER_S / (flo * 1e6)).tolist()
        floored = (iso_bv <= ISOLATION_FLOOR_DB).tolist()
        iso_b, meth_b = iso_bv.tolist(), meth_bv.tolist()
        formed_b = formed[rows, best].tolist()
        labels, remedies, mixer_texts = self.labels, self.remedies, self.mixer_text
        iso_cache = ctx._iso_cache
        src_names: dict[tuple[int, ...], tuple[str, ...]] = {}
        th_src = sa.rx_threshold_source
        out: list[Any] = []
        append = out.append
        for j in range(h):
            s = tuple(src_l[j])
            v = victim_l[j]
            m = s[best_l[j]]
            excess = level_l[j] - thr_l[j]
            product = labels.get((k, ki_l[j], s)) or self._label(coef_l[ki_l[j]], ki_l[j], s)
            above = excess > 0
            rem = remedies.get((s, m, above, tuple(pos_l[j]))) or self._remedy(
                s, m, above, tuple(pos_l[j])
            )
            detail = mixer_texts.get((m, s, order_l[j])) or self._mixer_text(
                m, s, order_l[j], formed_b[j]
            )
            iso_text = iso_cache.get((m, v, meth_b[j], floored[j], near[j])) or ctx.iso_text(
                m, v, flo_l[j], iso_b[j], meth_b[j]
            )
            sn = src_names.get(s)
            if sn is None:
                sn = src_names[s] = tuple(names[i] for i in s)
            append(
                Threat(
                    sources=sn, victim=names[v], mechanism="intermod", order=order_l[j],
                    product=product, f_mhz=f_l[j], f_lo_mhz=flo_l[j], f_hi_mhz=fhi_l[j],
                    level_dbm=level_l[j], threshold_dbm=thr_l[j], threshold_source=th_src[v],
                    excess_db=excess, required_db=excess + margin, isolation_db=iso_b[j],
                    isolation_method=iso_text, remedy=rem[1], mixer=names[m],
                    details=(detail,), filters=rem[0],
                )
            )  # fmt: skip
        return out

    def _collect_notches(self, src, victim, coeffs, ki, excess_route, positive) -> None:
        """Worst required depth per (mixer, other) over all products, numpy group-by."""
        ctx = self.ctx
        n = len(ctx.names)
        k = src.shape[1]
        mix, oth, req, row = [], [], [], []
        for p in range(k):
            for q in range(k):
                if p == q:
                    continue
                ok = positive[:, p] & ~self.clash[src[:, p], src[:, q]]
                r = np.nonzero(ok)[0]
                mix.append(src[r, p])
                oth.append(src[r, q])
                req.append(excess_route[r, p] + ctx.margin)
                row.append(r)
        mix_a, oth_a, req_a, row_a = (np.concatenate(x) for x in (mix, oth, req, row))
        if mix_a.size == 0:
            return
        key = mix_a * n + oth_a
        order = np.lexsort((req_a, key))
        key_s = key[order]
        last = np.nonzero(np.r_[key_s[1:] != key_s[:-1], True])[0]
        counts = np.diff(np.r_[-1, last])
        for idx, count in zip(last.tolist(), counts.tolist(), strict=True):
            o_idx = order[idx]
            j = int(row_a[o_idx])
            s = tuple(src[j].tolist())
            label = self._label(coeffs[ki[j]].tolist(), int(ki[j]), s)
            ctx.feed_im(int(mix_a[o_idx]), int(oth_a[o_idx]), float(req_a[o_idx]), label,
                        int(victim[j]), count)  # fmt: skip

    def _label(self, coef: list[int], ki: int, s: tuple[int, ...]) -> str:
        key = (len(s), ki, s)  # the same key the loop in threats() looks up
        text = self.labels.get(key)
        if text is None:
            text = self.labels[key] = products.product_label(coef, [self.ctx.names[i] for i in s])
        return text

    def _remedy(self, s, m, above, pos) -> tuple[tuple[tuple[str, str], ...], str]:
        key = (s, m, above, pos)
        hit = self.remedies.get(key)
        if hit is not None:
            return hit
        names = self.ctx.names
        where = []
        clashes = []
        for p, mix in enumerate(s):
            if not pos[p]:
                continue
            fed = False
            for o in s:
                if o == mix:
                    continue
                if self.clash[mix, o]:
                    clashes.append((mix, o))
                else:
                    fed = True
            if fed:
                where.append((names[mix], "tx"))
        text = (
            f"tx-side filter at {names[m]}: notch the other transmitters' fundamentals "
            f"({', '.join(names[i] for i in s if i != m)}) at its output"
        )
        if not above:
            text = "none needed (" + text + ")"
        elif clashes:
            parts = []
            for mix, o in clashes:
                band = self.ctx.clash(mix, float(self.ctx.sa.tx_lo[o]), float(self.ctx.sa.tx_hi[o]))
                parts.append(
                    f"no stub at {names[mix]} for {names[o]}: {names[o]}'s band lies within a few % "
                    f"of {names[mix]}'s pass band {band[0]:.4f}-{band[1]:.4f} MHz; use a ferrite "
                    "isolator/circulator or cavities at the transmitter, or more antenna separation"
                )
            text = "; ".join(parts) + ("; stubs elsewhere: " + text if where else "")
        hit = self.remedies[key] = (tuple(where), text)
        return hit

    def _mixer_text(self, m: int, s: tuple[int, ...], order: int, formed: float) -> str:
        key = (m, s, order)
        text = self.mixer_text.get(key)
        if text is None:
            parts = [self._incoming_text(o, m) for o in s if o != m]
            conv = self.conv_text.get((m, order))
            if conv is None:
                radio = self.ctx.sa.site.radios[m]
                conv = self.conv_text[(m, order)] = limits.im_conversion_db(
                    radio.tx.im_conversion_db, order
                )[1]
            text = self.mixer_text[key] = (
                f"mixer {self.ctx.names[m]}: incoming " + ", ".join(parts)
                + f"; formed {formed:.1f} dBm; conversion " + conv
            )  # fmt: skip
        return text

    def _incoming_text(self, o: int, m: int) -> str:
        text = self.incoming.get((o, m))
        if text is None:
            ctx = self.ctx
            text = self.incoming[(o, m)] = (
                f"{ctx.names[o]} {float(self.inc[o, m]):.1f} dBm via "
                + ctx.iso_text(o, m, float(ctx.sa.tx_lo[o]), float(self.inc_iso[o, m]),
                               int(self.inc_meth[o, m]))
            )  # fmt: skip
        return text
