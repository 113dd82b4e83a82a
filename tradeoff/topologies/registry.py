"""The one registry of topologies: the package's own modules, matched to the catalog's `topology` entries.

Implementations are found only among the modules of the `tradeoff.topologies` package itself
(listed with pkgutil, never a path or name taken from a data file). A catalog's topology entry
names which of those modules implements it (`module: tradeoff.topologies.rc_darlington`); a
name that is not one of the package's modules is a located catalog error and nothing is
imported. The module defines one `Topology` subclass whose `id` equals the entry's id, so adding
an architecture means adding one module here and one catalog entry.
"""
from __future__ import annotations

import functools
import importlib
import pkgutil
from typing import TYPE_CHECKING

import tradeoff.topologies as _package
from tradeoff.errors import CatalogError, Problem
from tradeoff.topologies.base import Topology

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part

__all__ = ["topology_ids", "topology_class", "build_topology", "package_modules"]


@functools.lru_cache(maxsize=1)
def package_modules() -> tuple[str, ...]:
    """Full names of the modules shipped in `tradeoff.topologies` (the only ones a catalog may name)."""
    return tuple(sorted(f"{_package.__name__}.{info.name}" for info in pkgutil.iter_modules(_package.__path__)
                        if not info.ispkg))


def _catalog(catalog: "Catalog | None") -> "Catalog":
    if catalog is not None:
        return catalog
    from tradeoff.catalog import load_catalog

    return load_catalog()


def _module_problem(entry: "Part", message: str) -> Problem:
    line, column = entry.field_positions.get("module", (entry.line, entry.column))
    return Problem(entry.file, line, column, f"{entry.id}.module", message)


def _unknown_module(entry: "Part") -> Problem | None:
    """The problem of an entry whose `module` is not one of the package's modules, else None."""
    if entry.fields.get("module") in package_modules():
        return None
    return _module_problem(entry, f"{entry.fields.get('module')!r} is not a topology module of this package "
                                  f"(nothing was imported); accepted: one of {', '.join(package_modules())}")


def topology_ids(catalog: "Catalog | None" = None) -> list[str]:
    """Ids of every registered topology, in catalog order; CatalogError (located, nothing imported) when an
    entry names a module that is not one of the package's own."""
    entries = _catalog(catalog).parts("topology")
    problems = [problem for problem in map(_unknown_module, entries) if problem is not None]
    if problems:
        raise CatalogError(problems)
    return [entry.id for entry in entries]


def topology_class(topology_id: str, catalog: "Catalog | None" = None) -> type[Topology]:
    """The class implementing `topology_id`, from the package module its catalog entry names."""
    entry = _catalog(catalog).part(topology_id)
    problem = _unknown_module(entry)
    if problem is not None:
        raise CatalogError(problem)
    module_name = entry.fields["module"]
    module = importlib.import_module(module_name)
    for obj in vars(module).values():
        if isinstance(obj, type) and issubclass(obj, Topology) and getattr(obj, "id", None) == topology_id:
            return obj
    raise CatalogError(_module_problem(entry, f"module {module_name!r} defines no topology with id {topology_id!r}; accepted: "
                               "the module whose Topology subclass has this id"))


def build_topology(topology_id: str, brief: "Brief", catalog: "Catalog") -> Topology:
    """A topology instance for `brief` with parts from `catalog`."""
    return topology_class(topology_id, catalog)(brief, catalog, catalog.part(topology_id))
