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
from typing import TYPE_CHECKING, Any, Protocol

import numpy as np
from numpy.typing import NDArray

from notchkit.filters import Filter, evaluate
from notchkit.lines import db20
from notchkit.report.files import write_bytes_atomic, write_text_atomic

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

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


class BandLike(Protocol):
    """Anything with a band's edges in MHz (a site band, a notch spec, a :class:`Span`)."""

    @property
    def lo_mhz(self) -> float: ...

    @property
    def hi_mhz(self) -> float: ...


BandInput = BandLike | Sequence[float | None]
"""A band as an object with ``lo_mhz``/``hi_mhz`` or as ``(lo, hi[, limit])`` in MHz."""


@dataclass(frozen=True, slots=True, kw_only=True)
class FilterPart:
    """What a filter's page draws besides its text: the filter, its curve and its bands."""

    filt: Filter
    curve: CurveData
    passes: Sequence[Span]
    """The pass bands with their insertion-loss limit."""
    notches: Sequence[Span]
    """The notch bands with their required attenuation."""


def _spans(items: Iterable[BandInput] | None, limit_attr: str | None) -> list[Span]:
    out = []
    for it in items or ():
        if isinstance(it, Span):
            out.append(it)
            continue
        if isinstance(it, Sequence):
            lo, hi = float(it[0] or 0.0), float(it[1] or 0.0)
            lim = float(it[2]) if len(it) > 2 and it[2] is not None else None
        else:
            lo, hi = float(it.lo_mhz), float(it.hi_mhz)
            val = getattr(it, limit_attr, None) if limit_attr else None
            lim = None if val is None else float(val)
        out.append(Span(lo_mhz=min(lo, hi), hi_mhz=max(lo, hi), limit_db=lim))
    return out


def pass_spans(pass_bands: Iterable[BandInput], max_il_db: float | None = None) -> list[Span]:
    """Pass bands (objects with ``lo_mhz``/``hi_mhz`` or ``(lo, hi)`` pairs) with one IL limit."""
    return [Span(lo_mhz=s.lo_mhz, hi_mhz=s.hi_mhz, limit_db=max_il_db if s.limit_db is None else s.limit_db)
            for s in _spans(pass_bands, None)]


def notch_spans(notches: Iterable[BandInput]) -> list[Span]:
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


MPL_RC = {"svg.fonttype": "none", "hatch.linewidth": 0.6, "axes.linewidth": 0.8, "axes.unicode_minus": False,
          "pdf.fonttype": 42, "font.family": "DejaVu Sans", "text.usetex": False, "text.parse_math": False}
"""matplotlib settings the PNG images render under (in ``rc_context``; nothing global). Text is
drawn as written: no TeX, no mathtext (a ``$`` in a cable or radio name is a dollar sign)."""
@dataclass(frozen=True, slots=True)
class LineStyle:
    """A black line: width and dash pattern (on, off, ... lengths), both in points."""

    width: float
    dash: tuple[float, ...] | None = None

    def mpl(self) -> str | tuple[float, tuple[float, ...]]:
        """matplotlib's ``linestyle`` for it (matplotlib scales dashes by the line width)."""
        return "-" if self.dash is None else (0, tuple(d / self.width for d in self.dash))


@dataclass(frozen=True, slots=True)
class BandStyle:
    """A shaded band: fill grey (None: none), hatch grey, and the hatch ("///" or "xx")."""

    fill: float | None
    edge: float
    hatch: str


S21_STYLE = LineStyle(1.3)
S11_STYLE = LineStyle(0.8, (3.2, 1.6))
IL_STYLE = LineStyle(1.6, (10.24, 2.56, 1.6, 2.56))  # dash-dot
REQ_STYLE = LineStyle(2.4)
PASS_STYLE = BandStyle(None, 0.45, "///")
NOTCH_STYLE = BandStyle(0.88, 0.3, "xx")
"""How every renderer draws the curve plot: S21 solid, S11 dashed, the insertion-loss limit
dash-dot, the required attenuation heavy; pass bands hatched one way, notch bands grey and
cross-hatched (readable in black-and-white print)."""
LEGEND = {"s21": "S21 (transmission)", "s11": "S11 (reflection)", "pass": "pass band",
          "il": "insertion-loss limit", "notch": "notch band", "req": "required attenuation"}
_LOG_SUBS = ((1.0, 1.5, 2.0, 3.0, 5.0, 7.0), (1.0, 2.0, 5.0), (1.0,))


@dataclass(frozen=True, slots=True, kw_only=True)
class PlotLayout:
    """What a curve plot shows, decided once for every renderer (matplotlib, PDF).

    ``xticks``/``yticks`` are ``(value, label)``; ``passes``/``notches`` are
    ``(lo, hi, limit_db or None)`` in MHz as drawn (a band too narrow to see is
    widened to 0.6 % of the axis); ``legend`` lists the :data:`LEGEND` keys shown.
    """

    xlim: tuple[float, float]
    ylim: tuple[float, float]
    log_axis: bool
    xticks: tuple[tuple[float, str], ...]
    yticks: tuple[tuple[float, str], ...]
    passes: tuple[tuple[float, float, float | None], ...]
    notches: tuple[tuple[float, float, float | None], ...]
    legend: tuple[str, ...]


def _decimals(step: float) -> int:
    """Digits after the point that spell every multiple of ``step`` exactly (to 1e-9)."""
    for d in range(7):
        if abs(step * 10**d - round(step * 10**d)) < 1e-6 * max(1.0, step * 10**d):
            return d
    return 6


def linear_ticks(lo: float, hi: float, nbins: int = 7,
                 steps: Sequence[float] = (1.0, 2.0, 2.5, 5.0, 10.0)) -> tuple[tuple[float, str], ...]:
    """Tick values at the smallest "nice" step (``steps`` x a power of ten) that gives at
    most ``nbins`` intervals across ``lo..hi``, with labels to the step's decimals."""
    if not hi > lo:
        raise ValueError("tick range must have hi > lo")
    raw = (hi - lo) / nbins
    mag = 10.0 ** np.floor(np.log10(raw))
    step = next((s * mag for s in steps if s * mag >= raw * (1 - 1e-9)), 10.0 * mag)
    k0, k1 = int(np.ceil(lo / step - 1e-9)), int(np.floor(hi / step + 1e-9))
    d = _decimals(step)
    out = []
    for k in range(k0, k1 + 1):
        v = k * step
        label = f"{v:.{d}f}"
        out.append((float(v), "0" if float(label) == 0 else label))
    return tuple(out)


def log_ticks(lo: float, hi: float, max_ticks: int = 12) -> tuple[tuple[float, str], ...]:
    """Ticks at 1, 1.5, 2, 3, 5 and 7 x each power of ten inside ``lo..hi`` (fewer
    multiples when that would be more than ``max_ticks``), labelled as plain numbers."""
    if not (hi > lo > 0):
        raise ValueError("log ticks need 0 < lo < hi")
    ticks: list[float] = []
    for subs in _LOG_SUBS:
        ticks = [m * 10.0**e for e in range(int(np.floor(np.log10(lo))), int(np.ceil(np.log10(hi))) + 1)
                 for m in subs if lo * (1 - 1e-9) <= m * 10.0**e <= hi * (1 + 1e-9)]
        if len(ticks) <= max_ticks:
            break
    return tuple((float(v), f"{v:.6g}") for v in ticks)


def plot_layout(curve: CurveData, pass_bands: Sequence[Span], notches: Sequence[Span], *,
                show_s11: bool = True) -> PlotLayout:
    """Limits, ticks, bands and legend of the curve plot (see :class:`PlotLayout`)."""
    f = curve.freq_mhz
    xlo, xhi = float(f[0]), float(f[-1])
    deepest_req = max([s.limit_db or 0.0 for s in notches] + [0.0])
    data_min = float(np.min(curve.s21_db))
    bottom = max(min(data_min, -deepest_req) - 10.0, -(deepest_req + 40.0), -120.0)
    ylim = (bottom, 3.0)
    xticks = log_ticks(xlo, xhi) if curve.log_axis else linear_ticks(xlo, xhi, 8)
    yticks = linear_ticks(*ylim, 7, steps=(1.0, 2.0, 5.0, 10.0))
    passes = tuple((*_visible(s.lo_mhz, s.hi_mhz, xlo, xhi, curve.log_axis), s.limit_db) for s in pass_bands)
    notch = tuple((*_visible(s.lo_mhz, s.hi_mhz, xlo, xhi, curve.log_axis), s.limit_db) for s in notches)
    legend = ["s21", *(["s11"] if show_s11 else [])]
    if pass_bands:
        legend.append("pass")
        if any(s.limit_db is not None for s in pass_bands):
            legend.append("il")
    if notches:
        legend += ["notch", "req"]
    return PlotLayout(xlim=(xlo, xhi), ylim=ylim, log_axis=curve.log_axis, xticks=xticks, yticks=yticks,
                      passes=passes, notches=notch, legend=tuple(legend))


def draw_curve(ax: Axes, curve: CurveData, pass_bands: Sequence[Span], notches: Sequence[Span],
               *, title: str | None = None, fontsize: float = 8.0, show_s11: bool = True) -> None:
    """Draw the S21 (and S11) curve with hatched bands and requirement lines on matplotlib ``ax``."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    lay = plot_layout(curve, pass_bands, notches, show_s11=show_s11)
    f = curve.freq_mhz
    ax.plot(f, curve.s21_db, color="black", linewidth=S21_STYLE.width, label=LEGEND["s21"])
    s11_kw: dict[str, Any] = {"color": "black", "linewidth": S11_STYLE.width, "linestyle": S11_STYLE.mpl()}
    il_kw: dict[str, Any] = {"color": "black", "linewidth": IL_STYLE.width, "linestyle": IL_STYLE.mpl()}

    def band_kw(st: BandStyle) -> dict[str, Any]:
        return {"facecolor": "none" if st.fill is None else str(st.fill), "edgecolor": str(st.edge),
                "hatch": st.hatch}

    if show_s11:
        ax.plot(f, curve.s11_db, label=LEGEND["s11"], **s11_kw)
    for a, b, lim in lay.passes:
        ax.axvspan(a, b, linewidth=0.0, **band_kw(PASS_STYLE))
        if lim is not None:
            ax.plot([a, b], [-lim, -lim], **il_kw)
    for a, b, lim in lay.notches:
        ax.axvspan(a, b, linewidth=0.0, **band_kw(NOTCH_STYLE))
        if lim is not None:
            ax.plot([a, b], [-lim, -lim], color="black", linewidth=REQ_STYLE.width, solid_capstyle="butt")
            ax.plot([0.5 * (a + b)], [-lim], marker="v", color="black", markersize=4)
    if lay.log_axis:
        ax.set_xscale("log")
        from matplotlib.ticker import NullLocator

        ax.xaxis.set_minor_locator(NullLocator())  # minor ticks cost time and add nothing here
    ax.set_xticks([v for v, _ in lay.xticks], [t for _, t in lay.xticks])
    ax.set_yticks([v for v, _ in lay.yticks], [t for _, t in lay.yticks])
    ax.set_xlim(*lay.xlim)
    ax.set_ylim(*lay.ylim)
    ax.set_xlabel("Frequency (MHz)", fontsize=fontsize)
    ax.set_ylabel("S21, S11 (dB)", fontsize=fontsize)
    ax.tick_params(labelsize=fontsize - 1)
    ax.grid(True, color="0.8", linewidth=0.5)
    if title:
        # y given: matplotlib then skips measuring every tick label to place the title
        # (nothing is drawn above the axes), a quarter of the time of a curve.
        ax.set_title(title, fontsize=fontsize + 1, y=1.0)
    kinds = {
        "s21": Line2D([], [], color="black", linewidth=S21_STYLE.width),
        "s11": Line2D([], [], **s11_kw),
        "pass": Patch(**band_kw(PASS_STYLE)),
        "il": Line2D([], [], **il_kw),
        "notch": Patch(**band_kw(NOTCH_STYLE)),
        "req": Line2D([], [], color="black", linewidth=REQ_STYLE.width, marker="v", markersize=4),
    }
    handles = [kinds[k] for k in lay.legend]
    for k, h in zip(lay.legend, handles, strict=True):
        h.set_label(LEGEND[k])
    # Below the x label: tick labels and the label take about 3.3 font sizes.
    fig = ax.get_figure(root=True)
    height_in = ax.get_position().height * (fig.get_figheight() if fig is not None else 1.0)
    below = 3.4 * fontsize / 72.0 / max(height_in, 1e-6)
    ax.legend(handles=handles, fontsize=fontsize - 1.5, loc="upper center", bbox_to_anchor=(0.5, -below),
              framealpha=1.0, edgecolor="black", ncol=3)


def curve_figure(curve: CurveData, pass_bands: Sequence[Span], notches: Sequence[Span], *,
                 title: str | None = None, width_in: float = 7.0, height_in: float = 3.2,
                 fontsize: float = 8.0, show_s11: bool = True) -> Figure:
    """A new matplotlib Figure (no pyplot) with :func:`draw_curve` on it."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in))
    left, right, bottom, top = 0.6, 0.15, 0.9, 0.3  # inches: y label; margin; x label + legend; title
    ax = fig.add_axes((left / width_in, bottom / height_in, 1 - (left + right) / width_in,
                       1 - (bottom + top) / height_in))
    draw_curve(ax, curve, pass_bands, notches, title=title, fontsize=fontsize, show_s11=show_s11)
    return fig


def figure_bytes(fig: Figure, fmt: str = "png", dpi: int = 150) -> bytes:
    """Render a Figure to bytes (PNG or SVG) without pyplot."""
    import matplotlib

    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        fig.savefig(buf, format=fmt, dpi=dpi)
    return buf.getvalue()


def write_figure_png(fig: Figure, path: str | os.PathLike, dpi: int = 150) -> Path:
    """Write a Figure as PNG atomically."""
    return write_bytes_atomic(path, figure_bytes(fig, "png", dpi))
