"""`notchkit cables`: list the cable library with the modelled loss, its sources and ranges."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

from notchkit.cables import DEFAULT_AT_MHZ, VALID_FREQ_MHZ, cable_table, get_cable
from notchkit.errors import EXIT_OK, UsageError
from notchkit.jsonvalues import dumps
from notchkit.report.rows import DASH, Table
from notchkit.report.terminal import table_lines

if TYPE_CHECKING:
    from argparse import Namespace, _SubParsersAction


def add_parser(sub: _SubParsersAction) -> None:
    p = sub.add_parser(
        "cables",
        help="list the cable types with impedance, velocity factor, loss and sources",
        description=(
            "List the built-in coax and balanced line types (and those of your own cable "
            "library): impedance, velocity factor, dielectric, outer diameter, maximum "
            "voltage and the modelled matched-line loss at the chosen frequencies, in "
            "dB/100 m and dB/100 ft, with the published sources. A loss marked * lies "
            "outside the published table (extrapolated). Give a type name to see its "
            "published tables and the model's error against each."
        ),
    )
    p.add_argument("type", nargs="?", default=None,
                   help="show one type in detail: its published tables, sources and fit")
    p.add_argument(
        "--at",
        metavar="MHZ[,MHZ...]",
        default=",".join(f"{f:g}" for f in DEFAULT_AT_MHZ),
        help="frequencies for the loss columns, MHz, comma separated (default: %(default)s)",
    )
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.set_defaults(run=run)


def parse_at(text: str) -> tuple[float, ...]:
    """Parse ``--at``: comma-separated MHz values within the model's range."""
    lo, hi = VALID_FREQ_MHZ
    out = []
    for part in str(text).split(","):
        part = part.strip()
        try:
            value = float(part)
        except ValueError:
            raise UsageError(
                f"--at: {part!r} is not a number (give MHz values {lo:g}-{hi:g}, comma separated)"
            ) from None
        if not (math.isfinite(value) and lo <= value <= hi):
            raise UsageError(f"--at: {part} MHz is outside {lo:g}-{hi:g} MHz")
        out.append(value)
    return tuple(out)


def _opt(value: float | None, fmt: str) -> str:
    return DASH if value is None else format(value, fmt)


def _range(c) -> str:
    rng = c.table_range_mhz
    return "none" if rng is None else f"{rng[0]:g}-{rng[1]:g}"


def cable_rows(rows) -> tuple[Table, dict[str, int]]:
    """The cable library as a :class:`notchkit.report.rows.Table` (units in the headings, ``-``
    for no value, ``mem`` after a recalled figure, ``*`` after an extrapolated loss) and its
    sources numbered in the order the rows cite them."""
    at = rows[0].at_mhz if rows else ()
    head = ["Type", "Kind", "Z0 (ohm)", "VF", "Dielectric", "OD (mm)", "Max V (rms)"]
    head += [f"{f:g} MHz, dB/100 m (/100 ft)" for f in at]
    head += ["Table (MHz)", "Fit (%)", "Sources"]
    cites: dict[str, int] = {}
    body = []
    for r in rows:
        c = r.cable
        mem = set(c.from_memory)

        def m(key: str, text: str, mem=mem) -> str:
            return f"{text} mem" if key in mem and text != DASH else text

        line = [
            c.name,
            c.kind,
            m("z0_ohm", f"{c.z0_ohm:.0f}"),
            m("velocity_factor", f"{c.velocity_factor:.3g}"),
            c.dielectric or DASH,
            m("outer_diameter_mm", _opt(c.outer_diameter_mm, ".1f")),
            m("max_voltage_v", _opt(c.max_voltage_v, ".0f")),
        ]
        for loss_m, loss_ft, out in zip(r.loss_db_per_100m, r.loss_db_per_100ft,
                                        r.extrapolated or (False,) * len(at), strict=True):
            line.append(f"{loss_m:.2f} ({loss_ft:.2f}){'*' if out else ''}")
        refs = [cites.setdefault(s, len(cites) + 1) for s in c.sources]
        line += [_range(c), "lossless" if c.lossless else f"{c.fit_residual_pct:.1f}",
                 ",".join(str(i) for i in refs) or DASH]
        body.append(tuple(line))
    n_at = len(at)
    table = Table(
        title="", header=tuple(head), rows=tuple(body),
        # left: a figure may carry a mark after it (``mem``, ``*``), its digits stay in line
        align=("left",) * (7 + n_at) + ("left", "right", "left"),
        widths=(1.2, 0.7, 0.6, 0.5, 1.2, 0.6, 0.7) + (1.0,) * n_at + (0.7, 0.5, 1.0),
        note="Loss: matched line; coax fitted as a*sqrt(f)*g(f) + b*f to the published tables "
             "(g > 1 below a few MHz for a copper-clad-steel centre), balanced lines from their "
             "geometry. Fit = largest error over the tables' points.",
    )
    return table, cites


def format_table(rows) -> str:
    """The human table for ``rows`` (CableRow objects) in the shared terminal layout
    (:func:`notchkit.report.terminal.table_lines`), the marks explained and the sources below it."""
    table, cites = cable_rows(rows)
    lines = table_lines(table)
    lines.append("")
    lines.append("* = outside the published table (Table MHz): extrapolated, measure the cable "
                 "if the notch depth matters. `notchkit cables TYPE` shows each table and its fit.")
    lines.append("mem = a recalled figure (from memory), not taken from a document; a loss table "
                 "from memory does not widen 'Table MHz'.")
    lines.append("Max V (rms): the cable's working voltage as published. Open stub ends carry high "
                 "RF voltage at high power; follow local codes and licensed practice.")
    lines.append("")
    lines.append("Sources:")
    for cite, i in cites.items():
        lines.append(f"  [{i}] {cite}")
    return "\n".join(lines)


def format_detail(row) -> str:
    """One cable in detail: its figures, each published table with the model beside it."""
    c = row.cable
    out = [f"{c.name} ({c.kind}{', ' + c.dielectric if c.dielectric else ''})"]
    if c.aliases:
        out.append(f"  also called: {', '.join(c.aliases)}")
    out.append(f"  Z0 {c.z0_ohm:.1f} ohm, velocity factor {c.velocity_factor:g}")
    if c.balanced:
        out.append(f"  wires {c.conductor_diameter_mm:g} mm at {c.spacing_mm:g} mm centres "
                   f"(Z0 and loss from geometry)")
    for label, value, unit in (("outer diameter", c.outer_diameter_mm, "mm"),
                               ("centre conductor", c.inner_diameter_mm, "mm"),
                               ("dielectric core", c.dielectric_diameter_mm, "mm"),
                               ("max voltage", c.max_voltage_v, "V rms")):
        if value is not None:
            out.append(f"  {label} {value:g} {unit}")
    for f, w in c.max_power_w:
        out.append(f"  average power rating {w:g} W at {f:g} MHz")
    if c.centre_conductor == "ccs":
        t = "not modelled (no published point below 5 MHz)" if c.cladding_um is None \
            else f"{c.cladding_um:.0f} um"
        out.append(f"  copper-clad-steel conductor, cladding {t}")
    out.append(f"  model: {c.k_sqrt:.4g} sqrt(f){' g(f)' if c.cladding_um else ''} + "
               f"{c.k_lin:.4g} f dB/100 m (f in MHz); " + (
                   "no published table: every frequency is extrapolated"
                   if c.table_range_mhz is None else f"published table {_range(c)} MHz"))
    for f, m, ft, e in zip(row.at_mhz, row.loss_db_per_100m, row.loss_db_per_100ft,
                           row.extrapolated, strict=True):
        out.append(f"  {f:g} MHz: {m:.3f} dB/100 m ({ft:.3f} dB/100 ft)"
                   f"{'  * extrapolated' if e else ''}")
    for src in c.loss_sources:
        out.append(f"  table from: {src.source}")
        word = "recalled" if src.source.lower().startswith("from memory") else "published"
        for f, loss in src.points:
            model = float(c.loss_db_per_100m(f))
            out.append(f"    {f:g} MHz  {word} {loss:.3f}  model {model:.3f} dB/100 m  "
                       f"({(model / loss - 1) * 100:+.1f} %)")
    out.append("  sources:")
    out += [f"    {s}" for s in c.sources]
    if c.notes:
        out.append(f"  note: {c.notes}")
    return "\n".join(out)


def run(args: Namespace) -> int:
    at = parse_at(args.at)
    if getattr(args, "type", None):
        c = get_cable(args.type)
        rows = tuple(r for r in cable_table(at, (c,)) if r.cable == c)[-1:]
        if args.json:
            print(dumps(rows[0].to_json(), indent=2))
        else:
            print(format_detail(rows[0]))
        return EXIT_OK
    rows = cable_table(at)
    if args.json:
        print(dumps([r.to_json() for r in rows], indent=2))
    else:
        print(format_table(rows))
    return EXIT_OK
