"""The one registry of topologies, read from the catalog's `topology` entries.

Each entry names the module implementing it (`module: tradeoff.topologies.rc_darlington`);
the module defines one `Topology` subclass whose `id` equals the entry's id. The brief
loader, the CLI choices, the study and the reports all read this registry, so adding an
architecture means adding one module and one catalog entry.
"""
from __future__ import annotations

import importlib
from typing import TYPE_CHECKING

from tradeoff.errors import CatalogError
from tradeoff.topologies.base import Topology

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog

__all__ = ["topology_ids", "topology_class", "build_topology"]


def _catalog(catalog: "Catalog | None") -> "Catalog":
    if catalog is not None:
        return catalog
    from tradeoff.catalog import load_catalog

    return load_catalog()


def topology_ids(catalog: "Catalog | None" = None) -> list[str]:
    """Ids of every registered topology, in catalog order."""
    return [entry.id for entry in _catalog(catalog).parts("topology")]


def topology_class(topology_id: str, catalog: "Catalog | None" = None) -> type[Topology]:
    """The class implementing `topology_id`, imported from the module its catalog entry names."""
    entry = _catalog(catalog).part(topology_id)
    module_name = entry.fields.get("module")
    if not module_name:
        raise CatalogError.single(entry.file, f"{topology_id}.module",
                                  "a topology entry needs 'module: tradeoff.topologies.NAME'", entry.line)
    try:
        module = importlib.import_module(module_name)
    except ImportError as exc:
        raise CatalogError.single(entry.file, f"{topology_id}.module",
                                  f"cannot import {module_name!r} ({exc}); accepted: an importable module path",
                                  entry.line) from None
    for obj in vars(module).values():
        if isinstance(obj, type) and issubclass(obj, Topology) and getattr(obj, "id", None) == topology_id:
            return obj
    raise CatalogError.single(entry.file, f"{topology_id}.module",
                              f"module {module_name!r} defines no Topology subclass with id {topology_id!r}",
                              entry.line)


def build_topology(topology_id: str, brief: "Brief", catalog: "Catalog") -> Topology:
    """A topology instance for `brief` with parts from `catalog`."""
    return topology_class(topology_id, catalog)(brief, catalog, catalog.part(topology_id))
