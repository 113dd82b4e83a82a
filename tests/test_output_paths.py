"""Output targets (issue 13 item 5): only regular files are ever replaced, each refusal names the path
with the output exit code, nothing partial is left, and an interrupted review set leaves no trace."""
from __future__ import annotations

import os
import signal
import stat
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from tradeoff.cli import cli
from tradeoff.errors import EXIT_OUTPUT, OutputError
from tradeoff.report.files import STAGING_PREFIX, check_writable, write_all, write_atomic

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = ROOT / "examples"
DESIGN = EXAMPLES / "designs" / "rc-darlington.yaml"


def _netlist(target: Path, *extra):
    return CliRunner().invoke(cli, ["netlist", str(DESIGN), "-o", str(target), *extra])


def _leftovers(folder: Path) -> list[Path]:
    """Staging folders and temporary files anywhere below `folder`."""
    return [p for p in folder.rglob("*") if p.name.startswith(STAGING_PREFIX) or p.name.endswith(".tmp")]


def _special(tmp_path: Path, kind: str) -> tuple[Path, int]:
    """A target of `kind` and the file type it must keep (stat.S_IFMT)."""
    if kind == "symlink":
        kept = tmp_path / "kept.txt"
        kept.write_text("keep me")
        (tmp_path / "link.cir").symlink_to(kept)
        return tmp_path / "link.cir", stat.S_IFLNK
    if kind == "dangling symlink":
        (tmp_path / "dangling.cir").symlink_to(tmp_path / "nowhere")
        return tmp_path / "dangling.cir", stat.S_IFLNK
    if kind == "fifo":
        os.mkfifo(tmp_path / "pipe.cir")
        return tmp_path / "pipe.cir", stat.S_IFIFO
    if kind == "directory":
        (tmp_path / "dir.cir").mkdir()
        return tmp_path / "dir.cir", stat.S_IFDIR
    return Path("/dev/null"), stat.S_IFCHR  # checked, never opened for writing


@pytest.mark.parametrize("kind", ["symlink", "dangling symlink", "fifo", "directory", "device"])
def test_force_never_replaces_anything_but_a_regular_file(tmp_path, kind):
    # as root, '-o /dev/null --force' replaced the system device with a regular file
    target, file_type = _special(tmp_path, kind)
    result = _netlist(target, "--force")
    assert result.exit_code == EXIT_OUTPUT, result.output
    assert f"{target}: is a" in result.output and "never replaced (not even with --force)" in result.output
    assert stat.S_IFMT(os.lstat(target).st_mode) == file_type
    if kind == "symlink":
        assert (tmp_path / "kept.txt").read_text() == "keep me"
    assert _leftovers(tmp_path) == []


def test_a_parent_that_is_a_file_is_named(tmp_path):
    parent = tmp_path / "notes.txt"
    parent.write_text("keep me")
    result = _netlist(parent / "hold.cir")
    assert result.exit_code == EXIT_OUTPUT
    assert f"{parent / 'hold.cir'}: the directory {parent} is a file" in result.output
    assert parent.read_text() == "keep me"
    review = CliRunner().invoke(cli, ["study", str(EXAMPLES / "fan_run_on.yaml"), "--samples", "300",
                                      "--only", "mcu", "--review", str(parent / "deeper" / "review")])
    assert review.exit_code == EXIT_OUTPUT and f"{parent} is a file, not a directory" in review.output
    assert parent.read_text() == "keep me" and sorted(p.name for p in tmp_path.iterdir()) == ["notes.txt"]


def _as_unprivileged(check) -> None:
    """Run `check()` in a forked child whose effective user is 'nobody' (root writes anywhere), or here
    when not root; an assertion in the child fails this test."""
    if os.geteuid() != 0:
        check()
        return
    pid = os.fork()
    if pid == 0:  # pragma: no cover - the child reports by its exit status
        code = 1
        try:
            os.setegid(65534)
            os.seteuid(65534)
            check()
            code = 0
        except BaseException as exc:
            print(f"child: {exc!r}", file=sys.stderr)
        finally:
            os._exit(code)
    _, status = os.waitpid(pid, 0)
    assert os.waitstatus_to_exitcode(status) == 0


def test_a_read_only_directory_is_a_clear_refusal():
    base = Path(tempfile.mkdtemp(prefix="tradeoff-readonly-"))  # not under pytest's private tmp (mode 700)
    try:
        locked = base / "locked"
        locked.mkdir()
        base.chmod(0o755)
        locked.chmod(0o555)

        def check():
            with pytest.raises(OutputError, match=rf"{locked / 'a.cir'}: the directory {locked} is not writable"):
                write_atomic(locked / "a.cir", "x", force=True)
            with pytest.raises(OutputError, match=rf"the directory {locked} is not writable"):
                write_all({locked / "review" / "study.json": "{}"}, force=False, folders=[locked / "review"])
            assert list(locked.iterdir()) == []

        _as_unprivileged(check)
    finally:
        locked.chmod(0o755)
        import shutil

        shutil.rmtree(base)


def test_check_writable_refuses_an_existing_file_without_force(tmp_path):
    existing = tmp_path / "table.csv"
    existing.write_text("old")
    with pytest.raises(OutputError, match="exists and was left untouched"):
        check_writable(existing, force=False)
    assert check_writable(existing, force=True) == existing


def _study(*args):
    return CliRunner().invoke(cli, ["study", str(EXAMPLES / "fan_run_on.yaml"), "--samples", "300",
                                    "--only", "mcu,rc-counter", *map(str, args)])


def test_a_refused_review_creates_no_folders_and_damages_nothing(tmp_path):
    existing = tmp_path / "old.xlsx"
    existing.write_bytes(b"old workbook")
    result = _study("--review", tmp_path / "out" / "review", "--xlsx", existing)
    assert result.exit_code == EXIT_OUTPUT and f"{existing}: exists" in result.output
    assert sorted(p.name for p in tmp_path.iterdir()) == ["old.xlsx"] and existing.read_bytes() == b"old workbook"
    review = tmp_path / "review"
    review.mkdir()
    (review / "study.json").write_text("earlier run")
    result = _study("--review", review)
    assert result.exit_code == EXIT_OUTPUT and f"{review / 'study.json'}: exists" in result.output
    assert sorted(p.name for p in review.iterdir()) == ["study.json"]  # no empty tables/, plots/, netlists/
    assert (review / "study.json").read_text() == "earlier run"


def test_a_review_set_is_written_whole_and_replaced_with_force(tmp_path):
    review = tmp_path / "review"
    first = _study("--review", review)
    assert first.exit_code == 0, first.output
    names = sorted(str(p.relative_to(review)) for p in review.rglob("*"))
    assert {"review.html", "study.json", "plots", "tables", "netlists"} <= set(names)
    (review / "mine.txt").write_text("a file of the user's")
    again = _study("--review", review, "--force")
    assert again.exit_code == 0, again.output
    assert sorted(str(p.relative_to(review)) for p in review.rglob("*")) == sorted([*names, "mine.txt"])
    assert _leftovers(tmp_path) == []


def test_a_failure_part_way_leaves_no_staged_files(tmp_path):
    def broken():
        raise OSError(28, "No space left on device")

    folder = tmp_path / "set"
    with pytest.raises(OutputError, match="No space left on device"):
        write_all([(folder / "a.txt", "1\n"), (folder / "sub" / "b.txt", broken)], force=False,
                  folders=[folder / "empty"])
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("signum", [signal.SIGTERM, signal.SIGINT])
def test_a_review_killed_part_way_leaves_nothing_and_a_rerun_works(tmp_path, signum):
    # before: a kill left a hidden .tmp file and 19 of 23 files, and the rerun refused to overwrite them
    review = tmp_path / "out" / "review"
    (tmp_path / "out").mkdir()
    command = [sys.executable, "-m", "tradeoff", "study", str(EXAMPLES / "fan_run_on.yaml"), "--samples", "300",
               "--review", str(review)]
    process = subprocess.Popen(command, cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True,
                               env={**os.environ, "PYTHONPATH": str(ROOT)})
    deadline = time.monotonic() + 120
    while not any(p.is_file() for p in (tmp_path / "out").rglob("*")):  # part-way: staging has files
        assert process.poll() is None and time.monotonic() < deadline, process.stderr.read()
        time.sleep(0.005)
    process.send_signal(signum)
    _, stderr = process.communicate(timeout=60)
    assert process.returncode == 128 + signum, stderr
    assert f"interrupted by {signal.Signals(signum).name}" in stderr and "Traceback" not in stderr
    assert list((tmp_path / "out").iterdir()) == []
    rerun = CliRunner().invoke(cli, command[3:])
    assert rerun.exit_code == 0, rerun.output
    assert (review / "review.html").is_file() and (review / "study.json").is_file()
    assert _leftovers(tmp_path) == []


def test_a_staging_folder_left_by_a_killed_process_is_cleared_by_the_next_write(tmp_path):
    # before: SIGKILL (no clean-up can run) left .tradeoff-partial-* folders in the output folder for good
    out = tmp_path / "out"
    out.mkdir()
    script = ("import sys, time; from tradeoff.report.files import write_all\n"
              "def slow():\n    time.sleep(60)\n    return 'never'\n"
              "write_all([(sys.argv[1] + '/a.txt', 'first'), (sys.argv[1] + '/b.txt', slow)], force=False)\n")
    process = subprocess.Popen([sys.executable, "-c", script, str(out)], cwd=ROOT,
                               env={**os.environ, "PYTHONPATH": str(ROOT)})
    deadline = time.monotonic() + 60
    while not any(p.is_file() for p in out.rglob("a.txt")):
        assert process.poll() is None and time.monotonic() < deadline
        time.sleep(0.005)
    process.kill()
    process.wait(timeout=30)
    abandoned = _leftovers(tmp_path)
    assert len(abandoned) == 1 and f"-{process.pid}-" in abandoned[0].name
    foreign = out / f"{STAGING_PREFIX}otherhost-{process.pid}-x"  # another machine's: never ours to remove
    foreign.mkdir()
    with subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"]) as alive:
        running = out / abandoned[0].name.replace(f"-{process.pid}-", f"-{alive.pid}-")
        running.mkdir()
        write_all([(out / "c.txt", "second")], force=False)
        alive.kill()
    assert sorted(p.name for p in out.iterdir()) == sorted(["c.txt", foreign.name, running.name])
