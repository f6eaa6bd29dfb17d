"""Every shipped example sweep fits back to the truth its header states.

The sweeps in configs/measured/ are made by scripts/make_example_sweeps.py
from the model with known changes (``truth:`` lines) and seeded noise
(``noise:``).  Fitting each one must recover every true value within two
standard deviations of the fit's own uncertainty, and leave a residual near
the stated noise.  When the model changes and the files go stale (the fit
lands elsewhere), this fails: run the script again.

Independent of the fit's arithmetic: the truth is the value the file was
made with, not a value computed by the fit.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import pytest

from necflow import units
from necflow.calibrate.fit import fit_design
from necflow.calibrate.response import Responder
from necflow.chain import load_design
from necflow.config.fields import build_params
from necflow.measure import read_measurement

MEASURED = Path(__file__).resolve().parents[2] / "configs" / "measured"
SWEEPS = sorted(p for p in MEASURED.iterdir() if p.suffix in (".s1p", ".csv"))


def _header(path: Path) -> tuple[dict[str, float], str, float]:
    truth, at, noise = {}, "radio", math.nan
    for line in path.read_text(encoding="utf-8").splitlines():
        body = line.lstrip("!#").strip()
        if m := re.fullmatch(r"truth: (\S+) = (.+)", body):
            truth[m.group(1)] = units.parse(m.group(2), "length")
        elif m := re.fullmatch(r"at: (radio|feedpoint)", body):
            at = m.group(1)
        elif m := re.fullmatch(r"noise: (\S+)", body):
            noise = float(m.group(1))
    return truth, at, noise


def test_there_are_example_sweeps():
    assert len(SWEEPS) >= 3, SWEEPS


@pytest.mark.engine
@pytest.mark.slow
@pytest.mark.parametrize("path", SWEEPS, ids=lambda p: p.name)
def test_example_sweep_fits_back_to_its_truth(path):
    truth, at, noise = _header(path)
    assert truth and math.isfinite(noise), f"{path.name}: header lacks truth or noise lines"
    design = load_design(MEASURED / "field-doublet.yaml")
    sweep = read_measurement(path, at=at)
    section = {k: v for k, v in design.uncertain.items() if k in truth}
    assert set(section) == set(truth), "every true value must be a fitted field"
    params = build_params(design, section, key="uncertain")
    result = fit_design(design, [sweep], params, starts=2, seed=0,
                        responder=Responder(design, [sweep]))
    for field, value in truth.items():
        got, sigma = result.values[field], result.sigma[field]
        assert math.isfinite(sigma) and sigma > 0
        assert abs(got - value) <= 2 * sigma, (
            f"{path.name}: {field} fitted {got:.4f} m +- {sigma:.4f}, made with {value:g} m: "
            "the model changed since the file was made; run scripts/make_example_sweeps.py")
    if result.complex_data:
        # complex Gaussian noise of standard deviation `noise` in each part:
        # rms |noise| = sqrt(2) noise; 1.5x allows the fit's own misfit.
        assert result.rms_after <= 1.5 * math.sqrt(2) * noise
