"""Domain exceptions, one module for the whole library.

The CLI translates `TradeoffError` into a plain message once, at its edge:
input problems exit with code 2, an infeasible study with code 1.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

__all__ = [
    "TradeoffError",
    "Problem",
    "InputError",
    "BriefError",
    "CatalogError",
    "DesignError",
    "UnitParseError",
    "InfeasibleError",
    "SolverError",
    "SimulatorError",
    "OutputError",
    "RankingError",
]


class TradeoffError(Exception):
    """Base of every error the library raises on purpose."""

    exit_code = 1


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

    exit_code = 2

    def __init__(self, problems: list[Problem] | Problem):
        self.problems = [problems] if isinstance(problems, Problem) else list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))

    @classmethod
    def single(cls, file: str | Path, key: str, message: str, line: int | None = None,
               column: int | None = None) -> "InputError":
        """Build an error holding one problem."""
        return cls(Problem(str(file), line, column, key, message))


class BriefError(InputError):
    """A brief (requirement file) is malformed or contradictory."""


class CatalogError(InputError):
    """A catalog file is malformed, or a part lacks a parameter a model needs."""


class DesignError(InputError):
    """A design file (topology plus chosen values) is malformed or names unknown parts."""


class UnitParseError(TradeoffError, ValueError):
    """A quantity or percentage string is malformed or has the wrong dimension (no location: callers add it)."""

    exit_code = 2


class InfeasibleError(TradeoffError, RuntimeError):
    """No design of any allowed topology meets the brief; carries the per-topology reasons."""

    exit_code = 1

    def __init__(self, message: str, reasons: dict[str, list[str]] | None = None):
        self.reasons = reasons or {}
        super().__init__(message)


class SolverError(TradeoffError, RuntimeError):
    """The integer-program solver is missing or returned an unexpected status."""


class SimulatorError(TradeoffError, RuntimeError):
    """ngspice is missing, failed, or did not report a measurement it was asked for."""


class OutputError(TradeoffError, OSError):
    """An output file could not be written, or exists and --force was not given."""


class RankingError(TradeoffError, ValueError):
    """Designs or weights handed to the ranking cannot be ranked (infeasible design, bad criteria, no weight)."""
