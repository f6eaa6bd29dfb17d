"""Exit statuses of the ``necflow`` command (the table in :mod:`necflow.cli`)."""

OK = 0
NOT_MET = 1            # NecflowError's own exit_code (GoalNotMet, RulesBroken)
INTERNAL_ERROR = 70
INTERRUPTED = 130      # 128 + SIGINT
TERMINATED = 143       # 128 + SIGTERM

__all__ = ["OK", "NOT_MET", "INTERNAL_ERROR", "INTERRUPTED", "TERMINATED"]
