"""`notchkit plan`: the printed site notch plan (PDF, and optionally HTML and an output folder)."""

from __future__ import annotations

from notchkit.errors import EXIT_OK, EXIT_UNMET

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
written all the same, marked NOT MET); 2 bad input or an unwritable output (nothing
is written).

Work on RF equipment can hurt: open stub ends carry high voltage at high power,
antennas expose people to RF, towers and lightning kill. Follow local codes and
licensed practice.
"""


def add_parser(sub) -> None:
    p = sub.add_parser("plan", help="write the site notch plan (PDF, HTML, curves, Touchstone, JSON)",
                       description=DESCRIPTION, epilog=EPILOG)
    p.add_argument("site", metavar="SITE.yaml", help="site file (read only)")
    p.add_argument("-o", "--output", required=True, metavar="PLAN.pdf", help="PDF to write")
    p.add_argument("--html", metavar="PLAN.html", help="also write the plan as one self-contained HTML page")
    p.add_argument("--outdir", metavar="DIR",
                   help="also write curves (PNG, CSV), Touchstone files and plan.json into DIR")
    p.add_argument("--units", choices=("metric", "imperial", "both"), default="both",
                   help="lengths in mm, inches (to 1/16 in) or both (default both)")
    p.add_argument("--page-size", choices=("a4", "letter"), default="a4",
                   help="paper size of the PDF (default a4)")
    p.add_argument("--calibration", metavar="SPOOL.json", action="append", default=[],
                   help="a cable spool measured by `notchkit trim --spool` (repeatable, one per cable "
                        "type): first cuts and trim targets use its VF and loss")
    p.set_defaults(run=run)


def run(args) -> int:
    from notchkit.plan import plan

    result = plan(args.site, args.output, html=args.html, outdir=args.outdir, units=args.units,
                  page_size=args.page_size, calibration=args.calibration)
    for line in result.text.summary:
        print(line)
    for f in result.text.filters:
        print(f"  {f.title}: {'meets' if f.meets else 'NOT MET'} (build yield {f.build_yield})")
    print(f"wrote {result.pdf} ({result.pages} pages)")
    if result.html is not None:
        print(f"wrote {result.html}")
    if result.outdir is not None:
        print(f"wrote {len(result.files)} files in {result.outdir}")
    return EXIT_OK if result.meets else EXIT_UNMET
