"""The potentials workbook: two electrodes from the catalogue's couples, their
Nernst potentials at the given activities and temperature, which one is the
cathode, the open-circuit voltage and the reaction Gibbs energy, and a chart of
potential against activity over six decades.

>>> wb = build_potentials()
>>> wb.sheetnames
['Potentials', 'Sweep', 'Notes', 'Lists']
"""

from __future__ import annotations

from openpyxl import Workbook
from openpyxl.chart import Reference, ScatterChart, Series

from ..core.input_tables import POTENTIALS, SPECIES_ROWS
from ..core.validate import FreeText, Names
from .input_rules import list_name
from .layout import (
    PALETTE,
    Columns,
    Kind,
    Ref,
    SheetWriter,
    add_name,
    finish_sheet,
    heading,
    style,
    validate,
)
from .notes import CAUTION, legend, write_notes

__all__ = ["SPECIES_ROWS", "build_potentials"]

#: Decades of the sweep: log10(activity) from -6 to 0 in half-decade steps.
SWEEP = tuple(-6.0 + 0.5 * i for i in range(13))


def _lists(wb: Workbook) -> None:
    ws = wb.create_sheet("Lists")
    ws["A1"] = "Couples of the catalogue (written by the template builder)"
    names = POTENTIALS.get("in_couple_1").domain
    assert isinstance(names, Names)
    ids = names.names()
    style(ws["A3"], "band").value = "couple"
    for i, cid in enumerate(ids):
        ws[f"A{4 + i}"] = cid
    add_name(wb, list_name(names), ws, f"$A$4:$A${3 + len(ids)}")
    ws.column_dimensions["A"].width = 22
    ws.sheet_state = "hidden"
    ws.protection.sheet = True


def _electrons(text_ref: Ref) -> str:
    """Electrons of a half-reaction read from its text ('... + 2e- = ...'; 'e-' is 1)."""
    word = f'TRIM(RIGHT(SUBSTITUTE(LEFT({text_ref},FIND("e-",{text_ref})-1)," ",REPT(" ",20)),20))'
    return f'=IF({word}="",1,VALUE({word}))'


def _activities(rows: list[tuple[Ref, Ref]]) -> str:
    """Native text 'species=value; ...' from (species, activity) cells (blank species skipped)."""
    parts = [f'IF(ISBLANK({sp}),"",{sp}&"="&{val}&"; ")' for sp, val in rows]
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
    w.input(POTENTIALS.get("in_temp_C"))

    w.section("Electrodes")
    w.band(["", "Electrode 1", "Electrode 2", "Unit", "Hint"])
    Pair = tuple[Ref, Ref]

    def pair_inputs(key: str) -> Pair:
        """One row of the two electrodes' inputs ``in_{key}_1`` and ``in_{key}_2``."""
        row = w.row
        pair = [POTENTIALS.get(f"in_{key}_{e}") for e in (1, 2)]
        style(ws[f"B{row}"], "text").value = pair[0].label
        refs = []
        for inp, col in zip(pair, "CD", strict=True):
            ref = Ref(ws.title, col, row)
            style(ws[ref.plain], "input", inp.fmt).value = inp.default
            if not isinstance(inp.domain, FreeText):
                validate(ws, inp, ref.plain)
            add_name(wb, inp.name, ws, ref.local)
            refs.append(ref)
        style(ws[f"E{row}"], "unit").value = pair[0].unit
        style(ws[f"F{row}"], "hint").value = pair[0].hint
        w.row += 1
        return refs[0], refs[1]

    def pair_calc(label: str, formulas: tuple[str, str], unit: str, hint: str,
                  kind: Kind = "calc", fmt: str | None = None) -> Pair:
        row = w.row
        style(ws[f"B{row}"], "text").value = label
        for k, col in enumerate("CD"):
            style(ws[f"{col}{row}"], kind, fmt).value = formulas[k]
        style(ws[f"E{row}"], "unit").value = unit
        style(ws[f"F{row}"], "hint").value = hint
        w.row += 1
        return Ref(ws.title, "C", row), Ref(ws.title, "D", row)

    c1, c2 = couples = pair_inputs("couple")
    r1, r2 = pair_calc("Half-reaction", (f"=CW_HALF_REACTION({c1})", f"=CW_HALF_REACTION({c2})"),
                       "", "as written in the catalogue (reduction)", "lookup")
    species: list[tuple[Pair, Pair]] = []  # (species, activity) of each row
    for k in range(1, SPECIES_ROWS + 1):
        species.append((pair_inputs(f"species{k}"), pair_inputs(f"activity{k}")))

    def rows(e: int, first: int) -> list[tuple[Ref, Ref]]:
        return [(sp[e], act[e]) for sp, act in species[first:]]

    a1, a2 = pair_calc("Activities passed on", (_activities(rows(0, 0)), _activities(rows(1, 0))),
                       "text", "built from the rows above; other species at their standard state")
    rest = pair_calc("Activities kept in the sweep",
                     (_activities(rows(0, 1)), _activities(rows(1, 1))), "text",
                     "species 2 to 4 (species 1 is swept on the Sweep sheet)")
    pair_calc("Standard potential at the temperature",
              (f"=CW_E0({c1},in_temp_C)", f"=CW_E0({c2},in_temp_C)"), "V vs SHE",
              "E0 + dE0/dT x (T - 25 degC) where tabulated", "lookup", "0.0000")
    e1, e2 = pair_calc(
        "Electrode potential",
        (f"=CW_POTENTIAL({c1},{a1},in_temp_C)", f"=CW_POTENTIAL({c2},{a2},in_temp_C)"),
        "V vs SHE", "Nernst: E0 - (ln10 R T / n F) log10 Q", "result", "0.0000")
    add_name(wb, "out_E1_V", ws, e1.local)
    add_name(wb, "out_E2_V", ws, e2.local)
    n1, n2 = pair_calc("Electrons in the half-reaction", (_electrons(r1), _electrons(r2)), "",
                       "read from the half-reaction text", fmt="0")

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
    finish_sheet(ws, first_cell=c1.plain, freeze="A5")

    _sweep(wb, couples, species[0][0], rest)
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


def _sweep(wb: Workbook, couples: tuple[Ref, Ref], species1: tuple[Ref, Ref],
           rest: tuple[Ref, Ref]) -> None:
    """Potential of each electrode against the activity of its species 1."""
    ws = wb.create_sheet("Sweep")
    w = SheetWriter(
        wb, ws, Columns(),
        {"A": 2.5, "B": 14.0, "C": 14.0, "D": 24.0, "E": 24.0, "F": 12.0},
    )
    w.title(
        "Potential against activity",
        "Species 1 of each electrode swept over six decades; the other species as given.",
    )
    w.skip()
    w.band(["log10 activity", "Activity", "Electrode 1", "Electrode 2", "|E1 - E2|"])
    c1, c2 = couples
    s1, s2 = species1
    k1, k2 = rest
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
