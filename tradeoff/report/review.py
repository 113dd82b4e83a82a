"""The review set of a study, and the study's file exports in one call.

`export(result, xlsx=..., csv=..., plots=..., netlists=..., review=..., force=...)` builds every
requested file in memory first, then writes them with `files.write_all`: each file atomically
(temporary file and rename), every target checked before the first is written, so an existing
file without `force` writes nothing, and a failure part-way leaves the files already written
complete. Directories given for CSV, plots, netlists and the review set are created if missing.

The review set (`review=DIR`) is, with fixed names:

    DIR/report.txt          the terminal report as plain text
    DIR/study.json          the whole result (as `tradeoff study --format json`)
    DIR/study.xlsx          the workbook (tradeoff.report.workbook)
    DIR/tables/<sheet>.csv  the workbook's tables as CSV (tradeoff.report.tables)
    DIR/plots/...           waveform-<design>, histogram-<design>, pareto; .png and .svg
    DIR/netlists/<design>.cir  SPICE netlist of each feasible design whose topology has one

`<design>` is `tables.design_stem(name)`, e.g. 'rc-counter #2' -> 'rc-counter-2'.
"""
from __future__ import annotations

import io
import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from tradeoff.errors import OutputError
from tradeoff.report.files import write_all
from tradeoff.report.tables import csv_files, design_stem, study_tables

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.study import StudyResult

__all__ = ["REVIEW_LAYOUT", "Export", "report_text", "json_text", "netlist_files", "review_files", "export"]

REVIEW_LAYOUT = {"report": "report.txt", "json": "study.json", "workbook": "study.xlsx", "csv": "tables",
                 "plots": "plots", "netlists": "netlists"}
"""Names inside a review folder: files for the report, JSON and workbook; folders for the rest."""


@dataclass
class Export:
    """What an export wrote, and the designs that have no SPICE netlist (their topology provides none)."""

    written: list[Path] = field(default_factory=list)
    without_netlist: list[str] = field(default_factory=list)


def report_text(result: "StudyResult") -> str:
    """The terminal report of `result` as plain text (no colour codes), as it reads on a pipe."""
    from rich.console import Console

    from tradeoff.report.study_text import PIPED_WIDTH, render_study

    buffer = io.StringIO()
    render_study(result, Console(file=buffer, width=PIPED_WIDTH, color_system=None, force_terminal=False))
    return buffer.getvalue()


def json_text(result: "StudyResult") -> str:
    """The whole result as JSON text (never NaN or infinity)."""
    return json.dumps(result.to_dict(), indent=2, allow_nan=False) + "\n"


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


def _directory(path: str | Path) -> Path:
    """`path` as an existing directory (created with its parents if missing); OutputError otherwise."""
    target = Path(path)
    if target.exists() and not target.is_dir():
        raise OutputError(f"{target}: is a file; accepted: a directory (it is created if missing)")
    try:
        target.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"{target}: cannot create the directory ({exc.strerror or exc.__class__.__name__})") \
            from None
    return target


def review_files(result: "StudyResult", directory: str | Path) -> tuple[dict[Path, str | bytes], list[str]]:
    """Every file of the review set in `directory` (layout `REVIEW_LAYOUT`), and the designs without a
    netlist. Creates the folders."""
    from tradeoff.report.plots import plot_files
    from tradeoff.report.workbook import workbook_bytes

    root = _directory(directory)
    tables = study_tables(result)
    netlists, without = netlist_files(result, _directory(root / REVIEW_LAYOUT["netlists"]))
    files: dict[Path, str | bytes] = {
        root / REVIEW_LAYOUT["report"]: report_text(result),
        root / REVIEW_LAYOUT["json"]: json_text(result),
        root / REVIEW_LAYOUT["workbook"]: workbook_bytes(result, tables),
        **csv_files(result, _directory(root / REVIEW_LAYOUT["csv"]), tables),
        **plot_files(result, _directory(root / REVIEW_LAYOUT["plots"])),
        **netlists,
    }
    return files, without


def export(result: "StudyResult", *, xlsx: str | Path | None = None, csv: str | Path | None = None,
           plots: str | Path | None = None, netlists: str | Path | None = None, review: str | Path | None = None,
           force: bool = False) -> Export:
    """Write the requested exports of `result`: a workbook file, CSV tables, plots and netlists into
    directories, and the whole review set into a folder. Nothing is written when a target exists and
    `force` is False, or when two exports would write the same file (OutputError names it)."""
    files: list[tuple[Path, str | bytes]] = []
    without: list[str] = []
    tables = study_tables(result) if xlsx is not None or csv is not None else None
    if xlsx is not None:
        from tradeoff.report.files import check_writable
        from tradeoff.report.workbook import workbook_bytes

        check_writable(xlsx, force)  # refuse before the work, not after it
        files.append((Path(xlsx), workbook_bytes(result, tables)))
    if csv is not None:
        files += csv_files(result, _directory(csv), tables).items()
    if plots is not None:
        from tradeoff.report.plots import plot_files

        files += plot_files(result, _directory(plots)).items()
    if netlists is not None:
        found, without = netlist_files(result, _directory(netlists))
        files += found.items()
    if review is not None:
        found, without = review_files(result, review)
        files += found.items()
    _check_distinct(files)
    return Export(written=write_all(files, force), without_netlist=without)


def _check_distinct(files: list[tuple[Path, str | bytes]]) -> None:
    """OutputError when two exports would write the same file (e.g. --csv DIR inside the --review folder)."""
    seen: set[Path] = set()
    for path, _ in files:
        if path.resolve() in seen:
            raise OutputError(f"{path}: two of the requested exports would write this file; accepted: "
                              "separate folders for --csv, --plots, --netlist and --review")
        seen.add(path.resolve())
