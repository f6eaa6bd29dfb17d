"""The choke catalog: each generic choke as a parallel R-L-C with its source tag.

What a choke must do is a fact of the trade: judged by its common-mode
impedance at the operating frequency, several hundred ohm is weak and a few
kilohm resistive is the usual aim (common practice; the project's reference
values, "Feed lines as conductors").
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from necflow.catalog.chokes import CHOKE_TYPES, DEFAULT_BALUN_CHOKE

NAMES = list(CHOKE_TYPES)
#: HF, 1.8 to 30 MHz, finely on a logarithmic axis.
HF = np.geomspace(1.8e6, 30e6, 2001)


def z_parallel(f, r, l, c):
    """Parallel R-L-C by its rational form, written here independently of the
    package: Z = j w L R / (R (1 - w^2 L C) + j w L) (from memory of Pozar,
    Microwave Engineering 4th ed., sec. 6.1)."""
    w = 2 * np.pi * np.asarray(f)
    return 1j * w * l * r / (r * (1 - w**2 * l * c) + 1j * w * l)


def test_catalog_is_small_generic_and_has_the_balun_default():
    assert 4 <= len(CHOKE_TYPES) <= 8
    assert DEFAULT_BALUN_CHOKE in CHOKE_TYPES
    for name, ct in CHOKE_TYPES.items():
        assert ct.name == name
        assert ct.description and ct.notes


@pytest.mark.parametrize("name", NAMES)
def test_each_choke_carries_a_common_practice_source(name):
    src = CHOKE_TYPES[name].source
    assert src.startswith("[practice]") and "common practice" in src


@pytest.mark.parametrize("name", NAMES)
def test_each_choke_reaches_a_few_kilohm_resistive_on_hf(name):
    """A few kilohm resistive somewhere on HF is the usual aim (common
    practice): each entry's resistive part reaches 2 kohm or more between 1.8
    and 30 MHz.  'Modest': no entry claims more than 10 kohm anywhere."""
    ct = CHOKE_TYPES[name]
    z = z_parallel(HF, ct.r, ct.l, ct.c)
    assert z.real.max() >= 2e3
    assert np.abs(z).max() <= 10e3


@pytest.mark.parametrize("name", NAMES)
def test_resonance_and_q_match_the_circuit(name):
    """The entry's resonant frequency is where the reactance changes sign, and
    its Q is f0 over the half-power bandwidth (|Z| = R / sqrt 2), both found
    numerically from the circuit (from memory of Pozar sec. 6.1: Q = R sqrt(C/L)
    for a parallel resonator, bandwidth f0 / Q)."""
    ct = CHOKE_TYPES[name]
    f0 = brentq(lambda f: z_parallel(f, ct.r, ct.l, ct.c).imag, 1e5, 1e9, xtol=1e-3)
    assert ct.resonance_hz == pytest.approx(f0, rel=1e-8)

    def half_power(f):
        return abs(z_parallel(f, ct.r, ct.l, ct.c)) - ct.r / math.sqrt(2)

    f1 = brentq(half_power, f0 / 1e3, f0, xtol=1e-3)
    f2 = brentq(half_power, f0, f0 * 1e3, xtol=1e-3)
    assert ct.q == pytest.approx(f0 / (f2 - f1), rel=1e-6)


def test_ferrite_and_air_chokes_differ_as_the_trade_says():
    """Common practice: ferrite chokes are low-Q and broad (resistive over an
    octave or more); an air-wound coil of coax is a high-Q resonator, strong
    only near its self-resonance.  Measured as the span over which |Z| stays
    above half its peak."""
    def octaves_above_half_peak(ct):
        f = np.geomspace(0.1e6, 300e6, 20001)
        z = np.abs(z_parallel(f, ct.r, ct.l, ct.c))
        inside = f[z >= 0.5 * z.max()]
        return math.log2(inside.max() / inside.min())

    air = CHOKE_TYPES["coax-coil-air"]
    assert air.q > 5 and octaves_above_half_peak(air) < 0.5
    for name in ("toroid-coax-low-mix", "toroid-coax-mid-mix", "beads-on-coax",
                 "current-balun"):
        ct = CHOKE_TYPES[name]
        assert ct.q < 1 and octaves_above_half_peak(ct) > 2
