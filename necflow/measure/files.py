"""Open a measured sweep by its kind and check it against a design."""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np

from necflow.errors import ConfigError
from necflow.measure.csvfile import read_csv
from necflow.measure.touchstone import read_touchstone
from necflow.measure.types import LOCATIONS, Measurement


def read_measurement(path: str | os.PathLike, *, at: str = "radio",
                     frequency_unit: str | None = None, z_ref: float = 50.0) -> Measurement:
    """Read a sweep: Touchstone (``.s1p``, ``.ts``; a ``.sNp`` with N > 1 is
    refused) or CSV (any other name).

    Parameters
    ----------
    path : path-like
    at : {"radio", "feedpoint"}
        Where the sweep was taken.
    frequency_unit : str, optional
        For CSV files whose header gives no unit.
    z_ref : float
        Reference resistance [ohm] for CSV files (Touchstone files carry their own).
    """
    if at not in LOCATIONS:
        raise ConfigError(f"'{at}' is not a place of measurement; expected radio or "
                          "feedpoint", field="--at")

    p = Path(path)
    suffix = p.suffix.lower()
    if suffix == ".s1p" or suffix == ".ts":
        return read_touchstone(p, at=at)
    if len(suffix) >= 4 and suffix[1] == "s" and suffix[-1] == "p" and suffix[2:-1].isdigit():
        raise ConfigError(f"a {suffix[2:-1]}-port Touchstone file; expected a one-port "
                          "(.s1p) sweep of the antenna", file=os.fspath(path))
    return read_csv(p, at=at, frequency_unit=frequency_unit, z_ref=z_ref)


def check_overlap(measurement: Measurement, bands) -> np.ndarray:
    """Mask of the measured points inside the design's bands.

    Raises
    ------
    ConfigError
        When no measured point lies in any band (a wrong frequency unit, or
        a sweep of another antenna).
    """
    f = measurement.frequency_hz
    inside = np.zeros(f.shape, dtype=bool)
    for b in bands:
        inside |= (f >= b.low_hz) & (f <= b.high_hz)
    if not inside.any():
        span = ", ".join(f"{b.name} {b.low_hz / 1e6:g}-{b.high_hz / 1e6:g}" for b in bands)
        raise ConfigError(f"the sweep covers {f[0] / 1e6:.6g}-{f[-1] / 1e6:.6g} MHz and "
                          f"overlaps none of the design's bands ({span} MHz); check the "
                          "frequency unit or the design", file=measurement.source)
    return inside
