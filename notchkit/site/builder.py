"""The builder of the frozen :class:`~notchkit.site.model.Site` from the walked sections.

:class:`Builder` takes what the reader (:class:`notchkit.site.reader.Reader`)
accepted key by key and checks what only the whole file can say: one of
freq_mhz / band_mhz, unique radio names, paired tx/rx choices, the size caps
(:data:`MAX_RADIOS`, :data:`MAX_TRANSMITTERS`, :data:`MAX_IM_TRIPLES`), installed
filters (a measured .s2p is read here), the connection hardware and a radio's
load file; the lookups across sections are in :mod:`notchkit.site.crossref`.
"""

from __future__ import annotations

import os
from typing import Any

import numpy as np
import yaml

from notchkit.site import model as m
from notchkit.site.crossref import CrossRefs, _opt, _val
from notchkit.site.reader import Reader, _join
from notchkit.site.sections import SECTIONS

MAX_RADIOS = 256
"""Most radios (transmitters, receivers and transceivers together) in one site file."""
MAX_TRANSMITTERS = 229
"""Most transmitting radios: C(229, 3) = 1 975 354 three-transmitter combinations, the
largest count within :data:`MAX_IM_TRIPLES`."""
MAX_IM_TRIPLES = 2_000_000
"""Most three-transmitter intermodulation combinations the survey enumerates; checked
here, before any enumeration, so a huge site is one clear line, not a huge allocation."""

_TX_KEYS = ("bandwidth_khz", "harmonic_suppression_dbc", "noise_dbc_hz", "im_conversion_db",
            "im_order_step_db")  # fmt: skip
_RX_KEYS = (
    "bandwidth_khz", "sensitivity_dbm", "blocking_dbm", "noise_figure_db", "iip2_dbm", "iip3_dbm",
    "receiver_class", "selectivity", "band_noise_dbm",
)  # fmt: skip


class Builder(CrossRefs):
    """Turns the walked sections into value objects and checks what crosses sections
    (unique radio names, known cables, couplings between existing radios)."""

    def __init__(self, reader: Reader):
        self.r = reader
        self.names: dict[str, yaml.Node] = {}
        self.known: dict[str, str] = {}

    def freq(self, d: dict, node: yaml.Node, path: str) -> tuple[tuple[m.Band, ...] | None, bool]:
        """The bands (one per operating choice) from freq_mhz / band_mhz and whether
        either key was given.

        The bands are ``None`` when neither is given or the value was bad (reported).
        """
        has_f, has_b = "freq_mhz" in d, "band_mhz" in d
        if has_f and has_b:
            self.r.add(
                d["band_mhz"][1], _join(path, "band_mhz"), "give freq_mhz or band_mhz, not both"
            )
            return None, True
        if has_f:
            return d["freq_mhz"][0], True
        if has_b:
            return d["band_mhz"][0], True
        return None, self._bad_key(node, ("freq_mhz", "band_mhz"))

    def analyser_range(self, top: dict) -> None:
        """The analyser's range must be a range: ``analyser_lo_mhz < analyser_hi_mhz``."""
        if "allowances" not in top or not isinstance(top["allowances"][0], dict):
            return
        a = top["allowances"][0]
        lo = _val(a, "analyser_lo_mhz", m.DEFAULT_ANALYSER_MHZ[0])
        hi = _val(a, "analyser_hi_mhz", m.DEFAULT_ANALYSER_MHZ[1])
        if isinstance(lo, int | float) and isinstance(hi, int | float) and not lo < hi:
            key = "analyser_hi_mhz" if "analyser_hi_mhz" in a else "analyser_lo_mhz"
            self.r.add(a[key][1], _join("allowances", key),
                       f"analyser range {lo:g}-{hi:g} MHz is empty (allowed: analyser_lo_mhz below "
                       f"analyser_hi_mhz)")

    def missing_freq(self, node: yaml.Node, path: str, where: str = "") -> None:
        self.r.add(
            node,
            _join(path, "freq_mhz"),
            "missing (required: freq_mhz in MHz, or band_mhz: [lo, hi] for a radio that "
            f"tunes across a band{where})",
        )

    @staticmethod
    def _bad_key(node: yaml.Node, keys: tuple[str, ...]) -> bool:
        """True when one of ``keys`` is present but its value was bad (already reported)."""
        if not isinstance(node, yaml.MappingNode):
            return False
        return any(isinstance(k, yaml.ScalarNode) and k.value in keys for k, _ in node.value)

    def name(self, d: dict, path: str) -> str | None:
        if "name" not in d:
            return None
        name, node = d["name"]
        key = name.lower()
        if key in self.names:
            first = self.names[key]
            self.r.add(
                node,
                _join(path, "name"),
                f"duplicate radio name {name!r} (first at line {first.start_mark.line + 1}; "
                "names must differ, ignoring case, across transmitters, receivers and transceivers)",
            )
            return None
        self.names[key] = node
        return name

    def common(self, d: dict, site_cable: str, path: str = "") -> dict[str, Any]:
        out: dict[str, Any] = {}
        if "antenna" in d:
            out["antenna"] = m.Antenna(**_opt(d["antenna"][0], tuple(SECTIONS["antenna"])))
        if "installed" in d:
            out["installed"] = self.installed(d["installed"][0])
        if "feedline" in d:
            fd = d["feedline"][0]
            if "length_m" in fd:
                out["feedline"] = m.Feedline(
                    cable=_val(fd, "cable", site_cable), length_m=fd["length_m"][0]
                )
        if "stub_cable" in d:
            out["stub_cable"] = d["stub_cable"][0]
        if "load" in d and isinstance(d["load"][0], dict):
            out["load"] = self.load(d["load"][0], _join(path, "load"))
        return out

    def load(self, d: dict, path: str) -> m.RadioLoad:
        """A radio's ``load:``; its file is read here (notchkit.loads), so a file ``check``
        accepts is never refused later by ``design`` or ``plan``."""
        opts = _opt(d, ("file", "swr", "radio_ohm"))
        if isinstance(opts.get("file"), str):
            from notchkit.errors import InputError
            from notchkit.loads import read_load

            opts["file"] = os.path.join(os.path.dirname(self.r.path), opts["file"])
            try:
                read_load(opts["file"])
            except InputError as exc:
                self.r.add(d["file"][1], _join(path, "file"), str(exc).replace(": load: ", ": ", 1))
        return m.RadioLoad(**opts)

    def transmit(self, d: dict, bands, shared_bw: float | None) -> m.Transmit | None:
        if bands is None or "power_w" not in d:
            return None
        extra = _opt(d, _TX_KEYS)
        if shared_bw is not None:
            extra.setdefault("bandwidth_khz", shared_bw)
        more = {"bands": bands} if len(bands) > 1 else {}
        return m.Transmit(band=bands[0], power_w=d["power_w"][0], **more, **extra)

    def receive(self, d: dict, bands, shared_bw: float | None, path: str = "") -> m.Receive | None:
        if bands is None:
            return None
        extra = _opt(d, _RX_KEYS)
        if shared_bw is not None:
            extra.setdefault("bandwidth_khz", shared_bw)
        more = {"bands": bands} if len(bands) > 1 else {}
        return m.Receive(band=bands[0], **more, **extra)

    def check_rx(self, d: dict, path: str) -> None:
        """A flat blocking level and a blocking-by-offset table are not given together (a
        class's table gives way to a stated blocking_dbm)."""
        for other in ("selectivity",):
            if other in d and "blocking_dbm" in d:
                self.r.add(
                    d["blocking_dbm"][1], _join(path, "blocking_dbm"),
                    f"give {other} or blocking_dbm, not both (allowed: one; {other} gives the "
                    "blocking level by offset)",
                )  # fmt: skip

    def check_choices(self, tx: m.Transmit | None, rx: m.Receive | None, node, path: str) -> bool:
        """tx and rx lists of bands or channels pair up by position: same length, or one has one."""
        if tx is None or rx is None:
            return True
        nt, nr = len(tx.choices), len(rx.choices)
        if nt > 1 and nr > 1 and nt != nr:
            self.r.add(
                node, path,
                f"tx works {nt} bands or channels and rx {nr} (allowed: the same number, paired "
                "in order, or one of them a single band)",
            )  # fmt: skip
            return False
        return True

    def radio(self, kind: str, d: dict, node: yaml.Node, path: str, site_cable: str) -> m.Radio | None:
        name = self.name(d, path)
        tx = rx = None
        if kind == "receivers":
            self.check_rx(d, path)
        elif kind == "transceivers" and "rx" in d:
            self.check_rx(d["rx"][0], _join(path, "rx"))
        if kind != "transceivers":
            band, given = self.freq(d, node, path)
            if not given:
                self.missing_freq(node, path)
            if kind == "transmitters":
                tx = self.transmit(d, band, None)
                ok = tx is not None
            else:
                rx = self.receive(d, band, None, path)
                ok = rx is not None
        else:
            shared, shared_given = self.freq(d, node, path)
            shared_bw = _val(d, "bandwidth_khz")
            where = " here or on the transceiver"
            parts: dict[str, tuple[m.Band, ...] | None] = {}
            for part in ("tx", "rx"):
                ppath = _join(path, part)
                if part in d:
                    pd, pnode = d[part]
                    band, given = self.freq(pd, pnode, ppath)
                    if not given:
                        if shared_given:
                            band = shared
                        else:
                            self.missing_freq(pnode, ppath, where)
                    parts[part] = band
                elif part == "rx" and not self._bad_key(node, ("rx",)):
                    if shared_given:
                        parts["rx"] = shared
                    else:
                        self.r.add(
                            node,
                            ppath,
                            "missing (required: an rx part with freq_mhz or band_mhz, or "
                            "freq_mhz on the transceiver shared by tx and rx)",
                        )
            if "tx" in d:
                tx = self.transmit(d["tx"][0], parts.get("tx"), shared_bw)
            rx_d = d["rx"][0] if "rx" in d else {}
            rx = self.receive(rx_d, parts.get("rx"), shared_bw, _join(path, "rx"))
            ok = tx is not None and rx is not None and self.check_choices(tx, rx, node, path)
        if name is None or not ok:
            return None
        return m.Radio(name=name, tx=tx, rx=rx, **self.common(d, site_cable, path))

    def radios(self, root: yaml.Node, top: dict, site_cable: str) -> list[m.Radio]:
        """Every radio under transmitters:, receivers: and transceivers:, in file order, within
        :data:`MAX_RADIOS` radios and :data:`MAX_IM_TRIPLES` three-transmitter combinations."""
        r = self.r
        radios: list[m.Radio] = []
        n_entries = 0
        n_tx = 0
        too_many_tx = False
        lists_ok = True
        for knode, _ in root.value:
            key = getattr(knode, "value", None)
            if key not in ("transmitters", "receivers", "transceivers"):
                continue
            if key not in top:
                lists_ok = False
                continue
            for d, node, path in top[key][0]:
                n_entries += 1
                if n_entries == MAX_RADIOS + 1:
                    r.add(node, path, f"more than {MAX_RADIOS} radios in one site (allowed: at most "
                          f"{MAX_RADIOS} transmitters, receivers and transceivers together; split the "
                          "site into groups that share no antenna space)")
                radio = self.radio(key, d, node, path, site_cable)
                if radio is not None:
                    radios.append(radio)
                    if radio.tx is not None:
                        n_tx += len(radio.tx.choices)  # each band worked is enumerated on its own
                        if n_tx >= 3 and n_tx * (n_tx - 1) * (n_tx - 2) // 6 > MAX_IM_TRIPLES \
                                and not too_many_tx:
                            too_many_tx = True
                            r.add(node, path, f"{n_tx} transmitters make "
                                  f"{n_tx * (n_tx - 1) * (n_tx - 2) // 6} three-transmitter "
                                  f"intermodulation combinations (allowed: at most {MAX_IM_TRIPLES}, "
                                  f"{MAX_TRANSMITTERS} transmitters)")
        if n_entries == 0 and lists_ok:
            r.add(
                root,
                "",
                "no radios (allowed: at least one entry under transmitters, receivers or "
                "transceivers)",
            )
        return radios

    def build(self, root: yaml.Node) -> m.Site | None:
        """The site, or ``None`` when any problem was reported."""
        r = self.r
        top = r.section(root, "site", "")
        if top is None:
            return None
        site_cable = _val(top, "cable", m.DEFAULT_CABLE)
        radios = self.radios(root, top, site_cable)
        cables = self.cables(top)
        self.resolve_cables()
        couplings = self.couplings(top)
        self.analyser_range(top)
        self.derived(top, radios, site_cable)
        scenarios = self.scenarios(top)
        hardware = self.hardware(top)
        if r.problems or "site" not in top:
            return None
        return m.Site(
            name=top["site"][0],
            cable=self.canon(site_cable),
            radios=tuple(self.canon_radio(x) for x in radios),
            couplings=couplings,
            cables=cables,
            path=r.path,
            scenarios=scenarios,
            **_opt(top, ("near_field_isolation_db",)),
            **self.site_options(top),
            **hardware,
        )

    @staticmethod
    def site_options(top: dict) -> dict[str, Any]:
        """The optional top-level sections the file gives (the model's defaults otherwise)."""
        out: dict[str, Any] = {}
        if "limits" in top:
            out["limits"] = m.Limits(**_opt(top["limits"][0], tuple(SECTIONS["limits"])))
        if "allowances" in top:
            out["allowances"] = m.Allowances(**_opt(top["allowances"][0], tuple(SECTIONS["allowances"])))
        for key in ("max_harmonic", "max_im_order"):
            if key in top:
                out[key] = top[key][0]
        return out

    # -- installed filters and scenarios -----------------------------------

    def installed(self, entries) -> tuple[m.InstalledFilter, ...]:
        out = []
        for fd, fnode, fpath in entries:
            has_t, has_r = "touchstone" in fd, "rejection" in fd
            if has_t == has_r:
                self.r.add(fnode, _join(fpath, "rejection"), "give rejection or touchstone, "
                           + ("not both" if has_t else "one of them") + " (allowed: a table of "
                           "[freq_mhz, rejection_db] rows, or a measured .s2p file)")  # fmt: skip
                continue
            if "name" not in fd:
                continue
            if has_r:
                table = fd["rejection"][0]
            else:
                ts_name, ts_node = fd["touchstone"]
                table = self.touchstone(ts_name, ts_node, _join(fpath, "touchstone"))
            if table is None:
                continue
            out.append(
                m.InstalledFilter(
                    name=fd["name"][0], rejection=table,
                    touchstone=_val(fd, "touchstone"),
                    for_band=_val(fd, "for_band_mhz"),
                    **_opt(fd, ("port", "kind")),
                )
            )  # fmt: skip
        return tuple(out)

    def touchstone(self, name: str, node: yaml.Node, path: str) -> tuple[tuple[float, float], ...] | None:
        """A measured two-port's rejection -20 log10 |S21| as (freq_mhz, dB) rows.

        Read like every measurement (:func:`notchkit.bounded.read_measurement_bytes`: a
        regular file within the byte and point caps), then parsed by scikit-rf
        (:func:`notchkit.bounded.parse_touchstone`).
        """
        from notchkit.bounded import TouchstoneRefused, parse_touchstone, read_measurement_bytes
        from notchkit.errors import MeasurementError

        full = os.path.join(os.path.dirname(self.r.path), name)
        if not name.lower().endswith(".s2p"):
            self.r.add(node, path, f"{name!r} is not a .s2p file (allowed: a two-port Touchstone "
                       "file measured on the filter)")  # fmt: skip
            return None
        if not os.path.isfile(full):
            self.r.add(node, path, f"no file {full!r} (allowed: a .s2p path from the site file's folder)")
            return None
        try:
            data = read_measurement_bytes(full)
        except MeasurementError as exc:
            self.r.add(node, path, f"{str(exc).split(': ', 1)[-1]} (allowed: a measured two-port .s2p)")
            return None
        try:
            ntw = parse_touchstone(data, os.path.basename(full))
        except TouchstoneRefused as exc:
            self.r.add(node, path, f"{name!r} could not be read as Touchstone ({exc.detail}) "
                       "(allowed: a two-port .s2p file)")  # fmt: skip
            return None
        f_mhz = ntw.f / 1e6
        mag = np.abs(ntw.s[:, 1, 0])
        ok = (f_mhz > 0) & np.isfinite(mag) & (mag > 0)
        if ok.sum() < 2 or np.any(np.diff(f_mhz[ok]) <= 0):
            self.r.add(node, path, f"{name!r} has fewer than two usable rising frequency points "
                       "(allowed: a measured sweep)")  # fmt: skip
            return None
        rej = np.maximum(-20.0 * np.log10(mag[ok]), 0.0)
        return tuple(zip(f_mhz[ok].tolist(), rej.tolist(), strict=True))

    def hardware(self, top: dict) -> dict[str, Any]:
        """``hardware:`` and ``depth_ceiling_db`` (notchkit.hardware), checked here."""
        out: dict[str, Any] = {}
        if "depth_ceiling_db" in top:
            out["depth_ceiling_db"] = top["depth_ceiling_db"][0]
        if "hardware" in top and isinstance(top["hardware"][0], dict):
            from notchkit.hardware import FAMILIES

            d = top["hardware"][0]
            opts = _opt(d, tuple(SECTIONS["hardware"]))
            families = (*FAMILIES, m.IDEAL_HARDWARE)
            for key, allowed in (("family", families), ("line_model", ("classic", "rlgc"))):
                if key in opts:
                    opts[key] = str(opts[key]).lower()
                    if opts[key] not in allowed:
                        self.r.add(d[key][1], f"hardware.{key}",
                                   f"{opts[key]!r} is not known (allowed: {', '.join(allowed)})")
            out["hardware"] = m.HardwareSettings(**opts)
        return out
