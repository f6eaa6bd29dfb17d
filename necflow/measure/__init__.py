"""Measured sweeps: Touchstone v1 and CSV import, measurement types and the
model-versus-measurement comparison.

``read_measurement(path, at=...)`` opens a sweep; ``compare(...)`` in
(:mod:`necflow.calibrate.overlay` puts model and measurement side by side.)
"""

from necflow.measure.files import check_overlap, read_measurement
from necflow.measure.types import Measurement, gamma_from_z, swr_from_mag

__all__ = ["Measurement", "check_overlap", "gamma_from_z", "read_measurement", "swr_from_mag"]
