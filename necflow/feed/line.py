"""Transmission-line physics: RLGC from nominal data, propagation, ABCD,
standing wave along the line.

All functions are vectorised over frequency; lengths in metres, RMS phasors.
Distances along a line are measured from its antenna end (port 2).
"""

from __future__ import annotations

import math

import numpy as np

#: Speed of light in vacuum [m/s].
C0 = 299_792_458.0


def rlgc_from_nominal(f, z0: float, vf: float, alpha_c, alpha_d):
    """Per-unit-length R, L, G, C of a line from its nominal data.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    z0 : float
        Nominal (lossless) characteristic impedance [ohm].
    vf : float
        Velocity factor [-].
    alpha_c, alpha_d : array_like
        Conductor and dielectric parts of the matched attenuation [Np/m].

    Returns
    -------
    r, l, g, c : ndarray
        [ohm/m], [H/m], [S/m], [F/m], each ``(nfreq,)``.

    Notes
    -----
    ``L = Z0 / v``, ``C = 1 / (Z0 v)``, ``v = VF c``; the low-loss relations
    ``alpha_c = R / (2 Z0)`` and ``alpha_d = G Z0 / 2`` give
    ``R = 2 Z0 alpha_c`` and ``G = 2 alpha_d / Z0``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.1
       and 2.7 (lumped-element line model, low-loss attenuation).
    .. [2] S. Ramo, J. R. Whinnery, T. Van Duzer, *Fields and Waves in
       Communication Electronics*, 3rd ed., Wiley 1994, ch. 5.
    """
    f = np.atleast_1d(np.asarray(f, dtype=float))
    v = vf * C0
    ones = np.ones_like(f)
    r = 2.0 * z0 * np.asarray(alpha_c, dtype=float) * ones
    g = 2.0 * np.asarray(alpha_d, dtype=float) / z0 * ones
    return r, z0 / v * ones, g, 1.0 / (z0 * v) * ones


def propagation_rlgc(f, r, l, g, c):
    """Propagation constant and characteristic impedance from RLGC.

    Parameters
    ----------
    f : array_like
        Frequency [Hz].
    r, l, g, c : array_like
        Per-unit-length parameters [ohm/m], [H/m], [S/m], [F/m].

    Returns
    -------
    gamma : ndarray
        ``sqrt((R + jwL)(G + jwC))`` [1/m], real part >= 0.
    zc : ndarray
        ``sqrt((R + jwL)/(G + jwC))`` [ohm], complex when the line is lossy
        (noticeably so on lossy coax at the low HF bands).

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, eqs.
       (2.5) and (2.7).
    """
    w = 2.0 * math.pi * np.atleast_1d(np.asarray(f, dtype=float))
    zs = r + 1j * w * l
    yp = g + 1j * w * c
    gamma = np.sqrt(zs * yp)
    gamma = np.where(gamma.real < 0, -gamma, gamma)
    zc = zs / gamma
    return gamma, zc


def propagation_real_z0(f, z0: float, vf: float, alpha):
    """Propagation constant and impedance of a line with a real Z0.

    ``gamma = alpha + j 2 pi f / (VF c)``, ``Zc = Z0``: the textbook lossy
    line with the lossless characteristic impedance, exact for a
    distortionless line (R/L = G/C).

    Parameters
    ----------
    f : array_like
        Frequency [Hz].
    z0 : float
        Characteristic impedance [ohm], real.
    vf : float
        Velocity factor [-].
    alpha : array_like
        Attenuation [Np/m].

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.7
       (distortionless line).
    """
    f = np.atleast_1d(np.asarray(f, dtype=float))
    gamma = np.asarray(alpha, dtype=float) + 1j * 2.0 * math.pi * f / (vf * C0)
    return gamma, np.full(f.shape, complex(z0))


def line_abcd(gamma, zc, length) -> np.ndarray:
    """ABCD of uniform line sections, one design or a batch of variants.

    ``[[cosh gl, Zc sinh gl], [sinh gl / Zc, cosh gl]]``.

    Parameters
    ----------
    gamma : array_like
        Propagation constant [1/m], ``(nfreq,)``, or ``(..., nfreq)`` with
        leading variant axes (one line type per variant).
    zc : array_like
        Characteristic impedance [ohm], scalar or shaped like ``gamma``.
    length : float or array_like
        Physical length [m]: a number, or an array of the variant axes alone
        (``(nvar,)`` for one axis), one length per variant; a frequency axis
        is appended to it.

    Returns
    -------
    ndarray
        ``(nfreq, 2, 2)`` complex for a scalar length and ``gamma`` of one
        line type, else ``(..., nfreq, 2, 2)`` with the variant axes of
        ``length`` and ``gamma`` broadcast.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table
       4.1 (transmission line, lossy form with ``gamma l``).
    """
    gl = np.atleast_1d(np.asarray(gamma, dtype=complex)) \
        * np.asarray(length, dtype=float)[..., None]
    zc = np.asarray(zc, dtype=complex)
    shape = np.broadcast_shapes(gl.shape, zc.shape)
    gl, zc = np.broadcast_to(gl, shape), np.broadcast_to(zc, shape)
    ch, sh = np.cosh(gl), np.sinh(gl)
    out = np.empty(gl.shape + (2, 2), dtype=complex)
    out[..., 0, 0] = ch
    out[..., 0, 1] = zc * sh
    out[..., 1, 0] = sh / zc
    out[..., 1, 1] = ch
    return out


def voltage_along(gamma, zc, v2, i2, z) -> np.ndarray:
    """Voltage at distances ``z`` from the antenna end of a line.

    ``V(z) = V2 cosh(gamma z) + Zc I2 sinh(gamma z)``.

    Parameters
    ----------
    gamma, zc : array_like
        ``(nfreq,)``.
    v2, i2 : array_like
        Voltage [V] and current [A] at the antenna end (port 2), ``(nfreq,)``.
    z : array_like
        Distances [m], ``(npts,)`` or ``(nfreq, npts)``.

    Returns
    -------
    ndarray
        ``(nfreq, npts)`` complex RMS voltage.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.1
       (wave solution of the telegrapher equations).
    """
    gz = np.asarray(gamma, dtype=complex)[:, None] * np.asarray(z, dtype=float)
    return (np.asarray(v2, dtype=complex)[:, None] * np.cosh(gz)
            + (np.asarray(zc, dtype=complex) * np.asarray(i2, dtype=complex))[:, None]
            * np.sinh(gz))


def current_along(gamma, zc, v2, i2, z) -> np.ndarray:
    """Current at distances ``z`` from the antenna end of a line.

    ``I(z) = I2 cosh(gamma z) + (V2 / Zc) sinh(gamma z)``, flowing toward
    the antenna.  Arguments and shapes as in :func:`voltage_along`.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.1.
    """
    gz = np.asarray(gamma, dtype=complex)[:, None] * np.asarray(z, dtype=float)
    return (np.asarray(i2, dtype=complex)[:, None] * np.cosh(gz)
            + (np.asarray(v2, dtype=complex) / np.asarray(zc, dtype=complex))[:, None]
            * np.sinh(gz))


#: Sampling points per bracket of the standing-wave peak search.
_PEAK_POINTS = 64


def standing_wave_peak(gamma, zc, v2, i2, length: float, quantity: str = "voltage",
                       points: int = _PEAK_POINTS, refine: int = 3):
    """Largest RMS voltage or current anywhere along a line, and where.

    The work and memory do not grow with the line's length in wavelengths.
    With ``A = (V2 + Zc I2) / 2`` and ``B = (V2 - Zc I2) / 2`` the wave
    solution is ``V(z) = A e^{gamma z} + B e^{-gamma z}`` and
    ``Zc I(z) = A e^{gamma z} - B e^{-gamma z}``, so

    ``|V|^2, |Zc I|^2 = E(z) +- 2 |A B*| cos(2 beta z + arg(A B*))``,
    ``E(z) = |A|^2 e^{2 alpha z} + |B|^2 e^{-2 alpha z}``.

    ``E`` is convex, so between the first and the last crest of the cosine
    term (crests at ``z_k``, half a guided wavelength apart) no point rises
    above ``E(z_k) + 2|A B*|`` at the outer crests: the maximum lies in
    ``[0, z_first]`` or ``[z_last, L]``, each at most half a wavelength
    long.  Those two brackets (the whole line when it holds no crest) are
    sampled at ``points`` points each and refined ``refine`` times around
    the best sample.

    Parameters
    ----------
    gamma, zc, v2, i2 : array_like
        As in :func:`voltage_along`, ``(nfreq,)``.
    length : float
        Line length [m].
    quantity : {'voltage', 'current'}
    points, refine : int
        Samples per bracket and local refinement passes (each a 17-point
        grid between the neighbours of the best point).

    Returns
    -------
    peak_rms : ndarray
        ``(nfreq,)`` [V RMS] or [A RMS]; the instantaneous peak is
        ``sqrt(2)`` times this.
    z_at_peak : ndarray
        Distance from the antenna end [m], ``(nfreq,)``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.1
       (wave solution) and 2.3 (standing wave, maxima half a wavelength apart).
    """
    gamma = np.atleast_1d(np.asarray(gamma, dtype=complex))
    zc = np.broadcast_to(np.asarray(zc, dtype=complex), gamma.shape)
    v2 = np.broadcast_to(np.asarray(v2, dtype=complex), gamma.shape)
    i2 = np.broadcast_to(np.asarray(i2, dtype=complex), gamma.shape)
    along = voltage_along if quantity == "voltage" else current_along
    length = float(length)
    a, b = (v2 + zc * i2) / 2.0, (v2 - zc * i2) / 2.0
    beta = np.abs(gamma.imag)
    phase = np.angle(a * b.conj()) + (0.0 if quantity == "voltage" else math.pi)
    with np.errstate(divide="ignore", invalid="ignore"):
        period = np.where(beta > 0, math.pi / beta, np.inf)
        # crests: 2 beta z + phase = 2 pi k
        first = np.mod(-phase, 2.0 * math.pi) / (2.0 * beta)
        last = first + np.floor((length - first) / period) * period
    has_crest = np.isfinite(first) & (first <= length)
    lo1 = np.zeros_like(beta)
    hi1 = np.where(has_crest, first, length)
    lo2 = np.where(has_crest, last, 0.0)
    hi2 = np.full_like(beta, length)
    t = np.linspace(0.0, 1.0, points)
    z = np.concatenate([lo1[:, None] + (hi1 - lo1)[:, None] * t,
                        lo2[:, None] + (hi2 - lo2)[:, None] * t], axis=1)
    rows = np.arange(gamma.size)
    mag = np.abs(along(gamma, zc, v2, i2, z))
    k = np.argmax(mag, axis=1)
    best, best_z = mag[rows, k], z[rows, k]
    half = np.maximum(hi1 - lo1, hi2 - lo2) / (points - 1)
    for _ in range(refine):
        zz = np.clip(best_z[:, None] + half[:, None] * np.linspace(-1.0, 1.0, 17), 0.0, length)
        m2 = np.abs(along(gamma, zc, v2, i2, zz))
        k2 = np.argmax(m2, axis=1)
        cand = m2[rows, k2]
        better = cand > best
        best = np.where(better, cand, best)
        best_z = np.where(better, zz[rows, k2], best_z)
        half = half / 8.0
    return best, best_z


def peak_voltage(gamma, zc, v2, i2, length: float, **kw):
    """Largest RMS voltage along a line and its distance from the antenna end
    (:func:`standing_wave_peak` with ``quantity='voltage'``)."""
    return standing_wave_peak(gamma, zc, v2, i2, length, "voltage", **kw)


def peak_current(gamma, zc, v2, i2, length: float, **kw):
    """Largest RMS current along a line and its distance from the antenna end
    (:func:`standing_wave_peak` with ``quantity='current'``)."""
    return standing_wave_peak(gamma, zc, v2, i2, length, "current", **kw)
