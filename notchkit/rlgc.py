"""A physically consistent lossy coaxial line from a cable's published loss split.

The classic model takes ``gamma = alpha(f) + j 2 pi f / (c VF)`` with a real,
constant ``Z0``: exact for a lossless line, and close at VHF, but it ignores
that the conductor loss comes with internal inductance. A skin-effect
conductor has a surface impedance ``Zs = (1 + j) Rs``: its resistance and its
internal reactance are equal, ``omega L_int = R``. At HF this inductance slows
the wave noticeably (about 2 % at 7 MHz on RG-58) and makes ``Z0`` complex.

Per metre, from the cable's matched-loss split (:class:`notchkit.cables.Cable`:
the ``k_sqrt sqrt(f)`` conductor term and the ``k_lin f`` dielectric term)::

    v     = c VF                 (the published VF: the high-frequency limit)
    L_ext = Z_hf / v,  C = 1 / (Z_hf v)
    R     = 2 alpha_c Z_hf,  L = L_ext + R / omega
    G     = 2 alpha_d / Z_hf     (= omega C tan(delta), rising with f)
    Z0    = sqrt((R + j omega L) / (G + j omega C)),  gamma = sqrt((R + j omega L)(G + j omega C))

``R = 2 alpha_c Z0`` and ``G = 2 alpha_d / Z0`` are the low-loss relations
(Pozar, Microwave Engineering, 4th ed., eq. 2.85-2.86); ``omega L_int = R`` is
the surface impedance of a good conductor (Ramo, Whinnery and Van Duzer,
Fields and Waves in Communication Electronics, sec. 5.9; Pozar eq. 1.131).
To first order the phase constant rises by ``alpha_c``:
``beta ~ beta_0 + alpha_c`` (hand derivation in docs/hardware.md), so the
quarter wave shortens by ``alpha_c / beta_0``.

Valid where the skin depth is well below the conductor sizes (above about
1 MHz for the cables in the library); at DC the resistance does not vanish,
which this model does not claim to follow.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.lines import C0

NEPER_DB = 20.0 / np.log(10.0)  # dB per neper


def loss_split_np_per_m(cable, freq_hz: ArrayLike) -> tuple[NDArray, NDArray]:
    """``(alpha_c, alpha_d)`` in Np/m: the cable's own split when it has one, else ``k_sqrt`` / ``k_lin``."""
    split = getattr(cable, "alpha_split_np_per_m", None)
    if split is not None:
        a_c, a_d = split(freq_hz)
        return np.asarray(a_c, dtype=float), np.asarray(a_d, dtype=float)
    f_mhz = np.asarray(freq_hz, dtype=float) * 1e-6
    k = 0.01 / NEPER_DB
    return (float(getattr(cable, "k_sqrt", 0.0)) * np.sqrt(f_mhz) * k,
            float(getattr(cable, "k_lin", 0.0)) * f_mhz * k)


def rlgc(cable, freq_hz: ArrayLike) -> tuple[NDArray, NDArray, NDArray, NDArray]:
    """``(R, L, G, C)`` per metre (ohm/m, H/m, S/m, F/m) of ``cable`` at ``freq_hz``."""
    f = np.asarray(freq_hz, dtype=float)
    w = 2 * np.pi * f
    z_hf = float(cable.z0_ohm)
    v = C0 * float(cable.velocity_factor)
    a_c, a_d = loss_split_np_per_m(cable, f)
    r = 2.0 * a_c * z_hf
    ell = z_hf / v + r / w
    g = 2.0 * a_d / z_hf
    c = np.full(f.shape, 1.0 / (z_hf * v))
    return r, ell, g, c


def line_constants(cable, freq_hz: ArrayLike) -> tuple[NDArray[np.complex128], NDArray[np.complex128]]:
    """``(Z0(f), gamma(f))`` of the RLGC line: complex impedance (ohm) and propagation (1/m)."""
    f = np.asarray(freq_hz, dtype=float)
    w = 2 * np.pi * f
    r, ell, g, c = rlgc(cable, f)
    zser = r + 1j * w * ell
    ysh = g + 1j * w * c
    z0 = np.sqrt(zser / ysh)
    gam = np.sqrt(zser * ysh)
    gam = np.where(gam.real < 0, -gam, gam)
    return z0, gam


def phase_velocity_factor(cable, freq_hz: ArrayLike) -> NDArray[np.float64]:
    """The RLGC line's velocity factor ``omega / (beta c)`` at ``freq_hz`` (below the published VF at HF)."""
    f = np.asarray(freq_hz, dtype=float)
    _, gam = line_constants(cable, f)
    return 2 * np.pi * f / (gam.imag * C0)
