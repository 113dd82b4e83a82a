"""`tradeoff netlist`: ngspice (the independent reference) runs every exported netlist and its
measured delay agrees with the tool's nominal prediction; output files are written atomically
and never overwritten without --force (tradeoff.report.files)."""
from __future__ import annotations

import os
from pathlib import Path

import pytest
from click.testing import CliRunner
from spice_measures import measures

from tradeoff.cli import cli
from tradeoff.design import load_design
from tradeoff.errors import OutputError
from tradeoff.report import files
from tradeoff.report.files import write_all, write_atomic
from tradeoff.topologies.registry import topology_ids

ROOT = Path(__file__).resolve().parents[1]
DESIGNS = ROOT / "examples" / "designs"
OSCILLATOR_BASED = ("rc-counter", "crystal-counter")
"""Designs whose netlist is a behavioural oscillator: issue 5 asks 2 % agreement; RC holds 5 %."""


def _design_path(topology_id: str) -> Path:
    path = DESIGNS / f"{topology_id}.yaml"
    assert path.is_file(), f"acceptance (issue 3): every registered topology has an example design; missing {path}"
    return path


@pytest.mark.parametrize("topology_id", topology_ids())
def test_exported_netlist_runs_in_ngspice_and_agrees(ngspice, tmp_path, topology_id):
    path = _design_path(topology_id)
    _, topo, design = load_design(path)
    result = CliRunner().invoke(cli, ["netlist", str(path)])
    if topo.spice(design) is None:
        assert result.exit_code == 3 and f"the {topology_id} topology provides no SPICE netlist" in result.output
        return
    assert result.exit_code == 0, result.output
    assert ".measure" in result.output.lower()
    simulated = measures(ngspice, result.output, ("delay",), tmp_path)["delay"]
    # ngspice is the independent reference (issue 5: 5 % for RC holds, 2 % for oscillator-based designs)
    tolerance = 0.02 if topology_id in OSCILLATOR_BASED else 0.05
    assert simulated == pytest.approx(topo.nominal_delay(design), rel=tolerance)


def test_output_file_equals_stdout_and_is_not_overwritten_without_force(tmp_path):
    design = str(DESIGNS / "rc-comparator.yaml")
    runner = CliRunner()
    stdout = runner.invoke(cli, ["netlist", design]).output
    target = tmp_path / "hold.cir"
    first = runner.invoke(cli, ["netlist", design, "-o", str(target)])
    assert first.exit_code == 0 and target.read_text() == stdout.rstrip("\n") + "\n"
    target.write_text("my own edits\n")
    again = runner.invoke(cli, ["netlist", design, "-o", str(target)])
    assert again.exit_code == 3 and "exists and was left untouched" in again.output and "--force" in again.output
    assert target.read_text() == "my own edits\n"
    forced = runner.invoke(cli, ["netlist", design, "-o", str(target), "--force"])
    assert forced.exit_code == 0 and target.read_text() == stdout.rstrip("\n") + "\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["hold.cir"]  # no temporary file left


def test_failure_mid_write_leaves_no_partial_file(tmp_path, monkeypatch):
    def broken_fsync(fd):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(files.os, "fsync", broken_fsync)
    target = tmp_path / "hold.cir"
    result = CliRunner().invoke(cli, ["netlist", str(DESIGNS / "rc-comparator.yaml"), "-o", str(target)])
    assert result.exit_code == 3 and "No space left on device" in result.output
    assert list(tmp_path.iterdir()) == []
    target.write_text("old\n")
    with pytest.raises(OutputError, match="no partial file"):
        write_atomic(target, "new\n", force=True)
    assert target.read_text() == "old\n" and [p.name for p in tmp_path.iterdir()] == ["hold.cir"]


def test_write_atomic_text_bytes_and_mode(tmp_path):
    text_file, binary_file = tmp_path / "a.txt", tmp_path / "b.bin"
    write_atomic(text_file, "µF\n", force=False)
    write_atomic(binary_file, b"\x00\x01", force=False)
    assert text_file.read_bytes() == "µF\n".encode() and binary_file.read_bytes() == b"\x00\x01"
    umask = os.umask(0)
    os.umask(umask)
    assert text_file.stat().st_mode & 0o777 == 0o666 & ~umask  # not mkstemp's private 0600
    with pytest.raises(OutputError, match="does not exist"):
        write_atomic(tmp_path / "missing" / "c.txt", "x", force=True)
    with pytest.raises(OutputError, match="is a directory"):
        write_atomic(tmp_path, "x", force=True)


def test_write_all_checks_every_target_first(tmp_path):
    existing = tmp_path / "b.csv"
    existing.write_text("keep\n")
    with pytest.raises(OutputError, match="b.csv: exists"):
        write_all({tmp_path / "a.csv": "1\n", existing: "2\n"}, force=False)
    assert not (tmp_path / "a.csv").exists() and existing.read_text() == "keep\n"


def test_write_all_failure_part_way_keeps_earlier_files_complete(tmp_path, monkeypatch):
    calls = {"n": 0}
    real_replace = files.os.replace

    def fail_second(src, dst):
        calls["n"] += 1
        if calls["n"] == 2:
            raise OSError(5, "Input/output error")
        return real_replace(src, dst)

    monkeypatch.setattr(files.os, "replace", fail_second)
    first, second = tmp_path / "a.csv", tmp_path / "b.csv"
    with pytest.raises(OutputError, match=r"b.csv: writing failed .*complete: .*a.csv"):
        write_all([(first, "1\n"), (second, "2\n")], force=True)
    assert first.read_text() == "1\n" and not second.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.csv"]
