"""`notchkit check SITE.yaml`: read a site file and print what it describes.

Every problem in the file is printed on stderr, one line each
(``FILE:LINE:COL: field.path: what is wrong (what is allowed)``), and the exit
code is 2; a clean file prints a summary and exits 0. Nothing is written.
"""

from __future__ import annotations

import argparse

from notchkit.errors import EXIT_OK
from notchkit.jsonvalues import dumps
from notchkit.site.checked import check_site, site_check
from notchkit.site.model import Site


def add_parser(sub) -> None:
    p = sub.add_parser(
        "check",
        help="read a site file and report every problem in it",
        description="Read a site file, report every problem (FILE:LINE:COL: field: what is wrong), "
        "or print a summary of the site. Exit 0 when clean, 2 on any problem.",
    )
    p.add_argument("site", metavar="SITE.yaml", help="the site file to check")
    p.add_argument("--json", action="store_true",
                   help="print the summary as JSON (problems stay lines on stderr, exit 2)")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    result = check_site(args.site)
    if args.json:
        print(dumps(result.to_json(), indent=2))
    else:
        print(format_site(result.site))
    return EXIT_OK


def _table(header: tuple[str, ...], rows: list[tuple[str, ...]]) -> list[str]:
    widths = [max(len(row[i]) for row in [header, *rows]) for i in range(len(header))]
    out = []
    for row in [header, *rows]:
        out.append("  " + "  ".join(cell.ljust(w) for cell, w in zip(row, widths, strict=True)).rstrip())
    return out


def format_site(site: Site) -> str:
    """The human-readable summary that ``notchkit check`` prints."""
    lines = [f"Site: {site.name}", f"File: {site.path}", f"Default cable: {site.cable}", ""]
    checked = site_check(site)
    rows: list[tuple[str, ...]] = []
    for r in checked.radios:
        x, y, h = r.antenna_m
        feed = f"{r.feedline[0]}, {r.feedline[1]:.1f} m" if r.feedline else "-"
        rows.append((r.name, r.role, r.mhz, f"{r.power_w:g}" if r.power_w is not None else "-",
                     f"{x:.1f}, {y:.1f}, {h:.1f}", f"{r.gain_dbi:g}", feed, r.stub_cable))
    lines.append(f"Radios ({len(site.radios)}):")
    lines += _table(
        ("name", "role", "MHz", "power W", "antenna x, y, height m", "gain dBi", "feedline", "stubs"),
        rows,
    )
    lines.append("")
    if site.couplings:
        lines.append(f"Measured couplings ({len(site.couplings)}):")
        lines += _table(
            ("between", "isolation dB", "at MHz"),
            [
                (
                    f"{c.a} - {c.b}",
                    f"{c.isolation_db:g}",
                    f"{c.freq_mhz:g}" if c.freq_mhz is not None else "-",
                )
                for c in site.couplings
            ],
        )
    else:
        lines.append("Measured couplings: none (isolation will be estimated from antenna positions)")
    if site.cables:
        lines.append("")
        lines.append(f"Cables defined in the file ({len(site.cables)}):")
        lines += _table(
            ("name", "Z0 ohm", "VF", "loss points"),
            [
                (c.name, f"{c.z0_ohm:g}", f"{c.velocity_factor:g}", str(len(c.loss_table)))
                for c in site.cables
            ],
        )
    lim, al = site.limits, site.allowances
    total = f"{lim.max_total_cable_m:g} m" if lim.max_total_cable_m is not None else "no limit"
    lines += [
        "",
        f"Limits: pass-band insertion loss <= {lim.max_insertion_loss_db:g} dB, SWR <= "
        f"{lim.max_swr:g}, rejection margin {lim.rejection_margin_db:g} dB, at most "
        f"{lim.max_stubs} stubs, total cable {total}",
        f"Allowances: tee {al.tee_allowance_m * 1000:g} mm, trim margin {al.trim_margin_pct:g} %, "
        f"cut tolerance {al.cut_tolerance_mm:g} mm",
        f"Harmonics considered up to order {site.max_harmonic}",
        *_hardware_lines(site),
        "",
        *checked.cautions,
        *([""] if checked.cautions else []),
        f"OK: {len(site.radios)} radios, no problems found",
    ]
    return "\n".join(lines)


def _hardware_lines(site) -> list[str]:
    """The connection hardware, the antenna loads and the depth ceiling (docs/hardware.md)."""
    from notchkit.hardware import DEFAULT_DEPTH_CEILING_DB, DEFAULT_OUT_OF_BAND_SWR, hardware_of

    hw = hardware_of(getattr(site, "hardware", None))
    ceiling = getattr(site, "depth_ceiling_db", None) or DEFAULT_DEPTH_CEILING_DB
    out = []
    if hw is None:
        out.append("Hardware: ideal tees with the tee allowance (hardware: {family: ideal})")
    else:
        f = hw.family
        line = getattr(site.hardware, "line_model", "classic")
        out.append(f"Hardware: {f.name.upper()}, mated pair {f.z_pair_ohm:g} ohm, plug {f.plug_mm:g} mm, "
                   f"tee arms {f.tee_through_mm:g}/{f.tee_side_mm:g} mm, short {hw.short_nh:g} nH; "
                   f"{line} line")
    out.append(f"Depth ceiling: {ceiling:g} dB")
    for r in site.radios:
        load = getattr(r, "load", None)
        if load is not None:
            swr = load.swr if load.swr is not None else DEFAULT_OUT_OF_BAND_SWR
            what = f"file {load.file}" if load.file else "no file"
            out.append(f"Load of {r.name}: {what}; SWR bound {swr:g} elsewhere"
                       + (f"; radio port {load.radio_ohm:g} ohm" if load.radio_ohm else ""))
    return out
