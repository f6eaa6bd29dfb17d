"""Transmission-line two-ports against closed forms and against scikit-rf."""

from __future__ import annotations

import math

import numpy as np
import pytest
import skrf

from necflow.catalog.lines import LINE_TYPES
from necflow.feed import line as tl
from necflow.feed import twoport
from necflow.feed.chain import LineSection

F = np.array([1.8e6, 3.6e6, 7.1e6, 14.2e6, 28.5e6])
LOADS = np.array([12.5 - 40j, 50.0 + 0j, 230 + 410j, 3.0 + 0.5j, 800.0 - 120j])


def _zin_pozar(z0, gamma, length, zl):
    """Pozar, Microwave Engineering 4th ed., ch. 2, eq. (2.91):
    Zin = Z0 (ZL + Z0 tanh gl) / (Z0 + ZL tanh gl)."""
    t = np.tanh(gamma * length)
    return z0 * (zl + z0 * t) / (z0 + zl * t)


def test_lossy_line_input_impedance_matches_pozar_closed_form():
    # Source: Pozar, Microwave Engineering 4th ed., ch. 2 (lossy line input
    # impedance).  Same algebra in a different form: only rounding may
    # differ, hence rtol 1e-10.
    alpha = 0.004  # Np/m, a lossy coax at HF
    gamma, zc = tl.propagation_real_z0(F, 50.0, 0.66, alpha)
    for length in (3.0, 17.3, 41.0):
        zin = twoport.input_impedance(tl.line_abcd(gamma, zc, length), LOADS)
        np.testing.assert_allclose(zin, _zin_pozar(50.0, gamma, length, LOADS), rtol=1e-10)


def test_quarter_wave_line_inverts_the_load():
    # Source: Pozar, Microwave Engineering 4th ed., sec. 2.5 (quarter-wave
    # transformer): a lossless quarter-wave line of Z0 turns ZL into Z0^2/ZL.
    # Exact identity; rtol 1e-9 covers rounding of cosh/sinh near their zeros.
    f0, vf, z0 = 7.1e6, 0.66, 75.0
    quarter = vf * tl.C0 / f0 / 4.0
    gamma, zc = tl.propagation_real_z0([f0], z0, vf, 0.0)
    m = tl.line_abcd(gamma, zc, quarter)
    for zl in LOADS:
        np.testing.assert_allclose(twoport.input_impedance(m, zl), z0 ** 2 / zl, rtol=1e-9)


def _catalog_line(name, length):
    sec = LineSection("x", LINE_TYPES[name], length)
    return sec.propagation(F)


@pytest.mark.parametrize("name", ["rg-58", "rg-213", "window-450"])
def test_line_abcd_and_input_impedance_match_scikit_rf(name):
    # Independent implementation: scikit-rf DefinedGammaZ0 (complex Zc, lossy
    # gamma) builds the line's S-parameters and converts them to ABCD and to
    # the input impedance with a load.  Both codes are exact; rtol 1e-8
    # allows the S<->ABCD conversions' rounding.
    length = 23.7
    gamma, zc = _catalog_line(name, length)
    freq = skrf.Frequency.from_f(F, unit="Hz")
    media = skrf.media.DefinedGammaZ0(freq, z0_port=50.0, z0=zc, gamma=gamma)
    ref = media.line(length, unit="m")
    ours = tl.line_abcd(gamma, zc, length)
    np.testing.assert_allclose(ours, ref.a, rtol=1e-8, atol=1e-12)
    g_load = ((LOADS - 50.0) / (LOADS + 50.0)).reshape(-1, 1, 1)
    load = skrf.Network(frequency=freq, s=g_load, z0=50.0)
    np.testing.assert_allclose(twoport.input_impedance(ours, LOADS), (ref ** load).z[:, 0, 0],
                               rtol=1e-8)


def test_rlgc_propagation_matches_scikit_rf_distributed_circuit():
    # scikit-rf DistributedCircuit computes gamma and Zc from R, L, G, C
    # (Pozar, Microwave Engineering 4th ed., eqs. 2.5 and 2.7); rtol 1e-10
    # is rounding only.
    lt = LINE_TYPES["rg-58"]
    r, l, g, c = tl.rlgc_from_nominal(F, lt.z0, lt.velocity_factor,
                                      lt.conductor_np_per_m(F), lt.dielectric_np_per_m(F))
    gamma, zc = tl.propagation_rlgc(F, r, l, g, c)
    media = skrf.media.DistributedCircuit(skrf.Frequency.from_f(F, unit="Hz"), z0_port=50.0,
                                          R=r, L=l, G=g, C=c)
    np.testing.assert_allclose(gamma, media.gamma, rtol=1e-10)
    np.testing.assert_allclose(zc, media.z0, rtol=1e-10)


@pytest.mark.parametrize("name", ["rg-58", "rg-213", "rg-59", "twin-lead-300"])
def test_rlgc_line_keeps_catalog_attenuation_and_has_complex_zc(name):
    # Pozar, Microwave Engineering 4th ed., sec. 2.7, low-loss expansions:
    # alpha = R/(2 Z0) + G Z0/2 and Zc = Z0 [1 - j (R/(wL) - G/(wC)) / 2].
    # The exact RLGC values differ from these first-order ones by terms of
    # order (R/wL)^2 < 0.5 % at 1.8 MHz on the lossiest line here; tolerances
    # 1 % for alpha and 5 % for the small imaginary part of Zc.
    lt = LINE_TYPES[name]
    r, l, g, c = tl.rlgc_from_nominal(F, lt.z0, lt.velocity_factor,
                                      lt.conductor_np_per_m(F), lt.dielectric_np_per_m(F))
    gamma, zc = tl.propagation_rlgc(F, r, l, g, c)
    np.testing.assert_allclose(gamma.real * 20 / math.log(10), lt.attenuation_db_per_m(F),
                               rtol=0.01)
    w = 2 * math.pi * F
    np.testing.assert_allclose(zc.imag, -lt.z0 * (r / (w * l) - g / (w * c)) / 2, rtol=0.05)
    assert zc[0].imag < 0  # a lossy line's Zc is capacitive at the low end
    np.testing.assert_allclose(gamma.imag, w / (lt.velocity_factor * tl.C0), rtol=0.01)


def test_peak_voltage_on_lossless_line_matches_standing_wave_theory():
    # Pozar, Microwave Engineering 4th ed., sec. 2.3: on a lossless line
    # |V|max = |V+| (1 + |G|) where G e^{-2j beta d} is real and positive,
    # i.e. at d = arg(G) / (2 beta) from the load (mod half a wavelength).
    # Grid of 64 points per wavelength refined twice by 8x: position error
    # below lambda/4096, giving a magnitude error below 1e-5 relative.
    z0, vf, f0 = 50.0, 0.8, 14.2e6
    gamma, zc = tl.propagation_real_z0([f0], z0, vf, 0.0)
    beta = gamma.imag[0]
    lam = 2 * math.pi / beta
    zl = 50.0 + 50.0j
    i2 = np.array([1.3 + 0.2j])
    v2 = zl * i2
    vmax, pos = tl.peak_voltage(gamma, zc, v2, i2, 0.6 * lam)
    g_l = (zl - z0) / (zl + z0)
    v_plus = (v2 + z0 * i2) / 2
    expected = abs(v_plus[0]) * (1 + abs(g_l))
    np.testing.assert_allclose(vmax, expected, rtol=1e-5)
    d0 = (np.angle(g_l) % (2 * math.pi)) / (2 * beta)
    assert min(abs(pos[0] - d0), abs(pos[0] - d0 - lam / 2)) < lam / 1000


def test_peak_voltage_grid_follows_line_length_in_wavelengths():
    # A 10-wavelength line with SWR 4: every voltage maximum has the same
    # height on a lossless line (Pozar sec. 2.3), |V+|(1 + |G|); a grid that
    # were too coarse for a long line would miss it by more than 1e-5.
    z0, vf, f0 = 50.0, 1.0, 28.5e6
    gamma, zc = tl.propagation_real_z0([f0], z0, vf, 0.0)
    lam = 2 * math.pi / gamma.imag[0]
    zl = 200.0
    i2 = np.array([1.0 + 0j])
    vmax, _ = tl.peak_voltage(gamma, zc, zl * i2, i2, 10.0 * lam + 0.13, refine=0)
    expected = abs((zl * i2[0] + z0 * i2[0]) / 2) * (1 + 0.6)
    np.testing.assert_allclose(vmax, expected, rtol=2e-3)  # 64/lambda without refinement:
    # cos(pi/64) error bound 1.2e-3 on the sampled peak


def test_voltage_along_reproduces_port_voltage_at_the_radio_end():
    # V(l) must equal V1 of the ABCD step (the same telegrapher solution,
    # Pozar sec. 2.1); rounding only.
    gamma, zc = _catalog_line("rg-213", 31.0)
    v2 = LOADS * (0.7 + 0.1j)
    i2 = np.full(F.shape, 0.7 + 0.1j)
    v1, _ = twoport.apply(tl.line_abcd(gamma, zc, 31.0), v2, i2)
    np.testing.assert_allclose(tl.voltage_along(gamma, zc, v2, i2, [31.0])[:, 0], v1,
                               rtol=1e-12)


def test_open_circuited_line_reads_minus_j_z0_cot_beta_l():
    # Pozar, Microwave Engineering 4th ed., sec. 2.3 (open-circuited lossless
    # line): Zin = -j Z0 cot(beta l).  An infinite load takes the A/C branch;
    # rounding only.
    z0, vf, length = 300.0, 0.8, 4.1
    gamma, zc = tl.propagation_real_z0(F, z0, vf, 0.0)
    zin = twoport.input_impedance(tl.line_abcd(gamma, zc, length), np.inf)
    np.testing.assert_allclose(zin, -1j * z0 / np.tan(gamma.imag * length), rtol=1e-9)
