"""Synthetic sweeps made by the model itself, for tests and examples.

A sweep of a design with some fields changed (the "built" antenna), seeded
complex noise added, written as a Touchstone one-port or a CSV file whose
comment header says how it was made.
"""

from __future__ import annotations

import numpy as np

from necflow.calibrate.response import Responder, gammas
from necflow.config.fields import set_values
from necflow.measure.types import Measurement, swr_from_mag


def synthetic_sweep(design, changes: dict, frequency_hz, *, at: str = "radio",
                    z_ref: float = 50.0, noise: float = 0.0, seed: int = 0,
                    responder=None) -> Measurement:
    """The model's reflection of ``design`` with ``changes`` [SI] applied.

    ``noise`` is the standard deviation of complex Gaussian noise added to
    the reflection coefficient (each part), seeded.
    """

    f = np.asarray(frequency_hz, dtype=float)
    built = set_values(design, changes) if changes else design
    probe = Measurement(f, None, np.zeros(f.size), z_ref, at, "synthetic", "S")
    responder = responder or Responder(design, [probe])
    g = gammas(responder, built, [probe])[0]
    rng = np.random.default_rng(seed)
    g = g + noise * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
    return Measurement(f, g, np.abs(g), z_ref, at, "synthetic", "S")


def touchstone_text(m: Measurement, header: str, *, unit: str = "MHz", fmt: str = "RI") -> str:
    """A Touchstone v1 one-port text of ``m`` (S parameters)."""
    scale = {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9}[unit]
    lines = [f"! {ln}" for ln in header.strip().splitlines()]
    lines.append(f"# {unit} S {fmt} R {m.z_ref:g}")
    for f, g in zip(m.frequency_hz, m.gamma):
        if fmt == "RI":
            a, b = g.real, g.imag
        elif fmt == "MA":
            a, b = abs(g), np.degrees(np.angle(g))
        else:
            a, b = 20 * np.log10(abs(g)), np.degrees(np.angle(g))
        lines.append(f"{f / scale:.9g} {a:.9g} {b:.9g}")
    return "\n".join(lines) + "\n"


def csv_swr_text(m: Measurement, header: str) -> str:
    """A CSV text ``freq_mhz,swr`` of ``m`` (magnitude only)."""
    lines = [f"# {ln}" for ln in header.strip().splitlines()]
    lines.append("freq_mhz,swr")
    for f, s in zip(m.frequency_hz, swr_from_mag(m.gamma_mag)):
        lines.append(f"{f / 1e6:.6f},{s:.5f}")
    return "\n".join(lines) + "\n"
