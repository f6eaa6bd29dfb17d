"""Helpers for the design-file tests: write YAML to a file and load it."""

from __future__ import annotations

from pathlib import Path

import pytest

from necflow.chain import load_design
from necflow.errors import ConfigError


@pytest.fixture
def write(tmp_path: Path):
    """Write text (or bytes) to ``tmp_path/name`` and return the path."""
    def _write(text: str | bytes, name: str = "design.yaml") -> Path:
        path = tmp_path / name
        path.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8"))
        return path
    return _write


@pytest.fixture
def load_error(write):
    """Load a design text from a file and return the ConfigError it raises."""
    def _load_error(text: str | bytes) -> tuple[ConfigError, Path]:
        path = write(text)
        with pytest.raises(ConfigError) as info:
            load_design(path)
        return info.value, path
    return _load_error
