"""Design files: one concrete design (topology, component values, options, part overrides) to analyse.

`load_design(path)` reads a YAML design file (always with the SafeLoader), checks every key,
unit, part id and parameter against the brief, the catalog and the topology, and raises one
`DesignError` listing every problem as `FILE:LINE:COLUMN: key.path: what is wrong; what is
accepted`. Shape:

    brief: ../towel_rail_boost.yaml       required: a brief file, relative to this file, or an
                                          inline mapping of brief fields (validated as a brief
                                          file is; problems point into this file as brief.KEY)
    topology: rc-darlington               required: a registered topology id (`tradeoff topologies`)
    values: {r_hold: 220 kohm, c_hold: 470 uF}
                                          every value role of the topology (its roles() for this
                                          brief: e.g. r_start and c_start only with a power-on
                                          start); a quantity with its unit (resistor roles ohm,
                                          capacitor roles F) or a bare number in SI; positive
    options: {darlington: darlington-npn-small, shunt: 10 Mohm}
                                          the discrete choices the topology reads (its
                                          option_units and option_parts): a part class id of the
                                          right category, a named choice, a whole number, or a
                                          positive quantity with its unit (bare number: SI);
                                          options listed in the topology's required_options must
                                          be given, the others default as the topology says
    overrides: {darlington-npn-small: {hfe_min: 15000}}
                                          optional: part id -> parameter -> value replacing the
                                          catalog's (a number where the catalog has a plain
                                          number, a quantity with the catalog's dimension, or a
                                          percentage where the catalog has one); bare numbers
                                          for a quantity are SI
    pairs: {c_hold: {parallel: [330 uF, 150 uF]}, r_hold: [200 kohm, 20 kohm]}
                                          optional: a value role made of two standard parts,
                                          {series: [A, B]} or {parallel: [A, B]} (a plain list
                                          [A, B] reads as a series pair of resistors); the pair
                                          must make the role's value (within 1 ppm); the BOM
                                          lists both parts

After the checks the topology itself reads the design once (spread quantities, nominal delay,
parts, supply current, rails), so a choice only the topology can judge (an oscillator that
does not fit the tick, a regulator that cannot power the IC) is also reported at its line.
"""
from __future__ import annotations

import math
import re
from collections.abc import Mapping
from pathlib import Path
from typing import TYPE_CHECKING, Any

import yaml

from tradeoff import inputfile, param_rules, yamlpos
from tradeoff.brief import brief_from_node, load_brief
from tradeoff.catalog import load_catalog
from tradeoff.errors import BriefError, DesignError, DesignKeyError, InputError, Problem, UnitParseError
from tradeoff.fields import SUGGESTED_KEYS, Problems, did_you_mean, show
from tradeoff.parts import OVERRIDE_ORIGIN
from tradeoff.brief_sections import PAIRINGS
from tradeoff.candidates import pair_total
from tradeoff.topologies.base import Design, Pair
from tradeoff.topologies.registry import build_topology, topology_class, topology_ids
from tradeoff.units import LEADING_NUMBER_RE, dimension, format_quantity, parse_fraction, parse_quantity

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part
    from tradeoff.topologies.base import Topology

__all__ = ["DESIGN_KEYS", "load_design"]

DESIGN_KEYS = ("brief", "topology", "values", "options", "overrides", "pairs")
"""Top-level keys of a design file."""

_REQUIRED = ("brief", "topology")
_ROLE_UNITS = {"resistor": "ohm", "capacitor": "F"}
_ROLE_RANGES = {"resistor": (0.01, 1e12), "capacitor": (1e-12, 100.0)}
"""Component values a design may give [ohm], [F]: 10 mΩ to 1 TΩ, 1 pF to 100 F (beyond any real part)."""
_PLAIN_ACCEPTED = "a part class id, a named choice or a whole number"


class _Reader:
    """Collects located problems while the design file is read."""

    def __init__(self, source: str, root: yaml.Node | None):
        self.source, self.root = source, root
        self.problems = Problems()
        self.unknown_seen: dict[tuple, tuple[int, str]] = {}

    def problem(self, path: tuple, message: str, *, at_key: bool = False) -> None:
        if self.problems.full():
            return
        line, column = yamlpos.locate(self.root, path, at_key=at_key)
        self.problems.append(Problem(self.source, line, column, ".".join(map(str, path)), message))

    def mapping(self, path: tuple, raw: object, what: str) -> dict:
        """`raw` as a mapping with string keys (empty after reporting when it is not one)."""
        if raw is None:
            return {}
        if not isinstance(raw, dict):
            self.problem(path, f"got {show(raw)}; accepted: a mapping of {what}")
            return {}
        bad = [key for key in raw if not isinstance(key, str)]
        for key in bad:
            self.problem(path, f"key {show(key)} is not a name; accepted: a mapping of {what}")
        return {key: value for key, value in raw.items() if isinstance(key, str)}

    def unknown(self, path: tuple, name: str, what: str, accepted: list[str], owner: str = "") -> None:
        """Report an unknown name (of `owner`, e.g. 'of rc-darlington') with the closest accepted one."""
        listed = ", ".join(accepted) if accepted else "none"
        seen, _ = self.unknown_seen.get(path, (0, ""))
        self.unknown_seen[path] = seen + 1, f"unknown {what} names{owner}; accepted: {listed}"
        if seen < SUGGESTED_KEYS:  # the rest get one line, with their count, when the file is done
            self.problem(path + (name,), f"unknown {what} '{name}'{owner};{did_you_mean(name, accepted)} "
                         f"accepted: {listed}", at_key=True)

    def raise_if_any(self) -> None:
        for path, (count, what) in self.unknown_seen.items():
            if count > SUGGESTED_KEYS:
                self.problem(path, f"and {count - SUGGESTED_KEYS} more {what}")
        self.unknown_seen.clear()
        if self.problems:
            raise DesignError(self.problems.listed())


def _quantity(r: _Reader, path: tuple, raw: object, unit: str) -> float | None:
    """A positive quantity in `unit` (or a bare positive number, taken as SI), or None after reporting."""
    accepted = f"accepted: a positive quantity with its unit (in {unit}), or a bare number in SI"
    if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
        r.problem(path, f"got {show(raw)}; {accepted}")
        return None
    try:
        value = float(raw) if isinstance(raw, (int, float)) else parse_quantity(raw, unit)
    except UnitParseError as exc:
        r.problem(path, f"{exc.reason}; {accepted}")
        return None
    if not (math.isfinite(value) and value > 0):
        r.problem(path, f"got {show(raw)}; {accepted}")
        return None
    return value


def _read_brief(r: _Reader, raw: object, design_path: Path | None, root: yaml.Node | None) -> "Brief | None":
    """The brief named (a path relative to the design file) or inlined in the design file."""
    if isinstance(raw, str):
        base = design_path.parent if design_path is not None else Path.cwd()
        brief_path = (base / raw) if not Path(raw).is_absolute() else Path(raw)
        if not brief_path.is_file():
            r.problem(("brief",), f"no brief file '{raw}' (looked for {brief_path}); accepted: a brief file path "
                      "relative to the design file, or an inline mapping of brief fields")
            return None
        return load_brief(brief_path)  # its own problems point into the brief file
    if isinstance(raw, dict):
        node = yamlpos.node_at(root, ("brief",))
        try:
            return brief_from_node(node, raw, r.source)
        except BriefError as exc:
            r.problems.extend(Problem(p.file, p.line, p.column, f"brief.{p.key}" if p.key else "brief", p.message)
                              for p in exc.problems)
            return None
    r.problem(("brief",), f"got {show(raw)}; accepted: a brief file path relative to the design file, "
              "or an inline mapping of brief fields")
    return None


def _read_topology(r: _Reader, raw: object, catalog: "Catalog") -> "type[Topology] | None":
    known = topology_ids(catalog)
    if not isinstance(raw, str) or raw not in known:
        hint = did_you_mean(raw, known) if isinstance(raw, str) else ""
        r.problem(("topology",), f"unknown topology {show(raw)};{hint} accepted: {', '.join(known)} "
                  "(see `tradeoff topologies`)")
        return None
    return topology_class(raw, catalog)


def _read_values(r: _Reader, raw: object, topology: "Topology") -> dict[str, float]:
    """Role -> SI value, every role present."""
    roles = {role.name: role for role in topology.roles()}
    given = r.mapping(("values",), raw, "value role -> quantity")
    values: dict[str, float] = {}
    for name, item in given.items():
        if name not in roles:
            r.unknown(("values",), name, "value role", list(roles), f" of {topology.id}")
            continue
        kind = roles[name].kind
        value = _quantity(r, ("values", name), item, _ROLE_UNITS[kind])
        low, high = _ROLE_RANGES[kind]
        if value is not None and not low <= value <= high:
            r.problem(("values", name), f"{show(item)} is outside what a {kind} can be; accepted: "
                      f"{format_quantity(low, _ROLE_UNITS[kind])} to {format_quantity(high, _ROLE_UNITS[kind])}")
        elif value is not None:
            values[name] = value
    for name, role in roles.items():
        if name not in given:
            unit = _ROLE_UNITS[role.kind]
            r.problem(("values",), f"missing value role '{name}' ({role.description}); accepted: a quantity in "
                      f"{unit}, e.g. {name}: {'220 kohm' if unit == 'ohm' else '470 uF'}")
    return values


def _read_options(r: _Reader, raw: object, cls: "type[Topology]", catalog: "Catalog") -> dict[str, Any]:
    """Option name -> SI float (quantity options) or the plain value as written."""
    accepted = {**cls.option_units, **{name: None for name in cls.option_parts}}
    given = r.mapping(("options",), raw, "option name -> value")
    options: dict[str, Any] = {}
    for name, item in given.items():
        path = ("options", name)
        if name not in accepted:
            r.unknown(("options",), name, "option", list(accepted), f" of {cls.id}")
        elif name in cls.option_parts:
            if _part_option(r, path, item, cls.option_parts[name], catalog):
                options[name] = item
        elif accepted[name] is not None:
            value = _quantity(r, path, item, accepted[name])
            if value is not None:
                options[name] = value
        elif isinstance(item, bool) or not isinstance(item, (str, int)):
            r.problem(path, f"got {show(item)}; accepted: {_PLAIN_ACCEPTED}")
        else:
            options[name] = item
    for name in cls.required_options:
        if name not in given:
            r.problem(("options",), f"missing option '{name}', which {cls.id} needs; accepted: options: "
                      f"{{{name}: ...}} ({_PLAIN_ACCEPTED})" if accepted.get(name) is None else
                      f"missing option '{name}', which {cls.id} needs; accepted: a quantity in {accepted[name]}")
    return options


def _part_option(r: _Reader, path: tuple, raw: object, category: str, catalog: "Catalog") -> bool:
    """True when `raw` is the id of a catalog part class of `category` (else reports why not)."""
    ids = [part.id for part in catalog.parts(category)]
    if isinstance(raw, str) and raw in ids:
        return True
    hint = did_you_mean(raw, ids) if isinstance(raw, str) else ""
    where = f" ('{raw}' is a {catalog.part(raw).category})" if isinstance(raw, str) and raw in catalog else ""
    r.problem(path, f"{show(raw)} is not a {category} part class{where};{hint} accepted: {', '.join(ids) or 'none'}"
              " (see `tradeoff catalog`)")
    return False


def _written_unit(value: object) -> str:
    """Unit a catalog value is written in: '' for a plain number, '%' for a percentage, else its unit text."""
    item = value[0] if isinstance(value, tuple) else value
    if not isinstance(item, str):
        return ""
    if "%" in item and not re.search(r"%\s*/", item):
        return "%"
    match = LEADING_NUMBER_RE.match(item)
    return match.group(1) if match else ""


def _override_value(r: _Reader, path: tuple, raw: object, written: object) -> object:
    """An override checked against the dimension of the catalog value it replaces; SI float for a scalar,
    the list as written (each item checked) for a list. None after reporting a problem."""
    unit = _written_unit(written)
    if unit == "":
        shown = "a plain number"
    elif unit == "%":
        shown = "a percentage ('20 %') or a fraction below 1 (0.2)"
    else:
        example = written[0] if isinstance(written, tuple) else written
        shown = f"a quantity in {unit} (as the catalog's {example!r}) or a bare number in SI"
    items = raw if isinstance(raw, list) else [raw]
    if isinstance(raw, list) != isinstance(written, tuple) or not items:
        r.problem(path, f"got {show(raw)}; accepted: {'a list of ' if isinstance(written, tuple) else ''}{shown}")
        return None
    converted = []
    for item in items:
        try:
            if isinstance(item, bool) or not isinstance(item, (str, int, float)):
                raise UnitParseError(f"got {show(item)}")
            if unit == "%":
                converted.append(parse_fraction(item))
            elif isinstance(item, (int, float)):
                if not math.isfinite(item):
                    raise UnitParseError(f"{item!r} is not a finite number")
                converted.append(float(item))
            else:
                converted.append(parse_quantity(item, unit))
        except UnitParseError as exc:
            r.problem(path, f"{exc.reason}; accepted: {shown}")
            return None
    outside = param_rules.value_problem(str(path[-1]), converted, "" if unit in ("", "%") else dimension(unit),
                                        unit == "%")
    if outside:
        r.problem(path, outside)
        return None
    return list(raw) if isinstance(raw, list) else converted[0]


def _read_overrides(r: _Reader, raw: object, catalog: "Catalog") -> dict[str, dict[str, object]]:
    """Part id -> parameter -> replacement value."""
    given = r.mapping(("overrides",), raw, "part id -> {parameter: value}")
    overrides: dict[str, dict[str, object]] = {}
    for part_id, params in given.items():
        if part_id not in catalog:
            r.unknown(("overrides",), part_id, "part class", [p.id for p in catalog.parts()])
            continue
        part: Part = catalog.part(part_id)
        own = {}
        for name, value in r.mapping(("overrides", part_id), params, "parameter -> value").items():
            if name not in part.params:
                r.unknown(("overrides", part_id), name, "parameter", list(part.params), f" of {part_id}")
                continue
            checked = _override_value(r, ("overrides", part_id, name), value, part.params[name].value)
            if checked is not None:
                own[name] = checked
        overrides[part_id] = own
    return overrides


def _relocated(exc: InputError, r: _Reader) -> list[Problem]:
    """Problems about parameters the design's `overrides` replaced, placed at those overrides."""
    out = []
    for p in exc.problems:
        path = ("overrides", *p.key.split(".", 1))
        out.append(Problem(r.source, *yamlpos.locate(r.root, path), ".".join(path), p.message)
                   if p.file == OVERRIDE_ORIGIN else p)
    return out


def _probe(topology: "Topology", design: Design, r: _Reader) -> None:
    """Let the topology read the design once, so its own objections are reported at their lines."""
    try:
        topology.quantities(design)
        topology.nominal_delay(design)
        topology.bom(design)
        topology.standby(design)
        topology.rails(design)
    except DesignKeyError as exc:
        r.problem(exc.path, exc.message)
    except InputError as exc:
        r.problems.extend(_relocated(exc, r))
    r.raise_if_any()


def _read_text(path: Path, source: str) -> tuple[yaml.Node, dict]:
    """Node tree and data of the design file; DesignError when unreadable, not YAML or not a mapping."""
    root, data = inputfile.read_yaml(path, source, DesignError, "the design file")
    if not isinstance(data, dict):
        line, column = yamlpos.locate(root, ())
        raise DesignError.single(source, "", f"got {'an empty file' if data is None else show(data)}; accepted: "
                                 f"a mapping with keys {', '.join(DESIGN_KEYS)} (brief and topology required)",
                                 line or 1, column or 1)
    return root, data


def _read_pairs(r: _Reader, raw: object, topology: "Topology", values: Mapping[str, float]) -> dict[str, Pair]:
    """Role -> Pair of the roles made of two parts; each pair must combine to the role's value."""
    if raw is None:
        return {}
    roles = {role.name: role for role in topology.roles()}
    pairs: dict[str, Pair] = {}
    for name, item in r.mapping(("pairs",), raw, "value role -> pair").items():
        if name not in roles:
            r.unknown(("pairs",), name, "value role", list(roles), f" of {topology.id}")
            continue
        kind, path = roles[name].kind, ("pairs", name)
        accepted = (f"accepted: {{series: [A, B]}} or {{parallel: [A, B]}}, two quantities in "
                    f"{_ROLE_UNITS[kind]}" + (", or [A, B] for a series pair" if kind == "resistor" else ""))
        if isinstance(item, list) and kind == "resistor":
            pairing, parts = "series", item
        elif isinstance(item, dict) and len(item) == 1:
            pairing, parts = next(iter(item.items()))
            if pairing not in PAIRINGS:
                r.problem(path, f"got the pairing {show(pairing)}; {accepted}")
                continue
            path = path + (pairing,)
        else:
            r.problem(path, f"got {show(item)}; {accepted}")
            continue
        if not isinstance(parts, list) or len(parts) != 2:
            r.problem(path, f"got {show(parts)}; {accepted}")
            continue
        first, second = (_quantity(r, path + (i,), v, _ROLE_UNITS[kind]) for i, v in enumerate(parts))
        if first is None or second is None or name not in values:
            continue
        first, second = max(first, second), min(first, second)
        total = float(pair_total(first, second, (pairing == "series") == (kind == "resistor")))
        if not math.isclose(total, values[name], rel_tol=1e-6):
            r.problem(path, f"the {pairing} pair makes {format_quantity(total, _ROLE_UNITS[kind])}, but values.{name} "
                      f"is {format_quantity(values[name], _ROLE_UNITS[kind])}; accepted: two parts that make the "
                      "role's value")
            continue
        pairs[name] = Pair(first, second, pairing)
    return pairs


def load_design(path: str | Path, catalog_files=(), *,
                brief_changes: Mapping[str, object] | None = None) -> tuple["Brief", "Topology", Design]:
    """Read and validate the design file at `path`: (brief, topology built for it, design in SI).

    catalog_files: extra catalog files merged over the shipped ones; brief_changes: dotted brief
    keys changed before the topology is built ({'analysis.samples': 5000}), validated as
    Brief.replace does. Raises DesignError (every problem of the design file at once), BriefError
    for a brief file, CatalogError for a catalog file.
    """
    path = Path(path)
    source = str(path)
    root, data = _read_text(path, source)
    r = _Reader(source, root)
    for dup_path, (line, column) in yamlpos.duplicate_keys(root):
        r.problems.append(Problem(source, line, column, ".".join(dup_path),
                                  "key given twice; accepted: each key once per mapping"))
    for key in data:
        if key not in DESIGN_KEYS:
            r.unknown((), str(key), "key", list(DESIGN_KEYS))
    for key in _REQUIRED:
        if key not in data:
            r.problem((), f"missing required key '{key}'; accepted: brief: <file or mapping>, topology: <id>")
    catalog = load_catalog(extra=catalog_files)
    brief = _read_brief(r, data["brief"], path.resolve(), root) if "brief" in data else None
    if brief is not None and brief_changes:
        brief = brief.replace(brief_changes)
    if brief is not None:
        try:
            brief.check_topologies(topology_ids(catalog))
        except BriefError as exc:
            r.problems.extend(exc.problems)
    cls = _read_topology(r, data["topology"], catalog) if "topology" in data else None
    options = _read_options(r, data.get("options"), cls, catalog) if cls is not None else {}
    overrides = _read_overrides(r, data.get("overrides"), catalog)
    topology = build_topology(cls.id, brief, catalog) if cls is not None and brief is not None else None
    values = _read_values(r, data.get("values"), topology) if topology is not None else {}
    pairs = _read_pairs(r, data.get("pairs"), topology, values) if topology is not None else {}
    r.raise_if_any()
    design = Design(topology=topology.id, values=values, options=options, overrides=overrides, pairs=pairs)
    _probe(topology, design, r)
    return brief, topology, design
