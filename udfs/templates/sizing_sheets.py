"""The Electrodes and Bill of materials sheets of the cell-sizing workbook.

Every step of ``docs/sizing-model.md`` is one native formula on these sheets;
catalogue values come from ``CW_MATERIAL`` (directly, or through the In use
cells ``use_...`` of the Inputs sheet, which hold your value, else the
catalogue's, the recipe's or the preset). The builders return typed
references to the cells that later sheets read (:class:`ElectrodeCells`,
:class:`Bom`); each formula refers to cells written above it or to defined
names, so no address is patched in afterwards.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import MappingProxyType

from openpyxl.chart import Reference
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from ..core.sizing_table import COMPONENTS, Component
from .layout import (
    PALETTE,
    Columns,
    Kind,
    Name,
    Ref,
    SheetWriter,
    add_name,
    bar_chart,
    finish_sheet,
    heading,
    style,
)
from .notes import CAUTION

__all__ = [
    "BOM_COLUMNS",
    "Bom",
    "ElectrodeCells",
    "Side",
    "build_bom",
    "build_electrodes",
    "ceil_formula",
    "floor_formula",
    "resolved_name",
    "yours_or_catalogue",
]

PCT = "0.0%"


def ceil_formula(x: str) -> str:
    """Whole-number ceiling that forgives float noise, as the core's ``ceil_count``:
    a value within 1e-9 (relative) of a whole number counts as that number.

    >>> ceil_formula("A1")
    'IF(ABS(A1-ROUND(A1,0))<=1E-9*MAX(ABS(A1),1),ROUND(A1,0),ROUNDUP(A1,0))'
    """
    return f"IF(ABS({x}-ROUND({x},0))<=1E-9*MAX(ABS({x}),1),ROUND({x},0),ROUNDUP({x},0))"


def floor_formula(x: str) -> str:
    """Whole-number floor that forgives float noise, as the core's ``floor_count``.

    >>> floor_formula("A1")
    'IF(ABS(A1-ROUND(A1,0))<=1E-9*MAX(ABS(A1),1),ROUND(A1,0),INT(A1))'
    """
    return f"IF(ABS({x}-ROUND({x},0))<=1E-9*MAX(ABS({x}),1),ROUND({x},0),INT({x}))"


def yours_or_catalogue(given: str, material: Name, prop: str) -> str:
    """Formula: the user's value when the input cell is filled, else the catalogue's.

    >>> yours_or_catalogue("in_separator_um", Name("mat_separator"), "thickness")
    '=IF(ISBLANK(in_separator_um),CW_MATERIAL(mat_separator,"thickness"),in_separator_um)'
    """
    return f'=IF(ISBLANK({given}),CW_MATERIAL({material},"{prop}"),{given})'


def resolved_name(material_input: str) -> Name:
    """The defined name of the Inputs cell that shows the catalogue's own name
    of a material input: ``in_cathode`` -> ``mat_cathode``.

    >>> resolved_name("in_cathode_binder2")
    Name(name='mat_cathode_binder2')
    """
    return Name("mat_" + material_input.removeprefix("in_"))


def _use(input_name: str) -> str:
    return "use_" + input_name.removeprefix("in_")


class Side:
    """The cells of one electrode on the Electrodes sheet (cathode: column C,
    anode: column D), set as its rows are written."""

    material: Ref
    q: Ref
    eta: Ref
    rho: Ref
    f: Ref
    b: Ref
    k: Ref
    b1: Ref
    b1s: Ref
    rho_b1: Ref
    b2: Ref
    b2s: Ref
    rho_b2: Ref
    carbon: Ref
    rho_k: Ref
    rho_solid: Ref
    eps: Ref
    rho_coat: Ref
    qa: Ref
    load: Ref
    t: Ref
    foil: Ref
    t_foil: Ref
    rho_foil: Ref
    thick: Ref


class ElectrodeCells:
    """The cells of the Electrodes sheet that later sheets read."""

    cathode: Side
    anode: Side
    np: Ref
    q1: Ref
    q_rev: Ref
    limited: Ref
    fce: Ref
    V: Ref
    V_min: Ref
    V_max: Ref
    T: Ref
    need: Ref
    sep: Ref
    t_sep: Ref
    eps_sep: Ref
    rho_sep: Ref
    pitch: Ref
    oa: Ref
    os: Ref
    m: Ref
    elyte: Ref
    rho_e: Ref

    def __init__(self) -> None:
        self.cathode, self.anode = Side(), Side()


class _Pairs:
    """Rows of a two-column (cathode, anode) table on the Electrodes sheet."""

    def __init__(self, w: SheetWriter) -> None:
        self.w = w

    def row(
        self,
        label: str,
        cathode: str,
        anode: str | Callable[[Ref], str],
        unit: str,
        note: str,
        kind: Kind = "calc",
        fmt: str | None = None,
    ) -> tuple[Ref, Ref]:
        """Write one row; ``anode`` may be a function of the cathode's cell."""
        ws, r = self.w.ws, self.w.row
        style(ws[f"B{r}"], "text").value = label
        c, a = Ref(ws.title, "C", r), Ref(ws.title, "D", r)
        style(ws[c.plain], kind, fmt).value = cathode
        style(ws[a.plain], kind, fmt).value = anode(c) if callable(anode) else anode
        style(ws[f"E{r}"], "unit").value = unit
        style(ws[f"F{r}"], "hint").value = note
        self.w.row += 1
        return c, a

    def sides(
        self, label: str, formula: Callable[[str], str], unit: str, note: str,
        kind: Kind = "calc", fmt: str | None = None,
    ) -> tuple[Ref, Ref]:
        """A row whose two formulas differ only by the side's name."""
        return self.row(label, formula("cathode"), formula("anode"), unit, note, kind, fmt)


def _binders(p: _Pairs, e: ElectrodeCells) -> None:
    """The binder(s) in use: the named main binder and an optional second one
    sharing the binder fraction, else the recipe's (one name, or two with
    their shares: ``CMC=0.5; SBR=0.5``, split here by text formulas)."""
    c, a = e.cathode, e.anode
    p.sides("Binder(s): yours, else the recipe's", lambda s: f"={_use(f'in_{s}_binder')}",
            "name", "Inputs (In use)")
    first = p.sides(
        "Recipe binder text, first part",
        lambda s: (f'=IF(ISBLANK(in_{s}_binder),IF(ISNUMBER(FIND(";",{_use(f"in_{s}_binder")})),'
                   f'LEFT({_use(f"in_{s}_binder")},FIND(";",{_use(f"in_{s}_binder")})-1),'
                   f'{_use(f"in_{s}_binder")}),"")'),
        "", "recipe only: the text up to ';'")
    second = p.sides(
        "Recipe binder text, second part",
        lambda s: (f'=IF(ISBLANK(in_{s}_binder),IF(ISNUMBER(FIND(";",{_use(f"in_{s}_binder")})),'
                   f'MID({_use(f"in_{s}_binder")},FIND(";",{_use(f"in_{s}_binder")})+1,255),""),"")'),
        "", "recipe only: the text after ';' (a recipe names at most two binders here)")
    parts = {"cathode": (first[0], second[0]), "anode": (first[1], second[1])}

    def name1(s: str) -> str:
        t = parts[s][0]
        return (f'=IF(ISBLANK(in_{s}_binder),TRIM(IF(ISNUMBER(FIND("=",{t})),'
                f'LEFT({t},FIND("=",{t})-1),{t})),mat_{s}_binder)')

    def share1(s: str) -> str:
        t = parts[s][0]
        return (f'=IF(ISBLANK(in_{s}_binder),IF(ISNUMBER(FIND("=",{t})),'
                f'VALUE(MID({t},FIND("=",{t})+1,255)),1),1-in_{s}_binder2_share)')

    def name2(s: str) -> str:
        t = parts[s][1]
        return (f'=IF(ISBLANK(in_{s}_binder),IF({t}="","(none)",IF(ISNUMBER(FIND(";",{t})),NA(),'
                f'TRIM(LEFT({t},FIND("=",{t})-1)))),'
                f'IF(in_{s}_binder2_share=0,"(none)",mat_{s}_binder2))')

    def share2(s: str) -> str:
        t = parts[s][1]
        return (f'=IF(ISBLANK(in_{s}_binder),IF({t}="",0,VALUE(MID({t},FIND("=",{t})+1,255))),'
                f"in_{s}_binder2_share)")

    c.b1, a.b1 = p.sides("Binder", name1, "name", "yours, else the recipe's first")
    c.b1s, a.b1s = p.sides("Share of the binder fraction", share1, "of binder",
                           "1 - share of the second binder; recipe: its share", fmt=PCT)
    c.rho_b1, a.rho_b1 = p.row(
        "Binder density", f'=CW_MATERIAL({c.b1},"density")', f'=CW_MATERIAL({a.b1},"density")',
        "g/cm3", "catalogue", "lookup", "0.00")
    c.b2, a.b2 = p.sides("Second binder", name2, "name",
                         "yours (none when its share is 0), else the recipe's second")
    c.b2s, a.b2s = p.sides("Share of the binder fraction", share2, "of binder",
                           "yours, else the recipe's", fmt=PCT)
    c.rho_b2, a.rho_b2 = p.row(
        "Second binder density", f'=IF({c.b2}="(none)","",CW_MATERIAL({c.b2},"density"))',
        f'=IF({a.b2}="(none)","",CW_MATERIAL({a.b2},"density"))', "g/cm3", "catalogue",
        "lookup", "0.00")


def _coatings(p: _Pairs, e: ElectrodeCells) -> None:
    """Materials, capacities, fractions, densities, loadings, thicknesses."""
    c, a = e.cathode, e.anode

    def info(label: str, prop: str, unit: str, fmt: str | None = None) -> None:
        p.sides(label, lambda s: f'=IFERROR(CW_MATERIAL(mat_{s},"{prop}"),"(none)")', unit,
                "catalogue (information)", "lookup", fmt)

    c.material, a.material = p.row("Active material", "=mat_cathode", "=mat_anode", "name",
                                   "Inputs (the catalogue's name)")
    info("Formula", "formula", "")
    c.q, a.q = p.sides("First-charge specific capacity",
                       lambda s: f"={_use(f'in_{s}_first_charge')}", "mAh/g",
                       "Inputs (In use): yours, else the catalogue's first charge", "lookup",
                       "0.0")
    c.eta, a.eta = p.sides("First-cycle efficiency", lambda s: f"={_use(f'in_{s}_fce')}",
                           "fraction", "Inputs (In use): yours, else the catalogue's", "lookup",
                           PCT)
    info("Average discharge voltage", "average_voltage", "V", "0.000")
    info("Voltage reference", "voltage_reference", "")
    c.rho, a.rho = p.sides("Density of the active material",
                           lambda s: f'=CW_MATERIAL(mat_{s},"density")', "g/cm3", "catalogue",
                           "lookup", "0.00")
    c.f, a.f = p.sides("Active fraction", lambda s: f"={_use(f'in_{s}_active')}", "of coating",
                       "Inputs (In use): yours, else the recipe's", fmt=PCT)
    c.b, a.b = p.sides("Binder fraction", lambda s: f"={_use(f'in_{s}_binder_fraction')}",
                       "of coating", "Inputs (In use): yours, else the recipe's", fmt=PCT)
    c.k, a.k = p.row(
        "Conductive carbon fraction",
        f"=IF({c.f}+{c.b}-1>1E-12,NA(),MAX(1-{c.f}-{c.b},0))",
        f"=IF({a.f}+{a.b}-1>1E-12,NA(),MAX(1-{a.f}-{a.b},0))",
        "of coating", "1 - active - binder (other additives count as carbon); #N/A if negative",
        fmt=PCT)
    _binders(p, e)
    c.carbon, a.carbon = p.sides("Conductive carbon", lambda s: f"={_use(f'in_{s}_carbon')}",
                                 "name", "Inputs (In use): yours, else the recipe's")
    c.rho_k, a.rho_k = p.row(
        "Carbon density", f'=CW_MATERIAL({c.carbon},"density")',
        f'=CW_MATERIAL({a.carbon},"density")', "g/cm3", "catalogue", "lookup", "0.00")

    def solids(s: Side) -> str:
        return (
            f"=1/({s.f}/{s.rho}+{s.b}*{s.b1s}/{s.rho_b1}"
            f"+IF({s.b2s}=0,0,{s.b}*{s.b2s}/{s.rho_b2})+{s.k}/{s.rho_k})"
        )

    c.rho_solid, a.rho_solid = p.row("Density of the dry coating solids", solids(c), solids(a),
                                     "g/cm3", "1 / sum(mass fraction / density)", fmt="0.000")
    c.eps, a.eps = p.sides("Coating porosity", lambda s: f"={_use(f'in_{s}_porosity')}",
                           "of volume", "Inputs (In use): yours, else the recipe's", fmt=PCT)
    c.rho_coat, a.rho_coat = p.row(
        "Coating density", f"={c.rho_solid}*(1-{c.eps})", f"={a.rho_solid}*(1-{a.eps})",
        "g/cm3", "solids density x (1 - porosity)", fmt="0.000")
    c.qa, a.qa = p.row(
        "Areal capacity per side, first-charge basis",
        f'=IF(in_loading_basis="areal capacity",in_loading,in_loading*{c.f}*{c.q}/1000)',
        lambda cathode: f"=in_np_ratio*{cathode}",
        "mAh/cm2", "cathode: loading x active fraction x first-charge mAh/g / 1000; anode: "
        "N/P (first-charge basis) x cathode", fmt="0.000")
    c.load, a.load = p.row(
        "Loading per side (whole coating)",
        f'=IF(in_loading_basis="areal capacity",{c.qa}*1000/({c.f}*{c.q}),in_loading)',
        f"={a.qa}*1000/({a.f}*{a.q})",
        "mg/cm2", "areal capacity x 1000 / (active fraction x first-charge mAh/g)", fmt="0.00")
    c.t, a.t = p.row("Coating thickness per side", f"={c.load}*10/{c.rho_coat}",
                     f"={a.load}*10/{a.rho_coat}", "um", "loading x 10 / coating density",
                     fmt="0.0")
    c.foil, a.foil = p.sides("Current collector foil", lambda s: f"={_use(f'in_{s}_foil')}",
                             "name", "Inputs (In use): yours, else the recipe's")
    c.t_foil, a.t_foil = p.sides("Foil thickness", lambda s: f"={_use(f'in_{s}_foil_um')}",
                                 "um", "Inputs (In use): yours, else the catalogue's", "lookup",
                                 "0.0")
    c.rho_foil, a.rho_foil = p.row(
        "Foil density", f'=CW_MATERIAL({c.foil},"density")', f'=CW_MATERIAL({a.foil},"density")',
        "g/cm3", "catalogue", "lookup", "0.00")
    c.thick, a.thick = p.row(
        "Electrode thickness (foil and two coatings)", f"={c.t_foil}+2*{c.t}",
        f"={a.t_foil}+2*{a.t}", "um", "foil + 2 x coating", fmt="0.0")


def build_electrodes(wb: Workbook) -> ElectrodeCells:
    """Coatings, the capacity basis, voltages, the target and the layers, top
    to bottom in the order they are found."""
    ws = wb.create_sheet("Electrodes")
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="E", note="F"),
                    {"A": 2.5, "B": 40.0, "C": 20.0, "D": 20.0, "E": 11.0, "F": 66.0})
    w.title(
        "Electrodes: coatings and the capacity basis",
        "Coatings, first-charge areal capacities, N/P on the first-charge basis, the reversible "
        "capacity after both first-cycle losses, voltages and the layers of the repeat unit. "
        "Lavender cells read the catalogue through CW_ functions; white cells are arithmetic.",
    )
    e = ElectrodeCells()
    c, a = e.cathode, e.anode
    p = _Pairs(w)
    w.skip()
    w.band(["Quantity", "Cathode", "Anode", "Unit", "How it is found"])
    _coatings(p, e)

    def val(label: str, formula: str, unit: str, note: str, kind: Kind = "calc",
            fmt: str | None = None, name: str | None = None) -> Ref:
        return w.value(label, formula, unit, note, kind, fmt, name)

    # ---- the capacity basis (per unit of facing area)
    w.skip()
    w.band(["Capacity basis", "Value", "", "Unit", "How it is found (docs/sizing-model.md)"])
    e.np = val("N/P ratio, first-charge basis", "=in_np_ratio", "ratio",
               "Inputs: anode over cathode first-charge areal capacity", fmt="0.000")
    e.q1 = val("Charge passed on the first charge, Q1", f"=MIN({c.qa},{a.qa})", "mAh/cm2",
               "min(cathode, anode first-charge areal capacity): below N/P 1 the anode is full "
               "first", fmt="0.0000")
    loss = val("Anode's first-cycle loss", f"={a.qa}*(1-{a.eta})", "mAh/cm2",
               "anode first-charge areal capacity x (1 - its first-cycle efficiency)",
               fmt="0.0000")
    cathode_cap = val("Cathode's own limit", f"={c.qa}*{c.eta}", "mAh/cm2",
                      "cathode first-charge areal capacity x its first-cycle efficiency",
                      fmt="0.0000")
    back = val("Lithium left to cycle", f"={e.q1}-{loss}", "mAh/cm2",
               "Q1 - the anode's loss", fmt="0.0000")
    e.q_rev = val("Reversible areal capacity, Q_rev", f"=MIN({cathode_cap},{back})", "mAh/cm2",
                  "the lower of the two (no loss is taken twice)", "result", "0.0000")
    e.limited = val("Anode limits the capacity", f"=IF({back}<{cathode_cap},1,0)", "1 = yes",
                    "its loss (or, below N/P 1, its size) sets the capacity", fmt="0")
    e.fce = val("Cell first-cycle efficiency", f"={e.q_rev}/{e.q1}", "fraction", "Q_rev / Q1",
                fmt=PCT)
    e.V = val("Nominal cell voltage", f"={_use('in_voltage')}", "V",
              "Inputs (In use): yours, else cathode - anode average discharge voltage (same "
              "reference)", "lookup", "0.000")
    e.V_min = val("Cell voltage, lower limit", f"={_use('in_voltage_min')}", "V",
                  "Inputs (In use): yours, else the couple's window", "lookup", "0.000")
    e.V_max = val("Cell voltage, upper limit", f"={_use('in_voltage_max')}", "V",
                  "Inputs (In use): yours, else the couple's window", "lookup", "0.000")
    e.T = val("Target capacity",
              f'=IF(in_sizing_mode="target",IF(in_target_basis="energy",in_target/{e.V},'
              'in_target),"")',
              "Ah", "target mode: energy target / nominal voltage, or the capacity target",
              fmt="0.00")
    e.need = val("Coated cathode area needed (both faces)",
                 f'=IF(in_sizing_mode="target",{e.T}*1000/{e.q_rev},"")', "cm2",
                 "target mode: target Ah x 1000 / Q_rev", fmt="#,##0.0")

    # ---- layers of the repeat unit
    w.skip()
    w.band(["Layers", "Value", "", "Unit", "How it is found"])
    e.sep = val("Separator", "=mat_separator", "name", "Inputs (the catalogue's name)")
    e.t_sep = val("Separator thickness", f"={_use('in_separator_um')}", "um",
                  "Inputs (In use): yours, else the catalogue's", "lookup", "0.0")
    e.eps_sep = val("Separator porosity", f"={_use('in_separator_porosity')}", "of volume",
                    "Inputs (In use): yours, else the catalogue's", "lookup", PCT)
    e.rho_sep = val("Density of the separator polymer", f'=CW_MATERIAL({e.sep},"density")',
                    "g/cm3", "catalogue (the solid, not the porous film)", "lookup", "0.00")
    e.pitch = val("Repeat unit (pitch)", f"={c.thick}+{a.thick}+2*{e.t_sep}", "um",
                  "cathode + anode + 2 separators", fmt="0.0")
    e.oa = val("Anode overhang, each edge", "=in_anode_overhang", "mm", "Inputs", fmt="0.00")
    e.os = val("Separator overhang beyond the anode", "=in_separator_overhang", "mm", "Inputs",
               fmt="0.00")
    e.m = val("Separator wider than the cathode coating, m", f"=2*{e.oa}+2*{e.os}", "mm",
              "2 x anode overhang + 2 x separator overhang", fmt="0.00")
    e.elyte = val("Electrolyte", f"={_use('in_electrolyte')}", "name",
                  "Inputs (In use): yours, else by the couple's family")
    e.rho_e = val("Electrolyte density", f'=CW_MATERIAL({e.elyte},"density")', "g/cm3",
                  "catalogue", "lookup", "0.00")
    finish_sheet(ws, freeze="C5")
    return e


# --------------------------------------------------------------------------- bill of materials


@dataclass(frozen=True)
class CellCells:
    """The cells of the Format sheet that the Bill of materials reads: the
    geometry in use (``geo[field]``), the pore volume, capacity and energy,
    and the densities of the tabs and the housing."""

    geo: Mapping[str, Ref]
    pore: Ref
    capacity: Ref
    energy: Ref
    rho_cathode_tab: Ref
    rho_anode_tab: Ref
    rho_housing: Ref
    fits: tuple[Ref, ...]  # each format block's fit check ("", "ok" or the message)


def _side(comp: Component, e: ElectrodeCells) -> Side:
    return e.cathode if comp.key.startswith("cathode") else e.anode


def _material_formula(comp: Component, e: ElectrodeCells) -> str:
    part = comp.key.split("_", 1)[-1]
    if comp.key in ("cathode_active", "anode_active"):
        return f"=mat_{comp.key.split('_')[0]}"
    if part == "binder":
        return f"={_side(comp, e).b1}"
    if part == "binder2":
        return f"={_side(comp, e).b2}"
    if comp.key in ("separator", "cathode_tab"):
        return f"=mat_{comp.key}"
    return f"={_use(comp.material)}"  # carbons, foils, electrolyte, anode tab, housing


def _mass_formula(comp: Component, e: ElectrodeCells, cell: CellCells) -> str:
    g = cell.geo
    part = comp.key.split("_", 1)[-1]
    if comp.key == "separator":
        return (f"={g['separator_area_cm2']}*{e.t_sep}*1E-4*{e.rho_sep}*(1-{e.eps_sep})")
    if comp.key == "electrolyte":
        return f"=in_electrolyte_fill*{cell.pore}*{e.rho_e}"
    if comp.key in ("cathode_tab", "anode_tab"):
        rho = cell.rho_cathode_tab if comp.key == "cathode_tab" else cell.rho_anode_tab
        return f"=IF(ISBLANK(in_tab_mass),{g['tab_cm3']}*{rho},in_tab_mass)"
    if comp.key == "housing":
        return (f"=IF(ISBLANK(in_housing_mass),{g['housing_body_cm3']}*{cell.rho_housing}"
                f"+{g['housing_lid_cm3']}*{cell.rho_housing},in_housing_mass)")
    s = _side(comp, e)
    side = comp.key.split("_")[0]
    area = g[f"{side}_coated_area_cm2"]
    if part == "active":
        return f"={s.load}*{s.f}*{area}/1000"
    if part == "binder":
        return f"={s.load}*({s.b}*{s.b1s})*{area}/1000"
    if part == "binder2":
        return f'=IF({s.b2}="(none)",0,{s.load}*({s.b}*{s.b2s})*{area}/1000)'
    if part == "carbon":
        return f"={s.load}*{s.k}*{area}/1000"
    if part == "foil":
        return f"={g[f'{side}_foil_area_cm2']}*{s.t_foil}*1E-4*{s.rho_foil}"
    raise KeyError(comp.key)


def _area_formula(comp: Component, cell: CellCells) -> str | None:
    g = cell.geo
    if comp.key == "separator":
        return f"={g['separator_area_cm2']}/10000"
    if comp.key.endswith("_foil"):
        return f"={g[comp.key.split('_')[0] + '_foil_area_cm2']}/10000"
    if comp.key == "housing":  # the pouch's laminate is a sheet too
        return f'=IF(in_format="pouch",{g["housing_area_cm2"]}/10000,"")'
    return None


BOM_HEADERS = (
    "Component", "Material", "Mass per cell", "Share of mass", "Sheet area per cell",
    "Scrap applies", "Price", "Price unit", "Price in USD/kg", "Cost per good cell",
    "Share of cost",
)
BOM_UNITS = ("", "", "g", "of cell mass", "m2", "", "as quoted", "", "USD/kg", "USD",
             "of cost")
#: Bill of materials: column letter of each value.
BOM_COLUMNS = {"material": "C", "mass": "D", "share": "E", "area": "F", "scrap": "G",
               "price": "H", "unit": "I", "usd_kg": "J", "cost": "K", "cost_share": "L"}
#: Helper columns (hidden): a given price's material, value and unit; the row's problem.
_KEY, _GIVEN, _GIVEN_UNIT, _PROBLEM = "N", "O", "P", "Q"


@dataclass(frozen=True)
class Bom:
    """Where the Bill of materials sheet keeps each component's row and the totals."""

    sheet: str
    rows: Mapping[Component, int]
    first: int
    last: int
    total: int

    def cell(self, comp: Component, column: str) -> Ref:
        """The cell of ``comp``'s row in ``column`` (see :data:`BOM_COLUMNS`)."""
        return Ref(self.sheet, column, self.rows[comp])

    @property
    def problems(self) -> list[Ref]:
        """Each row's price problem ("" when none), for ``err_prices``."""
        return [Ref(self.sheet, _PROBLEM, r) for r in self.rows.values()]


def _price_cells(ws: Worksheet, comp: Component, row: int, first: int, last: int,
                 e: ElectrodeCells) -> None:
    """Price, unit, USD/kg and the helper cells of one component row.

    A price typed on any row prices that material on every row that uses it
    (the core prices by material); a blank price takes the demo list's. The
    unit is parsed by ``CW_PRICE`` (mass, area, volume or count bases, any
    currency of the exchange-rate table) and turned into USD/kg with the fact
    that links the bases: the row's mass per m2 of sheet, the electrolyte's
    density, the mass of one piece (a tab, the housing)."""
    c = f"C{row}"
    keys, given, units = (f"${col}${first}:${col}${last}" for col in (_KEY, _GIVEN, _GIVEN_UNIT))
    price_in, unit_in, material_in = comp.price, comp.price_unit, comp.material
    style(ws[f"{_GIVEN}{row}"], "calc").value = (
        f'=IF(OR({c}="(none)",ISBLANK({price_in}),ISBLANK({material_in})),"",{price_in})')
    style(ws[f"{_KEY}{row}"], "calc").value = f'=IF({_GIVEN}{row}="","",{c})'
    style(ws[f"{_GIVEN_UNIT}{row}"], "calc").value = (
        f'=IF({_GIVEN}{row}="","",IF(ISBLANK({unit_in}),"",{unit_in}))')
    hit = f"MATCH({c},{keys},0)"
    demo = f"MATCH({c},list_material,0)"
    style(ws[f"H{row}"], "calc", "#,##0.00").value = (
        f'=IF({c}="(none)",0,IF(ISNUMBER({hit}),INDEX({given},{hit}),'
        f"IFERROR(INDEX(list_demo_price,{demo})*1,NA())))")
    style(ws[f"I{row}"], "calc").value = (
        f'=IF({c}="(none)","USD/kg",IF(ISNUMBER({hit}),INDEX({units},{hit}),'
        f"IFERROR(INDEX(list_demo_unit,{demo}),NA())))")
    areal = f'IF(F{row}="",0,D{row}/F{row})'
    density = str(e.rho_e) if comp.key == "electrolyte" else "0"
    piece = f"D{row}" if comp.key in ("cathode_tab", "anode_tab", "housing") else "0"
    style(ws[f"J{row}"], "lookup", "#,##0.000").value = (
        f'=IF({c}="(none)",0,CW_PRICE(H{row},I{row},"USD/kg",{areal},{density},{piece}))')
    conflict = (f"SUMPRODUCT(({keys}={_KEY}{row})*(({given}<>{_GIVEN}{row})"
                f"+({units}<>{_GIVEN_UNIT}{row})))>0")
    style(ws[f"{_PROBLEM}{row}"], "hint").value = (
        f'=IF(AND({_GIVEN}{row}<>"",{conflict}),"{comp.label}: two different prices for "&{c}'
        f'&" (one price per material); ",'
        f'IF(AND(NOT(ISBLANK({price_in})),{c}<>"(none)",ISBLANK({material_in})),'
        f'"{comp.label}: a price for the recipe\'s material; name the material ({material_in}) '
        f'to price it; ",'
        f'IF(ISERROR(J{row}),IF(ISERROR(H{row}),"{comp.label}: no demo price for "&{c}&"; give '
        f'one; ",IF(I{row}="","{comp.label}: give the unit of its price; ","{comp.label}: its '
        f'price unit cannot be turned into USD/kg for this component; ")),"")))')


def build_bom(wb: Workbook, e: ElectrodeCells, cell: CellCells) -> Bom:
    """One row per component: mass, share, price, cost per good cell; key figures; chart."""
    ws = wb.create_sheet("Bill of materials")
    w = SheetWriter(
        wb, ws, Columns(label="B", value="C", unit="D", note="E"),
        {"A": 2.5, "B": 30.0, "C": 24.0, "D": 13.0, "E": 10.0, "F": 12.0, "G": 9.0,
         "H": 10.0, "I": 10.0, "J": 11.0, "K": 13.0, "L": 10.0, "M": 3.0,
         _KEY: 4.0, _GIVEN: 4.0, _GIVEN_UNIT: 4.0, _PROBLEM: 4.0},
    )
    for col in (_KEY, _GIVEN, _GIVEN_UNIT, _PROBLEM):
        ws.column_dimensions[col].hidden = True
    w.title("Bill of materials")
    w.text('=IF(ISBLANK(in_scenario),"",in_scenario&"  |  ")&mat_cathode&" / "&mat_anode'
           '&", "&in_format&" cell ("&in_sizing_mode&" mode)"', kind="hint", span=11,
           height=30.0)
    w.caution(CAUTION, span=11, height=30.0)
    w.skip()
    w.band(list(BOM_HEADERS))
    for k, unit in enumerate(BOM_UNITS):
        style(ws.cell(w.row, 2 + k, unit), "unit")
    w.row += 1
    first = w.row
    last = first + len(COMPONENTS) - 1
    total = last + 1
    rows: dict[Component, int] = {}
    for i, comp in enumerate(COMPONENTS):
        row = first + i
        rows[comp] = row
        style(ws[f"B{row}"], "text").value = comp.label
        style(ws[f"C{row}"], "calc").value = _material_formula(comp, e)
        style(ws[f"D{row}"], "calc", "#,##0.00").value = _mass_formula(comp, e, cell)
        style(ws[f"E{row}"], "calc", PCT).value = f"=D{row}/$D${total}"
        area = _area_formula(comp, cell)
        style(ws[f"F{row}"], "calc", "0.0000")
        if area:
            ws[f"F{row}"] = area
        style(ws[f"G{row}"], "text").value = "yes" if comp.electrode else "no"
        _price_cells(ws, comp, row, first, last, e)
        style(ws[f"K{row}"], "calc", "#,##0.000").value = (
            f'=D{row}/1000/IF(G{row}="yes",1-in_scrap,1)*J{row}/in_yield')
        style(ws[f"L{row}"], "calc", PCT).value = f"=K{row}/$K${total}"
    style(ws[f"B{total}"], "result").value = "Total"
    style(ws[f"D{total}"], "result", "#,##0.00").value = f"=SUM(D{first}:D{last})"
    style(ws[f"E{total}"], "result", PCT).value = f"=SUM(E{first}:E{last})"
    style(ws[f"K{total}"], "result", "#,##0.000").value = f"=SUM(K{first}:K{last})"
    style(ws[f"L{total}"], "result", PCT).value = f"=SUM(L{first}:L{last})"
    add_name(wb, "out_cell_mass_g", ws, f"$D${total}")
    add_name(wb, "out_cost_per_cell_USD", ws, f"$K${total}")
    w.row = total + 1
    w.text("Prices: yours (Inputs) price that material on every row that uses it; blank takes "
           "the demo price list (invented demo data). CW_PRICE reads each unit (per kg, t, g, "
           "m^2, L, each ...; a currency of data/exchange_rates.csv, latest rate) and turns it "
           "into USD/kg with the row's mass per m2, the electrolyte's density or the mass of one "
           "piece.", kind="hint", span=11)

    # ---- key figures
    w.section("Key figures")
    g = cell.geo
    figures = (
        ("out_voltage_V", "Nominal voltage", f"={e.V}", "V", "0.000"),
        ("out_capacity_Ah", "Capacity (reversible)", f"={cell.capacity}", "Ah", "0.00"),
        ("out_energy_Wh", "Energy", f"={cell.energy}", "Wh", "0.0"),
        ("out_cell_height_mm", "Cell height (outer)", f"={g['cell_height_mm']}", "mm", "0.0"),
        ("out_cell_volume_cm3", "Cell volume", f"={g['cell_volume_cm3']}", "cm3", "#,##0.0"),
        ("out_Wh_kg", "Specific energy", f"={cell.energy}/($D${total}/1000)", "Wh/kg", "0.0"),
        ("out_Wh_L", "Energy density", f"={cell.energy}/({g['cell_volume_cm3']}/1000)", "Wh/L",
         "0.0"),
        ("out_cost_per_kWh_USD", "Cost per kWh", f"=$K${total}/({cell.energy}/1000)", "USD/kWh",
         "0.0"),
    )
    for name, label, formula, unit, fmt in figures:
        w.value(label, formula, unit, kind="result", number_format=fmt, name=name)
    w.value("Outer size",
            f'=IF(in_format="cylindrical",TEXT({g["cell_diameter_mm"]},"0.0")&" dia. x "'
            f'&TEXT({g["cell_height_mm"]},"0.0"),TEXT({g["cell_width_mm"]},"0.0")&" x "'
            f'&TEXT({g["cell_height_mm"]},"0.0")&" x "&TEXT({g["cell_thickness_mm"]},"0.00"))',
            "mm", "Format sheet")
    w.text("Costs are materials only, per good cell: electrode materials (coatings and foils) "
           "are divided by (1 - electrode scrap), every item by the cell yield.", kind="hint",
           span=4)

    # ---- chart: cost by component
    chart_row = total + 4
    heading(ws[f"F{chart_row}"], "Cost per good cell by component, USD")
    chart = bar_chart(
        True,
        Reference(ws, min_col=11, min_row=first, max_row=last),
        Reference(ws, min_col=2, min_row=first, max_row=last),
        "USD per good cell", "0.00", PALETTE["band_fill"], (11.5, 12.2),
    )
    ws.add_chart(chart, f"F{chart_row + 1}")
    finish_sheet(ws, landscape=True, freeze=f"C{first}")
    ws.print_area = f"A1:L{total + 30}"  # the table, key figures and the chart
    return Bom(ws.title, MappingProxyType(rows), first, last, total)
