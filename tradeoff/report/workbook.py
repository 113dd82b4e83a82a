"""The study workbook, written with openpyxl through pandas' ExcelWriter.

Sheets: `decision`, a decision matrix that recalculates (below), then one sheet per review table
(see `tradeoff.report.tables`) in display units: delays in the brief's time unit (hours for
hours-long delays), currents in µA, power in µW, with number formats of a few digits. The CSV
files of the review set keep the same tables in SI units for scripts.

The `decision` sheet holds the brief's weights in editable cells, the criteria of every feasible
design, and live formulas for the criterion weights (brief weight x share / sum of the brief
weights), the min-max normalised criteria (best 1, worst 0, an all-equal column 1), the
weighted-sum score and the rank, beside the tool's own score and rank: changing a weight in a
spreadsheet re-ranks the designs as `tradeoff.ranking` does with --method wsm.

Every sheet has the one header style (`style_header`), shared with the sweep workbook; headers
are frozen, columns sized to their content (long text wraps), numbers stored as numbers and an
empty cell where a value is not a finite number (its row's note says why).
"""
from __future__ import annotations

import io
import re
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from tradeoff.plain import FIXED_SCALE_UNITS
from tradeoff.report.files import check_writable, write_atomic
from tradeoff.report.labels import time_unit

if TYPE_CHECKING:  # pragma: no cover
    import pandas as pd

    from tradeoff.trade_study import StudyResult

__all__ = ["workbook_bytes", "write_workbook", "MAX_COLUMN_WIDTH", "DECISION_SHEET", "DecisionLayout",
           "decision_layout", "style_header", "display_tables"]

MAX_COLUMN_WIDTH = 60
"""Widest column [characters]; longer text wraps inside the cell."""

_MIN_COLUMN_WIDTH = 6
"""Narrowest column [characters]."""

DECISION_SHEET = "decision"
"""Name of the decision-matrix sheet (the first sheet)."""

HEADER_FILL = "DDE3EA"
"""Background of every header row (a light slate), with bold text and a rule below."""

WEIGHT_FILL = "FFF2C6"
"""Background of the editable weight cells."""


def _cell_text(value: object) -> str:
    return "" if value is None or value != value else f"{value:.6g}" if isinstance(value, float) else str(value)


def style_header(sheet, row: int = 1, first: int = 1, last: int | None = None) -> None:
    """The one header style of every workbook: bold, light slate fill, a thin rule below, wrapped."""
    from openpyxl.styles import Alignment, Border, Font, PatternFill, Side

    last = sheet.max_column if last is None else last
    for col in range(first, last + 1):
        cell = sheet.cell(row=row, column=col)
        cell.font = Font(bold=True)
        cell.fill = PatternFill("solid", fgColor=HEADER_FILL)
        cell.border = Border(bottom=Side(style="thin"))
        cell.alignment = Alignment(wrap_text=True, vertical="bottom")


def _size_columns(sheet, frame: "pd.DataFrame") -> None:
    """Width of each column from its header and its longest cell; wrap cells that would be wider."""
    from openpyxl.styles import Alignment
    from openpyxl.utils import get_column_letter

    for index, column in enumerate(frame.columns, start=1):
        longest = max([len(str(column)), *(len(_cell_text(v)) for v in frame[column])])
        letter = get_column_letter(index)
        sheet.column_dimensions[letter].width = max(_MIN_COLUMN_WIDTH, min(MAX_COLUMN_WIDTH, longest + 2))
        if longest > MAX_COLUMN_WIDTH:
            for (cell,) in sheet.iter_rows(min_row=2, min_col=index, max_col=index):
                cell.alignment = Alignment(wrap_text=True, vertical="top")


# ---- display units ------------------------------------------------------------------------------
_FORMATS = {"h": "0.000", "min": "0.00", "s": "0.000", "µA": "0.000", "µW": "0.00", "EUR": "0.00", "%": "0.00",
            "0 to 1": "0.000"}
"""Number format of a display unit (a few digits; the cell keeps the full number)."""



_PREFIXED = {"ohm": "Ω", "F": "F", "A": "A", "W": "W", "V": "V", "Hz": "Hz"}
"""Per-row SI units shown with an engineering prefix chosen by the row's largest value."""


def _row_unit(unit: str, values: "list[float]", delay_unit: tuple[str, float]) -> tuple[str, float]:
    """Display unit of one row of a per-row-unit table, and the factor from its SI `unit`."""
    if unit == "s":
        return delay_unit[0], 1 / delay_unit[1]
    if unit in _PREFIXED:
        from tradeoff.units import engineering_prefix

        prefix, scale = engineering_prefix(max((abs(v) for v in values if v == v), default=0.0))
        return prefix + _PREFIXED[unit], 1 / scale
    return FIXED_SCALE_UNITS.get(unit, (unit, 1.0))


def _rows_in_display_units(frame: "pd.DataFrame", delay_unit: tuple[str, float]) -> "pd.DataFrame":
    """The corners table for a reader: each row's values in its display unit (µF, kΩ, ppm/K, the
    brief's time unit), without the model's keys (the CSV file keeps both, in SI)."""
    from tradeoff.report.tables import CORNER_VALUES

    frame = frame.drop(columns="key").astype({c: float for c in CORNER_VALUES})
    for index, row in frame.iterrows():
        unit, factor = _row_unit(row["unit"], [row[c] for c in CORNER_VALUES], delay_unit)
        frame.loc[index, "unit"] = unit
        for column in CORNER_VALUES:
            frame.loc[index, column] = row[column] * factor
    return frame


def display_tables(tables: "dict[str, pd.DataFrame]", delay_unit: tuple[str, float]) -> "dict[str, pd.DataFrame]":
    """The review tables with SI columns in display units: '[s]' in `delay_unit` (name, seconds),
    '[A]' in µA, '[W]' in µW, the corners table row by row; other columns as they are."""
    scales = {"[s]": (f"[{delay_unit[0]}]", 1 / delay_unit[1]), "[A]": ("[µA]", 1e6), "[W]": ("[µW]", 1e6)}
    out = {}
    for name, frame in tables.items():
        frame = _rows_in_display_units(frame, delay_unit) if name == "corners" else frame.copy()
        renames = {}
        for column in frame.columns:
            for suffix, (unit, factor) in scales.items():
                if str(column).endswith(suffix):
                    frame[column] = frame[column].astype(float) * factor
                    renames[column] = str(column)[: -len(suffix)] + unit
        out[name] = frame.rename(columns=renames)
    return out


def _number_formats(sheet, frame: "pd.DataFrame") -> None:
    for index, column in enumerate(frame.columns, start=1):
        m = re.search(r"\[([^\]]+)\]$", str(column))
        fmt = _FORMATS.get(m[1]) if m else None
        if fmt:
            for (cell,) in sheet.iter_rows(min_row=2, min_col=index, max_col=index):
                cell.number_format = fmt


# ---- the decision matrix ------------------------------------------------------------------------
_DISPLAY = {"delay_spread_frac": ("% of nominal", 100.0), "delay_margin_frac": ("% of band", 100.0),
            "yield_frac": ("%", 100.0),
            "standby_after_a": ("µA", 1e6), "standby_during_a": ("µA", 1e6), "rails": ("count", 1.0),
            "parts": ("count", 1.0), "cost_eur": ("EUR", 1.0), "effort": ("0 to 1", 1.0)}
"""Display unit and factor from SI of each ranking criterion (min-max normalisation ignores the factor)."""


@dataclass(frozen=True)
class DecisionLayout:
    """Where the decision sheet keeps things (1-based rows, column letters).

    weight_cells: brief weight name -> cell ('B4'); score_cells, rank_cells: design -> cell.
    """

    weight_cells: dict[str, str]
    score_cells: dict[str, str]
    rank_cells: dict[str, str]


_WEIGHT_ROW = 4
_CRITERIA_ROW = 13
_DESIGN_ROW = 21


def decision_layout(designs: list[str]) -> DecisionLayout:
    """The cells of the weights, scores and ranks for `designs` (in rank order)."""
    from openpyxl.utils import get_column_letter

    from tradeoff.criteria import CRITERIA, WEIGHT_NAMES

    n = len(CRITERIA)
    score_col, rank_col = get_column_letter(2 + 2 * n), get_column_letter(3 + 2 * n)
    rows = {d: _DESIGN_ROW + 1 + i for i, d in enumerate(designs)}
    return DecisionLayout({w: f"B{_WEIGHT_ROW + i}" for i, w in enumerate(WEIGHT_NAMES)},
                          {d: f"{score_col}{r}" for d, r in rows.items()}, {d: f"{rank_col}{r}" for d, r in rows.items()})


def _decision_sheet(book, result: "StudyResult") -> None:
    """Write the decision matrix with live formulas into a new first sheet of `book` (openpyxl)."""
    from openpyxl.styles import Font, PatternFill
    from openpyxl.utils import get_column_letter

    from tradeoff.criteria import CRITERIA, WEIGHT_NAMES

    sheet = book.create_sheet(DECISION_SHEET, 0)
    ranking = result.ranking
    designs = [str(name) for name in ranking.table.index]
    layout = decision_layout(designs)
    n = len(CRITERIA)
    sheet["A1"] = "Decision matrix: weighted sum of min-max normalised criteria"
    sheet["A1"].font = Font(bold=True, size=12)
    sheet["A2"] = ("Edit the brief weights in column B: criterion weights, normalised criteria, scores and ranks "
                   "are formulas and recalculate. The tool's own score and rank (as ranked with --method "
                   f"{ranking.method}) stand beside them for comparison.")
    sheet.cell(row=_WEIGHT_ROW - 1, column=1, value="brief weight")
    sheet.cell(row=_WEIGHT_ROW - 1, column=2, value="value")
    style_header(sheet, _WEIGHT_ROW - 1, 1, 2)
    for name in WEIGHT_NAMES:
        cell = sheet[layout.weight_cells[name]]
        sheet.cell(row=cell.row, column=1, value=name)
        cell.value = float(ranking.weights[name])
        cell.fill = PatternFill("solid", fgColor=WEIGHT_FILL)
    last_weight = _WEIGHT_ROW + len(WEIGHT_NAMES) - 1
    labels = ("criterion", "unit", "better", "takes the weight", "share", "criterion weight")
    for i, label in enumerate(labels):
        sheet.cell(row=_CRITERIA_ROW + i, column=1, value=label)
    style_header(sheet, _CRITERIA_ROW, 1, 1 + n)
    first_design, last_design = _DESIGN_ROW + 1, _DESIGN_ROW + len(designs)
    for j, c in enumerate(CRITERIA):
        col = 2 + j
        letter, norm = get_column_letter(col), get_column_letter(col + n)
        unit, factor = _DISPLAY[c.column]
        sheet.cell(row=_CRITERIA_ROW, column=col, value=c.noun)
        sheet.cell(row=_CRITERIA_ROW + 1, column=col, value=unit)
        sheet.cell(row=_CRITERIA_ROW + 2, column=col, value="higher" if c.higher_is_better else "lower")
        sheet.cell(row=_CRITERIA_ROW + 3, column=col, value=c.weight)
        sheet.cell(row=_CRITERIA_ROW + 4, column=col, value=c.share)
        weight_ref = layout.weight_cells[c.weight].replace("B", "$B$")
        sheet.cell(row=_CRITERIA_ROW + 5, column=col,
                   value=f"={weight_ref}*{letter}{_CRITERIA_ROW + 4}/SUM($B${_WEIGHT_ROW}:$B${last_weight})"
                   ).number_format = "0.0000"
        sheet.cell(row=_DESIGN_ROW, column=col, value=f"{c.noun} [{unit}]")
        sheet.cell(row=_DESIGN_ROW, column=col + n, value=f"normalised {c.noun}")
        span = f"{letter}${first_design}:{letter}${last_design}"
        for i, name in enumerate(designs):
            row = first_design + i
            sheet.cell(row=row, column=col, value=float(ranking.table.loc[name, c.column]) * factor
                       ).number_format = "0" if unit == "count" else "0.000"
            x = f"{letter}{row}"
            better = f"({x}-MIN({span}))" if c.higher_is_better else f"(MAX({span})-{x})"
            sheet.cell(row=row, column=col + n,
                       value=f"=IF(MAX({span})=MIN({span}),1,{better}/(MAX({span})-MIN({span})))").number_format = "0.000"
    score_col, rank_col = 2 + 2 * n, 3 + 2 * n
    weights_span = f"$B${_CRITERIA_ROW + 5}:${get_column_letter(1 + n)}${_CRITERIA_ROW + 5}"
    scores_span = f"${get_column_letter(score_col)}${first_design}:${get_column_letter(score_col)}${last_design}"
    sheet.cell(row=_DESIGN_ROW, column=1, value="design")
    for col, head in ((score_col, "score [0 to 1]"), (rank_col, "rank"), (rank_col + 1, "tool's score [0 to 1]"),
                      (rank_col + 2, "tool's rank")):
        sheet.cell(row=_DESIGN_ROW, column=col, value=head)
    for i, name in enumerate(designs):
        row = first_design + i
        sheet.cell(row=row, column=1, value=name)
        normalised = f"{get_column_letter(2 + n)}{row}:{get_column_letter(1 + 2 * n)}{row}"
        sheet.cell(row=row, column=score_col, value=f"=SUMPRODUCT({normalised},{weights_span})").number_format = "0.000"
        sheet.cell(row=row, column=rank_col, value=f"=RANK({get_column_letter(score_col)}{row},{scores_span})")
        sheet.cell(row=row, column=rank_col + 1, value=float(ranking.table.loc[name, "score"])).number_format = "0.000"
        sheet.cell(row=row, column=rank_col + 2, value=int(ranking.table.loc[name, "rank"]))
    style_header(sheet, _DESIGN_ROW, 1, rank_col + 2)
    sheet.column_dimensions["A"].width = 22
    for col in range(2, rank_col + 3):
        sheet.column_dimensions[get_column_letter(col)].width = 14
    sheet.freeze_panes = f"B{_DESIGN_ROW + 1}"


def workbook_bytes(result: "StudyResult | None", tables: "dict[str, pd.DataFrame] | None" = None) -> bytes:
    """The workbook as .xlsx bytes: for a study (`result`), the decision sheet and the review tables
    (`tables.TABLES` order) in display units; otherwise the given `tables` as they are (the sweep's)."""
    import pandas as pd

    if result is not None:
        from tradeoff.report.tables import study_tables

        tables = display_tables(study_tables(result) if tables is None else tables,
                                time_unit(result.brief.delay.nominal_s))
    buffer = io.BytesIO()
    with pd.ExcelWriter(buffer, engine="openpyxl") as writer:
        for name, frame in tables.items():
            frame.to_excel(writer, sheet_name=name, index=False, freeze_panes=(1, 0))
            sheet = writer.sheets[name]
            _size_columns(sheet, frame)
            _number_formats(sheet, frame)
            style_header(sheet)
        if result is not None and result.ranking is not None:
            _decision_sheet(writer.book, result)
            writer.book.active = 0
    return buffer.getvalue()


def write_workbook(result: "StudyResult", path: str | Path, force: bool = False) -> Path:
    """Write the workbook of `result` to `path` atomically; an existing file only with `force`.

    Raises OutputError (file exists without `force`, directory missing, write failed).
    """
    check_writable(path, force)  # before the work of building the workbook
    return write_atomic(path, workbook_bytes(result), force)
