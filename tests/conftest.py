"""Shared fixtures: paths, a fake solver for tests that must not need PyNEC."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[1]
CONFIGS = ROOT / "configs"


@pytest.fixture
def root() -> Path:
    return ROOT


def dipole_like_solver(model, frequency_hz):
    """A smooth stand-in for the engine: a series RLC resonant at 7.1 MHz
    with a radiation-like resistance rising with frequency.  Used only where a
    test is about the pipeline around the engine, never about antenna physics."""
    f = np.asarray(frequency_hz, dtype=float)
    f0 = 7.1e6
    r = 60.0 * (f / f0) ** 2
    x = 900.0 * (f / f0 - f0 / f)
    return r + 1j * x


def design_of(antenna: dict, ground: dict | None = None, **model):
    """A minimal valid design around an antenna (free space unless told)."""
    from necflow.config.schema import Design

    return Design(name="model-test", bands=["20m"], feed=[],
                  ground=ground or {"model": "free-space"}, antenna=antenna,
                  model=model or {})


@pytest.fixture
def make_design():
    """Factory of minimal designs for the wire-model and engine tests."""
    return design_of


def demo_text_without_route() -> str:
    """The demo design's text without its ``route`` block: for tests that
    use :func:`dipole_like_solver`, which stands in for the engine's
    impedance only (the route's physics is tested in
    tests/engine/test_route_physics.py and tests/chain/test_common_mode_physics.py)."""
    import re
    text = (CONFIGS / "demo.yaml").read_text(encoding="utf-8")
    out, n = re.subn(r"(?m)^route:.*\n(?:[ #].*\n)*", "", text)
    assert n == 1, "the demo has one route block"
    return out


#: A small design for the command-line tests with the stand-in solver (its
#: feedpoint is series resonant at 7.1 MHz): a 40 m doublet with a 1:1 balun
#: and coax, and the sections fit, trim and tolerance need.  Prefix it with
#: a ``name:`` line.
JOB_DESIGN_BODY = """
bands:
  - {name: 40m, points: 9}
antenna: {shape: doublet, span: 20 m, height: 10 m, wire: {diameter: 2 mm}}
ground: {model: sommerfeld, surface: medium-dry}
feed:
  - {id: balun, transformer: balun, ratio: "1:1", loss: 0.15}
  - {id: coax, line: rg-213, length: 15 m}
uncertain:
  antenna.height: [7 m, 13 m]
adjustable:
  feed.coax.length: [10 m, 20 m]
targets: {40m: 7.05 MHz}
tolerances:
  fields: {feed.coax.length: 20 cm, antenna.height: 1 m}
  samples: 30
  seed: 1
"""
