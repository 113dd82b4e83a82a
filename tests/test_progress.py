"""Progress of a study or sweep: the library tells a hook it is given and prints nothing itself; the
command shell draws a bar on stderr only when stderr is a terminal (a pseudo-terminal from the pty
module stands in for one) and writes the same report either way."""
from __future__ import annotations

import os
import pty
import select
import subprocess
import sys
from pathlib import Path

from click.testing import CliRunner

from tradeoff.brief import load_brief
from tradeoff.cli import cli
from tradeoff.report import progress
from tradeoff.trade_study import study

ROOT = Path(__file__).resolve().parents[1]
STUDY = ["study", "examples/fan_run_on.yaml", "--only", "mcu,rc-counter", "--samples", "200"]
SWEEP = ["sweep", "examples/fan_run_on.yaml", "--only", "mcu", "--samples", "200", "--vary",
         "delay.nominal=30min,1h"]


def _command(args: list[str]) -> list[str]:
    """`tradeoff ARGS` in a new process with the bar shown at once (not after a second), so the test does
    not depend on how fast this machine studies the brief."""
    script = ("import sys; import tradeoff.report.progress as shown; shown.SHOW_AFTER_S = 0; "
              f"from tradeoff.cli import main; sys.argv = ['tradeoff', *{args!r}]; main()")
    return [sys.executable, "-c", script]


def _env() -> dict[str, str]:
    return {**os.environ, "PYTHONPATH": str(ROOT), "COLUMNS": "100"}


def _on_terminal(args: list[str]) -> tuple[int, str, str]:
    """Exit code, stdout (a pipe) and what reached stderr (a pseudo-terminal) of `tradeoff ARGS`."""
    master, slave = pty.openpty()
    done = subprocess.Popen(_command(args), cwd=ROOT, env=_env(), stdout=subprocess.PIPE, stderr=slave)
    os.close(slave)
    terminal = []
    while True:
        ready, _, _ = select.select([master], [], [], 0.1)
        if ready:
            try:
                chunk = os.read(master, 65536)
            except OSError:  # the child closed its end
                break
            if not chunk:
                break
            terminal.append(chunk)
        elif done.poll() is not None:
            break
    out = done.stdout.read().decode()
    done.wait()
    os.close(master)
    return done.returncode, out, b"".join(terminal).decode(errors="replace")


def test_the_library_tells_its_hook_each_topology_and_round_and_prints_nothing(capfd):
    brief = load_brief(ROOT / "examples" / "fan_run_on.yaml")
    told = []
    study(brief, only=["mcu", "rc-counter"], samples=200, progress=lambda *event: told.append(event))
    assert capfd.readouterr() == ("", "")
    assert {total for _, total, _ in told} == {2} and told[-1] == (2, 2, "ranking")
    assert [done for done, _, _ in told] == sorted(done for done, _, _ in told)
    steps = [step for _, _, step in told]
    assert "mcu: candidate tables" in steps and "rc-counter: candidate tables" in steps
    assert any(step.startswith("rc-counter: ") and "solve and verify round 1" in step for step in steps)
    study(brief, only=["mcu"], samples=200)  # no hook: quiet
    assert capfd.readouterr() == ("", "")


def _piped(args: list[str], monkeypatch) -> tuple[int, str, str]:
    """Exit code, stdout and stderr of `tradeoff ARGS` with both on pipes (not terminals)."""
    monkeypatch.setattr(progress, "SHOW_AFTER_S", 0)
    done = CliRunner().invoke(cli, args)
    return done.exit_code, done.stdout, done.stderr


def test_study_progress_appears_on_a_terminal_and_not_on_a_pipe(monkeypatch):
    code, piped, errors = _piped(STUDY, monkeypatch)
    assert code == 0 and errors == ""
    code, out, terminal = _on_terminal(STUDY)
    assert code == 0 and out == piped  # the report is the same either way
    assert "topologies" in terminal and "candidate tables" in terminal and "/2" in terminal


def test_sweep_progress_appears_on_a_terminal_and_not_on_a_pipe(monkeypatch):
    code, piped, errors = _piped(SWEEP, monkeypatch)
    assert code == 0 and errors == ""
    code, out, terminal = _on_terminal(SWEEP)
    assert code == 0 and out == piped
    assert "grid points" in terminal
