"""Shared text of the templates: references, cautions and the colour key.

>>> "NITTA2015" in dict(REFERENCES)
True
"""

from __future__ import annotations

from openpyxl.styles import Font, Protection
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from udfs.core.caution import CAUTION

from .layout import PALETTE, Columns, SheetWriter, finish_sheet, style

__all__ = ["CAUTION", "REFERENCES", "legend", "write_notes"]


#: Short keys (as cited in data/ and tests) and the works they stand for.
REFERENCES: tuple[tuple[str, str], ...] = (
    ("CODATA2018", "E. Tiesinga et al., CODATA recommended values of the fundamental physical "
                   "constants: 2018, Rev. Mod. Phys. 93, 025010 (2021). F and R."),
    ("IUPAC2021", "T. Prohaska et al., Standard atomic weights of the elements 2021, Pure Appl. "
                  "Chem. 94, 573 (2022). Molar masses and mass fractions."),
    ("CRC-ECS", "P. Vanysek, Electrochemical Series, CRC Handbook of Chemistry and Physics, "
                "97th ed. (2016). Standard potentials at 25 degC."),
    ("CRC-HCP", "W. M. Haynes (ed.), CRC Handbook of Chemistry and Physics, 97th ed. (2016). "
                "Densities of metals."),
    ("NBS1982", "D. D. Wagman et al., The NBS tables of chemical thermodynamic properties, "
                "J. Phys. Chem. Ref. Data 11, Suppl. 2 (1982). dfH, dfG, S0; dE0/dT."),
    ("NITTA2015", "N. Nitta, F. Wu, J. T. Lee, G. Yushin, Li-ion battery materials: present "
                  "and future, Materials Today 18, 252 (2015). Capacities and voltages."),
    ("OBROVAC2004", "M. N. Obrovac, L. Christensen, Electrochem. Solid-State Lett. 7, A93 "
                    "(2004). Silicon capacity basis."),
    ("LINDEN", "T. B. Reddy (ed.), Linden's Handbook of Batteries, 4th ed. (2011), Tables 1.1 "
               "and 1.2. Aqueous electrode materials."),
    ("common practice", "Typical figures of the trade without a single published source; "
                        "each catalogue row's note gives a range."),
    ("demo data", "Invented numbers (prices, the demo company and product); not quotations."),
)


def legend(w: SheetWriter) -> None:
    """One row showing the four kinds of value cells in the palette."""
    ws, row = w.ws, w.row
    start = ws[f"{w.cols.label}1"].column
    labels = (
        ("input", "Input"),
        ("lookup", "Catalogue (CW_)"),
        ("calc", "Formula"),
        ("result", "Key result"),
    )
    for k, (kind, text) in enumerate(labels):
        cell = ws.cell(row, start + k, text)
        style(cell, kind)  # type: ignore[arg-type]
        cell.protection = Protection(locked=True)
    w.row += 1


def write_notes(
    wb: Workbook,
    title: str,
    method: list[str],
    cautions: list[str],
    live_sources: list[tuple[str, str]] | None = None,
) -> Worksheet:
    """A Notes sheet: method, colour key, references, live CW_SOURCE look-ups, cautions."""
    ws = wb.create_sheet("Notes")
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"),
                    {"A": 2.5, "B": 34.0, "C": 96.0})
    w.title(title)
    w.section("Method")
    for line in method:
        w.text(line, span=2)
    w.section("Colour key")
    legend(w)
    w.text(
        "Inputs are unlocked; everything else is locked (sheet protection without a password: "
        "Review > Unprotect Sheet to change a formula).",
        span=2,
    )
    if live_sources:
        w.section("Sources of the values in use (live look-ups)")
        for label, formula in live_sources:
            ws[f"B{w.row}"] = label
            style(ws[f"B{w.row}"], "text")
            style(ws[f"C{w.row}"], "lookup").value = formula
            w.row += 1
    w.section("References")
    for key, ref in REFERENCES:
        ws[f"B{w.row}"] = key
        style(ws[f"B{w.row}"], "text").font = Font(bold=True, color=PALETTE["ink"])
        ws[f"C{w.row}"] = ref
        style(ws[f"C{w.row}"], "hint")
        w.row += 1
    w.section("Cautions")
    for line in [CAUTION, *cautions]:
        w.caution(line, span=2, height=48.0)
    finish_sheet(ws)
    return ws
