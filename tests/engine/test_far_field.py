"""Far field against image theory and the average gain test.

Reference values: references.md, "Horizontal half-wave dipole over perfect
ground" (peak gain derived from image theory, |AF| = 2 |sin(k h sin D)|, from
memory of C. A. Balanis, Antenna Theory, 3rd ed., sec. 4.8) and "Average
gain test" (common practice).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.constants import speed_of_light

from necflow.engine.far_field import (
    average_gain,
    average_gain_test,
    far_field,
    lossless_copy,
    sphere_average,
)
from necflow.model import GroundModel, build_model
from tests.conftest import design_of

F = 7.0e6
LAM = speed_of_light / F


def dipole(h_wl=None, ground=None, material="lossless"):
    height = f"{(h_wl or 1.0) * LAM!r} m"
    d = design_of({"shape": "doublet", "span": f"{LAM / 2!r} m", "height": height,
                   "wire": {"diameter": "2 mm", "material": material}}, ground=ground)
    return build_model(d, F)


def test_sphere_average_of_an_isotropic_gain_is_one():
    # Closed form: (1/4 pi) int sin(theta) dtheta dphi over the sphere = 1.  The
    # trapezoid rule at 5 deg errs by (h^2/12) ~ 0.06 %: 0.1 % covers it.
    theta = np.radians(np.arange(0, 181, 5.0))
    assert sphere_average(np.ones((theta.size, 72)), theta) == pytest.approx(1.0, rel=1e-3)


@pytest.mark.engine
@pytest.mark.parametrize("h_wl, peak_dbi, elevation_deg", [(0.5, 8.42, 30.0), (0.25, 7.49, 90.0)])
def test_peak_gain_over_perfect_ground_follows_image_theory(h_wl, peak_dbi, elevation_deg):
    # references.md [derived]: image theory with the induced-EMF resistance.
    # The moment-method input resistance differs from induced EMF by a few
    # percent (engine free-space test), which moves the gain by up to ~0.2 dB:
    # 0.3 dB.  The elevation of the peak is set by the array factor alone
    # (sin(k h sin D) = 1): within the 1 deg step of the cut.
    ff = far_field(dipole(h_wl, {"model": "perfect"}), [F], angles=[math.radians(30)])[0]
    assert ff.peak_gain_dbi == pytest.approx(peak_dbi, abs=0.3)
    assert math.degrees(ff.peak_elevation) == pytest.approx(elevation_deg, abs=1.0)
    # The gain at 30 deg (best azimuth) of the half-wave-high dipole is its peak.
    if h_wl == 0.5:
        assert ff.gain_at_angles_dbi[0] == pytest.approx(ff.peak_gain_dbi, abs=0.05)


@pytest.mark.engine
def test_free_space_peak_gain():
    # Half-wave dipole directivity 1.64 = 2.15 dBi (Balanis ch. 4, from memory);
    # the lossless model must radiate all its input: 0.1 dB.
    ff = far_field(dipole(), [F])[0]
    assert ff.peak_gain_dbi == pytest.approx(2.15, abs=0.1)


@pytest.mark.engine
@pytest.mark.parametrize("ground, expected", [(None, 1.0), ({"model": "perfect"}, 2.0)])
def test_average_gain_test_on_a_lossless_dipole(ground, expected):
    # Common practice: 1.0 in free space, 2.0 over perfect ground, within a few
    # percent; 2 % allows the 5 deg integration grid (0.3 % measured) and the
    # method's own power balance.
    agt = average_gain_test(dipole(0.5, ground, material="copper"), [F, 1.02 * F])
    assert agt == pytest.approx([expected, expected], rel=0.02)


@pytest.mark.engine
def test_losses_lower_the_efficiency():
    # Conductor loss (copper wire) and a lossy soil close to the ground must
    # show as radiated power below input power; a lossless copy over perfect
    # ground radiates all of it (2 %, as above).
    low = {"model": "sommerfeld", "surface": "medium-dry"}
    lossy = far_field(dipole(0.1, low, material="copper"), [F])[0]
    clean = far_field(lossless_copy(dipole(0.1, low, material="copper")), [F])[0]
    assert lossy.efficiency < 0.9 * clean.efficiency
    assert clean.efficiency == pytest.approx(1.0, rel=0.02)


def test_lossless_copy_and_average_gain_conventions():
    m = dipole(0.5, {"model": "sommerfeld", "surface": "wet"}, material="copper")
    c = lossless_copy(m)
    assert c.conductivity is None and c.ground.kind == "perfect"
    assert average_gain(0.5, GroundModel("perfect")) == 1.0
    assert average_gain(0.5, GroundModel("free-space")) == 0.5


def _wire_internal_resistance(f, radius, sigma):
    """Internal (skin-effect) resistance per metre of a round wire, exact:
    Z' = k J0(ka) / (2 pi a sigma J1(ka)), k = (1 - j) / delta (Ramo, Whinnery
    and Van Duzer, Fields and Waves in Communication Electronics, 3rd ed.,
    sec. 5.6, from memory)."""
    from scipy.constants import mu_0
    from scipy.special import jv

    delta = math.sqrt(1.0 / (math.pi * f * mu_0 * sigma))
    k = (1 - 1j) / delta
    return float((k * jv(0, k * radius) / (2 * math.pi * radius * sigma * jv(1, k * radius))).real)


@pytest.mark.engine
@pytest.mark.parametrize("material", ["copper", "aluminium", "stainless-steel"])
def test_normalised_efficiency_against_the_power_lost_in_the_wire(material):
    """Efficiency = 1 - P_loss / P_in in free space, with P_loss summed here
    from the engine's segment currents and the wire's exact internal
    resistance (Balanis, Antenna Theory 3rd ed., sec. 2.14: e = P_rad / P_in).
    The integrated efficiency is 0.3-0.4 % off (the 5 deg grid); the
    normalised one agrees with the wire-loss figure to 1e-5 here, 1e-3
    allows the midpoint rule over the segments."""
    from necflow.engine import pynec_adapter as adapter
    from necflow.engine.far_field import normalised_efficiency

    m = dipole(material=material)
    ctx = adapter._prepare(m, m.key())
    ctx.fr_card(0, 1, F / 1e6, 0.0)
    ctx.xq_card(0)
    ip = ctx.get_input_parameters(0)
    v = complex(np.asarray(ip.get_voltage()).ravel()[0])
    i = complex(np.asarray(ip.get_current()).ravel()[0])
    sc = ctx.get_structure_currents(0)
    cur = np.asarray(sc.get_current())
    # The engine gives segment lengths in wavelengths of its own speed of
    # light (299.8 m/us); scale them to the wire's length, half a wavelength.
    seg = np.asarray(sc.get_current_segment_length())
    seg = seg / seg.sum() * LAM / 2
    r_per_m = _wire_internal_resistance(F, m.wires[0].radius, m.conductivity)
    p_in = 0.5 * (v * i.conjugate()).real
    p_loss = 0.5 * float(np.sum(np.abs(cur) ** 2 * r_per_m * seg))
    expected = 1.0 - p_loss / p_in
    ff = far_field(m, [F])[0]
    got = float(normalised_efficiency(ff.efficiency, average_gain_test(m, [F])[0], m.ground))
    assert got == pytest.approx(expected, rel=1e-3)
    assert abs(ff.efficiency / expected - 1) > 2e-3   # the integration alone is off
