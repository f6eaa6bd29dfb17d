"""Touchstone version 1 one-port files (``.s1p``): reader.

The option line ``# <unit> <parameter> <format> R <n>`` may give its items
in any order and any case; each missing item takes its default (GHz, S, MA,
R 50).  Only the first option line counts.  ``!`` starts a comment anywhere
on a line.  Each data line of a one-port holds a frequency and one pair of
numbers: magnitude and angle in degrees (MA), magnitude in dB and angle
(DB), or real and imaginary parts (RI).  Z and Y parameters are normalised
to R.  Frequencies must increase.

References
----------
.. [1] EIA/IBIS Open Forum, *Touchstone File Format Specification*,
   version 1.1, 2002 (option line, data formats, normalisation).
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np

from necflow.errors import ConfigError
from necflow.measure.types import (
    FREQ_UNITS,
    Measurement,
    check_frequencies,
    gamma_from_z,
    read_text,
)

PARAMETERS = ("S", "Y", "Z")
FORMATS = ("MA", "DB", "RI")


#: Largest reflection magnitude accepted: a passive antenna reflects at most
#: what it is sent (|Gamma| <= 1); analyzers read slightly above 1 near a
#: short or an open through calibration error (common practice), so 1.05.
MAX_REFLECTION = 1.05


def parse_option_line(text: str, *, file: str | None = None,
                      line: int | None = None) -> tuple[float, str, str, float]:
    """Read a Touchstone option line.

    Returns
    -------
    (scale, parameter, format, r)
        Hz per file frequency unit, ``"S"|"Y"|"Z"``, ``"MA"|"DB"|"RI"`` and
        the reference resistance [ohm].
    """
    tokens = text.strip().lstrip("#").split()
    scale, param, fmt, r = 1e9, "S", "MA", 50.0
    i = 0
    while i < len(tokens):
        t = tokens[i].lower()
        if t in FREQ_UNITS:
            scale = FREQ_UNITS[t]
        elif t.upper() in PARAMETERS:
            param = t.upper()
        elif t.upper() in FORMATS:
            fmt = t.upper()
        elif t in ("h", "g"):
            raise ConfigError(f"parameter '{tokens[i]}' is for two-ports; a one-port file holds "
                              "S, Z or Y", file=file, line=line, field="option line")
        elif t == "r":
            if i + 1 >= len(tokens):
                raise ConfigError("'R' needs the reference resistance after it, e.g. 'R 50'",
                                  file=file, line=line, field="option line")
            try:
                r = float(tokens[i + 1])
            except ValueError:
                raise ConfigError(f"'R {tokens[i + 1]}' is not a reference resistance; "
                                  "expected a number of ohms, e.g. 'R 50'", file=file,
                                  line=line, field="option line") from None
            if not r > 0:
                raise ConfigError("the reference resistance must be positive", file=file,
                                  line=line, field="option line")
            i += 1
        else:
            raise ConfigError(f"unknown option '{tokens[i]}'; expected a frequency unit "
                              "(Hz, kHz, MHz, GHz), a parameter (S, Z, Y), a format "
                              "(MA, DB, RI) or 'R <ohms>'", file=file, line=line,
                              field="option line")
        i += 1
    return scale, param, fmt, r


def _pair_to_complex(a: np.ndarray, b: np.ndarray, fmt: str) -> np.ndarray:
    if fmt == "RI":
        return a + 1j * b
    mag = 10.0 ** (a / 20.0) if fmt == "DB" else a
    return mag * np.exp(1j * np.deg2rad(b))


def parse_touchstone(text: str, *, file: str = "<string>", at: str = "radio") -> Measurement:
    """Parse the text of a Touchstone v1 one-port file.

    Parameters
    ----------
    text : str
        File contents.
    file : str
        Name for messages.
    at : {"radio", "feedpoint"}
        Where the sweep was taken.

    Returns
    -------
    Measurement
        Complex reflection against the file's reference resistance.

    Raises
    ------
    ConfigError
        One line naming the file and line: a bad option line, a line that
        is not one-port data, a non-number, decreasing frequencies, no data.
    """
    option = None
    rows: list[tuple[int, list[float]]] = []
    for n, raw in enumerate(text.splitlines(), start=1):
        body = raw.split("!", 1)[0].strip()
        if not body:
            continue
        if body.startswith("#"):
            if option is None:
                option = parse_option_line(body, file=file, line=n)
            continue
        if body.startswith("["):
            raise ConfigError(f"keyword '{body.split()[0]}' belongs to Touchstone version 2; "
                              "expected a version 1 file", file=file, line=n)
        tokens = body.split()
        try:
            values = [float(t) for t in tokens]
        except ValueError:
            bad = next(t for t in tokens if not _is_float(t))
            raise ConfigError(f"'{bad}' is not a number; a data line holds a frequency and "
                              "two numbers", file=file, line=n) from None
        if option is None:
            raise ConfigError("data before the option line; expected a line such as "
                              "'# MHz S MA R 50' first", file=file, line=n)
        if len(values) != 3:
            what = ("a two-port or larger network" if len(values) in (9, 5) or len(values) > 3
                    else "an incomplete line")
            raise ConfigError(f"{len(values)} numbers on a data line ({what}); a one-port "
                              "line holds a frequency and one pair of numbers", file=file, line=n)
        rows.append((n, values))
    if not rows:
        raise ConfigError("no data lines; expected lines of frequency and one pair of numbers",
                          file=file)
    scale, param, fmt, r = option if option else (1e9, "S", "MA", 50.0)
    data = np.array([v for _, v in rows], dtype=float)
    f = data[:, 0] * scale
    check_frequencies(f, [n for n, _ in rows], file=file, row="line")
    value = _pair_to_complex(data[:, 1], data[:, 2], fmt)
    if param == "S":
        gamma = value
    elif param == "Z":
        gamma = gamma_from_z(value * r, r)
    else:
        with np.errstate(divide="ignore", invalid="ignore"):
            gamma = gamma_from_z(r / value, r)
    if not np.all(np.isfinite(gamma)):
        k = int(np.argmin(np.isfinite(gamma)))
        raise ConfigError("a reflection coefficient is not finite (a zero admittance?)",
                          file=file, line=rows[k][0])
    mag = np.abs(gamma)
    if np.any(mag > MAX_REFLECTION):
        k = int(np.argmax(mag))
        raise ConfigError(f"a reflection magnitude of {mag[k]:.4g} (above 1: more power back "
                          "than sent) is not a measurement of an antenna; check the format "
                          "(MA, DB, RI) and the parameter (S, Z, Y) on the option line",
                          file=file, line=rows[k][0])
    return Measurement(frequency_hz=f, gamma=gamma, gamma_mag=mag, z_ref=r, at=at,
                       source=file, quantity=param)


def _is_float(t: str) -> bool:
    try:
        float(t)
        return True
    except ValueError:
        return False


def read_touchstone(path: str | os.PathLike, *, at: str = "radio") -> Measurement:
    """Read a Touchstone v1 one-port file (see :func:`parse_touchstone`)."""
    name = os.fspath(path)
    return parse_touchstone(read_text(Path(path)), file=name, at=at)
