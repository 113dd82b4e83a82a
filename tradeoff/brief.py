"""The brief: the designer's requirement file, validated into a frozen object of SI floats.

`load_brief(path_or_text)` reads YAML (always with the SafeLoader), checks every key, unit,
range and contradiction, and raises one `BriefError` listing every problem as
`FILE:LINE:COLUMN: key.path: what is wrong; what is accepted`. Quantities are strings with
units (`"4 h"`, `"2.2 Mohm"`, see `tradeoff.units`); a bare number is accepted only where the
field is dimensionless (weights, counts, cost). Percentages are `"20 %"`, `"±20 %"` or a
fraction below 1 (`0.2`).

YAML shape and defaults (every default is recorded; `tradeoff check` shows which were used):

    title: text                                   required
    delay:      nominal, and tolerance | min+max   nominal required unless min and max are given
                                                   (then nominal = their midpoint); no tolerance and
                                                   no min/max: tolerance ±10 %
    ambient:    min, max                           0 degC .. 40 degC (indoor, common practice)
    environment: board, life                       board none (no board-surface leakage), life not
                                                   stated (parts as delivered); see tradeoff.environment
    supply:     nominal, min, max, kind,           nominal required; kind unregulated; min/max:
                no_load_power                      unregulated -10 % / +20 %, regulated ±5 % of
                                                   nominal (common practice); no_load_power none
    start:      power-on | button                  power-on
    load:       relay: {coil_voltage, coil_resistance, must_operate, must_release}
                       with switched: {voltage, current, mains}  (required with a relay)
                or dc: {current}                   the timer's output drives the dc load itself,
                                                   so `switched` is derived (supply voltage, the
                                                   dc current, not mains) and may not be given
                must_operate 75 %, must_release 10 % (common relay datasheet limits);
                mains: true above 50 V (the extra-low-voltage boundary, common practice)
    limits:     standby_after, rails, parts, cost  none
    weights:    accuracy, standby, rails, parts,   1 each (>= 0, at least one above 0)
                cost, effort
    series:     resistor, electrolytic, film,      E24, E6, E12, E12; pairs false
                ceramic, pairs                     pairs: true | false | [series, parallel]: two
                                                   standard parts of one class in series
                                                   (resistors, film capacitors) or in parallel
                                                   (resistors, any capacitor); true = both
    topologies: all | [name, ...]                  all
    analysis:   samples, seed, coverage, margin    20000, 1, 0.99, 5 %; margin: the share of the band's
                                                   width every proven design keeps between its
                                                   worst case and each band edge (common practice);
                relax                              none | infeasible (what alone would make each
                                                   infeasible topology feasible, tradeoff.relax) |
                                                   all (also each feasible one's slack); none
    production: volume, prices, assembly, ...      see tradeoff.production (indicative defaults)

Accepted ranges (outside them is almost surely a typo): delays 10 ms .. 7 days; ambient
-55 degC .. 125 degC; supply 1 V .. 60 V (the timer runs from extra-low voltage: mains belongs
under load.switched); no-load power 0 .. 10 W; coil 1 V .. 60 V and 1 ohm .. 100 kohm; dc
load 1 uA .. 10 A; switched 1 V .. 440 V and 1 mA .. 32 A; standby limit 1 nA .. 1 A; rails
1 .. 10; parts 1 .. 500; cost 0 .. 10000; weights 0 .. 100; samples 100 .. 10,000,000; seed
0 .. 2**32-1; coverage strictly between 0.5 and 1; margin 0 .. below 50 % of the band; board-surface
resistance 1 Mohm .. 10 Tohm; life 1 .. 50 years.
"""
from __future__ import annotations

import copy
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any, Literal

import yaml
from pydantic import BaseModel, ConfigDict, Field, PrivateAttr, ValidationError

from tradeoff import inputfile, yamlpos
from tradeoff.brief_sections import BriefValue, SectionReader, read_sections, sorted_values
from tradeoff.environment import Environment
from tradeoff.errors import BriefError, Problem
from tradeoff.fields import closest, dotted
from tradeoff.production import Production

__all__ = [
    "Brief", "Delay", "Ambient", "Supply", "Load", "Switched", "Limits", "Weights", "Series",
    "Analysis", "Environment", "BriefValue", "load_brief", "brief_from_node",
]

SeriesName = Literal["E3", "E6", "E12", "E24", "E48", "E96", "E192"]


class _Frozen(BaseModel):
    model_config = ConfigDict(strict=True, extra="forbid", frozen=True)


class Delay(_Frozen):
    """Required timing band [s]."""

    nominal_s: float
    min_s: float
    max_s: float


class Ambient(_Frozen):
    """Ambient temperature range [degC]."""

    min_c: float
    max_c: float


class Supply(_Frozen):
    """The timer's own supply [V]; `no_load_power_w` is the adapter's own draw [W] when known."""

    nominal_v: float
    min_v: float
    max_v: float
    kind: Literal["unregulated", "regulated"]
    no_load_power_w: float | None


class Switched(_Frozen):
    """What finally gets switched: voltage [V], current [A], and whether it is mains."""

    voltage_v: float
    current_a: float
    mains: bool


class Load(_Frozen):
    """What the timer's output drives: a relay coil or a dc load; `current_a` [A] is the output current."""

    kind: Literal["relay", "dc"]
    coil_voltage_v: float | None
    coil_resistance_ohm: float | None
    must_operate_frac: float | None
    must_release_frac: float | None
    current_a: float
    switched: Switched


class Limits(_Frozen):
    """Hard limits; None where the brief sets none. standby_after_a [A], cost in catalog currency."""

    standby_after_a: float | None
    rails: int | None
    parts: int | None
    cost: float | None = Field(serialization_alias="cost_eur")


class Weights(_Frozen):
    """Relative importance of each criterion (>= 0; ranking normalises)."""

    accuracy: float
    standby: float
    rails: float
    parts: float
    cost: float
    effort: float


class Series(_Frozen):
    """Preferred-number series allowed per component class, and the pairings ('series', 'parallel') of two
    standard parts allowed for one value (empty: single parts only)."""

    resistor: SeriesName
    electrolytic: SeriesName
    film: SeriesName
    ceramic: SeriesName
    pairs: tuple[Literal["series", "parallel"], ...]


class Analysis(_Frozen):
    """Monte Carlo settings; coverage 0.99 means the 0.5 % and 99.5 % percentiles must lie in the band;
    margin: fraction of the band's width a proven design keeps between its worst case and each edge."""

    samples: int
    seed: int
    coverage: float = Field(serialization_alias="coverage_frac")
    margin: float = Field(serialization_alias="margin_frac")
    relax: Literal["none", "infeasible", "all"] = "none"


class Brief(_Frozen):
    """A validated brief: SI floats, temperatures in degC, fractions as fractions."""

    title: str
    delay: Delay
    ambient: Ambient
    environment: Environment
    supply: Supply
    start: Literal["power-on", "button"]
    load: Load
    limits: Limits
    weights: Weights
    series: Series
    topologies: tuple[str, ...]
    analysis: Analysis
    production: Production
    path: Path | None

    _data: dict = PrivateAttr(default_factory=dict)
    _source: str = PrivateAttr(default="<brief>")
    _root: Any = PrivateAttr(default=None)
    _values: tuple[BriefValue, ...] = PrivateAttr(default=())

    @property
    def values(self) -> tuple[BriefValue, ...]:
        """Every value in YAML key order, with unit and origin (given, default or derived)."""
        return self._values

    def defaults(self) -> list[str]:
        """YAML keys whose values were defaults."""
        return [v.key for v in self._values if v.origin == "default"]

    def to_dict(self) -> dict[str, Any]:
        """Normalised brief: SI values under unit-suffixed keys (`cost_eur`, `coverage_frac`), plain
        lists, path as text."""
        return self.model_dump(mode="json", by_alias=True)

    def check_topologies(self, known: Sequence[str]) -> None:
        """Raise BriefError, at each name's line and column in the brief, for a listed topology not in `known`
        (the registered ids: the registry is read by the caller, so the brief knows no topology module)."""
        unknown = [(("topologies", i), name, "all, or a list of: ") for i, name in enumerate(self.topologies)
                   if name != "all" and name not in known]
        unknown += [(("production", "engineering_hours", name), name, "topology names: ")
                    for name, _ in self.production.engineering_hours if name not in known]
        if unknown:
            raise BriefError([Problem(self._source, *yamlpos.locate(self._root, path, at_key=path[0] == "production"),
                                      dotted(path), f"unknown topology '{name}'"
                                      f"{f' (did you mean {close!r}?)' if (close := closest(name, known)) else ''}; "
                                      f"accepted: {accepted}{', '.join(known)}") for path, name, accepted in unknown])

    def replace(self, changes: Mapping[str, object]) -> "Brief":
        """A validated copy with dotted YAML keys changed ({"delay.nominal": "1 h"}); None removes a key.

        Validation is the same as for a file, so errors read the same; a problem in a changed
        value names the key and says it came from the change.
        """
        data = copy.deepcopy(self._data)
        for dotted, value in changes.items():
            *parents, last = dotted.split(".")
            node = data
            for part in parents:
                if not isinstance(node.get(part), dict):
                    node[part] = {}
                node = node[part]
            if value is None:
                node.pop(last, None)
            else:
                node[last] = value
        return _build(data, self._source, self.path, self._root, changed=frozenset(changes))


def _build(data: object, source: str, path: Path | None, root: yaml.Node | None,
           changed: frozenset[str] = frozenset()) -> Brief:
    """Validate raw YAML data into a Brief, or raise BriefError listing every problem."""
    reader = SectionReader(source, root, changed)
    for dup_path, (line, column) in yamlpos.duplicate_keys(root):
        reader.problems.append(Problem(source, line, column, ".".join(dup_path),
                                       "key given twice; accepted: each key once per section"))
    values = read_sections(reader, data, path.parent if path else Path.cwd(), tuple(Weights.model_fields))
    if reader.problems or values is None:
        raise BriefError(reader.problems.listed() or [Problem(source, None, None, "", "brief could not be read")])
    try:
        brief = Brief.model_validate({**values, "path": path})
    except ValidationError as exc:  # a reader bug, still reported at the right place
        raise BriefError([Problem(source, *yamlpos.locate(root, e["loc"]), dotted(e["loc"]), e["msg"])
                          for e in exc.errors(include_url=False)]) from None
    brief._data = copy.deepcopy(data)
    brief._source = source
    brief._root = root
    brief._values = sorted_values(reader.values)
    return brief


def brief_from_node(root: yaml.Node, data: object, source: str) -> Brief:
    """Validate brief data already parsed from YAML, e.g. a brief inlined in a design file.

    `root` is the data's node in that file, so every problem points into `source` at the right
    line and column. Raises BriefError listing every problem found.
    """
    return _build(data, source, None, root)


def load_brief(path_or_text: str | Path, *, source_name: str | None = None) -> Brief:
    """Load and validate a brief from a file (a Path, or a one-line str naming a file) or from YAML text.

    `source_name` names the source in messages (default: the path, or `<brief>` for text).
    Raises BriefError listing every problem found.
    """
    is_path = isinstance(path_or_text, Path) or ("\n" not in path_or_text and not path_or_text.lstrip().startswith("{"))
    path = Path(path_or_text) if is_path else None
    source = source_name or (str(path) if path else "<brief>")
    content = inputfile.read_text(path, source, BriefError, "the brief") if path is not None else path_or_text
    root, data = inputfile.parse_yaml(content, source, BriefError)
    if data is None:
        raise BriefError.single(source, "", "the brief is empty; accepted: a mapping with at least "
                                "title, delay, supply and load", 1, 1)
    return _build(data, source, path.resolve() if path else None, root)
