"""Touchstone v1 one-port reader: the specification's examples, every option
variant (cross-checked with scikit-rf's reader) and one-line errors."""

from __future__ import annotations

import numpy as np
import pytest
import skrf

from necflow.errors import ConfigError
from necflow.measure.touchstone import parse_option_line, parse_touchstone

# Example files of the Touchstone File Format Specification, version 1.1
# (EIA/IBIS Open Forum, 2002), written out from memory of that document.
SPEC_EXAMPLE_1 = """!1-port S-parameter file, single frequency point
# MHz S MA R 50
!freq magS11 angS11
2.000 0.894 -12.136
"""
SPEC_EXAMPLE_2 = """!1-port Z-parameter file, multiple frequency points
# MHz Z MA R 75
!freq magZ11 angZ11
100 0.99 -4
200 0.80 -22
300 0.707 -45
400 0.40 -62
500 0.01 -89
"""
SPEC_EXAMPLE_2PORT = """!2-port S-parameter file, three frequency points
# GHz S MA R 50
!freq magS11 angS11 magS21 angS21 magS12 angS12 magS22 angS22
1.000 0.3926 -61.3240 3.2264 4.8379 0.0611 1.8270 0.5314 -50.0480
2.000 0.3517 -60.9640 2.2423 -15.3720 0.0801 -21.1670 0.4970 -70.8290
10.000 0.3419 -60.1620 3.7451 44.7750 0.1091 -19.5420 0.4833 -90.4040
"""


def test_spec_example_1_single_point():
    # from memory of the Touchstone File Format Specification 1.1, example 1
    m = parse_touchstone(SPEC_EXAMPLE_1)
    assert m.frequency_hz.tolist() == [2e6]
    assert m.z_ref == 50.0
    # exact: magnitude 0.894 at -12.136 deg is the S11 as written
    assert m.gamma[0] == pytest.approx(0.894 * np.exp(-1j * np.deg2rad(12.136)), rel=1e-12)


def test_spec_example_2_z_normalised_to_r():
    # from memory of the Touchstone File Format Specification 1.1, example 2:
    # Z parameters are normalised to R (75 ohm), so Z = 75 * 0.99 /_-4 deg ohm
    m = parse_touchstone(SPEC_EXAMPLE_2)
    assert m.z_ref == 75.0
    assert m.frequency_hz.tolist() == [1e8, 2e8, 3e8, 4e8, 5e8]
    z = 75.0 * 0.99 * np.exp(-1j * np.deg2rad(4))
    assert m.gamma[0] == pytest.approx((z - 75) / (z + 75), rel=1e-12)
    # a nearly shorted port (0.01 normalised) reflects nearly -1
    assert abs(m.gamma[-1] + 1) < 0.03


def test_spec_two_port_example_refused():
    # from memory of the Touchstone File Format Specification 1.1 (two-port example)
    with pytest.raises(ConfigError, match="one-port") as e:
        parse_touchstone(SPEC_EXAMPLE_2PORT, file="amp.s1p")
    assert "amp.s1p:4:" in str(e.value) and "\n" not in str(e.value)


@pytest.mark.parametrize("line, expected", [
    ("#", (1e9, "S", "MA", 50.0)),                        # every default
    ("# hz s ri r 75", (1.0, "S", "RI", 75.0)),           # lower case
    ("# R 25 DB kHz Y", (1e3, "Y", "DB", 25.0)),          # any order
    ("#MHz Z RI", (1e6, "Z", "RI", 50.0)),
])
def test_option_line_variants(line, expected):
    # Touchstone 1.1: items in any order, case-insensitive, defaults GHz S MA R 50
    assert parse_option_line(line) == expected


VALUES = [(0.3, 20.0), (0.5, -45.0), (0.8, 170.0)]


def _file(unit, param, fmt, r):
    scale = {"Hz": 1, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9}[unit]
    lines = ["! variant written by the test", f"# {unit} {param} {fmt} R {r}"]
    for k, (mag, deg) in enumerate(VALUES):
        f = (7.0e6 + k * 1e5) / scale
        v = mag * np.exp(1j * np.deg2rad(deg))
        if param == "Z":
            v = 0.9 + v          # a normalised impedance with positive real part (0.112)
        if param == "Y":
            v = 1.3 + v
        a, b = {"RI": (v.real, v.imag), "MA": (abs(v), np.degrees(np.angle(v))),
                "DB": (20 * np.log10(abs(v)), np.degrees(np.angle(v)))}[fmt]
        lines.append(f"{f:.12g} {a:.12g} {b:.12g}  ! trailing comment")
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("unit", ["Hz", "kHz", "MHz", "GHz"])
@pytest.mark.parametrize("param", ["S", "Z"])
@pytest.mark.parametrize("fmt", ["RI", "MA", "DB"])
def test_every_variant_agrees_with_scikit_rf(tmp_path, unit, param, fmt):
    # scikit-rf's Touchstone reader is an independent implementation of the
    # same specification; agreement to 1e-9 is rounding of 12 printed digits.
    text = _file(unit, param, fmt, 75)
    path = tmp_path / "sweep.s1p"
    path.write_text(text)
    ours = parse_touchstone(text)
    net = skrf.Network(str(path))
    np.testing.assert_allclose(ours.frequency_hz, net.f, rtol=1e-12)
    if param == "S":
        np.testing.assert_allclose(ours.gamma, net.s[:, 0, 0], atol=1e-9)
    else:
        # scikit-rf renormalises Z/Y files to its own S: compare impedances
        z_ours = 75.0 * (1 + ours.gamma) / (1 - ours.gamma)
        np.testing.assert_allclose(z_ours, net.z[:, 0, 0], rtol=1e-9)


@pytest.mark.parametrize("text, phrase, line", [
    ("# MHz S RI\n7.0 0.1\n", "2 numbers", 2),
    ("# MHz S RI\n7.0 0.1 zero\n", "'zero' is not a number", 2),
    ("# MHz S RI\n7.1 0.1 0.2\n7.0 0.1 0.2\n", "must increase", 3),
    ("# MHz S RI\n0 0.1 0.2\n7.0 0.1 0.2\n", "must be positive", 2),
    ("# MHz S RI\nnan 0.1 0.2\n", "must be positive", 2),  # float() reads 'nan'
    ("# MHz Q RI\n", "unknown option 'Q'", 1),
    ("# MHz S RI R\n7 0 0\n", "needs the reference", 1),
    ("! nothing\n", "no data lines", None),
    ("7.0 0.1 0.2\n", "before the option line", 1),
    ("[Version] 2.0\n# MHz S RI\n", "version 2", 1),
])
def test_malformed_files_one_line_errors(text, phrase, line):
    with pytest.raises(ConfigError) as e:
        parse_touchstone(text, file="x.s1p")
    msg = str(e.value)
    assert phrase in msg and "\n" not in msg
    assert msg.startswith(f"x.s1p:{line}:" if line else "x.s1p:")


@pytest.mark.parametrize("fmt", ["RI", "MA", "DB"])
def test_y_files_divide_by_r(fmt):
    # Touchstone 1.1 (from memory of the specification): Y data are
    # normalised by R, so Y = y_file / R.  scikit-rf's reader (version in this
    # venv) multiplies by R instead, so Y is checked here by closed form.
    m = parse_touchstone(_file("MHz", "Y", fmt, 75))
    y_norm = np.array([1.3 + mag * np.exp(1j * np.deg2rad(deg)) for mag, deg in VALUES])
    z = 75.0 / y_norm
    np.testing.assert_allclose(m.gamma, (z - 75) / (z + 75), atol=1e-9)
