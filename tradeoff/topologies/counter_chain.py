"""Divider and diode-AND decode of the counter topologies: which bit of the oscillator-period count an
output shows, the count at which decoded outputs are first all high, the `decode` option's text, the
output sets a chain can decode, and the diode-AND node's pull-up.

The output of stage N goes high after 2^(N−1) oscillator periods (4060-type datasheets). A stage L
(`link_stage`) of each counter clocks the next on its falling edge, so counter j counts
floor(count/2^(L·j)) and its stage N shows bit N − 1 + L·j. A diode-AND of two or three outputs
(one small diode per output and a pull-up; common practice) goes high first at Σ 2^(bit).
"""
from __future__ import annotations

import itertools
import re
from typing import TYPE_CHECKING, Iterator

import numpy as np

from tradeoff import eseries
from tradeoff.devices.supply_current import on_supply
from tradeoff.errors import DesignKeyError

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part
    from tradeoff.topologies.counter_switch import CounterPlan

__all__ = ["DECODE_MAX_OUTPUTS", "NODE_DROP_V", "stage_factor", "output_bit", "decoded_count", "parse_decode",
           "decode_text", "output_sets", "pullup_ohm", "latch_path_min_ohm"]

DECODE_MAX_OUTPUTS = 3
"""Counter outputs a diode-AND decodes at most (common practice: two or three diodes and a pull-up)."""

NODE_DROP_V = 0.2
"""Largest drop of the diode-AND node below the rail while its pull-up carries the latch current [V]
(common practice: keeps the latch input and the load switch's input clearly high)."""


def stage_factor(n_total):
    """Oscillator periods until counter stage N goes high: 2^(N−1) (4060-type datasheets)."""
    return np.power(2.0, np.asarray(n_total, dtype=float) - 1.0)


def output_bit(stage: int, counter_index: int, link_stage: int) -> int:
    """Bit of the oscillator-period count that output `stage` of counter `counter_index` (0: the first)
    shows: counter j counts floor(count / 2^(L·j)) (each earlier counter's stage L clocks it on its
    falling edge), and its stage N is that count's bit N − 1, so bit N − 1 + L·j of the count."""
    return stage - 1 + link_stage * counter_index


def decoded_count(bits) -> int:
    """Oscillator periods until every output showing one of `bits` is high at once for the first
    time: the smallest count with those bits set, Σ 2^b (binary counting)."""
    return sum(1 << int(b) for b in set(bits))


def parse_decode(text: str) -> tuple[tuple[int, int], ...]:
    """Option `decode` ('U1.Q4+U2.Q12': counter U1 output Q4 and counter U2 output Q12) as
    (counter index from 0, stage) pairs; DesignKeyError naming the option when malformed."""
    out = []
    for item in str(text).split("+"):
        match = re.fullmatch(r"\s*U(\d+)\.Q(\d+)\s*", item)
        if not match or int(match.group(1)) < 1:
            raise DesignKeyError(("options", "decode"), f"got {text!r}; accepted: outputs joined by '+', "
                                 "each 'U<counter from 1>.Q<stage>', e.g. 'U2.Q12+U2.Q13'")
        out.append((int(match.group(1)) - 1, int(match.group(2))))
    return tuple(out)


def decode_text(outputs) -> str:
    """The `decode` option naming (counter index from 0, stage) pairs."""
    return "+".join(f"U{j + 1}.Q{n}" for j, n in outputs)


def output_sets(outs: list[int], max_counters: int, decode_max_cascade: int
                ) -> Iterator[tuple[int, int, list[tuple[int, int]], int]]:
    """Every (cascade, link stage, bit set) a chain of up to `max_counters` counters with stages `outs`
    brought out can decode, each bit set once, first with the fewest counters (the same count with
    more counters only adds parts): a single bit is a plain output stage; two or three bits a
    diode-AND (for chains up to `decode_max_cascade` extra counters).
    Yields (cascade, link, [(counter index, stage) per bit], count)."""
    seen: set[tuple[int, ...]] = set()
    for cascade in range(max_counters):
        for link in sorted(outs, reverse=True) if cascade else [max(outs)]:
            avail: dict[int, tuple[int, int]] = {}
            for j in range(cascade + 1):
                for n in outs:
                    avail.setdefault(output_bit(n, j, link), (j, n))
            bits = sorted(avail)
            for size in range(1, DECODE_MAX_OUTPUTS + 1 if cascade <= decode_max_cascade else 2):
                for combo in itertools.combinations(bits, size):
                    if combo not in seen:
                        seen.add(combo)
                        yield cascade, link, [avail[b] for b in combo], decoded_count(combo)


def pullup_ohm(series: str, counter: "Part", plan: "CounterPlan", vf_v: float) -> float | None:
    """Pull-up of the diode-AND node [ohm]: the smallest value of E-series `series` whose current
    (V − Vf)/Rp plus the switch's base current stays within the counter output's sink current at both
    rail limits (one output may sink it all); None when the base current alone leaves no room."""
    need = 0.0
    for v in (plan.rail.min_v, plan.rail.max_v):
        room = on_supply(counter, "output_supply", "output_sink", "A", v) - plan.switch.base_a(v, vf_v, "vbe_on_min")
        if room <= 0:
            return None
        need = max(need, (v - vf_v) / room)
    return float(eseries.values(series, need, need * 10)[0])


def latch_path_min_ohm(plan: "CounterPlan", pullup: float, vf_v: float) -> float:
    """Smallest latch-path resistance that keeps the node within NODE_DROP_V of the rail maximum while
    the pull-up carries the latch current: (Vmax − Vf)·Rp/(Rp + R) <= NODE_DROP_V [ohm]."""
    return pullup * (plan.rail.max_v - vf_v - NODE_DROP_V) / NODE_DROP_V
