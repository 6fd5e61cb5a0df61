"""Short summaries of the main results: their ``repr()`` and their notebook display.

A result's generated dataclass ``repr`` prints every nested value (a design
report ran to some 60,000 characters). The main results use these two instead:

- ``summary_repr(obj)``: a few lines, the type's name, its key facts and a small
  table (at most :data:`MAX_ROWS` rows, then how many more);
- ``summary_html(obj)``: the same facts and table as HTML, which Jupyter and
  IPython show for ``_repr_html_``.

Both are built from one :class:`Summary`, so the two cannot disagree. A result
class opts in with two lines in its body::

    __repr__ = summary_repr
    _repr_html_ = summary_html

and one builder here (``_BUILDERS``, keyed by class name). The builders read
attributes only; this module imports nothing of notchkit at import time, so any
module can use it without an import cycle.

State words are the same everywhere a result is summarised: see :func:`state_word`.
"""

from __future__ import annotations

import html
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # for the type check only: at run time this module imports nothing of notchkit
    from notchkit.asbuilt import RecheckResult
    from notchkit.site.checked import SiteCheck
    from notchkit.siteplan import PlanResult
    from notchkit.synthesis import Design, DesignReport
    from notchkit.threats import SurveyResult
    from notchkit.trimming import TrimResult
    from notchkit.verification import VerifyResult

MAX_ROWS = 12
"""Table rows shown before "... N more"."""

MEETS = "meets"
DOES_NOT_MEET = "does not meet"
NOT_SHOWN = "not shown"


def state_word(meets: bool | None, *, loud: bool = False) -> str:
    """``"meets"``, ``"does not meet"`` or ``"not shown"`` (``None``: could not be measured).

    ``loud``: a failure in capitals (``"DOES NOT MEET"``), as printed plans and
    terminal reports show it so that it is not overlooked. These are the only
    pass/fail words of the terminal, the PDF, the HTML and the ``repr``.
    """
    if meets is None:
        return NOT_SHOWN
    if meets:
        return MEETS
    return DOES_NOT_MEET.upper() if loud else DOES_NOT_MEET


@dataclass(frozen=True, slots=True, kw_only=True)
class Summary:
    """What a result's ``repr`` and notebook display show."""

    title: str
    facts: tuple[tuple[str, str], ...] = ()
    header: tuple[str, ...] = ()
    rows: tuple[tuple[str, ...], ...] = ()

    def shown_rows(self) -> tuple[tuple[tuple[str, ...], ...], int]:
        """The rows shown and how many more there are."""
        return self.rows[:MAX_ROWS], max(0, len(self.rows) - MAX_ROWS)


def _fmt(x: float | None, spec: str = ".1f", unit: str = "") -> str:
    if x is None:
        return "-"
    return f"{x:{spec}}{(' ' + unit) if unit else ''}"


def _length(m: float | None) -> str:
    if m is None:
        return "-"
    from notchkit.cutlist import format_length

    return format_length(m, "both")


# ---------------------------------------------------------------- builders


def _survey(s: SurveyResult) -> Summary:
    threats = tuple(s.threats)
    over = sum(1 for t in threats if t.excess_db > 0)
    rows = tuple(
        (", ".join(t.sources), t.victim, t.mechanism, f"{t.f_mhz:.4f}".rstrip("0").rstrip("."),
         f"{t.excess_db:+.1f}", f"{t.required_db:.1f}")
        for t in threats
    )
    return Summary(
        title="SurveyResult",
        facts=(("site", s.site), ("transmitters", str(len(s.transmitters))),
               ("receivers", str(len(s.receivers))),
               ("threats", f"{len(threats)} ({over} above the receiver's threshold)"),
               ("filters needed", str(len(s.filters)))),
        header=("source", "victim", "mechanism", "freq (MHz)", "excess (dB)", "required (dB)"),
        rows=rows,
    )


def _design_row(d: Design) -> tuple[str, ...]:
    filt = d.solution.filter
    return (d.id, d.where, str(len(d.cuts)), _length(getattr(filt, "total_cable_m", None)),
            f"{d.solution.margin_db:+.1f}", state_word(d.meets))


_DESIGN_HEADER = ("filter", "location", "stubs", "cable used", "margin (dB)", "result")


def _design_report(r: DesignReport) -> Summary:
    return Summary(
        title="DesignReport",
        facts=(("site", r.site_name or "-"), ("filters", str(len(r.designs))),
               ("state", state_word(r.meets))),
        header=_DESIGN_HEADER,
        rows=tuple(_design_row(d) for d in r.designs),
    )


def _design(d: Design) -> Summary:
    cable = getattr(d.cable, "name", str(d.cable))
    return Summary(
        title="Design",
        facts=(("filter", d.id), ("where", d.where), ("cable", cable),
               ("margin", _fmt(d.solution.margin_db, "+.1f", "dB")), ("state", state_word(d.meets))),
        header=("stub", "end", "cut length", "first cut", "resonance (MHz)", "quarter waves"),
        rows=tuple((c.stub_id, str(c.termination), _length(c.cut_length_m), _length(c.first_cut_m),
                    f"{c.resonance_mhz:.3f}", str(c.quarter_waves)) for c in d.cuts),
    )


def _plan(p: PlanResult) -> Summary:
    facts = [("site", p.site_name), ("date", p.date), ("state", state_word(p.meets)),
             ("pdf", f"{p.pdf} ({p.pages} pages)")]
    if p.html is not None:
        facts.append(("html", str(p.html)))
    if p.outdir is not None:
        facts.append(("outdir", f"{p.outdir} ({len(p.files)} files)"))
    designs = getattr(p.design, "designs", ())
    return Summary(title="PlanResult", facts=tuple(facts), header=_DESIGN_HEADER,
                   rows=tuple(_design_row(d) for d in designs))


def _trim(t: TrimResult) -> Summary:
    return Summary(
        title="TrimResult",
        facts=(("measurement", t.measurement), ("cable", t.cable), ("end", str(t.termination)),
               ("quarter waves", str(t.quarter_waves)),
               ("target", f"{t.target_mhz:.4f} MHz ({t.target_source})"),
               ("resonance", f"{t.resonance.freq_mhz:.4f} MHz"),
               ("velocity factor", _fmt(t.velocity_factor, ".4f")),
               ("present length", _length(t.present_length_m)),
               ("cut off", _length(t.cut_m)),
               ("advice", t.advice)),
    )


def _verify(v: VerifyResult) -> Summary:
    return Summary(
        title="VerifyResult",
        facts=(("measurement", v.measurement), ("plan", v.plan), ("filter", f"{v.filter_id} ({v.where})"),
               ("state", state_word(v.meets))),
        header=("band", "range (MHz)", "quantity", "required", "measured", "result"),
        rows=tuple((c.kind, f"{c.lo_mhz:g}-{c.hi_mhz:g}", c.quantity, f"{c.required:g}",
                    _fmt(c.measured, ".2f"), state_word(c.meets)) for c in v.checks),
    )


def _recheck(r: RecheckResult) -> Summary:
    return Summary(
        title="RecheckResult",
        facts=(("plan", r.plan), ("measured", ", ".join(f"{k}: {v}" for k, v in r.measured.items()) or "-"),
               ("state", state_word(r.meets))),
        header=("source", "victim", "mechanism", "range (MHz)", "required (dB)", "designed (dB)",
                "as built (dB)", "result"),
        rows=tuple((t.source, t.victim, t.mechanism, f"{t.lo_mhz:g}-{t.hi_mhz:g}", f"{t.required_db:.1f}",
                    _fmt(t.designed_db), _fmt(t.as_built_db), state_word(t.meets)) for t in r.threats),
    )


def _site_check(c: SiteCheck) -> Summary:
    return Summary(
        title="SiteCheck",
        facts=(("site", c.name), ("file", c.path), ("default cable", c.cable),
               ("radios", str(len(c.radios))), ("couplings", str(len(c.couplings)))),
        header=("name", "role", "freq (MHz)", "power (W)", "stubs"),
        rows=tuple((r.name, r.role, r.mhz, _fmt(r.power_w, "g"), r.stub_cable) for r in c.radios),
    )


_BUILDERS: dict[str, Callable[[Any], Summary]] = {  # each takes its own type: Any is their union
    "SurveyResult": _survey,
    "DesignReport": _design_report,
    "Design": _design,
    "PlanResult": _plan,
    "TrimResult": _trim,
    "VerifyResult": _verify,
    "RecheckResult": _recheck,
    "SiteCheck": _site_check,
}


def summary(obj: object) -> Summary:
    """The :class:`Summary` of one of the main results (``TypeError`` for anything else)."""
    build = _BUILDERS.get(type(obj).__name__)
    if build is None:
        raise TypeError(f"no summary for {type(obj).__name__}")
    return build(obj)


# ---------------------------------------------------------------- rendering


def _text_table(header: tuple[str, ...], rows: Iterable[tuple[str, ...]]) -> list[str]:
    rows = list(rows)
    widths = [max(len(r[i]) for r in [header, *rows]) for i in range(len(header))]
    return ["  " + "  ".join(c.ljust(w) for c, w in zip(r, widths, strict=True)).rstrip()
            for r in [header, *rows]]


def summary_repr(obj: object) -> str:
    """A few lines: ``<Type: fact, fact ...>`` and a small table."""
    s = summary(obj)
    head = f"<{s.title} " + ", ".join(f"{k}: {v}" for k, v in s.facts) + ">"
    if not s.header:
        return head
    shown, more = s.shown_rows()
    lines = [head, *_text_table(s.header, shown)]
    if more:
        lines.append(f"  ... {more} more")
    return "\n".join(lines)


def summary_html(obj: object) -> str:
    """The same summary as an HTML fragment (facts, then the table)."""
    s = summary(obj)
    e = html.escape
    out = [f"<div><strong>{e(s.title)}</strong>", "<table>"]
    out += [f"<tr><th style=\"text-align:left\">{e(k)}</th><td style=\"text-align:left\">{e(v)}</td></tr>"
            for k, v in s.facts]
    out.append("</table>")
    if s.header:
        shown, more = s.shown_rows()
        out.append("<table>")
        out.append("<tr>" + "".join(f"<th>{e(h)}</th>" for h in s.header) + "</tr>")
        out += ["<tr>" + "".join(f"<td>{e(c)}</td>" for c in r) + "</tr>" for r in shown]
        out.append("</table>")
        if more:
            out.append(f"<p>... {more} more</p>")
    out.append("</div>")
    return "\n".join(out)
