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
'in_np_ratio (N/P ratio, first-charge basis) must be > 0 (got -1)'
"""

from __future__ import annotations

from dataclasses import dataclass

from .cell_formats import CORE_TYPES, CYLINDER_CLASSES, FORMATS, MODES
from .inputs import Choice, Input, InputTable
from .validate import (
    FRACTION_OPEN,
    NONNEGATIVE,
    POSITIVE,
    POSITIVE_INTEGER,
    UNIT_INTERVAL_HALF_OPEN,
    Domain,
    FreeText,
    Names,
    Options,
)

__all__ = [
    "CELL_SIZING",
    "COMPONENTS",
    "PACK_LINES",
    "PACK_STRUCTURES",
    "PRICE_UNITS",
    "SIDES",
    "Component",
    "PackLine",
]

PCT = "0.0%"
NUM2 = "0.00"
NUM1 = "0.0"
SIDES = ("cathode", "anode")
#: Price units the workbook's price inputs take (sheet components may use either).
PRICE_UNITS = ("USD/kg", "USD/m^2")
#: How the pack's structure is given: cell-to-pack fractions, or component lines.
PACK_STRUCTURES = ("fractions", "components")


@dataclass(frozen=True)
class PackLine:
    """One line of the pack's structure: its key, label, what it is counted
    per (``cell``, ``module`` or ``pack``) and the units of its mass and volume
    inputs (cost is USD). Its inputs are ``in_pack_<key>_mass`` (field
    ``<key>_mass_<unit>``), ``..._volume`` and ``..._cost`` (``<key>_cost_USD``)."""

    key: str
    label: str
    per: str
    mass_unit: str
    volume_unit: str

    @property
    def fields(self) -> tuple[str, str, str]:
        """The PackSpec fields of its mass, volume and cost."""
        return (f"{self.key}_mass_{self.mass_unit}", f"{self.key}_volume_{self.volume_unit}",
                f"{self.key}_cost_USD")


#: The lines of a pack given by components, in the order a pack is built up.
PACK_LINES: tuple[PackLine, ...] = (
    PackLine("busbar", "Busbars", "cell", "g", "cm3"),
    PackLine("holder", "Cell holders", "cell", "g", "cm3"),
    PackLine("frame", "Module frames", "module", "kg", "L"),
    PackLine("electronics", "Electronics", "pack", "kg", "L"),
    PackLine("thermal", "Thermal system", "pack", "kg", "L"),
    PackLine("enclosure", "Enclosure", "pack", "kg", "L"),
)


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
_BLANK_RECIPE = "catalogue (blank: the chemistry's electrode recipe in data/active_materials.csv)"
_BLANK_PRESET = "preset (blank: the format's preset, udfs.core.cell_formats.PRESETS)"
_BLANK_RULE = "catalogue (blank: the chemistry's usual range in data/active_materials.csv)"

_CHEMISTRY = "Chemistry and target"
_DESIGN = "Electrode design"
_INACTIVE = "Inactive components"
_FORMAT = "Format and housing"
_YIELD = "Electrode scrap and cell yield"
_RULES = "Design rules (bounds of the warnings)"
_PRICES = "Prices (USD; blank uses the demo price list, invented demo data)"
_ORDER = "Order (for the Procurement sheet)"
_PACK = "Pack"


def _name(name: str, label: str, role: str, default: str | None, field: str | None, hint: str,
          section: str, optional: bool = False, source: str = "") -> Input:
    return Input(name, label, "name", hint, section, Names((role,)), default,
                 source or ("common practice" if default else ""), field, optional)


def _recipe(name: str, label: str, unit: str, hint: str, domain: Domain, field: str,
            fmt: str) -> Input:
    """An optional number whose blank is the chemistry's recipe value."""
    return Input(name, f"{label} (optional)", unit, f"Blank: the recipe of the chemistry. {hint}",
                 _DESIGN, domain, None, _BLANK_RECIPE, field, True, fmt)


def _geometry(name: str, label: str, hint: str, field: str, domain: Domain = POSITIVE,
              unit: str = "mm", fmt: str = NUM2) -> Input:
    """An optional dimension whose blank is the format's preset."""
    return Input(name, f"{label} (optional)", unit, f"Blank: the format's preset. {hint}",
                 _FORMAT, domain, None, _BLANK_PRESET, field, True, fmt)


def _rule(name: str, label: str, unit: str, hint: str, domain: Domain, default: float | None,
          source: str, field: str, fmt: str) -> Input:
    return Input(name, label, unit, hint, _RULES, domain, default, source, field,
                 default is None, fmt)


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


def _pack_line(key: str, mass: float, volume: float, cost: float, source: str) -> list[Input]:
    """Mass, volume and cost inputs of one line of the pack structure (:data:`PACK_LINES`)."""
    line = next(x for x in PACK_LINES if x.key == key)
    per = f"per {line.per}"
    what = line.label.lower()
    mass_field, volume_field, cost_field = line.fields
    return [
        Input(f"in_pack_{key}_mass", f"{line.label}: mass {per}", line.mass_unit,
              f"Mass of the {what} {per} (components structure only).", _PACK,
              NONNEGATIVE, mass, source, mass_field, fmt=NUM2),
        Input(f"in_pack_{key}_volume", f"{line.label}: volume {per}", line.volume_unit,
              f"Volume the {what} add {per} (components structure only).", _PACK,
              NONNEGATIVE, volume, source, volume_field, fmt=NUM2),
        Input(f"in_pack_{key}_cost", f"{line.label}: cost {per}", "USD",
              f"Cost of the {what} {per} (components structure only).", _PACK,
              NONNEGATIVE, cost, "demo data (invented)", cost_field, fmt="#,##0.00"),
    ]


#: The cell-sizing model's inputs (see the module docstring).
CELL_SIZING = InputTable("cell_sizing", "cell-sizing model", (
    Input("in_scenario", "Scenario (printed on the Bill of materials)", "",
          "A title for this scenario.", "Scenario", FreeText(), "Untitled scenario",
          "template starting value", optional=True),
    # ---- chemistry and target
    _name("in_cathode", "Cathode active material", "cathode", "NMC811", "cathode", _PICK,
          _CHEMISTRY),
    _name("in_anode", "Anode active material", "anode", "graphite", "anode", _PICK, _CHEMISTRY),
    Input("in_cathode_first_charge", "Cathode first-charge capacity (optional)", "mAh/g",
          "Charge the cathode gives up on the first charge. Blank: the catalogue's "
          "first_charge_capacity.", _CHEMISTRY, POSITIVE, None, _BLANK_CATALOGUE,
          "cathode_first_charge_mAh_g", True, NUM1),
    Input("in_cathode_fce", "Cathode first-cycle efficiency (optional)", "fraction",
          "First discharge / first charge of the cathode. Blank: the catalogue's value.",
          _CHEMISTRY, FRACTION_OPEN, None, _BLANK_CATALOGUE, "cathode_first_cycle_efficiency",
          True, PCT),
    Input("in_anode_first_charge", "Anode first-charge capacity (optional)", "mAh/g",
          "Charge the anode takes up on the first charge (its first-cycle loss included). "
          "Blank: the catalogue's first_charge_capacity.", _CHEMISTRY, POSITIVE, None,
          _BLANK_CATALOGUE, "anode_first_charge_mAh_g", True, NUM1),
    Input("in_anode_fce", "Anode first-cycle efficiency (optional)", "fraction",
          "First delithiation / first lithiation of the anode. Blank: the catalogue's value.",
          _CHEMISTRY, FRACTION_OPEN, None, _BLANK_CATALOGUE, "anode_first_cycle_efficiency",
          True, PCT),
    Input("in_voltage", "Nominal cell voltage (optional)", "V",
          "Blank: cathode minus anode average discharge voltage (same reference needed).",
          _CHEMISTRY, POSITIVE, None, _BLANK_CATALOGUE, "nominal_voltage_V", True, "0.000"),
    Input("in_voltage_min", "Cell voltage, lower limit (optional)", "V",
          "Blank: cathode voltage_min minus anode voltage_max (the couple's window).",
          _CHEMISTRY, POSITIVE, None, _BLANK_CATALOGUE, "voltage_min_V", True, "0.000"),
    Input("in_voltage_max", "Cell voltage, upper limit (optional)", "V",
          "Blank: cathode voltage_max minus anode voltage_min (the couple's window).",
          _CHEMISTRY, POSITIVE, None, _BLANK_CATALOGUE, "voltage_max_V", True, "0.000"),
    Input("in_target_basis", "Target given as", "", "capacity (Ah) or energy (Wh) of one cell.",
          _CHEMISTRY, Options(("capacity", "energy")), "capacity", "template starting value"),
    Input("in_target", "Target capacity or energy", "Ah or Wh",
          "Reversible (discharge) capacity. Target mode only; the cell meets or exceeds it.",
          _CHEMISTRY, POSITIVE, 50.0, "template starting value (a large pouch cell)", fmt=NUM1,
          chooser="in_target_basis",
          choices=(Choice("capacity", "target_capacity_Ah", "Ah"),
                   Choice("energy", "target_energy_Wh", "Wh"))),
    # ---- electrode design
    Input("in_loading_basis", "Cathode coating given as", "",
          "loading (coating mass per area) or first-charge areal capacity, per coated side.",
          _DESIGN, Options(("loading", "areal capacity")), "loading", "template starting value"),
    Input("in_loading", "Cathode loading or first-charge areal capacity", "mg/cm2 or mAh/cm2",
          "Per coated side; the loading is the whole coating (active, binder, carbon).",
          _DESIGN, POSITIVE, 20.0, "common practice (18-25 mg/cm2 per side, energy cells)",
          fmt=NUM2, chooser="in_loading_basis",
          choices=(Choice("loading", "cathode_loading_mg_cm2", "mg/cm2"),
                   Choice("areal capacity", "cathode_areal_capacity_mAh_cm2", "mAh/cm2"))),
    _recipe("in_cathode_active", "Cathode active fraction", "of coating mass",
            "Active material share of the dry cathode coating.", FRACTION_OPEN,
            "cathode_active_fraction", PCT),
    _recipe("in_cathode_binder_fraction", "Cathode binder fraction", "of coating mass",
            "Binder share; conductive carbon is the rest.", UNIT_INTERVAL_HALF_OPEN,
            "cathode_binder_fraction", PCT),
    _recipe("in_anode_active", "Anode active fraction", "of coating mass",
            "Active material share of the dry anode coating.", FRACTION_OPEN,
            "anode_active_fraction", PCT),
    _recipe("in_anode_binder_fraction", "Anode binder fraction", "of coating mass",
            "Binder share; conductive carbon is the rest.", UNIT_INTERVAL_HALF_OPEN,
            "anode_binder_fraction", PCT),
    _recipe("in_cathode_porosity", "Cathode porosity", "of volume",
            "Pore share of the calendered cathode coating.", UNIT_INTERVAL_HALF_OPEN,
            "cathode_porosity", PCT),
    _recipe("in_anode_porosity", "Anode porosity", "of volume",
            "Pore share of the calendered anode coating.", UNIT_INTERVAL_HALF_OPEN,
            "anode_porosity", PCT),
    Input("in_np_ratio", "N/P ratio, first-charge basis", "ratio",
          "Anode over cathode first-charge areal capacity; below 1 the anode limits the "
          "capacity and lithium may plate.", _DESIGN, POSITIVE, 1.1,
          "common practice (1.05-1.2 on the first-charge basis for graphite anodes)",
          "np_ratio", fmt=NUM2),
    # ---- inactive components
    _name("in_cathode_binder", "Cathode binder (optional)", "binder", None, "cathode_binder",
          "Blank: the binder(s) of the chemistry's recipe.", _INACTIVE, True, _BLANK_RECIPE),
    _name("in_cathode_binder2", "Cathode second binder (optional)", "binder", None, None,
          "A second binder sharing the binder fraction; blank for none.", _INACTIVE, True),
    Input("in_cathode_binder2_share", "Share of the second cathode binder", "of binder",
          "Part of the binder fraction that is the second binder.", _INACTIVE,
          UNIT_INTERVAL_HALF_OPEN, 0.0, "common practice (one binder)", fmt=PCT),
    _name("in_anode_binder", "Anode binder (optional)", "binder", None, "anode_binder",
          "Blank: the binder(s) of the chemistry's recipe.", _INACTIVE, True, _BLANK_RECIPE),
    _name("in_anode_binder2", "Anode second binder (optional)", "binder", None, None,
          "A second binder sharing the binder fraction; blank for none.", _INACTIVE, True),
    Input("in_anode_binder2_share", "Share of the second anode binder", "of binder",
          "Part of the binder fraction that is the second binder.", _INACTIVE,
          UNIT_INTERVAL_HALF_OPEN, 0.0, "common practice (one binder, or the recipe's)", fmt=PCT),
    _name("in_cathode_carbon", "Cathode conductive carbon (optional)", "conductive_carbon", None,
          "cathode_carbon", "Blank: the recipe's conductive carbon.", _INACTIVE, True,
          _BLANK_RECIPE),
    _name("in_anode_carbon", "Anode conductive carbon (optional)", "conductive_carbon", None,
          "anode_carbon", "Blank: the recipe's conductive carbon.", _INACTIVE, True,
          _BLANK_RECIPE),
    _name("in_cathode_foil", "Cathode foil (optional)", "foil", None, "cathode_foil",
          "Blank: the recipe's current collector.", _INACTIVE, True, _BLANK_RECIPE),
    Input("in_cathode_foil_um", "Cathode foil thickness (optional)", "um",
          "Blank: the catalogue thickness of the foil.", _INACTIVE, POSITIVE, None,
          _BLANK_CATALOGUE, "cathode_foil_thickness_um", True, NUM1),
    _name("in_anode_foil", "Anode foil (optional)", "foil", None, "anode_foil",
          "Blank: the recipe's current collector (copper; aluminium for LTO and hard carbon).",
          _INACTIVE, True, _BLANK_RECIPE),
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
    _name("in_electrolyte", "Electrolyte (optional)", "electrolyte", None, "electrolyte",
          "Blank: NaPF6 1M for sodium-ion couples, LiPF6 1M otherwise.", _INACTIVE, True,
          "common practice (blank: by the couple's family)"),
    Input("in_electrolyte_fill", "Electrolyte fill", "x pore volume",
          "Electrolyte volume over the pore volume of the electrodes and separator.", _INACTIVE,
          NONNEGATIVE, 1.1, "common practice", "electrolyte_fill", fmt=NUM2),
    _name("in_cathode_tab", "Cathode tab", "tab", "aluminium tab", "cathode_tab",
          "Tab welded to the cathode foil.", _INACTIVE),
    _name("in_anode_tab", "Anode tab (optional)", "tab", None, "anode_tab",
          "Blank: nickel tab on a copper foil, aluminium tab on an aluminium foil.", _INACTIVE,
          True, "common practice (blank: by the anode foil)"),
    Input("in_tab_mass", "Mass of each tab (optional)", "g",
          "Blank: from the tab size and the tab metal's density.", _INACTIVE, NONNEGATIVE, None,
          "geometry (blank: tab width x thickness x length x density)", "tab_mass_g", True,
          NUM2),
    _name("in_housing", "Housing (optional)", "housing", None, "housing",
          "Blank: pouch laminate, nickel-plated steel can (cylinder) or aluminium can "
          "(prismatic).", _INACTIVE, True, "common practice (blank: by the format)"),
    Input("in_housing_mass", "Housing mass (optional)", "g",
          "Blank: from the housing's size and its material's density.", _INACTIVE, NONNEGATIVE,
          None, "geometry (blank: walls, bottom and lid x density)", "housing_mass_g", True,
          NUM1),
    # ---- format and housing
    Input("in_format", "Cell format", "", "pouch (stacked), cylindrical (wound) or prismatic "
          "(aluminium can).", _FORMAT, Options(FORMATS), "pouch", "template starting value",
          "cell_format"),
    Input("in_sizing_mode", "Sizing mode", "",
          "target: the target and the free dimensions give the last one; envelope: the outer "
          "size gives the capacity.", _FORMAT, Options(MODES), "target",
          "template starting value", "sizing_mode"),
    Input("in_cylinder_class", "Cylinder class", "", "Presets of a generic diameter class.",
          _FORMAT, Options(CYLINDER_CLASSES), "21 mm", "template starting value",
          "cylinder_class"),
    Input("in_prismatic_core", "Prismatic can holds", "",
          "flat wound rolls or stacks of sheets.", _FORMAT, Options(CORE_TYPES), "wound",
          "common practice", "prismatic_core"),
    _geometry("in_cores", "Rolls or stacks in the can", "Prismatic cans only.", "cores",
              POSITIVE_INTEGER, "count", "0"),
    _geometry("in_width", "Cathode sheet width", "Pouch in target mode: the coated width.",
              "width_mm", fmt=NUM1),
    _geometry("in_height", "Cathode sheet height", "Pouch in target mode: the coated height.",
              "height_mm", fmt=NUM1),
    _geometry("in_cell_width", "Cell width", "Outer; pouch and prismatic.", "cell_width_mm",
              fmt=NUM1),
    _geometry("in_cell_height", "Cell height", "Outer; tabs and terminals not included.",
              "cell_height_mm", fmt=NUM1),
    _geometry("in_cell_thickness", "Cell thickness", "Outer; pouch and prismatic.",
              "cell_thickness_mm"),
    _geometry("in_cell_diameter", "Cell diameter", "Outer; cylinders.", "cell_diameter_mm"),
    _geometry("in_wall", "Housing wall thickness", "Pouch laminate, can wall.", "wall_mm",
              fmt="0.000"),
    _geometry("in_bottom", "Can bottom thickness", "Cans only.", "bottom_mm", fmt="0.000"),
    _geometry("in_lid", "Lid or cap thickness", "Cans only; the cap assembly as an equivalent "
              "plate of the can metal.", "lid_mm", fmt="0.000"),
    _geometry("in_seal", "Seal width", "Pouch only, each edge.", "seal_mm"),
    _geometry("in_headspace", "Headspace", "Cans: height inside not filled by the electrodes.",
              "headspace_mm", NONNEGATIVE),
    _geometry("in_core", "Core (mandrel) size", "Wound: core hole diameter, or the flat "
              "mandrel's thickness.", "core_mm", NONNEGATIVE),
    _geometry("in_tab_lane", "Uncoated tab lane", "Wound: uncoated foil along one edge.",
              "tab_lane_mm", NONNEGATIVE),
    _geometry("in_tab_width", "Tab width", "Each tab.", "tab_width_mm"),
    _geometry("in_tab_thickness", "Tab thickness", "Each tab.", "tab_thickness_mm",
              fmt="0.000"),
    _geometry("in_tab_length", "Tab length", "Each tab.", "tab_length_mm"),
    Input("in_anode_overhang", "Anode overhang", "mm", "Anode beyond the cathode, on each edge.",
          _FORMAT, NONNEGATIVE, 1.0, "common practice (0.5-2 mm each edge)",
          "anode_overhang_mm", fmt=NUM2),
    Input("in_separator_overhang", "Separator overhang", "mm",
          "Separator beyond the anode, on each edge.", _FORMAT, NONNEGATIVE, 1.5,
          "common practice (beyond the anode, each edge)", "separator_overhang_mm", fmt=NUM2),
    # ---- scrap and yield
    Input("in_scrap", "Electrode scrap", "of electrode material",
          "Coating, slitting and punching losses; foils included.", _YIELD,
          UNIT_INTERVAL_HALF_OPEN, 0.05, "from memory (coating, slitting, punching losses)",
          "electrode_scrap", fmt=PCT),
    Input("in_yield", "Cell yield", "good / built",
          "Good cells over cells built; costs are per good cell.", _YIELD, FRACTION_OPEN, 0.95,
          "from memory (good cells / cells built)", "cell_yield", fmt=PCT),
    # ---- design rules
    _rule("in_rule_np_min", "Lowest N/P (first-charge basis)", "ratio",
          "Below it: a lithium plating warning.", POSITIVE, 1.0,
          "common practice (the anode must take all the cathode's first charge)",
          "rule_np_min", NUM2),
    _rule("in_rule_fill_min", "Lowest electrolyte fill", "x pore volume",
          "Below it: a dry-pores warning.", NONNEGATIVE, 1.0,
          "common practice (every pore wetted)", "rule_fill_min", NUM2),
    _rule("in_rule_porosity_band", "Porosity band around the recipe", "of volume",
          "A porosity further than this from the recipe's: a warning.", FRACTION_OPEN, 0.10,
          "common practice (calendered coatings within about 0.1 of their usual porosity)",
          "rule_porosity_band", PCT),
    _rule("in_rule_cathode_loading_min", "Cathode loading, usual minimum (optional)", "mg/cm2",
          "Blank: the chemistry's electrode_loading_min.", POSITIVE, None, _BLANK_RULE,
          "rule_cathode_loading_min", NUM1),
    _rule("in_rule_cathode_loading_max", "Cathode loading, usual maximum (optional)", "mg/cm2",
          "Blank: the chemistry's electrode_loading_max.", POSITIVE, None, _BLANK_RULE,
          "rule_cathode_loading_max", NUM1),
    _rule("in_rule_anode_loading_min", "Anode loading, usual minimum (optional)", "mg/cm2",
          "Blank: the chemistry's electrode_loading_min.", POSITIVE, None, _BLANK_RULE,
          "rule_anode_loading_min", NUM1),
    _rule("in_rule_anode_loading_max", "Anode loading, usual maximum (optional)", "mg/cm2",
          "Blank: the chemistry's electrode_loading_max.", POSITIVE, None, _BLANK_RULE,
          "rule_anode_loading_max", NUM1),
    _rule("in_rule_cathode_thickness_min", "Cathode coating, usual minimum (optional)", "um",
          "Blank: the chemistry's electrode_thickness_min.", POSITIVE, None, _BLANK_RULE,
          "rule_cathode_thickness_min", NUM1),
    _rule("in_rule_cathode_thickness_max", "Cathode coating, usual maximum (optional)", "um",
          "Blank: the chemistry's electrode_thickness_max.", POSITIVE, None, _BLANK_RULE,
          "rule_cathode_thickness_max", NUM1),
    _rule("in_rule_anode_thickness_min", "Anode coating, usual minimum (optional)", "um",
          "Blank: the chemistry's electrode_thickness_min.", POSITIVE, None, _BLANK_RULE,
          "rule_anode_thickness_min", NUM1),
    _rule("in_rule_anode_thickness_max", "Anode coating, usual maximum (optional)", "um",
          "Blank: the chemistry's electrode_thickness_max.", POSITIVE, None, _BLANK_RULE,
          "rule_anode_thickness_max", NUM1),
    _rule("in_rule_voltage_margin", "Margin around the couple's voltage window", "V",
          "Cell voltages beyond the window by more than this: a warning.", NONNEGATIVE, 0.0,
          "common practice (no margin: the catalogue window)", "rule_voltage_margin_V",
          "0.000"),
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
    # ---- pack
    Input("in_pack_voltage_min", "Pack voltage, lowest allowed", "V",
          "Lowest pack voltage the load accepts (series cells x cell lower limit stay above).",
          _PACK, POSITIVE, 200.0, "template starting value (a 400 V class pack)",
          "pack_voltage_min_V", fmt=NUM1),
    Input("in_pack_voltage_max", "Pack voltage, highest allowed", "V",
          "Highest pack voltage the load accepts (series cells x cell upper limit stay below).",
          _PACK, POSITIVE, 450.0, "template starting value (a 400 V class pack)",
          "pack_voltage_max_V", fmt=NUM1),
    Input("in_pack_energy", "Pack energy wanted", "kWh", "Nominal energy; whole parallel "
          "strings, so the pack meets or exceeds it.", _PACK, POSITIVE, 60.0,
          "template starting value", "pack_energy_kWh", fmt=NUM1),
    Input("in_pack_structure", "Pack structure given as", "",
          "fractions (cell-to-pack mass, volume, cost) or components (the lines below).",
          _PACK, Options(PACK_STRUCTURES), "fractions", "template starting value",
          "structure"),
    Input("in_pack_mass_fraction", "Cell-to-pack mass fraction", "cells / pack",
          "Fractions structure: cells' share of the pack mass.", _PACK, FRACTION_OPEN, 0.65,
          "from memory (module and pack overheads)", "cell_to_pack_mass_fraction", fmt=PCT),
    Input("in_pack_volume_fraction", "Cell-to-pack volume fraction", "cells / pack",
          "Fractions structure: cells' share of the pack volume.", _PACK, FRACTION_OPEN, 0.45,
          "from memory (module and pack overheads)", "cell_to_pack_volume_fraction", fmt=PCT),
    Input("in_pack_cost_fraction", "Cell-to-pack cost fraction", "cells / pack",
          "Fractions structure: cells' share of the pack cost.", _PACK, FRACTION_OPEN, 0.75,
          "from memory (cells about three quarters of a pack's cost)",
          "cell_to_pack_cost_fraction", fmt=PCT),
    Input("in_pack_cells_per_module", "Cells per module", "cells",
          "Components structure: modules = ceil(cells / this).", _PACK, POSITIVE_INTEGER, 12.0,
          "template starting value", "cells_per_module", fmt="0"),
    *_pack_line("busbar", 10.0, 1.0, 0.40, "from memory (busbar and weld per cell)"),
    *_pack_line("holder", 15.0, 10.0, 0.30, "from memory (holders, spacers, adhesive per cell)"),
    *_pack_line("frame", 2.0, 1.5, 25.0, "from memory (module frame, end plates, straps)"),
    *_pack_line("electronics", 5.0, 4.0, 600.0,
                "from memory (battery management, contactors, fuses, wiring)"),
    *_pack_line("thermal", 15.0, 10.0, 400.0,
                "from memory (cooling plates, pipes, interface material)"),
    *_pack_line("enclosure", 45.0, 60.0, 900.0,
                "from memory (housing, lid, seals, mounts; volume of walls and free space)"),
))
