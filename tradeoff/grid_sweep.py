"""What-if sweeps: the whole study run at every point of a grid over brief fields, recording
the winner, the runner-up, their scores and key figures, so a designer sees where the answer
changes (delay from 10 min to 12 h, supply from 5 V to 24 V, a weight from 0.5 to 4).

Grid axes, one per `--vary` option (`sweep(vary=...)` takes the same text per key):

    KEY=V1,V2,...                   a list: `delay.nominal=10min,1h,4h,12h`, `start=power-on,button`
    KEY=START..STOP:COUNT           COUNT linearly spaced values: `ambient.max=30degC..60degC:4`
    KEY=START..STOP:COUNT:log       COUNT log-spaced values: `supply.nominal=5V..24V:5:log`
    KEY=START..STOP:COUNT:lin       the same as the plain range, spelled out

KEY is a dotted brief key (as `tradeoff check` lists them). Each value is read as the brief
file would read it: with its unit where the field has one (`10min`, `12 V`), a percentage or
fraction for fractions, a plain number for weights and counts (integers for counts: range
points are rounded and must stay distinct), `true`/`false`, or a choice's name. Range
endpoints carry the field's unit; log ranges need positive endpoints.

A varied `.nominal` whose section gives its own min and max in the brief (`delay: {nominal,
min, max}`, `supply: {nominal, min, max}`) moves that band with it, keeping its proportions to
the nominal; the sweep's notes say so. A tolerance or a default band follows the nominal anyway.

Every grid point is validated before anything runs, so a bad value stops the sweep at once
with an InputError naming the option, the key and what is accepted. The first point then runs
here and its wall time gives the estimate of the whole grid (point count, first point's seconds,
workers): a grid of more than CONFIRM_POINTS points or an estimate above CONFIRM_SECONDS is
refused with that estimate unless the caller confirms it (`--yes`, `confirmed=True`); MAX_POINTS
is the limit even then. Points run through one
`concurrent.futures.Executor`: in this process (jobs=1), a process pool (jobs=N), or a Dask
cluster (`scheduler=ADDRESS`, needs `pip install tradeoff[cluster]`). Each point gets its
own validated brief (the Monte Carlo seed is the brief's), so every engine gives the same
results point for point, in grid order.
"""
from __future__ import annotations

import itertools
import math
import re
import time
from collections.abc import Callable, Iterator, Mapping, Sequence
from concurrent.futures import Executor, Future, ProcessPoolExecutor
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

from tradeoff.brief import Brief, load_brief
from tradeoff.criteria import headline
from tradeoff.plain import schematic_values
from tradeoff.errors import BriefError, InputError, Problem, UnitParseError
from tradeoff.units import format_quantity, parse_fraction, parse_quantity

if TYPE_CHECKING:  # pragma: no cover
    import numpy as np
    import pandas as pd

__all__ = ["Axis", "SweepResult", "sweep", "parse_vary", "VARY_SYNTAX", "MAX_POINTS", "CONFIRM_POINTS",
           "CONFIRM_SECONDS"]

VARY_SYNTAX = "KEY=V1,V2,... or KEY=START..STOP:COUNT[:lin|:log]"
MAX_POINTS = 10_000
"""Largest grid a sweep accepts, confirmed or not (a typo in a count should not start a week of work)."""
CONFIRM_POINTS = 1_000
"""Largest grid a sweep runs without confirmation (`--yes`)."""
CONFIRM_SECONDS = 600.0
"""Longest estimated sweep [s] run without confirmation (`--yes`): 10 min."""

FIXED_KEYS = ("title", "topologies")
"""Brief keys a sweep cannot vary (use --only to choose topologies)."""

_RANGE_RE = re.compile(r"^(?P<start>.+?)\.\.(?P<stop>.+?):(?P<count>[^:]+)(?::(?P<spacing>[^:]*))?$")
_INT_RE = re.compile(r"^[+-]?\d+$")
_FLOAT_RE = re.compile(r"^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$")
_SUFFIXES = {"s": "_s", "V": "_v", "A": "_a", "ohm": "_ohm", "F": "_f", "W": "_w", "degC": "_c", "%": "_frac"}


@dataclass(frozen=True)
class Axis:
    """One varied brief field: its dotted key, unit ('' plain, '%' a fraction) and values in grid order.

    raw: the values as handed to the brief (text with units, numbers, choices); values: what the
    brief made of them (SI floats, fractions, ints, bools or choice names); log: log-spaced values.
    """

    key: str
    unit: str
    raw: tuple[object, ...]
    values: tuple[object, ...]
    log: bool

    @property
    def numeric(self) -> bool:
        """True when the values are numbers (the decision map then uses a numeric axis)."""
        return all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in self.values)

    @property
    def column(self) -> str:
        """Column and JSON key: the dotted key with underscores and the library's unit suffix
        (`delay.nominal` -> `delay_nominal_s`), so dotted-path tools read it."""
        return self.key.replace(".", "_") + (_SUFFIXES.get(self.unit, "") if self.numeric else "")

    def text(self, i: int) -> str:
        """Display text of value `i`, with its unit."""
        value = self.values[i]
        if isinstance(value, bool):
            return "true" if value else "false"
        if self.numeric:
            return format_quantity(value, self.unit)
        return str(value)


def _option_error(option: str, key: str, message: str) -> InputError:
    return InputError(Problem("--vary", None, None, key, f"{option!r}: {message}; accepted: {VARY_SYNTAX}"))


def _scalar(item: str) -> object:
    """One list item as YAML would give it for a plain scalar: int, float, bool or text."""
    if _INT_RE.match(item):
        return int(item)
    if _FLOAT_RE.match(item):
        return float(item)
    return {"true": True, "false": False}.get(item.lower(), item)


def _si(raw: object, unit: str) -> float:
    """A range endpoint or list value in SI (fraction for '%'); raises UnitParseError or ValueError."""
    if unit == "%":
        return parse_fraction(raw)
    if unit:
        return parse_quantity(raw, unit)
    if isinstance(raw, bool) or not isinstance(raw, (int, float)):
        raise ValueError(f"got {raw!r}; accepted: a plain number")
    return float(raw)


def _spelled(value: float, unit: str, integer: bool) -> object:
    """A generated range value as the brief reads it: text with unit, percent text, or a plain number."""
    if integer:
        return int(round(value))
    if unit == "%":
        return f"{value * 100!r} %"
    return f"{value!r} {unit}" if unit else value


def _log_spaced(values: Sequence[object]) -> bool:
    """True when positive numbers are closer to a geometric than to an arithmetic progression."""
    import numpy as np

    nums = [v for v in values if isinstance(v, (int, float)) and not isinstance(v, bool)]
    if len(nums) != len(values) or len(nums) < 2 or min(nums) <= 0:
        return False
    x = np.sort(np.asarray(nums, dtype=float))
    if len(x) == 2:
        return bool(x[1] / x[0] >= 10)
    steps, ratios = np.diff(x), x[1:] / x[:-1]
    spread = lambda a: float(np.std(a) / np.mean(a))  # noqa: E731 - coefficient of variation
    return spread(np.log(ratios)) < spread(steps)


def _range_items(option: str, key: str, text: str, unit: str, current: object) -> tuple[list[object], bool]:
    """The values of a START..STOP:COUNT[:lin|:log] range and whether they are log-spaced."""
    import numpy as np

    m = _RANGE_RE.match(text)
    if m is None:
        raise _option_error(option, key, "a range is START..STOP:COUNT with an optional :lin or :log")
    spacing = (m["spacing"] or "lin").strip()
    if spacing not in ("lin", "log"):
        raise _option_error(option, key, f"spacing {spacing!r} is not known; use :lin or :log")
    if not _INT_RE.match(m["count"].strip()) or not 2 <= int(m["count"]) <= MAX_POINTS:
        raise _option_error(option, key, f"count {m['count']!r} is not a whole number from 2 to {MAX_POINTS}")
    count = int(m["count"])
    if isinstance(current, (str, bool)):
        raise _option_error(option, key, f"this field takes a choice ({current!r} now), not a range; list the "
                            "choices instead")
    if unit == "degC" and spacing == "log":
        raise _option_error(option, key, "temperatures have no log scale; use :lin")
    ends = [_scalar(m[name].strip()) for name in ("start", "stop")]
    try:
        lo, hi = (_si(end, unit) for end in ends)
    except (UnitParseError, ValueError) as exc:  # the message says what the field accepts
        raise InputError(Problem("--vary", None, None, key, f"{option!r}: range endpoint: {exc}")) from None
    if lo == hi:
        raise _option_error(option, key, "START and STOP are equal")
    if spacing == "log" and (lo <= 0 or hi <= 0):
        raise _option_error(option, key, "a log range needs positive START and STOP")
    points = np.geomspace(lo, hi, count) if spacing == "log" else np.linspace(lo, hi, count)
    integer = isinstance(current, int) or (current is None and all(isinstance(e, int) for e in ends))
    items = [_spelled(float(v), unit, integer) for v in points]
    if len(set(items)) != len(items):
        raise _option_error(option, key, f"rounding to whole numbers leaves fewer than {count} distinct values")
    return items, spacing == "log"


def parse_vary(option: str, base: Brief) -> tuple[str, list[object], bool]:
    """Read one `KEY=VALUES` option against `base`: (key, raw values, log-spaced). Raises InputError."""
    key, sep, text = option.partition("=")
    key, text = key.strip(), text.strip()
    known = {v.key: v for v in base.values
             if (v.origin != "derived" or v.key.endswith(".nominal")) and v.key not in FIXED_KEYS}
    if not sep or not key:
        raise _option_error(option, key, "no '=' between the key and its values")
    if key not in known:
        from tradeoff.fields import did_you_mean

        hint = did_you_mean(key, known).strip()
        why = "cannot be varied in a sweep" if key in FIXED_KEYS else "is not a brief key" + (f" ({hint})" if hint else "")
        raise InputError(Problem("--vary", None, None, key, f"{option!r}: {key!r} {why}; accepted keys: "
                                 f"{', '.join(known)}"))
    if not text:
        raise _option_error(option, key, "no values after '='")
    value = known[key]
    if ".." in text:
        items, log = _range_items(option, key, text, value.unit, value.value)
        return key, items, log
    items = [_scalar(item.strip()) for item in text.split(",")]
    if any(item == "" for item in items):
        raise _option_error(option, key, "an empty value in the list")
    if len(set(map(repr, items))) != len(items):
        raise _option_error(option, key, "a value is listed twice")
    return key, items, False


def _companions(base: Brief, key: str, raw: object, varied: Sequence[str]) -> dict[str, object]:
    """Changes that move a brief-given min/max band with a varied nominal (same ratio to the nominal)."""
    if not key.endswith(".nominal"):
        return {}
    section = key[: -len(".nominal")]
    values = {v.key: v for v in base.values}
    sides = [f"{section}.{side}" for side in ("min", "max")]
    if any(values.get(s) is None or values[s].origin != "given" or s in varied for s in sides):
        return {}
    unit = values[key].unit
    try:
        ratio = _si(raw, unit) / float(values[key].value)
    except (UnitParseError, ValueError):
        return {}  # the brief's own validation reports the value
    return {s: _spelled(float(values[s].value) * ratio, unit, False) for s in sides}


def _band_notes(base: Brief, keys: Sequence[str]) -> list[str]:
    """One note per varied nominal whose brief-given band moves with it."""
    values = {v.key: v for v in base.values}
    notes = []
    for key in keys:
        current = values[key].value
        if isinstance(current, float) and _companions(base, key, _spelled(current, values[key].unit, False), keys):
            section = key[: -len(".nominal")]
            nominal = float(values[key].value)
            lo, hi = (float(values[f"{section}.{side}"].value) / nominal - 1 for side in ("min", "max"))
            notes.append(f"{section}.min and {section}.max are given in the brief: they move with {key}, keeping "
                         f"the band at {format_quantity(lo, '%')} / +{format_quantity(hi, '%')} of the nominal")
    return notes


def _located(exc: BriefError, label: str) -> list[Problem]:
    """The brief's problems, re-labelled with the --vary value or grid point that caused them."""
    return [Problem("--vary", None, None, p.key, f"{label}: {p.message}") for p in exc.problems]


def _axes_and_briefs(base: Brief, vary: Mapping[str, object] | Sequence[str],
                     overrides: Mapping[str, object]) -> tuple[list[Axis], list[tuple[tuple[int, ...], Brief]]]:
    """Parse every axis, validate every grid point: the axes and (grid index, brief) per point."""
    options = list(vary) if not isinstance(vary, Mapping) else [
        f"{k}={v}" if isinstance(v, str) else f"{k}={','.join(map(str, v))}" for k, v in vary.items()]
    parsed = [parse_vary(option, base) for option in options]
    keys = [key for key, _, _ in parsed]
    twice = sorted({k for k in keys if keys.count(k) > 1} | {k for k in keys if k in overrides})
    if twice:
        raise InputError(Problem("--vary", None, None, twice[0], f"{twice[0]!r} is set twice (by two --vary "
                                 "options, or by --vary and --samples/--seed); accepted: each key once"))
    size = math.prod(len(items) for _, items, _ in parsed)
    if size > MAX_POINTS:
        raise InputError(Problem("--vary", None, None, keys[0], f"the grid has {size} points; accepted: at most "
                                 f"{MAX_POINTS} (fewer values or fewer --vary options)"))
    problems: list[Problem] = []
    for (key, items, _), option in zip(parsed, options):
        for item in items:
            try:
                base.replace({key: item, **_companions(base, key, item, keys), **overrides})
            except BriefError as exc:
                problems += _located(exc, f"{option!r} value {item!r}")
    if problems:
        raise InputError(problems)
    points: list[tuple[tuple[int, ...], Brief]] = []
    for index in itertools.product(*(range(len(items)) for _, items, _ in parsed)):
        changes = dict(overrides)
        for (key, items, _), i in zip(parsed, index):
            changes.update({key: items[i], **_companions(base, key, items[i], keys)})
        try:
            points.append((index, base.replace(changes)))
        except BriefError as exc:
            label = ", ".join(f"{k}={items[i]}" for (k, items, _), i in zip(parsed, index))
            problems += _located(exc, f"grid point {label}")
    if problems:
        raise InputError(problems)
    axes = []
    for n, (key, items, log) in enumerate(parsed):
        firsts = [brief for index, brief in points if all(i == 0 for m, i in enumerate(index) if m != n)]
        values = tuple(next(v.value for v in brief.values if v.key == key) for brief in firsts)
        unit = next(v.unit for v in base.values if v.key == key)
        _check_distinct(options[n], key, items, values, unit)
        axes.append(Axis(key=key, unit=unit, raw=tuple(items), values=values, log=log or _log_spaced(values)))
    return axes, points


def _check_distinct(option: str, key: str, items: Sequence[object], values: Sequence[object], unit: str) -> None:
    """InputError when two spellings of an axis are one value (`1 h, 60 min`): the grid would run it twice."""
    first: dict[object, object] = {}
    for item, value in zip(items, values):
        if value in first:
            same = format_quantity(value, unit) if isinstance(value, float) and unit else repr(value)
            raise InputError(Problem("--vary", None, None, key, f"{option!r}: {first[value]!r} and {item!r} are "
                                     f"the same value ({same}); accepted: each value once"))
        first[value] = item


@dataclass(frozen=True)
class _Task:
    """Everything one grid point needs, picklable: the validated brief and the study settings."""

    index: tuple[int, ...]
    brief: Brief
    only: tuple[str, ...] | None
    method: str
    catalog_files: tuple[str, ...]


def _summary(name: str, score: float, ev, outcome) -> dict[str, Any]:
    """One ranked design: name, score, values and its headline figures (see tradeoff.criteria)."""
    return {"design": name, "score": float(score), "values": schematic_values(outcome.model, ev.design),
            **headline(ev)}


def run_point(task: _Task) -> dict[str, Any]:
    """The study at one grid point, reduced to a small JSON-ready record (runs on a worker)."""
    from tradeoff.trade_study import study

    result = study(task.brief, only=task.only, method=task.method, catalog_files=task.catalog_files)
    ranked = [] if result.ranking is None else [
        _summary(name, result.ranking.table.loc[name, "score"], ev, outcome)
        for name, ev, outcome in result.designs()[:2]]
    infeasible = [o.topology for o in result.infeasible()]
    return {
        "index": list(task.index),
        "winner": ranked[0] if ranked else None,
        "runner_up": ranked[1] if len(ranked) > 1 else None,
        "studied": len(result.outcomes),
        "infeasible": len(infeasible),
        "infeasible_topologies": infeasible,
        "note": "" if ranked else "no topology meets the brief here",
    }


class _InProcess(Executor):
    """The jobs=1 engine behind the Executor interface: each task runs when it is submitted."""

    def submit(self, fn, /, *args, **kwargs) -> Future:
        future: Future = Future()
        try:
            future.set_result(fn(*args, **kwargs))
        except Exception as exc:  # handed to the caller through the future, as a pool would
            future.set_exception(exc)
        return future


def _warm_worker(catalog_files: tuple[str, ...]) -> None:
    """Load the catalog once per worker process (later loads hit the catalog's file cache)."""
    from tradeoff.catalog import load_catalog

    load_catalog(extra=catalog_files)


@contextmanager
def executor(jobs: int = 1, scheduler: str | None = None, catalog_files: Sequence[str] = ()) -> Iterator[Executor]:
    """The executor that runs sweep points: this process, `jobs` local processes, or a Dask cluster.

    Local pools start their workers from a fork server that has loaded the library but never
    solved anything, so no solver state crosses a fork. Raises InputError when the Dask
    scheduler cannot be reached or dask.distributed is not installed.
    """
    if scheduler:
        try:
            from distributed import Client
        except ImportError:
            raise InputError(Problem("--scheduler", None, None, "scheduler", "dask.distributed is not installed; "
                                     "accepted: pip install 'tradeoff[cluster]', or run without --scheduler")
                             ) from None
        try:
            client = Client(scheduler, timeout="10s")
        except (OSError, TimeoutError, ValueError) as exc:
            raise InputError(Problem("--scheduler", None, None, "scheduler", f"cannot reach a Dask scheduler at "
                                     f"{scheduler!r} ({exc}); accepted: the address of a running scheduler, "
                                     "e.g. tcp://127.0.0.1:8786")) from None
        try:
            with client.get_executor() as pool:
                yield pool
        finally:
            client.close()
    elif jobs > 1:
        import multiprocessing

        context = multiprocessing.get_context("forkserver")
        context.set_forkserver_preload(["tradeoff.grid_sweep", "tradeoff.trade_study"])
        with ProcessPoolExecutor(max_workers=jobs, mp_context=context, initializer=_warm_worker,
                                 initargs=(tuple(catalog_files),)) as pool:
            yield pool
    else:
        with _InProcess() as pool:
            yield pool


@dataclass
class SweepResult:
    """A finished sweep: the axes, one record per grid point in grid order, notes on the grid.

    points[i]: index (one position per axis), winner and runner_up (None when absent; design,
    topology, score, values and key figures in SI), studied / infeasible topology counts, note.
    """

    title: str
    axes: list[Axis]
    points: list[dict[str, Any]]
    method: str
    samples: int
    seed: int
    topologies: list[str]
    notes: list[str] = field(default_factory=list)
    seconds: float = 0.0

    def winners(self) -> "np.ndarray":
        """Winning design per grid cell, shaped by the axes (axis 0 first); '' where nothing is feasible."""
        import numpy as np

        grid = np.full(tuple(len(a.values) for a in self.axes), "", dtype=object)
        for point in self.points:
            grid[tuple(point["index"])] = point["winner"]["design"] if point["winner"] else ""
        return grid

    def to_frame(self) -> "pd.DataFrame":
        """One row per grid point: the varied values (SI, unit suffixes), winner, runner-up and key figures."""
        import pandas as pd

        rows = []
        for point in self.points:
            row: dict[str, Any] = {a.column: a.values[i] for a, i in zip(self.axes, point["index"])}
            for role in ("winner", "runner_up"):
                design = point[role] or {}
                row[role] = design.get("design", "")
                for name in ("score", "delay_worst_min_s", "delay_worst_max_s", "yield_frac", "standby_after_a",
                             "parts", "cost_eur"):
                    row[f"{role}_{name}"] = design.get(name, math.nan)
                row[f"{role}_values"] = design.get("values", "")
            row.update(studied=point["studied"], infeasible=point["infeasible"], note=point["note"])
            rows.append(row)
        return pd.DataFrame(rows)

    def to_dict(self, timing: bool = False) -> dict[str, Any]:
        """The whole sweep, JSON-ready (SI units in key suffixes, no dots in keys: a point's values
        are keyed by axis column; no NaN or infinity). The same for two runs with one seed: the wall
        time is left out unless `timing` adds it as a separate "timing" block."""
        axes = [{"key": a.key, "unit": a.unit, "column": a.column, "log": a.log, "values": list(a.values),
                 "text": [a.text(i) for i in range(len(a.values))]} for a in self.axes]
        points = [{**p, "values": {a.column: a.values[i] for a, i in zip(self.axes, p["index"])}} for p in self.points]
        return {"title": self.title, "axes": axes, "points": points, "method": self.method,
                "samples": self.samples, "seed": self.seed, "topologies": list(self.topologies),
                "notes": list(self.notes), **({"timing": {"total_s": self.seconds}} if timing else {})}


def estimated_seconds(points: int, first_s: float, workers: int) -> float:
    """Wall time [s] of a grid of `points` whose first point took `first_s` here and whose other
    points share `workers` workers alike (the first point includes start-up, so this errs long)."""
    return first_s * (1 + math.ceil((points - 1) / workers))


def _check_confirmed(points: int, first_s: float, workers: int) -> None:
    """InputError with the estimate when the grid exceeds CONFIRM_POINTS or CONFIRM_SECONDS."""
    seconds = estimated_seconds(points, first_s, workers)
    if points <= CONFIRM_POINTS and seconds <= CONFIRM_SECONDS:
        return
    over = f" over {workers} workers" if workers > 1 else " on one worker"
    raise InputError(Problem("--vary", None, None, "grid", f"{points:,} points would take about "
                             f"{format_quantity(seconds, 's', 2)}{over} (estimated from the first point, which "
                             f"took {format_quantity(first_s, 's', 2)}); accepted without --yes: at most "
                             f"{CONFIRM_POINTS:,} points and about {format_quantity(CONFIRM_SECONDS, 's')}; "
                             "give --yes (confirmed=True in Python) to run it, or fewer values"))


def sweep(brief: Brief | str | Path, vary: Mapping[str, Sequence[str | float] | str] | Sequence[str], *,
          jobs: int = 1, scheduler: str | None = None, only: Sequence[str] | None = None,
          samples: int | None = None, seed: int | None = None, method: str = "wsm",
          catalog_files: Sequence[str | Path] = (),
          progress: Callable[[int, int], None] | None = None, confirmed: bool = False) -> SweepResult:
    """Run the study at every point of the grid `vary` spans over `brief` (a Brief or a brief file).

    vary: {dotted key: values} (a list of values, or one text in the --vary syntax after '='),
    or a list of `KEY=VALUES` texts; jobs: local worker processes (1 runs here); scheduler: a
    Dask scheduler address (then jobs is ignored); only, method, catalog_files: as for study();
    samples, seed: override the brief's Monte Carlo settings at every point; progress: called
    as progress(done, total) after each point; confirmed: run a grid beyond CONFIRM_POINTS or
    CONFIRM_SECONDS. Raises InputError before running anything when a value or a grid point is
    not a valid brief, and after the first point (with the estimate) when an unconfirmed grid is
    too large.
    """
    from tradeoff.catalog import load_catalog
    from tradeoff.trade_study import resolve_topologies

    start = time.perf_counter()
    base = brief if isinstance(brief, Brief) else load_brief(Path(brief))
    if jobs < 1:
        raise InputError(Problem("--jobs", None, None, "jobs", f"got {jobs}; accepted: 1 or more"))
    overrides = {k: v for k, v in (("analysis.samples", samples), ("analysis.seed", seed)) if v is not None}
    axes, points = _axes_and_briefs(base, vary, overrides)
    files = tuple(str(f) for f in catalog_files)
    topologies = resolve_topologies(points[0][1], load_catalog(extra=files), only)
    tasks = [_Task(index, point_brief, tuple(only) if only else None, method, files) for index, point_brief in points]
    done = [0]

    def tick(_future: Future | None) -> None:
        done[0] += 1
        if progress is not None:
            progress(done[0], len(tasks))

    with executor(jobs, scheduler, files) as pool:
        first_start = time.perf_counter()
        first_record = run_point(tasks[0])  # here, before any worker starts: its time gives the estimate
        if not confirmed:
            _check_confirmed(len(tasks), time.perf_counter() - first_start, 1 if scheduler else jobs)
        tick(None)
        futures = [pool.submit(run_point, task) for task in tasks[1:]]
        for future in futures:
            future.add_done_callback(tick)
        try:
            records = [first_record] + [future.result() for future in futures]
        except BaseException:
            for future in futures:
                future.cancel()
            raise
    first = points[0][1].analysis
    return SweepResult(title=base.title, axes=axes, points=records, method=method, samples=first.samples,
                       seed=first.seed, topologies=topologies, notes=_band_notes(base, [a.key for a in axes]),
                       seconds=time.perf_counter() - start)
