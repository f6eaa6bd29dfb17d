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


def line_abcd(gamma, zc, length: float) -> np.ndarray:
    """ABCD of a uniform line section.

    ``[[cosh gl, Zc sinh gl], [sinh gl / Zc, cosh gl]]``.

    Parameters
    ----------
    gamma : array_like
        Propagation constant [1/m], ``(nfreq,)``.
    zc : array_like
        Characteristic impedance [ohm], scalar or ``(nfreq,)``.
    length : float
        Physical length [m].

    Returns
    -------
    ndarray
        ``(nfreq, 2, 2)`` complex.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table
       4.1 (transmission line, lossy form with ``gamma l``).
    """
    gl = np.atleast_1d(np.asarray(gamma, dtype=complex)) * length
    zc = np.broadcast_to(np.asarray(zc, dtype=complex), gl.shape)
    ch, sh = np.cosh(gl), np.sinh(gl)
    out = np.empty(gl.shape + (2, 2), dtype=complex)
    out[:, 0, 0] = ch
    out[:, 0, 1] = zc * sh
    out[:, 1, 0] = sh / zc
    out[:, 1, 1] = ch
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


def peak_voltage(gamma, zc, v2, i2, length: float, points_per_wavelength: int = 64,
                 refine: int = 2):
    """Largest RMS voltage anywhere along a line and where it occurs.

    Parameters
    ----------
    gamma, zc, v2, i2 : array_like
        As in :func:`voltage_along`, ``(nfreq,)``.
    length : float
        Line length [m].
    points_per_wavelength : int
        Grid density: at least this many points per guided wavelength at the
        highest frequency, and at least this many along the line.
    refine : int
        Passes of local refinement (each a 17-point grid between the
        neighbours of the best point).

    Returns
    -------
    v_max_rms : ndarray
        ``(nfreq,)`` [V RMS]; the peak instantaneous voltage is
        ``sqrt(2)`` times this.
    z_at_max : ndarray
        Distance from the antenna end [m], ``(nfreq,)``.
    """
    gamma = np.asarray(gamma, dtype=complex)
    beta_max = float(np.max(np.abs(gamma.imag))) if gamma.size else 0.0
    waves = length * beta_max / (2.0 * math.pi)
    n = int(max(points_per_wavelength, math.ceil(points_per_wavelength * waves))) + 1
    z = np.linspace(0.0, length, n)
    mag = np.abs(voltage_along(gamma, zc, v2, i2, z))
    k = np.argmax(mag, axis=1)
    best_z = z[k]
    best = mag[np.arange(mag.shape[0]), k]
    half = length / (n - 1)
    for _ in range(refine):
        zz = np.clip(best_z[:, None] + np.linspace(-half, half, 17)[None, :], 0.0, length)
        m2 = np.abs(voltage_along(gamma, zc, v2, i2, zz))
        k2 = np.argmax(m2, axis=1)
        cand = m2[np.arange(m2.shape[0]), k2]
        better = cand > best
        best = np.where(better, cand, best)
        best_z = np.where(better, zz[np.arange(zz.shape[0]), k2], best_z)
        half /= 8.0
    return best, best_z
