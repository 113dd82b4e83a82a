"""Domain exceptions, one module for the whole library.

The CLI translates `TradeoffError` into a plain message once, at its edge, and exits with the
error's `exit_code` (documented in the README):

    0  done                         1  no topology meets the brief
    2  input error (a file or option the user wrote)
    3  output refused or failed (nothing was written or replaced)
    4  internal error, or a tool the run needs (solver, ngspice) failed
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

__all__ = [
    "EXIT_DONE", "EXIT_INFEASIBLE", "EXIT_INPUT", "EXIT_OUTPUT", "EXIT_INTERNAL",
    "TradeoffError",
    "Problem",
    "InputError",
    "BriefError",
    "CatalogError",
    "DesignError",
    "DesignKeyError",
    "UnitParseError",
    "InfeasibleError",
    "SolverError",
    "SimulatorError",
    "OutputError",
    "RankingError",
    "Interrupted",
]


EXIT_DONE, EXIT_INFEASIBLE, EXIT_INPUT, EXIT_OUTPUT, EXIT_INTERNAL = 0, 1, 2, 3, 4
"""Process exit codes of the command line, one meaning each."""


class TradeoffError(Exception):
    """Base of every error the library raises on purpose."""

    exit_code = EXIT_INTERNAL


@dataclass(frozen=True)
class Problem:
    """One located problem in an input file: where, which key, what is wrong and what is accepted."""

    file: str
    line: int | None
    column: int | None
    key: str
    message: str

    def __str__(self) -> str:
        where = self.file
        if self.line is not None:
            where += f":{self.line}"
            if self.column is not None:
                where += f":{self.column}"
        key = f" {self.key}:" if self.key else ""
        return f"{where}:{key} {self.message}"


class InputError(TradeoffError, ValueError):
    """One or more problems in a file the user wrote; lists every problem, not only the first."""

    exit_code = EXIT_INPUT

    def __init__(self, problems: list[Problem] | Problem):
        self.problems = [problems] if isinstance(problems, Problem) else list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))

    @classmethod
    def single(cls, file: str | Path, key: str, message: str, line: int | None = None,
               column: int | None = None) -> "InputError":
        """Build an error holding one problem."""
        return cls(Problem(str(file), line, column, key, message))

    @property
    def reason(self) -> str:
        """What is wrong and what is accepted, without file, line or key (the problems' messages, '; ' between),
        for a caller that reports it in its own words."""
        return "; ".join(p.message for p in self.problems)


class BriefError(InputError):
    """A brief (requirement file) is malformed or contradictory."""


class CatalogError(InputError):
    """A catalog file is malformed, or a part lacks a parameter a model needs."""


class DesignError(InputError):
    """A design file (topology plus chosen values) is malformed or names unknown parts."""


class DesignKeyError(TradeoffError, ValueError):
    """A topology's objection to one entry of a design, at its key path (('options', 'shunt')).

    Topologies know designs only as values, so they name the key; the design-file loader adds the
    file, line and column. Raised outside a design file it reads 'options.shunt: <message>'.
    """

    exit_code = EXIT_INPUT

    def __init__(self, path: tuple[str, ...], message: str):
        self.path = tuple(path)
        self.message = message
        super().__init__(f"{'.'.join(self.path)}: {message}")


class UnitParseError(TradeoffError, ValueError):
    """A quantity or percentage string is malformed or has the wrong dimension (no location: callers add it).

    Carries its parts as data: `reason`, what is wrong (for a caller that states its own accepted
    values), and `accepted`, what the field accepts ("" when the reason itself says what to write).
    The message is "<reason>; accepted: <accepted>".
    """

    exit_code = EXIT_INPUT

    def __init__(self, reason: str, accepted: str = ""):
        self.reason, self.accepted = reason, accepted
        super().__init__(f"{reason}; accepted: {accepted}" if accepted else reason)

    def __reduce__(self):
        """Pickle with both parts (a sweep worker's error crosses a process boundary)."""
        return type(self), (self.reason, self.accepted)


class InfeasibleError(TradeoffError, RuntimeError):
    """No design of any allowed topology meets the brief; carries the per-topology reasons."""

    exit_code = EXIT_INFEASIBLE

    def __init__(self, message: str, reasons: dict[str, list[str]] | None = None):
        self.reasons = reasons or {}
        super().__init__(message)


class SolverError(TradeoffError, RuntimeError):
    """The integer-program solver is missing or returned an unexpected status."""


class SimulatorError(TradeoffError, RuntimeError):
    """ngspice is missing, failed, or did not report a measurement it was asked for."""


class OutputError(TradeoffError, OSError):
    """An output file could not be written, or exists and --force was not given (nothing was replaced)."""

    exit_code = EXIT_OUTPUT


class RankingError(TradeoffError, ValueError):
    """Designs or weights handed to the ranking cannot be ranked (infeasible design, bad criteria, no weight)."""


class Interrupted(BaseException):
    """SIGTERM or SIGHUP arrived while output files were written (a BaseException, like Ctrl-C's
    KeyboardInterrupt, so clean-up runs); the signal number is `signum`."""

    def __init__(self, signum: int):
        import signal

        super().__init__(f"interrupted by {signal.Signals(signum).name}")
        self.signum = signum
