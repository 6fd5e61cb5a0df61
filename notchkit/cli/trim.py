"""`notchkit trim`: how much to cut off a stub, from an analyser measurement."""

from __future__ import annotations

import math

from notchkit.cli.flags import with_flags
from notchkit.errors import EXIT_OK, NotchkitError, UsageError
from notchkit.jsonvalues import dumps
from notchkit.trimming import SAFETY, inches_16ths, trim

FLAGS = {
    "target_mhz": "--target-mhz", "length_m": "--length-m", "quarter_waves": "--quarter-waves",
    "allowance_m": "--allowance-m", "plan_path": "--plan", "stub_id": "--stub",
    "plan_length": "--plan-length", "termination": "--termination", "png_path": "--png",
    "spool": "--spool", "calibration_path": "--calibration",
}
"""Library parameter -> flag, for error messages."""

DESCRIPTION = """\
Read an analyser sweep of a stub (Touchstone .s1p of the stub alone at its input,
or .s2p through the tee with the stub in place), find its resonance, and with the
present length back-compute the effective velocity factor and say how much to cut
off to move the resonance to the target.

--target-mhz is where the measured resonance should be, and --quarter-waves the
number of quarter waves of that resonance. With --plan and --stub both come from
the plan: the resonance the stub is trimmed to, of the stub alone for a .s1p and
at the tee for a .s2p. Without a plan the defaults are 1 quarter wave for a .s1p;
for a .s2p 1 for an open stub (its quarter-wave notch) and 2 for a shorted stub (a
shorted quarter wave is transparent through a tee; its notch is the half wave).
An effective velocity factor no cable has (below 0.3 or above 1) is an error, not
advice: the length, the quarter waves or the stub is wrong.
"""


MAX_TARGET_MHZ = 1e6
"""Largest --target-mhz (1 THz; the sweep must cover it anyway)."""


def _positive_float(name: str, hi: float, unit: str = ""):
    def parse(text: str) -> float:
        try:
            value = float(text)
        except ValueError:
            raise UsageError(f"{name}: {text!r} is not a number") from None
        if not (math.isfinite(value) and value > 0):
            raise UsageError(f"{name}: {text} must be > 0")
        if value > hi:
            raise UsageError(f"{name}: {text} is too large (allowed: more than 0 and at most {hi:g}"
                             f"{unit})")
        return value

    return parse


def add_parser(sub) -> None:
    p = sub.add_parser(
        "trim",
        help="how much to cut off a stub, from a measured .s1p/.s2p",
        description=DESCRIPTION,
        epilog=SAFETY,
    )
    p.add_argument("measurement", metavar="MEASUREMENT", help="Touchstone .s1p or .s2p file")
    p.add_argument("--cable", required=True, metavar="TYPE",
                   help="cable type of the stub (see `notchkit cables`)")
    p.add_argument("--termination", choices=("open", "short"),
                   help="far end of the stub (may come from --plan)")
    p.add_argument("--target-mhz", metavar="F", type=str,
                   help="where the measured resonance should be, MHz (default with --plan: "
                        "the stub's resonance_mhz, moved to the stub alone for a .s1p)")
    p.add_argument("--quarter-waves", type=str, metavar="N",
                   help="quarter waves of the measured resonance (see above; with --plan: "
                        "the stub's quarter_waves)")
    p.add_argument("--length-m", type=str, metavar="L",
                   help="present physical length of the stub, m (overrides --plan)")
    p.add_argument("--plan", metavar="PLAN.json", help="plan JSON from `notchkit plan --outdir`")
    p.add_argument("--stub", metavar="ID", help="stub id in the plan, e.g. F1-S2")
    p.add_argument("--plan-length", choices=("cut", "first-cut"), default="cut",
                   help="which plan length is on the bench: cut_length_m (cut to plan, "
                        "default) or first_cut_m (cut long with the trim margin)")
    p.add_argument("--allowance-m", type=str, metavar="A",
                   help="fixed electrical length inside the measurement that trimming does not "
                        "change (tee allowance), m; default: from the plan for a .s2p, else 0")
    p.add_argument("--spool", metavar="NAME",
                   help="name of the cable spool the stub was cut from (with --calibration)")
    p.add_argument("--calibration", metavar="SPOOL.json",
                   help="add this trim's effective VF (and loss, from Q) to the spool's calibration "
                        "file (created if missing); `notchkit plan --calibration` then uses it")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.add_argument("--png", metavar="FILE", help="write a plot of the measurement (PNG)")
    p.set_defaults(run=run)


def _quarter_waves(text: str | None) -> int | None:
    if text is None:
        return None
    try:
        value = int(text)
    except ValueError:
        raise UsageError(f"--quarter-waves: {text!r} must be a whole number >= 1") from None
    if value < 1:
        raise UsageError(f"--quarter-waves: {value} must be a whole number >= 1")
    return value


def _allowance(text: str | None) -> float | None:
    if text is None:
        return None
    try:
        value = float(text)
    except ValueError:
        raise UsageError(f"--allowance-m: {text!r} is not a number") from None
    from notchkit.trimming import MAX_LENGTH_M

    if not (math.isfinite(value) and 0 <= value <= MAX_LENGTH_M):
        raise UsageError(f"--allowance-m: {text} must be a length in metres from 0 to {MAX_LENGTH_M:g}")
    return value


def format_text(result) -> str:
    """The human report for a :class:`notchkit.trimming.TrimResult`."""
    r = result.resonance
    kind = "notch (S21)" if r.ports == 2 else f"{r.kind} resonance"
    lines = [
        f"measurement  {result.measurement} ({r.ports}-port, "
        f"{result.sweep_mhz[0]:.4g}-{result.sweep_mhz[1]:.4g} MHz)",
        f"stub         {result.termination}, {result.cable}, {result.quarter_waves} quarter waves",
        f"resonance    {r.freq_mhz:.4f} MHz {kind}, depth {r.depth_db:.1f} dB, "
        + ("Q not resolved" if r.q is None else f"Q {r.q:.0f}")
        + ("" if result.q_expected is None else f" (cable alone ~{result.q_expected:.0f})"),
        f"target       {result.target_mhz:.4f} MHz"
        + ("" if result.target_source == "target_mhz" else f" ({result.target_source})")
        + f": measured/target {result.ratio:.5f} "
        f"({'shorten' if result.shorten_pct >= 0 else 'lengthen'} by "
        f"{abs(result.shorten_pct):.2f} %)",
    ]
    if result.present_length_m is not None:
        lines.append(
            f"length       {result.present_length_m:.4f} m now "
            f"({FLAGS.get(result.length_source or '', result.length_source)})"
            + (f" + {result.allowance_m:.4f} m allowance" if result.allowance_m else "")
            + f"; effective VF {result.velocity_factor:.4f} "
            f"(phase velocity at the measured {result.velocity_factor_at_mhz:.4f} MHz; nominal "
            f"{result.nominal_velocity_factor:.3f}"
            + (f", RLGC line {result.expected_velocity_factor:.4f} there)" if result.line_model == "rlgc"
               and result.expected_velocity_factor is not None else ")")
        )
        cut = result.cut_m
        lines.append(
            f"target len   {result.target_length_m:.4f} m "
            f"({result.target_length_m / 0.0254:.2f} in); "
            + (f"cut {cut * 1000:.1f} mm ({inches_16ths(cut)[1]})" if cut >= 0
               else f"{-cut * 1000:.1f} mm ({inches_16ths(-cut)[1]}) too short")
        )
    lines.append(f"advice       {result.advice}")
    for w in result.warnings:
        lines.append(f"warning      {w}")
    lines.append(SAFETY)
    return "\n".join(lines)


def run(args) -> int:
    from notchkit.trimming import MAX_LENGTH_M

    target = (None if args.target_mhz is None
              else _positive_float("--target-mhz", MAX_TARGET_MHZ, " MHz")(args.target_mhz))
    length = (None if args.length_m is None
              else _positive_float("--length-m", MAX_LENGTH_M, " m")(args.length_m))
    if (args.plan is None) != (args.stub is None):
        raise UsageError("--plan and --stub go together: give both or neither")
    if (args.spool is None) != (args.calibration is None):
        raise UsageError("--spool and --calibration go together: give both or neither")
    if args.termination is None and args.plan is None:
        raise UsageError("--termination: required (open or short) unless --plan gives it")
    together = args.calibration is not None and args.png is not None
    if args.calibration is not None:  # every output checked against the inputs before any work
        from notchkit.report.files import plan_outputs

        plan_outputs([(args.calibration, "--calibration"), *([(args.png, "--png")] if args.png else [])],
                     inputs=[(args.measurement, "measurement"), (args.plan, "plan JSON")])
    try:
        result = trim(
            args.measurement,
            cable=args.cable,
            termination=args.termination,
            target_mhz=target,
            length_m=length,
            plan_path=args.plan,
            stub_id=args.stub,
            plan_length=args.plan_length,
            quarter_waves=_quarter_waves(args.quarter_waves),
            allowance_m=_allowance(args.allowance_m),
            png_path=None if together else args.png,
        )
        cal = None
        if args.calibration is not None:
            from notchkit.calibration import calibration_bytes, record, sample_from_trim

            cal = record(args.calibration, spool=args.spool, cable=result.cable,
                         sample=sample_from_trim(result, piece=args.stub), write=not together)
            if together:  # the plot and the calibration: both written, or neither
                from notchkit.fileio import write_all
                from notchkit.report.measurement import measurement_png
                from notchkit.trimming import read_measurement

                png = measurement_png(read_measurement(args.measurement), result)
                write_all([(args.png, png, "--png"),
                           (args.calibration, calibration_bytes(cal), "--calibration")])
    except NotchkitError as exc:
        raise with_flags(exc, FLAGS) from None
    if args.json:
        doc = result.to_json()
        if cal is not None:
            doc["calibration"] = {"file": args.calibration, **cal.note()}
        print(dumps(doc, indent=2))
    else:
        print(format_text(result))
        if cal is not None:
            print(f"calibration  spool {cal.spool!r} ({args.calibration}): VF {cal.velocity_factor:.4f} "
                  f"from {len(cal.vf_samples)} piece(s)"
                  + ("" if cal.vf_spread is None else f", spread {cal.vf_spread:.4f}"))
    return EXIT_OK
