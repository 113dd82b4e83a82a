"""The review set of a study, and the study's file exports in one call.

`export(result, xlsx=..., csv=..., plots=..., netlists=..., review=..., force=...)` plans every
file with the function that makes it and hands them to `files.write_all`, which checks every target
first (an existing file without `force`, a special file, an unwritable place, or two exports naming
one file refuses before anything is drawn, written or created), makes each file into a staging
folder and moves the set into place at the end; an error or interruption leaves no partial set.
Directories given for CSV, plots, netlists and the review set are created if missing. A new export
added to `_planned_review` gets all of this by being in the plan.

The review set (`review=DIR`) is, with fixed names:

    DIR/review.html         the review page (tradeoff.report.html), self-contained
    DIR/report.txt          the terminal report as plain text, with the candidate counts per rule
    DIR/study.json          the whole result (as `tradeoff study --format json`)
    DIR/study.xlsx          the workbook (tradeoff.report.workbook)
    DIR/tables/<sheet>.csv  the workbook's tables as CSV (tradeoff.report.tables)
    DIR/plots/...           waveform-<design>, histogram-<design>, pareto, volume; .png and .svg
    DIR/netlists/<design>.cir  SPICE netlist of each feasible design whose topology has one

`<design>` is `tables.design_stem(name)`, e.g. 'rc-counter #2' -> 'rc-counter-2'.
"""
from __future__ import annotations

import functools
import io
import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Callable

from tradeoff.errors import OutputError
from tradeoff.report.files import write_all
from tradeoff.report.tables import TABLES, csv_files, design_stem, study_tables

if TYPE_CHECKING:  # pragma: no cover
    import pandas as pd

    from tradeoff.trade_study import StudyResult

__all__ = ["REVIEW_LAYOUT", "Export", "report_text", "json_text", "netlist_files", "export"]

REVIEW_LAYOUT = {"html": "review.html", "report": "report.txt", "json": "study.json", "workbook": "study.xlsx", "csv": "tables",
                 "plots": "plots", "netlists": "netlists"}
"""Names inside a review folder: files for the report, JSON and workbook; folders for the rest."""


@dataclass
class Export:
    """What an export wrote, and the designs that have no SPICE netlist (their topology provides none)."""

    written: list[Path] = field(default_factory=list)
    without_netlist: list[str] = field(default_factory=list)


def report_text(result: "StudyResult", verbose: bool = False) -> str:
    """The terminal report of `result` as plain text (no colour codes), as it reads on a pipe
    (PIPED_WIDTH columns); `verbose` adds the candidate counts per rule."""
    from rich.console import Console

    from tradeoff.report.study_text import render_study
    from tradeoff.report.terminal import PIPED_WIDTH

    buffer = io.StringIO()
    render_study(result, Console(file=buffer, width=PIPED_WIDTH, color_system=None, force_terminal=False),
                 verbose=verbose)
    return buffer.getvalue()


def json_text(result: "StudyResult", timing: bool = False) -> str:
    """The whole result as JSON text (never NaN or infinity; wall times only when `timing`)."""
    return json.dumps(result.to_dict(timing=timing), indent=2, allow_nan=False) + "\n"


def netlist_files(result: "StudyResult", directory: str | Path) -> tuple[dict[Path, str], list[str]]:
    """`<directory>/<design>.cir` -> netlist for each feasible design whose topology has `spice()`,
    and the names of the designs without one."""
    files, without = {}, []
    for name, ev, outcome in result.designs():
        netlist = outcome.model.spice(ev.design)
        if netlist is None:
            without.append(name)
        else:
            files[Path(directory) / f"{design_stem(name)}.cir"] = netlist
    return files, without


Maker = Callable[[], "str | bytes"]
"""A function giving one file's contents, called only after every target was checked."""


def _planned_review(result: "StudyResult", directory: str | Path,
                    tables: Callable[[], "dict[str, pd.DataFrame]"]) -> tuple[dict[Path, Maker], list[str]]:
    """Every file of the review set in `directory` (layout `REVIEW_LAYOUT`) with its maker, and the
    designs without a netlist."""
    from tradeoff.report.plots import plot_file_makers
    from tradeoff.report.workbook import workbook_bytes

    root = Path(directory)
    netlists, without = netlist_files(result, root / REVIEW_LAYOUT["netlists"])
    planned: dict[Path, Maker] = {
        root / REVIEW_LAYOUT["html"]: functools.partial(_html, result),
        root / REVIEW_LAYOUT["report"]: functools.partial(report_text, result, verbose=True),
        root / REVIEW_LAYOUT["json"]: functools.partial(json_text, result),
        root / REVIEW_LAYOUT["workbook"]: lambda: workbook_bytes(result, tables()),
        **_csv_makers(result, root / REVIEW_LAYOUT["csv"], tables),
        **plot_file_makers(result, root / REVIEW_LAYOUT["plots"]),
        **{path: functools.partial(str, text) for path, text in netlists.items()},
    }
    return planned, without


def _html(result: "StudyResult") -> str:
    from tradeoff.report.html import review_html

    return review_html(result)


def _csv_makers(result: "StudyResult", directory: Path,
                tables: Callable[[], "dict[str, pd.DataFrame]"]) -> dict[Path, Maker]:
    texts = functools.cache(lambda: csv_files(result, directory, tables()))
    return {path: functools.partial(_entry, texts, path) for path in (directory / f"{n}.csv" for n in TABLES)}


def _entry(files: Callable[[], dict[Path, str]], path: Path) -> str:
    return files()[path]


def export(result: "StudyResult", *, xlsx: str | Path | None = None, csv: str | Path | None = None,
           plots: str | Path | None = None, netlists: str | Path | None = None, review: str | Path | None = None,
           html: str | Path | None = None, force: bool = False) -> Export:
    """Write the requested exports of `result`: a workbook file, the review page, CSV tables, plots and
    netlists into directories, and the whole review set into a folder (directories are created if missing).

    Every target is checked before anything is drawn or written: when one exists and `force` is False,
    or two exports would write the same file, OutputError names it and nothing is written.
    """
    from tradeoff.report.plots import plot_file_makers
    from tradeoff.report.workbook import workbook_bytes

    tables = functools.cache(functools.partial(study_tables, result))
    planned: list[tuple[Path, Maker]] = []
    without: list[str] = []
    folders = [Path(d) for d in (csv, plots, netlists) if d is not None]
    if review is not None:
        folders += [Path(review), *(Path(review) / REVIEW_LAYOUT[k] for k in ("csv", "plots", "netlists"))]
    if xlsx is not None:
        planned.append((Path(xlsx), lambda: workbook_bytes(result, tables())))
    if html is not None:
        planned.append((Path(html), functools.partial(_html, result)))
    if csv is not None:
        planned += _csv_makers(result, Path(csv), tables).items()
    if plots is not None:
        planned += plot_file_makers(result, plots).items()
    if netlists is not None:
        found, without = netlist_files(result, netlists)
        planned += ((path, functools.partial(str, text)) for path, text in found.items())
    if review is not None:
        found, without = _planned_review(result, review, tables)
        planned += found.items()
    _check_distinct([path for path, _ in planned])
    return Export(written=write_all(planned, force, folders), without_netlist=without)


def _check_distinct(paths: list[Path]) -> None:
    """OutputError when two exports would write the same file (e.g. --csv DIR inside the --review folder)."""
    seen: set[Path] = set()
    for path in paths:
        if path.resolve() in seen:
            raise OutputError(f"{path}: two of the requested exports would write this file; accepted: "
                              "separate folders for --csv, --plots, --netlist and --review, and files for --xlsx and --html "
                              "outside the --review folder")
        seen.add(path.resolve())
