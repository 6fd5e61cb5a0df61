"""One filter's rows: requirements, cut list, tolerance, power check, trimming steps.

:func:`filter_text` gathers them into a :class:`FilterText`, everything a
filter's page prints (PDF, HTML); ``notchkit design`` prints the same tables
on a terminal.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from notchkit.buildyield import element_ids
from notchkit.cutlist import format_length
from notchkit.report.rows import (
    DASH,
    MET,
    MM_PER_IN,
    NOT_MET,
    Table,
    band_text,
    design_cable_name,
    design_filter,
    design_id,
    design_meets,
    design_title,
    lengths_in_units,
    location_text,
    mhz,
    pct,
    rate_text,
)

if TYPE_CHECKING:
    from notchkit.requirements import FilterRequirement
    from notchkit.synthesis import Design

_MAX_ADVICE = 3


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



def requirement_table(d: Design) -> Table:
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


def band_use_text(req: FilterRequirement) -> str:
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


def cut_table(d: Design, units: str = "both") -> Table:
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
    alone = any(getattr(c, "trimmed_alone", False) for c in d.cuts)
    trim_to = ("Trim to: the stub alone, swept at its plug's mating face, at the quarter-wave order that "
               "makes its notch; through the tee the notch sits lower, where the design puts it, since the "
               "tee's side arm adds length" if alone else
               "Trim to: the quarter-wave order that makes its notch, as a notch through the tee; the "
               "trimming steps give it for the stub alone")
    note = ("First cut: cut this long, fit the connector, then trim on an analyser to the resonance the "
            f"stub exists for ({trim_to}); final: about what is left. Line sections "
            "are cut to length: cable with a plug at each end.")
    if hardware:
        note += " Hardware: " + " ".join(h[:1].upper() + h[1:] + "." for h in hardware)
    note = lengths_in_units(note, units)
    return Table(
        title=("Cut list (stub lengths from the plug's mating face to the end, the plug included)"
               if alone else "Cut list (lengths from the connector's reference plane to the end; tee "
               "allowance already taken off)"),
        header=tuple(header), rows=tuple(rows), align=tuple(align), widths=tuple(widths), note=note,
    )


def tolerance_lines(d: Design, units: str = "both") -> tuple[str, ...]:
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


def power_table(d: Design) -> Table | None:
    """Each stub at the carrier: voltage, end voltage or current, heat (in all and the hottest
    metre), against the cable's rating."""
    pw = getattr(d, "power", None)
    if pw is None:
        return None
    rating = DASH if pw.rating_peak_v is None else f"{pw.rating_peak_v:.0f}"
    rows = []
    for s in pw.stubs:
        vm = DASH if s.voltage_margin is None else f"{s.voltage_margin:.1f}x"
        rows.append((s.stub_id, s.termination, f"{s.max_voltage_peak_v:.0f}", f"{s.end_voltage_peak_v:.0f}",
                     f"{s.end_current_peak_a:.2f}", f"{s.max_current_peak_a:.2f}", f"{s.dissipated_w:.2f}",
                     f"{s.peak_heat_w_per_m:.2f}", rating, vm))
    return Table(
        title=(f"Power check at {pw.power_w:g} W, {mhz(pw.freq_mhz)} MHz on {pw.cable}: "
               f"{pw.delivered_w:.1f} W delivered, {pw.output_w:.1f} W to the antenna side, "
               f"{pw.total_dissipated_w:.2f} W heat in the filter (peak values; matched antenna side)"),
        header=("Stub", "End", "Max V (pk)", "End V (pk)", "End I (A pk)", "Max I (A pk)", "Heat (W)",
                "Hottest (W/m)", "Rating (V pk)", "V margin"),
        rows=tuple(rows), align=("left", "left") + ("right",) * 8,
        widths=(0.8, 0.55, 0.8, 0.8, 0.85, 0.85, 0.7, 0.9, 0.9, 0.7),
    )


def power_lines(d: Design) -> tuple[str, ...]:
    pw = getattr(d, "power", None)
    if pw is None:
        req = d.requirement
        return (f"Power check: no transmitter's carrier flows through this filter "
                f"({location_text(req)}); stub voltages stay at receive levels.",)
    out = []  # the delivered power is in the stub table's title
    if pw.nodes:  # the through line at each port and tee, against a matched line
        out.append("Through line (peak; times a matched line): " + ", ".join(
            f"{n.where} {n.voltage_peak_v:.0f} V ({n.ratio_to_matched:.2f}x)" for n in pw.nodes) + ".")
    if getattr(pw, "connectors", ()):  # connection hardware: every tee body, plug and barrel
        rated = (f"rated {pw.connector_rating_peak_v:.0f} V peak" if pw.connector_rating_peak_v
                 else "no rating known")
        out.append(f"Connectors ({(pw.connector_family or '').upper()}, {rated}; margin): "
                   + ", ".join(f"{c.where} {c.voltage_peak_v:.0f} V"
                               + (f" ({c.margin:.1f}x)" if c.margin is not None else "")
                               for c in pw.connectors) + ".")
    out += [f"WARNING: {w}" for w in pw.warnings]
    out += list(pw.cautions)
    out += [n[:1].upper() + n[1:] + ("" if n.endswith(".") else ".") for n in pw.notes]
    return tuple(out)


def trim_steps(d: Design, units: str = "both", plan_json: str = "PLAN.json") -> tuple[str, ...]:
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


def filter_text(d: Design, units: str = "both", plan_json: str = "PLAN.json") -> FilterText:
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
    if filt.tee_allowance_m > 0:  # none with connection hardware: the tee's arms are modelled
        cable_label += f"; tee allowance {format_length(filt.tee_allowance_m, tee_units)} per stub"
    cable_label += " (drawing not to scale)"
    if getattr(cable, "balanced", False):
        cable_label += ("; balanced line: each stub joins its tee through a 1:1 current balun, "
                        "its far end strapped (short) or insulated (open)")
    from notchkit.calibration import calibration_lines

    facts = [f"Location: {location_text(req)}.", *calibration_lines([cable] if cable is not None else []),
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
        verdict=verdict_text(d),
        facts=tuple(facts), requirements=requirement_table(d), cuts=cut_table(d, units),
        tolerance=tolerance_lines(d, units), power=power_table(d), power_lines=power_lines(d),
        trim_steps=trim_steps(d, units, plan_json), stub_labels=tuple(stub_labels),
        line_labels=tuple(line_labels), cable_label=cable_label,
        radio_label=(f"TX {req.radio}" if is_tx else f"RX {req.radio}") if req.radio else "RADIO",
        antenna_label="ANTENNA", build_yield=build_yield_text(d),
    )


def build_yield_text(d: Design) -> str:
    """``"98.5 %"`` (the build yield), or ``-`` when there is none."""
    t = getattr(d, "tolerance", None)
    return DASH if t is None else pct(t.probability_all)


def verdict_text(d: Design) -> str:
    """The filter's verdict as its page and the terminal print it."""
    return _met_verdict(d) if design_meets(d) else _unmet_verdict(d)


def _met_verdict(d: Design) -> str:
    t = getattr(d, "tolerance", None)
    if t is None:
        return "Meets every requirement."
    return (f"Meets every requirement as designed; build yield {pct(t.probability_all)} of simulated builds "
            "(see Tolerance).")


def _unmet_verdict(d: Design) -> str:
    sol = getattr(d, "solution", None)
    t = getattr(d, "tolerance", None)
    if getattr(sol, "meets", False) and t is not None:
        target = getattr(d, "yield_target", None)
        aim = "" if target is None else f" (target {100.0 * target:g} %)"
        problems = getattr(d, "build_problems", ()) or ()
        why = "a part cannot be built" if problems else f"build yield only {pct(t.probability_all)}{aim}"
        return f"{NOT_MET}: meets as designed, but {why} (see the advice and Tolerance)."
    return f"{NOT_MET}: this filter does not meet every requirement (see the table below)."

