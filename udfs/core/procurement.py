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
from .shapes import broadcast_shape
from .sizing import CellDesign
from .validate import (
    FRACTION,
    FRACTION_OPEN,
    NONNEGATIVE,
    POSITIVE,
    POSITIVE_INTEGER,
    UNIT_INTERVAL_HALF_OPEN,
    check,
)

__all__ = [
    "LCE_FACTOR",
    "LITHIUM_SALTS",
    "METAL_SALTS",
    "NMP_BINDERS",
    "NON_METALS",
    "BillLine",
    "MaterialOrder",
    "PrecursorOrder",
    "bill_lines",
    "composition",
    "lce",
    "metal_content",
    "order_materials",
    "order_precursors",
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
NON_METALS = frozenset(
    ("H", "He", "C", "N", "O", "F", "Ne", "P", "S", "Cl", "Ar", "Se", "Br", "Kr", "I", "Xe")
)


def lce(lithium_mass: ArrayLike) -> Array | float:
    """Lithium carbonate equivalent of a lithium mass (same unit out as in).

    >>> round(lce(1.0), 4)
    5.3233
    """
    m = check("lithium_mass", lithium_mass, NONNEGATIVE)
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
    m = check("material_mass", material_mass, NONNEGATIVE)
    y = check("yield", yield_, FRACTION_OPEN)
    broadcast_shape({"material_mass": m, "yield": y})
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
        cells = check("order_cells", order_cells, POSITIVE_INTEGER)
    elif order_MWh is not None and order_cells is None:
        mwh = check("order_MWh", order_MWh, POSITIVE)
        broadcast_shape({"order_MWh": mwh, "design": design.energy_Wh})
        cells = ceil_count(mwh * 1e6 / design.energy_Wh)
    else:
        raise InputError(
            "order_cells", order_cells, detail="give exactly one of order_cells and order_MWh"
        )
    shape = broadcast_shape({"order": cells, "design": design.energy_Wh})
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
            if (wanted is None and el in NON_METALS) or (wanted is not None and el not in wanted):
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


# --------------------------------------------------------------------------- bill lines


@dataclass(frozen=True)
class BillLine:
    """One component of a cell with its net quantities per cell (no scrap, no
    yield) on every basis a price may use: ``kg`` always; ``m2`` for sheets
    (foils, separator); ``L`` for electrolytes (mass / catalogue density);
    ``pieces`` (one per cell) for tabs and housings. ``None`` where the basis
    does not apply. ``electrode`` marks coating and foil parts, which pass the
    electrode step (and its scrap)."""

    component: str
    material: str
    category: str
    electrode: bool
    kg: Array
    m2: Array | None
    L: Array | None
    pieces: Array | None

    def quantity(self, basis: str) -> Array | None:
        """The quantity per cell on ``basis`` ('mass', 'area', 'volume', 'count')."""
        return {"mass": self.kg, "area": self.m2, "volume": self.L, "count": self.pieces}[basis]


#: Categories bought by the piece (one per cell and component).
_PIECES = ("tab", "housing")


def bill_lines(design: CellDesign) -> tuple[BillLine, ...]:
    """The bill of materials of ``design`` as priceable lines (net per cell).

    >>> from udfs.core.sizing import CellSpec, design_cell
    >>> d = design_cell(CellSpec("LiFePO4", "graphite", target_capacity_Ah=20.0,
    ...                          cathode_loading_mg_cm2=25.0))
    >>> [(b.category, b.pieces is not None) for b in bill_lines(d)][-3:]
    [('tab', True), ('tab', True), ('housing', True)]
    """
    if not isinstance(design, CellDesign):
        raise InputError("design", design, "a CellDesign from design_cell")
    out = []
    for name, mass_g in design.components.items():
        mat = catalogue.material(design.component_materials[name], "material")
        category = mat.role
        kg = np.asarray(mass_g, dtype=float) / 1000.0
        area = design.component_areas_cm2.get(name)
        out.append(
            BillLine(
                component=name,
                material=mat.name,
                category=category,
                electrode=name in design.electrode_components,
                kg=kg,
                m2=None if area is None else np.asarray(area, dtype=float) / 1e4,
                L=kg / mat.number("density") if category == "electrolyte" else None,
                pieces=np.ones_like(kg) if category in _PIECES else None,
            )
        )
    return tuple(out)


# --------------------------------------------------------------------------- precursors

#: Salts bought for the transition metals of a cathode (the sulfate hydrates of
#: the co-precipitation route; common practice). Other metals have no route here.
METAL_SALTS: Mapping[str, str] = MappingProxyType(
    {"Ni": "NiSO4·6H2O", "Co": "CoSO4·7H2O", "Mn": "MnSO4·H2O"}
)
#: Lithium sources by name: the monohydrate hydroxide or the carbonate.
LITHIUM_SALTS: Mapping[str, str] = MappingProxyType(
    {"hydroxide": "LiOH·H2O", "carbonate": "Li2CO3"}
)
#: Iron phosphate (anhydrous) for phosphate cathodes: it brings Fe and P together.
IRON_PHOSPHATE = "FePO4"
#: Binders processed in N-methyl-2-pyrrolidone (NMP); the others in water (common practice).
NMP_BINDERS = ("PVDF",)


@dataclass(frozen=True)
class PrecursorOrder:
    """Precursor salts for the cathode active material of an order, and the NMP
    solvent of the electrode slurries (tonnes; arrays broadcast with the design).

    ``salts_t`` maps salt formula -> t to buy; ``no_salt_route`` names metals of
    the cathode with no salt here (their t are in ``metals_t``). NMP: ``used``
    is what the slurries hold, ``recovered`` what the dryers give back,
    ``bought`` the make-up (used - recovered)."""

    cathode: str
    cathode_active_t: Array
    metals_t: Mapping[str, Array]
    salts_t: Mapping[str, Array]
    no_salt_route: tuple[str, ...]
    nmp_electrodes: tuple[str, ...]
    nmp_used_t: Array
    nmp_recovered_t: Array
    nmp_bought_t: Array


def order_precursors(
    design: CellDesign,
    order_cells: ArrayLike | None = None,
    order_MWh: ArrayLike | None = None,
    lithium_salt: str = "hydroxide",
    lithium_excess: ArrayLike = 0.0,
    synthesis_yield: ArrayLike = 1.0,
    slurry_solids_fraction: ArrayLike = 0.65,  # common practice (NMP cathode slurries 0.6-0.75)
    nmp_recovery: ArrayLike = 0.97,  # common practice (condensation/absorption 0.95-0.99)
) -> PrecursorOrder:
    """Salts for the cathode active material to buy (``order_materials``
    quantities, scrap and yield included) and the NMP of the slurries.

    salt [t] = metal in the cathode [t] * (1 + lithium_excess, Li only)
    / synthesis_yield / (mass fraction of the metal in the salt).
    Iron goes in as FePO4 when the cathode holds Fe and P. NMP used = coating
    solids of every electrode with an NMP binder * (1 - s) / s, s the slurry
    solids fraction; NMP bought = used * (1 - nmp_recovery).

    >>> from udfs.core.sizing import CellSpec, design_cell
    >>> d = design_cell(CellSpec("LiFePO4", "graphite", target_capacity_Ah=100.0,
    ...                          cathode_loading_mg_cm2=25.0))
    >>> p = order_precursors(d, order_cells=1000, lithium_salt="carbonate")
    >>> sorted(p.salts_t), p.nmp_electrodes
    (['FePO4', 'Li2CO3'], ('cathode',))
    """
    if not isinstance(design, CellDesign):
        raise InputError("design", design, "a CellDesign from design_cell")
    if not isinstance(lithium_salt, str) or lithium_salt.strip().lower() not in LITHIUM_SALTS:
        raise InputError("lithium_salt", lithium_salt,
                         f"one of {', '.join(repr(k) for k in LITHIUM_SALTS)}")
    li_salt = LITHIUM_SALTS[lithium_salt.strip().lower()]
    excess = check("lithium_excess", lithium_excess, UNIT_INTERVAL_HALF_OPEN)
    syn = check("synthesis_yield", synthesis_yield, FRACTION_OPEN)
    solids = check("slurry_solids_fraction", slurry_solids_fraction, FRACTION_OPEN)
    recovery = check("nmp_recovery", nmp_recovery, FRACTION)
    order = order_materials(design, order_cells=order_cells, order_MWh=order_MWh)
    shape = broadcast_shape({"order": order.cells, "lithium_excess": excess,
                              "synthesis_yield": syn, "slurry_solids_fraction": solids,
                              "nmp_recovery": recovery})

    def full(a: ArrayLike) -> Array:
        return np.broadcast_to(np.asarray(a, dtype=float), shape)

    cam_name = next(n for n in design.components if n.startswith("cathode active ("))
    cam_t = order.buy_t[cam_name]
    comp = composition(design.cathode) or {}
    metals = {el: cam_t * w for el, w in comp.items() if el not in NON_METALS}
    salts: dict[str, Array] = {}
    no_route: list[str] = []
    for el, t in metals.items():
        if el == "Li":
            salt, need = li_salt, t * (1.0 + excess)
        elif el in METAL_SALTS:
            salt, need = METAL_SALTS[el], t
        elif el == "Fe" and "P" in comp:
            salt, need = IRON_PHOSPHATE, t
        else:
            no_route.append(el)
            continue
        salts[salt] = full(need / syn / mass_fraction(salt, el))
    nmp_sides = tuple(
        side for side in ("cathode", "anode")
        if any(n.startswith(f"{side} binder (") and design.component_materials[n] in NMP_BINDERS
               for n in design.components)
    )
    solids_t = np.zeros(shape)
    for side in nmp_sides:
        for n in design.components:
            if n.startswith((f"{side} active (", f"{side} binder (", f"{side} carbon (")):
                solids_t = solids_t + order.buy_t[n]
    used = solids_t * (1.0 - solids) / solids
    recovered = used * recovery
    return PrecursorOrder(
        cathode=design.cathode,
        cathode_active_t=full(cam_t),
        metals_t=MappingProxyType({k: full(v) for k, v in metals.items()}),
        salts_t=MappingProxyType(salts),
        no_salt_route=tuple(no_route),
        nmp_electrodes=nmp_sides,
        nmp_used_t=full(used),
        nmp_recovered_t=full(recovered),
        nmp_bought_t=full(used - recovered),
    )
