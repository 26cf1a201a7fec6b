"""The Checks block of the cell-sizing workbook: errors (the model cannot
compute) and warnings (the design rules of :mod:`udfs.core.design_rules`: an
implausible or unsafe design), each in one cell with a defined name.

Convention (``cellwright calc`` lists them; ``--strict`` fails on a warning):
a rule's cell is named ``err_<rule>`` or ``warn_<rule>``; it is empty when the
rule is quiet and holds the message when it fires, with the bound and the
bound's source. ``out_checks`` says ``all checks pass`` only when every one of
them is empty. Bounds are the ``in_rule_...`` inputs (or, where blank, the
chemistry's usual range in the catalogue, whose source ``CW_SOURCE`` reads).

>>> [r.name for r in RULES][:3]
['err_inputs', 'err_catalogue', 'err_fractions']
>>> ALL_PASS
'all checks pass'
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from openpyxl.styles import Alignment

from ..core.design_rules import ALL_PASS
from ..core.sizing_table import CELL_SIZING, SIDES
from .layout import Ref, add_name, style
from .sizing_inputs import IN_USE, InputsSheet, lit
from .sizing_sheets import ElectrodeCells

__all__ = ["ALL_PASS", "RULES", "CheckRule", "write_checks"]


@dataclass(frozen=True)
class CheckRule:
    """One row of the Checks block: its defined name, level, what it checks
    and the inputs that hold its bounds."""

    name: str
    level: str
    checks: str
    bounds: str = ""


RULES: tuple[CheckRule, ...] = (
    CheckRule("err_inputs", "error", "every input within its allowed range (column F)"),
    CheckRule("err_catalogue", "error", "blank inputs the catalogue can fill (column G)"),
    CheckRule("err_fractions", "error", "active + binder fractions at most 1"),
    CheckRule("err_binders", "error", "binder names and shares"),
    CheckRule("err_voltage", "error", "a nominal voltage"),
    CheckRule("err_capacity", "error", "a reversible capacity above 0"),
    CheckRule("err_fit", "error", "the electrodes fit the format (Format sheet)"),
    CheckRule("err_prices", "error", "every price known and convertible to USD/kg"),
    CheckRule("err_order", "error", "a whole number of cells ordered"),
    CheckRule("err_pack", "error", "a series count fits the pack's voltage window"),
    CheckRule("err_results", "error", "the key results are numbers"),
    CheckRule("warn_plating", "warning", "N/P on the first-charge basis (lithium plating)",
              "in_rule_np_min"),
    CheckRule("warn_dry_pores", "warning", "electrolyte fill of the pore volume",
              "in_rule_fill_min"),
    *(CheckRule(f"warn_porosity_{s}", "warning", f"{s} porosity near the recipe's",
                "in_rule_porosity_band") for s in SIDES),
    *(CheckRule(f"warn_loading_{s}", "warning", f"{s} loading in the usual range",
                f"in_rule_{s}_loading_min, in_rule_{s}_loading_max") for s in SIDES),
    *(CheckRule(f"warn_thickness_{s}", "warning", f"{s} coating thickness in the usual range",
                f"in_rule_{s}_thickness_min, in_rule_{s}_thickness_max") for s in SIDES),
    CheckRule("warn_voltage_nominal", "warning", "nominal voltage within the cell's limits"),
    CheckRule("warn_voltage_window", "warning", "cell limits within the couple's window",
              "in_rule_voltage_margin"),
    CheckRule("warn_catalogue", "warning", "materials the catalogue fully describes"),
)


def _source(name: str) -> str:
    return CELL_SIZING.get(name).source


def _num(x: str) -> str:
    return f"ROUND({x},4)"


def _joined(terms: Sequence[str], lead: str) -> str:
    """``lead`` and the terms joined, or "" when every term is ""."""
    if not terms:
        return '""'
    text = "&".join(terms)
    return f'IF({text}="","",{lit(lead)}&{text})'


def _quiet(formula: str) -> str:
    """A warning is quiet when its inputs cannot be read (an error says why)."""
    return f'=IFERROR({formula},"")'


def _bound_basis(side: str, what: str, end: str) -> str:
    """Where a usual-range bound comes from: the input, else the catalogue row."""
    name = f"in_rule_{side}_{what}_{end}"
    prop = f"electrode_{what}_{end}"
    return (f'IF(ISBLANK({name}),mat_{side}&" {prop}: "&CW_SOURCE(mat_{side},"{prop}"),'
            f'"{name} given")')


def _range_warning(side: str, what: str, value: str, unit: str) -> str:
    lo, hi = (f"use_rule_{side}_{what}_{end}" for end in ("min", "max"))
    label = "coating thickness" if what == "thickness" else what
    return _quiet(
        f"IF(AND(ISNUMBER({lo}),ISNUMBER({hi})),IF(OR({value}<{lo},{value}>{hi}),"
        f'"{side} {label} "&{_num(value)}&" {unit} is outside the usual "&{_num(lo)}&"-"&{_num(hi)}'
        f'&" {unit} ("&{_bound_basis(side, what, "min")}&"; "&{_bound_basis(side, what, "max")}'
        f'&")",""),"")')


def _formulas(s: InputsSheet, e: ElectrodeCells, bom_problems: Sequence[Ref],
              fits: Sequence[Ref], pack_fit: Ref) -> dict[str, str]:
    c, a = e.cathode, e.anode
    out: dict[str, str] = {}
    problems = [str(p.local) for p in s.problems]
    out["err_inputs"] = "=" + _joined(problems, "inputs refused (column F): ")
    missing = [f'IF(ISERROR({r.local}),"{name}; ","")' for name, r in s.catalogue]
    out["err_catalogue"] = "=" + _joined(
        missing, "the catalogue has no value for these blank inputs (give them; column G): ")
    frac = []
    for side in SIDES:
        frac.append(f'IFERROR(IF(use_{side}_active+use_{side}_binder_fraction-1>1E-12,'
                    f'"{side}: active + binder fractions exceed 1 (the carbon fraction cannot be '
                    f'< 0); ",""),"")')
    out["err_fractions"] = "=" + "&".join(frac)
    binders = []
    for side, cells in (("cathode", c), ("anode", a)):
        first, second = f"in_{side}_binder", f"in_{side}_binder2"
        share = f"in_{side}_binder2_share"
        binders.append(
            f'IF(AND(ISBLANK({first}),OR(NOT(ISBLANK({second})),{share}>0)),"{side}: name the '
            f'main binder, or leave both binders blank for the recipe\'s; ",'
            f'IF(AND(NOT(ISBLANK({first})),{share}>0,ISBLANK({second})),"{side}: name the '
            f'second binder or set its share to 0; ",'
            f'IF(AND(NOT(ISBLANK({first})),{share}>0,mat_{side}_binder2=mat_{side}_binder),'
            f'"{side}: the second binder repeats the first; ",'
            f'IF(ISERROR({cells.b2}),"{side}: the recipe names more than two binders; name '
            f'them; ",""))))')
    out["err_binders"] = "=" + "&".join(f"IFERROR({b},\"\")" for b in binders)
    out["err_voltage"] = (
        '=IF(ISERROR(use_voltage),"the nominal voltage cannot be found: the materials have no '
        "average voltages on one reference, or they give no positive difference; type "
        'in_voltage","")')
    out["err_capacity"] = (
        f'=IFERROR(IF({e.q_rev}<=0,"N/P "&{_num("in_np_ratio")}&" (first-charge basis): the '
        "anode's first-cycle loss takes all the lithium the cathode gives; no reversible "
        'capacity is left",""),"")')
    terms = [f'IFERROR(IF(OR({f}="",{f}="ok"),"",{f}&"; "),"the geometry cannot be computed '
             f'(Format sheet); ")' for f in fits]
    out["err_fit"] = "=" + _joined(terms, "does not fit: ")
    out["err_prices"] = "=" + _joined([f"IFERROR({p},\"\")" for p in map(str, bom_problems)],
                                      "prices: ")
    out["err_order"] = (
        '=IFERROR(IF(AND(in_order_basis="cells",in_order_size<>ROUND(in_order_size,0)),'
        '"give a whole number of cells (in_order_size)",""),"")')
    out["err_pack"] = (f'=IFERROR(IF({pack_fit}="ok","",{pack_fit}),"the pack cannot be '
                       'computed (Pack sheet)")')
    out["err_results"] = (
        "=IF(AND(ISNUMBER(out_capacity_Ah),ISNUMBER(out_cost_per_kWh_USD),ISNUMBER(out_Wh_kg),"
        'ISNUMBER(out_Wh_L),ISNUMBER(out_order_cells)),"","a key result is not a number: see the '
        'errors above")')
    out["warn_plating"] = _quiet(
        f'IF(in_np_ratio<in_rule_np_min,"N/P "&{_num("in_np_ratio")}&" on the first-charge basis '
        f'is below "&{_num("in_rule_np_min")}&" (in_rule_np_min, {_source("in_rule_np_min")}): '
        "lithium plating risk; the capacity is the anode's (\"&"
        f'{_num("out_capacity_Ah")}&" Ah)","")')
    out["warn_dry_pores"] = _quiet(
        f'IF(in_electrolyte_fill<in_rule_fill_min,"electrolyte fill "&{_num("in_electrolyte_fill")}'
        f'&" x the pore volume is below "&{_num("in_rule_fill_min")}&" (in_rule_fill_min, '
        f'{_source("in_rule_fill_min")}): pores left dry","")')
    band = "in_rule_porosity_band"
    for side, cells in (("cathode", c), ("anode", a)):
        usual = f'CW_MATERIAL(mat_{side},"electrode_porosity")'
        out[f"warn_porosity_{side}"] = _quiet(
            f"IF(ABS({cells.eps}-{usual})>{band}+1E-12,"
            f'"{side} porosity "&{_num(str(cells.eps))}&" is outside "&{_num(f"{usual}-{band}")}'
            f'&"-"&{_num(f"{usual}+{band}")}&" ("&mat_{side}&" electrode_porosity "&{_num(usual)}'
            f'&", "&CW_SOURCE(mat_{side},"electrode_porosity")&"; {band} "&{_num(band)}&", '
            f'{_source(band)})","")')
        out[f"warn_loading_{side}"] = _range_warning(side, "loading", str(cells.load), "mg/cm2")
        out[f"warn_thickness_{side}"] = _range_warning(side, "thickness", str(cells.t), "um")
    out["warn_voltage_nominal"] = _quiet(
        f"IF(AND(ISNUMBER({e.V_min}),ISNUMBER({e.V_max})),IF(OR({e.V}<{e.V_min},{e.V}>{e.V_max}),"
        f'"nominal voltage "&{_num(str(e.V))}&" V is outside the cell\'s limits "&'
        f'{_num(str(e.V_min))}&"-"&{_num(str(e.V_max))}&" V",""),"")')
    both = ('AND(ISNUMBER(IFERROR(CW_MATERIAL(mat_cathode,"first_charge_capacity"),"")),'
            'ISNUMBER(IFERROR(CW_MATERIAL(mat_anode,"first_charge_capacity"),"")),'
            'CW_MATERIAL(mat_cathode,"voltage_reference")=CW_MATERIAL(mat_anode,'
            '"voltage_reference"))')
    lo = 'CW_MATERIAL(mat_cathode,"voltage_min")-CW_MATERIAL(mat_anode,"voltage_max")'
    hi = 'CW_MATERIAL(mat_cathode,"voltage_max")-CW_MATERIAL(mat_anode,"voltage_min")'
    margin = "in_rule_voltage_margin"
    out["warn_voltage_window"] = _quiet(
        f"IF({both},IF(OR({e.V_min}<{lo}-{margin}-1E-12,{e.V_max}>{hi}+{margin}+1E-12),"
        f'"cell limits "&{_num(str(e.V_min))}&"-"&{_num(str(e.V_max))}&" V go beyond the '
        f'couple\'s window "&{_num(lo)}&"-"&{_num(hi)}&" V ("&mat_cathode&" voltage_min/max ("'
        f'&CW_SOURCE(mat_cathode,"voltage_max")&") against "&mat_anode&" ("&CW_SOURCE(mat_anode,'
        f'"voltage_max")&"); {margin} "&{_num(margin)}&" V, {_source(margin)})",""),"")')
    notes = []
    for side in SIDES:
        notes.append(
            f'IF(AND(NOT(ISNUMBER(IFERROR(CW_MATERIAL(mat_{side},"first_charge_capacity"),""))),'
            f'OR(ISBLANK(in_{side}_first_charge),ISBLANK(in_{side}_fce))),"the catalogue has no '
            f'first-charge data for "&mat_{side}&": its practical capacity stands for the first '
            f"charge and its first-cycle efficiency for 1; give in_{side}_first_charge and "
            f'in_{side}_fce; ","")')
        notes.append(
            f'IF(ISERROR(CW_MATERIAL(mat_{side},"electrode_porosity")),"the catalogue has no usual '
            f'coating for "&mat_{side}&": its porosity, loading and thickness are not checked '
            f"(give in_rule_{side}_loading_min/max and in_rule_{side}_thickness_min/max); "
            '","")')
    notes.append(
        'IF(AND(ISNUMBER(use_voltage_min),ISNUMBER(use_voltage_max)),"","the catalogue has no '
        'voltage window for "&mat_cathode&" against "&mat_anode&": give in_voltage_min and '
        'in_voltage_max (a pack needs them); ")')
    notes.append(
        'IF(OR(IFERROR(CW_MATERIAL(mat_cathode,"voltage_reference"),"")="SHE",'
        'IFERROR(CW_MATERIAL(mat_anode,"voltage_reference"),"")="SHE"),"an aqueous couple sized '
        "with the construction of a non-aqueous cell (foils, separator, organic electrolyte): "
        'check every inactive input; ","")')
    out["warn_catalogue"] = _quiet("&".join(f"IFERROR({n},\"\")" for n in notes))
    assert set(out) == {r.name for r in RULES}, sorted(out)
    return out


def write_checks(s: InputsSheet, e: ElectrodeCells, bom_problems: Sequence[Ref],
                 fits: Sequence[Ref], pack_fit: Ref) -> None:
    """Append the Checks block to the Inputs sheet and fill the summary
    (``out_checks``) at its top."""
    w, ws = s.writer, s.ws
    w.section("Checks")
    w.band(["Rule (defined name)", "Message (empty when the rule is quiet)", "", "", "Level",
            "Bounds (inputs)"])
    formulas = _formulas(s, e, bom_problems, fits, pack_fit)
    for rule in RULES:
        r = w.row
        label = style(ws[f"B{r}"], "text")
        label.value = f"{rule.name}: {rule.checks}"
        label.alignment = Alignment(vertical="top", wrap_text=True)
        cell = ws[f"C{r}"]
        style(cell, "result" if rule.level == "error" else "calc").value = formulas[rule.name]
        cell.alignment = Alignment(vertical="top", wrap_text=True)
        ws.merge_cells(f"C{r}:E{r}")
        add_name(w.wb, rule.name, ws, f"$C${r}")
        style(ws[f"F{r}"], "unit").value = rule.level
        style(ws[f"{IN_USE}{r}"], "hint").value = rule.bounds
        ws.row_dimensions[r].height = 30.0
        w.row += 1
    w.text("Errors: the model cannot compute (fix the input named). Warnings: the model computed "
           "a design a cell designer would not build as it stands; each names its bound (an "
           "input in 'Design rules' above, or the chemistry's usual range in the catalogue) and "
           "the bound's source. 'all checks pass' means no rule fired.", kind="hint", span=6)
    fired = "+".join(f'IF({r.name}="",0,1)' for r in RULES if r.level == "error")
    warned = "+".join(f'IF({r.name}="",0,1)' for r in RULES if r.level == "warning")
    row = s.summary_row
    style(ws[f"B{row}"], "text").value = "Checks"
    style(ws[f"C{row}"], "result").value = (
        f'=IFERROR(IF(({fired})+({warned})=0,"{ALL_PASS}",({fired})&" error(s), "&({warned})'
        '&" warning(s): see Checks at the bottom"),"a check cannot be evaluated: see Checks at '
        'the bottom")')
    ws.merge_cells(f"C{row}:E{row}")
    add_name(w.wb, "out_checks", ws, f"$C${row}")
