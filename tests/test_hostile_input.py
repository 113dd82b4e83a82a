"""Hostile and careless input: no code chosen by data files, located errors, exit codes scripts can rely on."""
from __future__ import annotations

import os
from pathlib import Path

import pytest
from click.testing import CliRunner

from tradeoff.cli import cli
from tradeoff.errors import EXIT_INPUT, EXIT_INTERNAL, EXIT_OUTPUT

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = ROOT / "examples"


def _run(*args, cwd: Path | None = None):
    old = Path.cwd()
    if cwd is not None:
        os.chdir(cwd)
    try:
        return CliRunner().invoke(cli, [str(a) for a in args])
    finally:
        os.chdir(old)


@pytest.mark.parametrize("module", ["evil_marker", "tradeoff.topologies.evil_marker", "os"])
def test_a_catalog_module_outside_the_package_is_a_located_error_and_imports_nothing(tmp_path, module):
    # issue 13 item 0: a data file never chooses code; the module would write a marker file when imported
    marker = tmp_path / "imported.marker"
    (tmp_path / "evil_marker.py").write_text(f"open({str(marker)!r}, 'w').write('ran')\n")
    catalog = tmp_path / "cat.yaml"
    catalog.write_text("parts:\n  - id: rc-darlington\n    category: topology\n"
                       "    description: replaced entry\n"
                       f"    module: {module}\n")
    for command in (["study", EXAMPLES / "towel_rail_boost.yaml"], ["topologies"],
                    ["analyze", EXAMPLES / "designs" / "rc-darlington.yaml"]):
        result = _run(*command, "--catalog", catalog, cwd=tmp_path)
        assert result.exit_code == EXIT_INPUT, result.output
        assert not marker.exists()
        assert f"{catalog}:5:13: rc-darlington.module:" in result.output  # file:line:column of the value
        assert "Traceback" not in result.output


def test_every_shipped_topology_module_is_one_of_the_package_modules():
    from tradeoff.catalog import load_catalog
    from tradeoff.topologies.registry import package_modules, topology_class, topology_ids

    catalog = load_catalog()
    for topology_id in topology_ids(catalog):
        assert catalog.part(topology_id).fields["module"] in package_modules()
        assert topology_class(topology_id, catalog).id == topology_id


def test_an_existing_output_is_refused_with_its_own_exit_code(tmp_path):
    target = tmp_path / "hold.cir"
    target.write_text("keep me")
    result = _run("netlist", EXAMPLES / "designs" / "rc-darlington.yaml", "-o", target)
    assert result.exit_code == EXIT_OUTPUT and str(target) in result.output
    assert target.read_text() == "keep me"


def test_an_unexpected_exception_is_one_line_with_the_internal_exit_code(monkeypatch):
    import tradeoff.brief

    def broken(*_args, **_kwargs):
        raise ZeroDivisionError("division by zero")

    monkeypatch.setattr(tradeoff.brief, "load_brief", broken)
    result = _run("check", EXAMPLES / "towel_rail_boost.yaml")
    assert result.exit_code == EXIT_INTERNAL
    assert "internal error (ZeroDivisionError" in result.output and "Traceback" not in result.output
