"""Layers point one way: a walk over every import statement of the package (module level,
inside functions and under `if TYPE_CHECKING:` alike, since each names a dependency) fails on
an import circle, on an input-layer module importing a topology or report module, and on a
results module importing a report module (reports depend on results, never the other way).

Design files are not input of that kind: a design names a topology and is checked against its
roles and options, so its loader (tradeoff.design) sits above the registry, beside the study;
no topology imports it (the circle test would fail).
"""
from __future__ import annotations

import ast
import graphlib
import os
import subprocess
import sys
from pathlib import Path

from conftest import ROOT

PACKAGE = ROOT / "tradeoff"

INPUT_LAYER = ("tradeoff.units", "tradeoff.yamlpos", "tradeoff.inputfile", "tradeoff.fields", "tradeoff.brief",
               "tradeoff.environment",
               "tradeoff.brief_sections", "tradeoff.catalog", "tradeoff.eseries", "tradeoff.errors", "tradeoff.cautions")
"""Modules that load and validate input: they know nothing of topologies or reports."""

REPORT_USERS = ("tradeoff.cli", "tradeoff.__main__")
"""The only modules outside `tradeoff.report` that may import a report module: the command shell."""

MAX_LINES = 600
"""Largest module, in lines, before it is split along its seams."""

TOPOLOGY_MAX_LINES = 400
"""Largest module of `tradeoff.topologies`, in lines: a topology is a short composition of device laws, its
rules, netlist, optimiser tables and load or start network sit in modules beside it."""

def module_name(path: Path, root: Path) -> str:
    """Dotted module name of a file under `root` ('pkg/__init__.py' -> 'pkg')."""
    parts = list(path.relative_to(root).with_suffix("").parts)
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def import_graph(package: Path, unresolved: dict[str, set[str]] | None = None) -> dict[str, set[str]]:
    """Module -> the package's modules it imports anywhere in its source (functions and
    TYPE_CHECKING blocks included; `importlib.import_module('literal')` too). Names under the
    package that are no module go into `unresolved` (importer -> names) when given."""
    unresolved = {} if unresolved is None else unresolved
    files = {module_name(p, package.parent): p for p in package.rglob("*.py")}
    top = package.name

    def target(name: str) -> str | None:
        while name and name not in files:
            name = name.rpartition(".")[0]
        return name or None

    graph: dict[str, set[str]] = {}
    for name, path in files.items():
        found: set[str] = set()
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), filename=str(path))):
            names: list[str] = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                base = node.module or ""
                if node.level:
                    here = name.split(".") if path.name == "__init__.py" else name.split(".")[:-1]
                    base = ".".join(here[: len(here) - node.level + 1] + ([base] if base else []))
                names = [f"{base}.{a.name}" if f"{base}.{a.name}" in files else base for a in node.names]
            elif (isinstance(node, ast.Call) and getattr(node.func, "attr", getattr(node.func, "id", "")) ==
                  "import_module" and node.args and isinstance(node.args[0], ast.Constant)):
                names = [str(node.args[0].value)]
            # `from pkg.mod import name` needs pkg.mod; `import pkg.mod` and import_module need the module
            wanted = [base] if isinstance(node, ast.ImportFrom) else names
            for n in wanted:
                if n.split(".")[0] == top and n not in files:
                    unresolved.setdefault(name, set()).add(n)
            found |= {t for n in names if n.split(".")[0] == top and (t := target(n)) and t != name}
        graph[name] = found
    return graph


def violations(graph: dict[str, set[str]]) -> list[tuple[str, str, str]]:
    """(importer, imported, rule broken) for every edge against the one-way layers."""
    out = []
    for importer, targets in graph.items():
        for imported in sorted(targets):
            if importer in INPUT_LAYER and imported.startswith(("tradeoff.topologies", "tradeoff.report")):
                out.append((importer, imported, "an input-layer module imports a topology or report module"))
            elif (imported.startswith("tradeoff.report") and not importer.startswith("tradeoff.report")
                  and importer not in REPORT_USERS):
                out.append((importer, imported, "a results module imports a report module"))
    return out


def cycle(graph: dict[str, set[str]]) -> list[str]:
    """One import circle of `graph` (first module repeated at the end), or [] when there is none."""
    try:
        tuple(graphlib.TopologicalSorter(graph).static_order())
    except graphlib.CycleError as exc:
        return list(exc.args[1])
    return []


def test_the_walk_sees_lazy_and_typing_imports(tmp_path):
    # A synthetic package: a circle closed only by an import inside a function, and one only under
    # TYPE_CHECKING; both must be seen (an import statement anywhere is a dependency).
    pkg = tmp_path / "tradeoff"
    (pkg / "report").mkdir(parents=True)
    (pkg / "__init__.py").write_text("")
    (pkg / "report" / "__init__.py").write_text("")
    (pkg / "a.py").write_text("from tradeoff import b\n")
    (pkg / "b.py").write_text("def f():\n    from tradeoff.a import x\n")
    (pkg / "c.py").write_text("from typing import TYPE_CHECKING\nif TYPE_CHECKING:\n    from tradeoff.report.d import y\n")
    (pkg / "report" / "d.py").write_text("from . import e\nfrom ..c import z\n")
    (pkg / "report" / "e.py").write_text("import importlib\nimportlib.import_module('tradeoff.c')\n")
    graph = import_graph(pkg)
    assert graph["tradeoff.a"] == {"tradeoff.b"} and graph["tradeoff.b"] == {"tradeoff.a"}
    assert graph["tradeoff.report.d"] == {"tradeoff.report.e", "tradeoff.c"}
    assert graph["tradeoff.report.e"] == {"tradeoff.c"}
    assert set(cycle(graph)) in ({"tradeoff.a", "tradeoff.b"}, {"tradeoff.c", "tradeoff.report.d"})
    assert ("tradeoff.c", "tradeoff.report.d", "a results module imports a report module") in violations(graph)
    (pkg / "f.py").write_text("from tradeoff.gone import x\nimport tradeoff.missing\nfrom tradeoff.a import b\n")
    unresolved: dict[str, set[str]] = {}
    import_graph(pkg, unresolved)
    assert unresolved == {"tradeoff.f": {"tradeoff.gone", "tradeoff.missing"}}


def test_no_import_circle():
    graph = import_graph(PACKAGE)
    assert cycle(graph) == [], "import circle: " + " -> ".join(cycle(graph))


def test_layers_point_one_way():
    broken = violations(import_graph(PACKAGE))
    assert broken == []


def test_every_import_names_a_module():
    # A renamed module leaves no stale import behind, not even one read only by type checkers.
    unresolved: dict[str, set[str]] = {}
    import_graph(PACKAGE, unresolved)
    assert unresolved == {}


def test_no_module_is_shadowed_by_a_public_function():
    import importlib

    import tradeoff

    modules = {module_name(p, ROOT) for p in PACKAGE.rglob("*.py")}
    assert {f"tradeoff.{name}" for name in tradeoff.__all__} & modules == set()
    for home in ("tradeoff.trade_study", "tradeoff.grid_sweep", "tradeoff.api", "tradeoff.brief"):
        importlib.import_module(home)  # importing a module never replaces the package's function
    assert [getattr(tradeoff, name).__module__ for name in ("study", "sweep", "analyze", "load_brief")] == [
        "tradeoff.trade_study", "tradeoff.grid_sweep", "tradeoff.api", "tradeoff.brief"]


def _line_counts() -> dict[str, int]:
    return {module_name(p, ROOT): len(p.read_text(encoding="utf-8").splitlines()) for p in PACKAGE.rglob("*.py")}


def test_no_module_above_the_size_limit():
    too_long = {m: n for m, n in _line_counts().items() if n > MAX_LINES}
    assert too_long == {}, f"split these along their seams (at most {MAX_LINES} lines each)"


def test_no_topology_module_above_its_size_limit():
    counts = _line_counts()
    topology_modules = [m for m in counts if m.startswith("tradeoff.topologies.")]
    assert len(topology_modules) > 10 and "tradeoff.topologies.base" in counts  # the walk sees the package
    too_long = {m: counts[m] for m in topology_modules if counts[m] > TOPOLOGY_MAX_LINES}
    assert too_long == {}, f"split these along their seams (at most {TOPOLOGY_MAX_LINES} lines each)"


EXPORT_ONLY = ("matplotlib", "openpyxl")
"""Heavy libraries only the file exports use (plots, workbook): loaded by the export that writes them."""


def test_commands_do_not_load_export_libraries():
    """A fresh process importing the command shell and the study, sweep and library entry points has
    loaded neither matplotlib nor openpyxl: a module-level import of one of them anywhere on these
    paths adds a few hundred milliseconds to every command (bench/bench_startup.py measures it)."""
    probe = ("import sys, tradeoff.cli, tradeoff.trade_study, tradeoff.grid_sweep, tradeoff.api; "
             f"print(','.join(m for m in {EXPORT_ONLY!r} if m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", probe], cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)},
                          capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "", f"loaded at import: {done.stdout.strip()}"


def test_a_plain_study_run_loads_no_export_library():
    """The whole `tradeoff study BRIEF` command, report written, has loaded neither matplotlib nor
    openpyxl, nor rich's progress bar when stderr is not a terminal: an import inside a function on
    the report or progress path is caught here, which the import-only check above cannot see."""
    heavy = (*EXPORT_ONLY, "rich.progress")
    probe = ("import atexit, sys; "
             f"atexit.register(lambda: print('loaded:' + ','.join(m for m in {heavy!r} if m in sys.modules))); "
             "sys.argv = ['tradeoff', 'study', 'examples/fan_run_on.yaml', '--only', 'mcu,rc-counter', '--samples', "
             "'200']; from tradeoff.cli import main; main()")
    done = subprocess.run([sys.executable, "-c", probe], cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)},
                          capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert "Every topology considered" in done.stdout  # the report was written
    assert done.stdout.rstrip().splitlines()[-1] == "loaded:"
