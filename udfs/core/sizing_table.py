"""The inputs of the cell-sizing model, declared once: :data:`CELL_SIZING`.

Each row is one input of the cell-sizing workbook and of
:class:`udfs.core.sizing.CellSpec`: defined name, label, unit, hint, section,
default with its basis, domain, and the ``CellSpec`` field it sets. ``CellSpec``
takes its defaults from here and ``design_cell`` its checks; the template
builders take the input cells, names, data validation and check formulas from
here; the command layer checks ``--set``/``--vary`` values here.

:data:`COMPONENTS` lists the bill-of-materials rows (one per component, with
the input that names its material) in the order ``design_cell`` lists them.

>>> CELL_SIZING.get("np_ratio").name, CELL_SIZING.default("np_ratio")
('in_np_ratio', 1.1)
>>> CELL_SIZING.check("in_cathode", "LFP")
'LiFePO4'
>>> CELL_SIZING.reason("in_np_ratio", -1)
'in_np_ratio (N/P ratio) must be > 0 (got -1)'
"""

from __future__ import annotations

from dataclasses import dataclass

from .inputs import Choice, Input, InputTable
from .validate import (
    FRACTION_OPEN,
    NONNEGATIVE,
    POSITIVE,
    POSITIVE_INTEGER,
    UNIT_INTERVAL_HALF_OPEN,
    FreeText,
    Names,
    Options,
)

__all__ = [
    "CELL_SIZING",
    "COMPONENTS",
    "PRICE_UNITS",
    "SIDES",
    "Component",
    "binder_default",
]

PCT = "0.0%"
NUM2 = "0.00"
NUM1 = "0.0"
SIDES = ("cathode", "anode")
#: Price units the workbook's price inputs take (sheet components may use either).
PRICE_UNITS = ("USD/kg", "USD/m^2")


@dataclass(frozen=True)
class Component:
    """One bill-of-materials row: its key, label, the input naming its material,
    the core's name prefix (``'cathode active'`` -> ``'cathode active (NMC811)'``),
    whether electrode scrap applies, whether it is a sheet (may be priced per
    m2), and whether it may be absent (a second binder)."""

    key: str
    label: str
    material: str
    prefix: str
    electrode: bool
    sheet: bool = False
    optional: bool = False

    def core_name(self, material: str) -> str:
        return f"{self.prefix} ({material})"

    @property
    def price(self) -> str:
        """Defined name of this component's price input."""
        return f"in_price_{self.key}"

    @property
    def price_unit(self) -> str:
        """Defined name of this component's price-unit input."""
        return f"in_price_unit_{self.key}"


COMPONENTS: tuple[Component, ...] = (
    Component("cathode_active", "Cathode active material", "in_cathode", "cathode active", True),
    Component("cathode_binder", "Cathode binder", "in_cathode_binder", "cathode binder", True),
    Component("cathode_binder2", "Cathode second binder", "in_cathode_binder2",
              "cathode binder", True, optional=True),
    Component("cathode_carbon", "Cathode conductive carbon", "in_cathode_carbon",
              "cathode carbon", True),
    Component("cathode_foil", "Cathode foil", "in_cathode_foil", "cathode foil", True, True),
    Component("anode_active", "Anode active material", "in_anode", "anode active", True),
    Component("anode_binder", "Anode binder", "in_anode_binder", "anode binder", True),
    Component("anode_binder2", "Anode second binder", "in_anode_binder2", "anode binder", True,
              optional=True),
    Component("anode_carbon", "Anode conductive carbon", "in_anode_carbon", "anode carbon", True),
    Component("anode_foil", "Anode foil", "in_anode_foil", "anode foil", True, True),
    Component("separator", "Separator", "in_separator", "separator", False, True),
    Component("electrolyte", "Electrolyte", "in_electrolyte", "electrolyte", False),
    Component("cathode_tab", "Cathode tab", "in_cathode_tab", "cathode tab", False),
    Component("anode_tab", "Anode tab", "in_anode_tab", "anode tab", False),
    Component("housing", "Housing", "in_housing", "housing", False),
)

_PICK = "Pick from the list, or type a name or alias of the catalogue (e.g. LFP)."
_BLANK_CATALOGUE = "catalogue (blank: the catalogue's value)"

_CHEMISTRY = "Chemistry and target"
_DESIGN = "Electrode design"
_INACTIVE = "Inactive components"
_FOOTPRINT = "Footprint and housing volume"
_YIELD = "Electrode scrap and cell yield"
_PRICES = "Prices (USD; blank uses the demo price list, invented demo data)"
_ORDER = "Order (for the Procurement sheet)"


def _name(name: str, label: str, role: str, default: str | None, field: str | None, hint: str,
          section: str, optional: bool = False) -> Input:
    return Input(name, label, "name", hint, section, Names((role,)), default,
                 "common practice" if default else "", field, optional)


def _prices() -> list[Input]:
    out = []
    for c in COMPONENTS:
        units = PRICE_UNITS if c.sheet else PRICE_UNITS[:1]
        out.append(Input(
            c.price, f"Price: {c.label.lower()}", "USD per unit",
            "Blank: the demo price list (invented). Give the unit beside it.", _PRICES,
            NONNEGATIVE, None, "demo data (blank: the demo price list)", optional=True,
            fmt="#,##0.00",
        ))
        out.append(Input(
            c.price_unit, f"Price unit: {c.label.lower()}", "",
            "USD/kg" + (", or USD/m^2 for the sheet area." if c.sheet else "."), _PRICES,
            Options(units), None, "", optional=True,
        ))
    return out


#: The cell-sizing model's inputs (see the module docstring).
CELL_SIZING = InputTable("cell_sizing", "cell-sizing model", (
    Input("in_scenario", "Scenario (printed on the Bill of materials)", "",
          "A title for this scenario.", "Scenario", FreeText(), "Untitled scenario",
          "template starting value", optional=True),
    # ---- chemistry and target
    _name("in_cathode", "Cathode active material", "cathode", "NMC811", "cathode", _PICK,
          _CHEMISTRY),
    _name("in_anode", "Anode active material", "anode", "graphite", "anode", _PICK, _CHEMISTRY),
    Input("in_cathode_mAh_g", "Cathode specific capacity (optional)", "mAh/g",
          "Blank: the catalogue's practical capacity of the cathode material.", _CHEMISTRY,
          POSITIVE, None, _BLANK_CATALOGUE, "cathode_specific_capacity_mAh_g", True, NUM1),
    Input("in_anode_mAh_g", "Anode specific capacity (optional)", "mAh/g",
          "Blank: the catalogue's practical capacity of the anode material.", _CHEMISTRY,
          POSITIVE, None, _BLANK_CATALOGUE, "anode_specific_capacity_mAh_g", True, NUM1),
    Input("in_voltage", "Nominal cell voltage (optional)", "V",
          "Blank: cathode minus anode average voltage (same reference needed).", _CHEMISTRY,
          POSITIVE, None, _BLANK_CATALOGUE, "nominal_voltage_V", True, "0.000"),
    Input("in_target_basis", "Target given as", "", "capacity (Ah) or energy (Wh) of one cell.",
          _CHEMISTRY, Options(("capacity", "energy")), "capacity", "template starting value"),
    Input("in_target", "Target capacity or energy", "Ah or Wh",
          "The cell gets whole sheets, so it meets or exceeds this.", _CHEMISTRY, POSITIVE, 50.0,
          "template starting value (a large pouch cell)", fmt=NUM1, chooser="in_target_basis",
          choices=(Choice("capacity", "target_capacity_Ah", "Ah"),
                   Choice("energy", "target_energy_Wh", "Wh"))),
    # ---- electrode design
    Input("in_loading_basis", "Cathode coating given as", "",
          "loading (coating mass per area) or areal capacity, per coated side.", _DESIGN,
          Options(("loading", "areal capacity")), "loading", "template starting value"),
    Input("in_loading", "Cathode loading or areal capacity", "mg/cm2 or mAh/cm2",
          "Per coated side; the loading is the whole coating (active, binder, carbon).",
          _DESIGN, POSITIVE, 20.0, "common practice (18-25 mg/cm2 per side, energy cells)",
          fmt=NUM2, chooser="in_loading_basis",
          choices=(Choice("loading", "cathode_loading_mg_cm2", "mg/cm2"),
                   Choice("areal capacity", "cathode_areal_capacity_mAh_cm2", "mAh/cm2"))),
    Input("in_cathode_active", "Cathode active fraction", "of coating mass",
          "Active material share of the dry cathode coating.", _DESIGN, FRACTION_OPEN, 0.96,
          "common practice (94-97 wt% in Li-ion cathodes)", "cathode_active_fraction", fmt=PCT),
    Input("in_cathode_binder_fraction", "Cathode binder fraction", "of coating mass",
          "Binder share; conductive carbon is the rest.", _DESIGN, UNIT_INTERVAL_HALF_OPEN, 0.02,
          "common practice", "cathode_binder_fraction", fmt=PCT),
    Input("in_anode_active", "Anode active fraction", "of coating mass",
          "Active material share of the dry anode coating.", _DESIGN, FRACTION_OPEN, 0.96,
          "common practice (graphite 94-97 wt%)", "anode_active_fraction", fmt=PCT),
    Input("in_anode_binder_fraction", "Anode binder fraction", "of coating mass",
          "Binder share; conductive carbon is the rest.", _DESIGN, UNIT_INTERVAL_HALF_OPEN, 0.03,
          "common practice (CMC + SBR 2-4 wt%)", "anode_binder_fraction", fmt=PCT),
    Input("in_cathode_porosity", "Cathode porosity", "of volume",
          "Pore share of the calendered cathode coating.", _DESIGN, UNIT_INTERVAL_HALF_OPEN, 0.25,
          "common practice (calendered 20-35 %)", "cathode_porosity", fmt=PCT),
    Input("in_anode_porosity", "Anode porosity", "of volume",
          "Pore share of the calendered anode coating.", _DESIGN, UNIT_INTERVAL_HALF_OPEN, 0.30,
          "common practice (calendered 25-40 %)", "anode_porosity", fmt=PCT),
    Input("in_np_ratio", "N/P ratio", "ratio",
          "Anode over cathode areal capacity, before the first-cycle loss.", _DESIGN, POSITIVE,
          1.1, "common practice (1.05-1.2 for graphite anodes)", "np_ratio", fmt=NUM2),
    Input("in_first_cycle_loss", "First-cycle loss", "of cathode capacity",
          "Capacity lost in formation (SEI); usable = 1 - loss.", _DESIGN,
          UNIT_INTERVAL_HALF_OPEN, 0.08, "from memory (SEI formation on graphite, 5-12 %)",
          "first_cycle_loss", fmt=PCT),
    # ---- inactive components
    _name("in_cathode_binder", "Cathode binder", "binder", "PVDF", "cathode_binder",
          "Main binder of the cathode coating.", _INACTIVE),
    _name("in_cathode_binder2", "Cathode second binder (optional)", "binder", None, None,
          "A second binder sharing the binder fraction; blank for none.", _INACTIVE, True),
    Input("in_cathode_binder2_share", "Share of the second cathode binder", "of binder",
          "Part of the binder fraction that is the second binder.", _INACTIVE,
          UNIT_INTERVAL_HALF_OPEN, 0.0, "common practice (one binder, PVDF)", fmt=PCT),
    _name("in_anode_binder", "Anode binder", "binder", "CMC", "anode_binder",
          "Main binder of the anode coating.", _INACTIVE),
    _name("in_anode_binder2", "Anode second binder (optional)", "binder", "SBR", None,
          "A second binder sharing the binder fraction; blank for none.", _INACTIVE, True),
    Input("in_anode_binder2_share", "Share of the second anode binder", "of binder",
          "Part of the binder fraction that is the second binder.", _INACTIVE,
          UNIT_INTERVAL_HALF_OPEN, 0.5, "common practice (water-based CMC + SBR, about 1:1)",
          fmt=PCT),
    _name("in_cathode_carbon", "Cathode conductive carbon", "conductive_carbon", "carbon black",
          "cathode_carbon", "Conductive additive of the cathode.", _INACTIVE),
    _name("in_anode_carbon", "Anode conductive carbon", "conductive_carbon", "carbon black",
          "anode_carbon", "Conductive additive of the anode.", _INACTIVE),
    _name("in_cathode_foil", "Cathode foil", "foil", "aluminium foil", "cathode_foil",
          "Current collector of the cathode.", _INACTIVE),
    Input("in_cathode_foil_um", "Cathode foil thickness (optional)", "um",
          "Blank: the catalogue thickness of the foil.", _INACTIVE, POSITIVE, None,
          _BLANK_CATALOGUE, "cathode_foil_thickness_um", True, NUM1),
    _name("in_anode_foil", "Anode foil", "foil", "copper foil", "anode_foil",
          "Current collector of the anode.", _INACTIVE),
    Input("in_anode_foil_um", "Anode foil thickness (optional)", "um",
          "Blank: the catalogue thickness of the foil.", _INACTIVE, POSITIVE, None,
          _BLANK_CATALOGUE, "anode_foil_thickness_um", True, NUM1),
    _name("in_separator", "Separator", "separator", "PE separator", "separator",
          "Porous film between the electrodes.", _INACTIVE),
    Input("in_separator_um", "Separator thickness (optional)", "um",
          "Blank: the catalogue thickness of the separator.", _INACTIVE, POSITIVE, None,
          _BLANK_CATALOGUE, "separator_thickness_um", True, NUM1),
    Input("in_separator_porosity", "Separator porosity (optional)", "of volume",
          "Blank: the catalogue porosity of the separator.", _INACTIVE, UNIT_INTERVAL_HALF_OPEN,
          None, _BLANK_CATALOGUE, "separator_porosity", True, PCT),
    _name("in_electrolyte", "Electrolyte", "electrolyte", "LiPF6 1M in EC:DMC", "electrolyte",
          "Liquid electrolyte filling the pores.", _INACTIVE),
    Input("in_electrolyte_fill", "Electrolyte fill", "x pore volume",
          "Electrolyte volume over the pore volume of the stack.", _INACTIVE, NONNEGATIVE, 1.1,
          "common practice", "electrolyte_fill", fmt=NUM2),
    _name("in_cathode_tab", "Cathode tab", "tab", "aluminium tab", "cathode_tab",
          "Tab welded to the cathode foils.", _INACTIVE),
    _name("in_anode_tab", "Anode tab", "tab", "nickel tab", "anode_tab",
          "Tab welded to the anode foils.", _INACTIVE),
    Input("in_tab_mass", "Mass of each tab", "g", "Each of the two tabs.", _INACTIVE, NONNEGATIVE,
          2.0, "from memory (each of the two tabs, large pouch cell)", "tab_mass_g", fmt=NUM2),
    _name("in_housing", "Housing", "housing", "pouch laminate", "housing",
          "Pouch or can around the stack.", _INACTIVE),
    Input("in_housing_mass", "Housing mass", "g", "Whole housing of one cell.", _INACTIVE,
          NONNEGATIVE, 15.0, "from memory (pouch of a 50-60 Ah cell)", "housing_mass_g",
          fmt=NUM1),
    # ---- footprint
    Input("in_width", "Cathode sheet width", "mm", "Coated width of one cathode sheet.",
          _FOOTPRINT, POSITIVE, 100.0, "from memory (cathode sheet, large pouch cell)",
          "width_mm", fmt=NUM1),
    Input("in_height", "Cathode sheet height", "mm", "Coated height of one cathode sheet.",
          _FOOTPRINT, POSITIVE, 300.0, "from memory", "height_mm", fmt=NUM1),
    Input("in_anode_overhang", "Anode overhang", "mm", "Anode beyond the cathode, on each edge.",
          _FOOTPRINT, NONNEGATIVE, 1.0, "common practice (0.5-2 mm each edge)",
          "anode_overhang_mm", fmt=NUM2),
    Input("in_separator_overhang", "Separator overhang", "mm",
          "Separator beyond the anode, on each edge.", _FOOTPRINT, NONNEGATIVE, 1.5,
          "common practice (beyond the anode, each edge)", "separator_overhang_mm", fmt=NUM2),
    Input("in_volume_efficiency", "Stack volume / cell volume", "ratio",
          "Share of the cell volume filled by the stack.", _FOOTPRINT, FRACTION_OPEN, 0.85,
          "from memory (stack / cell volume, pouch)", "volume_efficiency", fmt=PCT),
    # ---- scrap and yield
    Input("in_scrap", "Electrode scrap", "of electrode material",
          "Coating, slitting and punching losses; foils included.", _YIELD,
          UNIT_INTERVAL_HALF_OPEN, 0.05, "from memory (coating, slitting, punching losses)",
          "electrode_scrap", fmt=PCT),
    Input("in_yield", "Cell yield", "good / built",
          "Good cells over cells built; costs are per good cell.", _YIELD, FRACTION_OPEN, 0.95,
          "from memory (good cells / cells built)", "cell_yield", fmt=PCT),
    # ---- prices and order
    *_prices(),
    Input("in_order_basis", "Order given as", "",
          "cells (good cells delivered) or MWh of cell energy.", _ORDER,
          Options(("cells", "MWh")), "MWh", "template starting value"),
    Input("in_order_size", "Order size", "cells or MWh",
          "Good cells, or MWh rounded up to whole cells.", _ORDER, POSITIVE, 100.0,
          "template starting value (demo data)", fmt="#,##0.0", chooser="in_order_basis",
          choices=(Choice("cells", "order_cells", "cells", POSITIVE_INTEGER),
                   Choice("MWh", "order_MWh", "MWh"))),
))


def binder_default(side: str) -> str | dict[str, float]:
    """``CellSpec``'s default binder of ``side`` from the table: one name, or
    name -> share of the binder fraction when a second binder has a share.

    >>> binder_default("cathode"), binder_default("anode")
    ('PVDF', {'CMC': 0.5, 'SBR': 0.5})
    """
    first = CELL_SIZING.get(f"in_{side}_binder").default
    second = CELL_SIZING.get(f"in_{side}_binder2").default
    share = CELL_SIZING.get(f"in_{side}_binder2_share").default
    assert isinstance(first, str)
    if second is None or not share:
        return first
    assert isinstance(second, str) and isinstance(share, float)
    return {first: 1.0 - share, str(second): share}
