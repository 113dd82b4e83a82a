"""Shared pieces of every input reader: field parsers, the value formatter for messages, the one
did-you-mean, and the caps that keep the work on a bad file small.

A parser takes a raw YAML value and returns it in SI (or degC, or a fraction), or raises
`Invalid` saying what was wrong and what is accepted; the reader adds file, line, column and key.
"""
from __future__ import annotations

import difflib
import math
from collections.abc import Callable, Iterable, Sequence

from tradeoff.errors import Problem
from tradeoff.units import format_quantity, parse_fraction, parse_quantity

__all__ = ["Invalid", "Problems", "show", "plain", "dotted", "closest", "did_you_mean", "first_unknown",
           "quantity", "fraction", "number", "choice", "boolean", "text", "MAX_PROBLEMS", "SUGGESTED_KEYS"]

MAX_PROBLEMS = 50
"""Most problems listed for one file; the rest are counted in one closing line."""
SUGGESTED_KEYS = 3
"""Unknown keys of one mapping reported one by one (with a suggestion); the rest are counted."""


class Invalid(ValueError):
    """A value that parsed but is not acceptable; the message says what is accepted."""


class Problems(list):
    """The problems of one file, at most MAX_PROBLEMS kept; `dropped` counts the rest."""

    dropped = 0

    def full(self) -> bool:
        """True when no further problem is kept (callers skip the work of locating it)."""
        if len(self) >= MAX_PROBLEMS:
            self.dropped += 1
            return True
        return False

    @property
    def count(self) -> int:
        """Every problem found, kept or not."""
        return len(self) + self.dropped

    def listed(self) -> list[Problem]:
        """The problems in file order, with a closing line counting those not kept."""
        ordered = sorted(self, key=lambda p: (p.line is None, p.line or 0, p.column or 0))
        if self.dropped and ordered:
            ordered.append(Problem(ordered[0].file, None, None, "", f"and {self.dropped} more problems not listed "
                                   f"(the first {MAX_PROBLEMS} are shown); fix these and check again"))
        return ordered


def show(value: object) -> str:
    """Short text of a user value for messages (at most 60 characters)."""
    if isinstance(value, (dict, list, tuple, set)):
        text = f"a {'mapping' if isinstance(value, dict) else 'list'} of {len(value)} items"
        return text if len(value) > 3 else _short(repr(value)) if _flat(value) else text
    return _short(repr(value) if not isinstance(value, int) or abs(value) < 10**15 else f"{float(value):.3g}")


def _flat(value) -> bool:
    items = value.values() if isinstance(value, dict) else value
    return all(not isinstance(item, (dict, list, tuple, set)) for item in items)


def _short(text: str) -> str:
    return text if len(text) <= 60 else text[:57] + "..."


def _written(raw: object) -> str:
    """A value as the user wrote it (text unquoted), for range messages: never an exotic prefix."""
    return _short(raw.strip()) if isinstance(raw, str) else plain(raw) if isinstance(raw, (int, float)) else show(raw)


def plain(value: float) -> str:
    """A plain number for messages: whole numbers in full up to 15 digits, others in short form."""
    return str(int(value)) if float(value).is_integer() and abs(value) < 1e15 else f"{value:.6g}"


def dotted(path: Sequence[str | int]) -> str:
    """A key path as written in messages: `load.relay.coil_voltage`, `topologies[1]`."""
    out = ""
    for step in path:
        out += f"[{step}]" if isinstance(step, int) else (f".{step}" if out else str(step))
    return out


def _one_edit(a: str, b: str) -> bool:
    """True when `a` and `b` differ by one substituted, inserted or removed character."""
    if abs(len(a) - len(b)) > 1:
        return False
    if len(a) == len(b):
        return sum(x != y for x, y in zip(a, b)) == 1
    short, long = sorted((a, b), key=len)
    return any(long[:i] + long[i + 1:] == short for i in range(len(long)))


def closest(word: object, choices: Iterable[str]) -> str | None:
    """The accepted name `word` was most likely meant to be, only when it is really close: a
    similarity of at least 0.75, one character apart, or the start of a longer name."""
    if not isinstance(word, str) or len(word) > 200:
        return None
    options = [c for c in choices if isinstance(c, str)]
    for candidate in difflib.get_close_matches(word, options, n=3, cutoff=0.6):
        ratio = difflib.SequenceMatcher(None, word, candidate).ratio()
        if ratio >= 0.75 or _one_edit(word, candidate) or (len(word) >= 3 and candidate.startswith(word)):
            return candidate
    return None


def did_you_mean(word: object, choices: Iterable[str]) -> str:
    """' did you mean 'x'?' for a really close accepted name, or ''."""
    close = closest(word, choices)
    return f" did you mean '{close}'?" if close else ""


def first_unknown(keys: Iterable[object], accepted: Sequence[str]) -> tuple[list[object], int]:
    """(the first SUGGESTED_KEYS keys not in `accepted`, how many more there are)."""
    unknown = [key for key in keys if key not in accepted]
    return unknown[:SUGGESTED_KEYS], max(0, len(unknown) - SUGGESTED_KEYS)


def quantity(unit: str, lo: float, hi: float) -> Callable[[object], float]:
    """Parser for a quantity in `unit`, accepted within [lo, hi] (SI, or degC)."""

    def parse(raw: object) -> float:
        value = parse_quantity(raw, unit)
        if not lo <= value <= hi:
            raise Invalid(f"{_written(raw)} is outside the accepted range; accepted: "
                          f"{format_quantity(lo, unit)} to {format_quantity(hi, unit)}")
        return value

    return parse


def fraction(lo: float, hi: float, *, open_lo: bool = False, open_hi: bool = False) -> Callable[[object], float]:
    """Parser for a percentage or fraction accepted between lo and hi (fractions)."""

    def parse(raw: object) -> float:
        value = parse_fraction(raw)
        if value < lo or value > hi or (open_lo and value == lo) or (open_hi and value == hi):
            raise Invalid(f"{_written(raw)} is outside the accepted range; accepted: "
                          f"{'above' if open_lo else 'from'} {format_quantity(lo, '%')} "
                          f"{'and below' if open_hi else 'to'} {format_quantity(hi, '%')}")
        return value

    return parse


def number(lo: float, hi: float, *, integer: bool = False) -> Callable[[object], float | int]:
    """Parser for a plain number (an integer with `integer`; `1e3` counts as the integer 1000) within [lo, hi]."""
    kind = f"{'an integer' if integer else 'a number'} from {plain(lo)} to {plain(hi)}"

    def parse(raw: object) -> float | int:
        if isinstance(raw, bool) or not isinstance(raw, (int, float)) or not math.isfinite(raw) \
                or (integer and not float(raw).is_integer()):
            raise Invalid(f"got {show(raw)}; accepted: {kind}")
        if not lo <= raw <= hi:
            raise Invalid(f"{plain(raw)} is outside the accepted range; accepted: {kind}")
        return int(raw) if integer else float(raw)

    return parse


def choice(options: Sequence[str]) -> Callable[[object], str]:
    """Parser for one of `options` (exact spelling)."""

    def parse(raw: object) -> str:
        if isinstance(raw, str) and raw in options:
            return raw
        close = closest(raw, options)
        hint = f" (did you mean '{close}'?)" if close else ""
        raise Invalid(f"got {show(raw)}{hint}; accepted: {', '.join(options)}")

    return parse


def boolean(raw: object) -> bool:
    """Parser for true/false."""
    if isinstance(raw, bool):
        return raw
    raise Invalid(f"got {show(raw)}; accepted: true or false")


def text(raw: object) -> str:
    """Parser for a one-line title."""
    if isinstance(raw, str) and raw.strip() and len(raw) <= 200 and "\n" not in raw.strip():
        return raw.strip()
    raise Invalid(f"got {show(raw)}; accepted: one line of text, 1 to 200 characters")
