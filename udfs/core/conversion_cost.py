"""Conversion cost: a cell plant turning bought materials into good cells, and
the waterfall from materials to the full cost per kWh.

The structure is the one the cost literature uses (KWADE2018 and LIU2021 for
the process chain and where its cost arises, SCHMUCH2018 for the material
share of cell cost, DEGEN2023 for energy per kWh of cells by process step):
yields by process step with a credit for recovered scrap, capital per annual
GWh written off over the depreciation years, labour, energy per kWh of cells
times the energy price, an overhead and a margin. The parameter values of
:data:`PLANT` are **demo data (invented)**: plausible magnitudes, not a
plant's figures. Results are estimates, not quotations.

Per kWh of good cells (yields ``y_e`` electrode, ``y_a`` assembly, ``y_f``
formation; ``E`` and ``C`` the purchase value of the electrode parts and of the
other parts that end up in good cells)::

    materials in cells = E + C
    scrap              = E / (y_e y_a y_f) + C / (y_a y_f) - (E + C)
    scrap credit       = - s * scrap                        (s: share recovered)
    depreciation       = capex per annual GWh / (years * 1e6)
    labour             = headcount * cost per person-year / (annual GWh * 1e6)
    energy             = price * (e_el / (y_e y_a y_f) + e_dry / (y_a y_f) + e_form / y_f)
    overhead           = o * (depreciation + labour + energy)
    margin             = m * (every line above)
    full cost          = sum of the lines

Each energy intensity is per kWh of cells passing that step, so scrapped
cells carry the energy already spent on them.

>>> w = plant_cost(50.0, 20.0)
>>> abs(float(sum(w.lines().values()) - w.full_USD_kWh)) < 1e-12
True
>>> [name for name in w.lines()][:3]
['materials in cells', 'scrap', 'scrap credit']
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .errors import InputError, NotFoundError
from .inputs import Input, InputTable
from .names import closest
from .shapes import broadcast_shape, full
from .validate import (
    FRACTION,
    FRACTION_OPEN,
    NONNEGATIVE,
    POSITIVE,
    UNIT_INTERVAL_HALF_OPEN,
    check,
)

__all__ = [
    "COST_CAUTION",
    "PLANT",
    "PLANT_FIELDS",
    "PlantCost",
    "check_plant",
    "materials_factors",
    "plant_cost",
    "plant_kernel",
]

Array = NDArray[np.float64]

#: The caution every cost output carries.
COST_CAUTION = (
    "Cost figures are estimates from a simplified model and the chosen price book, "
    "not quotations or offers; check them against suppliers' quotes before any decision."
)

_SECTION = "Plant (conversion cost; demo data, invented)"
_DEMO = "demo data (invented)"


def _in(field: str, label: str, unit: str, hint: str, domain: Any, default: float,
        fmt: str = "#,##0.00") -> Input:
    return Input(f"in_{field}", label, unit, hint, _SECTION, domain, default, _DEMO, field,
                 fmt=fmt)


#: The plant model's inputs, declared once (defaults are invented demo data).
PLANT = InputTable("plant", "plant model (conversion cost)", (
    _in("annual_output_GWh", "Annual output of good cells", "GWh/yr",
        "Energy of the good cells the plant ships in a year.", POSITIVE, 20.0),
    _in("electrode_yield", "Electrode yield", "fraction",
        "Share of coated electrode that reaches assembly (mixing, coating, slitting, punching).",
        FRACTION_OPEN, 0.95, "0.0%"),
    _in("assembly_yield", "Assembly yield", "fraction",
        "Share of assembled cells that reach formation.", FRACTION_OPEN, 0.98, "0.0%"),
    _in("formation_yield", "Formation yield", "fraction",
        "Share of formed cells that pass end-of-line test.", FRACTION_OPEN, 0.97, "0.0%"),
    _in("scrap_credit", "Scrap credit", "fraction",
        "Share of the purchase value of scrapped material recovered (recycling).",
        FRACTION, 0.30, "0.0%"),
    _in("capex_USD_per_GWh", "Capital per annual GWh", "USD per GWh/yr",
        "Plant and equipment per GWh of annual output.", NONNEGATIVE, 80e6, "#,##0"),
    _in("depreciation_years", "Depreciation period", "years",
        "Straight-line write-off of the capital.", POSITIVE, 10.0, "0"),
    _in("labour_headcount", "Labour", "people", "Direct and indirect staff of the plant.",
        NONNEGATIVE, 1200.0, "#,##0"),
    _in("labour_cost_USD_per_year", "Cost per person", "USD/yr",
        "Wages and charges per person and year.", NONNEGATIVE, 60000.0, "#,##0"),
    _in("energy_electrode_kWh_per_kWh", "Energy: electrode making", "kWh per kWh of cells",
        "Mixing, coating, drying and solvent recovery, per kWh of cells made.", NONNEGATIVE,
        12.0, "0.0"),
    _in("energy_dry_room_kWh_per_kWh", "Energy: assembly and dry room", "kWh per kWh of cells",
        "Dry-room air and assembly lines, per kWh of cells assembled.", NONNEGATIVE, 10.0,
        "0.0"),
    _in("energy_formation_kWh_per_kWh", "Energy: formation and ageing", "kWh per kWh of cells",
        "Formation cycling (net of energy fed back) and ageing, per kWh of cells formed.",
        NONNEGATIVE, 6.0, "0.0"),
    _in("energy_price_USD_per_kWh", "Energy price", "USD/kWh", "Price of the plant's energy.",
        NONNEGATIVE, 0.10, "0.000"),
    _in("overhead_fraction", "Overhead", "fraction of conversion cost",
        "Maintenance, indirect cost, building: a share of depreciation + labour + energy.",
        NONNEGATIVE, 0.25, "0.0%"),
    _in("margin_fraction", "Margin", "fraction of cost",
        "Margin on the full cost before margin.", UNIT_INTERVAL_HALF_OPEN, 0.05, "0.0%"),
))

#: The model arguments of :data:`PLANT`, in order.
PLANT_FIELDS: tuple[str, ...] = tuple(inp.field for inp in PLANT if inp.field is not None)

_LINES = ("materials in cells", "scrap", "scrap credit", "depreciation", "labour", "energy",
          "overhead", "margin")


def plant_kernel(E: Any, C: Any, p: Mapping[str, Any]) -> dict[str, Any]:
    """The equations of the module docstring on plain numbers or numpy arrays
    (no checks, arithmetic only, so that a plain-float loop runs the very same
    code). ``p`` maps every field of :data:`PLANT` to its value.

    Sums are built with augmented assignment on a fresh result (``x = a + b;
    x += c``): in place on arrays (no temporary per term), the same float
    operations in the same order on plain numbers."""
    ye, ya, yf = p["electrode_yield"], p["assembly_yield"], p["formation_yield"]
    k_form = 1.0 / yf
    k_asm = k_form / ya
    k_el = k_asm / ye
    in_cells = E + C
    scrap = E * k_el
    scrap += C * k_asm
    scrap -= in_cells
    credit = scrap * -p["scrap_credit"]
    depreciation = p["capex_USD_per_GWh"] / (p["depreciation_years"] * 1e6)
    labour = p["labour_headcount"] * p["labour_cost_USD_per_year"]
    labour /= p["annual_output_GWh"] * 1e6
    energy_kWh = p["energy_electrode_kWh_per_kWh"] * k_el
    energy_kWh += p["energy_dry_room_kWh_per_kWh"] * k_asm
    energy_kWh += p["energy_formation_kWh_per_kWh"] * k_form
    energy = p["energy_price_USD_per_kWh"] * energy_kWh
    conversion = depreciation + labour
    conversion += energy
    overhead = p["overhead_fraction"] * conversion
    before_margin = in_cells + scrap
    before_margin += credit
    before_margin += conversion
    before_margin += overhead
    margin = p["margin_fraction"] * before_margin
    return {
        "materials in cells": in_cells,
        "scrap": scrap,
        "scrap credit": credit,
        "depreciation": depreciation,
        "labour": labour,
        "energy": energy,
        "overhead": overhead,
        "margin": margin,
        "full": before_margin + margin,
        "energy_kWh_per_kWh": energy_kWh,
    }


def materials_factors(p: Mapping[str, Any]) -> tuple[Any, Any, Any]:
    """``(electrode, other, margin)``: d(full)/d(E) = electrode x margin and
    d(full)/d(C) = other x margin (yields and scrap credit; the plant's
    conversion lines do not depend on the materials)."""
    k_form = 1.0 / p["formation_yield"]
    k_asm = k_form / p["assembly_yield"]
    k_el = k_asm / p["electrode_yield"]
    s = p["scrap_credit"]
    return k_el - s * (k_el - 1.0), k_asm - s * (k_asm - 1.0), 1.0 + p["margin_fraction"]


@dataclass(frozen=True)
class PlantCost:
    """The waterfall per kWh of good cells (USD/kWh; arrays of the broadcast
    shape). :meth:`lines` lists it in order; the lines sum to ``full_USD_kWh``."""

    materials_in_cells_USD_kWh: Array
    scrap_USD_kWh: Array
    scrap_credit_USD_kWh: Array
    depreciation_USD_kWh: Array
    labour_USD_kWh: Array
    energy_USD_kWh: Array
    overhead_USD_kWh: Array
    margin_USD_kWh: Array
    full_USD_kWh: Array
    energy_kWh_per_kWh: Array
    caution: str = COST_CAUTION

    def lines(self) -> dict[str, Array]:
        """The waterfall, materials first, margin last."""
        values = (self.materials_in_cells_USD_kWh, self.scrap_USD_kWh, self.scrap_credit_USD_kWh,
                  self.depreciation_USD_kWh, self.labour_USD_kWh, self.energy_USD_kWh,
                  self.overhead_USD_kWh, self.margin_USD_kWh)
        return dict(zip(_LINES, values, strict=True))


def check_plant(plant: Mapping[str, ArrayLike] | None) -> dict[str, Array]:
    """Every plant field: the given value (checked against :data:`PLANT`) or
    the demo default. Unknown names are refused with the closest ones."""
    if plant is not None and not isinstance(plant, Mapping):
        raise InputError("plant", plant, "a mapping plant field -> value")
    given = dict(plant or {})
    for key in given:
        if key not in PLANT_FIELDS:
            raise NotFoundError("plant", key, "plant input", closest(str(key), PLANT_FIELDS))
    return {f: PLANT.check(f, given.get(f, PLANT.default(f))) for f in PLANT_FIELDS}


def plant_cost(
    electrode_materials_USD_kWh: ArrayLike,
    other_materials_USD_kWh: ArrayLike,
    plant: Mapping[str, ArrayLike] | None = None,
) -> PlantCost:
    """The full cost per kWh of good cells from the purchase value of the
    materials in the cells (electrode parts and the rest, USD/kWh) and the plant
    (``plant``: fields of :data:`PLANT`; missing ones take the demo values).

    >>> w = plant_cost(40.0, 15.0, {"energy_price_USD_per_kWh": [0.05, 0.20]})
    >>> [round(x, 2) for x in w.energy_USD_kWh.tolist()]
    [1.5, 6.0]
    """
    E = check("electrode_materials_USD_kWh", electrode_materials_USD_kWh, NONNEGATIVE)
    C = check("other_materials_USD_kWh", other_materials_USD_kWh, NONNEGATIVE)
    p = check_plant(plant)
    shape = broadcast_shape({"electrode_materials_USD_kWh": E, "other_materials_USD_kWh": C,
                             **p})
    out = plant_kernel(E, C, p)
    return PlantCost(
        materials_in_cells_USD_kWh=full(out["materials in cells"], shape),
        scrap_USD_kWh=full(out["scrap"], shape),
        scrap_credit_USD_kWh=full(out["scrap credit"], shape),
        depreciation_USD_kWh=full(out["depreciation"], shape),
        labour_USD_kWh=full(out["labour"], shape),
        energy_USD_kWh=full(out["energy"], shape),
        overhead_USD_kWh=full(out["overhead"], shape),
        margin_USD_kWh=full(out["margin"], shape),
        full_USD_kWh=full(out["full"], shape),
        energy_kWh_per_kWh=full(out["energy_kWh_per_kWh"], shape),
    )
