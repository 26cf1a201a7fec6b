"""Result tables of sweeps: CSV, or .xlsx with charts and an About sheet with the caution.

Text in the tables comes from the workbook that was swept (cell values,
defined names, its file name), so it is written as data, never as something
to run (see :mod:`udfs.app.safe_text`):

* in CSV (RFC 4180: lines end in CR LF, fields holding a comma, a quote or a
  line break are quoted), a text field starting with ``=``, ``+``, ``-``, ``@``,
  a tab or a carriage return gets a leading apostrophe (the usual neutralising
  of CSV injection); numbers are written as numbers;
* in .xlsx, every text cell is stored as text (never as a formula), with
  characters XML cannot hold escaped as Excel escapes them; non-finite numbers
  are the text ``#NUM!``;
* column headers (varied targets, output names) must be usable names: at most
  255 characters, no control characters.

>>> t = SweepTable(["x"], ["y"], {"x": [1.0, 2.0], "y": ["=1+2", 4.0]}, "demo", 2)
>>> _csv_text(t).splitlines()
['x,y', "1,'=1+2", '2,4']
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

from .safe_text import csv_cell, show, text_cell

__all__ = ["MAX_XLSX_ROWS", "SweepTable", "check_table_output", "write_table"]

MAX_XLSX_ROWS = 1_048_575  # Excel's rows, less the header
MAX_CHARTS = 4
MAX_CHART_SERIES = 12
MAX_HEADER = 255  # characters of a column header (Excel's limit on a defined name)
EOL = "\r\n"  # RFC 4180; a field holding either character is quoted


@dataclass
class SweepTable:
    """Columns of a sweep: the varied inputs first, then the outputs.

    ``labels`` and ``units`` name columns for people (charts, headers of the
    About sheet); ``charted`` are the outputs the user asked for, in order
    (empty: every numeric output, up to :data:`MAX_CHARTS`); ``kind`` says what
    the rows are: ``"sweep"`` (outputs against the first varied input: points
    joined by straight segments), ``"histogram"`` (bins: bars of the sample
    counts), ``"tornado"`` (one bar per input: its swing), or a table of
    figures with no x axis (``"comparison"``, ``"percentiles"``: no chart).
    """

    inputs: list[str]
    outputs: list[str]
    columns: dict[str, Any]  # name -> list or numpy array, all of one length
    source: str
    block: int = 1  # number of values of the first varied input (it changes fastest)
    notes: list[str] = field(default_factory=list)
    labels: dict[str, str] = field(default_factory=dict)
    units: dict[str, str] = field(default_factory=dict)
    charted: list[str] = field(default_factory=list)
    kind: str = "sweep"

    def title(self, name: str) -> str:
        """A column's label with its unit: ``"Energy density (Wh/kg)"``."""
        label = self.labels.get(name) or name
        unit = self.units.get(name)
        return f"{label} ({unit})" if unit else label

    @property
    def rows(self) -> int:
        first = next(iter(self.columns.values()))
        return len(first)

    @property
    def names(self) -> list[str]:
        return self.inputs + self.outputs


def _check_headers(names: Sequence[str]) -> None:
    """Column headers are names: not empty, at most MAX_HEADER characters, no control
    characters (a header is written as text either way)."""
    for name in names:
        bad = not name.strip() or len(name) > MAX_HEADER or show(name, MAX_HEADER) != name
        if bad:
            raise WorkbookError(
                f"column name '{show(name, 60)}' cannot head a table: a name has 1 to "
                f"{MAX_HEADER} characters and no control characters"
            )


def _text_or_number(x: Any) -> Any:
    """A value of a mixed column for CSV: numbers formatted, text neutralised."""
    if x is None:
        return ""
    if isinstance(x, float):
        return format(x, ".10g") if np.isfinite(x) else "#NUM!"
    return csv_cell(x)


def _csv_text(table: SweepTable) -> str:
    _check_headers(table.names)
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator=EOL)
    writer.writerow([csv_cell(n) for n in table.names])
    columns = [table.columns[n] for n in table.names]
    if all(isinstance(c, np.ndarray) and c.dtype.kind == "f" for c in columns):
        # all numbers (core sweeps): one formatting operation per row
        fmt = ",".join(["%.10g"] * len(columns))
        rows = np.column_stack(columns).tolist()
        buf.write(EOL.join(fmt % tuple(r) for r in rows))
        buf.write(EOL)
        return buf.getvalue()
    cols = []
    for name in table.names:
        col = table.columns[name]
        if isinstance(col, np.ndarray) and col.dtype.kind == "f":
            cols.append([format(x, ".10g") for x in col.tolist()])
        else:
            values = col.tolist() if isinstance(col, np.ndarray) else col
            cols.append([_text_or_number(x) for x in values])
    writer.writerows(zip(*cols, strict=True))
    return buf.getvalue()


def _numeric(column: Any) -> bool:
    """True when every value of a column is a number (text and errors are not charted)."""
    if isinstance(column, np.ndarray):
        return column.dtype.kind in "fiu"
    return all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in column)


def _shown(x: Any) -> str:
    return format(x, "g") if isinstance(x, float) else str(x)


def _sweep_charts(ws: Any, table: SweepTable) -> list[str]:
    """Scatter charts of the charted outputs against the first varied input: points
    joined by straight segments (never smoothed), one series per combination of the
    other inputs. Returns the notes on what was not charted."""
    from openpyxl.chart import Reference, ScatterChart, Series

    first = table.inputs[0]
    if not _numeric(table.columns[first]):
        return [f"no chart: the first varied input ({first}) is not a number"]
    asked = table.charted or [o for o in table.outputs if _numeric(table.columns[o])]
    wanted = [o for o in asked if _numeric(table.columns[o])]
    notes = [f"not charted (not all numbers): {o}" for o in asked if o not in wanted]
    if len(wanted) > MAX_CHARTS:
        notes.append(f"charted the first {MAX_CHARTS} of {len(wanted)} outputs; "
                     f"not charted: {', '.join(wanted[MAX_CHARTS:])}")
    n, block = table.rows, max(table.block, 1)
    blocks = n // block
    grouped = 1 <= blocks <= MAX_CHART_SERIES
    if not grouped:
        notes.append(f"{blocks} combinations of the other inputs: charted as points only")
    x_col = table.names.index(first) + 1
    for k, out in enumerate(wanted[:MAX_CHARTS]):
        y_col = table.names.index(out) + 1
        chart = ScatterChart(scatterStyle="lineMarker")
        chart.title = f"{table.title(out)} vs {table.title(first)}"
        chart.x_axis.title = table.title(first)
        chart.y_axis.title = table.title(out)
        chart.height, chart.width = 9, 16
        spans = [(2 + b * block, 1 + (b + 1) * block) for b in range(blocks)] if grouped \
            else [(2, n + 1)]
        for lo, hi in spans:
            xs = Reference(ws, min_col=x_col, min_row=lo, max_row=hi)
            ys = Reference(ws, min_col=y_col, min_row=lo, max_row=hi)
            others = ", ".join(f"{name}={_shown(table.columns[name][lo - 2])}"
                               for name in table.inputs[1:])
            s = Series(ys, xs, title=others or table.title(out))
            s.marker.symbol = "circle"
            s.smooth = False
            if not grouped:
                s.graphicalProperties.line.noFill = True
            chart.series.append(s)
        anchor = f"{col_letters(len(table.names) + 2 + 9 * (k % 2))}{2 + 20 * (k // 2)}"
        ws.add_chart(chart, anchor)
    return notes


def _bar_chart(ws: Any, table: SweepTable, category: str, value: str, title: str) -> None:
    from openpyxl.chart import BarChart, Reference

    chart = BarChart()
    chart.type = "bar" if table.kind == "tornado" else "col"
    chart.title = title
    chart.x_axis.title = table.title(category)
    chart.y_axis.title = table.title(value)
    chart.height, chart.width = 9, 16
    chart.legend = None
    col = table.names.index(value) + 1
    cat = table.names.index(category) + 1
    chart.add_data(Reference(ws, min_col=col, min_row=1, max_row=table.rows + 1),
                   titles_from_data=True)
    chart.set_categories(Reference(ws, min_col=cat, min_row=2, max_row=table.rows + 1))
    ws.add_chart(chart, f"{col_letters(len(table.names) + 2)}2")


def _charts(ws: Any, table: SweepTable) -> list[str]:
    if table.kind == "sweep":
        return _sweep_charts(ws, table)
    if table.kind == "histogram":
        counts = [o for o in table.outputs if o.endswith(" samples")][:1]
        for value in counts:
            _bar_chart(ws, table, table.inputs[0], value, f"Histogram: {value}")
    elif table.kind == "tornado" and "swing" in table.outputs:
        _bar_chart(ws, table, table.inputs[0], "swing", "Tornado: swing of each input")
    return []


def _xlsx_bytes(table: SweepTable) -> bytes:
    from openpyxl import Workbook

    if table.rows > MAX_XLSX_ROWS:
        raise WorkbookError(
            f"{table.rows:,} rows do not fit in a sheet ({MAX_XLSX_ROWS:,}); write .csv instead"
        )
    _check_headers(table.names)
    wb = Workbook(write_only=True)
    ws = wb.create_sheet("Sweep")
    ws.append([text_cell(ws, n) for n in table.names])
    cols = [table.columns[n] for n in table.names]
    lists = [c.tolist() if isinstance(c, np.ndarray) else c for c in cols]
    plain = [
        isinstance(c, np.ndarray) and c.dtype.kind in "fiu" and bool(np.isfinite(c).all())
        for c in cols
    ]
    for row in zip(*lists, strict=True):
        ws.append([x if ok else text_cell(ws, x) for x, ok in zip(row, plain, strict=True)])
    chart_notes = _charts(ws, table)
    about = wb.create_sheet("About")
    lines: list[list[Any]] = [["cellwright sweep"], ["Source", table.source],
                              ["Scenarios", table.rows]]
    for name in table.inputs:
        values = list(dict.fromkeys(np.asarray(table.columns[name]).tolist()))
        lines.append([f"Varied: {table.title(name)}", ", ".join(_shown(v) for v in values[:50])])
    lines.append(["Outputs", ", ".join(table.title(o) for o in table.outputs)])
    lines += [["Note", note] for note in [*table.notes, *chart_notes]]
    lines.append([CAUTION])
    for line in lines:
        about.append([text_cell(about, x) for x in line])
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
