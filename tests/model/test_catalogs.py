"""Ground and wire-material catalogs against their sources."""

from __future__ import annotations

import numpy as np
import pytest

from necflow.catalog.grounds import SURFACES, complex_permittivity
from necflow.catalog.materials import MATERIALS
from necflow.config.schema import WIRE_MATERIALS

# ITU-R Recommendation P.527, curves of revision 3 (from memory; references.md
# "Ground constants at HF"): (eps_r, sigma S/m).
P527 = {"sea-water": (70, 5), "fresh-water": (80, 3e-3), "wet": (30, 1e-2),
        "medium-dry": (15, 1e-3), "very-dry": (3, 1e-4)}


@pytest.mark.parametrize("name", sorted(P527))
def test_surfaces_carry_the_p527_constants(name):
    s = SURFACES[name]
    # Catalog values are copied, not computed: equal to float precision.
    assert (s.permittivity, s.conductivity) == pytest.approx(P527[name], rel=1e-12)
    assert "P.527" in s.source and s.name == name


def test_catalog_has_exactly_the_p527_surfaces():
    assert set(SURFACES) == set(P527)


@pytest.mark.parametrize("name", sorted(P527))
def test_complex_permittivity_matches_the_trade_form(name):
    # Common practice (references.md): eps_c = eps_r - j 1.8e4 sigma / f_MHz.
    # 1.8e4 is 1/(2 pi eps0 1 MHz) = 17975 rounded up, 0.14 % high: tolerance 0.2 %.
    eps, sig = P527[name]
    f = np.array([1.8e6, 7.1e6, 29e6])
    got = complex_permittivity(eps, sig, f)
    assert got.real == pytest.approx(np.full(3, eps), rel=1e-12)
    assert -got.imag == pytest.approx(1.8e4 * sig / (f / 1e6), rel=2e-3)


def test_complex_permittivity_refuses_zero_frequency():
    with pytest.raises(ValueError):
        complex_permittivity(15, 1e-3, 0.0)


def test_materials_cover_the_schema_names():
    assert set(MATERIALS) == set(WIRE_MATERIALS)
    assert MATERIALS["lossless"] is None


def test_material_conductivities():
    # Annealed copper 100 % IACS = 58.0 MS/m (from memory of the CRC Handbook
    # of Chemistry and Physics): the defining value, 0.5 % for rounding.
    assert MATERIALS["copper"] == pytest.approx(5.80e7, rel=5e-3)
    # Handbook order of conductivity (from memory of the CRC Handbook):
    # copper > hard-drawn copper > aluminium > stainless steel.
    assert (MATERIALS["copper"] > MATERIALS["hard-drawn-copper"] > MATERIALS["aluminium"]
            > MATERIALS["stainless-steel"])
    # Wire-grade aluminium is about 61 % IACS (from memory, ASTM B230); 3 % for grade spread.
    assert MATERIALS["aluminium"] / MATERIALS["copper"] == pytest.approx(0.61, rel=0.03)
    # Type 304 stainless about 2.4 % IACS (from memory of the CRC Handbook); 10 %.
    assert MATERIALS["stainless-steel"] / MATERIALS["copper"] == pytest.approx(0.024, rel=0.1)


def test_copper_clad_steel_is_copper_like_at_hf():
    # Skin depth 1/sqrt(pi f mu0 sigma) in copper at 1.8 MHz is 49 um [derived, from
    # memory of Ramo, Whinnery and Van Duzer ch. 3]; a cladding of ~100 um holds
    # the current, so the effective value is within 5 % of copper's.
    sigma = MATERIALS["copper-clad-steel"]
    assert sigma / MATERIALS["copper"] == pytest.approx(1.0, abs=0.05)
    delta = 1 / np.sqrt(np.pi * 1.8e6 * 4e-7 * np.pi * MATERIALS["copper"])
    assert 45e-6 < delta < 52e-6
