"""`notchkit design`: design the stub filters a site needs, or one ad-hoc filter."""

from __future__ import annotations

import math
import re
from pathlib import Path
from typing import TYPE_CHECKING

from notchkit.errors import EXIT_OK, EXIT_UNMET, UsageError
from notchkit.jsonvalues import dumps
from notchkit.report.rows import DASH
from notchkit.report.summary import state_word

if TYPE_CHECKING:
    from argparse import Namespace, _SubParsersAction
    from collections.abc import Sequence

    from notchkit.cli.progress import TerminalProgress
    from notchkit.site.model import Allowances, Limits
    from notchkit.solver import Shortfall
    from notchkit.synthesis import Design, DesignReport

CAUTION = (
    "Safety: open stub ends carry the highest voltage of the filter (kilovolts at high power); "
    "insulate and seal them, keep them out of reach while transmitting, and never trim a stub "
    "with the transmitter on. Follow local codes and licensed practice for RF exposure, grounding "
    "and tower work."
)

MAX_BANDS = 32
"""Most --pass and most --notch bands of one ad-hoc filter."""

_NUM = r"([0-9]*\.?[0-9]+(?:[eE][-+]?[0-9]+)?)"
_BAND = re.compile(rf"^\s*{_NUM}\s*-\s*{_NUM}\s*$")


def add_parser(sub: _SubParsersAction) -> None:
    p = sub.add_parser(
        "design",
        help="design the stub filters a site needs (or one filter from --pass/--notch)",
        description=(
            "Design coaxial stub filters on the real lossy cable. With a site file: every filter the "
            "survey asks for. Without one: a single filter that passes every --pass band and notches "
            "every --notch band. Prints the arrangement, the verified figures of every band, the cut "
            "list (mm and inches), the tolerance run and the power check. Exit code 0 when every "
            "filter meets its requirements, 1 when one does not (the best design is shown with what "
            "is missing), 2 for bad input."
        ),
    )
    p.add_argument("site", metavar="SITE.yaml", nargs="?", default=None, help="the site file")
    p.add_argument("--pass", dest="pass_bands", metavar="LO-HI", action="append", default=[],
                   help="a band to pass, MHz (repeatable; without a site file)")
    p.add_argument("--notch", dest="notches", metavar="LO-HI[:DB]", action="append", default=[],
                   help="a band to notch, MHz, with the rejection needed in dB (default 30; repeatable)")
    p.add_argument("--cable", metavar="TYPE", default=None,
                   help="stub cable type for --pass/--notch designs (see `notchkit cables`; default RG-213)")
    p.add_argument("--max-stubs", metavar="N", type=int, default=None,
                   help="largest number of stubs to try (default: 3)")
    g = p.add_argument_group("ad-hoc limits, power and allowances (without a site file; the defaults "
                             "are the site file's, docs/site-format.md)")
    g.add_argument("--power-w", metavar="W", type=str, default=None,
                   help="carrier power through the filter, W: adds the power check (voltage, current, heat)")
    g.add_argument("--power-mhz", metavar="MHZ", type=str, default=None,
                   help="carrier frequency for the power check (default: centre of the first --pass band)")
    g.add_argument("--max-il-db", metavar="DB", type=str, default=None,
                   help="largest pass-band insertion loss, dB (default 0.5)")
    g.add_argument("--max-swr", metavar="X", type=str, default=None,
                   help="largest pass-band SWR (default 1.5)")
    g.add_argument("--yield-target-pct", metavar="PCT", type=str, default=None,
                   help="share of simulated builds that must meet, percent (default 90)")
    g.add_argument("--tee-allowance-mm", metavar="MM", type=str, default=None,
                   help="with --hardware ideal: electrical length of each tee and its connectors, mm of "
                        "stub cable (default 30)")
    g.add_argument("--trim-margin-pct", metavar="PCT", type=str, default=None,
                   help="first cut this much long, percent (default 3)")
    g.add_argument("--cut-tolerance-mm", metavar="MM", type=str, default=None,
                   help="how close to a mark you cut, mm (default 2)")
    p.add_argument("--load", metavar="FILE", default=None,
                   help="the antenna's impedance, a .s1p or an R+jX table (freq_mhz r_ohm x_ohm); "
                        "without a site file")
    p.add_argument("--hardware", metavar="FAMILY", choices=("uhf", "n", "bnc", "ideal"), default=None,
                   help="connection hardware for --pass/--notch designs: uhf (default, as for a site "
                        "without hardware:), n, bnc, or ideal (ideal tees with --tee-allowance-mm); "
                        "docs/hardware.md")
    p.add_argument("--line-model", choices=("classic", "rlgc"), default=None,
                   help="line model for --pass/--notch designs (default classic; rlgc: internal inductance)")
    p.add_argument("--calibration", metavar="SPOOL.json", action="append", default=[],
                   help="a cable spool measured by `notchkit trim --spool` (repeatable, one per cable "
                        "type; with a site file): lengths use its VF and loss")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.add_argument("--touchstone", metavar="DIR", default=None,
                   help="also write one .s2p file per filter into DIR (created if missing)")
    p.set_defaults(run=run)


def _number(text: str, what: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise UsageError(f"{what}: {text!r} is not a number") from None
    if not math.isfinite(value):
        raise UsageError(f"{what}: {text!r} must be finite")
    return value


def parse_band(text: str, option: str = "--pass") -> tuple[float, float]:
    """``"14.0-14.35"`` -> ``(14.0, 14.35)`` MHz, checked against 0.1-6000 MHz."""
    from notchkit.site.model import MAX_FREQ_MHZ, MIN_FREQ_MHZ

    m = _BAND.match(text)
    if not m:
        raise UsageError(f"{option} {text!r}: give a band as LO-HI in MHz, e.g. 14.0-14.35")
    lo, hi = _number(m.group(1), option), _number(m.group(2), option)
    for v in (lo, hi):
        if not MIN_FREQ_MHZ <= v <= MAX_FREQ_MHZ:
            raise UsageError(f"{option} {text!r}: {v:g} MHz is outside {MIN_FREQ_MHZ:g}-{MAX_FREQ_MHZ:g} MHz")
    if not lo < hi:
        raise UsageError(f"{option} {text!r}: the low edge {lo:g} must be below the high edge {hi:g} MHz")
    return lo, hi


def parse_notch(text: str) -> tuple[float, float, float]:
    """``"21.0-21.45:30"`` -> ``(21.0, 21.45, 30.0)``; the dB part defaults to 30."""
    from notchkit.synthesis import DEFAULT_NOTCH_DB

    band, sep, db_text = text.partition(":")
    lo, hi = parse_band(band, "--notch")
    db = DEFAULT_NOTCH_DB
    if sep:
        db = _number(db_text.strip(), f"--notch {text!r} rejection")
        if not 0 < db <= 200:
            raise UsageError(f"--notch {text!r}: rejection {db:g} dB must be > 0 and <= 200 dB")
    return lo, hi, db


_AD_HOC = ("power_w", "power_mhz", "max_il_db", "max_swr", "yield_target_pct", "tee_allowance_mm",
           "trim_margin_pct", "cut_tolerance_mm")


def _ranged(args: Namespace, name: str, lo: float, hi: float, *, lo_open: bool = False) -> float | None:
    text = getattr(args, name)
    if text is None:
        return None
    option = "--" + name.replace("_", "-")
    value = _number(text, option)
    if value < lo or value > hi or (lo_open and value == lo):
        low = f"greater than {lo:g}" if lo_open else f"from {lo:g}"
        raise UsageError(f"{option} {text}: must be {low} {'and at most' if lo_open else 'to'} {hi:g}")
    return value


def ad_hoc_settings(args: Namespace, passes: Sequence[tuple[float, float]]
                    ) -> tuple[Limits, Allowances, float | None, float | None]:
    """Limits, allowances and the power check's carrier from the ad-hoc options
    (the site file's ranges; the defaults where an option is not given)."""
    import dataclasses

    from notchkit.site.model import MAX_FREQ_MHZ, MIN_FREQ_MHZ, Allowances, Limits

    lim: dict = {}
    alw: dict = {}
    if (v := _ranged(args, "max_il_db", 0.0, 10.0, lo_open=True)) is not None:
        lim["max_insertion_loss_db"] = v
    if (v := _ranged(args, "max_swr", 1.0, 10.0, lo_open=True)) is not None:
        lim["max_swr"] = v
    if (v := _ranged(args, "yield_target_pct", 0.0, 100.0)) is not None:
        lim["yield_target_pct"] = v
    if (v := _ranged(args, "tee_allowance_mm", 0.0, 500.0)) is not None:
        alw["tee_allowance_m"] = v / 1000.0
    if (v := _ranged(args, "trim_margin_pct", 0.0, 25.0)) is not None:
        alw["trim_margin_pct"] = v
    if (v := _ranged(args, "cut_tolerance_mm", 0.0, 50.0, lo_open=True)) is not None:
        alw["cut_tolerance_mm"] = v
    power_w = _ranged(args, "power_w", 0.0, 100_000.0, lo_open=True)
    power_mhz = _ranged(args, "power_mhz", MIN_FREQ_MHZ, MAX_FREQ_MHZ)
    if power_mhz is not None and power_w is None:
        raise UsageError("--power-mhz needs --power-w (the carrier's power)")
    if power_w is not None and power_mhz is None:
        power_mhz = 0.5 * (passes[0][0] + passes[0][1])
    if args.max_stubs is not None:
        lim["max_stubs"] = args.max_stubs
    return (dataclasses.replace(Limits(), **lim), dataclasses.replace(Allowances(), **alw), power_w,
            power_mhz)


def run(args: Namespace) -> int:
    from notchkit.synthesis import design, design_request, write_touchstones

    progress = _progress(args)
    if args.touchstone is not None:  # before any work: the folder (its files are named after the survey)
        from notchkit.report.files import check_dir_writable

        check_dir_writable(args.touchstone, "--touchstone")
    if args.site is not None:
        given = [n for n in _AD_HOC if getattr(args, n, None) is not None]
        adhoc = (args.pass_bands or args.notches or args.cable or args.max_stubs is not None or given
                 or args.load or args.hardware or args.line_model)
        if adhoc:
            raise UsageError("give either SITE.yaml or --pass/--notch/--cable/--max-stubs/--load/--hardware "
                             "and the ad-hoc limits, not both (a site file sets its limits, allowances "
                             "and hardware itself)")
        from notchkit.site import load_site

        report = design(load_site(args.site), progress=progress, calibration=args.calibration)
    else:
        if args.calibration:
            raise UsageError("--calibration: give it with SITE.yaml (the site's cable types are calibrated)")
        if not args.notches or not args.pass_bands:
            raise UsageError("give SITE.yaml, or at least one --pass LO-HI and one --notch LO-HI[:DB]")
        if args.max_stubs is not None and not 1 <= args.max_stubs <= 8:
            raise UsageError(f"--max-stubs {args.max_stubs}: must be from 1 to 8")
        for option, given in (("--pass", args.pass_bands), ("--notch", args.notches)):
            if len(given) > MAX_BANDS:
                raise UsageError(f"{option} given {len(given)} times (allowed: at most {MAX_BANDS})")
        passes = [parse_band(t) for t in args.pass_bands]
        notches = [parse_notch(t) for t in args.notches]
        from notchkit.cables import get_cable
        from notchkit.site.model import DEFAULT_CABLE

        cable = get_cable(args.cable or DEFAULT_CABLE)
        limits, allowances, power_w, power_mhz = ad_hoc_settings(args, passes)
        if args.tee_allowance_mm is not None and args.hardware != "ideal":
            raise UsageError("--tee-allowance-mm: give it with --hardware ideal (with connector hardware "
                             "the tee's arms and plugs are modelled, docs/hardware.md)")
        report = design_request(passes, notches, cable=cable, limits=limits, allowances=allowances,
                                power_w=power_w, power_mhz=power_mhz, progress=progress, load=args.load,
                                hardware=args.hardware or "uhf", line_model=args.line_model or "classic")
    if progress is not None:
        progress.done()
    written: tuple[Path, ...] = ()
    if args.touchstone is not None:
        written = write_touchstones(report, args.touchstone, inputs=[(args.site, "site file")])
    if args.json:
        print(dumps(report.to_json(), indent=2))
    else:
        print(format_report(report))
        for path in written:
            print(f"wrote {path}")
    return EXIT_OK if report.meets else EXIT_UNMET


def _progress(args: Namespace) -> TerminalProgress | None:
    from notchkit.cli.progress import terminal_progress

    return terminal_progress(enabled=not args.json)


# ---------------------------------------------------------------- formatting


def format_design(d: Design) -> str:
    """The human text of one designed filter: its verdict and requirement rows as the plan prints
    them (:mod:`notchkit.report.filterrows`), then the cut list, tolerance, power and advice."""
    from notchkit.buildyield import format_tolerance
    from notchkit.calibration import calibration_lines
    from notchkit.cutlist import format_cut_list
    from notchkit.report.filterrows import (
        cut_table,
        power_lines,
        power_table,
        requirement_table,
        verdict_text,
    )
    from notchkit.report.terminal import table_lines
    from notchkit.report.text import TOLERANCE
    from notchkit.solver import describe

    s = d.solution
    cab = d.cable
    lines = [f"{d.id}: {d.where} on {getattr(cab, 'name', '?')} ({cab.z0_ohm:g} ohm, "
             f"VF {cab.velocity_factor:g}) - {verdict_text(d)}"]
    lines += [f"  {x}" for x in calibration_lines([cab])]
    lines += [f"  why: {why}" for why in d.requirement.reasons]
    lines.append(f"  arrangement: {describe(d.filter)}")
    lines.append(f"  {len(d.filter.stubs)} stub(s), {s.total_cable_m:.2f} m of cable in all "
                 f"(cap {s.max_total_cable_m:.1f} m)")
    lines += table_lines(requirement_table(d), "  ")
    if d.model is not None:
        lines += ["  " + x for x in d.model.lines]
    if d.cuts:
        lines += table_lines(cut_table(d), "  ")  # the plan's cut list, then each piece in full
        lines.append("  cut notes:")
        text = format_cut_list(d.cuts, lines=d.lines, hardware=d.hardware)
        lines += ["    " + x for x in text.splitlines()]
    lines += [f"  cannot be built: {problem}" for problem in d.build_problems]
    if d.tolerance is not None:  # the plan's section of that name (the verdict points to it)
        lines.append(f"  {TOLERANCE}:")
        lines += ["    " + x for x in format_tolerance(d.tolerance).splitlines()]
    if d.power is not None and (table := power_table(d)) is not None:  # the plan's power check
        lines += table_lines(table, "  ")
        lines += ["  " + x for x in power_lines(d)]
    if s.alternatives:
        lines.append("  alternatives (stubs, cable, smallest notch margin, build yield):")
        for a in s.alternatives:
            ay = DASH if a.build_yield is None else f"{100 * a.build_yield:.0f} %"
            tag = "" if a.meets else f", {state_word(False)}"
            lines.append(f"    {a.n_stubs} stub(s), {a.total_cable_m:.2f} m, {a.margin_db:+.1f} dB, "
                         f"{ay}{tag}: {a.arrangement}")
    if not s.meets:
        lines.append("  what is missing:")
        lines += ["    " + _shortfall(x) for x in s.shortfall]
    if not d.meets:
        lines += [f"  advice: {a}" for a in d.advice]
    if d.cable_note:
        lines.append(f"  warning: {d.cable_note}")
    return "\n".join(lines)


def _shortfall(x: Shortfall) -> str:
    """One band's shortfall: what it reaches, what it needs, how far off."""
    if x.quantity == "attenuation":
        return (f"notch {x.lo_mhz:g}-{x.hi_mhz:g} MHz: best {x.achieved:.1f} dB of "
                f"{x.required:.1f} dB, {x.missing_db:.1f} dB short")
    if x.quantity == "insertion_loss":
        return (f"pass {x.lo_mhz:g}-{x.hi_mhz:g} MHz: insertion loss {x.achieved:.2f} dB, "
                f"{x.missing_db:.2f} dB over {x.required:g} dB")
    return (f"pass {x.lo_mhz:g}-{x.hi_mhz:g} MHz: SWR {x.achieved:.2f} over {x.required:g} "
            f"({x.missing_db:.1f} dB of return loss short)")


def format_report(report: DesignReport) -> str:
    """The human text of a whole design report."""
    head = (f"Design for {report.site_name}: {len(report.designs)} filter(s)" if report.site_name
            else "Design: 1 ad-hoc filter")
    met = sum(1 for d in report.designs if d.meets)
    blocks = [head, ""]
    for d in report.designs:
        blocks += [format_design(d), ""]
    blocks.append(f"{met} of {len(report.designs)} filter(s) meet every requirement.")
    blocks.append(CAUTION)
    return "\n".join(blocks)
