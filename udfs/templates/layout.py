"""Palette, cell styles and a row-by-row writer shared by the template builders.

The palette is cellwright's own (documented in ``docs/templates.md``): every
value cell is one of five kinds, told apart by fill and ink, and the kind also
decides whether the cell is locked under sheet protection.

>>> from openpyxl import Workbook
>>> from udfs.core.validate import POSITIVE
>>> wb = Workbook()
>>> w = SheetWriter(wb, wb.active, Columns(label="B", value="C", unit="D", note="E"))
>>> ref = w.input(Input("in_mass", "Mass", "g", "mass of one part", "Parts", POSITIVE, 2.0))
>>> str(ref), wb.active["C1"].protection.locked, wb.defined_names["in_mass"].attr_text
("'Sheet'!$C$1", False, "'Sheet'!$C$1")
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from functools import cache
from typing import Literal

from openpyxl.cell.cell import Cell
from openpyxl.chart import BarChart, Reference
from openpyxl.chart.label import DataLabelList
from openpyxl.chart.text import RichText
from openpyxl.drawing.text import CharacterProperties, Paragraph, ParagraphProperties
from openpyxl.formatting.rule import ColorScaleRule
from openpyxl.styles import Alignment, Border, Font, PatternFill, Protection, Side
from openpyxl.utils import get_column_letter
from openpyxl.workbook.defined_name import DefinedName
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from ..core.inputs import Input
from ..core.validate import FreeText
from .input_rules import data_validation, unit_formula

__all__ = [
    "PALETTE",
    "Columns",
    "Kind",
    "Name",
    "Ref",
    "SheetWriter",
    "add_colour_scale",
    "add_name",
    "axis_text",
    "bar_chart",
    "finish_sheet",
    "heading",
    "style",
    "validate",
    "value_labels",
]

#: cellwright's palette (hex RGB). See docs/templates.md for what each colour means.
PALETTE: dict[str, str] = {
    "ink": "1F2A30",  # text of computed cells
    "input_fill": "E4F1EA",  # inputs: pale sage ...
    "input_ink": "0E5A45",  # ... with deep green text
    "input_edge": "6FA58E",  # ... and a thin green frame
    "lookup_fill": "ECE8F6",  # catalogue look-ups through CW_ functions: pale lavender
    "lookup_ink": "3B2F6B",
    "result_fill": "FCEFCF",  # key results: pale amber, bold
    "result_ink": "573A00",
    "band_fill": "2F4858",  # table header band: slate with white text
    "band_ink": "FFFFFF",
    "section_ink": "2F4858",  # section titles
    "muted": "66777E",  # units and hints
    "caution_fill": "FBE6E1",  # cautions: pale coral with brick text
    "caution_ink": "8A2D1F",
    "grid_low": "DDEFE6",  # what-if colour scale: low (good for cost) ...
    "grid_mid": "FFF4D1",
    "grid_high": "F4C7BC",  # ... high
}

Kind = Literal["input", "calc", "lookup", "result", "text", "unit", "hint", "band"]

_THIN = Side(style="thin", color=PALETTE["input_edge"])
_HAIR = Side(style="hair", color="B9C4C8")


@cache  # one Font per kind, shared by the cells (openpyxl stores styles by value)
def _font(kind: Kind) -> Font:
    return {
        "input": Font(color=PALETTE["input_ink"], bold=True, size=11),
        "calc": Font(color=PALETTE["ink"], size=11),
        "lookup": Font(color=PALETTE["lookup_ink"], size=11),
        "result": Font(color=PALETTE["result_ink"], bold=True, size=11),
        "text": Font(color=PALETTE["ink"], size=11),
        "unit": Font(color=PALETTE["muted"], size=10),
        "hint": Font(color=PALETTE["muted"], italic=True, size=10),
        "band": Font(color=PALETTE["band_ink"], bold=True, size=11),
    }[kind]


_FILLS: dict[str, str] = {
    "input": "input_fill",
    "lookup": "lookup_fill",
    "result": "result_fill",
    "band": "band_fill",
}


@cache  # one set of style objects per kind, shared by the cells
def _look(kind: Kind) -> tuple[PatternFill | None, Border | None, Protection, Alignment]:
    fill = None
    if kind in _FILLS:
        colour = PALETTE[_FILLS[kind]]
        fill = PatternFill("solid", start_color=colour, end_color=colour)
    border = None
    if kind == "input":
        border = Border(left=_THIN, right=_THIN, top=_THIN, bottom=_THIN)
    elif kind in ("calc", "lookup", "result"):
        border = Border(bottom=_HAIR)
    wrap = kind == "band"
    horizontal = "center" if kind == "band" else None
    alignment = Alignment(vertical="center", wrap_text=wrap, horizontal=horizontal)
    return fill, border, Protection(locked=kind != "input"), alignment


def style(cell: Cell, kind: Kind, number_format: str | None = None) -> Cell:
    """Give ``cell`` the look of ``kind``; inputs are unlocked, all else locked."""
    fill, border, protection, alignment = _look(kind)
    cell.font = _font(kind)
    if fill is not None:
        cell.fill = fill
    if border is not None:
        cell.border = border
    cell.protection = protection
    cell.alignment = alignment
    if number_format:
        cell.number_format = number_format
    return cell


def heading(cell: Cell, text: str, size: int = 12) -> Cell:
    """A bold heading in the section colour (e.g. above a chart)."""
    cell.value = text
    cell.font = Font(bold=True, size=size, color=PALETTE["section_ink"])
    return cell


def add_name(wb: Workbook, name: str, ws: Worksheet, ref: str) -> None:
    """A workbook-level defined name for ``ref`` (``'$C$5'`` or ``'$B$2:$D$9'``) on ``ws``."""
    if name in wb.defined_names:
        raise ValueError(f"defined name {name!r} used twice")
    wb.defined_names[name] = DefinedName(name, attr_text=f"{quote(ws.title)}!{ref}")


def quote(title: str) -> str:
    """A sheet title as a formula writes it: ``'Bill of materials'``.

    >>> quote("Inputs"), quote("What-if")
    ("'Inputs'", "'What-if'")
    """
    return "'" + title.replace("'", "''") + "'"


@dataclass(frozen=True)
class Ref:
    """A typed reference to one cell: ``str(ref)`` is the absolute address a
    formula on any sheet uses (``'Electrodes'!$C$9``).

    >>> r = Ref("Electrodes", "C", 9)
    >>> str(r), r.local, r.plain, str(r.at("D"))
    ("'Electrodes'!$C$9", '$C$9', 'C9', "'Electrodes'!$D$9")
    """

    sheet: str
    column: str
    row: int

    def __str__(self) -> str:
        return f"{quote(self.sheet)}!{self.local}"

    @property
    def local(self) -> str:
        """``$C$9``: the address on its own sheet."""
        return f"${self.column}${self.row}"

    @property
    def plain(self) -> str:
        """``C9``: the address without ``$`` (data validation, array ranges)."""
        return f"{self.column}{self.row}"

    def at(self, column: str) -> Ref:
        """The cell in ``column`` of the same row."""
        return Ref(self.sheet, column, self.row)


@dataclass(frozen=True)
class Name:
    """A typed reference to a defined name (an input, an output, a list):
    ``str(name)`` is the name as a formula writes it.

    >>> f"={Name('in_np_ratio')}*2"
    '=in_np_ratio*2'
    """

    name: str

    def __str__(self) -> str:
        return self.name


@dataclass(frozen=True)
class Columns:
    """Which column holds labels, values, units and notes on a list-style sheet."""

    label: str = "B"
    value: str = "C"
    unit: str = "D"
    note: str = "E"


def validate(ws: Worksheet, inp: Input, ref: str) -> None:
    """Attach the input's data validation (from its declaration) to ``ref``."""
    ws.add_data_validation(data_validation(inp, ref))


class SheetWriter:
    """Writes labelled rows top to bottom: titles, sections, inputs, results."""

    def __init__(
        self, wb: Workbook, ws: Worksheet, cols: Columns, widths: dict[str, float] | None = None
    ) -> None:
        self.wb, self.ws, self.cols, self.row = wb, ws, cols, 1
        self.widths = dict(widths or {})
        for col, width in self.widths.items():
            ws.column_dimensions[col].width = width

    def span_chars(self, first: str, span: int) -> float:
        """Characters that fit on one line across ``span`` columns from ``first``."""
        start = self.ws[f"{first}1"].column
        return sum(
            self.widths.get(get_column_letter(start + k), 8.43) for k in range(span)
        )

    def here(self, column: str) -> Ref:
        """The cell of ``column`` in the current row."""
        return Ref(self.ws.title, column, self.row)

    def skip(self, rows: int = 1) -> None:
        self.row += rows

    def title(self, text: str, subtitle: str | None = None) -> None:
        c = self.ws[f"{self.cols.label}{self.row}"]
        c.value = text
        c.font = Font(bold=True, size=16, color=PALETTE["section_ink"])
        self.row += 1
        if subtitle:
            self.text(subtitle, kind="hint")

    def text(
        self, text: str, kind: Kind = "text", span: int = 4, height: float | None = None
    ) -> None:
        """A paragraph across ``span`` columns starting at the label column."""
        start = self.cols.label
        end = get_column_letter(self.ws[f"{start}1"].column + span - 1)
        c = self.ws[f"{start}{self.row}"]
        c.value = text
        style(c, kind)
        c.alignment = Alignment(vertical="top", wrap_text=True)
        if span > 1:
            self.ws.merge_cells(f"{start}{self.row}:{end}{self.row}")
        lines = -(-len(text) // max(int(self.span_chars(start, span) * 0.95), 1))
        if height or lines > 1:
            self.ws.row_dimensions[self.row].height = max(height or 0.0, 15.0 * lines)
        self.row += 1

    def caution(self, text: str, span: int = 4, height: float = 45.0) -> None:
        start = self.cols.label
        c = self.ws[f"{start}{self.row}"]
        self.text(text, span=span, height=height)
        c.font = Font(color=PALETTE["caution_ink"], bold=True, size=10)
        colour = PALETTE["caution_fill"]
        c.fill = PatternFill("solid", start_color=colour, end_color=colour)

    def section(self, text: str) -> None:
        self.row += 1
        c = self.ws[f"{self.cols.label}{self.row}"]
        c.value = text
        c.font = Font(bold=True, size=12, color=PALETTE["section_ink"])
        c.border = Border(bottom=Side(style="medium", color=PALETTE["section_ink"]))
        self.row += 1

    def band(self, labels: Sequence[str], first: str | None = None) -> None:
        """A header band of table column titles starting at column ``first``."""
        col = self.ws[f"{first or self.cols.label}1"].column
        for k, label in enumerate(labels):
            style(self.ws.cell(self.row, col + k, label), "band")
        self.ws.row_dimensions[self.row].height = 30.0
        self.row += 1

    def input(self, inp: Input, value: float | str | None = None) -> Ref:
        """Write an input row from its declaration (label, default or ``value``,
        unit, hint, data validation); define its name; return its cell."""
        ws, cols = self.ws, self.cols
        ws[f"{cols.label}{self.row}"] = inp.label
        style(ws[f"{cols.label}{self.row}"], "text")
        cell = ws[f"{cols.value}{self.row}"]
        cell.value = inp.default if value is None else value
        style(cell, "input", inp.fmt)
        ws[f"{cols.unit}{self.row}"] = unit_formula(inp)
        style(ws[f"{cols.unit}{self.row}"], "unit")
        ws[f"{cols.note}{self.row}"] = inp.hint
        style(ws[f"{cols.note}{self.row}"], "hint")
        ref = Ref(ws.title, cols.value, self.row)
        if not isinstance(inp.domain, FreeText):
            validate(ws, inp, ref.plain)
        add_name(self.wb, inp.name, ws, ref.local)
        self.row += 1
        return ref

    def value(
        self,
        label: str,
        formula: str,
        unit: str,
        note: str = "",
        kind: Kind = "calc",
        number_format: str | None = None,
        name: str | None = None,
    ) -> Ref:
        """Write a computed row (native formula, CW_ look-up or key result)."""
        ws, cols = self.ws, self.cols
        ws[f"{cols.label}{self.row}"] = label
        style(ws[f"{cols.label}{self.row}"], "text")
        style(ws[f"{cols.value}{self.row}"], kind, number_format).value = formula
        ws[f"{cols.unit}{self.row}"] = unit
        style(ws[f"{cols.unit}{self.row}"], "unit")
        if note:
            ws[f"{cols.note}{self.row}"] = note
            style(ws[f"{cols.note}{self.row}"], "hint")
        ref = Ref(ws.title, cols.value, self.row)
        if name:
            add_name(self.wb, name, ws, ref.local)
        self.row += 1
        return ref


def add_colour_scale(ws: Worksheet, area: str, high_is_good: bool = False) -> None:
    """Three-colour scale over ``area``: sage for the good end, cream in the
    middle, coral for the bad end (low is good unless ``high_is_good``)."""
    good, bad = PALETTE["grid_low"], PALETTE["grid_high"]
    low, high = (bad, good) if high_is_good else (good, bad)
    ws.conditional_formatting.add(
        area,
        ColorScaleRule(
            start_type="min",
            start_color=low,
            mid_type="percentile",
            mid_value=50,
            mid_color=PALETTE["grid_mid"],
            end_type="max",
            end_color=high,
        ),
    )


def bar_chart(
    horizontal: bool,
    data: Reference,
    categories: Reference,
    axis_title: str,
    number_format: str,
    colour: str,
    size: tuple[float, float],
) -> BarChart:
    """A one-series bar chart in the palette; its title is left to a cell above it
    (a sheet heading reads better on a projector than a chart title)."""
    chart = BarChart()
    chart.type = "bar" if horizontal else "col"
    chart.style = 10
    chart.legend = None
    chart.add_data(data, titles_from_data=False)
    chart.set_categories(categories)
    chart.y_axis.title = axis_title
    chart.y_axis.numFmt = number_format
    chart.x_axis.delete = False
    chart.y_axis.delete = False
    if horizontal:
        chart.x_axis.scaling.orientation = "maxMin"  # first row at the top
    chart.series[0].graphicalProperties.solidFill = colour
    chart.series[0].graphicalProperties.line.solidFill = colour
    chart.gapWidth = 60
    chart.height, chart.width = size
    for axis in (chart.x_axis, chart.y_axis):
        axis.txPr = axis_text(1000)
    return chart


def axis_text(size: int) -> RichText:
    """Axis label text of ``size`` hundredths of a point (1000 = 10 pt)."""
    props = CharacterProperties(sz=size)
    return RichText(p=[Paragraph(pPr=ParagraphProperties(defRPr=props), endParaRPr=props)])


def value_labels(chart: BarChart, number_format: str) -> None:
    """Data labels that show only the value (no series or category names)."""
    labels = DataLabelList()
    labels.showVal = True
    labels.showSerName = False
    labels.showCatName = False
    labels.showLegendKey = False
    labels.showPercent = False
    labels.numFmt = number_format
    chart.dataLabels = labels


def finish_sheet(
    ws: Worksheet,
    landscape: bool = False,
    first_cell: str | None = None,
    protect: bool = True,
    freeze: str | None = None,
) -> None:
    """Print set-up (A4, fit to one page wide and tall), no gridlines, sheet
    protection without a password, frozen panes and the active cell."""
    ws.sheet_view.showGridLines = False
    ws.page_setup.paperSize = ws.PAPERSIZE_A4
    ws.page_setup.orientation = "landscape" if landscape else "portrait"
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 1
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.print_options.horizontalCentered = True
    ws.page_margins.left = ws.page_margins.right = 0.5
    ws.page_margins.top = ws.page_margins.bottom = 0.6
    ws.oddFooter.center.text = "&A - page &P of &N"
    ws.oddFooter.right.text = "cellwright: estimates only"
    if protect:
        ws.protection.sheet = True
        ws.protection.formatColumns = False
        ws.protection.formatRows = False
    if freeze:
        ws.freeze_panes = freeze
    if first_cell:
        for selection in ws.sheet_view.selection:  # one per pane when panes are frozen
            selection.activeCell = first_cell
            selection.sqref = first_cell
