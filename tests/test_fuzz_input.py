"""Generated hostile input (issue 13 item 4): YAML documents that are deep, wide, aliased, or full of odd
scalars (NaN, .inf, huge integers, dates, binary tags, non-UTF-8 bytes, BOMs, tabs) given as briefs,
design files and catalogs. Every case must end in success or exit 2 with a message naming the file
(at its line and column where the text has one), never a traceback, and within a time bound that
only a hang or quadratic work could break.

The soak test (marker `soak`, run by CI with the rest) reads 10,000 mutated briefs with `check`.
"""
from __future__ import annotations

import random
import re
import time
from pathlib import Path

import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from tradeoff.cli import cli
from tradeoff.errors import EXIT_INPUT, TradeoffError

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = ROOT / "examples"
GOOD_BRIEF = (EXAMPLES / "towel_rail_boost.yaml").read_text(encoding="utf-8")
GOOD_DESIGN = (EXAMPLES / "designs" / "rc-darlington.yaml").read_text(encoding="utf-8").replace(
    "brief: ../", f"brief: {EXAMPLES}/")
GOOD_CATALOG = """parts:
  - id: res-fuzz-1pct
    category: resistor
    description: metal-film resistor class for the fuzz test
    mount: through-hole
    params:
      tolerance:    {value: "1 %", source: "IEC 60062 tolerance code F"}
      tempco:       {value: "50 ppm/K", source: "metal-film resistor datasheets (from memory)"}
      min_value:    {value: "1 ohm", source: "metal-film resistor datasheets (from memory)"}
      max_value:    {value: "10 Mohm", source: "metal-film resistor datasheets (from memory)"}
      max_voltage:  {value: "250 V", source: "metal-film resistor datasheets (from memory)"}
      power_rating: {value: "0.6 W", source: "metal-film resistor datasheets (from memory)"}
      cost:         {value: 0.02, source: indicative}
"""
CASE_SECONDS = 10.0
"""Wall-time bound per case [s]: a typical case takes milliseconds; only a hang or quadratic work breaks it."""

ODD_SCALARS = [".nan", ".NaN", ".inf", "-.inf", "1e308", "-1e308", "9" * 400, "-" + "9" * 60, "0x1F", "0o17",
               "1_000", "2024-02-30", "2024-01-01", "2001-12-14t21:59:43.10-05:00", "!!binary aGVsbG8=",
               "!!binary '@@@'", "!!python/object:os.system", "!!set {a, b}", "!!omap [a: 1]", "~", "null", "yes",
               "NO", "on", "'\t'", '"\\x00"', '"\\ud800"', "\uff11\uff12 V", "12\u00a0V", "1e3", "-0", "+.5",
               "12 V V", "1 h 60 min", "[]", "{}", "[1, [2, [3]]]", "&a 1", "*nowhere", "'", '"', "|", ">", "%", "@x",
               "`", "? x", "- -", "\t12 V", "12 V\t# c", "\ufeff12 V"]
"""Scalars YAML or the field parsers read in surprising ways (YAML 1.1 booleans, sexagesimal-looking
numbers, tags, unpaired surrogates, full-width digits, stray indicators)."""


def _located(output: str, path: Path) -> bool:
    """True when the first error line names `path`, with line:column where the text has one."""
    first = output.strip().splitlines()[0] if output.strip() else ""
    return bool(re.match(rf"Error: {re.escape(str(path))}(:\d+:\d+)?: \S", first))


def _judge(args: list[str], path: Path, allowed=(0, EXIT_INPUT)) -> float:
    """Run the CLI in this process on `args`; assert an allowed exit, no traceback, a located error. Seconds taken."""
    start = time.perf_counter()
    result = CliRunner().invoke(cli, args)
    seconds = time.perf_counter() - start
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    assert result.exit_code in allowed, result.output[-2000:]
    assert "Traceback" not in result.output
    if result.exit_code == EXIT_INPUT:
        assert _located(result.output, path), result.output[:500]
    assert seconds < CASE_SECONDS, f"{seconds:.1f} s"
    return seconds


def _mutate(text: str, rng: random.Random) -> bytes:
    """`text` with one to three of: a value replaced by an odd scalar, a deep, wide or aliased block
    appended, a tab, BOM, non-UTF-8 byte or control character inserted, a line dropped or doubled."""
    lines = text.splitlines()
    for _ in range(rng.randint(1, 3)):
        kind = rng.randrange(9)
        i = rng.randrange(len(lines))
        if kind <= 2 and ":" in lines[i]:
            key, _, _ = lines[i].partition(":")
            lines[i] = f"{key}: {rng.choice(ODD_SCALARS)}"
        elif kind == 3:
            depth = rng.choice([5, 39, 41, 60, 300])
            lines += [" " * n + f"k{n}:" for n in range(depth)] + [" " * depth + "v"]
        elif kind == 4:
            lines += [f"wide{n}: {n}" for n in range(rng.choice([10, 500, 3000]))]
        elif kind == 5:
            lines += ["a0: &a0 [x, x, x, x, x, x, x, x]"] + [
                f"a{n}: &a{n} [{', '.join([f'*a{n - 1}'] * 8)}]" for n in range(1, rng.choice([2, 4, 7]))]
        elif kind == 6:
            lines[i] = lines[i][:1] + rng.choice(["\t", "\x00", "\x1b", "\x7f", "\u2028", "\ufeff"]) + lines[i][1:]
        elif kind == 7:
            lines.insert(i, lines[i]) if rng.random() < 0.5 else lines.pop(i)
        else:
            lines[i] = lines[i].replace(":", ": &x", 1) + " *x" if rng.random() < 0.3 else lines[i] + " ]"
    data = ("\n".join(lines) + "\n").encode("utf-8", "surrogatepass")
    if rng.random() < 0.1:
        at = rng.randrange(len(data))
        data = data[:at] + rng.choice([b"\xff", b"\xe9", b"\xc3", b"\xed\xa0\x80"]) + data[at:]
    if rng.random() < 0.1:
        data = b"\xef\xbb\xbf" + data
    return data


KINDS = {  # file kind -> (valid text to mutate, command reading it, examples per run)
    "brief": (GOOD_BRIEF, lambda path: ["check", path], 150),
    # `netlist` reads the design, its brief and the catalog and builds the topology, without Monte Carlo
    "design": (GOOD_DESIGN, lambda path: ["netlist", path], 40),
    "catalog": (GOOD_CATALOG, lambda path: ["catalog", "res-fuzz", "--catalog", path], 40),
}


@pytest.mark.parametrize("kind", KINDS)
def test_generated_files_never_crash(tmp_path, kind):
    text, command, examples = KINDS[kind]
    path = tmp_path / f"{kind}.yaml"
    path.write_text(text, encoding="utf-8")
    _judge(command(str(path)), path, allowed=(0,))  # the unmutated file is valid: mutations reach each check

    @settings(max_examples=examples)
    @given(seed=st.integers(0, 2**32 - 1))
    def one_case(seed):
        path.write_bytes(_mutate(text, random.Random(seed)))
        _judge(command(str(path)), path)

    one_case()


@settings(max_examples=60)
@given(seed=st.integers(0, 2**32 - 1))
def test_the_python_api_raises_only_the_projects_errors(seed):
    # the same inputs through tradeoff.load_brief: a TradeoffError, never a bare KeyError or RecursionError
    import tempfile

    import tradeoff

    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "brief.yaml"
        path.write_bytes(_mutate(GOOD_BRIEF, random.Random(seed)))
        try:
            tradeoff.load_brief(path)
        except TradeoffError as exc:
            assert str(path) in str(exc)


SOAK_CASES = 10_000


@pytest.mark.soak
def test_soak_ten_thousand_mutated_briefs(tmp_path, capsys):
    rng = random.Random(13)
    path = tmp_path / "brief.yaml"
    longest, exits = 0.0, {0: 0, EXIT_INPUT: 0}
    for _ in range(SOAK_CASES):
        path.write_bytes(_mutate(GOOD_BRIEF, rng))
        start = time.perf_counter()
        result = CliRunner().invoke(cli, ["check", str(path)])
        seconds = time.perf_counter() - start
        assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
        assert result.exit_code in exits and "Traceback" not in result.output, result.output[-2000:]
        assert result.exit_code == 0 or _located(result.output, path), result.output[:500]
        assert seconds < CASE_SECONDS
        exits[result.exit_code] += 1
        longest = max(longest, seconds)
    with capsys.disabled():
        print(f"\nsoak: {SOAK_CASES} generated briefs checked ({exits[0]} valid, {exits[EXIT_INPUT]} refused with "
              f"a located error); longest case {longest * 1e3:.0f} ms")
    assert exits[EXIT_INPUT] > SOAK_CASES // 2  # the mutations do reach the error paths
