"""tradeoff: trade studies for timing functions, as a library and a command.

    import tradeoff
    brief = tradeoff.load_brief("examples/towel_rail_boost.yaml").replace({"delay.nominal": "1 h"})
    print(tradeoff.study(brief, samples=2000).to_frame())

`load_brief`, `study`, `analyze` and `sweep` are imported on first use, so `import tradeoff`
(and `tradeoff --help`) stays fast. `tradeoff.study` and `tradeoff.sweep` are the functions,
although modules of the same names exist (import those as `from tradeoff.study import ...`).
"""
from __future__ import annotations

import importlib
import sys
import types

__all__ = ["load_brief", "study", "analyze", "sweep"]

_HOMES = {"load_brief": "tradeoff.brief", "study": "tradeoff.study", "analyze": "tradeoff.api",
          "sweep": "tradeoff.sweep"}


def _public(name: str) -> property:
    """The function `name`, imported on first access; importing its module does not replace it."""
    return property(lambda self: getattr(importlib.import_module(_HOMES[name]), name), lambda self, value: None)


class _Package(types.ModuleType):
    """The package module, with the public functions as lazy attributes (PEP 549 style)."""

    load_brief = _public("load_brief")
    study = _public("study")
    analyze = _public("analyze")
    sweep = _public("sweep")

    def __dir__(self) -> list[str]:
        return sorted(set(super().__dir__()) | set(__all__))


sys.modules[__name__].__class__ = _Package
