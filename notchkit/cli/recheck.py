"""`notchkit recheck`: the site's threats checked again with measured filters in place of designed ones."""

from __future__ import annotations

from typing import TYPE_CHECKING

from notchkit.cli.flags import with_flags
from notchkit.errors import EXIT_OK, EXIT_UNMET, NotchkitError, UsageError
from notchkit.jsonvalues import dumps
from notchkit.report.summary import state_word

if TYPE_CHECKING:
    from argparse import Namespace, _SubParsersAction

    from notchkit.asbuilt import RecheckResult

FLAGS = {"measured": "FILTER=SWEEP.s2p"}

DESCRIPTION = """\
Take the threats of the plan's survey (plan.json of `notchkit plan --outdir`) and check
each again with the filters as built: the measured S21 of every filter given as
FILTER=SWEEP.s2p (several sweeps of one filter: FILTER=a.s2p,b.s2p), the designed
filter's figures for the others. Prints each threat's excess, the attenuation it
needs, what the designed and the built filters give, and what is left.
"""

EPILOG = """\
exit codes: 0 every threat a filter was designed against is held off; 1 one is not;
2 bad input.
"""


def add_parser(sub: _SubParsersAction) -> None:
    import argparse

    p = sub.add_parser("recheck", help="the site's threats again, with measured filters for designed ones",
                       description=DESCRIPTION, epilog=EPILOG,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("plan", metavar="PLAN.json", help="plan JSON from `notchkit plan --outdir`")
    p.add_argument("measured", metavar="FILTER=SWEEP.s2p", nargs="+",
                   help="a built filter's sweep, e.g. F3=F3.s2p")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.set_defaults(run=run)


def _pairs(items: list[str]) -> dict[str, list[str]]:
    out: dict[str, list[str]] = {}
    for item in items:
        fid, sep, paths = item.partition("=")
        if not sep or not fid or not paths:
            raise UsageError(f"FILTER=SWEEP.s2p: {item!r} must be a filter id, '=' and the sweep file(s), "
                             "e.g. F3=F3.s2p")
        out.setdefault(fid, []).extend(p for p in paths.split(",") if p)
    return out


def format_text(result: RecheckResult) -> str:
    lines = [f"threats of {result.plan} with "
             + ", ".join(f"{k} as measured" for k in result.measured) + " (other filters as designed)"]
    for t in result.threats:
        state = {True: "held off", False: "NOT HELD OFF", None: "no stub helps"}[t.meets]
        if t.meets is False and t.remaining_db <= 0:
            state = (f"{state_word(False, loud=True)} the margin: under the limit but short of the "
                     "rejection margin")
        if not t.filters:
            lines.append(f"{t.source} -> {t.victim} {t.mechanism} {t.lo_mhz:g}-{t.hi_mhz:g} MHz: excess "
                         f"{t.excess_db:.1f} dB, no filter location: {state if t.excess_db > 0 else 'clear'}")
            continue
        lines.append(f"{t.source} -> {t.victim} {t.mechanism} {t.lo_mhz:g}-{t.hi_mhz:g} MHz: excess "
                     f"{t.excess_db:.1f} dB, needs {t.required_db:.1f} dB from {'+'.join(t.filters)}; "
                     f"designed {t.designed_db:.1f} dB, as built {t.as_built_db:.1f} dB, "
                     f"left {t.remaining_db:+.1f} dB: {state}")
    lines.append("verdict: " + ("every threat held off" if result.meets else "NOT every threat is held off"))
    return "\n".join(lines)


def run(args: Namespace) -> int:
    from notchkit.asbuilt import recheck

    try:
        result = recheck(args.plan, _pairs(args.measured))
    except NotchkitError as exc:
        raise with_flags(exc, FLAGS) from None
    print(dumps(result.to_json(), indent=2) if args.json else format_text(result))
    return EXIT_OK if result.meets else EXIT_UNMET
