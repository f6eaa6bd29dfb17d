"""The built-in amateur HF band table and band resolution."""

from __future__ import annotations

import numpy as np
import pytest
from bad_cases import BASE

from necflow.catalog.bands import TABLES, Band, band_names, resolve_bands
from necflow.chain import load_design_text
from necflow.errors import ConfigError

NAMES = ["160m", "80m", "60m", "40m", "30m", "20m", "17m", "15m", "12m", "10m"]

# 47 CFR 97.301 (Region 2), as quoted in the project's reference notes [pub].
# 60 m is not a band there but channels near 5.33-5.41 MHz; see the 60 m test.
CFR_97_301_MHZ = {
    "160m": (1.800, 2.000), "80m": (3.500, 4.000), "40m": (7.000, 7.300),
    "30m": (10.100, 10.150), "20m": (14.000, 14.350), "17m": (18.068, 18.168),
    "15m": (21.000, 21.450), "12m": (24.890, 24.990), "10m": (28.000, 29.700),
}

# From memory of the ITU Radio Regulations, Article 5: the bands where
# Regions 1 and 3 differ from Region 2.
ART5_MHZ = {
    1: {"160m": (1.810, 1.850), "80m": (3.500, 3.800), "40m": (7.000, 7.200)},
    3: {"160m": (1.800, 2.000), "80m": (3.500, 3.900), "40m": (7.000, 7.200)},
}

# Edges are stored in kHz (exact in binary) and compared to MHz figures
# times 1e6: rel 1e-12 allows for the float rounding of that product only.
REL = 1e-12


@pytest.mark.parametrize("region", [1, 2, 3])
def test_every_region_has_all_ten_bands_in_order(region):
    assert band_names(region) == NAMES
    edges = [TABLES[region].edges[n] for n in NAMES]
    assert all(lo < hi for lo, hi in edges)
    assert all(hi < next_lo for (_, hi), (next_lo, _) in zip(edges, edges[1:])), \
        "bands must not overlap and must rise in frequency"
    assert TABLES[region].source


@pytest.mark.parametrize("name", list(CFR_97_301_MHZ))
def test_region_2_matches_47_cfr_97_301(name):
    lo, hi = TABLES[2].edges[name]
    assert lo == pytest.approx(CFR_97_301_MHZ[name][0] * 1e6, rel=REL)
    assert hi == pytest.approx(CFR_97_301_MHZ[name][1] * 1e6, rel=REL)


@pytest.mark.parametrize("region", [1, 3])
def test_regions_1_and_3_from_article_5(region):
    for name, (lo, hi) in ART5_MHZ[region].items():
        assert TABLES[region].edges[name] == (pytest.approx(lo * 1e6, rel=REL),
                                              pytest.approx(hi * 1e6, rel=REL))
    for name in ("30m", "20m", "17m", "15m", "12m", "10m"):
        assert TABLES[region].edges[name] == TABLES[2].edges[name]


@pytest.mark.parametrize("region", [1, 2, 3])
def test_60m_is_the_wrc15_allocation(region):
    """5.3515-5.3665 MHz, the WRC-15 secondary allocation (from memory of the
    ITU Radio Regulations, Article 5), used in all regions; the source text
    must say that national rules differ."""
    lo, hi = TABLES[region].edges["60m"]
    assert (lo, hi) == (pytest.approx(5.3515e6, rel=REL), pytest.approx(5.3665e6, rel=REL))
    assert "national rules differ" in TABLES[region].source


def test_band_frequencies_and_centre():
    b = Band("40m", 7.0e6, 7.3e6, points=7, weight=2.0)
    f = b.frequencies
    assert f.shape == (7,)
    assert f[0] == 7.0e6 and f[-1] == 7.3e6
    assert np.allclose(np.diff(f), 0.05e6, rtol=1e-9)  # rounding of linspace only
    assert b.centre_hz == pytest.approx(7.15e6, rel=REL)


def test_resolve_bands_keeps_order_points_and_weight():
    d = load_design_text(BASE.replace(
        "bands: [40m, 20m]",
        "bands: [20m, {name: 40m, points: 5, weight: 2}, {name: net, low: 3.9 MHz, "
        "high: 3.95 MHz}]"))
    bands = resolve_bands(d)
    assert [b.name for b in bands] == ["20m", "40m", "net"]
    assert (bands[1].points, bands[1].weight) == (5, 2.0)
    assert (bands[2].low_hz, bands[2].high_hz) == (3.9e6, 3.95e6)
    assert bands[0].points == 11  # the schema's default


def test_resolve_bands_unknown_name_names_the_field():
    d = load_design_text(BASE)
    d.bands[1].name = "21m"
    with pytest.raises(ConfigError) as info:
        resolve_bands(d)
    assert info.value.field == "bands[1]"
    assert "unknown band '21m'" in info.value.message
    assert ", ".join(NAMES) in info.value.message
