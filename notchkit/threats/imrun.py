"""One intermodulation run's state (:func:`notchkit.threats.intermod.intermod_threats`): the
site's carriers, paths, conversion figures and intercepts as arrays, where products land, their
levels by route, the notches they ask for, and their threat objects and texts.
"""

from __future__ import annotations

import numpy as np

from notchkit.threats import levels, products
from notchkit.threats.result import Threat

GRID = 9
"""Frequencies (log-spaced, band edges included) at which each transmitter-to-receiver
path is computed; a product's path is interpolated in log f between them."""

COVER_BINS = 1 << 20
"""Bins of the frequency axis (0 to the highest receiver edge) in the coverage map."""

TX_MODEL = "power law, transmitter conversion: P_M - L_n + sum_i |c_i| (P_i - P_M) + D(c)"
RX_MODEL = "power law, receiver intercept: sum_j |c_j| P_j - (n-1) IIP_n + D(c)"


class _State:
    """Per-run arrays and caches."""

    def __init__(self, ctx, tx: np.ndarray, rx: np.ndarray):
        self.ctx = ctx
        sa = self.sa = ctx.sa
        n = self.n = len(sa.names)
        self.rx = rx
        self._carrier_levels(tx, rx)
        self._clashes(tx, rx)
        self._path_grid(tx, rx)
        self._mixing_figures(tx, rx)
        self._receiver_groups(rx)
        self._coverage(rx)
        self.notch_tx: tuple[np.ndarray, np.ndarray, dict] = (
            np.full((n, n), -np.inf), np.zeros((n, n), dtype=np.int64), {})
        self.notch_rx: tuple[np.ndarray, np.ndarray, dict] = (
            np.full((n, n), -np.inf), np.zeros((n, n), dtype=np.int64), {})
        self.labels: dict[tuple, str] = {}
        self.texts: dict[tuple, str] = {}
        self.remedies: dict[tuple, tuple] = {}

    def _carrier_levels(self, tx: np.ndarray, rx: np.ndarray) -> None:
        """Carrier levels at each mixer's output port (``inc``) and each victim's input (``arr``)."""
        sa, n = self.sa, self.n
        # Carrier o at mixer m's output port: inc[o, m]; at victim v's input: arr[o, v] (dBm).
        oo, mm = (a.ravel() for a in np.meshgrid(tx, tx, indexing="ij"))
        total, iso, meth = sa.path_db(oo, mm, sa.tx_lo[oo], into="tx")
        self.inc = np.full((n, n), -np.inf)
        self.inc_iso = np.zeros((n, n))
        self.inc_meth = np.zeros((n, n), dtype=int)
        self.inc[oo, mm] = sa.p_dbm[oo] - total
        self.inc_iso[oo, mm], self.inc_meth[oo, mm] = iso, meth
        self.inc[tx, tx] = -np.inf
        oo, vv = (a.ravel() for a in np.meshgrid(tx, rx, indexing="ij"))
        total, iso, meth = sa.path_db(oo, vv, sa.tx_lo[oo])
        self.arr = np.full((n, n), -np.inf)
        self.arr_iso = np.zeros((n, n))
        self.arr_meth = np.zeros((n, n), dtype=int)
        # carriers at the victim's first non-linear stage: less its front-end selectivity
        self.arr[oo, vv] = sa.p_dbm[oo] - total - sa.front_end_db(vv, sa.tx_lo[oo], sa.tx_hi[oo])
        self.arr_iso[oo, vv], self.arr_meth[oo, vv] = iso, meth
        both = np.intersect1d(tx, rx)
        self.arr[both, both] = -np.inf  # a transceiver's own carrier: the duplexer's job

    def _clashes(self, tx: np.ndarray, rx: np.ndarray) -> None:
        """Where a notch for a carrier would clash with the pass bands (``clash_tx``, ``clash_rx``)."""
        ctx, sa, n = self.ctx, self.sa, self.n
        # Is a notch for o's band too close to the pass bands at m's output / v's input?
        self.clash_tx = np.zeros((n, n), dtype=bool)
        self.clash_rx = np.zeros((n, n), dtype=bool)
        for m in tx.tolist():
            for o in tx.tolist():
                if m != o:
                    self.clash_tx[m, o] = ctx.clash(m, float(sa.tx_lo[o]), float(sa.tx_hi[o])) is not None
        for v in rx.tolist():
            for o in tx.tolist():
                if v != o:
                    self.clash_rx[v, o] = ctx.clash(v, float(sa.tx_lo[o]), float(sa.tx_hi[o])) is not None

    def _path_grid(self, tx: np.ndarray, rx: np.ndarray) -> None:
        """Path loss mixer -> victim on a log-spaced grid across each receiver's band."""
        sa, n = self.sa, self.n
        # Path mixer -> victim on a log-spaced grid across each receiver's band: products
        # interpolate it (linear in log f, where the isolation formulas are linear).
        self.rx_lo_f = np.where(np.isnan(sa.rx_lo), 1.0, sa.rx_lo)
        ratio = np.where(np.isnan(sa.rx_hi), 1.0, sa.rx_hi) / self.rx_lo_f
        self.log_span = np.log(np.maximum(ratio, 1.0))
        g = np.linspace(0.0, 1.0, GRID)
        mm, vv, gg = (a.ravel() for a in np.meshgrid(tx, rx, np.arange(GRID), indexing="ij"))
        fg = self.rx_lo_f[vv] * np.exp(self.log_span[vv] * g[gg])
        total, _, _ = sa.path_db(mm, vv, fg)
        self.path_grid = np.full(n * n * GRID, np.inf)
        self.path_grid[(mm * n + vv) * GRID + gg] = total

    def _mixing_figures(self, tx: np.ndarray, rx: np.ndarray) -> None:
        """Each mixer's conversion figures and each victim's intercept points, with their sources."""
        sa, n = self.sa, self.n
        radios = sa.site.radios
        # Conversion figures and intercept points.
        self.l3 = np.full(n, np.nan)
        self.step = np.full(n, np.nan)
        self.l3_src: dict[int, str] = {}
        for i in tx.tolist():
            t = radios[i].tx
            given = t.im_conversion_db
            step = getattr(t, "im_order_step_db", None)
            self.l3[i] = levels.DEFAULT_IM_CONVERSION_DB if given is None else given
            self.step[i] = levels.DEFAULT_IM_ORDER_STEP_DB if step is None else step
            self.l3_src[i] = (
                (f"radio's im_conversion_db {given:g} dB" if given is not None
                 else f"default {levels.DEFAULT_IM_CONVERSION_DB:g} dB (common practice)")
                + (f", {step:g} dB per order from 3rd (radio's im_order_step_db)" if step is not None
                   else f", + {levels.DEFAULT_IM_ORDER_STEP_DB:g} dB per order from 3rd (common practice)")
            )  # fmt: skip
        self.iip = np.full((4, n), np.nan)  # row 2: IIP2, row 3: IIP3
        self.iip_src: dict[int, str] = {}
        for v in rx.tolist():
            i2, i3, src = levels.receiver_intercepts(radios[v].rx)
            self.iip[2, v], self.iip[3, v] = i2, i3
            self.iip_src[v] = src

    def _receiver_groups(self, rx: np.ndarray) -> None:
        """Receivers sorted by low edge, in groups of similar width."""
        sa = self.sa
        # Receivers sorted by low edge, in groups of similar width (binary search per group).
        width = sa.rx_hi[rx] - sa.rx_lo[rx]
        cls = np.floor(np.log2(np.maximum(width, 0.05) / 0.05)).astype(int)
        self.groups = []
        for c in np.unique(cls):
            members = rx[cls == c]
            o = np.argsort(sa.rx_lo[members], kind="stable")
            members = members[o]
            w = float((sa.rx_hi[members] - sa.rx_lo[members]).max())
            self.groups.append((members, sa.rx_lo[members], sa.rx_hi[members], w))

    def _coverage(self, rx: np.ndarray) -> None:
        """Which bins of the frequency axis some receiver's band touches (a prefix count)."""
        sa = self.sa
        # Coverage map: bins of the frequency axis that some receiver's band touches, as a
        # prefix count, so a product that lands nowhere is dropped in O(1).
        top = float(sa.rx_hi[rx].max()) * (1.0 + 1e-9) + 1e-9
        self.bin_mhz = top / COVER_BINS
        mark = np.zeros(COVER_BINS + 1, dtype=np.int64)
        b0 = np.minimum((sa.rx_lo[rx] / self.bin_mhz).astype(np.int64), COVER_BINS - 1)
        b1 = np.minimum((sa.rx_hi[rx] / self.bin_mhz).astype(np.int64), COVER_BINS - 1)
        np.add.at(mark, b0, 1)
        np.add.at(mark, b1 + 1, -1)
        covered = np.cumsum(mark[:-1]) > 0
        self.cover = np.concatenate([[0], np.cumsum(covered)]).astype(np.int32)
        with np.errstate(invalid="ignore"):
            self.simplex = (sa.tx_lo <= sa.rx_hi) & (sa.rx_lo <= sa.tx_hi)

    def default_notes(self) -> list[str]:
        names, radios = self.ctx.names, self.sa.site.radios
        out = []
        step = [names[i] for i in range(self.n) if radios[i].tx is not None
                and getattr(radios[i].tx, "im_order_step_db", None) is None]  # fmt: skip
        if step:
            out.append(f"default IM conversion step {levels.DEFAULT_IM_ORDER_STEP_DB:g} dB per order away "
                       "from 3rd (common practice, rough) for: " + ", ".join(step))  # fmt: skip
        by_class: dict[str, list[str]] = {}
        for v in self.rx.tolist():
            r = radios[v].rx
            if r.iip2_dbm is None or r.iip3_dbm is None:
                cls = r.receiver_class or f"{levels.DEFAULT_RECEIVER_CLASS} (default)"
                by_class.setdefault(cls, []).append(names[v])
        for cls, who in by_class.items():
            i2, i3, _ = levels.RECEIVER_CLASSES[cls.split()[0]]
            out.append(f"receiver intercept points of class {cls} (IIP2 {i2:+g}, IIP3 {i3:+g} dBm, "
                       "from memory, see docs/survey.md) for: " + ", ".join(who))  # fmt: skip
        return out

    # ------------------------------------------------------------ enumeration
    def land(self, coeffs: np.ndarray, radios_c: np.ndarray):
        """Products of these combinations that land in some receiver's band.

        Returns (combination row, coefficient index, victim radio, product lo, hi,
        part in the receiver lo, hi), or None.
        """
        sa = self.sa
        lo, hi = sa.tx_lo[radios_c], sa.tx_hi[radios_c]
        nc = coeffs.shape[0]
        # Coarse, in float32: centre +- half-width of each product, widened by a bin each side
        # (float32 error << a bin); does it touch a covered bin? Most products land nowhere.
        c32 = coeffs.T.astype(np.float32)
        mid = np.abs(((lo + hi) * 0.5).astype(np.float32) @ c32).ravel()
        # half-width plus 1e-6 of each term (~16 float32 roundings: a safe bound on the error)
        half = (((hi - lo) * 0.5 + (hi + lo) * 0.5e-6).astype(np.float32) @ np.abs(c32)).ravel()
        inv = np.float32(1.0 / self.bin_mhz)
        cap = np.float32(COVER_BINS + 2)  # clip before the integer cast (no overflow)
        b0 = np.clip(np.minimum((mid - half) * inv, cap).astype(np.int32) - 1, 0, COVER_BINS)
        b1 = np.clip(np.minimum((mid + half) * inv, cap).astype(np.int32) + 1, -1, COVER_BINS - 1)
        near = np.nonzero(self.cover[b1 + 1] > self.cover[np.minimum(b0, b1 + 1)])[0]
        if near.size == 0:
            return None
        # Exact intervals (float64) for those only.
        cn, kn = near // nc, near % nc
        cf = coeffs[kn].astype(float)
        pos, neg = np.maximum(cf, 0.0), np.minimum(cf, 0.0)
        lo_n, hi_n = lo[cn], hi[cn]
        low = (lo_n * pos + hi_n * neg).sum(axis=1)
        high = (hi_n * pos + lo_n * neg).sum(axis=1)
        nlo = np.maximum(np.maximum(low, -high), 0.0)  # as products.combine
        nhi = np.maximum(-low, high)
        got_p, got_v = [], []
        for members, rlo, rhi, w in self.groups:
            a = np.searchsorted(rlo, nlo - w, side="left")
            b = np.searchsorted(rlo, nhi, side="right")
            cnt = b - a
            nz = np.nonzero(cnt)[0]
            if nz.size == 0:
                continue
            c = cnt[nz]
            p = np.repeat(nz, c)
            start = np.repeat(np.cumsum(c) - c, c)
            cand = np.repeat(a[nz], c) + (np.arange(p.size) - start)
            ok = rhi[cand] >= nlo[p]
            got_p.append(p[ok])
            got_v.append(members[cand[ok]])
        if not got_p:
            return None
        p = np.concatenate(got_p)
        vic = np.concatenate(got_v)
        if p.size == 0:
            return None
        ci, ki = cn[p], kn[p]
        # A simplex radio (transmit and receive bands overlap) does not receive while it
        # transmits, so a product that needs its own carrier cannot reach its receiver.
        member = (radios_c[ci] == vic[:, None]).any(axis=1)
        keep = ~(member & self.simplex[vic]) & self.ctx.victims_ok(radios_c[ci], vic)
        if not keep.all():
            ci, ki, vic, p = ci[keep], ki[keep], vic[keep], p[keep]
        if p.size == 0:
            return None
        a_lo, a_hi = nlo[p], nhi[p]
        return ci, ki, vic, a_lo, a_hi, np.maximum(a_lo, sa.rx_lo[vic]), np.minimum(a_hi, sa.rx_hi[vic])

    # ------------------------------------------------------------ levels
    def evaluate(self, coeffs, radios_c, ci, ki, vic, plo, phi, flo, fhi) -> dict:
        """Levels of every route of each hit; collects notches; returns the rows (arrays)."""
        sa = self.sa
        src = radios_c[ci]
        h, k = src.shape
        coef = coeffs[ki]
        absc = np.abs(coef)
        order = absc.sum(axis=1)
        deg = levels.degeneracy_db(coeffs)[ki] if h else np.zeros(0)
        thr = sa.rx_threshold[vic]
        routes = np.full((h, 4), -np.inf)  # columns 0..k-1: mixer position; 3: receiver
        held = np.zeros((h, 4), dtype=bool)  # the route was held at its weakest carrier
        with np.errstate(divide="ignore", invalid="ignore"):
            u = np.log(flo / self.rx_lo_f[vic]) / self.log_span[vic] * (GRID - 1)
        u = np.clip(np.nan_to_num(u, nan=0.0, posinf=0.0), 0.0, GRID - 1.0)
        i0 = np.minimum(u.astype(np.int64), GRID - 2)
        t = u - i0
        base = vic.astype(np.int64) * GRID + i0
        for p in range(k):
            mixer = src[:, p]
            others = np.delete(src, p, axis=1)
            incoming = self.inc[others, mixer[:, None]]
            conv = levels.conversion_db(self.l3[mixer], self.step[mixer], order)
            formed = levels.tx_route_dbm(sa.p_dbm[mixer], incoming, np.delete(absc, p, axis=1), conv, deg)
            held[:, p] = formed >= incoming.min(axis=1)
            at = mixer.astype(np.int64) * (self.n * GRID) + base
            a0 = self.path_grid[at]
            total = a0 + t * (self.path_grid[at + 1] - a0)
            routes[:, p] = np.where(mixer == vic, -np.inf, formed - total)
        rx_ok = (order <= 3) & ~(src == vic[:, None]).any(axis=1)
        if rx_ok.any():
            idx = np.nonzero(rx_ok)[0]
            inp = self.arr[src[idx], vic[idx, None]]
            iip = self.iip[order[idx], vic[idx]]
            routes[idx, 3] = levels.rx_route_dbm(inp, absc[idx], iip, deg[idx])
            held[idx, 3] = routes[idx, 3] >= inp.min(axis=1)
        best = np.argmax(routes, axis=1)
        rows_i = np.arange(h)
        level = routes[rows_i, best]
        excess = level - thr
        self._notches(src, coef, vic, routes - thr[:, None])
        pad = np.full((h, 3), -1, dtype=np.int32)
        pad[:, :k] = src
        cpad = np.zeros((h, 3), dtype=np.int8)
        cpad[:, :k] = coef
        return {
            "src": pad, "coef": cpad, "victim": vic.astype(np.int32), "plo": plo, "phi": phi,
            "flo": flo, "fhi": fhi, "level": level, "excess": excess, "best": best.astype(np.int8),
            "routes": routes, "held": held[np.arange(h), best],
        }  # fmt: skip

    def worst(self, rows: dict, worst: np.ndarray) -> None:
        """Fold every hit's excess into the worst per (transmitter, receiver), an n x n array."""
        src, vic, ex = rows["src"], rows["victim"], rows["excess"]
        for q in range(3):
            s = src[:, q]
            ok = s >= 0
            np.maximum.at(worst, (s[ok], vic[ok]), ex[ok])

    # ------------------------------------------------------------ notches
    def _notches(self, src, coef, vic, ex_routes) -> None:
        """Per route above the limit: notches on the other carriers, (excess + margin) / S each."""
        margin = self.ctx.margin
        h, k = src.shape
        absc = np.abs(coef)
        rows_all = np.arange(h)
        for p in range(k):
            pos = ex_routes[:, p] > 0
            if not pos.any():
                continue
            r = rows_all[pos]
            mixer = src[r, p]
            notchable = np.zeros((r.size, k), dtype=bool)
            for q in range(k):
                if q != p:
                    notchable[:, q] = ~self.clash_tx[mixer, src[r, q]]
            s = (absc[r] * notchable).sum(axis=1)
            req = (ex_routes[r, p] + margin) / np.maximum(s, 1)
            for q in range(k):
                ok = notchable[:, q]
                self._group(self.notch_tx, mixer[ok], src[r[ok], q], req[ok], r[ok], src, coef, vic)
        pos = ex_routes[:, 3] > 0
        if pos.any():
            r = rows_all[pos]
            v = vic[r]
            notchable = ~self.clash_rx[v[:, None], src[r]]
            s = (absc[r] * notchable).sum(axis=1)
            req = (ex_routes[r, 3] + margin) / np.maximum(s, 1)
            for q in range(k):
                ok = notchable[:, q]
                self._group(self.notch_rx, v[ok], src[r[ok], q], req[ok], r[ok], src, coef, vic)

    def _group(self, store, at, other, req, row, src, coef, vic) -> None:
        """Worst requirement and count per (location radio, carrier), dense n x n arrays."""
        if at.size == 0:
            return
        best, count, info = store
        n = self.n
        key = at.astype(np.int64) * n + other
        top = np.full(n * n, -np.inf)
        np.maximum.at(top, key, req)
        count += np.bincount(key, minlength=n * n).reshape(n, n)
        flat = best.reshape(-1)
        better = top > flat
        if not better.any():
            return
        hit = better[key] & (req == top[key])
        keys, first = np.unique(key[hit], return_index=True)
        rows_hit = row[hit][first]
        flat[keys] = top[keys]
        for kk, j in zip(keys.tolist(), rows_hit.tolist(), strict=True):
            info[kk] = (tuple(src[j].tolist()), tuple(coef[j].tolist()), int(vic[j]))

    def flush_notches(self) -> None:
        ctx, sa, names, n = self.ctx, self.sa, self.ctx.names, self.n
        best, count, info = self.notch_tx
        for kk, (s, c, v) in sorted(info.items()):
            m, o = divmod(kk, n)
            ctx.feed_im(m, o, float(best[m, o]), self._label(s, c), v, int(count[m, o]))
        best, count, info = self.notch_rx
        for kk, (s, c, _) in sorted(info.items()):
            v, o = divmod(kk, n)
            more = f" and {int(count[v, o]) - 1} more" if count[v, o] > 1 else ""
            reason = f"{names[o]} mixing in {names[v]}'s front end: IM {self._label(s, c)}{more}"
            ctx.feed(v, "rx", float(sa.tx_lo[o]), float(sa.tx_hi[o]), float(best[v, o]), reason)

    # ------------------------------------------------------------ objects
    def _label(self, s: tuple, c: tuple) -> str:
        """The product as text, signed so that it is positive at the band centres."""
        key = (s, c)
        text = self.labels.get(key)
        if text is None:
            sa = self.sa
            centre = sum(ci * 0.5 * (sa.tx_lo[i] + sa.tx_hi[i]) for i, ci in zip(s, c, strict=True) if i >= 0)
            sign = -1 if centre < 0 else 1
            pairs = [(sign * ci, self.ctx.names[i]) for i, ci in zip(s, c, strict=True) if i >= 0]
            text = self.labels[key] = products.product_label([a for a, _ in pairs], [b for _, b in pairs])
        return text

    def threats(self, rows: dict | None) -> list[Threat]:
        if rows is None or rows["level"].size == 0:
            return []
        ctx, sa = self.ctx, self.sa
        names, margin = ctx.names, ctx.margin
        h = rows["level"].size
        src_l = rows["src"].tolist()
        coef_l = rows["coef"].tolist()
        vic_l = rows["victim"].tolist()
        best_l = rows["best"].tolist()
        routes = rows["routes"]
        thr = sa.rx_threshold[rows["victim"]]
        pos_l = (routes > thr[:, None]).tolist()
        flo, fhi, plo, phi = rows["flo"], rows["fhi"], rows["plo"], rows["phi"]
        inside = (flo <= plo) & (phi <= fhi)
        f_l = np.where(inside, 0.5 * (plo + phi), 0.5 * (flo + fhi)).tolist()
        flo_l, fhi_l = flo.tolist(), fhi.tolist()
        level_l, thr_l = rows["level"].tolist(), thr.tolist()
        # isolation of the worst route, computed exactly for the kept rows only
        src_a, best_a, vic_a = rows["src"], rows["best"].astype(np.int64), rows["victim"].astype(np.int64)
        tx_b = best_a < 3
        arriving = np.where(src_a >= 0, self.arr[np.maximum(src_a, 0), vic_a[:, None]], -np.inf)
        strongest = np.argmax(arriving, axis=1)
        frm = np.where(tx_b, src_a[np.arange(h), np.minimum(best_a, 2)], src_a[np.arange(h), strongest])
        f_iso = np.where(tx_b, flo, sa.tx_lo[frm])
        _, iso_a, meth_a = sa.path_db(frm, vic_a, f_iso)
        iso_l, meth_l = iso_a.tolist(), meth_a.tolist()
        frm_l, f_iso_l = frm.tolist(), f_iso.tolist()
        routes_l = routes.tolist()
        held_l = rows["held"].tolist()
        out = []
        for j in range(h):
            s = tuple(x for x in src_l[j] if x >= 0)
            c = tuple(coef_l[j][: len(s)])
            v = vic_l[j]
            b = best_l[j]
            order = sum(abs(x) for x in c)
            excess = level_l[j] - thr_l[j]
            label = self._label(tuple(src_l[j]), tuple(coef_l[j]))
            pos = tuple(pos_l[j][: len(s)]) + (pos_l[j][3],)
            where, remedy = self._remedy(s, v, b, excess > 0, pos)
            rx_route = b == 3
            m = None if rx_route else s[b]
            iso_text = ctx.iso_text(frm_l[j], v, f_iso_l[j], iso_l[j], meth_l[j])
            details: tuple[str, ...] = (self._route_text(s, c, v, b, order),
                                        self._routes_line(s, routes_l[j]))
            if held_l[j]:
                details += (levels.CLAMP_NOTE,)
            out.append(
                Threat(
                    sources=tuple(names[i] for i in s), victim=names[v], mechanism="intermod",
                    order=order, product=label, f_mhz=f_l[j], f_lo_mhz=flo_l[j], f_hi_mhz=fhi_l[j],
                    level_dbm=level_l[j], threshold_dbm=thr_l[j],
                    threshold_source=sa.rx_threshold_source[v], excess_db=excess,
                    required_db=excess + margin, isolation_db=iso_l[j], isolation_method=iso_text,
                    remedy=remedy, mixer=None if m is None else names[m], details=details,
                    filters=where, route="receiver" if rx_route else "transmitter",
                    level_model=RX_MODEL if rx_route else TX_MODEL,
                )
            )  # fmt: skip
        return out

    def _routes_line(self, s, route_levels) -> str:
        names = self.ctx.names
        parts = [
            f"formed in {names[m]}'s output stage {route_levels[p]:.1f} dBm"
            for p, m in enumerate(s) if np.isfinite(route_levels[p])
        ]  # fmt: skip
        if np.isfinite(route_levels[3]):
            parts.append(f"formed in the receiver {route_levels[3]:.1f} dBm")
        return "routes: " + "; ".join(parts) if parts else "routes: none"

    def _route_text(self, s, c, v, b, order) -> str:
        key = (s, c, v, b)
        text = self.texts.get(key)
        if text is not None:
            return text
        names, sa = self.ctx.names, self.sa
        if b == 3:
            ins = ", ".join(
                f"{names[o]} {self.arr[o, v]:.1f} dBm (x{abs(ci)}) via "
                + self.ctx.iso_text(o, v, float(sa.tx_lo[o]), float(self.arr_iso[o, v]),
                                    int(self.arr_meth[o, v]))
                for o, ci in zip(s, c, strict=True)
            )  # fmt: skip
            text = (
                f"receiver {names[v]}'s front end: inputs {ins}; IIP{order} "
                f"{self.iip[order, v]:g} dBm: {self.iip_src[v]}"
            )
        else:
            m = s[b]
            parts = [
                f"{names[o]} {self.inc[o, m]:.1f} dBm (x{abs(ci)}) via "
                + self.ctx.iso_text(o, m, float(sa.tx_lo[o]), float(self.inc_iso[o, m]),
                                    int(self.inc_meth[o, m]))
                for o, ci in zip(s, c, strict=True) if o != m
            ]  # fmt: skip
            conv = float(levels.conversion_db(self.l3[m], self.step[m], order))
            text = (
                f"mixer {names[m]} ({sa.p_dbm[m]:.1f} dBm carrier, x{abs(c[b])}): incoming "
                + ", ".join(parts)
                + f"; conversion L{order} {conv:g} dB: {self.l3_src[m]}"
            )
        self.texts[key] = text
        return text

    def _remedy(self, s, v, b, above, pos) -> tuple[tuple[tuple[str, str], ...], str]:
        key = (s, v, b, above, pos)
        hit = self.remedies.get(key)
        if hit is not None:
            return hit
        names = self.ctx.names
        radios = self.sa.site.radios
        where: list[tuple[str, str]] = []
        clashes = []
        for p, mix in enumerate(s):
            if not pos[p]:
                continue
            fed = False
            for o in s:
                if o == mix:
                    continue
                if self.clash_tx[mix, o]:
                    clashes.append(f"no stub at {names[mix]} for {names[o]} (bands within a few %)")
                else:
                    fed = True
            if fed:
                where.append((names[mix], "tx"))
        if pos[-1]:
            side = "tx" if radios[v].tx is not None else "rx"
            if any(not self.clash_rx[v, o] for o in s):
                where.append((names[v], side))
            clashes += [f"no stub at {names[v]}'s input for {names[o]} (bands within a few %)"
                        for o in s if self.clash_rx[v, o]]  # fmt: skip
        if b == 3:
            text = (f"rx-side filter at {names[v]}: notch the carriers mixing in its front end "
                    f"({', '.join(names[i] for i in s)})")  # fmt: skip
        else:
            m = s[b]
            text = (f"tx-side filter at {names[m]}: notch the other transmitters' fundamentals "
                    f"({', '.join(names[i] for i in s if i != m)}) at its output")  # fmt: skip
        if not above:
            text = "none needed (" + text + ")"
        elif clashes and not where:
            text = ("no stub: " + "; ".join(clashes) + "; use a ferrite isolator/circulator or "
                    "cavities, or more antenna separation")  # fmt: skip
        elif clashes:
            text += "; " + "; ".join(clashes)
        hit = self.remedies[key] = (tuple(dict.fromkeys(where)), text)
        return hit
