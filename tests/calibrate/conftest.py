"""Shared small designs for the calibration tests."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from necflow.chain import load_design

CONFIGS = Path(__file__).resolve().parents[2] / "configs"


@pytest.fixture(scope="session")
def field_doublet():
    """configs/measured/field-doublet.yaml: a 40 m doublet, 1:1 balun, 15 m coax."""
    return load_design(CONFIGS / "measured" / "field-doublet.yaml")


@pytest.fixture
def sweep_f():
    """Nine frequencies across and just beyond 40 m [Hz]."""
    return np.linspace(6.9e6, 7.4e6, 9)
