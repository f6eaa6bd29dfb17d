"""Design factory for the engine reference tests."""

from __future__ import annotations

import pytest

from necflow.config.schema import Design


def design_of(antenna: dict, ground: dict | None = None, **model) -> Design:
    """A minimal valid design around an antenna (free space unless told)."""
    return Design(name="model-test", bands=["20m"], feed=[],
                  ground=ground or {"model": "free-space"}, antenna=antenna,
                  model=model or {})


@pytest.fixture
def make_design():
    return design_of
