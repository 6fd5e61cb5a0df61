"""Attenuation curves of a filter: the data (S21, S11 in dB over MHz), the plot, and CSV.

The curve covers every pass and notch band of the filter's requirement, on a
logarithmic frequency axis when the bands span more than 3:1 and a linear one
otherwise, with extra points inside each band so a narrow notch is resolved.
Bands are shaded with hatching (readable in black-and-white print) and each
requirement is drawn as a line: the required attenuation across a notch band,
the insertion-loss limit across a pass band.

matplotlib is imported inside the functions; nothing changes global style.
"""

from __future__ import annotations

import io
import os
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import NDArray

from notchkit.filters import Filter, evaluate
from notchkit.lines import db20
from notchkit.report.files import write_bytes_atomic, write_text_atomic

LOG_AXIS_RATIO = 3.0
"""Use a logarithmic frequency axis when the highest band edge exceeds this many
times the lowest."""
_POINTS = 601
_POINTS_PER_BAND = 41
_FLOOR_DB = -300.0  # db20 of an exact zero would be -inf; CSV and plots need finite numbers


@dataclass(frozen=True, slots=True, kw_only=True)
class Span:
    """A frequency band in MHz with an optional requirement in dB.

    For a notch ``limit_db`` is the required attenuation (positive); for a pass
    band it is the largest insertion loss allowed (positive); ``None``: not drawn.
    """

    lo_mhz: float
    hi_mhz: float
    limit_db: float | None = None
    label: str = ""


@dataclass(frozen=True, slots=True, kw_only=True)
class CurveData:
    """A filter's response on the plotting grid."""

    freq_mhz: NDArray[np.float64]
    s21_db: NDArray[np.float64]
    s11_db: NDArray[np.float64]
    log_axis: bool

    def rows(self) -> list[tuple[float, float, float]]:
        return list(zip(self.freq_mhz.tolist(), self.s21_db.tolist(), self.s11_db.tolist(), strict=True))


def _spans(items: Iterable[Any] | None, limit_attr: str | None) -> list[Span]:
    out = []
    for it in items or ():
        if isinstance(it, Span):
            out.append(it)
            continue
        if isinstance(it, tuple | list):
            lo, hi = float(it[0]), float(it[1])
            lim = float(it[2]) if len(it) > 2 and it[2] is not None else None
        else:
            lo, hi = float(it.lo_mhz), float(it.hi_mhz)
            val = getattr(it, limit_attr, None) if limit_attr else None
            lim = None if val is None else float(val)
        out.append(Span(lo_mhz=min(lo, hi), hi_mhz=max(lo, hi), limit_db=lim))
    return out


def pass_spans(pass_bands: Iterable[Any], max_il_db: float | None = None) -> list[Span]:
    """Pass bands (objects with ``lo_mhz``/``hi_mhz`` or ``(lo, hi)`` pairs) with one IL limit."""
    return [Span(lo_mhz=s.lo_mhz, hi_mhz=s.hi_mhz, limit_db=max_il_db if s.limit_db is None else s.limit_db)
            for s in _spans(pass_bands, None)]


def notch_spans(notches: Iterable[Any]) -> list[Span]:
    """Notch bands (objects with ``lo_mhz``, ``hi_mhz``, ``required_db``, or tuples)."""
    return _spans(notches, "required_db")


def curve_grid(spans: Sequence[Span], n: int = _POINTS) -> tuple[NDArray[np.float64], bool]:
    """Frequencies in MHz covering every span with margin, and whether the axis is logarithmic.

    The grid is ``n`` points (geometric on a log axis, even otherwise) plus
    :data:`_POINTS_PER_BAND` points inside each band, sorted and unique.
    """
    if not spans:
        raise ValueError("a curve needs at least one band")
    lo = min(s.lo_mhz for s in spans)
    hi = max(s.hi_mhz for s in spans)
    log_axis = hi / lo > LOG_AXIS_RATIO
    if log_axis:
        f = np.geomspace(lo / 1.25, hi * 1.25, n)
    else:
        pad = max(0.15 * (hi - lo), 0.03 * 0.5 * (lo + hi), 0.5)
        f = np.linspace(max(lo - pad, 0.01 * lo), hi + pad, n)
    extra = [np.linspace(s.lo_mhz, s.hi_mhz, _POINTS_PER_BAND) for s in spans]
    return np.unique(np.concatenate([f, *extra])), bool(log_axis)


def curve_data(filt: Filter, spans: Sequence[Span], *, n: int = _POINTS, z_system: float = 50.0) -> CurveData:
    """Evaluate ``filt`` on :func:`curve_grid` of ``spans``.

    Returns
    -------
    CurveData
        ``s21_db = 20 log10 |S21|`` and ``s11_db = 20 log10 |S11|`` from
        :func:`notchkit.filters.evaluate` (the same model as the Touchstone
        export), floored at -300 dB so every value is finite.
    """
    f_mhz, log_axis = curve_grid(spans, n)
    s = evaluate(filt, f_mhz * 1e6, z_system)
    with np.errstate(divide="ignore"):
        s21 = np.maximum(db20(s[:, 1, 0]), _FLOOR_DB)
        s11 = np.maximum(db20(s[:, 0, 0]), _FLOOR_DB)
    return CurveData(freq_mhz=f_mhz, s21_db=np.asarray(s21, float), s11_db=np.asarray(s11, float),
                     log_axis=log_axis)


def curve_csv_text(curve: CurveData) -> str:
    """The curve as CSV: ``freq_mhz,s21_db,s11_db`` header, one row per frequency."""
    lines = ["freq_mhz,s21_db,s11_db"]
    lines += [f"{f:.6f},{a:.4f},{b:.4f}" for f, a, b in curve.rows()]
    return "\n".join(lines) + "\n"


def write_curve_csv(curve: CurveData, path: str | os.PathLike) -> Path:
    """Write :func:`curve_csv_text` atomically."""
    return write_text_atomic(path, curve_csv_text(curve))


def _visible(lo: float, hi: float, xlo: float, xhi: float, log_axis: bool) -> tuple[float, float]:
    """Widen a band that would be too narrow to see to 0.6 % of the axis (drawing only)."""
    if log_axis:
        min_w = 0.006 * np.log(xhi / xlo)
        c = 0.5 * (np.log(lo) + np.log(hi))
        if np.log(hi / lo) < min_w:
            return float(np.exp(c - min_w / 2)), float(np.exp(c + min_w / 2))
        return lo, hi
    min_w = 0.006 * (xhi - xlo)
    if hi - lo < min_w:
        c = 0.5 * (lo + hi)
        return c - min_w / 2, c + min_w / 2
    return lo, hi


def draw_curve(ax: Any, curve: CurveData, pass_bands: Sequence[Span], notches: Sequence[Span],
               *, title: str | None = None, fontsize: float = 8.0, show_s11: bool = True) -> None:
    """Draw the S21 (and S11) curve with hatched bands and requirement lines on ``ax``."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    f = curve.freq_mhz
    xlo, xhi = float(f[0]), float(f[-1])
    ax.plot(f, curve.s21_db, color="black", linewidth=1.3, label="S21 (transmission)")
    if show_s11:
        ax.plot(f, curve.s11_db, color="black", linewidth=0.8, linestyle=(0, (4, 2)),
                label="S11 (reflection)")
    deepest_req = max([s.limit_db or 0.0 for s in notches] + [0.0])
    for s in pass_bands:
        a, b = _visible(s.lo_mhz, s.hi_mhz, xlo, xhi, curve.log_axis)
        ax.axvspan(a, b, facecolor="none", edgecolor="0.45", hatch="///", linewidth=0.0)
        if s.limit_db is not None:
            ax.plot([a, b], [-s.limit_db, -s.limit_db], color="black", linewidth=1.6, linestyle="-.")
    for s in notches:
        a, b = _visible(s.lo_mhz, s.hi_mhz, xlo, xhi, curve.log_axis)
        ax.axvspan(a, b, facecolor="0.88", edgecolor="0.3", hatch="xx", linewidth=0.0)
        if s.limit_db is not None:
            ax.plot([a, b], [-s.limit_db, -s.limit_db], color="black", linewidth=2.4,
                    solid_capstyle="butt")
            ax.plot([0.5 * (a + b)], [-s.limit_db], marker="v", color="black", markersize=4)
    if curve.log_axis:
        ax.set_xscale("log")
        from matplotlib.ticker import LogLocator, NullLocator, ScalarFormatter

        ax.xaxis.set_major_locator(LogLocator(base=10, subs=(1.0, 1.5, 2.0, 3.0, 5.0, 7.0)))
        fmt = ScalarFormatter()
        fmt.set_scientific(False)
        ax.xaxis.set_major_formatter(fmt)
        ax.xaxis.set_minor_locator(NullLocator())  # minor ticks cost time and add nothing here
    ax.set_xlim(xlo, xhi)
    data_min = float(np.min(curve.s21_db))
    bottom = max(min(data_min, -deepest_req) - 10.0, -(deepest_req + 40.0), -120.0)
    ax.set_ylim(bottom, 3.0)
    from matplotlib.ticker import MaxNLocator

    ax.yaxis.set_major_locator(MaxNLocator(nbins=7, steps=[1, 2, 5, 10]))
    ax.set_xlabel("Frequency (MHz)", fontsize=fontsize)
    ax.set_ylabel("S21, S11 (dB)", fontsize=fontsize)
    ax.tick_params(labelsize=fontsize - 1)
    ax.grid(True, color="0.8", linewidth=0.5)
    if title:
        # y given: matplotlib then skips measuring every tick label to place the title
        # (nothing is drawn above the axes), a quarter of the time of a curve.
        ax.set_title(title, fontsize=fontsize + 1, y=1.0)
    handles = [
        Line2D([], [], color="black", linewidth=1.3, label="S21 (transmission)"),
    ]
    if show_s11:
        handles.append(Line2D([], [], color="black", linewidth=0.8, linestyle=(0, (4, 2)),
                              label="S11 (reflection)"))
    if pass_bands:
        handles.append(Patch(facecolor="none", edgecolor="0.45", hatch="///", label="pass band"))
        if any(s.limit_db is not None for s in pass_bands):
            handles.append(Line2D([], [], color="black", linewidth=1.6, linestyle="-.",
                                  label="insertion-loss limit"))
    if notches:
        handles.append(Patch(facecolor="0.88", edgecolor="0.3", hatch="xx", label="notch band"))
        handles.append(Line2D([], [], color="black", linewidth=2.4, marker="v", markersize=4,
                              label="required attenuation"))
    # Below the x label: tick labels and the label take about 3.3 font sizes.
    fig = ax.get_figure()
    height_in = ax.get_position().height * fig.get_figheight()
    below = 3.4 * fontsize / 72.0 / max(height_in, 1e-6)
    ax.legend(handles=handles, fontsize=fontsize - 1.5, loc="upper center", bbox_to_anchor=(0.5, -below),
              framealpha=1.0, edgecolor="black", ncol=3)


def curve_figure(curve: CurveData, pass_bands: Sequence[Span], notches: Sequence[Span], *,
                 title: str | None = None, width_in: float = 7.0, height_in: float = 3.2,
                 fontsize: float = 8.0, show_s11: bool = True):
    """A new matplotlib Figure (no pyplot) with :func:`draw_curve` on it."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in))
    left, right, bottom, top = 0.6, 0.15, 0.9, 0.3  # inches: y label; margin; x label + legend; title
    ax = fig.add_axes((left / width_in, bottom / height_in, 1 - (left + right) / width_in,
                       1 - (bottom + top) / height_in))
    draw_curve(ax, curve, pass_bands, notches, title=title, fontsize=fontsize, show_s11=show_s11)
    return fig


def figure_bytes(fig: Any, fmt: str = "png", dpi: int = 150) -> bytes:
    """Render a Figure to bytes (PNG or SVG) without pyplot."""
    import matplotlib

    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        fig.savefig(buf, format=fmt, dpi=dpi)
    return buf.getvalue()


def write_figure_png(fig: Any, path: str | os.PathLike, dpi: int = 150) -> Path:
    """Write a Figure as PNG atomically."""
    return write_bytes_atomic(path, figure_bytes(fig, "png", dpi))
