"""Antenna-to-antenna isolation estimates from positions and gains.

All functions work on numpy arrays (broadcasting) so the survey can evaluate
every path of a large site at once.

Formulas
--------
Free-space basic transmission loss, ITU-R Recommendation P.525 (eq. for
point-to-point links)::

    L_bf = 32.45 + 20 log10 f(MHz) + 20 log10 d(km)            dB

Horizontal, vertical and slant separation isolation as used in site
engineering (cellular and repeater installation practice; far-field,
half-wave-dipole-like antennas)::

    I_h = 22 + 20 log10(d_h / lambda) - (G_a + G_b)           horizontal
    I_v = 28 + 40 log10(d_v / lambda)                          vertical (collinear, stacked)
    I_s = I_h + (I_v - I_h) * theta / 90deg,  theta = atan(d_v / d_h)   slanted

``22`` is 20 log10(4 pi) = 21.98 rounded, so I_h is the free-space loss minus
the antenna gains; the survey uses P.525 itself for purely horizontal spacing
and the I_h form inside the slant combination.

Validity: far field and d >> lambda for I_h / P.525; the vertical formula is for
collinear vertical dipoles stacked on one axis with d_v > lambda (each sits in
the other's pattern null, hence no gain term). Below those distances the
formulas are extrapolated and the result says so; a physical floor of
:data:`ISOLATION_FLOOR_DB` always applies, and co-located antennas (closer
than :data:`COLOCATED_M`) get the floor, so every estimate is finite.

Near field: the survey passes ``near_field_db``; then no formula is used where
the antennas are closer than lambda/(2 pi) (:func:`near_field_m`, the radian
distance where the reactive field of a small antenna equals its radiated
field): the isolation there is that documented conservative bound (default 0
dB, the passive limit) unless a coupling was measured.
"""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

C0_M_PER_S = 299_792_458.0
"""Speed of light in vacuum, m/s (SI, exact)."""

ISOLATION_FLOOR_DB = 0.0
"""Smallest isolation an estimate may give: a passive antenna pair cannot deliver
more power to the second port than is fed to the first (0 dB). Near-field
extrapolations of the formulas can fall below it; measured coupling can replace it."""

COLOCATED_M = 0.01
"""Antennas closer than this (m) are treated as co-located: isolation = floor."""

# Method codes returned by estimate_isolation_db.
COLOCATED = 1
HORIZONTAL = 2
VERTICAL = 3
SLANT = 4
NEAR_FIELD = 5

METHOD_NAMES = {
    COLOCATED: "co-located antennas (d < 1 cm): physical floor {floor:g} dB",
    HORIZONTAL: "free space ITU-R P.525, 32.45 + 20log f + 20log d_km - Ga - Gb (d_h={dh:.2f} m)",
    VERTICAL: "vertical separation 28 + 40log(d_v/lambda) (d_v={dv:.2f} m)",
    SLANT: "slant I_h + (I_v - I_h)*theta/90, theta=atan(d_v/d_h) (d_h={dh:.2f} m, d_v={dv:.2f} m)",
    NEAR_FIELD: "near field: d={d:.2f} m < lambda/(2 pi) = {r:.2f} m, no formula used; "
    "conservative bound {bound:g} dB (measure the coupling to do better)",
}


def near_field_m(freq_mhz: npt.ArrayLike) -> np.ndarray:
    """The radian distance lambda / (2 pi), m: inside it the reactive near field dominates.

    References
    ----------
    The reactive/radiating boundary of an electrically small antenna at
    r = lambda / 2 pi, where the 1/r^3, 1/r^2 and 1/r field terms are equal in
    magnitude (Hertzian dipole fields; e.g. Balanis, Antenna Theory, ch. 4).
    """
    return wavelength_m(freq_mhz) / (2.0 * np.pi)


def wavelength_m(freq_mhz: npt.ArrayLike) -> np.ndarray:
    """Free-space wavelength in metres, lambda = c / f."""
    return C0_M_PER_S / (np.asarray(freq_mhz, dtype=float) * 1e6)


def free_space_loss_db(freq_mhz: npt.ArrayLike, distance_m: npt.ArrayLike) -> np.ndarray:
    """Basic free-space transmission loss between isotropic antennas.

    Parameters
    ----------
    freq_mhz : array_like
        Frequency, MHz (> 0).
    distance_m : array_like
        Path length, m (> 0).

    Returns
    -------
    ndarray
        Loss in dB.

    Notes
    -----
    L_bf = 32.45 + 20 log10 f(MHz) + 20 log10 d(km).

    References
    ----------
    ITU-R Recommendation P.525, "Calculation of free-space attenuation".
    """
    f = np.asarray(freq_mhz, dtype=float)
    d_km = np.asarray(distance_m, dtype=float) / 1000.0
    return 32.45 + 20.0 * np.log10(f) + 20.0 * np.log10(d_km)


def horizontal_isolation_db(
    freq_mhz: npt.ArrayLike, dh_m: npt.ArrayLike, gain_a_dbi: npt.ArrayLike, gain_b_dbi: npt.ArrayLike
) -> np.ndarray:
    """Isolation of horizontally separated antennas, I_h = 22 + 20 log10(d/lambda) - (Ga + Gb).

    Valid in the far field with d >> lambda (site-engineering practice).
    """
    ratio = np.asarray(dh_m, dtype=float) / wavelength_m(freq_mhz)
    return 22.0 + 20.0 * np.log10(ratio) - (np.asarray(gain_a_dbi) + np.asarray(gain_b_dbi))


def vertical_isolation_db(freq_mhz: npt.ArrayLike, dv_m: npt.ArrayLike) -> np.ndarray:
    """Isolation of vertically stacked collinear dipoles, I_v = 28 + 40 log10(d/lambda).

    Valid for d_v > lambda (site-engineering practice).
    """
    ratio = np.asarray(dv_m, dtype=float) / wavelength_m(freq_mhz)
    return 28.0 + 40.0 * np.log10(ratio)


def slant_isolation_db(
    freq_mhz: npt.ArrayLike,
    dh_m: npt.ArrayLike,
    dv_m: npt.ArrayLike,
    gain_a_dbi: npt.ArrayLike,
    gain_b_dbi: npt.ArrayLike,
) -> np.ndarray:
    """Isolation of antennas offset both ways: I_h + (I_v - I_h) * theta / 90 degrees."""
    theta_deg = np.degrees(np.arctan2(np.asarray(dv_m, float), np.asarray(dh_m, float)))
    ih = horizontal_isolation_db(freq_mhz, dh_m, gain_a_dbi, gain_b_dbi)
    iv = vertical_isolation_db(freq_mhz, dv_m)
    return ih + (iv - ih) * theta_deg / 90.0


def estimate_isolation_db(
    freq_mhz: npt.ArrayLike,
    dh_m: npt.ArrayLike,
    dv_m: npt.ArrayLike,
    gain_a_dbi: npt.ArrayLike,
    gain_b_dbi: npt.ArrayLike,
    *,
    near_field_db: float | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Estimate isolation, choosing the formula by geometry.

    Parameters
    ----------
    freq_mhz : array_like
        Frequency of the signal crossing the path, MHz.
    dh_m, dv_m : array_like
        Horizontal and vertical (height) separation of the antennas, m (>= 0).
    gain_a_dbi, gain_b_dbi : array_like
        Antenna gains toward each other, dBi.
    near_field_db : float, optional
        Conservative bound used instead of any formula where the antennas are
        closer than lambda/(2 pi) (method :data:`NEAR_FIELD`); ``None``: the
        formulas are extrapolated (the old behaviour, reported as such).

    Returns
    -------
    isolation_db : ndarray
        Finite isolation in dB, never below :data:`ISOLATION_FLOOR_DB`.
    method : ndarray of int
        :data:`COLOCATED`, :data:`HORIZONTAL`, :data:`VERTICAL` or :data:`SLANT`.

    Notes
    -----
    Horizontal only (d_v < 1 cm): ITU-R P.525 minus the gains. Vertical only
    (d_h < 1 cm): the stacked-dipole formula. Otherwise the slant combination.
    Distances below 1 cm are clipped before taking logarithms so the result
    stays finite; the floor then applies.
    """
    f, dh, dv, ga, gb = np.broadcast_arrays(
        np.asarray(freq_mhz, float),
        np.abs(np.asarray(dh_m, float)),
        np.abs(np.asarray(dv_m, float)),
        np.asarray(gain_a_dbi, float),
        np.asarray(gain_b_dbi, float),
    )
    d = np.hypot(dh, dv)
    dh_c = np.maximum(dh, COLOCATED_M)
    dv_c = np.maximum(dv, COLOCATED_M)
    horiz = free_space_loss_db(f, dh_c) - ga - gb
    vert = vertical_isolation_db(f, dv_c)
    slant = slant_isolation_db(f, dh_c, dv_c, ga, gb)
    method = np.full(f.shape, SLANT, dtype=int)
    method = np.where(dv < COLOCATED_M, HORIZONTAL, method)
    method = np.where(dh < COLOCATED_M, VERTICAL, method)
    method = np.where(d < COLOCATED_M, COLOCATED, method)
    iso = np.select(
        [method == COLOCATED, method == HORIZONTAL, method == VERTICAL],
        [np.full(f.shape, ISOLATION_FLOOR_DB), horiz, vert],
        slant,
    )
    iso = np.maximum(iso, ISOLATION_FLOOR_DB)
    if near_field_db is not None:
        near = d < near_field_m(f)
        method = np.where(near & (method != COLOCATED), NEAR_FIELD, method)
        iso = np.where(near, max(float(near_field_db), ISOLATION_FLOOR_DB), iso)
    return iso, method


def describe_estimate(
    method: int, freq_mhz: float, dh_m: float, dv_m: float, iso_db: float,
    *, near_field_db: float | None = None,
) -> str:
    """``"estimated: <formula>"`` or ``"bound: ..."`` text for one path, with validity remarks."""
    lam = float(wavelength_m(freq_mhz))
    if method == NEAR_FIELD:
        return "bound: " + METHOD_NAMES[NEAR_FIELD].format(
            d=float(np.hypot(dh_m, dv_m)), r=lam / (2.0 * np.pi),
            bound=near_field_db if near_field_db is not None else iso_db,
        )
    text = METHOD_NAMES[int(method)].format(floor=ISOLATION_FLOOR_DB, dh=dh_m, dv=dv_m)
    if method == COLOCATED:
        return "bound: " + text
    remarks = []
    d = float(np.hypot(dh_m, dv_m))
    if method != COLOCATED and d < lam:
        remarks.append(f"d < lambda ({lam:.2f} m): near field, formula extrapolated")
    if method != COLOCATED and iso_db <= ISOLATION_FLOOR_DB:
        remarks.append(f"floor {ISOLATION_FLOOR_DB:g} dB applied")
    if remarks:
        text += "; " + "; ".join(remarks)
    return "estimated: " + text
