"""Domain errors. Each carries the exit code the CLI returns and builds its message from the input.

The CLI prints ``error: <what>: <why> — <what to do>`` on one line; library callers get the
exception with the same parts as attributes.
"""

from __future__ import annotations

EXIT_OK = 0
EXIT_FAILURE = 1
EXIT_USAGE = 2
EXIT_BAD_INPUT = 65
EXIT_LOCKED = 75


class BlocwatchError(Exception):
    """Base class: ``what`` failed ``why``; ``fix`` says what to do."""

    exit_code = EXIT_FAILURE

    def __init__(self, what: str, why: str, fix: str = ""):
        self.what, self.why, self.fix = what, why, fix
        super().__init__(self.line())

    def line(self) -> str:
        text = f"{self.what}: {self.why}"
        return f"{text} — {self.fix}" if self.fix else text


class UsageError(BlocwatchError):
    """A bad option, spec or config value."""

    exit_code = EXIT_USAGE


class BadInputError(BlocwatchError):
    """A data file that cannot be loaded as it is; nothing was written."""

    exit_code = EXIT_BAD_INPUT


class LockHeldError(BlocwatchError):
    """Another run holds the store's lock."""

    exit_code = EXIT_LOCKED


class StoreError(BlocwatchError):
    """The store is missing, of an unknown schema, or inconsistent."""
