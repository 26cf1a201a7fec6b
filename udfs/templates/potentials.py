"""The potentials workbook: two electrodes from the catalogue's couples, their
Nernst potentials at the given activities and temperature, which one is the
cathode, the open-circuit voltage and the reaction Gibbs energy, and a chart of
potential against activity over six decades.

>>> wb = build_potentials()
>>> wb.sheetnames
['Potentials', 'Sweep', 'Notes', 'Lists']
"""

from __future__ import annotations

from typing import Any

from openpyxl import Workbook
from openpyxl.chart import Reference, ScatterChart, Series

from ..core import catalogue
from .layout import (
    PALETTE,
    Choice,
    Columns,
    Field,
    Kind,
    Number,
    SheetWriter,
    add_name,
    finish_sheet,
    heading,
    quote,
    style,
    validation,
)
from .notes import CAUTION, legend, write_notes

__all__ = ["SPECIES_ROWS", "build_potentials"]

#: Species rows per electrode (name and activity).
SPECIES_ROWS = 4

_DEFAULTS = (
    ("Cu2+/Cu", (("Cu2+", 0.01),)),
    ("Zn2+/Zn", (("Zn2+", 1.0),)),
)

#: Decades of the sweep: log10(activity) from -6 to 0 in half-decade steps.
SWEEP = tuple(-6.0 + 0.5 * i for i in range(13))


def _lists(wb: Workbook) -> None:
    ws = wb.create_sheet("Lists")
    ws["A1"] = "Couples of the catalogue (written by the template builder)"
    ids = catalogue.couple_ids()
    style(ws["A3"], "band").value = "couple"
    for i, cid in enumerate(ids):
        ws[f"A{4 + i}"] = cid
    add_name(wb, "list_couple", ws, f"$A$4:$A${3 + len(ids)}")
    ws.column_dimensions["A"].width = 22
    ws.sheet_state = "hidden"
    ws.protection.sheet = True


def _electrons(text_ref: str) -> str:
    """Electrons of a half-reaction read from its text ('... + 2e- = ...'; 'e-' is 1)."""
    word = f'TRIM(RIGHT(SUBSTITUTE(LEFT({text_ref},FIND("e-",{text_ref})-1)," ",REPT(" ",20)),20))'
    return f'=IF({word}="",1,VALUE({word}))'


def _activities(col: str, first: int, rows: range) -> str:
    """Native text 'species=value; ...' from the species rows (blank species skipped)."""
    parts = []
    for k in rows:
        sp, val = f"{col}{first + 2 * k}", f"{col}{first + 2 * k + 1}"
        parts.append(f'IF(ISBLANK({sp}),"",{sp}&"="&{val}&"; ")')
    return "=" + "&".join(parts) if parts else '=""'


def build_potentials() -> Workbook:
    """The potentials template as a new openpyxl workbook."""
    wb = Workbook()
    ws = wb.active
    ws.title = "Potentials"
    w = SheetWriter(
        wb, ws, Columns(label="B", value="C", unit="E", note="F"),
        {"A": 2.5, "B": 38.0, "C": 22.0, "D": 22.0, "E": 12.0, "F": 58.0},
    )
    w.title(
        "Electrode potentials and open-circuit voltage",
        "Pick two couples, give the activities that differ from the standard state, read the "
        "potentials (Nernst, V vs SHE), the cathode, the OCV and dG. The Sweep sheet charts them.",
    )
    w.caution(CAUTION, span=5, height=32.0)
    legend(w)
    w.section("Conditions")
    w.input(Field("in_temp_C", "Temperature", 25.0, "degC",
                  "Both electrodes; E0 shifts by its dE0/dT where the catalogue has one.",
                  Number(lo=-273.15, lo_open=True), "0.0"))

    w.section("Electrodes")
    w.band(["", "Electrode 1", "Electrode 2", "Unit", "Hint"])
    ref: dict[str, tuple[str, str]] = {}

    def pair_inputs(key: str, label: str, values: tuple[Any, ...], unit: str, hint: str,
                    check: Number | Choice | None, fmt: str | None = None) -> None:
        row = w.row
        style(ws[f"B{row}"], "text").value = label
        refs = []
        for k, col in enumerate("CD"):
            cell = ws[f"{col}{row}"]
            cell.value = values[k]
            style(cell, "input", fmt)
            if check is not None:
                validation(ws, f"{col}{row}", check, label, hint)
            add_name(wb, f"in_{key}_{k + 1}", ws, f"${col}${row}")
            refs.append(f"${col}${row}")
        style(ws[f"E{row}"], "unit").value = unit
        style(ws[f"F{row}"], "hint").value = hint
        ref[key] = (refs[0], refs[1])
        w.row += 1

    def pair_calc(key: str, label: str, formulas: tuple[str, ...], unit: str, hint: str,
                  kind: Kind = "calc", fmt: str | None = None) -> None:
        row = w.row
        style(ws[f"B{row}"], "text").value = label
        for k, col in enumerate("CD"):
            style(ws[f"{col}{row}"], kind, fmt).value = formulas[k]
        style(ws[f"E{row}"], "unit").value = unit
        style(ws[f"F{row}"], "hint").value = hint
        ref[key] = (f"$C${row}", f"$D${row}")
        w.row += 1

    pair_inputs("couple", "Couple", (_DEFAULTS[0][0], _DEFAULTS[1][0]), "id",
                "Pick a couple of the catalogue (oxidised/reduced form).", Choice("list_couple"))
    c1, c2 = ref["couple"]
    pair_calc("reaction", "Half-reaction", (f"=CW_HALF_REACTION({c1})",
                                            f"=CW_HALF_REACTION({c2})"),
              "", "as written in the catalogue (reduction)", "lookup")
    first_species = w.row
    for k in range(SPECIES_ROWS):
        names = tuple(d[1][k][0] if k < len(d[1]) else None for d in _DEFAULTS)
        values = tuple(d[1][k][1] if k < len(d[1]) else None for d in _DEFAULTS)
        pair_inputs(f"species{k + 1}", f"Species {k + 1}", names, "name",
                    "A species of the half-reaction, or pH; blank rows are skipped."
                    if k == 0 else "Optional.", None)
        pair_inputs(f"activity{k + 1}", f"Activity of species {k + 1}", values,
                    "mol/L, bar, pH",
                    "Dissolved: mol/L; gases: bar; 'pH' takes the pH. Pure solids: leave out."
                    if k == 0 else "Optional.",
                    Number(lo=0, lo_open=True, blank_ok=True), "0.000E+00" if k else "General")
    text = tuple(_activities(col, first_species, range(SPECIES_ROWS)) for col in "CD")
    rest = tuple(_activities(col, first_species, range(1, SPECIES_ROWS)) for col in "CD")
    pair_calc("acts", "Activities passed on", text, "text",
              "built from the rows above; other species at their standard state")
    pair_calc("rest", "Activities kept in the sweep", rest, "text",
              "species 2 to 4 (species 1 is swept on the Sweep sheet)")
    a1, a2 = ref["acts"]
    pair_calc("e0", "Standard potential at the temperature",
              (f"=CW_E0({c1},in_temp_C)", f"=CW_E0({c2},in_temp_C)"), "V vs SHE",
              "E0 + dE0/dT x (T - 25 degC) where tabulated", "lookup", "0.0000")
    pair_calc("E", "Electrode potential",
              (f"=CW_POTENTIAL({c1},{a1},in_temp_C)", f"=CW_POTENTIAL({c2},{a2},in_temp_C)"),
              "V vs SHE", "Nernst: E0 - (ln10 R T / n F) log10 Q", "result", "0.0000")
    e1, e2 = ref["E"]
    add_name(wb, "out_E1_V", ws, e1)
    add_name(wb, "out_E2_V", ws, e2)
    r1, r2 = ref["reaction"]
    pair_calc("n", "Electrons in the half-reaction", (_electrons(r1), _electrons(r2)), "",
              "read from the half-reaction text", fmt="0")
    n1, n2 = ref["n"]

    w.section("Cell made of the two electrodes")
    cath = w.value("Cathode (higher potential)", f"=IF({e1}>={e2},{c1},{c2})", "id",
                   "reduction happens here on discharge", "result", name="out_cathode")
    anode = w.value("Anode (lower potential)", f"=IF({e1}>={e2},{c2},{c1})", "id",
                    "oxidation happens here on discharge", "result", name="out_anode")
    ocv = w.value(
        "Open-circuit voltage",
        f"=CW_OCV({cath},{anode},IF({e1}>={e2},{a1},{a2}),IF({e1}>={e2},{a2},{a1}),in_temp_C)",
        "V", "E(cathode) - E(anode), CW_OCV", "result", "0.0000", name="out_ocv_V",
    )
    w.value("Difference of the two potentials", f"=ABS({e1}-{e2})", "V",
            "native check: equals the OCV", number_format="0.0000")
    n = w.value("Electrons in the cell reaction", f"=LCM({n1},{n2})", "",
                "least common multiple of the two half-reactions", number_format="0")
    w.value("Reaction Gibbs energy", f"=CW_GIBBS({ocv},{n})", "kJ/mol",
            "-n F E for the cell reaction with n electrons; negative: runs by itself", "result",
            "0.00", name="out_dG_kJ_mol")
    w.value("Gibbs energy per mole of electrons", f'=-CW_CONSTANT("F")*{ocv}/1000', "kJ/mol e-",
            "-F x OCV (F from CODATA 2018)", number_format="0.00")
    finish_sheet(ws, first_cell=ref["couple"][0].replace("$", ""), freeze="A5")

    _sweep(wb, ref)
    write_notes(
        wb,
        "Notes: method, sources and cautions",
        [
            "Nernst equation: E = E0(T) - (ln10 R T / n F) log10 Q, with Q the activities of "
            "the reduced side over those of the oxidised side, each to its coefficient. "
            "Species not given are at their standard state (1 mol/L, 1 bar); pure solids and "
            "water have activity 1; pH sets H+ (or OH- through Kw).",
            "Concentrations stand in for activities: no activity coefficients. Dilute "
            "solutions only; strong electrolytes deviate.",
            "The electrode with the higher potential is the cathode; OCV = E(cathode) - "
            "E(anode); dG = -n F OCV with n the least common multiple of the two "
            "half-reactions' electrons.",
            "E0 are CRC values at 25 degC; dE0/dT where tabulated comes from NBS entropies.",
        ],
        [
            "No kinetics: overpotentials, mixed potentials, passivation and junction "
            "potentials are not included, so a working cell shows less than the OCV.",
            "Gassing couples (H2, O2, Cl2) release flammable, oxidising or toxic gas when "
            "driven; ventilate and follow the applicable codes.",
        ],
        [
            ("Electrode 1 E0", "=CW_SOURCE(in_couple_1)"),
            ("Electrode 2 E0", "=CW_SOURCE(in_couple_2)"),
        ],
    )
    _lists(wb)
    wb.active = 0
    return wb


def _sweep(wb: Workbook, ref: dict[str, tuple[str, str]]) -> None:
    """Potential of each electrode against the activity of its species 1."""
    ws = wb.create_sheet("Sweep")
    w = SheetWriter(
        wb, ws, Columns(),
        {"A": 2.5, "B": 14.0, "C": 14.0, "D": 24.0, "E": 24.0, "F": 12.0},
    )
    p = quote("Potentials")
    w.title(
        "Potential against activity",
        "Species 1 of each electrode swept over six decades; the other species as given.",
    )
    w.skip()
    w.band(["log10 activity", "Activity", "Electrode 1", "Electrode 2", "|E1 - E2|"])
    c1, c2 = (f"{p}!{x}" for x in ref["couple"])
    s1, s2 = (f"{p}!{x}" for x in ref["species1"])
    k1, k2 = (f"{p}!{x}" for x in ref["rest"])
    row = w.row
    style(ws[f"B{row}"], "unit").value = ""
    style(ws[f"C{row}"], "unit").value = "mol/L, bar"
    style(ws[f"D{row - 1}"], "band")
    style(ws[f"D{row}"], "hint").value = f'={c1}&" ("&{s1}&" swept)"'
    style(ws[f"E{row}"], "hint").value = f'={c2}&" ("&{s2}&" swept)"'
    style(ws[f"F{row}"], "unit").value = "V"
    first = row + 1
    for i, lg in enumerate(SWEEP):
        r = first + i
        style(ws[f"B{r}"], "calc", "0.0").value = lg
        style(ws[f"C{r}"], "calc", "0.0E+00").value = f"=10^B{r}"
        for col, c, s, k in (("D", c1, s1, k1), ("E", c2, s2, k2)):
            style(ws[f"{col}{r}"], "lookup", "0.0000").value = (
                f'=IF(ISBLANK({s}),NA(),CW_POTENTIAL({c},{s}&"="&C{r}&"; "&{k},in_temp_C))'
            )
        style(ws[f"F{r}"], "calc", "0.0000").value = f"=ABS(D{r}-E{r})"
    last = first + len(SWEEP) - 1
    chart = ScatterChart()
    chart.style = 13
    chart.x_axis.title = "Activity of species 1 (log scale)"
    chart.y_axis.title = "Potential, V vs SHE"
    chart.x_axis.scaling.logBase = 10
    chart.x_axis.number_format = "0.0E+00"
    chart.x_axis.delete = False
    chart.x_axis.tickLblPos = "low"  # labels under the plot, not at y = 0
    chart.y_axis.delete = False
    xs = Reference(ws, min_col=3, min_row=first, max_row=last)
    for column, colour in ((4, PALETTE["band_fill"]), (5, PALETTE["input_edge"])):
        ys = Reference(ws, min_col=column, min_row=first - 1, max_row=last)
        series = Series(ys, xs, title_from_data=True)
        series.marker.symbol = "circle"
        series.graphicalProperties.line.solidFill = colour
        series.marker.graphicalProperties.solidFill = colour
        chart.series.append(series)
    chart.legend.position = "b"
    chart.height, chart.width = 10.0, 14.0
    heading(ws[f"H{first - 2}"], "Electrode potentials against the activity of species 1")
    ws.add_chart(chart, f"H{first - 1}")
    finish_sheet(ws, landscape=True)
