"""Every row of text the printed plan shows, built once from the result objects.

The PDF, the HTML page and the terminal summary all print these rows, so a
number appears in one spelling everywhere and is never typed twice. Nothing
here computes physics: it formats :class:`notchkit.threats.SurveyResult`,
the design report's designs (their filter, cut list, tolerance and power
check) and the site.

The rows are built in three places and gathered here: :mod:`notchkit.report.rows`
(the :class:`Table`, the state words, ``-`` for no value, numbers with their
units), :mod:`notchkit.report.threatrows` (the survey's matrix and threat table)
and :mod:`notchkit.report.filterrows` (one filter's page); this module adds the
cut labels, the cautions and the whole :class:`PlanText`.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

from notchkit.cutlist import format_length
from notchkit.report.filterrows import (  # noqa: F401 - the rows of one filter, re-exported
    FilterText,
    band_use_text,
    build_yield_text,
    cut_table,
    filter_text,
    power_lines,
    power_table,
    requirement_table,
    tolerance_lines,
    trim_steps,
)
from notchkit.report.rows import (  # noqa: F401 - the words and numbers, re-exported
    DASH,
    MET,
    MM_PER_IN,
    NOT_MET,
    Table,
    band_text,
    db,
    design_cable_name,
    design_filter,
    design_id,
    design_meets,
    design_title,
    lengths_in_units,
    location_text,
    mhz,
    mhz4,
    order_text,
    pct,
    rate_text,
    short_location,
    shown_path,
    volts,
)
from notchkit.report.threatrows import (  # noqa: F401 - the survey's tables, re-exported
    MATRIX_MAX_RECEIVERS,
    MAX_THREAT_ROWS,
    matrix_table,
    on_band,
    threat_groups,
    threat_table,
    threat_where,
)

if TYPE_CHECKING:
    from notchkit.site.model import Site
    from notchkit.synthesis import Design
    from notchkit.threats import SurveyResult


TAG_BOLD_LINES = (0, 2)
"""A cut label's lines printed large and bold: the stub with its filter, and the cut."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Tag:
    """One cut label: a few lines to print on a tag taped to the stub's cable."""

    stub_id: str
    lines: tuple[str, ...]


@dataclass(frozen=True, slots=True, kw_only=True)
class PlanText:
    """All text of a plan, section by section."""

    site_name: str
    title: str
    cover_facts: tuple[tuple[str, str], ...]
    unmet: tuple[str, ...]
    summary: tuple[str, ...]
    filters_table: Table
    matrix: Table
    threats: Table
    filters: tuple[FilterText, ...]
    tags: tuple[Tag, ...]
    cautions: tuple[tuple[str, str], ...]
    meets: bool
    verdict: str = ""
    """The cover's line when every filter meets (or none is needed)."""


# ---------------------------------------------------------------- words every output prints

THREATS = "Threats"
TOLERANCE = "Tolerance"
POWER_CHECK = "Power check"
TRIM_STEPS = "Trimming steps"
CUT_LABELS = "Cut labels"
CAUTIONS_HEADING = "Cautions"
CONTINUED = " (continued)"
"""Section headings of the plan (PDF and HTML)."""
READ_CAUTIONS = "Read the cautions page before anyone cuts, climbs or transmits."
CAUTIONS_WARNING = ("Work on RF equipment can hurt or kill. Read this page before anyone cuts, climbs "
                    "or transmits.")
LABELS_INTRO = ("Print at 100 % scale, cut along the dashed lines and tape each label to its stub's cable "
                "next to the connector.")


def unmet_banner(n: int) -> str:
    """The cover's warning when ``n`` filters do not meet their requirements."""
    return f"{n} FILTER(S) DO NOT MEET THEIR REQUIREMENTS - read before building:"


CAUTIONS = (
    ("RF exposure",
     "Keep people out of the antennas' near field while transmitting and check the station against the "
     "RF exposure limits that apply where you operate. Never adjust, touch or measure a stub, tee or "
     "feedline while any transmitter on the site can key up: lock out the transmitters first."),
    ("High voltage at open stub ends",
     "At high power the open end of a stub, and points a quarter wave from a shorted end, carry the "
     "highest voltage of the filter: hundreds to thousands of volts peak. The power check on each filter "
     "page gives the figure. Insulate and seal every open end, keep stubs out of reach, and use cable and "
     "connectors rated for the voltage. RF burns are deep and slow to heal."),
    ("Lightning and static (DC grounding)",
     "A shorted stub gives the feedline a DC path to ground; an open stub does not. Either way, bond the "
     "coax shields and the filter's tees to the station's single-point ground, fit lightning protection "
     "where the feedline enters the building, and do not rely on a stub as a lightning arrester. A shorted "
     "stub also shorts any DC sent up the coax (masthead preamplifiers, remote switches)."),
    ("Working at height",
     "Tower and roof work needs a trained climber, fall protection and a ground crew. Mount filters at "
     "ground level where possible. Keep clear of power lines."),
    ("Local codes and licensed practice",
     "This plan is an engineering aid, not a certification. Follow your local electrical and building "
     "codes, your licence conditions and licensed practice; where they differ from this plan, they win. "
     "Measure every stub on an analyser before it goes into service."),
)



# ---------------------------------------------------------------- labels


def tags(designs: Sequence[Design], units: str = "both") -> tuple[Tag, ...]:
    out = []
    for d in designs:
        cable = design_cable_name(d)
        req = d.requirement
        where = f"at {req.radio}" if getattr(req, "radio", None) else ""
        for c in d.cuts:
            if getattr(c, "trimmable", True):
                trim = (f"then trim to {mhz(round(c.resonance_mhz, 4))} MHz (the notch)",
                        f"about {format_length(c.cut_length_m, units)}; "
                        f"{rate_text(c.trim_rate_mm_per_mhz / 1000.0, units)}")
            else:
                trim = ("do not trim (no resonance in the analyser's range)",
                        f"cut to {format_length(c.cut_length_m, units)}")
            out.append(Tag(stub_id=c.stub_id, lines=(
                f"{c.stub_id}   {design_id(d)} {where}".rstrip(),
                f"{cable}, {c.termination} end, tee {c.tee}",
                f"FIRST CUT {format_length(c.first_cut_m, units)}",
                *trim,
            )))
        for x in getattr(d, "lines", ()) or ():
            if getattr(x, "barrel", False):
                out.append(Tag(stub_id=x.line_id, lines=(
                    f"{x.line_id}   {design_id(d)} {where}".rstrip(),
                    f"barrel {x.where}",
                    "BARREL (female-female adapter)",
                    "no cable to cut",
                    "the two tees as close as the hardware allows",
                )))
                continue
            out.append(Tag(stub_id=x.line_id, lines=(
                f"{x.line_id}   {design_id(d)} {where}".rstrip(),
                f"{cable}, line section {x.where}",
                f"CUT {format_length(x.length_m, units)}",
                "cut to length, do not trim",
                "a plug at each end",
            )))
    return tuple(out)


# ---------------------------------------------------------------- the whole plan


def plan_title(site_name: str) -> str:
    """The plan's title (its cover heading and the PDF's title)."""
    return f"Site notch plan: {site_name}"


def plan_text(*, site: Site, sv: SurveyResult, designs: Sequence[Design], date: str, version: str,
              units: str = "both", plan_json: str = "PLAN.json") -> PlanText:
    """Build every row of the plan from the site, the survey and the designs."""
    designs = list(designs)
    ftexts = tuple(filter_text(d, units, plan_json) for d in designs)
    unmet = tuple(f"{NOT_MET}: {f.title}" for f in ftexts if not f.meets)
    n_tx, n_rx = len(site.transmitters), len(site.receivers)
    threats = list(sv.threats)
    over = [t for t in threats if t.excess_db > 0]
    worst = max((t.excess_db for t in threats), default=None)
    beyond = len(sv.beyond_stubs())
    n_stubs = sum(len(d.cuts) for d in designs)
    facts = (
        ("Site", site.name),
        ("Site file", shown_path(site.path) or DASH),
        ("Date", date),
        ("Tool", f"notchkit {version}"),
        ("Radios", f"{len(site.radios)} ({n_tx} transmit, {n_rx} receive)"),
        ("Threats found", f"{len(threats)} ({len(over)} over the limit"
                          + (f", worst {worst:+.1f} dB)" if worst is not None else ")")
                          + (f"; {beyond} beyond a stub alone (see their remedies)" if beyond else "")),
        ("Filters designed", f"{len(designs)} with {n_stubs} stubs; "
                             f"{sum(f.meets for f in ftexts)} meet every requirement, "
                             f"{len(unmet)} do not"),
        ("Lengths in", {"both": "millimetres and inches", "metric": "millimetres",
                        "imperial": "inches"}[units]),
    )
    rows = []
    for d, f in zip(designs, ftexts, strict=True):
        req = d.requirement
        rows.append((f.filter_id, location_text(req), str(len(d.cuts)), str(len(req.notches)),
                     str(len(req.pass_bands)), MET if f.meets else NOT_MET, build_yield_text(d)))
    filters_table = Table(title="Filters", header=("Filter", "Location", "Stubs", "Notches", "Pass bands",
                                                   "Result", "Build yield"),
                          rows=tuple(rows),
                          align=("left", "left", "right", "right", "right", "left", "right"),
                          widths=(0.6, 2.4, 0.6, 0.7, 0.8, 0.9, 0.8))
    verdict_line = ("every filter meets its requirements on the lossy cable model, in at least its target "
                    "share of simulated builds (build yield)." if designs
                    else "no filter is needed: no threat over the limit calls for a stub.")
    if beyond:
        verdict_line += (f" {beyond} threat(s) over the limit are beyond a stub alone (same band, or deeper "
                         "than stubs can notch): the threats table gives each one's remedy.")
    summary = (
        f"{site.name}: {len(site.radios)} radios, {len(threats)} threats, {len(designs)} filters, "
        f"{n_stubs} stubs; "
        + (f"{len(unmet)} filter(s) DO NOT MEET their requirements." if unmet else verdict_line),
    )
    return PlanText(
        site_name=site.name, title=plan_title(site.name), cover_facts=facts, unmet=unmet,
        summary=summary, filters_table=filters_table, matrix=matrix_table(sv), threats=threat_table(sv),
        filters=ftexts, tags=tags(designs, units), cautions=CAUTIONS, meets=not unmet,
        verdict=verdict_line[:1].upper() + verdict_line[1:],
    )

