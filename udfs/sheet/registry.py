"""Every spreadsheet function, by its spreadsheet name.

``FUNCTIONS`` maps ``"CW_NERNST"`` to the callable taking positional cell
values (the headless engine registers these; Excel calls the same objects
through xlwings). ``PLANS`` holds their declarations for the reference.

>>> "CW_NERNST" in FUNCTIONS and FUNCTIONS["CW_NERNST"](0.34, 2, 0.1, 1) > 0.3
True
>>> elementwise("CW_NERNST"), elementwise("CW_POTENTIAL"), elementwise("CW_SERIES_PARALLEL")
(True, False, False)
"""

from __future__ import annotations

from . import (  # noqa: F401 - imported for their declarations
    costing,
    electrodes,
    faraday_law,
    formula_units,
    materials,
    potentials,
    procurement,
    sizing,
    thermodynamics,
)
from .declare import FUNCTIONS, PLANS

__all__ = ["CATALOGUE_ORDER", "FUNCTIONS", "PLANS", "elementwise"]


def elementwise(name: str) -> bool:
    """Whether the function ``name`` is element-wise over single cells: every
    argument one scalar per element and exactly one value per element out, so
    that one call on stacked columns equals the calls cell by cell (see
    :attr:`udfs.sheet.declare.Plan.elementwise`). Unknown names raise KeyError."""
    return PLANS[name].elementwise


#: The design's catalogue order (the reference lists the functions in it).
CATALOGUE_ORDER: tuple[str, ...] = (
    "CW_CONVERT",
    "CW_CONSTANT",
    "CW_MOLAR_MASS",
    "CW_MASS_FRACTION",
    "CW_THEORETICAL_CAPACITY",
    "CW_CHARGE_TO_MASS",
    "CW_MASS_TO_CHARGE",
    "CW_DEPOSITION_TIME",
    "CW_ENERGY_PER_MASS",
    "CW_PLATING_THICKNESS",
    "CW_E0",
    "CW_NERNST",
    "CW_POTENTIAL",
    "CW_HALF_REACTION",
    "CW_COUPLES",
    "CW_OCV",
    "CW_MEMBRANE_POTENTIAL",
    "CW_GIBBS",
    "CW_REACTION_THERMO",
    "CW_HEAT_RATE",
    "CW_MATERIAL",
    "CW_MATERIALS",
    "CW_SOURCE",
    "CW_MATERIAL_NAME",
    "CW_CAPACITY",
    "CW_ENERGY",
    "CW_COUPLE_SPECIFIC_ENERGY",
    "CW_SERIES_PARALLEL",
    "CW_AREAL_CAPACITY",
    "CW_COATING_THICKNESS",
    "CW_ELECTRODE_AREA",
    "CW_NP_RATIO",
    "CW_CELL_DESIGN",
    "CW_CELL_CHECKS",
    "CW_FORMAT_PRESET",
    "CW_WOUND_LENGTH",
    "CW_WOUND_THICKNESS",
    "CW_PACK_SERIES",
    "CW_PACK_DESIGN",
    "CW_PACK_HIGH_VOLTAGE",
    "CW_CELL_BOM",
    "CW_LCE",
    "CW_METAL_CONTENT",
    "CW_PRECURSORS",
    "CW_PRICE",
    "CW_FX",
    "CW_PRICE_BOOKS",
    "CW_PRICE_BOOK",
    "CW_PRICE_BOOK_INFO",
    "CW_INDEX_COEFFICIENT",
    "CW_INDEXED_PRICE",
    "CW_INDEX_FOR_PRICE",
    "CW_RANGE_PERCENTILE",
    "CW_RANGE_SAMPLE",
)
