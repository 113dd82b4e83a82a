"""Part catalogs: generic part classes with sourced parameters, read from YAML files.

A catalog file holds `parts:`, a list of entries (`id`, `category`, `description`, `params`,
plus `dielectric` for capacitors, `module` for topologies and an optional `mount`: smd or
through-hole, which sets the assembly cost per placement, see tradeoff.costing). Every parameter is
`{value: ..., source: ...}`; a value is a number (dimensionless), a quantity string (`"1.4 V"`),
a percentage (`"20 %"`) or a list of these. Values stay as written until a model asks for
one with `Part.value(name, unit)`, which returns an SI float after checking the dimension.

`load_catalog()` reads every shipped catalog (the `catalogs/` directory of a source checkout,
or `tradeoff/catalogs` inside an installed wheel) and merges user files over them: a user
entry replaces the shipped entry with the same id as a whole. Every problem of every file is
collected and raised as one `CatalogError` with `FILE:LINE:COLUMN: key: message` lines.
"""
from __future__ import annotations

import functools
import re
from collections.abc import Iterable, Iterator
from pathlib import Path
from types import MappingProxyType
from typing import Any

import yaml

from tradeoff import inputfile
from tradeoff.errors import CatalogError, Problem
from tradeoff.fields import SUGGESTED_KEYS, Problems, did_you_mean
from tradeoff.parts import COST_CURRENCY, VALUE_ACCEPTED, Param, Part, range_problems, value_problem

__all__ = [
    "COST_CURRENCY",
    "CATEGORIES",
    "DIELECTRICS",
    "MOUNTS",
    "Catalog",
    "Param",
    "Part",
    "load_catalog",
    "shipped_catalog_dir",
    "shipped_catalog_names",
]

CATEGORIES = ("resistor", "capacitor", "npn", "pnp", "darlington", "mosfet", "diode", "timer555", "counter",
              "comparator", "reference", "mcu", "ldo", "crystal", "relay", "topology")
"""Every category an entry may have (CONTRIBUTING.md, Catalogs)."""

DIELECTRICS = ("electrolytic", "film", "ceramic")
"""Capacitor dielectrics; each selects the brief's series of the same name (brief.series.film ...)."""

MOUNTS = ("smd", "through-hole")
"""How a part class is placed on the board (surface-mount or through-hole); sets its assembly cost."""

NON_PART_FILES = ("eseries",)
"""Shipped YAML files that are not part catalogs (the E-series tables)."""

_TOP_KEYS = ("parts",)
_ENTRY_KEYS = ("id", "category", "description", "params", "dielectric", "module", "mount", "notes")
_FIELD_KEYS = ("dielectric", "module", "mount", "notes")
_PARAM_KEYS = ("value", "source", "note")
_ID_RE = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._+-]*$")
_NAME_RE = re.compile(r"^[a-z][a-z0-9_]*$")
_MODULE_RE = re.compile(r"^tradeoff\.topologies\.[a-z_][a-z0-9_]*$")


def shipped_catalog_dir() -> Path:
    """Directory of the shipped catalogs: `tradeoff/catalogs` in a wheel, else `<repo>/catalogs`."""
    package = Path(__file__).resolve().parent
    installed = package / "catalogs"
    return installed if installed.is_dir() else package.parent / "catalogs"


def shipped_catalog_names() -> tuple[str, ...]:
    """Names of the shipped part catalogs (file stems, e.g. 'passives'), sorted."""
    return tuple(sorted(p.stem for p in shipped_catalog_dir().glob("*.yaml") if p.stem not in NON_PART_FILES))


# ---- reading one file -----------------------------------------------------------------------

class _FileReader:
    """Validates one catalog file into parts, collecting every problem with its line and column.

    Positions are the marks of the composed node tree (tradeoff.inputfile.read_yaml), read while walking it.
    """

    def __init__(self, path: Path):
        self.path = path
        self.file = str(path)
        self.problems = Problems()
        self.constructor = yaml.constructor.SafeConstructor()

    def problem(self, node: yaml.Node | None, key: str, message: str) -> None:
        if self.problems.full():
            return
        mark = node.start_mark if node is not None else None
        self.problems.append(Problem(self.file, mark.line + 1 if mark else None,
                                     mark.column + 1 if mark else None, key, message))

    def read(self) -> list[Part]:
        try:
            root, _ = inputfile.read_yaml(self.path, self.file, CatalogError, "the catalog file", construct=False)
        except CatalogError as exc:
            self.problems.extend(exc.problems)
            return []
        return self._document(root)

    def mapping(self, node: yaml.Node, key: str, accepted: tuple[str, ...] | None,
                what: str) -> dict[str, yaml.Node] | None:
        """Children of a mapping node by key; reports non-mappings, duplicate and unknown keys."""
        if not isinstance(node, yaml.MappingNode):
            self.problem(node, key, f"expected {what}, got {_kind(node)}")
            return None
        children: dict[str, yaml.Node] = {}
        unknown = 0
        for key_node, value_node in node.value:
            name = key_node.value if isinstance(key_node, yaml.ScalarNode) else None
            path = f"{key}.{name}" if key else str(name)
            if name is None:
                self.problem(key_node, key, "a key must be a plain name")
            elif name in children:
                self.problem(key_node, path, f"duplicate key '{name}' (line {children[name].start_mark.line + 1}); "
                                             "accepted: each key once")
            elif accepted is not None and name not in accepted:
                unknown += 1
                if unknown <= SUGGESTED_KEYS:
                    self.problem(key_node, path, f"unknown key '{name}';{did_you_mean(name, accepted)} "
                                                 f"accepted: {', '.join(accepted)}")
            else:
                children[name] = value_node
        if unknown > SUGGESTED_KEYS:
            self.problem(node, key, f"and {unknown - SUGGESTED_KEYS} more unknown keys; accepted: {', '.join(accepted)}")
        return children

    def _document(self, root: yaml.Node | None) -> list[Part]:
        if root is None:
            self.problem(None, "parts", "the file is empty; accepted: a mapping with a 'parts:' list")
            return []
        top = self.mapping(root, "", _TOP_KEYS, "a mapping with a 'parts:' list")
        if top is None:
            return []
        if "parts" not in top:
            self.problem(root, "parts", "missing 'parts:'; accepted: a mapping with a 'parts:' list")
            return []
        entries = top["parts"]
        if not isinstance(entries, yaml.SequenceNode):
            self.problem(entries, "parts", f"expected a list of part entries, got {_kind(entries)}")
            return []
        parts: list[Part] = []
        first_line: dict[str, int] = {}
        for index, node in enumerate(entries.value):
            part_id, part = self._entry(node, index)
            if part_id is not None and part_id in first_line:
                self.problem(node, f"parts[{index}].id", f"duplicate id '{part_id}' (first at line "
                                                         f"{first_line[part_id]}); accepted: each id once per file")
                continue
            if part_id is not None:
                first_line[part_id] = node.start_mark.line + 1
            if part is not None:
                parts.append(part)
        return parts

    def scalar(self, node: yaml.Node, nested: bool = False) -> Any:
        """The Python value of a scalar or flat sequence node (lists become tuples).

        Nested lists and mappings become empty placeholders that validation rejects, so a
        recursive alias (`&a [*a]`) cannot recurse.
        """
        if isinstance(node, yaml.SequenceNode):
            return () if nested else tuple(self.scalar(item, nested=True) for item in node.value)
        if isinstance(node, yaml.MappingNode):
            return {}
        try:
            return self.constructor.construct_object(node, deep=True)
        except yaml.YAMLError:  # a tag the safe loader does not know (`!!python/object:...`)
            self.problem(node, "value", f"unsupported YAML tag '{node.tag}'; accepted: plain YAML values "
                         "(text, numbers, true/false, lists)")
            return {}

    def text(self, children, node, key, name, required=True) -> str | None:
        """A non-empty string field `name` of an entry, reporting when missing or of the wrong type."""
        if name not in children:
            if required:
                self.problem(node, f"{key}.{name}", f"missing '{name}'; accepted: a non-empty text")
            return None
        value = self.scalar(children[name])
        if not isinstance(value, str) or not value.strip():
            self.problem(children[name], f"{key}.{name}", f"expected a non-empty text, got {value!r}")
            return None
        return value.strip()

    def _entry(self, node: yaml.Node, index: int) -> tuple[str | None, Part | None]:
        """(id, part) of one entry; part is None when the entry has problems."""
        key = f"parts[{index}]"
        part_id = _peek_id(node)
        children = self.mapping(node, part_id or key, _ENTRY_KEYS,
                                "a part entry (a mapping with id, category, description)")
        if children is None:
            return None, None
        before = self.problems.count
        part_id = self.text(children, node, key, "id")
        if part_id is not None and not _ID_RE.match(part_id):
            self.problem(children["id"], f"{key}.id", f"id '{part_id}' has characters other than letters, digits "
                                                      "and . _ + -; accepted: e.g. 'res-metal-film-1pct'")
            part_id = None
        key = part_id or key
        category = self.text(children, node, key, "category")
        if category is not None and category not in CATEGORIES:
            self.problem(children["category"], f"{key}.category", f"unknown category '{category}';"
                         f"{did_you_mean(category, CATEGORIES)} accepted: {', '.join(CATEGORIES)}")
        description = self.text(children, node, key, "description")
        fields = {name: self.text(children, node, key, name, required=False)
                  for name in _FIELD_KEYS if name in children}
        self._check_fields(children, node, key, category, fields)
        params = self._params(children.get("params"), node, key, category)
        for param, message in range_problems(params):
            if not self.problems.full():
                self.problems.append(Problem(self.file, param.line, param.column, f"{key}.params.{param.name}", message))
        if self.problems.count > before:
            return part_id, None
        positions = {name: (children[name].start_mark.line + 1, children[name].start_mark.column + 1)
                     for name in fields}
        return part_id, Part(part_id, category, description, MappingProxyType(params), MappingProxyType(fields),
                             self.file, node.start_mark.line + 1, node.start_mark.column + 1,
                             MappingProxyType(positions))

    def _check_fields(self, children, node, key, category, fields) -> None:
        """Category-bound fields: capacitors need a dielectric, topologies a module, nothing else has them."""
        required = {"capacitor": "dielectric", "topology": "module"}
        for category_needing, name in required.items():
            if category == category_needing and name not in children:
                self.problem(node, f"{key}.{name}", f"a {category} entry needs '{name}'")
            elif name in children and category is not None and category != category_needing:
                self.problem(children[name], f"{key}.{name}", f"'{name}' belongs to {category_needing} "
                                                              f"entries only, not to category '{category}'")
        dielectric = fields.get("dielectric")
        if dielectric is not None and dielectric not in DIELECTRICS:
            self.problem(children["dielectric"], f"{key}.dielectric", f"unknown dielectric '{dielectric}';"
                         f"{did_you_mean(dielectric, DIELECTRICS)} accepted: {', '.join(DIELECTRICS)}")
        mount = fields.get("mount")
        if mount is not None and mount not in MOUNTS:
            self.problem(children["mount"], f"{key}.mount", f"unknown mount '{mount}';"
                         f"{did_you_mean(mount, MOUNTS)} accepted: {', '.join(MOUNTS)}")
        module = fields.get("module")
        if module is not None and not _MODULE_RE.match(module):
            self.problem(children["module"], f"{key}.module", f"'{module}' is not a module of the package's "
                         "topologies; accepted: tradeoff.topologies.NAME, e.g. 'tradeoff.topologies.rc_darlington'")

    def _params(self, node, entry_node, key, category) -> dict[str, Param]:
        params: dict[str, Param] = {}
        if node is None:
            children = {}
        else:
            children = self.mapping(node, f"{key}.params", None, "a mapping of parameters")
            if children is None:
                return params
        if category not in (None, "topology") and "cost" not in children:
            self.problem(node or entry_node, f"{key}.params.cost",
                         "missing 'cost'; accepted: {value: 0.05, source: indicative} (EUR, indicative)")
        for name, param_node in children.items():
            param = self._param(param_node, f"{key}.params.{name}", name)
            if param is not None:
                params[name] = param
        return params

    def _param(self, node, key, name) -> Param | None:
        if not _NAME_RE.match(name):
            self.problem(node, key, f"parameter name '{name}' is not lower_case_with_underscores")
            return None
        children = self.mapping(node, key, _PARAM_KEYS, "{value: ..., source: ...}")
        if children is None:
            return None
        ok = True
        for required in ("value", "source"):
            if required not in children:
                self.problem(node, f"{key}.{required}", f"missing '{required}'; accepted: {{value: ..., source: ...}}"
                                                        " with a source naming a datasheet, or 'common practice', "
                                                        "'from memory' or 'indicative'")
                ok = False
        if not ok:
            return None
        value = self.scalar(children["value"])
        problem = value_problem(value)
        if problem:
            self.problem(children["value"], f"{key}.value", f"{problem}; {VALUE_ACCEPTED}")
        source = self.scalar(children["source"])
        if not isinstance(source, str) or not source.strip():
            self.problem(children["source"], f"{key}.source", f"expected a non-empty source text, got {source!r}; "
                                                              "accepted: a document, 'common practice', "
                                                              "'from memory' or 'indicative'")
            return None
        note = self.scalar(children["note"]) if "note" in children else ""
        if problem:
            return None
        mark = children["value"].start_mark
        return Param(name, value, source.strip(), self.file, mark.line + 1, mark.column + 1, str(note))


def _peek_id(node: yaml.Node) -> str | None:
    """The plain `id` text of an entry node, if it has one, to name the entry in messages."""
    if isinstance(node, yaml.MappingNode):
        for key_node, value_node in node.value:
            if getattr(key_node, "value", None) == "id" and isinstance(value_node, yaml.ScalarNode) \
                    and _ID_RE.match(value_node.value):
                return value_node.value
    return None


def _kind(node: yaml.Node) -> str:
    """What a YAML node is, for messages."""
    if isinstance(node, yaml.MappingNode):
        return "a mapping"
    if isinstance(node, yaml.SequenceNode):
        return "a list"
    return f"'{node.value}'" if node.value else "nothing"


@functools.lru_cache(maxsize=64)
def _read_cached(path: str, mtime_ns: int, size: int) -> tuple[tuple[Part, ...], tuple[Problem, ...]]:
    """Parts and problems of one file, cached by path and modification stamp."""
    reader = _FileReader(Path(path))
    parts = reader.read()
    return tuple(parts), tuple(reader.problems.listed())


def _read(path: Path) -> tuple[tuple[Part, ...], tuple[Problem, ...]]:
    stat = path.stat()
    return _read_cached(str(path), stat.st_mtime_ns, stat.st_size)


def _resolve(name_or_path: str | Path) -> Path | Problem:
    """A catalog file from a path, or from a shipped catalog name ('passives')."""
    path = Path(name_or_path)
    if path.is_file():
        return path
    names = shipped_catalog_names()
    if str(name_or_path) in names:
        return shipped_catalog_dir() / f"{name_or_path}.yaml"
    return Problem(str(name_or_path), None, None, "", "no such catalog file or shipped catalog name;"
                   f"{did_you_mean(str(name_or_path), names)} accepted: a YAML file path or one of {', '.join(names)}")


# ---- the merged catalog ---------------------------------------------------------------------

class Catalog:
    """Part classes by id, merged from shipped and user catalog files (later files override by id)."""

    def __init__(self, parts: Iterable[Part], files: Iterable[str] = ()):
        self._parts = {part.id: part for part in parts}
        self.files = tuple(files)

    def __iter__(self) -> Iterator[Part]:
        return iter(self._parts.values())

    def __len__(self) -> int:
        return len(self._parts)

    def __contains__(self, part_id: object) -> bool:
        return part_id in self._parts

    def part(self, part_id: str) -> Part:
        """The part class `part_id`; CatalogError with a suggestion when unknown."""
        try:
            return self._parts[part_id]
        except KeyError:
            raise CatalogError.single("catalog", "id", f"no part class '{part_id}';"
                                      f"{did_you_mean(part_id, self._parts)} list them with "
                                      "`tradeoff catalog`") from None

    def parts(self, category: str | None = None) -> list[Part]:
        """Part classes of `category` (all when None), in file order."""
        if category is not None and category not in CATEGORIES:
            raise CatalogError.single("catalog", "category", f"unknown category '{category}';"
                                      f"{did_you_mean(category, CATEGORIES)} accepted: {', '.join(CATEGORIES)}")
        return [p for p in self._parts.values() if category is None or p.category == category]

    def select(self, query: str | None = None) -> list[Part]:
        """Parts matching a category, an id, a dielectric or a case-insensitive substring of id or description."""
        if not query:
            return list(self._parts.values())
        if query in CATEGORIES:
            return self.parts(query)
        if query in self._parts:
            return [self._parts[query]]
        if query in DIELECTRICS:
            return [p for p in self._parts.values() if p.fields.get("dielectric") == query]
        needle = query.lower()
        found = [p for p in self._parts.values() if needle in p.id.lower() or needle in p.description.lower()]
        if not found:
            raise CatalogError.single("catalog", "query", f"nothing matches '{query}';"
                                      f"{did_you_mean(query, [*CATEGORIES, *self._parts])} accepted: a category "
                                      f"({', '.join(CATEGORIES)}), a part id, or part of an id or description")
        return found


def load_catalog(extra: Iterable[str | Path] = (), *, shipped: Iterable[str | Path] | None = None) -> Catalog:
    """Every shipped catalog (or only `shipped`: names like 'passives' or paths) merged with `extra` files.

    Ids must be unique within a file and across the shipped set; an entry of an `extra` file
    replaces an earlier entry with the same id. All problems are raised together as CatalogError.
    """
    base = list(shipped_catalog_names() if shipped is None else shipped)
    problems: list[Problem] = []
    parts: dict[str, Part] = {}
    files: list[str] = []
    for overriding, sources in ((False, base), (True, list(extra))):
        for source in sources:
            path = _resolve(source)
            if isinstance(path, Problem):
                problems.append(path)
                continue
            file_parts, file_problems = _read(path)
            problems.extend(file_problems)
            files.append(str(path))
            for part in file_parts:
                earlier = parts.get(part.id)
                if earlier is not None and not overriding:
                    problems.append(Problem(part.file, part.line, part.column, f"{part.id}.id",
                                            f"duplicate id '{part.id}' (also in {earlier.file}:{earlier.line}); "
                                            "accepted: ids unique across the shipped catalogs"))
                    continue
                parts[part.id] = part  # an override keeps the replaced entry's place
    if problems:
        raise CatalogError(problems)
    return Catalog(parts.values(), files)
