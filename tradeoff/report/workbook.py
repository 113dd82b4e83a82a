"""The study workbook: one sheet per review table (see `tradeoff.report.tables`), written with
openpyxl through pandas' ExcelWriter.

Headers are frozen, columns sized to their content (long text wraps), numbers are stored as
numbers and an empty cell stands where a value is not a finite number (its row's note says
why). The file is written atomically (`tradeoff.report.files.write_atomic`).
"""
from __future__ import annotations

import io
from pathlib import Path
from typing import TYPE_CHECKING

from tradeoff.report.files import check_writable, write_atomic
from tradeoff.report.tables import study_tables

if TYPE_CHECKING:  # pragma: no cover
    import pandas as pd

    from tradeoff.trade_study import StudyResult

__all__ = ["workbook_bytes", "write_workbook", "MAX_COLUMN_WIDTH"]

MAX_COLUMN_WIDTH = 60
"""Widest column [characters]; longer text wraps inside the cell."""

_MIN_COLUMN_WIDTH = 6
"""Narrowest column [characters]."""


def _cell_text(value: object) -> str:
    return "" if value is None or value != value else f"{value:.6g}" if isinstance(value, float) else str(value)


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


def workbook_bytes(result: "StudyResult", tables: "dict[str, pd.DataFrame] | None" = None) -> bytes:
    """The workbook of `result` as .xlsx bytes (sheets in `tables.TABLES` order)."""
    import pandas as pd

    tables = study_tables(result) if tables is None else tables
    buffer = io.BytesIO()
    with pd.ExcelWriter(buffer, engine="openpyxl") as writer:
        for name, frame in tables.items():
            frame.to_excel(writer, sheet_name=name, index=False, freeze_panes=(1, 0))
            _size_columns(writer.sheets[name], frame)
    return buffer.getvalue()


def write_workbook(result: "StudyResult", path: str | Path, force: bool = False) -> Path:
    """Write the workbook of `result` to `path` atomically; an existing file only with `force`.

    Raises OutputError (file exists without `force`, directory missing, write failed).
    """
    check_writable(path, force)  # before the work of building the workbook
    return write_atomic(path, workbook_bytes(result), force)
