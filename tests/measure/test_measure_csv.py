"""CSV sweeps: every header variant, units from the header or given, errors."""

from __future__ import annotations

import numpy as np
import pytest

from necflow.errors import ConfigError
from necflow.measure.csvfile import parse_csv, split_header
from necflow.measure.types import gamma_from_z, mag_from_swr

Z = np.array([30 - 20j, 50 + 0j, 80 + 45j])
F_MHZ = np.array([7.0, 7.1, 7.2])
G = gamma_from_z(Z, 50.0)


def _rows(cols):
    return "\n".join(",".join(f"{c:.12g}" for c in row) for row in zip(*cols)) + "\n"


@pytest.mark.parametrize("name, key, unit", [
    ("freq_mhz", "freq", "mhz"), ("Frequency (kHz)", "frequency", "khz"),
    ("frequency [Hz]", "frequency", "hz"), ("F GHz", "f", "ghz"), ("SWR", "swr", None),
    ("Return Loss (dB)", "returnloss", "db"), ("phase_deg", "phase", "deg"),
])
def test_header_split(name, key, unit):
    assert split_header(name) == (key, unit)


def test_r_and_x_give_complex_reflection():
    # Gamma = (Z - Z0)/(Z + Z0), Pozar, Microwave Engineering 4th ed., ch. 2
    m = parse_csv("Frequency (MHz),R (ohm),X (ohm)\n" + _rows([F_MHZ, Z.real, Z.imag]))
    np.testing.assert_allclose(m.frequency_hz, F_MHZ * 1e6)
    np.testing.assert_allclose(m.gamma, G, atol=1e-12)
    assert m.quantity == "R+X"


def test_swr_only_is_magnitude():
    swr = (1 + abs(G)) / (1 - abs(G))
    m = parse_csv("freq_khz;swr\n" + _rows([F_MHZ * 1e3, swr]).replace(",", ";"))
    assert m.gamma is None and not m.complex
    np.testing.assert_allclose(m.gamma_mag, abs(G), atol=1e-12)


def test_return_loss_and_s11_db():
    rl = -20 * np.log10(abs(G[[0, 2]]))     # RL = -20 log|G|, Pozar ch. 2
    f = F_MHZ[[0, 2]]
    m = parse_csv("freq_mhz,return_loss_db\n" + _rows([f, rl]))
    np.testing.assert_allclose(m.gamma_mag, abs(G[[0, 2]]), rtol=1e-10)
    m2 = parse_csv("freq_mhz\ts11_db\n" + _rows([f, -rl]).replace(",", "\t"))
    np.testing.assert_allclose(m2.gamma_mag, abs(G[[0, 2]]), rtol=1e-10)


@pytest.mark.parametrize("unit, conv", [("deg", np.degrees), ("rad", lambda x: x)])
def test_mag_and_phase(unit, conv):
    m = parse_csv(f"# comment line\nfreq_hz,|gamma|,phase ({unit})\n"
                  + _rows([F_MHZ * 1e6, abs(G), conv(np.angle(G))]))
    np.testing.assert_allclose(m.gamma, G, atol=1e-10)


def test_unit_from_command_line_and_reference():
    text = "freq,r,x\n" + _rows([F_MHZ, Z.real, Z.imag])
    m = parse_csv(text, frequency_unit="MHz", z_ref=75.0)
    np.testing.assert_allclose(m.gamma, gamma_from_z(Z, 75.0), atol=1e-12)
    assert m.z_ref == 75.0


@pytest.mark.parametrize("text, kwargs, phrase, line, field", [
    ("freq,swr\n7,1.5\n", {}, "gives no unit", 1, "freq"),
    ("freq_mhz,swr\n7,1.5\n", {"frequency_unit": "kHz"}, "header says", 1, "freq_mhz"),
    ("freq_mhz,swr\n7,0.5\n", {}, "SWR below 1", 2, "swr"),
    ("freq_mhz,swr\n7,1.5\n6.9,1.4\n", {}, "must increase", 3, "freq_mhz"),
    ("freq_mhz,swr\n7,abc\n", {}, "'abc' is not a number", 2, "swr"),
    ("freq_mhz,temperature\n7,20\n", {}, "no measured quantity", 1, None),
    ("swr,r\n1,2\n", {}, "no frequency column", 1, None),
    ("freq_mhz,return_loss_db\n7,-10\n", {}, "negative return loss", 2, "return_loss_db"),
    ("freq_mhz,swr\n", {}, "no data rows", 1, None),
])
def test_malformed_csv_one_line_errors(text, kwargs, phrase, line, field):
    with pytest.raises(ConfigError) as e:
        parse_csv(text, file="s.csv", **kwargs)
    msg = str(e.value)
    assert "\n" not in msg and phrase in msg
    assert msg.startswith(f"s.csv:{line}: " + (f"{field}: " if field else ""))


def test_swr_round_trip():
    # SWR = (1+|G|)/(1-|G|) and back, Pozar ch. 2; exact algebra
    np.testing.assert_allclose(mag_from_swr([1.5, 2.0, 3.0]), [0.2, 1 / 3, 0.5])
