"""Plain words for the reports: delays in the brief's own time unit, the margin of a worst case
inside the band, and the short binding reason of an infeasible topology (names and values in
plain words come from tradeoff.plain).

Shared by the terminal report, the HTML review page and the workbook, so every output uses the
same wording.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass

__all__ = ["time_unit", "in_unit", "delay_in", "span_in", "margin_frac", "margin_text", "RuleCount", "ReasonParts",
           "split_reason", "short_reason"]

_TIME_UNITS = (("h", 3600.0), ("min", 60.0), ("s", 1.0))


def time_unit(nominal_s: float) -> tuple[str, float]:
    """The brief's display unit for delays and its length [s]: hours for hour-long delays, minutes
    for minute-long ones, seconds below a minute."""
    return next((u for u in _TIME_UNITS if nominal_s >= u[1]), _TIME_UNITS[-1])


def in_unit(seconds: float, unit: tuple[str, float], digits: int = 3) -> str:
    """A duration [s] as a number in `unit` (no unit text), 3 significant digits; 'never' if infinite."""
    if not math.isfinite(seconds):
        return "never"
    return f"{float(f'{seconds / unit[1]:.{digits}g}'):g}"


def delay_in(seconds: float, unit: tuple[str, float]) -> str:
    """A duration [s] with the unit's name: '1.98 h', or 'never ends'."""
    return "never ends" if not math.isfinite(seconds) else f"{in_unit(seconds, unit)} {unit[0]}"


def span_in(lo: float, hi: float, unit: tuple[str, float], with_unit: bool = True) -> str:
    """An interval [s] in one unit: '1.84–2.28 h', or '1.84–2.28' without the unit's name
    ('never' at an infinite end). Digits are added (up to 7) until two different ends differ."""
    digits = 3
    while digits < 7 and lo != hi and in_unit(lo, unit, digits) == in_unit(hi, unit, digits):
        digits += 1
    text = f"{in_unit(lo, unit, digits)}–{in_unit(hi, unit, digits)}"
    return f"{text} {unit[0]}" if with_unit else text


def margin_frac(worst_min_s: float, worst_max_s: float, band: tuple[float, float]) -> tuple[float, float]:
    """Distances of the worst case from the band's minimum and from its maximum, as fractions of the
    band's width (negative when a worst case lies outside the band; -inf when a unit never ends)."""
    lo, hi = band
    return (worst_min_s - lo) / (hi - lo), (hi - worst_max_s) / (hi - lo)


def margin_text(worst_min_s: float, worst_max_s: float, band: tuple[float, float]) -> str:
    """Both margins in % of the band, short end first: '8.3 / 24' (two digits below 10 %)."""
    return " / ".join("never" if not math.isfinite(m) else f"{100 * m:.2g}" if abs(m) < 0.1 else f"{100 * m:.0f}"
                      for m in margin_frac(worst_min_s, worst_max_s, band))


@dataclass(frozen=True)
class RuleCount:
    """One of a topology's own rules: how many candidates it removed, and the rule in words."""

    count: int
    rule: str


@dataclass(frozen=True)
class ReasonParts:
    """A reason split for a bullet list: the lead sentence and, for a rule tally, its rules."""

    lead: str
    rules: tuple[RuleCount, ...] = ()


_TALLY = re.compile(r"^(?P<block>[^:]+): the topology's own rules removed (?P<n>\d+) candidates \((?P<body>.*)\)$",
                    re.S)


def split_reason(reason: str) -> ReasonParts:
    """'hold: the topology's own rules removed 22484 candidates (724: rule one; 21760: rule two)'
    -> lead 'hold: the topology's own rules removed 22484 candidates' and its two rules with counts;
    any other reason stays whole."""
    m = _TALLY.match(reason)
    if not m:
        return ReasonParts(reason)
    rules = []
    for piece in re.split(r"; (?=\d+: )", m["body"]):
        count, _, rule = piece.partition(": ")
        rules.append(RuleCount(int(count), rule.strip()))
    return ReasonParts(f"{m['block']}: the topology's own rules removed {m['n']} candidates", tuple(rules))


def _clause(text: str, limit: int = 90) -> str:
    """A rule up to its first parenthesis, at most `limit` characters."""
    head = text.split(" (", 1)[0].strip()
    return head if len(head) <= limit else head[:limit - 1].rstrip() + "…"


_SHORT = (
    (re.compile(r"margin of (?P<m>\S+ %) of the band at both ends; .* keeps (?P<a>\S+ %) at the short end and "
                r"(?P<b>\S+ %) at the long end$"), "meets the band, not the {m} margin: keeps {a} / {b}"),
    (re.compile(r"worst-case shortest delay reaches at most (?P<v>[^;]+);"), "too short: worst case at most {v}"),
    (re.compile(r"worst-case longest delay is at least (?P<v>[^;]+);"), "too long: worst case at least {v}"),
    (re.compile(r"uncertainties alone \(.*?\) spread the delay by (?P<v>\S+) .* allows (?P<w>\S+)$"),
     "spread {v} exceeds the band's {w}"),
    (re.compile(r"fewest parts reachable is (?P<v>\d+); the limit is (?P<w>\d+)"), "needs {v} parts, limit {w}"),
    (re.compile(r"smallest standby current .* reachable is (?P<v>[^;]+); the limit is (?P<w>.+)$"),
     "standby {v}, limit {w}"),
    (re.compile(r"lowest indicative cost reachable is (?P<v>[^;]+); the limit is (?P<w>.+)$"), "costs {v}, limit {w}"),
    (re.compile(r"fewest supply rails reachable is (?P<v>\d+); the limit is (?P<w>\d+)"), "needs {v} rails, limit {w}"),
    (re.compile(r"cannot all be met together: (?P<v>.+)$"), "conflict: {v}"),
    (re.compile(r"no combination of standard values puts both worst-case delays inside the band"),
     "no standard values fit the band"),
)


def short_reason(reasons: list[str]) -> str:
    """The single binding reason of an infeasible topology as a short phrase: the first reason in
    known words, or, when a block has no candidate left, the rule that removed most of them."""
    if not reasons:
        return "no design found"
    first = reasons[0]
    empty = re.match(r"no candidate is left for (?P<block>.+)$", first)
    if empty:
        block = empty["block"]
        tally = next((split_reason(r) for r in reasons if r.startswith(f"{block}: the topology's own rules")), None)
        if tally and tally.rules:
            top = max(tally.rules, key=lambda r: r.count)
            rule = re.sub(r"^[a-z0-9]+(-[a-z0-9]+)+: ", "", top.rule)  # a leading part class id
            return f"no {block} candidate left; most removed by: {_clause(rule)}"
        return f"no {block} candidate left"
    for pattern, phrase in _SHORT:
        m = pattern.search(first)
        if m:
            return phrase.format(**m.groupdict())
    return _clause(first, 80)

