"""Measured sweeps as necflow holds them: frequency, reflection, where taken.

A :class:`Measurement` keeps the complex reflection coefficient when the
file gives it (Touchstone, R and X, |Gamma| with phase) and only its
magnitude when the file gives SWR or return loss.  Frequencies are in Hz,
impedances in ohm.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from necflow import limits
from necflow.errors import ConfigError

LOCATIONS = ("radio", "feedpoint")
FREQ_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}   # Hz per unit word


def check_frequencies(f: np.ndarray, lines, *, file: str, field: str | None = None,
                      row: str = "row") -> None:
    """Refuse a sweep whose frequencies [Hz] are not positive and increasing.

    ``lines[i]`` is the file line of ``f[i]``; the error names the first
    point at fault (a non-positive or NaN frequency first, then one that does
    not rise above the one before), ``row`` is what the file calls a line
    of data ("row" or "line").

    Raises
    ------
    ConfigError
        One line with file, line and ``field``.
    """
    bad = np.flatnonzero(~((f > 0) & np.isfinite(f)))
    if bad.size:
        raise ConfigError("frequencies must be positive finite numbers", file=file,
                          line=lines[bad[0]], field=field)
    dec = np.flatnonzero(~(np.diff(f) > 0))
    if dec.size:
        raise ConfigError(f"frequencies must increase from {row} to {row}", file=file,
                          line=lines[dec[0] + 1], field=field)


def gamma_from_z(z, z_ref: float = 50.0) -> np.ndarray:
    """Reflection coefficient of an impedance against a real reference.

    Parameters
    ----------
    z : array_like of complex
        Impedance [ohm].
    z_ref : float
        Reference resistance [ohm].

    Returns
    -------
    ndarray of complex
        ``(z - z_ref) / (z + z_ref)`` [1].

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, ch. 2
       (reflection coefficient of a load on a line).
    """
    z = np.asarray(z, dtype=complex)
    return (z - z_ref) / (z + z_ref)


def z_from_gamma(gamma, z_ref: float = 50.0) -> np.ndarray:
    """Impedance [ohm] of a reflection coefficient against a real reference,
    ``z_ref (1 + gamma) / (1 - gamma)`` (Pozar, ch. 2, inverted)."""
    g = np.asarray(gamma, dtype=complex)
    with np.errstate(divide="ignore", invalid="ignore"):
        return z_ref * (1.0 + g) / (1.0 - g)


def swr_from_mag(mag) -> np.ndarray:
    """SWR from |Gamma|, ``(1 + |G|) / (1 - |G|)`` (Pozar, ch. 2); inf at |G| >= 1."""
    m = np.asarray(mag, dtype=float)
    with np.errstate(divide="ignore"):
        return np.where(m < 1.0, (1.0 + m) / np.maximum(1.0 - m, 1e-300), np.inf)


def mag_from_swr(swr) -> np.ndarray:
    """|Gamma| from SWR, ``(s - 1) / (s + 1)`` (Pozar, ch. 2)."""
    s = np.asarray(swr, dtype=float)
    return (s - 1.0) / (s + 1.0)


@dataclass(frozen=True)
class Measurement:
    """One measured sweep.

    Attributes
    ----------
    frequency_hz : ndarray, shape (n,)
        Strictly increasing frequencies [Hz].
    gamma : ndarray of complex, shape (n,), or None
        Complex reflection coefficient against ``z_ref``; None when the file
        gives only a magnitude (SWR, return loss).
    gamma_mag : ndarray, shape (n,)
        |Gamma| [1] (always present).
    z_ref : float
        Reference resistance of ``gamma`` [ohm].
    at : {"radio", "feedpoint"}
        Where the sweep was taken: at the radio end of the feed chain, or at
        the antenna's feed point.
    source : str
        File the sweep came from (for messages).
    quantity : str
        What the file gave: ``"S"``, ``"Z"``, ``"Y"`` (Touchstone),
        ``"R+X"``, ``"SWR"``, ``"return loss"``, ``"|Gamma|+phase"``, ``"S11 dB"``.
    """

    frequency_hz: np.ndarray
    gamma: np.ndarray | None
    gamma_mag: np.ndarray
    z_ref: float
    at: str
    source: str
    quantity: str

    @property
    def complex(self) -> bool:
        """True when the sweep carries phase (complex reflection)."""
        return self.gamma is not None

    @property
    def swr(self) -> np.ndarray:
        """SWR against ``z_ref`` [1]."""
        return swr_from_mag(self.gamma_mag)

    def with_location(self, at: str) -> Measurement:
        """The same sweep, said to be taken at ``at``."""
        return replace(self, at=at)


def read_text(path: Path) -> str:
    """File text (UTF-8, BOM tolerated) or a one-line ConfigError."""
    name = os.fspath(path)
    if path.is_dir():
        raise ConfigError("is a directory; expected a measurement file (.s1p or .csv)",
                          file=name)
    try:
        size = path.stat().st_size
        if size > limits.MAX_SWEEP_BYTES:
            raise ConfigError(f"the file is {size / 1024 ** 2:.1f} MiB, more than the "
                              f"{limits.MAX_SWEEP_BYTES // 1024 ** 2} MiB a measured sweep may "
                              "have", file=name)
        with path.open("rb") as fh:
            raw = fh.read(limits.MAX_SWEEP_BYTES + 1)
        if len(raw) > limits.MAX_SWEEP_BYTES:
            raise ConfigError(f"the file is more than {limits.MAX_SWEEP_BYTES // 1024 ** 2} MiB, "
                              "the most a measured sweep may have", file=name)
    except FileNotFoundError:
        raise ConfigError("no such file; expected a measurement file (.s1p or .csv)",
                          file=name) from None
    except OSError as exc:
        raise ConfigError(f"cannot read the file: {exc.strerror or exc}", file=name) from None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        try:
            return raw.decode("latin-1")
        except UnicodeDecodeError:  # pragma: no cover - latin-1 decodes any byte
            raise ConfigError("not a text file", file=name) from None
