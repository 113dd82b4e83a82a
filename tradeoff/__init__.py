"""tradeoff: trade studies for timing functions, as a library and a command.

    import tradeoff
    brief = tradeoff.load_brief("examples/towel_rail_boost.yaml").replace({"delay.nominal": "1 h"})
    print(tradeoff.study(brief, samples=2000).to_frame())

`load_brief`, `study`, `analyze` and `sweep` are imported on first use (PEP 562 module
`__getattr__`), so `import tradeoff` (and `tradeoff --help`) stays fast. No module of the package
is named like one of them, so importing a module never replaces a function: `study` lives in
`tradeoff.trade_study`, `sweep` in `tradeoff.grid_sweep`, `analyze` in `tradeoff.api`.
"""
from __future__ import annotations

import importlib

__all__ = ["load_brief", "study", "analyze", "sweep", "__version__"]

__version__ = "0.1.0"
"""The tool's version (pyproject.toml reads it from here), shown in reports for reproduction."""

_HOMES = {"load_brief": "tradeoff.brief", "study": "tradeoff.trade_study", "analyze": "tradeoff.api",
          "sweep": "tradeoff.grid_sweep"}


def __getattr__(name: str):
    """The public function `name`, imported from its module on first access."""
    if name in _HOMES:
        return getattr(importlib.import_module(_HOMES[name]), name)
    raise AttributeError(f"module 'tradeoff' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
