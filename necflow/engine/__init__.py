"""The method-of-moments engine: PyNEC behind a small adapter."""

from necflow.engine.pynec_adapter import engine_version, solve_count, solve_feedpoint

__all__ = ["engine_version", "solve_count", "solve_feedpoint"]
