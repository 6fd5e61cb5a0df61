"""`notchkit plan`: the printed site notch plan (PDF, and optionally HTML and an output folder)."""

from __future__ import annotations

from typing import TYPE_CHECKING

from notchkit.defaults import PAGE_SIZES, UNITS
from notchkit.errors import EXIT_OK, EXIT_UNMET, UsageError

if TYPE_CHECKING:
    from argparse import Namespace, _SubParsersAction

DESCRIPTION = """\
Survey the site, design every filter it needs and write the notch plan: a PDF with
a cover, the threats, one page per filter (arrangement, attenuation curve, cut
list, tolerance, power check, trimming steps), cut labels and cautions.
--html writes the same plan as one self-contained web page; --outdir writes each
filter's curve (PNG, CSV), its Touchstone .s2p and the plan JSON that
`notchkit trim --plan` reads.
"""

EPILOG = """\
exit codes: 0 every filter meets its requirements; 1 a filter does not (the plan is
written all the same, marked DOES NOT MEET); 2 bad input or an unwritable output (nothing
is written).

Work on RF equipment can hurt: open stub ends carry high voltage at high power,
antennas expose people to RF, towers and lightning kill. Follow local codes and
licensed practice.
"""


def add_parser(sub: _SubParsersAction) -> None:
    p = sub.add_parser("plan", help="write the site notch plan (PDF, HTML, curves, Touchstone, JSON)",
                       description=DESCRIPTION, epilog=EPILOG)
    p.add_argument("site", metavar="SITE.yaml", help="site file (read only)")
    p.add_argument("-o", "--output", required=True, metavar="PLAN.pdf", help="PDF to write")
    p.add_argument("--html", metavar="PLAN.html", help="also write the plan as one self-contained HTML page")
    p.add_argument("--outdir", metavar="DIR",
                   help="also write curves (PNG, CSV), Touchstone files and plan.json into DIR")
    p.add_argument("--units", choices=UNITS, default=None,
                   help="lengths in mm, inches (to 1/16 in) or both (default: the defaults file's "
                        "units, else both)")
    p.add_argument("--page-size", choices=PAGE_SIZES, default=None,
                   help="paper size of the PDF (default: the defaults file's page_size, else a4)")
    p.add_argument("--analyser-mhz", metavar="LO-HI", default=None,
                   help="the range your analyser sweeps, for this plan (default: the site file's "
                        "allowances, else the defaults file's analyser_mhz, else 0.1-900)")
    p.add_argument("--calibration", metavar="SPOOL.json", action="append", default=[],
                   help="a cable spool measured by `notchkit trim --spool` (repeatable, one per cable "
                        "type): first cuts and trim targets use its VF and loss")
    p.set_defaults(run=run)


def _analyser(text: str) -> tuple[float, float]:
    lo, sep, hi = text.partition("-")
    try:
        band = (float(lo), float(hi))
    except ValueError:
        band = (0.0, 0.0)
    if not sep or not 0.0 < band[0] < band[1] <= 1e6:
        raise UsageError(f"--analyser-mhz {text!r}: must be LO-HI in MHz with 0 < LO < HI (e.g. 1-600)")
    return band


def run(args: Namespace) -> int:
    from notchkit.cli.progress import terminal_progress
    from notchkit.defaults import load_defaults, with_analyser
    from notchkit.report.terminal import table_lines
    from notchkit.siteplan import plan

    mine = load_defaults()
    flag = _analyser(args.analyser_mhz) if args.analyser_mhz is not None else None
    site = args.site
    if flag is not None or mine.analyser_mhz is not None:
        from notchkit.site import load_site

        site = with_analyser(load_site(args.site), flag, mine.analyser_mhz)
    progress = terminal_progress()
    try:
        result = plan(site, args.output, html=args.html, outdir=args.outdir,
                      units=args.units or mine.units or "both",
                      page_size=args.page_size or mine.page_size or "a4", calibration=args.calibration,
                      progress=progress)
    finally:
        if progress is not None:
            progress.done()
    for line in result.text.summary:
        print(line)
    for line in table_lines(result.text.filters_table, "  ", title=False):  # the cover's table
        print(line)
    print(f"wrote {result.pdf} ({result.pages} pages)")
    if result.html is not None:
        print(f"wrote {result.html}")
    if result.outdir is not None:
        print(f"wrote {len(result.files)} files in {result.outdir}")
    return EXIT_OK if result.meets else EXIT_UNMET
