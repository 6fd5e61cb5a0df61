"""`notchkit cables`: list the cable library with the modelled loss."""

from __future__ import annotations

import math

from notchkit.cables import DEFAULT_AT_MHZ, VALID_FREQ_MHZ, cable_table
from notchkit.errors import EXIT_OK, UsageError
from notchkit.jsonvalues import dumps


def add_parser(sub) -> None:
    p = sub.add_parser(
        "cables",
        help="list the cable types with impedance, velocity factor and loss",
        description=(
            "List the built-in coax types: impedance, velocity factor, dielectric, outer "
            "diameter, maximum voltage and the fitted matched-line loss at the chosen "
            "frequencies, in dB/100 m and dB/100 ft."
        ),
    )
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
    return "-" if value is None else format(value, fmt)


def format_table(rows) -> str:
    """The human table for ``rows`` (CableRow objects)."""
    at = rows[0].at_mhz if rows else ()
    head = ["type", "Z0", "VF", "dielectric", "OD mm", "max V rms"]
    for f in at:
        head.append(f"{f:g} MHz dB/100m (/100ft)")
    head.append("fit % (points)")
    body = []
    for r in rows:
        c = r.cable
        line = [
            c.name,
            f"{c.z0_ohm:g}",
            f"{c.velocity_factor:.3g}",
            c.dielectric or "-",
            _opt(c.outer_diameter_mm, ".1f"),
            _opt(c.max_voltage_v, ".0f"),
        ]
        for m, ft in zip(r.loss_db_per_100m, r.loss_db_per_100ft, strict=True):
            line.append(f"{m:.2f} ({ft:.2f})")
        line.append("lossless" if c.lossless
                    else f"{c.fit_residual_pct:.1f} ({len(c.loss_table)})")
        body.append(line)
    widths = [max(len(x[i]) for x in [head, *body]) for i in range(len(head))]
    lines = ["  ".join(x.ljust(w) for x, w in zip(row, widths, strict=True)).rstrip()
             for row in [head, *body]]
    lines.insert(1, "  ".join("-" * w for w in widths))
    lines.append("")
    lines.append("Loss: matched line, fitted a*sqrt(f) + b*f to the published table; "
                 "fit % = largest error over its points.")
    lines.append("max V rms: the cable's published working voltage. Open stub ends carry high "
                 "RF voltage at high power; follow local codes and licensed practice.")
    return "\n".join(lines)


def run(args) -> int:
    rows = cable_table(parse_at(args.at))
    if args.json:
        print(dumps([r.to_json() for r in rows], indent=2))
    else:
        print(format_table(rows))
    return EXIT_OK
