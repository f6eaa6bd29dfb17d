"""tolerance: seeded Monte Carlo repeats, shares are shares, solves are shared."""

from __future__ import annotations

import numpy as np
import pytest

from necflow.calibrate.tolerance import monte_carlo
from necflow.config.tolerances import parse_tolerances, scenarios
from necflow.errors import ConfigError


def test_scenarios_repeat_with_seed_and_share_geometry(field_doublet):
    a = scenarios(field_doublet, samples=40, seed=3)
    b = scenarios(field_doublet, samples=40, seed=3)
    c = scenarios(field_doublet, samples=40, seed=4)
    assert a == b and a != c
    geo = {tuple(sorted((k, v) for k, v in s.items() if not k.startswith("feed.")))
           for s in a}
    # 2 levels of height x 2 of span x 2 ground states = 8 at most
    assert len(geo) <= 8
    coax = np.array([s["feed.coax.length"] for s in a])
    assert np.all(np.abs(coax - 15.0) <= 0.20 + 1e-12)


def test_bad_tolerance_is_one_line(field_doublet):
    d = field_doublet.model_copy(deep=True)
    d.tolerances.fields = {"antenna.height": "3 pF"}
    with pytest.raises(ConfigError, match="tolerances.fields.antenna.height"):
        parse_tolerances(d)


@pytest.mark.engine
def test_monte_carlo_repeats_with_seed(field_doublet):
    r1 = monte_carlo(field_doublet, samples=30, seed=11)
    r2 = monte_carlo(field_doublet, samples=30, seed=11)
    np.testing.assert_array_equal(r1.swr, r2.swr)
    assert r1.band_table() == r2.band_table()
    row = r1.band_table()[0]
    assert 0.0 <= row["yield"] <= row["within_mean"] <= 1.0
    assert row["loss_p5"] <= row["loss_p50"] <= row["loss_p95"]
    assert r1.states <= 8
