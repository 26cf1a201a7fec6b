"""Order quantities, yields and contained metals (lithium also as LCE).

Same conventions as :mod:`udfs.core.sizing`: electrode materials (coating
constituents and current-collector foils) are bought ``/ (1 - electrode_scrap)``,
and every material ``/ cell_yield`` because only good cells are counted.
Vectorised: the design's arrays and the order size broadcast together.

>>> round(LCE_FACTOR, 3)          # M(Li2CO3) / (2 M(Li)), IUPAC 2021 weights
5.323
>>> round(float(metal_content("LiCoO2", "Co", 1000.0)))   # g Co in 1 kg LiCoO2
602
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from functools import lru_cache
from types import MappingProxyType

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import catalogue
from .capacity import ceil_count
from .errors import InputError
from .formula import atomic_weight, mass_fraction, molar_mass, parse
from .sizing import CellDesign, _broadcast_shape, _check
from .validate import FRACTION_OPEN, NONNEGATIVE, POSITIVE, integer_or_positive

__all__ = [
    "LCE_FACTOR",
    "MaterialOrder",
    "composition",
    "lce",
    "metal_content",
    "order_materials",
]

Array = NDArray[np.float64]

#: kg of Li2CO3 per kg of lithium: M(Li2CO3) / (2 M(Li)), IUPAC 2021 atomic weights.
LCE_FACTOR: float = molar_mass("Li2CO3") / (2.0 * atomic_weight("Li"))

#: Inactive catalogue items of well-defined composition, by formula (metals: pure metal,
#: alloying and plating ignored; polymers: the repeat unit; carbon black taken as C).
#: Mixtures of variable make-up (CMC, SBR, laminates, plated steel, ceramic coatings)
#: are left out and reported as uncounted.
_INACTIVE_FORMULAS: Mapping[str, str] = MappingProxyType(
    {
        "aluminium foil": "Al",
        "copper foil": "Cu",
        "aluminium tab": "Al",
        "copper tab": "Cu",
        "nickel tab": "Ni",
        "aluminium housing": "Al",
        "PVDF": "C2H2F2",
        "PE separator": "C2H4",
        "PP separator": "C3H6",
        "carbon black": "C",
    }
)

#: Electrolytes by their salt and its concentration (mol/L), as the name states.
_ELECTROLYTE_SALTS: Mapping[str, tuple[str, float]] = MappingProxyType(
    {"LiPF6 1M in EC:DMC": ("LiPF6", 1.0)}
)

#: Elements not reported as "metals" (the other elements of the formulas are).
_NON_METALS = frozenset(
    ("H", "He", "C", "N", "O", "F", "Ne", "P", "S", "Cl", "Ar", "Se", "Br", "Kr", "I", "Xe")
)


def lce(lithium_mass: ArrayLike) -> Array | float:
    """Lithium carbonate equivalent of a lithium mass (same unit out as in).

    >>> round(lce(1.0), 4)
    5.3233
    """
    m = _check("lithium_mass", lithium_mass, NONNEGATIVE)
    out = m * LCE_FACTOR
    return float(out) if out.ndim == 0 else out


def metal_content(
    formula: str, element: str, material_mass: ArrayLike, yield_: ArrayLike = 1.0
) -> Array | float:
    """Mass of ``element`` in the material to buy: material_mass / yield * mass
    fraction (same mass unit out as in).

    >>> round(float(metal_content("LiNi0.8Mn0.1Co0.1O2", "Ni", 100.0, 0.9)), 1)
    53.6
    """
    frac = mass_fraction(formula, element, "formula")
    m = _check("material_mass", material_mass, NONNEGATIVE)
    y = _check("yield", yield_, FRACTION_OPEN)
    _broadcast_shape({"material_mass": m, "yield": y})
    out = m / y * frac
    return float(out) if out.ndim == 0 else out


@lru_cache(maxsize=256)
def composition(material_name: str) -> Mapping[str, float] | None:
    """Element mass fractions of a catalogue material, or ``None`` if unknown
    (mixtures such as a pouch laminate or a polymer without a formula).

    >>> round(composition("aluminium foil")["Al"], 3)
    1.0
    """
    m = catalogue.material(material_name, "material")
    if "formula" in m.facts:
        f = parse(m.get("formula"))
        return MappingProxyType({el: mass_fraction(f.text, el) for el in f.atoms})
    if m.name in _INACTIVE_FORMULAS:
        f = parse(_INACTIVE_FORMULAS[m.name])
        return MappingProxyType({el: mass_fraction(f.text, el) for el in f.atoms})
    if m.name in _ELECTROLYTE_SALTS:
        salt, conc = _ELECTROLYTE_SALTS[m.name]
        # g salt per g solution: c (mol/L) * M (g/mol) / (density (g/cm3) * 1000 cm3/L)
        salt_fraction = conc * molar_mass(salt) / (m.number("density") * 1000.0)
        s = parse(salt)
        return MappingProxyType(
            {el: salt_fraction * mass_fraction(s.text, el) for el in s.atoms}
        )
    return None


@dataclass(frozen=True)
class MaterialOrder:
    """Materials to buy for an order of good cells (arrays broadcast with the
    design). ``buy_m2`` covers sheet components (foils, separator);
    ``uncounted`` names components whose composition is unknown (their metals
    are not in ``metals_kg``)."""

    cells: Array
    energy_MWh: Array
    buy_kg: Mapping[str, Array]
    buy_t: Mapping[str, Array]
    buy_m2: Mapping[str, Array]
    metals_kg: Mapping[str, Array]
    lce_kg: Array
    materials_cost_USD: Array
    uncounted: tuple[str, ...]


def _element_list(elements: Iterable[str] | None) -> list[str] | None:
    if elements is None:
        return None
    if isinstance(elements, str):
        elements = [elements]
    out = []
    for el in elements:
        atomic_weight(el)  # validates, with suggestions
        out.append(el.strip().capitalize())
    return out


def order_materials(
    design: CellDesign,
    order_cells: ArrayLike | None = None,
    order_MWh: ArrayLike | None = None,
    elements: Iterable[str] | None = None,
) -> MaterialOrder:
    """What to buy for ``order_cells`` good cells, or for ``order_MWh`` of cells
    (cells = ceil(MWh * 1e6 / cell Wh)).

    kg to buy = cells * mass per cell / 1000 / (1 - scrap, electrode parts only)
    / cell yield. Metals (default: every element of the formulas except the
    non-metals) are the bought masses times their mass fractions; Li also as LCE.

    >>> from udfs.core.sizing import CellSpec, design_cell
    >>> d = design_cell(CellSpec("LiFePO4", "graphite", target_capacity_Ah=100.0,
    ...                          cathode_loading_mg_cm2=25.0))
    >>> o = order_materials(d, order_cells=1000)
    >>> bool(o.metals_kg["Fe"] > 0), float(o.lce_kg) == float(o.metals_kg["Li"]) * LCE_FACTOR
    (True, True)
    """
    if not isinstance(design, CellDesign):
        raise InputError("design", design, "a CellDesign from design_cell")
    if order_cells is not None and order_MWh is None:
        cells = _check("order_cells", order_cells, integer_or_positive("a whole number > 0"))
    elif order_MWh is not None and order_cells is None:
        mwh = _check("order_MWh", order_MWh, POSITIVE)
        _broadcast_shape({"order_MWh": mwh, "design": design.energy_Wh})
        cells = ceil_count(mwh * 1e6 / design.energy_Wh)
    else:
        raise InputError(
            "order_cells", order_cells, detail="give exactly one of order_cells and order_MWh"
        )
    shape = _broadcast_shape({"order": cells, "design": design.energy_Wh})
    wanted = _element_list(elements)

    def full(a: ArrayLike) -> Array:
        return np.broadcast_to(np.asarray(a, dtype=float), shape)

    scrap, yld = design.electrode_scrap, design.cell_yield
    buy_kg: dict[str, Array] = {}
    buy_m2: dict[str, Array] = {}
    metals: dict[str, Array] = {}
    lithium = np.zeros(shape)
    uncounted: list[str] = []
    for name, mass_g in design.components.items():
        factor = cells / yld
        if name in design.electrode_components:
            factor = factor / (1.0 - scrap)
        kg = mass_g / 1000.0 * factor
        buy_kg[name] = full(kg)
        if name in design.component_areas_cm2:
            buy_m2[name] = full(design.component_areas_cm2[name] / 1e4 * factor)
        comp = composition(design.component_materials[name])
        if comp is None:
            uncounted.append(name)
            continue
        for el, frac in comp.items():
            if el == "Li":
                lithium = lithium + kg * frac
            if (wanted is None and el in _NON_METALS) or (wanted is not None and el not in wanted):
                continue
            metals[el] = metals.get(el, np.zeros(shape)) + kg * frac
    if wanted is not None:
        for el in wanted:
            metals.setdefault(el, np.zeros(shape))
    return MaterialOrder(
        cells=full(cells),
        energy_MWh=full(cells * design.energy_Wh / 1e6),
        buy_kg=MappingProxyType(buy_kg),
        buy_t=MappingProxyType({k: full(v / 1000.0) for k, v in buy_kg.items()}),
        buy_m2=MappingProxyType(buy_m2),
        metals_kg=MappingProxyType({k: full(metals[k]) for k in sorted(metals)}),
        lce_kg=full(lithium * LCE_FACTOR),
        materials_cost_USD=full(cells * design.cost_per_cell_USD),
        uncounted=tuple(uncounted),
    )
