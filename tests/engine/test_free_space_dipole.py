"""Free-space dipole impedance from the pipeline against induced-EMF theory.

Source: C. A. Balanis, Antenna Theory, 3rd ed., Wiley 2005, ch. 4 and 8;
the input-impedance formula is eqs. 8-60a/b, from memory of Balanis, and
the check values are computed from it (references.md, "Thin dipole in free
space", [derived]).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import speed_of_light
from scipy.special import sici

from necflow.engine import solve_feedpoint
from necflow.model import build_model

ETA = 376.730313668  # free-space wave impedance [ohm]
EULER = 0.5772156649
F = speed_of_light / 1.0  # wavelength 1 m: lengths in metres are lengths in wavelengths
A = 1e-4                  # wire radius 1e-4 wavelength


def induced_emf(l, a, lam=1.0):
    """Input impedance of a centre-fed thin dipole, length l, radius a (Balanis 8-60a/b)."""
    k = 2 * np.pi / lam
    kl = k * l
    si = lambda x: sici(x)[0]  # noqa: E731
    ci = lambda x: sici(x)[1]  # noqa: E731
    rm = ETA / (2 * np.pi) * (EULER + np.log(kl) - ci(kl)
                              + 0.5 * np.sin(kl) * (si(2 * kl) - 2 * si(kl))
                              + 0.5 * np.cos(kl) * (EULER + np.log(kl / 2) + ci(2 * kl)
                                                    - 2 * ci(kl)))
    xm = ETA / (4 * np.pi) * (2 * si(kl) + np.cos(kl) * (2 * si(kl) - si(2 * kl))
                              - np.sin(kl) * (2 * ci(kl) - ci(2 * kl) - ci(2 * k * a ** 2 / l)))
    return (rm + 1j * xm) / np.sin(kl / 2) ** 2


# references.md table, a = 1e-4 wavelength [derived from Balanis 8-60a/b].
TABLE = {0.10: (2.00, -1920), 0.25: (13.43, -722.8), 0.40: (39.92, -231.1),
         0.45: (54.29, -94.4), 0.48: (64.94, -12.7), 0.50: (73.08, 42.5),
         0.60: (132.4, 345.7), 0.75: (371.4, 1069)}


@pytest.mark.parametrize("l", sorted(TABLE))
def test_formula_reproduces_the_table(l):
    # The table is rounded to 3-4 significant figures: 0.3 % or 0.06 ohm.
    r, x = TABLE[l]
    z = induced_emf(l, A)
    assert z.real == pytest.approx(r, rel=3e-3, abs=0.06)
    assert z.imag == pytest.approx(x, rel=3e-3, abs=0.06)


def test_half_wave_closed_form():
    # Balanis ch. 4: Z = 30 Cin(2 pi) + j 30 Si(2 pi) = 73.08 + j 42.52 (thin limit).
    si, ci = sici(2 * np.pi)
    cin = EULER + np.log(2 * np.pi) - ci
    z = induced_emf(0.5, A)
    assert z.real == pytest.approx(ETA / (4 * np.pi) * cin, rel=1e-9)
    assert z.real == pytest.approx(73.08, abs=0.01)
    assert z.imag == pytest.approx(42.52, abs=0.01)


def dipole(make_design, length):
    d = make_design({"shape": "doublet", "span": f"{length!r} m", "height": "5 m",
                     "wire": {"diameter": f"{2 * A!r} m", "material": "lossless"}},
                    segments_per_wavelength=40)
    return build_model(d, F)


# Tolerances: the induced-EMF method assumes a sinusoidal current; the method
# of moments solves for the current and its delta-gap source differs from the
# formula's.  Near resonance (0.4-0.5 wavelength) the moment-method resistance
# reads 5-10 % above induced EMF (references.md: "a thin NEC dipole of exactly
# half a wavelength reads near 78 + j45"), so R gets 12 %.  Beyond 0.5
# wavelength the true current departs further from a sine (at 0.75 wavelength
# the feed sits near a current minimum), so R gets 25 % at 0.6 and 40 % at 0.75.
# Reactance: within 15 ohm near resonance (a few ohms of feed-gap difference),
# 8 % for the short 0.25-wavelength dipole (its -j720 ohm depends on the
# log radius term, sensitive to segmentation), 15 % at 0.6-0.75.
CASES = [  # l, R rel tol, X rel tol, X abs tol
    (0.25, 0.12, 0.08, 0.0),
    (0.40, 0.12, 0.0, 15.0),
    (0.45, 0.12, 0.0, 15.0),
    (0.48, 0.12, 0.0, 15.0),
    (0.50, 0.12, 0.0, 15.0),
    (0.60, 0.25, 0.15, 0.0),
    (0.75, 0.40, 0.15, 0.0),
]


@pytest.mark.engine
@pytest.mark.parametrize("l, r_tol, x_rel, x_abs", CASES)
def test_pipeline_dipole_against_induced_emf(make_design, l, r_tol, x_rel, x_abs):
    z = solve_feedpoint(dipole(make_design, l), np.array([F]))[0]
    ref = induced_emf(l, A)
    assert z.real == pytest.approx(ref.real, rel=r_tol)
    assert z.imag == pytest.approx(ref.imag, rel=x_rel, abs=x_abs)


@pytest.mark.engine
def test_moment_method_resistance_runs_above_induced_emf_near_resonance(make_design):
    # A systematic, not random, difference: the same sign at every length from
    # 0.4 to 0.5 wavelength (references.md, method-of-moments note).
    for l in (0.40, 0.45, 0.50):
        z = solve_feedpoint(dipole(make_design, l), np.array([F]))[0]
        assert 1.0 < z.real / induced_emf(l, A).real < 1.12


@pytest.mark.engine
def test_resonant_length(make_design):
    # Induced EMF: a = 1e-4 wavelength resonates at l = 0.4846 wavelength
    # (references.md, [derived]).  Sweep frequency over a 0.4846 m wire and find
    # where X crosses zero: within 1 % of the frequency whose wavelength is 1 m
    # (where the wire is 0.4846 wavelength).  The moment-method shift of
    # resonance is a few tenths of a percent; a 1 % error in frequency handling
    # (e.g. MHz/Hz or step bookkeeping) would fail.
    m = dipole(make_design, 0.4846)
    f = np.linspace(0.97, 1.03, 7) * F
    x = solve_feedpoint(m, f).imag
    assert np.all(np.diff(x) > 0)  # reactance rises through resonance
    f0 = np.interp(0.0, x, f)
    assert f0 == pytest.approx(F, rel=0.01)
