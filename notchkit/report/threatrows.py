"""The survey's rows: the transmitter x receiver matrix and the threat table.

The plan (PDF, HTML) and ``notchkit survey`` on a terminal print these same
tables (:class:`notchkit.report.rows.Table`).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING

from notchkit.report.rows import DASH, Table, db, mhz4, order_text, short_location

if TYPE_CHECKING:
    from notchkit.threats import SurveyResult, Threat

MAX_THREAT_ROWS = 300
"""Rows of the plan's threat table at most (the worst groups); the JSON has every threat."""


MATRIX_MAX_RECEIVERS = 14
"""Above this many receivers the matrix is printed as a list of the worst pairs (a grid of
more columns does not fit a page); the JSON keeps the full matrix."""


def matrix_table(sv: SurveyResult, max_rows: int = MAX_THREAT_ROWS, *,
                 json: str = "The plan's JSON") -> Table:
    """Transmitter (rows) x receiver (columns): worst excess in dB; ``-`` where nothing reaches.

    ``json`` names where the full matrix is (the plan's JSON, or ``survey --json``).

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
                 + f". {json} has the full matrix (survey.matrix).",
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


def threat_where(t: Threat, places: Mapping[tuple[str, str], str] | None = None) -> str:
    """Where a stub helps: the filter locations the threat feeds (``places``: their names by
    radio and side, as the filters table prints them), or the remedy when none."""
    places = places or {}
    locs = [places.get((r, s), f"{r} {s}") for r, s in t.filters]
    scen = tuple(getattr(t, "scenario", ()) or ())
    tail = "" if scen in ((), ("all at once",)) else " [scenario: " + ", ".join(scen) + "]"
    if locs:
        return ", ".join(locs) + tail
    if t.remedy.lower().startswith(("no stub", "not a stub job")):
        return t.remedy + tail
    return f"no stub: {t.remedy}" + tail


def on_band(names: str, t: Threat) -> str:
    """``run (7-7.3 MHz)``: a band-switched radio with the band it works in this threat."""
    bands = dict(o.split(": ", 1) for o in (getattr(t, "operating", ()) or ()))
    return ", ".join(f"{n} ({bands[n]})" if n in bands else n for n in names.split(", "))


def threat_groups(threats: Sequence[Threat]) -> list[tuple[Threat, int]]:
    """The worst threat of each (sources, victim) pair, worst first, with the group's size.

    ``threats`` are worst first (as a survey gives them), so the first of a pair is its worst.
    """
    groups: dict[tuple[tuple[str, ...], str], list] = {}
    for t in threats:
        key = (tuple(sorted(t.sources)), t.victim)
        g = groups.get(key)
        if g is None:
            groups[key] = [t, 1]
        else:
            g[1] += 1
    return [(t, n) for t, n in groups.values()]


def threat_table(sv: SurveyResult, max_rows: int = MAX_THREAT_ROWS, *,
                 json: str = "The plan's JSON") -> Table:
    """The worst threat per (sources, victim) pair; how many more each pair has; a row cap."""
    rows = []
    places = {(req.radio, str(req.side)): short_location(req) for req in sv.filters if req.radio}
    groups = threat_groups(sv.threats)
    for i, (t, n) in enumerate(groups[:max_rows], start=1):
        source = t.product if t.mechanism in ("intermod", "blocking") else on_band(", ".join(t.sources), t)
        rows.append((
            str(i), source, on_band(t.victim, t), t.mechanism, order_text(t), mhz4(t.f_mhz),
            db(t.level_dbm), db(t.threshold_dbm), db(t.excess_db), str(n - 1) if n > 1 else DASH,
            threat_where(t, places),
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
             "further threats of the same sources and victim, less severe; every threat is in "
             f"{json[:1].lower()}{json[1:]} (survey.threats)."
             + (" " + "; ".join(more) + "." if more else "")
             + "".join(" " + n[:1].upper() + n[1:] + "." for n in _operating_notes(sv)),
    )


_OPERATING_NOTES = ("scenarios", "in no scenario", "radios working several bands", "installed filter")


def _operating_notes(sv: SurveyResult) -> list[str]:
    """What the survey took into account about how the site operates (scenarios,
    band-switched radios, installed filters), for the plan."""
    return [n for n in (getattr(sv, "notes", ()) or ()) if n.startswith(_OPERATING_NOTES)]

