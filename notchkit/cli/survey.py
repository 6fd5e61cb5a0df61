"""`notchkit survey`: which transmitter threatens which receiver, and the filters that follow."""

from __future__ import annotations

from collections.abc import Set

from notchkit.errors import EXIT_OK
from notchkit.jsonvalues import dumps
from notchkit.report.text import on_band, order_text

CAUTION = (
    "Estimates only: measure antenna coupling on site where you can. Tower work, RF exposure "
    "and high voltages at stub ends can hurt; follow local codes and licensed practice."
)


MAX_HARMONIC = 20
"""Highest --max-harmonic, the same as a site file's max_harmonic allows."""


def _harmonic(text: str) -> int:
    from notchkit.errors import UsageError

    try:
        value = int(text)
    except ValueError:
        raise UsageError(f"--max-harmonic: {text!r} is not a whole number "
                         f"(allowed: 1 to {MAX_HARMONIC})") from None
    return value  # its range (1 to MAX_HARMONIC) is checked by survey() before any work


def add_parser(sub) -> None:
    p = sub.add_parser(
        "survey",
        help="list the threats between a site's transmitters and receivers and the filters needed",
        description=(
            "Survey a site: every transmitter against every receiver for fundamental overload, "
            "harmonics, intermodulation (2 and 3 transmitters, formed in a transmitter or the "
            "receiver), several carriers together, and transmitter noise; prints the "
            "threats worst first, a transmitter x receiver matrix of the worst excess in dB, and "
            "the filter requirements (pass bands and notches) per filter location. Exit code 0 "
            "whatever the threats."
        ),
    )
    p.add_argument("site", metavar="SITE.yaml", help="the site file")
    p.add_argument("--json", action="store_true", help="print JSON instead of tables")
    p.add_argument(
        "--max-harmonic",
        metavar="N",
        type=_harmonic,
        default=None,
        help="highest harmonic evaluated (>= 1; default: the site's max_harmonic, else 5)",
    )
    p.add_argument(
        "--max-threats",
        metavar="N",
        type=int,
        default=None,
        help="intermodulation threats listed, the worst first; the rest are counted "
        "(>= 0; default 10000)",
    )
    p.set_defaults(run=run)


def run(args) -> int:
    from notchkit.site import load_site
    from notchkit.threats import survey

    result = survey(load_site(args.site), max_harmonic=args.max_harmonic, max_threats=args.max_threats)
    if args.json:
        print(dumps(result.to_json(), indent=2))
    else:
        print(format_result(result))
    return EXIT_OK


def _table(head: list[str], rows: list[list[str]], right: Set[int] = frozenset()) -> list[str]:
    widths = [max(len(r[i]) for r in [head, *rows]) for i in range(len(head))]

    def fmt(row: list[str]) -> str:
        pairs = enumerate(zip(row, widths, strict=True))
        cells = [c.rjust(w) if i in right else c.ljust(w) for i, (c, w) in pairs]
        return "  ".join(cells).rstrip()

    return [fmt(head), "  ".join("-" * w for w in widths), *(fmt(r) for r in rows)]


def _where(t) -> str:
    if t.filters:
        return ", ".join(f"{side} {radio}" for radio, side in t.filters)
    if t.excess_db > 0:
        cls = getattr(t, "remedy_class", "")
        return f"no stub: {cls} (see remedies)" if cls else "no stub (see remedies)"
    return "-"


def format_result(result) -> str:
    """The human-readable survey: threats, matrix, filter requirements, remedies, notes."""
    need = [t for t in result.threats if t.excess_db > 0]
    lines = [
        f"Survey of {result.site}: {len(result.threats)} threats, {len(need)} above threshold, "
        f"{len(result.filters)} filter locations (harmonics up to {result.max_harmonic}, "
        f"rejection margin {result.rejection_margin_db:g} dB)",
        "",
        "Threats, worst first (excess = level - threshold):",
    ]
    rows = [
        [
            on_band(", ".join(t.sources), t).replace(", ", " + "),
            on_band(t.victim, t),
            t.mechanism,
            order_text(t),
            f"{t.f_mhz:.4f}",
            f"{t.level_dbm:.1f}",
            f"{t.threshold_dbm:.1f}",
            f"{t.excess_db:+.1f}",
            _where(t),
        ]
        for t in result.threats
    ]
    head = ["source", "victim", "mechanism", "order", "MHz", "level dBm", "limit dBm", "excess dB",
            "where a stub helps"]  # fmt: skip
    lines += _table(head, rows, right={3, 4, 5, 6, 7}) if rows else ["  (none)"]
    lines += ["", "Worst excess in dB, transmitter (rows) x receiver (columns); '-' = no threat:"]
    m = result.matrix()
    if m.transmitters and m.receivers:
        keys = [f"R{j + 1}" for j in range(len(m.receivers))]
        mrows = [
            [tx] + ["-" if v is None else f"{v:+.1f}" for v in row]
            for tx, row in zip(m.transmitters, m.excess_db, strict=True)
        ]
        lines += _table(["tx \\ rx", *keys], mrows, right=set(range(1, len(keys) + 1)))
        lines.append("  " + ", ".join(f"{k} = {name}" for k, name in zip(keys, m.receivers, strict=True)))
    else:
        lines.append("  (no transmitter or no receiver)")
    lines += ["", "Filter requirements:"]
    if not result.filters:
        lines.append("  none: no threat above threshold that a stub can remove")
    for req in result.filters:
        power = "" if req.power_w is None else f", carries {req.power_w:g} W at {req.power_mhz:g} MHz"
        lines.append(f"  {req.radio} {req.side} side (stub cable {req.cable}{power})")
        lines.append(
            "    pass:  " + ", ".join(f"{b.lo_mhz:.4f}-{b.hi_mhz:.4f} MHz" for b in req.pass_bands)
        )
        for n, reason in zip(req.notches, req.reasons, strict=False):
            lines.append(
                f"    notch: {n.lo_mhz:.4f}-{n.hi_mhz:.4f} MHz, >= {n.required_db:.1f} dB  ({reason})"
            )
    remedies: dict[str, None] = {}
    for t in need:
        if not t.filters or t.remedy.startswith("no stub"):
            who = on_band(", ".join(t.sources), t).replace(", ", " + ")
            remedies.setdefault(f"{who} -> {on_band(t.victim, t)} ({t.mechanism}): {t.remedy}")
    if remedies:
        lines += ["", "Remedies where no stub (or not only a stub) helps:"]
        lines += [f"  - {r}" for r in remedies]
    if result.notes:
        lines += ["", "Notes:"] + [f"  - {n}" for n in result.notes]
    lines += ["", CAUTION]
    return "\n".join(lines)
