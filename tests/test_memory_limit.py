"""Bounded memory: the towel-rail study with E96 resistors and series pairs (issue 10's brief) runs to the end in a
process whose address space is limited to 2 GiB. Before the candidate tables were windowed it needed up to 16 GiB
(bench/bench_pairs.py records the figures); a table built densely again ends in a MemoryError, exit 4.
"""
from __future__ import annotations

import os
import resource
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

from tradeoff.catalog import load_catalog
from tradeoff.topologies.registry import topology_ids

ROOT = Path(__file__).resolve().parents[1]
LIMIT_BYTES = 2 * 2**30
"""Address-space limit of the study's process [bytes]."""
E96_PAIRS = {"resistor": "E96", "electrolytic": "E12", "film": "E24", "ceramic": "E24", "pairs": True}


def _limit_memory() -> None:
    resource.setrlimit(resource.RLIMIT_AS, (LIMIT_BYTES, LIMIT_BYTES))


@pytest.mark.slow
def test_e96_pairs_towel_study_runs_within_2_gib(tmp_path):
    brief = yaml.safe_load((ROOT / "examples" / "towel_rail_boost.yaml").read_text(encoding="utf-8"))
    brief["series"] = E96_PAIRS
    path = tmp_path / "brief.yaml"
    path.write_text(yaml.safe_dump(brief, sort_keys=False), encoding="utf-8")
    done = subprocess.run([sys.executable, "-m", "tradeoff", "study", str(path), "--samples", "2000"], cwd=tmp_path,
                          env={**os.environ, "PYTHONPATH": str(ROOT)}, preexec_fn=_limit_memory,
                          capture_output=True, text=True, timeout=900)
    assert done.returncode == 0, done.stderr[-2000:]   # 0: the study ran and some topology meets the brief
    # every topology was studied (none lost to the limit): each has a line in the comparison
    for topology in topology_ids(load_catalog()):
        assert f"{topology}:" in done.stdout
