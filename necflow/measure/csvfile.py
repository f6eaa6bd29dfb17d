"""CSV sweeps with a header: frequency plus SWR, R and X, return loss, or
|Gamma| and phase.

The header names the columns; units come from the header (``freq_mhz``,
``Frequency (kHz)``, ``phase [rad]``) or from the caller.  Recognised
columns (case, spaces, ``_`` and ``-`` do not matter; a unit in brackets,
parentheses or after the last ``_`` is read off):

=====================  ===============================================
frequency              ``frequency``, ``freq``, ``f`` (+ Hz/kHz/MHz/GHz)
SWR                    ``swr``, ``vswr``
R and X                ``r``/``resistance``/``rs`` and ``x``/``reactance``/``xs`` [ohm]
return loss            ``return loss``, ``rl`` [dB, positive]
S11 in dB              ``s11``, ``s11 db`` [dB, zero or negative]
|Gamma| and phase      ``gamma``/``|gamma|``/``rho``/``mag`` and ``phase``/``angle`` [deg or rad]
=====================  ===============================================

Lines starting with ``#`` or ``!`` are comments; ``,``, ``;`` and tabs
separate columns.
"""

from __future__ import annotations

import csv
import io
import os
import re
from pathlib import Path

import numpy as np

from necflow.errors import ConfigError
from necflow.measure.types import (
    FREQ_UNITS,
    Measurement,
    check_frequencies,
    gamma_from_z,
    mag_from_swr,
    read_text,
)

_ROLES = {
    "frequency": {"frequency", "freq", "f"},
    "swr": {"swr", "vswr"},
    "r": {"r", "resistance", "rs"},
    "x": {"x", "reactance", "xs"},
    "rl": {"returnloss", "rl"},
    "s11db": {"s11", "s11db", "s11mag"},
    "mag": {"gamma", "|gamma|", "gammamag", "rho", "mag", "magnitude", "reflection",
            "reflectionmagnitude", "|s11|"},
    "phase": {"phase", "angle", "gammaphase", "s11phase", "arg"},
}
_UNIT_WORDS = {"hz", "khz", "mhz", "ghz", "ohm", "ohms", "db", "deg", "degrees", "rad",
               "radians"}


def split_header(name: str) -> tuple[str, str | None]:
    """Column role key and unit of a header cell: ``'Frequency (kHz)'`` ->
    ``('frequency', 'khz')``, ``'freq_mhz'`` -> ``('freq', 'mhz')``."""
    text = name.strip().lower()
    unit = None
    m = re.search(r"[\(\[]\s*([^\)\]]*)\s*[\)\]]\s*$", text)
    if m:
        unit = m.group(1).strip() or None
        text = text[:m.start()]
    parts = [p for p in re.split(r"[\s_\-/]+", text) if p]
    if unit is None and len(parts) > 1 and parts[-1] in _UNIT_WORDS:
        unit = parts.pop()
    return "".join(parts), unit


def _role(key: str) -> str | None:
    for role, names in _ROLES.items():
        if key in names:
            return role
    return None


def _delimiter(line: str) -> str:
    for d in ("\t", ";", ","):
        if d in line:
            return d
    return ","


def parse_csv(text: str, *, file: str = "<string>", at: str = "radio",
              frequency_unit: str | None = None, z_ref: float = 50.0) -> Measurement:
    """Parse a CSV sweep.

    Parameters
    ----------
    text : str
        File contents.
    file : str
        Name for messages.
    at : {"radio", "feedpoint"}
        Where the sweep was taken.
    frequency_unit : str, optional
        Hz, kHz, MHz or GHz when the header gives none (the header wins
        when it gives one and they differ: that is an error).
    z_ref : float
        Reference resistance [ohm] of the reflection made from R and X, and
        of the SWR/return loss an analyser reports.

    Raises
    ------
    ConfigError
        One line with file, line and column: no usable header, an unknown
        unit, a non-number, decreasing frequencies, a value out of range.
    """
    lines = [(n, ln) for n, ln in enumerate(text.splitlines(), start=1)
             if ln.strip() and not ln.lstrip().startswith(("#", "!"))]
    if not lines:
        raise ConfigError("no header and no data; expected a header such as "
                          "'freq_mhz,swr' and rows of numbers", file=file)
    hline, header = lines[0]
    delim = _delimiter(header)
    names = next(csv.reader(io.StringIO(header), delimiter=delim))
    cols: dict[str, tuple[int, str | None, str]] = {}
    for i, name in enumerate(names):
        key, unit = split_header(name)
        role = _role(key)
        if role is None:
            continue
        if role in cols:
            raise ConfigError(f"two columns mean {role}: '{names[cols[role][0]]}' and "
                              f"'{name}'", file=file, line=hline, field=name.strip())
        cols[role] = (i, unit, name.strip())
    if "frequency" not in cols:
        raise ConfigError("no frequency column in the header; name one e.g. 'freq_mhz' or "
                          "'Frequency (kHz)'", file=file, line=hline)
    kinds = [k for k, need in (("R+X", ("r", "x")), ("|Gamma|+phase", ("mag", "phase")),
                               ("SWR", ("swr",)), ("return loss", ("rl",)),
                               ("S11 dB", ("s11db",))) if all(c in cols for c in need)]
    if not kinds:
        raise ConfigError("the header names no measured quantity; give SWR, R and X, "
                          "return loss (dB), S11 (dB), or |Gamma| and phase", file=file,
                          line=hline)
    kind = kinds[0]  # complex forms first: they carry the phase
    fcol, funit, fname = cols["frequency"]
    unit = (funit or "").lower() or None
    if unit is not None and unit not in FREQ_UNITS:
        raise ConfigError(f"unknown frequency unit '{funit}'; expected Hz, kHz, MHz or GHz",
                          file=file, line=hline, field=fname)
    if frequency_unit is not None:
        given = frequency_unit.strip().lower()
        if given not in FREQ_UNITS:
            raise ConfigError(f"unknown frequency unit '{frequency_unit}'; expected Hz, kHz, "
                              "MHz or GHz", field="--frequency-unit")
        if unit is not None and unit != given:
            raise ConfigError(f"the header says {funit} but the command line says "
                              f"{frequency_unit}; drop one", file=file, line=hline, field=fname)
        unit = given
    if unit is None:
        raise ConfigError("the frequency column gives no unit; name it e.g. 'freq_mhz' or "
                          "'Frequency (kHz)', or pass --frequency-unit", file=file,
                          line=hline, field=fname)
    data_lines = lines[1:]
    if not data_lines:
        raise ConfigError("a header but no data rows", file=file, line=hline)
    needed = sorted({c[0] for c in cols.values()})
    table = np.empty((len(data_lines), len(names)))
    table[:] = np.nan
    for r, (n, ln) in enumerate(data_lines):
        cells = next(csv.reader(io.StringIO(ln), delimiter=delim))
        if len(cells) < max(needed) + 1:
            raise ConfigError(f"{len(cells)} column(s) where the header has {len(names)}",
                              file=file, line=n)
        for c in needed:
            try:
                table[r, c] = float(cells[c])
            except ValueError:
                raise ConfigError(f"'{cells[c].strip()}' is not a number", file=file, line=n,
                                  field=names[c].strip()) from None
    rownum = [n for n, _ in data_lines]
    f = table[:, fcol] * FREQ_UNITS[unit]
    check_frequencies(f, rownum, file=file, field=fname)

    def col(role):
        return table[:, cols[role][0]]

    def check(ok, role, what):
        bad = np.flatnonzero(~ok)
        if bad.size:
            raise ConfigError(what, file=file, line=rownum[bad[0]], field=cols[role][2])

    gamma = None
    if kind == "R+X":
        check(col("r") >= 0, "r", "a negative resistance; expected R >= 0 ohm")
        gamma = gamma_from_z(col("r") + 1j * col("x"), z_ref)
        mag = np.abs(gamma)
    elif kind == "|Gamma|+phase":
        m = col("mag")
        check((m >= 0) & (m <= 1), "mag", "|Gamma| must lie between 0 and 1")
        punit = (cols["phase"][1] or "deg").lower()
        if punit not in ("deg", "degrees", "rad", "radians"):
            raise ConfigError(f"unknown phase unit '{cols['phase'][1]}'; expected deg or rad",
                              file=file, line=hline, field=cols["phase"][2])
        ph = col("phase") if punit.startswith("rad") else np.deg2rad(col("phase"))
        gamma = m * np.exp(1j * ph)
        mag = m
    elif kind == "SWR":
        check(col("swr") >= 1, "swr", "SWR below 1; expected SWR >= 1")
        mag = mag_from_swr(col("swr"))
    elif kind == "return loss":
        check(col("rl") >= 0, "rl", "a negative return loss; return loss is positive dB "
              "(a column of S11 in dB, zero or negative, is named 's11_db')")
        mag = 10.0 ** (-col("rl") / 20.0)
    else:
        check(col("s11db") <= 0, "s11db", "S11 above 0 dB; S11 in dB is zero or negative "
              "(a column of positive return loss is named 'return_loss_db')")
        mag = 10.0 ** (col("s11db") / 20.0)
    return Measurement(frequency_hz=f, gamma=gamma, gamma_mag=np.asarray(mag, dtype=float),
                       z_ref=float(z_ref), at=at, source=file, quantity=kind)


def read_csv(path: str | os.PathLike, *, at: str = "radio", frequency_unit: str | None = None,
             z_ref: float = 50.0) -> Measurement:
    """Read a CSV sweep (see :func:`parse_csv`)."""
    return parse_csv(read_text(Path(path)), file=os.fspath(path), at=at,
                     frequency_unit=frequency_unit, z_ref=z_ref)
