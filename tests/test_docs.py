"""Meta-tests that keep the documentation true: every command has help with an example and
is listed in the README; every registered topology is described in the README and has an
example design; the demo and test commands the README promises exist in the Makefile."""
from __future__ import annotations

import re

import pytest

from tradeoff.cli import cli
from tradeoff.topologies.registry import topology_ids

from conftest import EXAMPLES, ROOT

README = (ROOT / "README.md").read_text(encoding="utf-8")


@pytest.mark.parametrize("name", sorted(cli.commands))
def test_every_command_has_help_with_an_example_and_is_in_the_readme(name):
    command = cli.commands[name]
    assert command.help and re.search(r"Examples?:", command.help), name
    assert f"tradeoff {name}" in command.help, name
    assert f"`tradeoff {name}" in README, name


@pytest.mark.parametrize("topology_id", topology_ids())
def test_every_topology_is_documented_and_has_an_example_design(topology_id):
    assert f"| `{topology_id}` |" in README
    assert (EXAMPLES / "designs" / f"{topology_id}.yaml").exists()


def test_readme_quick_start_targets_exist():
    makefile = (ROOT / "Makefile").read_text(encoding="utf-8")
    for target in re.findall(r"^make (\w+)", README, flags=re.MULTILINE):
        assert re.search(rf"^{target}:", makefile, flags=re.MULTILINE), target
    assert "make demo" in README and "make test" in README
