"""The one reader of input files (briefs, designs, catalogs): bounded, located, never a traceback.

`read_yaml(path, source, error, what)` returns (node tree, data) of a YAML file after these
checks, each a located `error` (`FILE:LINE:COLUMN`) naming the limit:

- only a regular file is read: a directory, named pipe, socket or device is refused at once
  (opened without blocking, so a pipe with no writer cannot hang the run);
- at most `MAX_FILE_BYTES`; UTF-8 only (a bad byte is reported at its line and column); no NUL
  or other control character except tab, line feed and carriage return;
- in the YAML tree: nesting at most `MAX_DEPTH` levels, at most `MAX_NODES` nodes counting every
  alias as the nodes it expands to, at most `MAX_KEYS` mapping keys, text values of at most
  `MAX_TEXT` characters and numbers of at most `MAX_NUMBER_DIGITS` characters, no alias inside
  its own anchor.

The limits are fixed: they are far above what any real brief, design or catalog needs (the
largest shipped catalog is about 16 kB with 1,500 keys). Numbers are read as YAML 1.1 reads them
plus what a person means by `1e3` or `2.5e-6` (YAML 1.1 would read those as text).
"""
from __future__ import annotations

import os
import re
import stat
from pathlib import Path

import yaml

from tradeoff import yamlpos
from tradeoff.errors import InputError

__all__ = ["MAX_FILE_BYTES", "MAX_DEPTH", "MAX_NODES", "MAX_KEYS", "MAX_TEXT", "MAX_NUMBER_DIGITS",
           "read_text", "parse_yaml", "read_yaml"]

MAX_FILE_BYTES = 4_000_000
"""Largest input file read [bytes] (4 MB)."""
MAX_DEPTH = 40
"""Deepest nesting of mappings and lists (a brief uses 4 levels, a catalog 5)."""
MAX_NODES = 200_000
"""Most YAML nodes in one file, every alias counted as the nodes it expands to."""
MAX_KEYS = 20_000
"""Most mapping keys in one file."""
MAX_TEXT = 10_000
"""Longest text value [characters]."""
MAX_NUMBER_DIGITS = 100
"""Longest plain value that YAML reads as a number [characters]."""

_CONTROL_RE = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x84\x86-\x9f\ufffe\uffff]")
_KINDS = ((stat.S_ISDIR, "a directory"), (stat.S_ISFIFO, "a named pipe"), (stat.S_ISCHR, "a character device"),
          (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket"))
_FIXED = "(a fixed limit: split or shorten the file)"


def _position(text: str, index: int) -> tuple[int, int]:
    """1-based (line, column) of character `index` in `text`."""
    line = text.count("\n", 0, index) + 1
    return line, index - (text.rfind("\n", 0, index) + 1) + 1


def read_text(path: Path, source: str, error: type[InputError], what: str) -> str:
    """Text of the regular UTF-8 file `path`, checked as the module says; `error` naming `source` otherwise."""
    accepted = "accepted: a readable UTF-8 YAML file"
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0))
    except (OSError, ValueError) as exc:  # ValueError: a NUL in the name
        raise error.single(source, "", f"cannot read {what} ({getattr(exc, 'strerror', None) or exc}); {accepted}") \
            from None
    try:
        mode = os.fstat(fd).st_mode
        kind = next((name for test, name in _KINDS if test(mode)), None)
        if kind is not None or not stat.S_ISREG(mode):
            raise error.single(source, "", f"{what} is {kind or 'not a regular file'}; accepted: a regular file")
        with os.fdopen(fd, "rb", closefd=False) as handle:
            data = handle.read(MAX_FILE_BYTES + 1)
    except OSError as exc:
        raise error.single(source, "", f"cannot read {what} ({exc.strerror or exc}); {accepted}") from None
    finally:
        os.close(fd)
    if len(data) > MAX_FILE_BYTES:
        raise error.single(source, "", f"{what} is larger than {MAX_FILE_BYTES // 1_000_000} MB {_FIXED}; "
                           f"accepted: a file of at most {MAX_FILE_BYTES:,} bytes")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        head = data[:exc.start].decode("utf-8", errors="replace")
        raise error.single(source, "", f"byte 0x{data[exc.start]:02x} is not UTF-8; {accepted} (save it as UTF-8)",
                           *_position(head, len(head))) from None
    text = text.removeprefix("\ufeff")
    bad = _CONTROL_RE.search(text)
    if bad is not None:
        raise error.single(source, "", f"control character U+{ord(bad.group()):04X} in the text; accepted: "
                           "printable text, tabs and line breaks only", *_position(text, bad.start()))
    return text


def _mark(node: yaml.Node) -> tuple[int, int]:
    return node.start_mark.line + 1, node.start_mark.column + 1


def _children(node: yaml.Node) -> list[yaml.Node]:
    if isinstance(node, yaml.MappingNode):
        return [item for pair in node.value for item in pair]
    if isinstance(node, yaml.SequenceNode):
        return list(node.value)
    return []


_CONSTRUCTOR = yaml.constructor.SafeConstructor()


def _scalar_problem(node: yaml.ScalarNode) -> str | None:
    if node.tag == "tag:yaml.org,2002:timestamp":
        try:
            _CONSTRUCTOR.construct_yaml_timestamp(node)
        except (ValueError, OverflowError) as exc:
            return f"{node.value!r} looks like a date but is not one ({exc}); accepted: a valid date, or quote it"
    if node.tag in ("tag:yaml.org,2002:int", "tag:yaml.org,2002:float") and len(node.value) > MAX_NUMBER_DIGITS:
        return (f"a number of {len(node.value):,} characters; accepted: numbers of at most {MAX_NUMBER_DIGITS} "
                f"characters {_FIXED}")
    if len(node.value) > MAX_TEXT:
        return f"a text of {len(node.value):,} characters; accepted: at most {MAX_TEXT:,} characters {_FIXED}"
    return None


def check_limits(root: yaml.Node | None) -> tuple[str, tuple[int, int]] | None:
    """(what is wrong, position) for the first limit the node tree breaks, or None.

    One walk without recursion: each node's expanded size is worked out once (aliases share
    nodes), so a billion-laughs document is measured in time linear in its text.
    """
    if root is None:
        return None
    size: dict[int, int] = {}
    on_path: set[int] = set()
    keys = 0
    stack: list[tuple[yaml.Node, int]] = [(root, 1)]
    while stack:
        node, depth = stack[-1]
        ident = id(node)
        if ident in size:
            stack.pop()
            continue
        if ident not in on_path:  # first visit: check it, then its children
            if depth > MAX_DEPTH:
                return f"nesting deeper than {MAX_DEPTH} levels; accepted: at most {MAX_DEPTH} {_FIXED}", _mark(node)
            if isinstance(node, yaml.ScalarNode):
                problem = _scalar_problem(node)
                if problem:
                    return problem, _mark(node)
                size[ident] = 1
                stack.pop()
                continue
            if isinstance(node, yaml.MappingNode):
                keys += len(node.value)
                if keys > MAX_KEYS:
                    return f"more than {MAX_KEYS:,} keys; accepted: at most {MAX_KEYS:,} {_FIXED}", _mark(node)
            on_path.add(ident)
            for child in _children(node):
                if id(child) in on_path:
                    return "an alias inside its own anchor (a recursive alias); accepted: aliases of complete " \
                           "values only", _mark(child)
                if id(child) not in size:
                    stack.append((child, depth + 1))
            continue
        on_path.discard(ident)  # second visit: every child is measured
        stack.pop()
        size[ident] = 1 + sum(size[id(child)] for child in _children(node))
        if size[ident] > MAX_NODES:
            return (f"more than {MAX_NODES:,} values once aliases are expanded; accepted: at most {MAX_NODES:,} "
                    f"{_FIXED}", _mark(node))
    return None


def parse_yaml(text: str, source: str, error: type[InputError], *,
               construct: bool = True) -> tuple[yaml.Node | None, object]:
    """(node tree, data) of YAML `text` within the limits (data None unless `construct`); `error` at the
    offending position otherwise."""
    loader = yamlpos.Loader(text)
    try:
        root = loader.get_single_node()
        broken = check_limits(root)
        if broken is not None:
            raise error.single(source, "", broken[0], *broken[1])
        return root, (loader.construct_document(root) if root is not None and construct else None)
    except yaml.YAMLError as exc:
        line, column = yamlpos.syntax_error_position(exc)
        what = getattr(exc, "problem", None) or str(exc).splitlines()[0]
        raise error.single(source, "", f"YAML syntax error: {what}; accepted: valid YAML "
                           "(check indentation, colons and quotes)", line, column) from None
    finally:
        loader.dispose()


def read_yaml(path: Path, source: str, error: type[InputError], what: str, *,
              construct: bool = True) -> tuple[yaml.Node | None, object]:
    """(node tree, data) of the YAML file `path`, read and parsed within every limit of this module."""
    return parse_yaml(read_text(path, source, error, what), source, error, construct=construct)
