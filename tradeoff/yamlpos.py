"""Where things are in a YAML source: key paths and syntax errors to 1-based (line, column).

The node tree comes from `yaml.compose` with the SafeLoader, so positions refer to the text the
user wrote. A path is a sequence of mapping keys and sequence indices, as in a pydantic `loc`
tuple (`("delay", "nominal")`, `("topologies", 1)`).
"""
from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

import yaml

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.errors import InputError

__all__ = ["compose", "load", "read_file", "load_located", "node_at", "locate", "syntax_error_position", "duplicate_keys", "Position"]

Position = tuple[int | None, int | None]

_SAFE_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)
"""The safe loader, in its libyaml (C) build where PyYAML has it: the same safe constructors and
node marks, about ten times faster on the catalogs."""


def compose(text: str) -> yaml.Node | None:
    """The node tree of `text` (None for an empty document); raises yaml.YAMLError on bad syntax."""
    return yaml.compose(text, Loader=_SAFE_LOADER)


def load(text: str) -> tuple[yaml.Node | None, object]:
    """(node tree, data) of `text`, parsed once with the SafeLoader (as yaml.safe_load does)."""
    loader = _SAFE_LOADER(text)
    try:
        root = loader.get_single_node()
        return root, (loader.construct_document(root) if root is not None else None)
    finally:
        loader.dispose()


def _mark(node: yaml.Node) -> Position:
    return node.start_mark.line + 1, node.start_mark.column + 1


def _child(node: yaml.Node, step: str | int) -> tuple[yaml.Node, yaml.Node] | None:
    """(key node or item node, value node) for one step into `node`, or None when absent."""
    if isinstance(node, yaml.MappingNode):
        for key_node, value_node in reversed(node.value):  # a repeated key: safe_load keeps the last
            if isinstance(key_node, yaml.ScalarNode) and key_node.value == str(step):
                return key_node, value_node
    elif isinstance(node, yaml.SequenceNode) and isinstance(step, int) and 0 <= step < len(node.value):
        return node.value[step], node.value[step]
    return None


def read_file(path: Path, source: str, error: "type[InputError]", what: str) -> str:
    """Text of the UTF-8 file `path`; `error` naming `source` when it cannot be read (`what`: 'the brief' ...)."""
    try:
        return path.read_text(encoding="utf-8")
    except (OSError, ValueError) as exc:  # ValueError: undecodable bytes, or a NUL in the name
        raise error.single(source, "", f"cannot read {what} ({exc.__class__.__name__}: "
                           f"{getattr(exc, 'strerror', None) or exc}); accepted: a readable UTF-8 YAML file") from None


def load_located(text: str, source: str, error: "type[InputError]") -> tuple[yaml.Node | None, object]:
    """(node tree, data) of `text` as `load` gives; `error` at the syntax error's position otherwise."""
    try:
        return load(text)
    except yaml.YAMLError as exc:
        line, column = syntax_error_position(exc)
        what = getattr(exc, "problem", None) or str(exc).splitlines()[0]
        raise error.single(source, "", f"YAML syntax error: {what}; accepted: valid YAML "
                           "(check indentation, colons and quotes)", line, column) from None


def node_at(root: yaml.Node | None, path: Sequence[str | int]) -> yaml.Node | None:
    """The node of the value at `path` in `root` (e.g. a section inlined in another file), or None."""
    node = root
    for step in path:
        found = _child(node, step) if node is not None else None
        if found is None:
            return None
        node = found[1]
    return node


def locate(root: yaml.Node | None, path: Sequence[str | int], *, at_key: bool = False) -> Position:
    """(line, column) of the value at `path` in `root`, or of the key itself with `at_key`.

    A path that leaves the file (a missing key) points at the deepest part present: the key of
    the parent mapping, or the document start. (None, None) when there is no document.
    """
    if root is None:
        return None, None
    node, key_node = root, None
    for step in path:
        found = _child(node, step)
        if found is None:
            return _mark(key_node if key_node is not None else node)
        key_node, node = found
    return _mark(key_node if at_key and key_node is not None else node)


def duplicate_keys(root: yaml.Node | None) -> list[tuple[tuple[str, ...], Position]]:
    """Every key repeated within one mapping (safe_load silently keeps the last), with its position."""
    found: list[tuple[tuple[str, ...], Position]] = []

    def walk(node: yaml.Node, path: tuple[str, ...], seen_nodes: set[int]) -> None:
        if id(node) in seen_nodes:  # an alias points back to a node already walked
            return
        seen_nodes = seen_nodes | {id(node)}
        if isinstance(node, yaml.MappingNode):
            seen: set[str] = set()
            for key_node, value_node in node.value:
                key = str(key_node.value) if isinstance(key_node, yaml.ScalarNode) else "?"
                if key in seen:
                    found.append((path + (key,), _mark(key_node)))
                seen.add(key)
                walk(value_node, path + (key,), seen_nodes)
        elif isinstance(node, yaml.SequenceNode):
            for index, item in enumerate(node.value):
                walk(item, path + (str(index),), seen_nodes)

    if root is not None:
        walk(root, (), set())
    return found


def syntax_error_position(exc: yaml.YAMLError) -> Position:
    """(line, column) a YAML error points at (its problem mark, else its context mark)."""
    mark = getattr(exc, "problem_mark", None) or getattr(exc, "context_mark", None)
    if mark is None:
        return None, None
    return mark.line + 1, mark.column + 1
