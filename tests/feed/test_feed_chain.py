"""build_chain: schema elements to two-ports; parts, transformers, order, errors."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest

from necflow.catalog.lines import LINE_TYPES
from necflow.config.schema import LineElement, PartElement, TransformerElement
from necflow.errors import ConfigError, NecflowWarning
from necflow.feed import twoport
from necflow.feed.chain import FeedChain, LineSection, LumpedPart, Transformer, build_chain
from necflow.feed.lumped import DEFAULT_Q, part_impedance

F = np.array([3.6e6, 7.15e6, 14.2e6])
W = 2 * math.pi * F


def test_build_chain_kinds_ids_and_metadata():
    ch = build_chain([
        LineElement(id="sec", line="window-450", length="11.5 m"),
        PartElement(id="cap", series="capacitor", value="470 pF", q=1500),
        PartElement(id="coil", shunt="inductor", value="2.2 uH"),
        TransformerElement(id="bal", transformer="balun", ratio="4:1"),
        LineElement(id="run", line="rg-213", length="20 m"),
    ])
    assert ch.ids == ["sec", "cap", "coil", "bal", "run"]
    assert [e.kind for e in ch.elements] == ["line", "series", "shunt", "transformer", "line"]
    assert ch.elements[0].metadata["line"] == "window-450"
    assert ch.elements[0].metadata["length_m"] == pytest.approx(11.5)
    assert ch.elements[3].ratio == pytest.approx(4.0)
    assert ch.abcd(F).shape == (3, 2, 2)


def test_unknown_line_type_is_a_config_error_with_field_path():
    with pytest.raises(ConfigError) as exc:
        build_chain([PartElement(id="c", series="capacitor", value="100 pF"),
                     LineElement(id="x", line="rg-999", length="3 m")])
    assert exc.value.field == "feed[1].line"
    assert "unknown line type 'rg-999'" in exc.value.message
    assert "rg-213" in exc.value.message


def test_direct_feed_is_allowed():
    ch = build_chain([])
    z = np.array([30 - 20j, 70 + 5j, 400 + 900j])
    np.testing.assert_allclose(ch.input_impedance(F, z), z)


def test_out_of_range_frequency_warns_once_per_call_naming_element_and_type():
    ch = build_chain([LineElement(id="ladder", line="rg-8-foam", length="10 m")])
    f = np.linspace(25e6, 29e6, 40)  # above the range the 10 MHz figure supports
    with pytest.warns(NecflowWarning) as rec:
        ch.abcd(f)
    msgs = [str(r.message) for r in rec if issubclass(r.category, NecflowWarning)]
    assert len(msgs) == 1
    assert "ladder" in msgs[0] and "rg-8-foam" in msgs[0] and "MHz" in msgs[0]


def test_in_range_frequency_does_not_warn():
    ch = build_chain([LineElement(id="run", line="rg-213", length="30 m")])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        ch.abcd(F)


def test_part_impedances_with_default_q():
    # Default Q (common practice, typical values): capacitors 1000, inductors 200.
    # ESR = |X| / Q (Pozar, Microwave Engineering 4th ed., sec. 6.1, Q = X/R).
    zc = part_impedance(F, "capacitor", 500e-12)
    x = -1 / (W * 500e-12)
    np.testing.assert_allclose(zc, np.abs(x) / 1000 + 1j * x, rtol=1e-12)
    zl = part_impedance(F, "inductor", 2e-6)
    np.testing.assert_allclose(zl, W * 2e-6 / 200 + 1j * W * 2e-6, rtol=1e-12)
    assert DEFAULT_Q == {"capacitor": 1000.0, "inductor": 200.0}
    np.testing.assert_allclose(part_impedance(F, "capacitor", 1e-9, esr=0.3).real, 0.3)
    np.testing.assert_allclose(part_impedance(F, "resistor", 22.0), 22.0)


def test_chain_order_antenna_side_first():
    # Closed-form composed network (circuit algebra, Ohm's law):
    # a 100-ohm resistor across the antenna, then 10 ohm in series toward the
    # radio: Zin = 10 + (100 || ZL).  Reversing the order gives a different
    # value, so the check pins the cascade order.  Rounding only.
    zl = np.array([50 + 20j, 5 - 3j, 300 + 0j])
    ch = build_chain([PartElement(id="across", shunt="resistor", value="100 ohm"),
                      PartElement(id="inline", series="resistor", value="10 ohm")])
    expected = 10 + 100 * zl / (100 + zl)
    np.testing.assert_allclose(ch.input_impedance(F, zl), expected, rtol=1e-12)
    swapped = FeedChain(tuple(reversed(ch.elements)))
    assert not np.allclose(swapped.input_impedance(F, zl), expected)


def test_series_and_shunt_abcd_follow_pozar_table():
    # Pozar, Microwave Engineering 4th ed., table 4.1.
    p = LumpedPart("c", "series", "capacitor", 100e-12, esr=0.0)
    m = p.abcd(F)
    np.testing.assert_allclose(m[:, 0, 1], 1 / (1j * W * 100e-12))
    np.testing.assert_allclose(m[:, 1, 0], 0)
    s = LumpedPart("l", "shunt", "inductor", 1e-6, esr=0.0)
    np.testing.assert_allclose(s.abcd(F)[:, 1, 0], 1 / (1j * W * 1e-6))
    np.testing.assert_allclose(s.abcd(F)[:, 0, 1], 0)


def test_transformer_ratio_and_matched_loss():
    # Ideal transformer (Pozar table 4.1): a 4:1 (antenna:radio) unit reads
    # ZL/4; with the matched-pad loss, terminated in 4 x 50 ohm it reads 50 ohm
    # and passes 10^(-L/10) of the power.  Rounding only.
    lossless = Transformer("t", 4.0, 0.0, 50.0).abcd(F)
    zl = np.array([200 + 0j, 37 - 80j, 1000 + 300j])
    np.testing.assert_allclose(twoport.input_impedance(lossless, zl), zl / 4, rtol=1e-12)
    lossy = Transformer("t", 4.0, 0.5, 50.0, loss_model="pad").abcd(F)
    np.testing.assert_allclose(twoport.input_impedance(lossy, 200.0), 50.0, rtol=1e-12)
    v1 = np.ones(3, complex)
    v2, i2 = twoport.step_forward(lossy, v1, v1 / 50.0)
    p_out = (v2 * i2.conj()).real
    np.testing.assert_allclose(10 * np.log10((1 / 50.0) / p_out), 0.5, rtol=1e-12)


def test_transformer_series_loss_model():
    # Series winding resistance R = r0 (10^(L/10) - 1) (Pozar table 4.1, series
    # impedance): terminated in ratio x r0 it reads r0 + R and P_in/P_out is
    # exactly 10^(L/10).  Into a high, nearly reactive load it loses far less
    # than the pad model, whose shunt resistance sees the full voltage.
    t = Transformer("t", 4.0, 0.5, 50.0, loss_model="series")
    r = 50.0 * (10 ** 0.05 - 1)
    np.testing.assert_allclose(twoport.input_impedance(t.abcd(F), 200.0), 50.0 + r, rtol=1e-12)
    v1 = np.ones(3, complex)
    v2, i2 = twoport.step_forward(t.abcd(F), v1, v1 / (50.0 + r))
    p_in = 1 / (50.0 + r)
    p_out = (v2 * i2.conj()).real
    np.testing.assert_allclose(10 * np.log10(p_in / p_out), 0.5, rtol=1e-12)

    def loss_into(model, zl):
        m = Transformer("t", 1.0, 0.15, 50.0, loss_model=model).abcd(F)
        zin = twoport.input_impedance(m, zl)
        v1 = np.ones(3, complex)
        v2, i2 = twoport.step_forward(m, v1, v1 / zin)
        return 10 * np.log10((v1 * (v1 / zin).conj()).real / (v2 * i2.conj()).real)

    zl = 20 - 1500j
    assert np.all(loss_into("series", zl) < 0.2 * loss_into("pad", zl))


def test_custom_and_overridden_lines():
    ch = build_chain([
        LineElement(id="c", line="custom", length="5 m", impedance="100 ohm",
                    velocity_factor=0.7, loss=[{"frequency": "10 MHz", "db": 0.8}]),
        LineElement(id="o", line="rg-213", length="5 m", velocity_factor=0.8),
    ])
    c, o = ch.elements
    assert c.line_type.z0 == 100.0 and c.line_type.velocity_factor == 0.7
    assert float(c.line_type.attenuation_db_per_m(10e6)) * 30.48 == pytest.approx(0.8)
    assert o.line_type.velocity_factor == 0.8
    assert o.line_type.k1 == pytest.approx(LINE_TYPES["rg-213"].k1)


def test_real_z0_model_of_a_line_section():
    sec = LineSection("x", LINE_TYPES["rg-58"], 10.0, model="real-z0")
    gamma, zc = sec.propagation(F)
    np.testing.assert_allclose(zc, 50.0)
    np.testing.assert_allclose(gamma.real * 20 / math.log(10),
                               LINE_TYPES["rg-58"].attenuation_db_per_m(F), rtol=1e-12)


def test_a_balanced_line_with_its_own_loss_figures_stays_balanced():
    """A catalog two-wire line given a 'loss' override is still two-wire line
    (it was treated as coax by the alternatives); its loss follows the figure
    given: 0.5 dB per 100 ft at 14 MHz on a matched 30.48 m (100 ft) length,
    that is |S21|^2 = 10^(-0.05) in the line's own impedance (Pozar sec. 2.7,
    matched line)."""
    el = LineElement(id="ladder", line="twin-lead-300", length="100 ft",
                     loss=[{"frequency": "14 MHz", "db": 0.5}])
    sec = build_chain([el]).elements[0]
    assert LINE_TYPES["twin-lead-300"].balanced
    assert sec.line_type.balanced
    gamma, zc = sec.propagation(np.array([14e6]))
    matched_loss_db = 20 * np.log10(np.exp(gamma.real * 30.48))
    assert matched_loss_db[0] == pytest.approx(0.5, rel=1e-3)


@pytest.mark.parametrize("line, given, expected", [
    ("twin-lead-300", None, True), ("rg-213", None, False), ("rg-213", True, True),
    ("custom", None, False), ("custom", True, True)])
def test_balance_of_a_line(line, given, expected):
    extra = {"impedance": "450 ohm", "velocity_factor": 0.9,
             "loss": [{"frequency": "14 MHz", "db": 0.2}]} if line == "custom" else {}
    el = LineElement(id="x", line=line, length="10 m", balanced=given, **extra)
    assert build_chain([el]).elements[0].line_type.balanced is expected
