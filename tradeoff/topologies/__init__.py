"""Timing topologies: one module each, all behind `tradeoff.topologies.base.Topology`."""
