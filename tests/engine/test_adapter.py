"""The engine adapter: failures become EngineError, order and bookkeeping hold."""

from __future__ import annotations

import importlib.metadata

import numpy as np
import pytest

from necflow.engine import engine_version, pynec_adapter, solve_count, solve_feedpoint
from necflow.errors import EngineError
from necflow.model import build_model

F_MAX = 14.35e6


@pytest.fixture
def model(make_design):
    d = make_design({"shape": "doublet", "span": "10.2 m", "height": "10 m",
                     "wire": {"material": "copper"}})
    return build_model(d, F_MAX)


class _Input:
    def __init__(self, z, f):
        self._z, self._f = z, f

    def get_impedance(self):
        return np.array([self._z])

    def get_frequency(self):
        return self._f


class _FakeContext:
    """Stands in for the engine context; returns a NaN impedance."""

    def __init__(self):
        self.freqs = []

    def get_geometry(self):
        class G:
            def wire(self, *args):
                pass
        return G()

    def geometry_complete(self, *a):
        pass

    def ld_card(self, *a):
        pass

    def gn_card(self, *a):
        pass

    def ex_card(self, *a):
        pass

    def fr_card(self, _mode, n, f_mhz, step):
        self.freqs += [(f_mhz + i * step) * 1e6 for i in range(n)]

    def xq_card(self, *a):
        pass

    def get_input_parameters(self, i):
        return _Input(complex("nan+1j"), self.freqs[i])


def test_context_failure_becomes_engine_error(model, monkeypatch):
    def broken():
        raise RuntimeError("Unknown exception")

    monkeypatch.setattr(pynec_adapter, "nec_context", broken)
    with pytest.raises(EngineError) as info:
        solve_feedpoint(model, np.array([14e6]))
    msg = str(info.value)
    assert "create the engine context" in msg and model.key()[:12] in msg


def test_nan_result_becomes_engine_error(model, monkeypatch):
    monkeypatch.setattr(pynec_adapter, "nec_context", _FakeContext)
    before = solve_count()
    with pytest.raises(EngineError) as info:
        solve_feedpoint(model, np.array([14e6, 14.1e6]))
    assert "finite" in str(info.value) and "14 MHz" in str(info.value)
    assert solve_count() == before  # a failed solve is not counted


@pytest.mark.engine
def test_bad_source_segment_becomes_engine_error(model):
    # The engine raises a bare RuntimeError for a source on a missing segment.
    import dataclasses
    broken = dataclasses.replace(model, feed_segment=99)
    with pytest.raises(EngineError, match="place the source"):
        solve_feedpoint(broken, np.array([14e6]))


@pytest.mark.parametrize("f", [[], [-1e6], [np.nan], [[14e6, 14.1e6]]])
def test_bad_frequencies_refused(model, f):
    with pytest.raises(EngineError):
        solve_feedpoint(model, np.array(f))


@pytest.mark.engine
def test_uneven_and_unsorted_frequencies_keep_their_order(model):
    f = np.array([14.3e6, 14.0e6, 14.25e6, 14.01e6])
    together = solve_feedpoint(model, f)
    one_by_one = np.array([solve_feedpoint(model, np.array([fi]))[0] for fi in f])
    # Same engine, same model: identical to double-precision round-off.
    np.testing.assert_allclose(together, one_by_one, rtol=1e-9)


@pytest.mark.engine
def test_even_sweep_matches_single_solves(model):
    f = np.linspace(14.0e6, 14.35e6, 5)
    sweep = solve_feedpoint(model, f)
    single = np.array([solve_feedpoint(model, np.array([fi]))[0] for fi in f])
    # One linear-step card computes f0 + i*step in MHz: round-off only.  Solved
    # one by one at exactly those frequencies the results are the same numbers.
    f_mhz = f / 1e6
    card = np.array([(f_mhz[0] + i * (f_mhz[1] - f_mhz[0])) * 1e6 for i in range(f.size)])
    at_card = np.array([solve_feedpoint(model, np.array([fi]))[0] for fi in card])
    np.testing.assert_allclose(sweep, at_card, rtol=1e-12)
    # Against the requested frequencies (which differ from the card's in the last
    # bit) the model's short segments beside the source amplify that round-off:
    # at 1e-3 wavelength, the NEC-2 guide's lower limit (from memory of Burke &
    # Poggio 1981, Part III: shorter segments lose precision as the constant and
    # cosine terms of the current expansion become alike), a last-bit change of
    # frequency moves the impedance by up to about 1e-8 relative (measured with
    # this model: 9e-9), so 1e-7.
    np.testing.assert_allclose(sweep, single, rtol=1e-7)


@pytest.mark.engine
def test_solve_count_counts_frequencies(model):
    before = solve_count()
    solve_feedpoint(model, np.linspace(14e6, 14.35e6, 3))
    solve_feedpoint(model, np.array([14.1e6]))
    assert solve_count() - before == 4


def test_engine_version_is_the_package_version():
    assert engine_version() == importlib.metadata.version("PyNEC")
