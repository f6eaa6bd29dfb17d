"""Figures of merit of a match: reflection, SWR, return and mismatch loss,
total loss of a mismatched line, loss of a series reactance.

Pure functions, vectorised, no state.
"""

from __future__ import annotations

import numpy as np


def reflection_coefficient(z, z0=50.0) -> np.ndarray:
    """Voltage reflection coefficient ``(Z - Z0) / (Z + Z0)``.

    Parameters
    ----------
    z : array_like
        Load impedance [ohm].
    z0 : array_like
        Reference impedance [ohm] (real for a radio's reference).

    Returns
    -------
    ndarray
        Complex reflection coefficient [-].

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, eq. (2.35).
    """
    z = np.asarray(z, dtype=complex)
    return (z - z0) / (z + z0)


def swr(gamma) -> np.ndarray:
    """Standing-wave ratio ``(1 + |G|) / (1 - |G|)``; ``inf`` at ``|G| >= 1``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, eq. (2.41).
    """
    m = np.abs(np.asarray(gamma))
    with np.errstate(divide="ignore", invalid="ignore"):
        out = (1.0 + m) / (1.0 - m)
    return np.where(m >= 1.0, np.inf, out)


def return_loss_db(gamma) -> np.ndarray:
    """Return loss ``-20 log10 |G|`` [dB] (``inf`` for a perfect match).

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, eq. (2.38).
    """
    m = np.abs(np.asarray(gamma))
    with np.errstate(divide="ignore"):
        return -20.0 * np.log10(m)


def mismatch_loss_db(gamma) -> np.ndarray:
    """Mismatch loss ``-10 log10(1 - |G|^2)`` [dB]: available power not
    accepted by the load.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.3
       (power delivered to a mismatched load, ``P (1 - |G|^2)``).
    """
    m = np.abs(np.asarray(gamma))
    with np.errstate(divide="ignore"):
        return -10.0 * np.log10(1.0 - m * m)


def arrl_total_line_loss_db(matched_loss_db, gamma_load_mag) -> np.ndarray:
    """Total loss of a mismatched lossy line.

    ``TL = 10 log10[(a^2 - |GL|^2) / (a (1 - |GL|^2))]``,
    ``a = 10^(ML/10)``.

    Parameters
    ----------
    matched_loss_db : array_like
        Matched loss ML of the line [dB].
    gamma_load_mag : array_like
        Magnitude of the load reflection coefficient, against the line's Z0.

    Returns
    -------
    ndarray
        Input power over load power [dB].

    Notes
    -----
    Exact for a line with real Z0; with the complex Zc of a lossy line the
    reflection at the load is defined against a different impedance and the
    figure is approximate.  The reflection at the input is ``|GL| / a``.

    References
    ----------
    .. [1] From memory of the ARRL Antenna Book, transmission-line chapter.
    .. [2] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.7
       (power on a lossy line: ``P ~ e^{-2 alpha z} - |G|^2 e^{2 alpha z}``),
       from which the formula follows.
    """
    a = 10.0 ** (np.asarray(matched_loss_db, dtype=float) / 10.0)
    g2 = np.asarray(gamma_load_mag, dtype=float) ** 2
    return 10.0 * np.log10((a * a - g2) / (a * (1.0 - g2)))


def series_reactance_insertion_loss_db(x, z0=50.0) -> np.ndarray:
    """Insertion loss of a lossless series reactance between matched ports.

    ``S21 = 2 Z0 / (2 Z0 + jX)``, loss ``10 log10[1 + (X / 2 Z0)^2]`` [dB].

    Parameters
    ----------
    x : array_like
        Reactance [ohm].
    z0 : float
        System impedance [ohm].

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, tables
       4.1 and 4.2 (ABCD of a series impedance and its conversion to S).
    """
    x = np.asarray(x, dtype=float)
    return 10.0 * np.log10(1.0 + (x / (2.0 * z0)) ** 2)
