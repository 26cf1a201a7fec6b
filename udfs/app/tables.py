"""Result tables of sweeps: CSV, or .xlsx with charts and an About sheet with the caution.

>>> t = SweepTable(["x"], ["y"], {"x": [1.0, 2.0], "y": [3.0, 4.0]}, "demo", 2)
>>> _csv_text(t).splitlines()[:2]
['x,y', '1.0,3.0']
"""

from __future__ import annotations

import csv
import io
import os
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from udfs.core.caution import CAUTION
from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.files import atomic_writer, check_output
from udfs.xlsx.refs import col_letters

__all__ = ["MAX_XLSX_ROWS", "SweepTable", "check_table_output", "write_table"]

MAX_XLSX_ROWS = 1_048_575  # Excel's rows, less the header
MAX_CHARTS = 4
MAX_CHART_SERIES = 12


@dataclass
class SweepTable:
    """Columns of a sweep: the varied inputs first, then the outputs."""

    inputs: list[str]
    outputs: list[str]
    columns: dict[str, Any]  # name -> list or numpy array, all of one length
    source: str
    block: int = 1  # number of values of the first varied input (it changes fastest)
    notes: list[str] = field(default_factory=list)

    @property
    def rows(self) -> int:
        first = next(iter(self.columns.values()))
        return len(first)

    @property
    def names(self) -> list[str]:
        return self.inputs + self.outputs



def _csv_text(table: SweepTable) -> str:
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(table.names)
    columns = [table.columns[n] for n in table.names]
    if all(isinstance(c, np.ndarray) and c.dtype.kind == "f" for c in columns):
        # all numbers (core sweeps): one formatting operation per row
        fmt = ",".join(["%.10g"] * len(columns))
        rows = np.column_stack(columns).tolist()
        buf.write("\n".join(fmt % tuple(r) for r in rows))
        buf.write("\n")
        return buf.getvalue()
    cols = []
    for name in table.names:
        col = table.columns[name]
        if isinstance(col, np.ndarray) and col.dtype.kind == "f":
            cols.append([format(x, ".10g") for x in col.tolist()])
        else:
            cols.append(["" if x is None else x for x in col])
    writer.writerows(zip(*cols, strict=True))
    return buf.getvalue()


def _numeric(column: Any) -> bool:
    """True when every value of a column is a number (text and errors are not charted)."""
    if isinstance(column, np.ndarray):
        return column.dtype.kind in "fiu"
    return all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in column)


def _xlsx_bytes(table: SweepTable) -> bytes:
    from openpyxl import Workbook
    from openpyxl.chart import Reference, ScatterChart, Series

    if table.rows > MAX_XLSX_ROWS:
        raise WorkbookError(
            f"{table.rows:,} rows do not fit in a sheet ({MAX_XLSX_ROWS:,}); write .csv instead"
        )
    wb = Workbook(write_only=True)
    ws = wb.create_sheet("Sweep")
    ws.append(table.names)
    cols = [table.columns[n] for n in table.names]
    lists = [c.tolist() if isinstance(c, np.ndarray) else c for c in cols]
    for row in zip(*lists, strict=True):
        ws.append(list(row))
    n = table.rows
    first = table.inputs[0]
    block = max(table.block, 1)
    blocks = n // block
    x_col = 1
    numeric = [o for o in table.outputs if _numeric(table.columns[o])]
    for k, out in enumerate(numeric[:MAX_CHARTS]):
        y_col = table.names.index(out) + 1
        chart = ScatterChart()
        chart.title = f"{out} vs {first}"
        chart.x_axis.title = first
        chart.y_axis.title = out
        chart.height, chart.width = 9, 16
        if 1 < blocks <= MAX_CHART_SERIES or blocks == 1:
            chart.style = 13
            for b in range(blocks):
                lo, hi = 2 + b * block, 1 + (b + 1) * block
                xs = Reference(ws, min_col=x_col, min_row=lo, max_row=hi)
                ys = Reference(ws, min_col=y_col, min_row=lo, max_row=hi)
                label = (
                    ", ".join(
                        f"{name}={table.columns[name][lo - 2]:g}" for name in table.inputs[1:]
                    )
                    or out
                )
                s = Series(ys, xs, title=label)
                s.marker.symbol = "circle"
                chart.series.append(s)
        else:
            xs = Reference(ws, min_col=x_col, min_row=2, max_row=n + 1)
            ys = Reference(ws, min_col=y_col, min_row=2, max_row=n + 1)
            s = Series(ys, xs, title=out)
            s.marker.symbol = "circle"
            s.graphicalProperties.line.noFill = True
            chart.series.append(s)
        anchor = f"{col_letters(len(table.names) + 2 + 9 * (k % 2))}{2 + 20 * (k // 2)}"
        ws.add_chart(chart, anchor)
    about = wb.create_sheet("About")
    about.append(["cellwright sweep"])
    about.append(["Source", table.source])
    about.append(["Scenarios", n])
    for name in table.inputs:
        values = list(dict.fromkeys(np.asarray(table.columns[name]).tolist()))
        about.append([f"Varied: {name}", ", ".join(f"{v:g}" for v in values[:50])])
    about.append(["Outputs", ", ".join(table.outputs)])
    for note in table.notes:
        about.append(["Note", note])
    about.append([CAUTION])
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def check_table_output(
    out: str | os.PathLike[str], force: bool = False, inputs: Sequence[str | os.PathLike[str]] = ()
) -> Path:
    """Refuse a sweep output early: wrong suffix, exists (without force), unwritable."""
    path = Path(out)
    if path.suffix.lower() not in (".csv", ".xlsx"):
        raise WorkbookError(f"{path.name}: the sweep output must end in .csv or .xlsx")
    return check_output(path, force, inputs)


def write_table(
    table: SweepTable,
    out: str | os.PathLike[str],
    force: bool = False,
    inputs: Sequence[str | os.PathLike[str]] = (),
) -> Path:
    """Write the sweep as .csv or .xlsx (by the suffix of ``out``), atomically."""
    path = check_table_output(out, force, inputs)
    data = _csv_text(table).encode("utf-8") if path.suffix.lower() == ".csv" else _xlsx_bytes(table)
    with atomic_writer(path, force, inputs) as fh:
        fh.write(data)
    return path
