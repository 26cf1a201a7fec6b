"""The inputs of the cell-sizing workbook: one table of fields, the bill-of-
materials components, and the bridge between a :class:`CellSpec` and the cells.

Numeric defaults are read from :class:`udfs.core.sizing.CellSpec`, so the
workbook and the core start from the same numbers.

>>> [f.name for f in chemistry_fields()][:2]
['in_cathode', 'in_anode']
>>> COMPONENTS[0].key, COMPONENTS[0].core_name("NMC811")
('cathode_active', 'cathode active (NMC811)')
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from openpyxl.workbook.workbook import Workbook

from ..core import catalogue
from ..core.errors import InputError
from ..core.sizing import CellSpec
from .layout import Choice, Field, Number

__all__ = [
    "COMPONENTS",
    "ORDER_FIELDS",
    "PRICE_UNITS",
    "Component",
    "chemistry_fields",
    "design_fields",
    "footprint_fields",
    "inactive_fields",
    "input_values",
    "set_inputs",
    "spec_inputs",
    "yield_fields",
]

PCT = "0.0%"
NUM2 = "0.00"
NUM1 = "0.0"


def _default(name: str) -> Any:
    """A CellSpec field's default (a number, or None for 'from the catalogue')."""
    for f in dataclasses.fields(CellSpec):
        if f.name == name:
            if f.default is not dataclasses.MISSING:
                return f.default
            if f.default_factory is not dataclasses.MISSING:
                return f.default_factory()
    raise KeyError(name)


@dataclass(frozen=True)
class Component:
    """One bill-of-materials row: its key, label, the input naming its material,
    the core's name prefix, whether electrode scrap applies and whether it is a
    sheet (priced per m2 if wanted)."""

    key: str
    label: str
    material: str
    prefix: str
    electrode: bool
    sheet: bool = False
    optional: bool = False

    def core_name(self, material: str) -> str:
        return f"{self.prefix} ({material})"


COMPONENTS: tuple[Component, ...] = (
    Component("cathode_active", "Cathode active material", "in_cathode", "cathode active", True),
    Component("cathode_binder", "Cathode binder", "in_cathode_binder", "cathode binder", True),
    Component(
        "cathode_binder2", "Cathode second binder", "in_cathode_binder2", "cathode binder", True,
        optional=True,
    ),
    Component(
        "cathode_carbon", "Cathode conductive carbon", "in_cathode_carbon", "cathode carbon", True
    ),
    Component("cathode_foil", "Cathode foil", "in_cathode_foil", "cathode foil", True, True),
    Component("anode_active", "Anode active material", "in_anode", "anode active", True),
    Component("anode_binder", "Anode binder", "in_anode_binder", "anode binder", True),
    Component(
        "anode_binder2", "Anode second binder", "in_anode_binder2", "anode binder", True,
        optional=True,
    ),
    Component("anode_carbon", "Anode conductive carbon", "in_anode_carbon", "anode carbon", True),
    Component("anode_foil", "Anode foil", "in_anode_foil", "anode foil", True, True),
    Component("separator", "Separator", "in_separator", "separator", False, True),
    Component("electrolyte", "Electrolyte", "in_electrolyte", "electrolyte", False),
    Component("cathode_tab", "Cathode tab", "in_cathode_tab", "cathode tab", False),
    Component("anode_tab", "Anode tab", "in_anode_tab", "anode tab", False),
    Component("housing", "Housing", "in_housing", "housing", False),
)

_FRACTION = Number(lo=0, hi=1, lo_open=True, percent=True)
_FRACTION_HALF = Number(lo=0, hi=1, hi_open=True, percent=True)
_POSITIVE = Number(lo=0, lo_open=True)
_POSITIVE_OR_BLANK = Number(lo=0, lo_open=True, blank_ok=True)
_NONNEGATIVE = Number(lo=0)

TARGET_BASES = ("capacity", "energy")
LOADING_BASES = ("loading", "areal capacity")
ORDER_BASES = ("cells", "MWh")
PRICE_UNITS = ("USD/kg", "USD/m^2")


def chemistry_fields() -> list[Field]:
    return [
        Field("in_cathode", "Cathode active material", "NMC811", "name",
              "Pick from the catalogue list.", Choice("list_cathode")),
        Field("in_anode", "Anode active material", "graphite", "name",
              "Pick from the catalogue list.", Choice("list_anode")),
        Field("in_cathode_mAh_g", "Cathode specific capacity (optional)", None, "mAh/g",
              "Blank: the catalogue's practical capacity of the cathode material.",
              _POSITIVE_OR_BLANK, NUM1),
        Field("in_anode_mAh_g", "Anode specific capacity (optional)", None, "mAh/g",
              "Blank: the catalogue's practical capacity of the anode material.",
              _POSITIVE_OR_BLANK, NUM1),
        Field("in_voltage", "Nominal cell voltage (optional)", None, "V",
              "Blank: cathode minus anode average voltage (same reference needed).",
              _POSITIVE_OR_BLANK, "0.000"),
        Field("in_target_basis", "Target given as", "capacity", "",
              "capacity (Ah) or energy (Wh) of one cell.", Choice(TARGET_BASES)),
        Field("in_target", "Target capacity or energy", 50.0,
              '=IF(in_target_basis="energy","Wh","Ah")',
              "The cell gets whole sheets, so it meets or exceeds this.", _POSITIVE, NUM1),
    ]


def design_fields() -> list[Field]:
    d = _default
    return [
        Field("in_loading_basis", "Cathode coating given as", "loading", "",
              "loading (coating mass per area) or areal capacity, per coated side.",
              Choice(LOADING_BASES)),
        Field("in_loading", "Cathode loading or areal capacity", 20.0,
              '=IF(in_loading_basis="areal capacity","mAh/cm2","mg/cm2")',
              "Per coated side; the loading is the whole coating (active, binder, carbon).",
              _POSITIVE, NUM2),
        Field("in_cathode_active", "Cathode active fraction", d("cathode_active_fraction"),
              "of coating mass", "Active material share of the dry cathode coating.",
              _FRACTION, PCT),
        Field("in_cathode_binder_fraction", "Cathode binder fraction",
              d("cathode_binder_fraction"), "of coating mass",
              "Binder share; conductive carbon is the rest.", _FRACTION_HALF, PCT),
        Field("in_anode_active", "Anode active fraction", d("anode_active_fraction"),
              "of coating mass", "Active material share of the dry anode coating.",
              _FRACTION, PCT),
        Field("in_anode_binder_fraction", "Anode binder fraction", d("anode_binder_fraction"),
              "of coating mass", "Binder share; conductive carbon is the rest.",
              _FRACTION_HALF, PCT),
        Field("in_cathode_porosity", "Cathode porosity", d("cathode_porosity"), "of volume",
              "Pore share of the calendered cathode coating.", _FRACTION_HALF, PCT),
        Field("in_anode_porosity", "Anode porosity", d("anode_porosity"), "of volume",
              "Pore share of the calendered anode coating.", _FRACTION_HALF, PCT),
        Field("in_np_ratio", "N/P ratio", d("np_ratio"), "ratio",
              "Anode over cathode areal capacity, before the first-cycle loss.",
              _POSITIVE, NUM2),
        Field("in_first_cycle_loss", "First-cycle loss", d("first_cycle_loss"),
              "of cathode capacity", "Capacity lost in formation (SEI); usable = 1 - loss.",
              _FRACTION_HALF, PCT),
    ]


def inactive_fields() -> list[Field]:
    d = _default
    anode_binders = d("anode_binder")
    a1, a2 = list(anode_binders)[:2]
    share = Number(lo=0, hi=1, hi_open=True, percent=True)
    return [
        Field("in_cathode_binder", "Cathode binder", d("cathode_binder"), "name",
              "Main binder of the cathode coating.", Choice("list_binder")),
        Field("in_cathode_binder2", "Cathode second binder (optional)", None, "name",
              "A second binder sharing the binder fraction; blank for none.",
              Choice("list_binder", blank_ok=True)),
        Field("in_cathode_binder2_share", "Share of the second cathode binder", 0.0,
              "of binder", "Part of the binder fraction that is the second binder.",
              share, PCT),
        Field("in_anode_binder", "Anode binder", a1, "name",
              "Main binder of the anode coating.", Choice("list_binder")),
        Field("in_anode_binder2", "Anode second binder (optional)", a2, "name",
              "A second binder sharing the binder fraction; blank for none.",
              Choice("list_binder", blank_ok=True)),
        Field("in_anode_binder2_share", "Share of the second anode binder",
              anode_binders[a2], "of binder",
              "Part of the binder fraction that is the second binder.", share, PCT),
        Field("in_cathode_carbon", "Cathode conductive carbon", d("cathode_carbon"), "name",
              "Conductive additive of the cathode.", Choice("list_carbon")),
        Field("in_anode_carbon", "Anode conductive carbon", d("anode_carbon"), "name",
              "Conductive additive of the anode.", Choice("list_carbon")),
        Field("in_cathode_foil", "Cathode foil", d("cathode_foil"), "name",
              "Current collector of the cathode.", Choice("list_foil")),
        Field("in_cathode_foil_um", "Cathode foil thickness (optional)", None, "um",
              "Blank: the catalogue thickness of the foil.", _POSITIVE_OR_BLANK, NUM1),
        Field("in_anode_foil", "Anode foil", d("anode_foil"), "name",
              "Current collector of the anode.", Choice("list_foil")),
        Field("in_anode_foil_um", "Anode foil thickness (optional)", None, "um",
              "Blank: the catalogue thickness of the foil.", _POSITIVE_OR_BLANK, NUM1),
        Field("in_separator", "Separator", d("separator"), "name",
              "Porous film between the electrodes.", Choice("list_separator")),
        Field("in_separator_um", "Separator thickness (optional)", None, "um",
              "Blank: the catalogue thickness of the separator.", _POSITIVE_OR_BLANK, NUM1),
        Field("in_separator_porosity", "Separator porosity (optional)", None, "of volume",
              "Blank: the catalogue porosity of the separator.",
              Number(lo=0, hi=1, hi_open=True, blank_ok=True, percent=True), PCT),
        Field("in_electrolyte", "Electrolyte", d("electrolyte"), "name",
              "Liquid electrolyte filling the pores.", Choice("list_electrolyte")),
        Field("in_electrolyte_fill", "Electrolyte fill", d("electrolyte_fill"),
              "x pore volume", "Electrolyte volume over the pore volume of the stack.",
              _NONNEGATIVE, NUM2),
        Field("in_cathode_tab", "Cathode tab", d("cathode_tab"), "name",
              "Tab welded to the cathode foils.", Choice("list_tab")),
        Field("in_anode_tab", "Anode tab", d("anode_tab"), "name",
              "Tab welded to the anode foils.", Choice("list_tab")),
        Field("in_tab_mass", "Mass of each tab", d("tab_mass_g"), "g",
              "Each of the two tabs.", _NONNEGATIVE, NUM2),
        Field("in_housing", "Housing", d("housing"), "name",
              "Pouch or can around the stack.", Choice("list_housing")),
        Field("in_housing_mass", "Housing mass", d("housing_mass_g"), "g",
              "Whole housing of one cell.", _NONNEGATIVE, NUM1),
    ]


def footprint_fields() -> list[Field]:
    d = _default
    return [
        Field("in_width", "Cathode sheet width", d("width_mm"), "mm",
              "Coated width of one cathode sheet.", _POSITIVE, NUM1),
        Field("in_height", "Cathode sheet height", d("height_mm"), "mm",
              "Coated height of one cathode sheet.", _POSITIVE, NUM1),
        Field("in_anode_overhang", "Anode overhang", d("anode_overhang_mm"), "mm",
              "Anode beyond the cathode, on each edge.", _NONNEGATIVE, NUM2),
        Field("in_separator_overhang", "Separator overhang", d("separator_overhang_mm"), "mm",
              "Separator beyond the anode, on each edge.", _NONNEGATIVE, NUM2),
        Field("in_volume_efficiency", "Stack volume / cell volume", d("volume_efficiency"),
              "ratio", "Share of the cell volume filled by the stack.", _FRACTION, PCT),
    ]


def yield_fields() -> list[Field]:
    d = _default
    return [
        Field("in_scrap", "Electrode scrap", d("electrode_scrap"), "of electrode material",
              "Coating, slitting and punching losses; foils included.", _FRACTION_HALF, PCT),
        Field("in_yield", "Cell yield", d("cell_yield"), "good / built",
              "Good cells over cells built; costs are per good cell.", _FRACTION, PCT),
    ]


ORDER_FIELDS: tuple[Field, ...] = (
    Field("in_order_basis", "Order given as", "MWh", "",
          "cells (good cells delivered) or MWh of cell energy.", Choice(ORDER_BASES)),
    Field("in_order_size", "Order size", 100.0,
          '=IF(in_order_basis="cells","cells","MWh")',
          "Good cells, or MWh rounded up to whole cells.", _POSITIVE, "#,##0.0"),
)


# --------------------------------------------------------------------------- spec <-> cells

_DIRECT: Mapping[str, str] = {
    "cathode": "in_cathode",
    "anode": "in_anode",
    "cathode_specific_capacity_mAh_g": "in_cathode_mAh_g",
    "anode_specific_capacity_mAh_g": "in_anode_mAh_g",
    "nominal_voltage_V": "in_voltage",
    "cathode_active_fraction": "in_cathode_active",
    "cathode_binder_fraction": "in_cathode_binder_fraction",
    "anode_active_fraction": "in_anode_active",
    "anode_binder_fraction": "in_anode_binder_fraction",
    "cathode_porosity": "in_cathode_porosity",
    "anode_porosity": "in_anode_porosity",
    "np_ratio": "in_np_ratio",
    "first_cycle_loss": "in_first_cycle_loss",
    "cathode_carbon": "in_cathode_carbon",
    "anode_carbon": "in_anode_carbon",
    "cathode_foil": "in_cathode_foil",
    "anode_foil": "in_anode_foil",
    "cathode_foil_thickness_um": "in_cathode_foil_um",
    "anode_foil_thickness_um": "in_anode_foil_um",
    "separator": "in_separator",
    "separator_thickness_um": "in_separator_um",
    "separator_porosity": "in_separator_porosity",
    "electrolyte": "in_electrolyte",
    "electrolyte_fill": "in_electrolyte_fill",
    "cathode_tab": "in_cathode_tab",
    "anode_tab": "in_anode_tab",
    "tab_mass_g": "in_tab_mass",
    "housing": "in_housing",
    "housing_mass_g": "in_housing_mass",
    "width_mm": "in_width",
    "height_mm": "in_height",
    "anode_overhang_mm": "in_anode_overhang",
    "separator_overhang_mm": "in_separator_overhang",
    "volume_efficiency": "in_volume_efficiency",
    "electrode_scrap": "in_scrap",
    "cell_yield": "in_yield",
}


_MATERIAL_INPUTS = frozenset(c.material for c in COMPONENTS)


def _canonical(field: str, name: str) -> str:
    """The catalogue's own spelling (the drop-down lists hold no aliases)."""
    return catalogue.material(name, field).name


def _scalar(field: str, value: Any) -> float | str | None:
    if value is None or isinstance(value, str):
        return value
    try:
        return float(value)
    except (TypeError, ValueError):
        raise InputError(
            field, value, "a single number (the workbook holds one scenario)"
        ) from None


def _binders(field: str, value: Any) -> tuple[str, str | None, float]:
    """(main binder, second binder or None, share of the second)."""
    if isinstance(value, str):
        return value, None, 0.0
    if isinstance(value, Mapping) and 1 <= len(value) <= 2:
        items = list(value.items())
        if len(items) == 1:
            return items[0][0], None, 0.0
        (first, _), (second, share) = items
        return first, second, float(share)
    raise InputError(field, value, "a binder name or a mapping of at most two binders")


def _price(where: str, raw: Any) -> tuple[float, str]:
    if isinstance(raw, tuple):
        value, unit = raw
        unit = str(unit).replace(" ", "")
        if unit in ("USD/m2", "USD/m^2"):
            return float(value), "USD/m^2"
        if unit == "USD/kg":
            return float(value), "USD/kg"
        raise InputError(where, raw, "a price in USD/kg or USD/m^2 (the workbook's units)")
    return float(raw), "USD/kg"


def spec_inputs(
    spec: CellSpec, order_cells: float | None = None, order_MWh: float | None = None
) -> dict[str, float | str | None]:
    """The workbook input values (defined name -> value) that describe ``spec``.

    >>> v = spec_inputs(CellSpec("LFP", "graphite", target_energy_Wh=100.0,
    ...                          cathode_areal_capacity_mAh_cm2=3.0))
    >>> v["in_target_basis"], v["in_target"], v["in_loading_basis"], v["in_price_separator"]
    ('energy', 100.0, 'areal capacity', None)
    """
    if not isinstance(spec, CellSpec):
        raise InputError("spec", spec, "a CellSpec")
    out: dict[str, float | str | None] = {}
    for field, name in _DIRECT.items():
        out[name] = _scalar(field, getattr(spec, field))
        if name in _MATERIAL_INPUTS and isinstance(out[name], str):
            out[name] = _canonical(field, str(out[name]))
    if spec.target_capacity_Ah is not None:
        out["in_target_basis"], out["in_target"] = "capacity", _scalar(
            "target_capacity_Ah", spec.target_capacity_Ah
        )
    else:
        out["in_target_basis"], out["in_target"] = "energy", _scalar(
            "target_energy_Wh", spec.target_energy_Wh
        )
    if spec.cathode_loading_mg_cm2 is not None:
        out["in_loading_basis"], out["in_loading"] = "loading", _scalar(
            "cathode_loading_mg_cm2", spec.cathode_loading_mg_cm2
        )
    else:
        out["in_loading_basis"], out["in_loading"] = "areal capacity", _scalar(
            "cathode_areal_capacity_mAh_cm2", spec.cathode_areal_capacity_mAh_cm2
        )
    for side in ("cathode", "anode"):
        first, second, share = _binders(f"{side}_binder", getattr(spec, f"{side}_binder"))
        out[f"in_{side}_binder"] = _canonical(f"{side}_binder", first)
        out[f"in_{side}_binder2"] = None if second is None else _canonical(
            f"{side}_binder", second
        )
        out[f"in_{side}_binder2_share"] = share
    prices = {
        catalogue.material(k, "prices").name: _price(f"prices[{k!r}]", v)
        for k, v in (spec.prices or {}).items()
    }
    for c in COMPONENTS:
        material = out[c.material]
        hit = prices.get(material) if isinstance(material, str) else None
        out[f"in_price_{c.key}"] = None if hit is None else hit[0]
        out[f"in_price_unit_{c.key}"] = None if hit is None else hit[1]
    if order_cells is not None and order_MWh is not None:
        raise InputError("order_cells", order_cells, detail="give at most one of the two orders")
    if order_cells is not None:
        out["in_order_basis"], out["in_order_size"] = "cells", float(order_cells)
    elif order_MWh is not None:
        out["in_order_basis"], out["in_order_size"] = "MWh", float(order_MWh)
    return out


def set_inputs(wb: Workbook, values: Mapping[str, float | str | None]) -> None:
    """Write ``values`` (defined name -> value) into the input cells of ``wb``.

    Only unlocked single-cell inputs may be written; anything else is refused.
    """
    for name, value in values.items():
        if name not in wb.defined_names:
            raise InputError("values", name, detail=f"{name!r} is not an input of this workbook")
        destinations = list(wb.defined_names[name].destinations)
        if len(destinations) != 1 or ":" in destinations[0][1]:
            raise InputError("values", name, detail=f"{name!r} is not a single cell")
        sheet, ref = destinations[0]
        cell = wb[sheet][ref.replace("$", "")]
        if cell.protection.locked:
            raise InputError("values", name, detail=f"{name!r} is a computed cell, not an input")
        cell.value = value


def input_values(wb: Workbook) -> dict[str, Any]:
    """The current input values of ``wb`` (defined names starting ``in_``)."""
    out: dict[str, Any] = {}
    for name, dn in wb.defined_names.items():
        if name.startswith("in_"):
            sheet, ref = next(iter(dn.destinations))
            out[name] = wb[sheet][ref.replace("$", "")].value
    return out
