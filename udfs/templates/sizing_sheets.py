"""The Electrodes and Bill of materials sheets of the cell-sizing workbook.

Every step of ``docs/sizing-model.md`` is one native formula on these sheets;
catalogue values (capacities, voltages, densities, thicknesses) come from
``CW_MATERIAL`` of the catalogue's own names (the ``mat_...`` cells of the
Inputs sheet). The builders return typed references to the cells that later
sheets read (:class:`ElectrodeCells`, :class:`Bom`); each formula refers to
cells written above it, so no address is patched in afterwards.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import MappingProxyType

from openpyxl.chart import Reference
from openpyxl.workbook.workbook import Workbook

from ..core.sizing_table import COMPONENTS, SIDES, Component
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


class Side:
    """The cells of one electrode on the Electrodes sheet (cathode: column C,
    anode: column D), set as its rows are written."""

    material: Ref
    formula: Ref
    q: Ref
    v: Ref
    vref: Ref
    rho: Ref
    f: Ref
    b: Ref
    k: Ref
    binder: Ref
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
    w: Ref
    h: Ref
    fp: Ref
    sheets: Ref
    area: Ref
    foil_area: Ref
    pore: Ref


class ElectrodeCells:
    """The cells of the Electrodes sheet that later sheets read."""

    cathode: Side
    anode: Side
    qu: Ref  # usable areal capacity of the cathode
    V: Ref
    T: Ref
    A_needed: Ref
    x: Ref
    n: Ref
    sep: Ref
    t_sep: Ref
    eps_sep: Ref
    rho_sep: Ref
    fp_sep: Ref
    layers: Ref
    A_sep: Ref
    pore_sep: Ref
    pore: Ref
    elyte: Ref
    rho_e: Ref
    vol_e: Ref
    cap: Ref
    energy: Ref
    stack_t: Ref
    stack_vol: Ref
    cell_vol: Ref

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

    def one(self, label: str, cathode: str, unit: str, note: str, fmt: str | None = None) -> Ref:
        """A row with a cathode value only."""
        ws, r = self.w.ws, self.w.row
        style(ws[f"B{r}"], "text").value = label
        c = Ref(ws.title, "C", r)
        style(ws[c.plain], "calc", fmt).value = cathode
        style(ws[f"E{r}"], "unit").value = unit
        style(ws[f"F{r}"], "hint").value = note
        self.w.row += 1
        return c


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


def _coatings(p: _Pairs, e: ElectrodeCells) -> None:
    """Materials, fractions, densities, areal capacities, loadings, thicknesses."""
    c, a = e.cathode, e.anode
    m = {s: resolved_name(f"in_{s}") for s in SIDES}

    def lookup(label: str, prop: str, unit: str, fmt: str | None = None) -> tuple[Ref, Ref]:
        return p.row(label, f'=CW_MATERIAL({m["cathode"]},"{prop}")',
                     f'=CW_MATERIAL({m["anode"]},"{prop}")', unit, "catalogue", "lookup", fmt)

    c.material, a.material = p.row("Active material", f"={m['cathode']}", f"={m['anode']}",
                                   "name", "Inputs (the catalogue's name)")
    c.formula, a.formula = lookup("Formula", "formula", "")
    c.q, a.q = p.row(
        "Specific capacity used",
        yours_or_catalogue("in_cathode_mAh_g", m["cathode"], "practical_capacity"),
        yours_or_catalogue("in_anode_mAh_g", m["anode"], "practical_capacity"),
        "mAh/g", "your input, else the catalogue's practical capacity", "lookup", "0.0")
    c.v, a.v = lookup("Average voltage", "average_voltage", "V", "0.000")
    c.vref, a.vref = lookup("Voltage reference", "voltage_reference", "")
    c.rho, a.rho = lookup("Density of the active material", "density", "g/cm3", "0.00")
    c.f, a.f = p.row("Active fraction", "=in_cathode_active", "=in_anode_active", "of coating",
                     "Inputs", fmt=PCT)
    c.b, a.b = p.row("Binder fraction", "=in_cathode_binder_fraction",
                     "=in_anode_binder_fraction", "of coating", "Inputs", fmt=PCT)
    c.k, a.k = p.row(
        "Conductive carbon fraction",
        f"=IF({c.f}+{c.b}-1>1E-12,NA(),MAX(1-{c.f}-{c.b},0))",
        f"=IF({a.f}+{a.b}-1>1E-12,NA(),MAX(1-{a.f}-{a.b},0))",
        "of coating", "1 - active - binder; #N/A if negative", fmt=PCT)
    b1 = {s: resolved_name(f"in_{s}_binder") for s in SIDES}
    b2 = {s: resolved_name(f"in_{s}_binder2") for s in SIDES}
    c.binder, a.binder = p.row("Binder", f"={b1['cathode']}", f"={b1['anode']}", "name",
                               "Inputs")
    c.b1s, a.b1s = p.row("Share of the binder fraction", "=1-in_cathode_binder2_share",
                         "=1-in_anode_binder2_share", "of binder",
                         "1 - share of the second binder", fmt=PCT)
    c.rho_b1, a.rho_b1 = p.row(
        "Binder density", f'=CW_MATERIAL({b1["cathode"]},"density")',
        f'=CW_MATERIAL({b1["anode"]},"density")', "g/cm3", "catalogue", "lookup", "0.00")
    c.b2, a.b2 = p.row(
        "Second binder", f'=IF(in_cathode_binder2_share=0,"(none)",{b2["cathode"]})',
        f'=IF(in_anode_binder2_share=0,"(none)",{b2["anode"]})', "name",
        "Inputs; (none) when its share is 0")
    c.b2s, a.b2s = p.row("Share of the binder fraction", "=in_cathode_binder2_share",
                         "=in_anode_binder2_share", "of binder", "Inputs", fmt=PCT)
    c.rho_b2, a.rho_b2 = p.row(
        "Second binder density",
        f'=IF(in_cathode_binder2_share=0,"",CW_MATERIAL({b2["cathode"]},"density"))',
        f'=IF(in_anode_binder2_share=0,"",CW_MATERIAL({b2["anode"]},"density"))',
        "g/cm3", "catalogue", "lookup", "0.00")
    carbon = {s: resolved_name(f"in_{s}_carbon") for s in SIDES}
    c.carbon, a.carbon = p.row("Conductive carbon", f"={carbon['cathode']}",
                               f"={carbon['anode']}", "name", "Inputs")
    c.rho_k, a.rho_k = p.row(
        "Carbon density", f'=CW_MATERIAL({carbon["cathode"]},"density")',
        f'=CW_MATERIAL({carbon["anode"]},"density")', "g/cm3", "catalogue", "lookup", "0.00")

    def solids(s: Side) -> str:
        return (
            f"=1/({s.f}/{s.rho}+{s.b}*{s.b1s}/{s.rho_b1}"
            f"+IF({s.b2s}=0,0,{s.b}*{s.b2s}/{s.rho_b2})+{s.k}/{s.rho_k})"
        )

    c.rho_solid, a.rho_solid = p.row("Density of the dry coating solids", solids(c), solids(a),
                                     "g/cm3", "1 / sum(mass fraction / density)", fmt="0.000")
    c.eps, a.eps = p.row("Coating porosity", "=in_cathode_porosity", "=in_anode_porosity",
                         "of volume", "Inputs", fmt=PCT)
    c.rho_coat, a.rho_coat = p.row(
        "Coating density", f"={c.rho_solid}*(1-{c.eps})", f"={a.rho_solid}*(1-{a.eps})",
        "g/cm3", "solids density x (1 - porosity)", fmt="0.000")
    c.qa, a.qa = p.row(
        "Areal capacity per side",
        f'=IF(in_loading_basis="areal capacity",in_loading,in_loading*{c.f}*{c.q}/1000)',
        lambda cathode: f"=in_np_ratio*{cathode}",
        "mAh/cm2", "cathode: loading x active fraction x mAh/g / 1000; anode: N/P x cathode",
        fmt="0.000")
    e.qu = p.one("Usable areal capacity per side", f"={c.qa}*(1-in_first_cycle_loss)",
                 "mAh/cm2", "cathode areal capacity x (1 - first-cycle loss)", "0.000")
    c.load, a.load = p.row(
        "Loading per side (whole coating)",
        f'=IF(in_loading_basis="areal capacity",{c.qa}*1000/({c.f}*{c.q}),in_loading)',
        f"={a.qa}*1000/({a.f}*{a.q})",
        "mg/cm2", "areal capacity x 1000 / (active fraction x mAh/g)", fmt="0.00")
    c.t, a.t = p.row("Coating thickness per side", f"={c.load}*10/{c.rho_coat}",
                     f"={a.load}*10/{a.rho_coat}", "um", "loading x 10 / coating density",
                     fmt="0.0")
    foil = {s: resolved_name(f"in_{s}_foil") for s in SIDES}
    c.foil, a.foil = p.row("Current collector foil", f"={foil['cathode']}", f"={foil['anode']}",
                           "name", "Inputs")
    c.t_foil, a.t_foil = p.row(
        "Foil thickness", yours_or_catalogue("in_cathode_foil_um", foil["cathode"], "thickness"),
        yours_or_catalogue("in_anode_foil_um", foil["anode"], "thickness"),
        "um", "your input, else the catalogue", "lookup", "0.0")
    c.rho_foil, a.rho_foil = p.row(
        "Foil density", f'=CW_MATERIAL({foil["cathode"]},"density")',
        f'=CW_MATERIAL({foil["anode"]},"density")', "g/cm3", "catalogue", "lookup", "0.00")
    c.w, a.w = p.row("Sheet width", "=in_width", "=in_width+2*in_anode_overhang", "mm",
                     "anode: cathode + 2 x overhang", fmt="0.0")
    c.h, a.h = p.row("Sheet height", "=in_height", "=in_height+2*in_anode_overhang", "mm",
                     "anode: cathode + 2 x overhang", fmt="0.0")
    c.fp, a.fp = p.row("Sheet footprint", f"={c.w}*{c.h}/100", f"={a.w}*{a.h}/100", "cm2",
                       "width x height / 100", fmt="#,##0.0")


def build_electrodes(wb: Workbook) -> ElectrodeCells:
    """Coatings, the sheet count, sheets and areas, capacity, energy and volume,
    top to bottom in the order they are found (no cell reads one below it
    except through the sheet count's block)."""
    ws = wb.create_sheet("Electrodes")
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="E", note="F"),
                    {"A": 2.5, "B": 36.0, "C": 20.0, "D": 20.0, "E": 11.0, "F": 62.0})
    w.title(
        "Electrodes and cell",
        "Coatings, sheet count, capacity, energy and volume from the Inputs sheet. "
        "Lavender cells read the catalogue through CW_ functions; white cells are plain "
        "arithmetic.",
    )
    e = ElectrodeCells()
    c, a = e.cathode, e.anode
    p = _Pairs(w)
    w.skip()
    w.band(["Quantity", "Cathode", "Anode", "Unit", "How it is found"])
    _coatings(p, e)

    def val(label: str, formula: str, unit: str, note: str, kind: Kind = "calc",
            fmt: str | None = None) -> Ref:
        return w.value(label, formula, unit, note, kind, fmt)

    # ---- the sheet count
    w.skip()
    w.band(["Sheet count", "Value", "", "Unit", "How it is found"])
    e.V = val("Nominal cell voltage",
              f"=IF(ISBLANK(in_voltage),IF({c.vref}={a.vref},"
              f"IF({c.v}-{a.v}>0,{c.v}-{a.v},NA()),NA()),in_voltage)",
              "V", "your input, else cathode - anode average voltage (same reference)",
              fmt="0.000")
    e.T = val("Target capacity", f'=IF(in_target_basis="energy",in_target/{e.V},in_target)',
              "Ah", "energy target / nominal voltage, or the capacity target", fmt="0.00")
    e.A_needed = val("Cathode face area needed", f"={e.T}*1000/{e.qu}", "cm2",
                     "target Ah x 1000 / usable areal capacity", fmt="#,##0")
    e.x = val("Cathode sheets needed, unrounded", f"={e.A_needed}/(2*{c.fp})", "sheets",
              "area needed / (2 faces x footprint)", fmt="0.000")
    e.n = val("Cathode sheets, n", f"=MAX(1,{ceil_formula(str(e.x))})", "sheets",
              "rounded up (values within 1e-9 of a whole number count as that number)", fmt="0")

    # ---- sheets and areas of each electrode
    w.skip()
    w.band(["Sheets and areas", "Cathode", "Anode", "Unit", "How it is found"])
    c.sheets, a.sheets = p.row("Sheets in the stack", f"={e.n}", f"={e.n}+1", "sheets",
                               "n cathodes, n + 1 anodes (anodes outside)", fmt="0")
    c.area, a.area = p.row("Coated area, both faces", f"=2*{e.n}*{c.fp}", f"=2*{e.n}*{a.fp}",
                           "cm2", "2 n x footprint (outer anode faces bare)", fmt="#,##0")
    c.foil_area, a.foil_area = p.row("Foil area", f"={e.n}*{c.fp}", f"=({e.n}+1)*{a.fp}", "cm2",
                                     "sheets x footprint", fmt="#,##0")
    c.pore, a.pore = p.row("Pore volume of the coatings", f"={c.area}*{c.t}*1E-4*{c.eps}",
                           f"={a.area}*{a.t}*1E-4*{a.eps}", "cm3",
                           "coated area x thickness x porosity", fmt="0.00")

    # ---- the cell
    w.skip()
    w.band(["Cell", "Value", "", "Unit", "How it is found"])
    sep, elyte = resolved_name("in_separator"), resolved_name("in_electrolyte")
    e.sep = val("Separator", f"={sep}", "name", "Inputs (the catalogue's name)")
    e.t_sep = val("Separator thickness", yours_or_catalogue("in_separator_um", sep, "thickness"),
                  "um", "your input, else the catalogue", "lookup", "0.0")
    e.eps_sep = val("Separator porosity",
                    yours_or_catalogue("in_separator_porosity", sep, "porosity"),
                    "of volume", "your input, else the catalogue", "lookup", PCT)
    e.rho_sep = val("Density of the separator polymer", f'=CW_MATERIAL({sep},"density")',
                    "g/cm3", "catalogue (the solid, not the porous film)", "lookup", "0.00")
    e.fp_sep = val("Separator footprint",
                   "=(in_width+2*in_anode_overhang+2*in_separator_overhang)"
                   "*(in_height+2*in_anode_overhang+2*in_separator_overhang)/100",
                   "cm2", "anode sheet + 2 x separator overhang, each way", fmt="#,##0.0")
    e.layers = val("Separator layers", f"=2*{e.n}", "layers", "2 n", fmt="0")
    e.A_sep = val("Separator area", f"=2*{e.n}*{e.fp_sep}", "cm2", "layers x footprint",
                  fmt="#,##0")
    e.pore_sep = val("Pore volume of the separator", f"={e.A_sep}*{e.t_sep}*1E-4*{e.eps_sep}",
                     "cm3", "area x thickness x porosity", fmt="0.00")
    e.pore = val("Pore volume of the stack", f"={c.pore}+{a.pore}+{e.pore_sep}", "cm3",
                 "cathode + anode + separator pores", fmt="0.00")
    e.elyte = val("Electrolyte", f"={elyte}", "name", "Inputs (the catalogue's name)")
    e.rho_e = val("Electrolyte density", f'=CW_MATERIAL({elyte},"density")', "g/cm3",
                  "catalogue", "lookup", "0.00")
    e.vol_e = val("Electrolyte volume", f"=in_electrolyte_fill*{e.pore}", "cm3",
                  "fill x pore volume", fmt="0.00")
    e.cap = val("Capacity", f"={c.area}*{e.qu}/1000", "Ah",
                "cathode coated area x usable areal capacity / 1000", "result", "0.00")
    e.energy = val("Energy", f"={e.cap}*{e.V}", "Wh", "capacity x nominal voltage", "result",
                   "0.0")
    e.stack_t = val("Stack thickness",
                    f"={e.n}*({c.t_foil}+2*{c.t})+({e.n}+1)*{a.t_foil}"
                    f"+2*{e.n}*{a.t}+2*{e.n}*{e.t_sep}",
                    "um", "n (foil + 2 coatings) + (n + 1) foils + 2n anode coatings + 2n "
                    "separators", fmt="#,##0")
    e.stack_vol = val("Stack volume", f"={a.fp}*{e.stack_t}*1E-4", "cm3",
                      "anode footprint x stack thickness", fmt="#,##0.0")
    e.cell_vol = val("Cell volume", f"={e.stack_vol}/in_volume_efficiency", "cm3",
                     "stack volume / (stack volume / cell volume)", fmt="#,##0.0")
    finish_sheet(ws, freeze="C5")
    return e


# --------------------------------------------------------------------------- bill of materials


def _side(comp: Component, e: ElectrodeCells) -> Side:
    return e.cathode if comp.key.startswith("cathode") else e.anode


def _mass_formula(comp: Component, e: ElectrodeCells) -> str:
    part = comp.key.split("_", 1)[-1]
    if comp.key in ("separator", "electrolyte", "cathode_tab", "anode_tab", "housing"):
        return {
            "separator": f"={e.A_sep}*{e.t_sep}*1E-4*{e.rho_sep}*(1-{e.eps_sep})",
            "electrolyte": f"=in_electrolyte_fill*{e.pore}*{e.rho_e}",
            "cathode_tab": "=in_tab_mass",
            "anode_tab": "=in_tab_mass",
            "housing": "=in_housing_mass",
        }[comp.key]
    s = _side(comp, e)
    coating = {
        "active": str(s.f),
        "binder": f"({s.b}*{s.b1s})",
        "binder2": f"({s.b}*{s.b2s})",
        "carbon": str(s.k),
    }
    if part in coating:  # loading x mass fraction x coated area / 1000
        return f"={s.load}*{coating[part]}*{s.area}/1000"
    if part == "foil":
        return f"={s.foil_area}*{s.t_foil}*1E-4*{s.rho_foil}"
    raise KeyError(comp.key)


def _material_formula(comp: Component, e: ElectrodeCells) -> str:
    if comp.optional:  # a second binder: "(none)" when its share is 0
        return f"={_side(comp, e).b2}"
    return f"={resolved_name(comp.material)}"


def _area_formula(comp: Component, e: ElectrodeCells) -> str | None:
    if comp.key == "separator":
        return f"={e.A_sep}/10000"
    if comp.key.endswith("_foil"):
        return f"={_side(comp, e).foil_area}/10000"
    return None


BOM_HEADERS = (
    "Component", "Material", "Mass per cell", "Share of mass", "Sheet area per cell",
    "Scrap applies", "Price", "Price unit", "Cost per good cell", "Share of cost",
)
BOM_UNITS = ("", "", "g", "of cell mass", "m2", "", "USD per unit", "", "USD", "of cost")


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


#: Bill of materials: column letter of each value.
BOM_COLUMNS = {"material": "C", "mass": "D", "area": "F", "scrap": "G", "price": "H",
               "unit": "I", "cost": "J"}


def build_bom(wb: Workbook, e: ElectrodeCells) -> Bom:
    """One row per component: mass, share, price, cost per good cell; key figures; chart."""
    ws = wb.create_sheet("Bill of materials")
    w = SheetWriter(
        wb, ws, Columns(label="B", value="C", unit="D", note="E"),
        {"A": 2.5, "B": 30.0, "C": 24.0, "D": 13.0, "E": 10.0, "F": 12.0, "G": 9.0,
         "H": 10.0, "I": 10.0, "J": 13.0, "K": 10.0},
    )
    w.title("Bill of materials")
    cathode, anode = resolved_name("in_cathode"), resolved_name("in_anode")
    w.text(f'=IF(ISBLANK(in_scenario),"",in_scenario&"  |  ")&{cathode}&" / "&{anode}'
           '&" stacked cell"', kind="hint", span=10, height=30.0)
    w.caution(CAUTION, span=10, height=30.0)
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
        style(ws[f"D{row}"], "calc", "#,##0.00").value = _mass_formula(comp, e)
        style(ws[f"E{row}"], "calc", PCT).value = f"=D{row}/$D${total}"
        area = _area_formula(comp, e)
        style(ws[f"F{row}"], "calc", "0.0000")
        if area:
            ws[f"F{row}"] = area
        style(ws[f"G{row}"], "text").value = "yes" if comp.electrode else "no"
        price_in, unit_in = comp.price, comp.price_unit
        demo = f"INDEX(list_demo_price,MATCH(C{row},list_material,0))"
        style(ws[f"H{row}"], "calc", "#,##0.00").value = (
            f'=IF(C{row}="(none)",0,IF(ISBLANK({price_in}),IF(ISNUMBER({demo}),{demo},NA()),'
            f"{price_in}))"
        )
        style(ws[f"I{row}"], "calc").value = (
            f'=IF(C{row}="(none)","USD/kg",IF(ISBLANK({price_in}),'
            f"INDEX(list_demo_unit,MATCH(C{row},list_material,0)),"
            f"IF(ISBLANK({unit_in}),NA(),{unit_in})))"
        )
        style(ws[f"J{row}"], "calc", "#,##0.000").value = (
            f'=IF(I{row}="USD/m^2",IF(F{row}="",NA(),F{row}),D{row}/1000)'
            f'/IF(G{row}="yes",1-in_scrap,1)*H{row}/in_yield'
        )
        style(ws[f"K{row}"], "calc", PCT).value = f"=J{row}/$J${total}"
    style(ws[f"B{total}"], "result").value = "Total"
    style(ws[f"D{total}"], "result", "#,##0.00").value = f"=SUM(D{first}:D{last})"
    style(ws[f"E{total}"], "result", PCT).value = f"=SUM(E{first}:E{last})"
    style(ws[f"J{total}"], "result", "#,##0.000").value = f"=SUM(J{first}:J{last})"
    style(ws[f"K{total}"], "result", PCT).value = f"=SUM(K{first}:K{last})"
    add_name(wb, "out_cell_mass_g", ws, f"$D${total}")
    add_name(wb, "out_cost_per_cell_USD", ws, f"$J${total}")
    w.row = total + 2

    # ---- key figures
    w.section("Key figures")
    figures = (
        ("out_voltage_V", "Nominal voltage", f"={e.V}", "V", "0.000"),
        ("out_capacity_Ah", "Capacity", f"={e.cap}", "Ah", "0.00"),
        ("out_energy_Wh", "Energy", f"={e.energy}", "Wh", "0.0"),
        ("out_cathode_sheets", "Cathode sheets (anodes: n + 1)", f"={e.n}", "sheets", "0"),
        ("out_cell_volume_cm3", "Cell volume", f"={e.cell_vol}", "cm3", "#,##0.0"),
        ("out_Wh_kg", "Specific energy", f"={e.energy}/($D${total}/1000)", "Wh/kg", "0.0"),
        ("out_Wh_L", "Energy density", f"={e.energy}/({e.cell_vol}/1000)", "Wh/L", "0.0"),
        ("out_cost_per_kWh_USD", "Cost per kWh", f"=$J${total}/({e.energy}/1000)", "USD/kWh",
         "0.0"),
    )
    for name, label, formula, unit, fmt in figures:
        w.value(label, formula, unit, kind="result", number_format=fmt, name=name)
    w.text("Costs are materials only, per good cell: electrode materials (coatings and foils) "
           "are divided by (1 - electrode scrap), every item by the cell yield. Prices without "
           "your input come from the demo price list (invented demo data).", kind="hint", span=4)

    # ---- chart: cost by component
    chart_row = total + 2
    heading(ws[f"F{chart_row}"], "Cost per good cell by component, USD")
    chart = bar_chart(
        True,
        Reference(ws, min_col=10, min_row=first, max_row=last),
        Reference(ws, min_col=2, min_row=first, max_row=last),
        "USD per good cell", "0.00", PALETTE["band_fill"], (11.5, 12.2),
    )
    ws.add_chart(chart, f"F{chart_row + 1}")
    finish_sheet(ws, landscape=True, freeze=f"C{first}")
    ws.print_area = f"A1:K{total + 27}"  # the table, key figures and the chart
    return Bom(ws.title, MappingProxyType(rows), first, last, total)
