"""Where things are in a YAML source: key paths and syntax errors to 1-based (line, column).

The node tree comes from `yaml.compose` with the SafeLoader, so positions refer to the text the
user wrote. A path is a sequence of mapping keys and sequence indices, as in a pydantic `loc`
tuple (`("delay", "nominal")`, `("topologies", 1)`).
"""
from __future__ import annotations

import re
from collections.abc import Sequence

import yaml

__all__ = ["Loader", "compose", "load", "node_at", "locate", "syntax_error_position", "duplicate_keys", "Position"]

Position = tuple[int | None, int | None]


class Loader(getattr(yaml, "CSafeLoader", yaml.SafeLoader)):  # type: ignore[misc]
    """The safe loader (its libyaml build where PyYAML has one: the same safe constructors and node
    marks, about ten times faster), reading `1e3` and `2.5e-6` as the numbers a person means (plain
    YAML 1.1 reads a float only with a dot and a signed exponent, so those would be text)."""


Loader.add_implicit_resolver("tag:yaml.org,2002:float",
                             re.compile(r"^[-+]?(?:[0-9][0-9_]*(?:\.[0-9_]*)?|\.[0-9_]+)[eE][-+]?[0-9]+$"),
                             list("-+0123456789."))


def compose(text: str) -> yaml.Node | None:
    """The node tree of `text` (None for an empty document); raises yaml.YAMLError on bad syntax."""
    return yaml.compose(text, Loader=Loader)


def load(text: str) -> tuple[yaml.Node | None, object]:
    """(node tree, data) of `text`, parsed once with the SafeLoader (as yaml.safe_load does)."""
    loader = Loader(text)
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
