"""Starter designs (``necflow new``) and the examples shipped in the package."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from necflow.catalog.bands import TABLES
from necflow.chain import Chain, load_design_text
from necflow.config.starters import MODELINE, STARTERS, example, example_names, starter
from necflow.errors import ConfigError

ROOT = Path(__file__).resolve().parents[2]
PACKAGE_EXAMPLES = ROOT / "necflow" / "examples"


def test_every_config_ships_in_the_package_unchanged():
    """configs/*.yaml are the repository's copies of necflow/examples/*.yaml:
    after an edit of one, copy it to the other."""
    configs = sorted(p.name for p in (ROOT / "configs").glob("*.yaml"))
    assert configs == sorted(p.name for p in PACKAGE_EXAMPLES.glob("*.yaml"))
    for name in configs:
        assert (ROOT / "configs" / name).read_bytes() == (PACKAGE_EXAMPLES / name).read_bytes(), \
            f"configs/{name} and necflow/examples/{name} differ"


def test_examples_are_read_from_the_package():
    assert "demo" in example_names()
    assert example("demo") == (ROOT / "configs" / "demo.yaml").read_text(encoding="utf-8")
    with pytest.raises(ConfigError, match="no example 'dem'"):
        example("dem")


@pytest.mark.parametrize("shape", list(STARTERS))
def test_starter_loads_with_every_check(shape):
    text = starter(shape)
    assert text.splitlines()[0] == MODELINE
    assert "power line" in text, "a starter carries the safety caution"
    design = load_design_text(text)
    assert [b.name for b in design.bands] == STARTERS[shape][1]


@pytest.mark.parametrize("shape", list(STARTERS))
@pytest.mark.parametrize("bands", [["160m"], ["80m", "40m"], ["20m", "10m"], ["10m"]])
def test_starter_for_other_bands_loads(shape, bands):
    for region in (1, 2):
        design = load_design_text(starter(shape, bands, region))
        assert [b.name for b in design.bands] == bands
        assert design.region == region


def test_starter_bands_are_sorted_and_checked():
    design = load_design_text(starter("doublet", ["10m", "40m"]))
    assert [b.name for b in design.bands] == ["40m", "10m"]
    with pytest.raises(ConfigError, match="did you mean '40m'"):
        starter("doublet", ["40 m"])
    with pytest.raises(ConfigError, match="unknown starter"):
        starter("yagi")


def test_lengths_scale_with_the_lowest_band():
    """A half-wave starter's wire follows the wavelength: c / f at the centre
    of the lowest band (ITU Region 2 table)."""
    c = 299_792_458.0
    for band in ("80m", "40m", "20m"):
        low, high = TABLES[2].edges[band]
        lam = c / (0.5 * (low + high))
        span = load_design_text(starter("doublet", [band])).antenna.span
        assert span == pytest.approx(0.5 * lam, abs=0.25)   # rounded to 0.5 m
        leg = load_design_text(starter("inverted-v", [band])).antenna.leg
        assert 0.23 * lam < leg < 0.25 * lam


@pytest.mark.engine
@pytest.mark.parametrize("shape", list(STARTERS))
def test_starter_evaluates_as_written(shape):
    """Solved as written on its lowest band (two points, to keep it short)."""
    design = load_design_text(starter(shape, STARTERS[shape][1][:1]))
    design.bands[0].points = 2
    swr = np.asarray(Chain(design).evaluation.system.swr)
    assert swr.shape == (2,)
    assert np.all(np.isfinite(swr)) and np.all(swr >= 1.0)


@pytest.mark.engine
def test_inverted_v_starter_matches_in_its_band():
    """A coax-fed inverted-V with legs a little under a quarter wave has its
    lowest SWR inside the band, below 2 (common practice: droop lowers the
    resonance and the feed resistance toward 50 ohm)."""
    design = load_design_text(starter("inverted-v", ["40m"]))
    design.bands[0].points = 7
    swr = np.asarray(Chain(design).evaluation.system.swr)
    assert swr.min() < 2.0
    assert 0 < int(np.argmin(swr)) < len(swr) - 1, "the dip lies inside the band"
