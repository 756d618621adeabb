"""Exception types of optifin, all under one base class.

The command line turns any :class:`OptifinError` into one line on stderr and exit code 2;
anything else is a bug and keeps its traceback.
"""

from __future__ import annotations


class OptifinError(Exception):
    """Base class of every error optifin raises on purpose."""


class UnitError(OptifinError, ValueError):
    """A quantity string that does not parse, or has the wrong dimension."""


class ConfigError(OptifinError, ValueError):
    """A problem file (or API argument set) that is not valid.

    ``problems`` holds every individual finding as one readable line each, so that all
    errors of a file are reported together.
    """

    def __init__(self, problems: list[str] | str, source: str | None = None):
        self.problems = [problems] if isinstance(problems, str) else list(problems)
        self.source = source
        head = f"{source}: " if source else ""
        if len(self.problems) == 1:
            message = head + self.problems[0]
        else:
            lines = "\n".join(f"  - {p}" for p in self.problems)
            message = f"{head}{len(self.problems)} errors\n{lines}"
        super().__init__(message)


class DataError(OptifinError):
    """A bundled or user-supplied data file (materials, processes, fans) that is not valid."""


class ModelError(OptifinError, ValueError):
    """Arguments to a model function that cannot describe a heat sink or operating condition."""


class SearchError(OptifinError):
    """A search that cannot be set up or run (no variables, no feasible design, ...)."""


class Interrupted(OptifinError):
    """A run stopped by the user; what was found so far has been written."""
