"""The plot of a trim measurement: |Z| (one port) or S21 (two ports) with the resonance and target."""

from __future__ import annotations

import io
import os
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from notchkit.errors import InputError
from notchkit.fileio import write_bytes_atomic
from notchkit.resonance import named

if TYPE_CHECKING:
    from skrf import Network

    from notchkit.trimming import TrimResult


def plot_measurement(network: Network, result: TrimResult, path: str | os.PathLike[str]) -> Path:
    """Plot the measurement with the measured resonance and the target marked.

    ``|Z|`` in ohms (log scale) for a one-port, ``S21`` in dB for a two-port,
    against frequency in MHz. Written atomically (temporary file, then
    ``os.replace``); matplotlib's global state is not touched.

    Raises
    ------
    InputError
        The folder does not exist or the file cannot be written.
    """
    out = Path(path)
    folder = out.parent if str(out.parent) else Path(".")
    if not folder.is_dir():
        raise named(InputError(f"png_path {out}: folder {folder} does not exist"), "png_path")
    if out.is_dir():
        raise named(InputError(f"png_path {out}: is a directory"), "png_path")
    data = measurement_png(network, result)
    try:
        write_bytes_atomic(out, data, what="png_path")
    except InputError as exc:
        raise named(exc, "png_path") from None
    return out


def measurement_png(network: Network, result: TrimResult) -> bytes:
    """The PNG bytes of :func:`plot_measurement`'s plot (for a caller that writes it together
    with other outputs, :func:`notchkit.fileio.write_all`)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    f_mhz = np.asarray(network.f, dtype=float) / 1e6
    fig = Figure(figsize=(8, 4.5), dpi=100)
    FigureCanvasAgg(fig)
    ax = fig.add_subplot(1, 1, 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        if network.nports == 1:
            z = np.abs(np.asarray(network.z[:, 0, 0]))
            ax.semilogy(f_mhz, z, color="tab:blue", lw=1.2, label="|Z| measured")
            ax.set_ylabel("|Z| input impedance (Ω)")
        else:
            s21 = 20.0 * np.log10(np.abs(np.asarray(network.s[:, 1, 0])))
            ax.plot(f_mhz, s21, color="tab:blue", lw=1.2, label="S21 measured")
            ax.set_ylabel("S21 (dB)")
    r = result.resonance
    ax.axvline(r.freq_mhz, color="tab:red", lw=1.0,
               label=f"measured resonance {r.freq_mhz:.4f} MHz")
    ax.axvline(result.target_mhz, color="tab:green", lw=1.0, ls="--",
               label=f"target {result.target_mhz:.4f} MHz")
    ax.set_xlabel("Frequency (MHz)")
    end = "open" if result.termination == "open" else "shorted"
    title = (f"{Path(result.measurement).name}: {end} stub, {result.cable}, "
             f"{result.quarter_waves} quarter waves")
    if result.cut_mm is not None:
        title += (f" - cut {result.cut_mm:.1f} mm" if not result.too_short
                  else f" - {-result.cut_mm:.1f} mm too short")
    ax.set_title(title, fontsize=10, usetex=False, parse_math=False)  # a "$" in a name is a "$"
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=8, loc="best")
    fig.tight_layout()
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    return buf.getvalue()
