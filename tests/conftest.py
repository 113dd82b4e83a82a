"""Shared fixtures."""
from __future__ import annotations

import functools
import os
import shutil
from pathlib import Path

import pytest
from hypothesis import settings

# No per-example deadline: these machines are shared and noisy, and the first example of a run
# pays one-off costs (pint's registry, catalog parsing). Speed is measured in bench/, not here.
settings.register_profile("tradeoff", deadline=None)
settings.load_profile("tradeoff")

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "examples"


@functools.cache
def example_study(path: Path):
    """The study of a shipped brief with its own settings, run once per test session (several modules read it)."""
    import tradeoff

    return tradeoff.study(path)


@pytest.fixture
def ngspice() -> str:
    """Path of the ngspice binary; skips when missing, except under CI, where it must be installed."""
    path = shutil.which("ngspice")
    if path is None:
        if os.environ.get("CI"):
            pytest.fail("ngspice is required under CI (.ci/run installs it with apt-get)")
        pytest.skip("ngspice not installed (apt-get install -y ngspice)")
    return path


def dotted_keys(data, path: str = "") -> list[str]:
    """Paths of every mapping key in a JSON document that holds a dot (dotted-path tools such as
    jq's `.a.b` split keys at dots, so result JSON keeps them out)."""
    found = []
    if isinstance(data, dict):
        for key, value in data.items():
            here = f"{path}/{key}"
            found += [here] if "." in str(key) else []
            found += dotted_keys(value, here)
    elif isinstance(data, list):
        for i, value in enumerate(data):
            found += dotted_keys(value, f"{path}/{i}")
    return found


UNIT_SUFFIXES = ("s", "v", "a", "w", "ohm", "f", "c", "k", "eur", "frac", "ppm")
"""Unit suffixes of result keys (CONTRIBUTING.md, Units and names)."""


def misplaced_units(data, path: str = "") -> list[str]:
    """Paths of mapping keys with a unit suffix before the end (`after_w_with_adapter`): the unit goes last."""
    found = []
    if isinstance(data, dict):
        for key, value in data.items():
            here = f"{path}/{key}"
            words = str(key).split("_")
            found += [here] if any(w in UNIT_SUFFIXES for w in words[1:-1]) else []
            found += misplaced_units(value, here)
    elif isinstance(data, list):
        for i, value in enumerate(data):
            found += misplaced_units(value, f"{path}/{i}")
    return found
