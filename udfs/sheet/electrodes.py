"""Spreadsheet functions for capacity, energy, pack counts and electrode
sizing.

>>> CW_SERIES_PARALLEL(48, 5000, 3.65, 50)
[[14.0, 2.0, 28.0, 5110.0]]
"""

from __future__ import annotations

from typing import Any

from ..core import capacity
from ..core.validate import FRACTION_OPEN, NONNEGATIVE, POSITIVE, UNIT_INTERVAL_HALF_OPEN
from .declare import Kind, Num, Section, sheet_function

__all__ = [
    "CW_AREAL_CAPACITY",
    "CW_CAPACITY",
    "CW_COATING_THICKNESS",
    "CW_ELECTRODE_AREA",
    "CW_ENERGY",
    "CW_NP_RATIO",
    "CW_SERIES_PARALLEL",
]


@sheet_function(
    "CW_CAPACITY",
    "Capacity (Ah) of a mass of active material at a specific capacity.",
    [
        Num("mass_g", "mass of active material, g", NONNEGATIVE),
        Num("specific_capacity_mAh_g", "specific capacity, mAh/g", NONNEGATIVE),
    ],
    section=Section.CAPACITY,
    returns="Ah",
    example=(100, 160),
)
def CW_CAPACITY(mass_g: Any, specific_capacity_mAh_g: Any) -> Any:
    return capacity.capacity(mass_g, specific_capacity_mAh_g)


@sheet_function(
    "CW_ENERGY",
    "Energy (Wh) of a capacity at an average voltage.",
    [
        Num("capacity_Ah", "capacity, Ah", NONNEGATIVE),
        Num("voltage_V", "average voltage, V", NONNEGATIVE),
    ],
    section=Section.CAPACITY,
    returns="Wh",
    example=(50, 3.2),
)
def CW_ENERGY(capacity_Ah: Any, voltage_V: Any) -> Any:
    return capacity.energy(capacity_Ah, voltage_V)


@sheet_function(
    "CW_SERIES_PARALLEL",
    "Cells in series and in parallel to meet a pack voltage and energy; spills 4 cells: "
    "series, parallel, cells, pack Wh.",
    [
        Num("target_V", "pack voltage wanted, V", POSITIVE),
        Num("target_Wh", "pack energy wanted, Wh", POSITIVE),
        Num("cell_V", "nominal cell voltage, V", POSITIVE),
        Num("cell_Ah", "cell capacity, Ah", POSITIVE),
    ],
    section=Section.CAPACITY,
    kind=Kind.RECORD,
    columns=("series", "parallel", "cells", "pack_Wh"),
    returns="count, count, count, Wh",
    example=(48, 5000, 3.65, 50),
)
def CW_SERIES_PARALLEL(target_V: Any, target_Wh: Any, cell_V: Any, cell_Ah: Any) -> Any:
    return capacity.series_parallel(target_V, target_Wh, cell_V, cell_Ah)


@sheet_function(
    "CW_AREAL_CAPACITY",
    "Areal capacity (mAh/cm2) of a coating: loading x active fraction x specific capacity.",
    [
        Num("loading_mg_cm2", "coating loading per side, mg/cm2", NONNEGATIVE),
        Num("active_fraction", "active material fraction of the coating", FRACTION_OPEN),
        Num("specific_capacity_mAh_g", "specific capacity, mAh/g", NONNEGATIVE),
    ],
    section=Section.SIZING,
    returns="mAh/cm2",
    example=(20, 0.95, 160),
)
def CW_AREAL_CAPACITY(
    loading_mg_cm2: Any, active_fraction: Any, specific_capacity_mAh_g: Any
) -> Any:
    return capacity.areal_capacity(loading_mg_cm2, active_fraction, specific_capacity_mAh_g)


@sheet_function(
    "CW_COATING_THICKNESS",
    "Coating thickness (micrometres) from loading, solids density and porosity.",
    [
        Num("loading_mg_cm2", "coating loading per side, mg/cm2", NONNEGATIVE),
        Num("solids_density_g_cm3", "density of the coating's solids, g/cm3", POSITIVE),
        Num("porosity", "pore volume fraction", UNIT_INTERVAL_HALF_OPEN),
    ],
    section=Section.SIZING,
    returns="um",
    example=(20, 4.0, 0.3),
)
def CW_COATING_THICKNESS(loading_mg_cm2: Any, solids_density_g_cm3: Any, porosity: Any) -> Any:
    return capacity.coating_thickness(loading_mg_cm2, solids_density_g_cm3, porosity)


@sheet_function(
    "CW_ELECTRODE_AREA",
    "Coated electrode area (cm2) for a capacity at an areal capacity.",
    [
        Num("capacity_Ah", "capacity wanted, Ah", NONNEGATIVE),
        Num("areal_capacity_mAh_cm2", "areal capacity, mAh/cm2", POSITIVE),
    ],
    section=Section.SIZING,
    returns="cm2",
    example=(5, 3.0),
)
def CW_ELECTRODE_AREA(capacity_Ah: Any, areal_capacity_mAh_cm2: Any) -> Any:
    return capacity.electrode_area(capacity_Ah, areal_capacity_mAh_cm2)


@sheet_function(
    "CW_NP_RATIO",
    "N/P ratio: negative over positive areal capacity (same units).",
    [
        Num("anode_areal_capacity", "negative electrode areal capacity, e.g. mAh/cm2", NONNEGATIVE),
        Num("cathode_areal_capacity", "positive electrode areal capacity, same unit", POSITIVE),
    ],
    section=Section.SIZING,
    returns="ratio",
    example=(3.3, 3.0),
)
def CW_NP_RATIO(anode_areal_capacity: Any, cathode_areal_capacity: Any) -> Any:
    return capacity.np_ratio(anode_areal_capacity, cathode_areal_capacity)
