"""Durations of --timeout and the progress estimate (pure functions)."""

from __future__ import annotations

import pytest

from necflow.cli.progress import remaining_s
from necflow.errors import ConfigError
from necflow.optimize.strategy.study import parse_duration


@pytest.mark.parametrize("text, seconds", [("8h", 28800.0), ("90m", 5400.0), ("45s", 45.0),
                                           ("1h30m", 5400.0), ("2d", 172800.0),
                                           ("1.5h", 5400.0)])
def test_durations(text, seconds):
    assert parse_duration(text) == seconds


@pytest.mark.parametrize("text", ["8", "8 hours", "h", "", "0m", "-5m", "1x"])
def test_bad_durations(text):
    with pytest.raises(ConfigError):
        parse_duration(text)


def test_remaining_estimate():
    # 10 trials in 20 s here, 30 left: 60 s at this pace
    assert remaining_s(10, 20.0, 30, None) == 60.0
    # capped by the time left before the timeout
    assert remaining_s(10, 20.0, 30, 15.0) == 15.0
    assert remaining_s(0, 5.0, 30, None) is None
