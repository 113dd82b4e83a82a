"""Docs test: every command shown in the README's shell blocks runs as written and exits as the
README says (0 unless the line's comment says `# exits N`), and every Python block runs.

`make` lines are checked by test_docs.py (their targets exist); they build a virtual environment,
which a test does not. Commands run in a fresh folder, so the files they write (out/review,
sweep.csv, ...) land there; paths into the repository (examples/...) are read from the repository.
"""
from __future__ import annotations

import re
import shlex
from pathlib import Path

import pytest
from click.testing import CliRunner

from tradeoff.cli import cli

from conftest import ROOT

README = (ROOT / "README.md").read_text(encoding="utf-8")


def _blocks(language: str) -> list[str]:
    return re.findall(rf"^```{language}\n(.*?)^```", README, flags=re.MULTILINE | re.DOTALL)


def _commands() -> list[tuple[str, int]]:
    """(command line, expected exit code) of every `tradeoff` line in the shell blocks, backslash
    continuations joined."""
    out = []
    for block in _blocks("sh"):
        for line in block.replace("\\\n", " ").splitlines():
            text, _, comment = line.partition("#")
            if text.strip().startswith("tradeoff "):
                code = re.search(r"exits (\d)", comment)
                out.append((" ".join(text.split()), int(code[1]) if code else 0))
    return out


COMMANDS = _commands()


def test_the_readme_shows_commands():
    assert len(COMMANDS) >= 4 and any(c.startswith("tradeoff sweep") for c, _ in COMMANDS)


def _arguments(command: str) -> list[str]:
    """The command's arguments after `tradeoff`, with repository paths made absolute."""
    return [str(ROOT / a) if a.startswith("examples/") else a for a in shlex.split(command)[1:]]


@pytest.mark.parametrize(("command", "code"), COMMANDS, ids=[c for c, _ in COMMANDS])
def test_readme_command_exits_as_documented(command, code, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    result = CliRunner().invoke(cli, _arguments(command))
    assert result.exit_code == code, f"{command}\n{result.output[-2000:]}"


@pytest.mark.parametrize("block", _blocks("python"), ids=lambda b: b.splitlines()[0][:40])
def test_readme_python_runs(block, monkeypatch, capsys):
    monkeypatch.chdir(ROOT)
    exec(compile(block, "README.md", "exec"), {})
    assert capsys.readouterr().out.strip()
