"""The one exception family of necflow.

Every error a user can cause is a :class:`NecflowError`; the command line
maps each class to an exit status in one place (``necflow.cli``) and prints
``str(error)`` as a single line.  Nothing else in the package calls
``sys.exit``.
"""

from __future__ import annotations


class NecflowError(Exception):
    """Base class of every error necflow reports to its user."""

    exit_code = 1


class ConfigError(NecflowError):
    """A design file (or other user input file) is malformed or invalid.

    Parameters
    ----------
    message : str
        What is wrong and what is expected, in one sentence.
    file : str, optional
        Path of the file as the user named it.
    line : int, optional
        1-based line in that file.
    field : str, optional
        Dotted path of the field, e.g. ``antenna.span`` or ``feed[2].value``.
    others : tuple of ConfigError, optional
        The other problems found in the same file: validation reports them
        all at once.  ``str()`` stays one line (the first problem and their
        count); :meth:`lines` gives each on its own line.
    """

    exit_code = 2

    def __init__(self, message: str, *, file: str | None = None,
                 line: int | None = None, field: str | None = None,
                 others: tuple[ConfigError, ...] = ()):
        self.message = message
        self.file = file
        self.line = line
        self.field = field
        self.others = tuple(others)
        super().__init__(self.format())

    @property
    def problems(self) -> list[ConfigError]:
        """This problem and every other one found in the same file, in the
        order of their lines (problems without a line first)."""
        return sorted((self, *self.others), key=lambda e: e.line or 0)

    def format(self) -> str:
        """One line: ``FILE:LINE: field: message``, with ``(and N more
        problems)`` when the file has others."""
        text = self.format_one()
        if self.others:
            n = len(self.others)
            text += f" (and {n} more problem{'s' if n > 1 else ''})"
        return text

    def format_one(self) -> str:
        """This problem alone as ``FILE:LINE: field: message``."""
        where = ""
        if self.file:
            where = self.file
            if self.line:
                where += f":{self.line}"
            where += ": "
        what = f"{self.field}: " if self.field else ""
        return f"{where}{what}{self.message}".replace("\n", " ")

    def lines(self, cap: int = 20) -> list[str]:
        """Every problem on its own line, in file order, at most ``cap``
        of them, then ``and N more problems`` for the rest."""
        every = [p.format_one() for p in self.problems]
        if len(every) <= cap:
            return every
        rest = len(every) - cap
        return every[:cap] + [f"and {rest} more problem{'s' if rest > 1 else ''}"]


class ModelError(NecflowError):
    """A valid design that cannot be turned into a sound wire model
    (for example more segments than the configured limit)."""

    exit_code = 2


class GoalNotMet(NecflowError):
    """The job ran and wrote its outputs, but did not reach what it was asked
    to (for example ``trim`` reached none of its targets).  Exit status 1,
    like ``check`` and ``evaluate`` on a model that breaks a modelling rule at
    error level."""

    exit_code = 1


class RulesBroken(GoalNotMet):
    """The model breaks a modelling rule at error level: its results would be
    doubtful (or the engine cannot load it), so it is not solved.

    Attributes
    ----------
    findings : list
        Every finding of the rule check (errors, warnings, notes).
    """

    def __init__(self, message: str, findings: list):
        self.findings = findings
        super().__init__(message)


class EngineError(NecflowError):
    """The method-of-moments engine failed; the message says on what."""

    exit_code = 3


class NecflowWarning(UserWarning):
    """Something the user should know that does not stop the run (for
    example frequencies outside the range a catalog line's data cover).
    The command line prints each as one ``warning:`` line."""
