"""`notchkit survey`: which transmitter threatens which receiver, and the filters that follow."""

from __future__ import annotations

from typing import TYPE_CHECKING

from notchkit.errors import EXIT_OK
from notchkit.jsonvalues import dumps
from notchkit.report.text import band_text, on_band

if TYPE_CHECKING:
    from argparse import Namespace, _SubParsersAction

    from notchkit.threats import SurveyResult

JSON = "The output of `notchkit survey --json`"
"""Where the tables' notes send a reader for every threat and the full matrix."""

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


def add_parser(sub: _SubParsersAction) -> None:
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


def run(args: Namespace) -> int:
    from notchkit.site import load_site
    from notchkit.threats import survey

    result = survey(load_site(args.site), max_harmonic=args.max_harmonic, max_threats=args.max_threats)
    if args.json:
        print(dumps(result.to_json(), indent=2))
    else:
        print(format_result(result))
    return EXIT_OK


def format_result(result: SurveyResult) -> str:
    """The human-readable survey: the plan's threat table and matrix (the same rows and words as
    the PDF and HTML), then the filter requirements, remedies and notes."""
    from notchkit.report.terminal import table_lines
    from notchkit.report.text import matrix_table, threat_table

    need = [t for t in result.threats if t.excess_db > 0]
    lines = [
        f"Survey of {result.site}: {len(result.threats)} threats, {len(need)} over the limit, "
        f"{len(result.filters)} filter locations (harmonics up to {result.max_harmonic}, "
        f"rejection margin {result.rejection_margin_db:g} dB)",
        "",
    ]
    lines += table_lines(threat_table(result, json=JSON))
    lines.append("")
    if result.matrix().transmitters and result.matrix().receivers:
        lines += table_lines(matrix_table(result, json=JSON))
    else:
        lines.append("  (no transmitter or no receiver)")
    lines += ["", "Filter requirements:"]
    if not result.filters:
        lines.append("  none: no threat over the limit that a stub can remove")
    for req in result.filters:
        power = "" if req.power_w is None else f", carries {req.power_w:g} W at {req.power_mhz:g} MHz"
        lines.append(f"  {req.radio} {req.side} side (stub cable {req.cable}{power})")
        lines.append(
            "    pass:  " + ", ".join(band_text(b.lo_mhz, b.hi_mhz) for b in req.pass_bands)
        )
        for n, reason in zip(req.notches, req.reasons, strict=False):
            lines.append(
                f"    notch: {band_text(n.lo_mhz, n.hi_mhz)}, >= {n.required_db:.1f} dB  ({reason})"
            )
    remedies: dict[str, None] = {}
    for t in result.beyond_stubs():
        who = on_band(", ".join(t.sources), t).replace(", ", " + ")
        remedies.setdefault(f"{who} -> {on_band(t.victim, t)} ({t.mechanism}): {t.remedy}")
    if remedies:
        lines += ["", "Remedies where no stub (or not only a stub) helps:"]
        lines += [f"  - {r}" for r in remedies]
    if result.notes:
        lines += ["", "Notes:"] + [f"  - {n}" for n in result.notes]
    lines += ["", CAUTION]
    return "\n".join(lines)
