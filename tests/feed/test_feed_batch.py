"""Feed-chain variants in one call: the batch path against the power flow of
each variant's own chain (the contract between the two), elements holding
per-variant arrays, and the broadcast cascade against scikit-rf."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
import skrf

from necflow.analysis.powerflow import analyse
from necflow.catalog.lines import LINE_TYPES, make_line_type
from necflow.feed.batch import FeedBatch
from necflow.feed.chain import FeedChain, LineSection, LumpedPart, Transformer

F = np.array([1.85e6, 3.6e6, 7.1e6, 10.12e6, 14.2e6, 21.2e6, 28.3e6])
#: Feedpoint impedances of a multiband wire antenna, low to kilohms; the
#: last frequency is an open feedpoint (the sweep starts from (1, 0) there).
Z_FP = np.array([8 - 450j, 60 + 12j, 2300 + 1900j, 140 - 700j, 75 + 40j, 900 - 1500j,
                 np.inf])

#: The ladder's own type: catalog name, loss from the design file.
OWN_LADDER = make_line_type("window-450", "window line, loss from the design file", True,
                            450.0, 0.91, [(14.2e6, 0.35)], source="test")
BASE = FeedChain((
    LineSection("ladder", OWN_LADDER, 12.0),
    LumpedPart("coil", "shunt", "inductor", 4e-6, q=150.0),
    LumpedPart("cap", "series", "capacitor", 400e-12),              # default Q
    LumpedPart("trim", "shunt", "capacitor", 50e-12, q=500.0),
    LumpedPart("stiff", "series", "inductor", 0.5e-6, esr=0.05),    # ESR rules over Q
    Transformer("bal", 4.0, 0.2, 50.0, loss_model="series"),
    Transformer("choke", 1.0, 0.1, 50.0, loss_model="pad"),
    LumpedPart("pad", "series", "resistor", 2.0),
    LineSection("coax", LINE_TYPES["rg-213"], 30.0),
))
VARIED = [("ladder", "length"), ("ladder", "line"), ("coil", "q"), ("cap", "value"),
          ("trim", "esr"), ("stiff", "q"), ("bal", "ratio"), ("bal", "loss"),
          ("choke", "ratio"), ("choke", "loss"), ("pad", "value"), ("coax", "length")]
#: Design-file field -> element attribute.
ATTR = {"line": "line_type", "loss": "loss_db"}


def _variants(n: int, seed: int) -> dict[tuple[str, str], np.ndarray]:
    rng = np.random.default_rng(seed)
    names = np.array(["window-450", "window-300", "open-wire-600"], dtype=object)
    return {
        ("ladder", "length"): rng.uniform(5.0, 20.0, n),
        ("ladder", "line"): names[rng.integers(3, size=n)],
        ("coil", "q"): rng.uniform(50.0, 400.0, n),
        ("cap", "value"): rng.choice([100e-12, 220e-12, 470e-12, 1000e-12], n),
        ("trim", "esr"): rng.uniform(0.0, 2.0, n),
        ("stiff", "q"): rng.uniform(20.0, 80.0, n),
        ("bal", "ratio"): rng.uniform(1.0, 9.0, n),
        ("bal", "loss"): rng.uniform(0.05, 0.5, n),
        ("choke", "ratio"): rng.uniform(0.5, 4.0, n),
        ("choke", "loss"): rng.uniform(0.0, 1.5, n),
        ("pad", "value"): rng.uniform(0.1, 10.0, n),
        # a grid repeats lengths: few distinct values, each many times
        ("coax", "length"): rng.choice([10.0, 17.5, 22.25, 40.0], n),
    }


def _own_chain(values, k: int) -> FeedChain:
    """Variant k as a chain of its own, every field a plain number."""
    els = []
    for el in BASE.elements:
        changes = {}
        for (eid, name), v in values.items():
            if eid != el.id:
                continue
            if name == "line":
                changes["line_type"] = OWN_LADDER if v[k] == OWN_LADDER.name else LINE_TYPES[v[k]]
            else:
                changes[ATTR.get(name, name)] = float(v[k])
        els.append(replace(el, **changes))
    return FeedChain(tuple(els))


def test_batch_equals_the_power_flow_of_each_variants_own_chain():
    # The contract: a batch of variants and one design go through the same
    # element physics and the same radio-side sweep and loss routine, so
    # they agree to rounding (1e-12 relative; in practice bit for bit).
    # Covered: line length with repeated values, line type choice (the
    # element's own type for its own name), part value, Q (with default Q
    # and where an ESR rules), ESR, transformer ratio and loss in both loss
    # models, and an open feedpoint.
    n = 48
    values = _variants(n, seed=11)
    r = FeedBatch(BASE, F, VARIED).response(values, Z_FP, z_ref=50.0)
    assert r.z_radio.shape == r.swr.shape == r.loss_db.shape == (n, F.size)
    assert np.all(np.isfinite(r.loss_db[:, :-1])) and np.all(r.loss_db[:, -1] == np.inf)
    for k in range(n):
        s = analyse(_own_chain(values, k), F, Z_FP, z_ref=50.0)
        np.testing.assert_allclose(r.z_radio[k], s.z_radio, rtol=1e-12, atol=0)
        np.testing.assert_allclose(r.swr[k], s.swr, rtol=1e-12, atol=0)
        np.testing.assert_allclose(r.loss_db[k], s.loss_db["total"], rtol=1e-12, atol=0)
    # the variants differ from each other: the check compares 48 answers
    assert np.unique(np.round(r.loss_db[:, 2], 9)).size > n // 2


def test_batch_without_varied_fields_is_the_base_design():
    r = FeedBatch(BASE, F).response({}, Z_FP)
    s = analyse(BASE, F, Z_FP)
    assert r.z_radio.shape == (1, F.size)
    np.testing.assert_allclose(r.z_radio[0], s.z_radio, rtol=1e-12, atol=0)
    np.testing.assert_allclose(r.loss_db[0], s.loss_db["total"], rtol=1e-12, atol=0)


def test_elements_holding_arrays_give_batch_matrices_through_their_own_abcd():
    # One design's code path with (nvar,)-shaped fields: the chain's ABCD is
    # (nvar, nfreq, 2, 2), variant k that of variant k's own chain; and two
    # variant axes broadcast like numpy arrays.
    n = 9
    values = _variants(n, seed=5)
    batch = FeedBatch(BASE, F, VARIED)
    chain = batch.variant_chain(values)
    a = chain.abcd(F)
    assert a.shape == (n, F.size, 2, 2)
    for k in range(n):
        np.testing.assert_allclose(a[k], _own_chain(values, k).abcd(F), rtol=1e-12, atol=0)
    grid = np.array([[3.0, 7.5, 7.5], [12.0, 3.0, 30.0]])
    line = LineSection("coax", LINE_TYPES["rg-213"], grid)
    m = line.abcd(F)
    assert m.shape == (2, 3, F.size, 2, 2)
    for idx in np.ndindex(grid.shape):
        np.testing.assert_array_equal(m[idx], replace(line, length=float(grid[idx])).abcd(F))


def test_batch_refuses_unknown_ids_and_fields():
    with pytest.raises(ValueError, match="no feed element with id 'nope'"):
        FeedBatch(BASE, F, [("nope", "length")])
    with pytest.raises(ValueError, match="feed.bal.value cannot be varied in a batch"):
        FeedBatch(BASE, F, [("bal", "value")])


@pytest.mark.parametrize("loss_model", ["series", "pad"])
def test_batch_cascade_matches_scikit_rf(loss_model):
    # Independent implementation: scikit-rf builds each variant from
    # S-parameters -- the line from its propagation constant and complex Zc
    # (DefinedGammaZ0), the lossy series capacitor as a resistor then a
    # capacitor, the transformer's loss as a series resistor or a matched
    # attenuator (S21 = 10^(-L/20)), and the ideal 4:1 transformer as a
    # matched thru between 50-ohm and 200-ohm ports (S = [[0, 1], [1, 0]]
    # with power waves) -- and cascades them with its own renormalisation.
    # Compared: the ABCD of each variant (our chain with a (nvar,) length
    # array), the impedance at the radio, and the total loss against the
    # transducer gain G_T = |S21|^2 (1 - |GL|^2) / |1 - S22 GL|^2 of a
    # matched source (from memory of Pozar, Microwave Engineering 4th ed.,
    # sec. 12.1).  Exact on both sides: rtol 1e-10 is rounding through the
    # S <-> ABCD conversions.
    lengths = np.array([3.0, 11.3, 11.3, 27.9, 3.0, 44.4])
    zl = Z_FP[:-1]
    f = F[:-1]
    loss_db, r_radio, ratio, esr, c = 0.4, 50.0, 4.0, 0.7, 330e-12
    lt = LINE_TYPES["window-450"]
    chain = FeedChain((LineSection("ladder", lt, lengths),
                       LumpedPart("cap", "series", "capacitor", c, esr=esr),
                       Transformer("bal", ratio, loss_db, r_radio, loss_model=loss_model)))
    a = chain.abcd(f)
    z_radio = chain.input_impedance(f, zl)
    r = FeedBatch(replace(chain, elements=(replace(chain.elements[0], length=1.0),
                                           *chain.elements[1:])),
                  f, [("ladder", "length")]).response({("ladder", "length"): lengths}, zl)
    assert a.shape == (lengths.size, f.size, 2, 2)

    freq = skrf.Frequency.from_f(f, unit="Hz")
    m50 = skrf.media.DefinedGammaZ0(freq, z0=r_radio)
    m200 = skrf.media.DefinedGammaZ0(freq, z0=ratio * r_radio)
    loss = (m50.resistor(r_radio * (10 ** (loss_db / 10) - 1)) if loss_model == "series"
            else m50.attenuator(-loss_db, db=True))
    thru = np.tile(np.array([[0, 1], [1, 0]], dtype=complex), (f.size, 1, 1))
    ideal = skrf.Network(frequency=freq, s=thru, z0=[r_radio, ratio * r_radio])
    cap = m200.resistor(esr) ** m200.capacitor(c)
    gamma, zc = LineSection("x", lt, 1.0).propagation(f)
    g_l = (zl - ratio * r_radio) / (zl + ratio * r_radio)
    load = skrf.Network(frequency=freq, s=g_l.reshape(-1, 1, 1), z0=ratio * r_radio)
    for k, length in enumerate(lengths):
        line = skrf.media.DefinedGammaZ0(freq, z0_port=ratio * r_radio, z0=zc,
                                         gamma=gamma).line(length, unit="m")
        net = loss ** ideal ** cap ** line
        np.testing.assert_allclose(a[k], net.a, rtol=1e-10, atol=1e-10 * np.abs(net.a).max())
        z_ref = (net ** load).z[:, 0, 0]
        np.testing.assert_allclose(z_radio[k], z_ref, rtol=1e-10)
        np.testing.assert_allclose(r.z_radio[k], z_ref, rtol=1e-10)
        s = net.s
        g_t = np.abs(s[:, 1, 0]) ** 2 * (1 - np.abs(g_l) ** 2) / np.abs(1 - s[:, 1, 1] * g_l) ** 2
        np.testing.assert_allclose(r.loss_db[k], -10 * np.log10(g_t), rtol=1e-10)
