"""Run a netlist through ngspice in batch mode and read its `.measure` results (test helper)."""
from __future__ import annotations

import re
import subprocess
from pathlib import Path


def measures(ngspice: str, netlist: str, names: tuple[str, ...], workdir: Path) -> dict[str, float]:
    """The `.measure` values `names` ngspice prints for `netlist`; fails when one is missing
    (a failed .measure still exits 0 and only says so on stderr, LIBRARIES.md)."""
    (workdir / "circuit.cir").write_text(netlist)
    run = subprocess.run([ngspice, "-b", "circuit.cir"], cwd=workdir, capture_output=True, text=True, timeout=60)
    found = {}
    for name in names:
        hit = re.findall(rf"^{name}\s*=\s*([-+0-9.eE]+)\s*$", run.stdout, re.M)
        assert hit, f"ngspice printed no '{name}' measure: {run.stderr[-600:]}"
        found[name] = float(hit[-1])
    return found
