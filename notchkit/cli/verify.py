"""`notchkit verify`: check a built filter's sweep against its requirements; name what is off."""

from __future__ import annotations

from typing import TYPE_CHECKING

from notchkit.cli.flags import with_flags
from notchkit.errors import EXIT_OK, EXIT_UNMET, NotchkitError
from notchkit.jsonvalues import dumps
from notchkit.report.summary import state_word

if TYPE_CHECKING:
    from argparse import Namespace, _SubParsersAction

    from notchkit.verification import VerifyResult

FLAGS = {"filter_id": "--filter", "plan_path": "--plan", "diagnose": "--diagnose",
         "measurement_path": "MEASUREMENT", "spool": "--spool", "calibration_path": "--calibration"}

DESCRIPTION = """\
Read a sweep of an assembled filter (Touchstone .s2p with the radio side on port 1,
or .s1p of the radio side with the antenna side into a matched load) and check it,
band by band at the sweep's own points, against the filter's requirements in the
plan JSON: insertion loss and SWR in every pass band, attenuation in every notch.
When a requirement is not met (or with --diagnose) the filter model is fitted to
the sweep to say which piece is off and by how many mm, whether the cable's
velocity factor or loss differs from the plan, or whether a stub's end is the other
kind; no diagnosis is given when the fit cannot explain the sweep.
"""

EPILOG = """\
exit codes: 0 every requirement met; 1 a requirement not met, or not measurable
from a one-port sweep; 2 bad input.
Safety: sweep with the transmitter off and disconnected; follow local codes and
licensed practice for tower work and grounding.
"""


def add_parser(sub: _SubParsersAction) -> None:
    import argparse

    p = sub.add_parser("verify", help="check a built filter's .s2p/.s1p against its requirements",
                       description=DESCRIPTION, epilog=EPILOG,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("measurement", metavar="MEASUREMENT", nargs="+",
                   help="Touchstone .s2p or .s1p of the filter; several files (e.g. one narrow sweep "
                        "around each band) are merged")
    p.add_argument("--plan", required=True, metavar="PLAN.json",
                   help="plan JSON from `notchkit plan --outdir` (or `notchkit design --json`)")
    p.add_argument("--filter", required=True, metavar="ID", help="filter id in the plan, e.g. F2")
    g = p.add_mutually_exclusive_group()
    g.add_argument("--diagnose", dest="diagnose", action="store_true", default=None,
                   help="always fit the model to find what is off (default: when not met)")
    g.add_argument("--no-diagnose", dest="diagnose", action="store_false", help="never fit")
    p.add_argument("--spool", metavar="NAME",
                   help="the cable spool the filter was cut from (with --calibration)")
    p.add_argument("--calibration", metavar="SPOOL.json",
                   help="add the fitted VF and loss to the spool's calibration file (needs a diagnosis)")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.set_defaults(run=run)


def _value(x: float | None, quantity: str) -> str:
    if x is None:
        return "-"
    return f"{x:.2f}" if quantity == "SWR" else f"{x:.1f} dB"


def format_text(result: VerifyResult) -> str:
    """The human report for a :class:`notchkit.verification.VerifyResult`."""
    lines = [f"measurement  {result.measurement} ({result.ports}-port, "
             f"{result.sweep_mhz[0]:.4g}-{result.sweep_mhz[1]:.4g} MHz)",
             f"filter       {result.filter_id}: {result.where} (plan {result.plan})"]
    for c in result.checks:
        limit = "at most" if c.kind == "pass" else "at least"
        state = state_word(c.meets, loud=True)
        at = "" if c.worst_mhz is None else f" at {c.worst_mhz:.4f} MHz"
        designed = "" if c.designed is None else f"; designed {_value(c.designed, c.quantity)}"
        measured = _value(c.measured, c.quantity)
        lines.append(f"{c.kind:6} {c.lo_mhz:g}-{c.hi_mhz:g} MHz  {c.quantity} {measured}"
                     f"{at} ({limit} {_value(c.required, c.quantity)}{designed}; {c.points} points): {state}"
                     + (f" - {c.note}" if c.note else ""))
    lines.append(f"verdict      {result.verdict}")
    d = result.diagnosis
    if d is not None:
        if d.refused:
            lines.append(f"diagnosis    {d.refused}")
        else:
            lines.append(f"diagnosis    fit of {d.points} points, RMS difference {d.rms_residual:.4f}; "
                         f"loss {d.loss_scale:.2f} x published")
            lines += [f"  - {x}" for x in d.findings]
    lines += [f"warning      {w}" for w in result.warnings]
    return "\n".join(lines)


def run(args: Namespace) -> int:
    from notchkit.errors import UsageError
    from notchkit.verification import verify

    if (args.spool is None) != (args.calibration is None):
        raise UsageError("--spool and --calibration go together: give both or neither")
    if args.calibration is not None and args.diagnose is False:
        raise UsageError("--calibration learns from the diagnosis: drop --no-diagnose")
    if args.calibration is not None:  # the one output, checked against the inputs before any work
        from notchkit.report.files import plan_outputs

        plan_outputs([(args.calibration, "--calibration")],
                     inputs=[*((m, "measurement") for m in args.measurement), (args.plan, "plan JSON")])
    try:
        meas = args.measurement[0] if len(args.measurement) == 1 else args.measurement
        result = verify(meas, plan_path=args.plan, filter_id=args.filter,
                        diagnose=True if args.calibration else args.diagnose)
        cal = None
        if args.calibration is not None:
            from notchkit.calibration import record, sample_from_verify
            from notchkit.planfile import read_plan

            cable = read_plan(args.plan).filter(args.filter).cable.type
            cal = record(args.calibration, spool=args.spool, cable=cable, sample=sample_from_verify(result))
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
            print(f"calibration  spool {cal.spool!r} ({args.calibration}): {len(cal.samples)} sample(s)")
    return EXIT_OK if result.meets else EXIT_UNMET
