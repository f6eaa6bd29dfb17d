"""Physical line data: conductor size and spacing of two-wire lines, shield of coax,
and the radius a line has as a conductor for common-mode current.

Sources beside each check.  The dimensions are typical generic constructions
recalled from makers' data, so the checks carry tolerances that survive a
slip of a few tenths of a millimetre.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest

from necflow.catalog.lines import (
    LINE_TYPES,
    common_mode_radius,
    custom_line_type,
    resolve_line_type,
)

TWO_WIRE = [n for n, lt in LINE_TYPES.items() if lt.balanced]
COAX = [n for n, lt in LINE_TYPES.items() if not lt.balanced]
#: Lines whose conductors sit in a dielectric (web or ribbon): all but open wire.
DIELECTRIC = ("window-450", "window-300", "twin-lead-300")


def z0_air(d: float, s: float) -> float:
    """Two-wire line in air: Z0 = 120 acosh(s/d) ohm.  From memory of the ARRL
    Antenna Book, transmission-line chapter (Pozar ch. 2 for the general form),
    as in the project's reference values ("Feed lines as conductors")."""
    return 120.0 * math.acosh(s / d)


def test_every_line_has_its_physical_data():
    assert TWO_WIRE and COAX
    for name, lt in LINE_TYPES.items():
        c = lt.construction
        assert c is not None, name
        assert c.source.startswith(("[memory]", "[derived]")), name
        if lt.balanced:
            assert c.two_wire and c.shield_diameter is None, name
            # several radii apart at least (else the thin-wire formulas fail)
            assert c.spacing > 5 * c.conductor_diameter, name
        else:
            assert not c.two_wire and c.shield_diameter is not None, name


def test_open_wire_agrees_with_the_air_line_formula():
    """Open-wire line is air-spaced (spacers only): its nominal 600 ohm must
    agree with 120 acosh(s/d) within 10 % (the spacers lower Z0 by a percent
    or two).  Its spacing was derived from this formula (see its source), so
    this check guards the entry against a slip in the data."""
    lt = LINE_TYPES["open-wire-600"]
    c = lt.construction
    assert z0_air(c.conductor_diameter, c.spacing) == pytest.approx(lt.z0, rel=0.10)


@pytest.mark.parametrize("name", DIELECTRIC)
def test_lines_in_a_dielectric_fall_below_the_air_value_by_their_velocity_factor(name):
    """A dielectric around the conductors raises the capacitance per metre and
    leaves the inductance per metre alone (non-magnetic), so Z0 = sqrt(L/C)
    falls below the air value.  For a quasi-TEM line Z0 = L v, so the ratio to
    the air value is the velocity factor: Z0 / Z0_air = v / c = VF (from memory
    of Pozar, Microwave Engineering 4th ed., ch. 2 and 3: L' and C' of a TEM
    line, v = 1/sqrt(L'C')).  The catalog's Z0 and VF come from measurements
    (window line) or trade figures, the dimensions from makers' data: an
    independent pair.  Band: the ratio within 10 % of the VF (dimensions
    recalled to a few tenths of a millimetre move the air value by about 5 %)."""
    lt = LINE_TYPES[name]
    c = lt.construction
    air = z0_air(c.conductor_diameter, c.spacing)
    assert lt.z0 < air
    assert lt.z0 / air == pytest.approx(lt.velocity_factor, rel=0.10)


def _equivalent_radius_by_charges(a: float, s: float, n: int = 48) -> float:
    """Equivalent radius of two parallel wires at one potential, by a small
    independent 2-D electrostatic computation (charge simulation): ``n`` line
    charges inside each wire (at 0.6 a), the potential
    ``phi = -sum q_k ln|r - r_k|`` set to 1 at ``n`` points on each surface.  A
    single wire of radius ``ae`` carrying the same total charge Q has the same
    surface potential and the same field far away when ``-Q ln ae = 1``.  The
    charges may crowd to the outer sides (proximity effect); the closed form
    neglects that."""
    th = 2.0 * np.pi * np.arange(n) / n
    ring = np.c_[np.cos(th), np.sin(th)]
    charges = np.vstack([np.array([cx, 0.0]) + 0.6 * a * ring for cx in (-s / 2, s / 2)])
    match = np.vstack([np.array([cx, 0.0]) + a * ring for cx in (-s / 2, s / 2)])
    dist = np.linalg.norm(match[:, None, :] - charges[None, :, :], axis=2)
    q = np.linalg.solve(-np.log(dist), np.ones(len(match)))
    return math.exp(-1.0 / q.sum())


@pytest.mark.parametrize("name", TWO_WIRE)
def test_common_mode_radius_of_a_pair_is_its_equivalent_radius(name):
    """sqrt(a s) (from memory of Balanis, Antenna Theory 3rd ed., sec. 9.5,
    equivalent radius of two parallel conductors) against the charge
    computation above.  Within 1 %: at the catalog's spacings (s/a of 15 or
    more) the proximity effect the closed form leaves out is below 0.3 %."""
    c = LINE_TYPES[name].construction
    a = c.conductor_diameter / 2
    got = common_mode_radius(name)
    assert got == pytest.approx(_equivalent_radius_by_charges(a, c.spacing), rel=0.01)
    assert a < got < c.spacing          # between one wire and the whole pair


def test_the_charge_computation_itself_meets_the_far_apart_limit():
    """The independent computation is sound: with the two wires far apart
    (s = 1000 a) each wire's charge is uniform and the equivalent radius is
    sqrt(a s) to 1e-4 (the logarithmic mean of the two wires' own and mutual
    potentials)."""
    a = 1e-3
    assert _equivalent_radius_by_charges(a, 1000 * a) == pytest.approx(math.sqrt(a * 1000 * a),
                                                                         rel=1e-4)


@pytest.mark.parametrize("name", COAX)
def test_coax_common_mode_radius_is_the_shield_and_the_jacket_fits(name):
    """Common-mode current flows on the outside of the shield: the radius is
    half the shield diameter.  The jacket wall (jacket minus shield, halved)
    is 0.3-1.5 mm on such cables (common practice), and the jacket diameter
    agrees within 0.5 mm with the size the catalog's description gives
    (a guard against a slip between two hand-typed figures)."""
    lt = LINE_TYPES[name]
    c = lt.construction
    assert common_mode_radius(name) == 0.5 * c.shield_diameter
    assert common_mode_radius(lt) == 0.5 * c.shield_diameter
    wall = (c.jacket_diameter - c.shield_diameter) / 2
    assert 0.3e-3 <= wall <= 1.5e-3
    described = float(re.search(r"(\d+(?:\.\d+)?) mm", lt.description).group(1)) * 1e-3
    assert c.jacket_diameter == pytest.approx(described, abs=0.5e-3)


def test_a_custom_line_has_no_radius_and_an_unknown_name_is_refused():
    custom = custom_line_type(450.0, 0.9, [(14e6, 0.2, 30.48)])
    with pytest.raises(ValueError, match="no physical data"):
        common_mode_radius(custom)
    with pytest.raises(KeyError):
        common_mode_radius("rg-214")


def test_overridden_catalog_lines_keep_their_construction():
    """A design that changes a catalog line's Z0 or loss figures keeps the
    line's physical build (the conductor is the same wire)."""
    base = LINE_TYPES["window-450"]
    assert resolve_line_type("window-450", impedance=420.0).construction == base.construction
    lossy = resolve_line_type("window-450", loss=[(14e6, 0.3, 30.48)])
    assert lossy.construction == base.construction
