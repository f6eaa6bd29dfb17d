"""Touchstone export (``.s1p``) of the impedance at the feedpoint and at the
radio, for comparison with an antenna analyzer.  Written with scikit-rf."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import skrf

from necflow import fileio

#: File names in the run folder, by position.
FILES = {"feedpoint": "feedpoint.s1p", "radio": "radio.s1p"}


def one_port(f, z, z_ref: float, name: str):
    """A scikit-rf one-port of impedance ``z`` [ohm] at ``f`` [Hz] against
    the real reference ``z_ref`` [ohm]: ``S11 = (Z - Zref) / (Z + Zref)``.

    Duplicate frequencies (overlapping bands) are kept once; the points are
    sorted by frequency, as the format requires.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, eq. (2.35).
    """

    f = np.asarray(f, dtype=float)
    z = np.asarray(z, dtype=complex)
    f_u, first = np.unique(f, return_index=True)
    s = (z[first] - z_ref) / (z[first] + z_ref)
    freq = skrf.Frequency.from_f(f_u, unit="Hz")
    return skrf.Network(frequency=freq, s=s.reshape(-1, 1, 1), z0=float(z_ref), name=name)


def write_s1p(folder, f, z_feedpoint, z_radio, z_ref: float) -> dict[str, Path]:
    """Write ``feedpoint.s1p`` and ``radio.s1p`` into ``folder``; return their paths."""
    folder = Path(folder)
    out = {}
    for pos, z in (("feedpoint", z_feedpoint), ("radio", z_radio)):
        path = folder / FILES[pos]
        net = one_port(f, z, z_ref, pos)
        text = net.write_touchstone(return_string=True, form="ri", skrf_comment=False)
        head = (f"! necflow: impedance at the {pos}, S11 against {z_ref:g} ohm, "
                "frequency in Hz\n")
        fileio.write_text(path, head + text)
        out[pos] = path
    return out


def write_from_results(folder, results_doc: dict) -> dict[str, Path]:
    """The two ``.s1p`` files from a ``results.json`` document."""
    pts = results_doc["points"]
    f = [p["frequency_hz"] for p in pts]
    zf = [complex(*p["z_feedpoint_ohm"]) for p in pts]
    zr = [complex(*p["z_radio_ohm"]) for p in pts]
    return write_s1p(folder, f, zf, zr, float(results_doc["radio"]["impedance_ohm"]))
