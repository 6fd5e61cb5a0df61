"""Every row of text the printed plan shows, built once from the result objects.

The PDF, the HTML page and the terminal summary all print these rows, so a
number appears in one spelling everywhere and is never typed twice. Nothing
here computes physics: it formats :class:`notchkit.threats.SurveyResult`,
the design report's designs (their filter, cut list, tolerance and power
check) and the site.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from notchkit.buildyield import element_ids
from notchkit.cutlist import format_length
from notchkit.report.summary import state_word

NOT_MET = state_word(False, loud=True)
"""``DOES NOT MEET``: the printed failure word (:func:`notchkit.report.summary.state_word`)."""
_MAX_ADVICE = 3
MET = state_word(True)
DASH = "-"


@dataclass(frozen=True, slots=True, kw_only=True)
class Table:
    """A table to print: header, rows of strings, alignment and relative widths per column."""

    title: str
    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    align: tuple[str, ...]
    """``"left"`` or ``"right"`` per column."""
    widths: tuple[float, ...]
    """Relative column widths (the PDF scales them to the text width)."""
    note: str = ""

    def __post_init__(self) -> None:
        n = len(self.header)
        if len(self.align) != n or len(self.widths) != n or any(len(r) != n for r in self.rows):
            raise ValueError(f"table {self.title!r}: every row needs {n} cells")

    def chunk(self, start: int, stop: int, title: str | None = None) -> Table:
        return Table(title=self.title if title is None else title, header=self.header,
                     rows=self.rows[start:stop], align=self.align, widths=self.widths, note=self.note)


@dataclass(frozen=True, slots=True, kw_only=True)
class Tag:
    """One cut label: a few lines to print on a tag taped to the stub's cable."""

    stub_id: str
    lines: tuple[str, ...]


@dataclass(frozen=True, slots=True, kw_only=True)
class FilterText:
    """Everything printed on one filter's page."""

    filter_id: str
    title: str
    meets: bool
    verdict: str
    facts: tuple[str, ...]
    requirements: Table
    cuts: Table
    tolerance: tuple[str, ...]
    power: Table | None
    power_lines: tuple[str, ...]
    trim_steps: tuple[str, ...]
    stub_labels: tuple[str, ...]
    line_labels: tuple[str, ...]
    cable_label: str
    radio_label: str
    antenna_label: str
    build_yield: str = "-"
    """The build yield as printed beside the verdict (``"99.9 %"``), ``-`` when none."""


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


# ---------------------------------------------------------------- numbers



def _shown_path(path: object) -> str:
    """A file name as the plan prints it: control, bidi and undecodable characters as escapes."""
    from notchkit.textsafe import clean

    return clean(str(path or ""), one_line=True)


MM_PER_IN = 25.4
"""Millimetres in an inch (exact, by the 1959 international yard)."""


_MM = re.compile(r"(?<![\w.])(\d+(?:\.\d+)?) mm\b")


def lengths_in_units(text: str, units: str) -> str:
    """A sentence written in millimetres (``30 mm``) for an inches-only plan: each length to
    1/16 in (:func:`notchkit.cutlist.format_length`); unchanged for ``metric`` and ``both``."""
    if units != "imperial":
        return text
    return _MM.sub(lambda m: format_length(float(m.group(1)) / 1000.0, "imperial"), text)


def rate_text(m_per_mhz: float, units: str = "both") -> str:
    """A trim rate: ``4.2 mm/MHz``, or ``0.165 in/MHz`` when the plan is in inches only."""
    if units == "imperial":
        return f"{1000.0 * m_per_mhz / MM_PER_IN:.3f} in/MHz"
    return f"{1000.0 * m_per_mhz:.1f} mm/MHz"


def order_text(threat: Any) -> str:
    """A threat's order for the tables: the harmonic or product order, ``-`` where there is none
    (transmitter noise, blocking: ``order`` 0)."""
    order = int(getattr(threat, "order", 0) or 0)
    return str(order) if order > 0 else DASH


def mhz(x: float) -> str:
    """A frequency in MHz to 1 Hz resolution, trailing zeros dropped (``146.52``, ``155.475``)."""
    s = f"{float(x):.6f}".rstrip("0").rstrip(".")
    return s if s not in ("", "-0") else "0"


def mhz4(x: float) -> str:
    """A frequency in MHz to 100 Hz, trailing zeros dropped (a threat's centre frequency)."""
    s = f"{float(x):.4f}".rstrip("0").rstrip(".")
    return s if s not in ("", "-0") else "0"


def band_text(lo: float, hi: float) -> str:
    return f"{mhz(lo)}-{mhz(hi)} MHz" if abs(hi - lo) > 1e-9 else f"{mhz(lo)} MHz"


def db(x: float | None, digits: int = 1) -> str:
    return DASH if x is None else f"{float(x):.{digits}f}"


def pct(p: float) -> str:
    return f"{100.0 * float(p):.1f} %"


def volts(v: float) -> str:
    return f"{v / 1000.0:.2f} kV" if abs(v) >= 1000.0 else f"{v:.0f} V"


# ---------------------------------------------------------------- designs (read, never computed)


def design_id(d: Any) -> str:
    return str(getattr(d, "id", None) or getattr(d, "filter_id", "F?"))


def design_filter(d: Any):
    sol = getattr(d, "solution", None)
    filt = getattr(sol, "filter", None) if sol is not None else None
    return filt if filt is not None else getattr(d, "filter", None)


def design_meets(d: Any) -> bool:
    sol = getattr(d, "solution", None)
    if hasattr(d, "meets"):
        return bool(d.meets)
    return bool(getattr(sol, "meets", False))


def design_cable_name(d: Any) -> str:
    cab = getattr(d, "cable", None)
    if cab is None:
        filt = design_filter(d)
        cab = getattr(filt, "cable", None)
    return str(getattr(cab, "name", cab) or getattr(d.requirement, "cable", ""))


def _location(req: Any) -> str:
    if getattr(req, "radio", None):
        side = {"rx": "receiver input", "tx": "transmitter output"}.get(req.side, str(req.side))
        if req.side == "tx" and getattr(req, "protects", None) in ("receiver", "both"):
            side = "radio port, " + ("in its receive path" if req.protects == "receiver"
                                     else "in its receive and transmit paths")
        return f"{req.radio} ({side})"
    return "ad-hoc design"


def design_title(d: Any) -> str:
    req = d.requirement
    if getattr(req, "radio", None):
        return f"{design_id(d)}: {getattr(req, 'label', f'{req.side} filter at {req.radio}')}"
    return f"{design_id(d)}: filter"


# ---------------------------------------------------------------- survey


MAX_THREAT_ROWS = 300
"""Rows of the plan's threat table at most (the worst groups); the JSON has every threat."""


MATRIX_MAX_RECEIVERS = 14
"""Above this many receivers the matrix is printed as a list of the worst pairs (a grid of
more columns does not fit a page); the JSON keeps the full matrix."""


def matrix_table(sv: Any, max_rows: int = MAX_THREAT_ROWS) -> Table:
    """Transmitter (rows) x receiver (columns): worst excess in dB; ``-`` where nothing reaches.

    On a site with more than :data:`MATRIX_MAX_RECEIVERS` receivers: the transmitter-receiver
    pairs over the limit, worst first (at most ``max_rows``).
    """
    m = sv.matrix()
    n = len(m.receivers)
    if n > MATRIX_MAX_RECEIVERS:
        pairs = [(v, tx, rx) for tx, row in zip(m.transmitters, m.excess_db, strict=True)
                 for rx, v in zip(m.receivers, row, strict=True) if v is not None and v > 0]  # fmt: skip
        pairs.sort(key=lambda p: -p[0])
        more = len(pairs) - max_rows
        return Table(
            title="Transmitter-receiver pairs over the limit, worst first (worst excess, dB)",
            header=("Transmitter", "Receiver", "Worst excess (dB)"),
            rows=tuple((tx, rx, f"{v:+.1f}") for v, tx, rx in pairs[:max_rows]),
            align=("left", "left", "right"), widths=(2.0, 2.0, 1.4),
            note=f"{len(m.transmitters)} transmitters x {n} receivers: too many for a grid; "
                 f"{len(pairs)} pairs over the limit" + (f", {more} not shown" if more > 0 else "")
                 + ". The plan's JSON has the full matrix (survey.matrix).",
        )
    rows = []
    for tx, row in zip(m.transmitters, m.excess_db, strict=True):
        rows.append((tx, *[DASH if v is None else f"{v:+.1f}" for v in row]))
    return Table(
        title="Worst excess over the receiver's limit, dB (transmitter row -> receiver column)",
        header=("TX \\ RX", *m.receivers), rows=tuple(rows),
        align=("left",) + ("right",) * n, widths=(1.6,) + (1.0,) * n,
        note="Positive: the receiver is hit by that much over its limit without filters. "
             "'-': the radio itself, or no path evaluated.",
    )


def threat_where(t: Any) -> str:
    """Where a stub helps: the filter locations the threat feeds, or the remedy when none."""
    locs = [f"{r} {s}" for r, s in t.filters]
    scen = tuple(getattr(t, "scenario", ()) or ())
    tail = "" if scen in ((), ("all at once",)) else " [scenario: " + ", ".join(scen) + "]"
    if locs:
        return ", ".join(locs) + tail
    if t.remedy.lower().startswith(("no stub", "not a stub job")):
        return t.remedy + tail
    return f"no stub: {t.remedy}" + tail


def on_band(names: str, t: Any) -> str:
    """``run (7-7.3 MHz)``: a band-switched radio with the band it works in this threat."""
    bands = dict(o.split(": ", 1) for o in (getattr(t, "operating", ()) or ()))
    return ", ".join(f"{n} ({bands[n]})" if n in bands else n for n in names.split(", "))


def threat_groups(threats: Sequence[Any]) -> list[tuple[Any, int]]:
    """The worst threat of each (sources, victim) pair, worst first, with the group's size.

    ``threats`` are worst first (as a survey gives them), so the first of a pair is its worst.
    """
    groups: dict[tuple[Any, ...], list] = {}
    for t in threats:
        key = (tuple(sorted(t.sources)), t.victim)
        g = groups.get(key)
        if g is None:
            groups[key] = [t, 1]
        else:
            g[1] += 1
    return [(t, n) for t, n in groups.values()]


def threat_table(sv: Any, max_rows: int = MAX_THREAT_ROWS) -> Table:
    """The worst threat per (sources, victim) pair; how many more each pair has; a row cap."""
    rows = []
    groups = threat_groups(sv.threats)
    for i, (t, n) in enumerate(groups[:max_rows], start=1):
        source = t.product if t.mechanism in ("intermod", "blocking") else on_band(", ".join(t.sources), t)
        rows.append((
            str(i), source, on_band(t.victim, t), t.mechanism, order_text(t), mhz4(t.f_mhz),
            db(t.level_dbm), db(t.threshold_dbm), db(t.excess_db), str(n - 1) if n > 1 else DASH,
            threat_where(t),
        ))
    left = sum(o + u for _, o, u in getattr(sv, "left_out", ()))
    more = []
    if len(groups) > max_rows:
        more.append(f"{len(groups) - max_rows} more source-victim pairs not shown")
    if left:
        more.append(f"{left} more products counted only (see the survey notes)")
    return Table(
        title="Threats, worst first (the worst of each source-victim pair)",
        header=("#", "Source", "Victim", "Mechanism", "Order", "Freq (MHz)", "Level (dBm)",
                "Limit (dBm)", "Excess (dB)", "More", "Stub helps at"),
        rows=tuple(rows),
        align=("right", "left", "left", "left", "right", "right", "right", "right", "right", "right",
               "left"),
        widths=(0.35, 1.6, 1.05, 0.95, 0.55, 0.85, 0.75, 0.75, 0.75, 0.45, 2.45),
        note="Level at the victim's receiver input; limit is its threshold; excess = level - limit. "
             "For intermodulation the source is the product that lands in the receiver. 'More': "
             "further threats of the same sources and victim, less severe; every threat is in the "
             "plan's JSON (survey.threats)." + (" " + "; ".join(more) + "." if more else "")
             + "".join(" " + n[:1].upper() + n[1:] + "." for n in _operating_notes(sv)),
    )


_OPERATING_NOTES = ("scenarios", "in no scenario", "radios working several bands", "installed filter")


def _operating_notes(sv: Any) -> list[str]:
    """What the survey took into account about how the site operates (scenarios,
    band-switched radios, installed filters), for the plan."""
    return [n for n in (getattr(sv, "notes", ()) or ()) if n.startswith(_OPERATING_NOTES)]


# ---------------------------------------------------------------- one filter


def requirement_table(d: Any) -> Table:
    """Each band the filter must pass or notch, what it must do and what the design gives.

    The figures are the solver's dense verification sweep (``solution.notches`` /
    ``solution.passes``) when present, else the tolerance run's nominal figures.
    """
    req = d.requirement
    sol = getattr(d, "solution", None)
    tol = getattr(d, "tolerance", None)
    sol_n = list(getattr(sol, "notches", ()) or ())
    sol_p = list(getattr(sol, "passes", ()) or ())
    tol_n = list(getattr(tol, "notches", ()) or ())
    tol_p = list(getattr(tol, "passes", ()) or ())
    reasons = list(getattr(req, "reasons", ()) or ())
    rows = []
    for k, n in enumerate(req.notches):
        if k < len(sol_n):
            got, ok = sol_n[k].worst_attenuation_db, sol_n[k].meets
        elif k < len(tol_n):
            got = tol_n[k].nominal_worst_db
            ok = got >= n.required_db
        else:
            got = ok = None
        why = reasons[k] if k < len(reasons) else ""
        prob = pct(tol_n[k].probability) if k < len(tol_n) else DASH
        rows.append(("notch", band_text(n.lo_mhz, n.hi_mhz), f">= {n.required_db:.1f} dB",
                     DASH if got is None else f"{got:.1f} dB",
                     DASH if ok is None else (MET if ok else NOT_MET), prob, _short(why, 48)))
    for k, b in enumerate(req.pass_bands):
        if k < len(sol_p):
            r = sol_p[k]
            il, swr, il_max, swr_max, ok = (r.worst_insertion_loss_db, r.worst_swr, r.max_insertion_loss_db,
                                            r.max_swr, r.meets)
        elif k < len(tol_p):
            r = tol_p[k]
            il, swr, il_max, swr_max = (r.nominal_worst_insertion_loss_db, r.nominal_worst_swr,
                                        r.max_insertion_loss_db, r.max_swr)
            ok = il <= il_max and swr <= swr_max
        else:
            rows.append(("pass", band_text(b.lo_mhz, b.hi_mhz), DASH, DASH, DASH, DASH, "wanted signal"))
            continue
        prob = pct(tol_p[k].probability) if k < len(tol_p) else DASH
        rows.append(("pass", band_text(b.lo_mhz, b.hi_mhz), f"IL <= {il_max:.2f} dB, SWR <= {swr_max:.2f}",
                     f"IL {il:.2f} dB, SWR {swr:.2f}", MET if ok else NOT_MET, prob, "wanted signal"))
    return Table(
        title="Requirements (worst case across each band, lossy cable model; builds: share of simulated "
              "builds that still meet it)",
        header=("Band", "Range", "Required", "Design gives", "Result", "Builds", "Why"),
        rows=tuple(rows), align=("left", "left", "left", "left", "left", "right", "left"),
        widths=(0.5, 1.6, 1.55, 1.45, 0.7, 0.6, 2.3),
        **({"note": band_use_text(req)} if getattr(req, "band_use", ()) else {}),
    )


def band_use_text(req: Any) -> str:
    """Which notches (numbered from 1 in the table's order) each band a radio works needs."""
    use = tuple(req.band_use)
    if len(use) == 1:
        return (f"Band-switched: this filter is in line only while {req.radio} works {use[0][0]}; "
                f"{req.radio} has one such filter per band that needs one.")  # fmt: skip
    parts = [f"on {band}: " + (", ".join(f"notch {k + 1}" for k in idx) if idx else "none")
             for band, idx in use]  # fmt: skip
    return (f"{req.radio} works one band at a time; this filter passes every band. Notches needed "
            "(a stub whose notch a band does not need may be switched out on it): " + "; ".join(parts) + ".")


def _short(s: str, n: int) -> str:
    return s if len(s) <= n else s[: n - 3].rstrip() + "..."


def cut_table(d: Any, units: str = "both") -> Table:
    """Every piece to cut, stubs then line sections: first cut, final length, trim target."""
    cable = design_cable_name(d)
    header: list[str] = ["Part", "Cable", "Kind", "First cut"]
    align: list[str] = ["left", "left", "left", "right"]
    widths: list[float] = [0.8, 0.8, 0.7, 1.7 if units == "both" else 0.9]
    if units in ("metric", "both"):
        header += ["Final (mm)"]
        align += ["right"]
        widths += [0.75]
    if units in ("imperial", "both"):
        header += ["Final (in)"]
        align += ["right"]
        widths += [0.95]
    header += ["Trim to (MHz)", "Trim (in/MHz)" if units == "imperial" else "Trim (mm/MHz)", "Tee"]
    align += ["right", "right", "right"]
    widths += [1.0, 0.9, 0.5]
    rows = []

    def finals(length_m: float) -> list[str]:
        out = []
        if units in ("metric", "both"):
            out.append(format_length(length_m, "metric").removesuffix(" mm"))
        if units in ("imperial", "both"):
            out.append(format_length(length_m, "imperial").removesuffix(" in"))
        return out

    for c in d.cuts:
        target = mhz(round(c.resonance_mhz, 4)) if getattr(c, "trimmable", True) else "cut, no trim"
        rate = (f"{c.trim_rate_mm_per_mhz / MM_PER_IN:.3f}" if units == "imperial"
                else f"{c.trim_rate_mm_per_mhz:.1f}")
        rows.append((c.stub_id, cable, f"{c.termination} stub", format_length(c.first_cut_m, units),
                     *finals(c.cut_length_m), target, rate, str(c.tee)))
    for x in getattr(d, "lines", ()) or ():
        a, b = x.between_tees
        if getattr(x, "barrel", False):
            rows.append((x.line_id, "-", "barrel", "no cable", *[DASH] * len(finals(x.length_m)),
                         "-", DASH, f"{a or 'radio'}-{b or 'antenna'}"))
        else:
            rows.append((x.line_id, cable, "line section", format_length(x.length_m, units),
                         *finals(x.length_m), "cut, no trim", DASH, f"{a or 'radio'}-{b or 'antenna'}"))
    hardware = list(getattr(d, "hardware", ()) or ())
    note = ("First cut: cut this long, fit the connector, then trim on an analyser to the resonance the "
            "stub exists for (Trim to: the quarter-wave order that makes its notch, as a notch through the "
            "tee; the trimming steps give it for the stub alone); final: about what is left. Line sections "
            "are cut to length: cable with a plug at each end.")
    if hardware:
        note += " Hardware: " + " ".join(h[:1].upper() + h[1:] + "." for h in hardware)
    note = lengths_in_units(note, units)
    plug = any("plug" in getattr(c, "reference_plane", "") and c.length_m == c.cut_length_m for c in d.cuts)
    return Table(
        title=("Cut list (stub lengths from the plug's mating face to the end, the plug included)"
               if plug else "Cut list (lengths from the connector's reference plane to the end; tee "
               "allowance already taken off)"),
        header=tuple(header), rows=tuple(rows), align=tuple(align), widths=tuple(widths), note=note,
    )


def tolerance_lines(d: Any, units: str = "both") -> tuple[str, ...]:
    """The tolerance run in two lines; per-band shares are in the requirements table."""
    from notchkit.buildyield import model_text

    t = getattr(d, "tolerance", None)
    if t is None:
        return ("Tolerance: not computed for this filter.",)
    target = getattr(d, "yield_target", None)
    aim = "" if target is None else f" (target {100.0 * target:g} %)"
    out = [
        f"Build yield: {pct(t.probability_all)} of {t.samples} simulated builds meet every requirement{aim}; "
        + lengths_in_units(f"the build: {model_text(t)}; seed {t.seed}.", units)
    ]
    sens = [(s, n) for n in t.notches for s in n.sensitivity]
    if sens:
        s, n = max(sens, key=lambda x: abs(x[0].db_per_mm))
        per = (f"{s.db_per_mm * MM_PER_IN:+.2f} dB per in" if units == "imperial"
               else f"{s.db_per_mm:+.2f} dB per mm")
        out.append(f"Most sensitive: {s.element_id}, {per} of length in the notch "
                   f"{band_text(n.lo_mhz, n.hi_mhz)} (95 % of builds give >= {n.p05_worst_db:.1f} dB there).")
    alts = getattr(getattr(d, "solution", None), "alternatives", ()) or ()
    for a in alts[:3]:
        y = DASH if a.build_yield is None else pct(a.build_yield)
        used = f"{a.total_cable_m:.2f} m" if units != "imperial" else format_length(a.total_cable_m, units)
        out.append(f"Alternative: {a.n_stubs} stub(s), {used} of cable, notch margin "
                   f"{a.margin_db:+.1f} dB, build yield {y}{'' if a.meets else ' (does not meet)'}: "
                   f"{a.arrangement}.")
    return tuple(out)


def power_table(d: Any) -> Table | None:
    pw = getattr(d, "power", None)
    if pw is None:
        return None
    rating = DASH if pw.rating_peak_v is None else f"{pw.rating_peak_v:.0f}"
    rows = []
    for s in pw.stubs:
        vm = DASH if s.voltage_margin is None else f"{s.voltage_margin:.1f}x"
        rows.append((s.stub_id, s.termination, f"{s.max_voltage_peak_v:.0f}", f"{s.end_voltage_peak_v:.0f}",
                     f"{s.max_current_peak_a:.2f}", f"{s.dissipated_w:.2f}", rating, vm))
    return Table(
        title=f"Power check at {pw.power_w:g} W, {mhz(pw.freq_mhz)} MHz (peak values; matched antenna side)",
        header=("Stub", "End", "Max V (pk)", "End V (pk)", "Max I (A pk)", "Heat (W)", "Rating (V pk)",
                "V margin"),
        rows=tuple(rows), align=("left", "left") + ("right",) * 6,
        widths=(0.8, 0.55, 0.85, 0.85, 0.9, 0.75, 0.95, 0.75),
    )


def power_lines(d: Any) -> tuple[str, ...]:
    pw = getattr(d, "power", None)
    if pw is None:
        req = d.requirement
        return (f"Power check: no transmitter's carrier flows through this filter "
                f"({_location(req)}); stub voltages stay at receive levels.",)
    out = [f"Delivered {pw.delivered_w:.1f} W, to the antenna side {pw.output_w:.1f} W, "
           f"dissipated in the filter {pw.total_dissipated_w:.2f} W."]
    if getattr(pw, "connectors", ()):  # connection hardware: every tee body, plug and barrel
        top = max(pw.connectors, key=lambda c: c.voltage_peak_v)
        rated = (f"rated {pw.connector_rating_peak_v:.0f} V peak, margin {top.margin:.1f}x"
                 if top.margin is not None else "no rating known")
        out.append(f"Connectors ({(pw.connector_family or '').upper()}): highest {top.voltage_peak_v:.0f} V "
                   f"peak at {top.where} ({rated}); "
                   + ", ".join(f"{c.where} {c.voltage_peak_v:.0f} V" for c in pw.connectors) + ".")
    out += [f"WARNING: {w}" for w in pw.warnings]
    out += list(pw.cautions)
    out += [n[:1].upper() + n[1:] for n in pw.notes]
    return tuple(out)


def trim_steps(d: Any, units: str = "both", plan_json: str = "PLAN.json") -> tuple[str, ...]:
    """The trimming steps; each stub's command and its target are for the same set-up (the
    stub alone, ``.s1p``), read back by ``notchkit trim`` from the same plan JSON. Every stub
    is trimmed at the resonance it exists for: the cut list's "Trim to" column (its order
    chosen by :func:`notchkit.cutlist.trim_resonance`), given here for the stub alone."""
    from notchkit.planfile import stub_alone_mhz

    cuts = list(d.cuts)
    with_tee = any(c.length_m > c.cut_length_m for c in cuts)
    where = ("The stub alone resonates higher than at the tee (the Trim to column) because the tee's "
             "path is missing; its own target is given with its command below." if with_tee else
             "With the connector hardware a stub's length ends at the tee's side port, so the stub alone "
             "is trimmed to the Trim to column itself (also given with its command below).")
    steps = [
        "1. Cut each stub to its FIRST CUT length (longer than the final length on purpose) and fit its "
        "connector; finish the end as listed (open: square and sealed; short: braid to centre, "
        "shortest joint).",
        "2. Calibrate the analyser at the end of its test cable, connect the stub alone there (no tee) and "
        "find the resonance the stub exists for: the Trim to column of the cut list, the stub's n-th "
        "quarter wave that makes its notch (given with its command below). A long stub shows many "
        "resonances: take the impedance minimum nearest its target, not the lowest one. " + where,
        "3. The resonance reads low because the stub is long: trim in small steps (the rate below is "
        f"{'inches' if units == 'imperial' else 'mm'} per MHz of error), re-measuring each time; stop at "
        "the target. Never trim past it.",
        "4. Or save the sweep of the stub alone (Touchstone .s1p) and let notchkit say how much to cut "
        "(after a first trim, add --length-m with the length now):",
    ]
    cable = design_cable_name(d)
    for c in cuts:
        if not getattr(c, "trimmable", True):
            steps.append(f"   {c.stub_id}: no resonance inside the analyser's range: cut to its final "
                         "length, do not trim")
            continue
        alone = stub_alone_mhz(c.resonance_mhz, c.length_m, c.cut_length_m)
        qw = f"{c.quarter_waves} quarter wave" + ("s" if c.quarter_waves != 1 else "")
        serves = getattr(c, "serves_notch_mhz", None)
        why = f" for the {mhz(round(serves, 4))} MHz notch" if serves is not None else ""
        steps.append(f"   notchkit trim SWEEP-{c.stub_id}.s1p --cable {cable} --plan {plan_json} "
                     f"--stub {c.stub_id} --plan-length first-cut   (stub alone: target "
                     f"{mhz(round(alone, 4))} MHz, the resonance of Trim to "
                     f"{mhz(round(c.resonance_mhz, 4))} MHz; "
                     f"{qw}{why}; {rate_text(c.cut_length_m / alone, units)})")
    steps.append("   A sweep through the tee with the stub in place (.s2p) works too: its target is the "
                 "Trim to column of the cut list.")
    steps.append("5. Assemble the filter, sweep it end to end and compare with the curve above before use "
                 "(notchkit verify checks the sweep against the requirements).")
    return tuple(steps)


def filter_text(d: Any, units: str = "both", plan_json: str = "PLAN.json") -> FilterText:
    filt = design_filter(d)
    meets = design_meets(d)
    req = d.requirement
    ids = element_ids(filt, design_id(d))
    stub_ids = [c.stub_id for c in d.cuts]
    stub_labels = []
    for c in d.cuts:
        if units == "both":
            length = (f"first cut {format_length(c.first_cut_m, 'metric')}\n"
                      f"({format_length(c.first_cut_m, 'imperial')})")
        else:
            length = f"first cut {format_length(c.first_cut_m, units)}"
        stub_labels.append(f"{c.stub_id} {c.termination}\n{length}")
    line_labels = [f"{i}: {format_length(e.length_m, units)}"
                   for i, e in zip(ids, filt.elements, strict=True) if e.kind == "line"]
    cable = getattr(filt, "cable", None)
    vf = getattr(cable, "velocity_factor", None)
    cable_label = f"All stubs and line sections: {design_cable_name(d)}" + (f", VF {vf:g}" if vf else "")
    tee_units = "imperial" if units == "imperial" else "metric"
    cable_label += (f"; tee allowance {format_length(filt.tee_allowance_m, tee_units)} per stub "
                    "(drawing not to scale)")
    if getattr(cable, "balanced", False):
        cable_label += ("; balanced line: each stub joins its tee through a 1:1 current balun, "
                        "its far end strapped (short) or insulated (open)")
    from notchkit.calibration import calibration_lines

    facts = [f"Location: {_location(req)}.", *calibration_lines([cable] if cable is not None else []),
             f"{len(stub_ids)} stub(s) on {len(filt.tees())} tee(s); "
             f"cable used {format_length(filt.total_cable_m, units)}."]
    cable_note = getattr(d, "cable_note", None)
    if isinstance(cable_note, str):
        facts.append(f"Cable loss: {cable_note}.")
    advice = getattr(d, "advice", None) or getattr(getattr(d, "solution", None), "advice", None) or ()
    if isinstance(advice, str):
        advice = (advice,)
    advice = [str(a) for a in advice]
    model = getattr(d, "model", None)
    if model is not None:  # what it was verified against, the load spread, the depth ceiling
        facts += [lengths_in_units(line, units) for line in model.lines]
    facts += advice[:_MAX_ADVICE]
    if len(advice) > _MAX_ADVICE:
        facts.append(f"... and {len(advice) - _MAX_ADVICE} more suggestions (the plan JSON lists them all).")
    is_tx = getattr(req, "side", None) == "tx"
    return FilterText(
        filter_id=design_id(d), title=design_title(d), meets=meets,
        verdict=(_met_verdict(d) if meets else _unmet_verdict(d)),
        facts=tuple(facts), requirements=requirement_table(d), cuts=cut_table(d, units),
        tolerance=tolerance_lines(d, units), power=power_table(d), power_lines=power_lines(d),
        trim_steps=trim_steps(d, units, plan_json), stub_labels=tuple(stub_labels),
        line_labels=tuple(line_labels), cable_label=cable_label,
        radio_label=(f"TX {req.radio}" if is_tx else f"RX {req.radio}") if req.radio else "RADIO",
        antenna_label="ANTENNA", build_yield=build_yield_text(d),
    )


def build_yield_text(d: Any) -> str:
    """``"98.5 %"`` (the build yield), or ``-`` when there is none."""
    t = getattr(d, "tolerance", None)
    return DASH if t is None else pct(t.probability_all)


def _met_verdict(d: Any) -> str:
    t = getattr(d, "tolerance", None)
    if t is None:
        return "Meets every requirement."
    return (f"Meets every requirement as designed; build yield {pct(t.probability_all)} of simulated builds "
            "(see Tolerance).")


def _unmet_verdict(d: Any) -> str:
    sol = getattr(d, "solution", None)
    t = getattr(d, "tolerance", None)
    if getattr(sol, "meets", False) and t is not None:
        target = getattr(d, "yield_target", None)
        aim = "" if target is None else f" (target {100.0 * target:g} %)"
        problems = getattr(d, "build_problems", ()) or ()
        why = "a part cannot be built" if problems else f"build yield only {pct(t.probability_all)}{aim}"
        return f"{NOT_MET}: meets as designed, but {why} (see the advice and Tolerance)."
    return f"{NOT_MET}: this filter does not meet every requirement (see the table below)."


# ---------------------------------------------------------------- labels


def tags(designs: Sequence[Any], units: str = "both") -> tuple[Tag, ...]:
    out = []
    for d in designs:
        cable = design_cable_name(d)
        req = d.requirement
        where = f"{req.side} {req.radio}" if getattr(req, "radio", None) else ""
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


def plan_text(*, site: Any, sv: Any, designs: Sequence[Any], date: str, version: str,
              units: str = "both", plan_json: str = "PLAN.json") -> PlanText:
    """Build every row of the plan from the site, the survey and the designs."""
    designs = list(designs)
    ftexts = tuple(filter_text(d, units, plan_json) for d in designs)
    unmet = tuple(f"{NOT_MET}: {f.title}" for f in ftexts if not f.meets)
    n_tx, n_rx = len(site.transmitters), len(site.receivers)
    threats = list(sv.threats)
    over = [t for t in threats if t.excess_db > 0]
    worst = max((t.excess_db for t in threats), default=None)
    n_stubs = sum(len(d.cuts) for d in designs)
    facts = (
        ("Site", site.name),
        ("Site file", _shown_path(site.path) or DASH),
        ("Date", date),
        ("Tool", f"notchkit {version}"),
        ("Radios", f"{len(site.radios)} ({n_tx} transmit, {n_rx} receive)"),
        ("Threats found", f"{len(threats)} ({len(over)} over the limit"
                          + (f", worst {worst:+.1f} dB)" if worst is not None else ")")),
        ("Filters designed", f"{len(designs)} with {n_stubs} stubs; "
                             f"{sum(f.meets for f in ftexts)} meet every requirement, "
                             f"{len(unmet)} do not"),
        ("Lengths in", {"both": "millimetres and inches", "metric": "millimetres",
                        "imperial": "inches"}[units]),
    )
    rows = []
    for d, f in zip(designs, ftexts, strict=True):
        req = d.requirement
        rows.append((f.filter_id, _location(req), str(len(d.cuts)), str(len(req.notches)),
                     str(len(req.pass_bands)), MET if f.meets else NOT_MET, build_yield_text(d)))
    filters_table = Table(title="Filters", header=("Filter", "Location", "Stubs", "Notches", "Pass bands",
                                                   "Result", "Build yield"),
                          rows=tuple(rows),
                          align=("left", "left", "right", "right", "right", "left", "right"),
                          widths=(0.6, 2.4, 0.6, 0.7, 0.8, 0.9, 0.8))
    verdict_line = ("every filter meets its requirements on the lossy cable model, in at least its target "
                    "share of simulated builds (build yield)." if designs
                    else "no filter is needed: no threat over the limit calls for a stub.")
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
