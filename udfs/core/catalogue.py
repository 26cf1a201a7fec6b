"""The reference data in ``data/``, loaded once on first use and validated.

Every row carries its source; a row without one, a number out of range or a
half-reaction that does not balance stops the load with a :class:`DataError`
naming the file and row.

>>> couple("cu2+/cu").electrons
2.0
>>> material("LFP").name
'LiFePO4'
>>> material("graphite").get("formula")
'C6'
>>> round(cycling("NMC811").reversible_capacity, 2)      # mAh/g, first charge x FCE
200.25
>>> recipe("graphite").binder
(('CMC', 0.5), ('SBR', 0.5))
"""

from __future__ import annotations

import csv
import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field, replace
from fractions import Fraction
from functools import cache, lru_cache
from pathlib import Path
from types import MappingProxyType

from .constants import AVOGADRO
from .errors import CellwrightError, DataError, NotFoundError
from .formula import Formula, parse
from .names import closest, lookup, normalise
from .reactions import HalfReaction, parse_half_reaction

__all__ = [
    "Couple",
    "Cycling",
    "Fact",
    "Material",
    "Recipe",
    "SpeciesData",
    "UnitCell",
    "couple",
    "couple_ids",
    "cycling",
    "data_dir",
    "material",
    "material_names",
    "parse_unit_cell",
    "price",
    "recipe",
    "reload",
    "source_of",
    "species",
    "species_names",
]

ROLES = ("cathode", "anode")
INACTIVE_CATEGORIES = (
    "foil",
    "separator",
    "electrolyte",
    "binder",
    "conductive_carbon",
    "housing",
    "tab",
)


def data_dir() -> Path:
    """The folder holding the CSV tables: ``udfs/data`` inside an installed
    wheel, or ``data/`` at the top of a source checkout."""
    here = Path(__file__).resolve().parents[1]
    for candidate in (here / "data", here.parent / "data"):
        if (candidate / "half_reactions.csv").is_file():
            return candidate
    raise DataError("data", str(here), detail="reference tables not found; reinstall cellwright")


def _rows(name: str) -> Iterator[tuple[int, dict[str, str]]]:
    path = data_dir() / name
    with path.open(newline="", encoding="utf-8") as fh:
        for i, row in enumerate(csv.DictReader(fh), start=2):
            clean = {k.strip(): (v or "").strip() for k, v in row.items() if k is not None}
            if not clean.get("source"):
                raise DataError(f"{name} row {i}", clean, detail="has no source")
            yield i, clean


def _number(
    text: str, where: str, column: str, lo: float = -math.inf, hi: float = math.inf
) -> float:
    try:
        x = float(text)
    except ValueError:
        raise DataError(where, text, detail=f"{column} {text!r} is not a number") from None
    if not (math.isfinite(x) and lo <= x <= hi):
        raise DataError(where, x, detail=f"{column} {x} outside [{lo}, {hi}]")
    return x


@dataclass(frozen=True)
class Couple:
    """A redox couple of the catalogue (E0 in V vs SHE at 25 degC)."""

    id: str
    reaction: HalfReaction
    e0: float
    source: str
    de0dt: float | None = None  # V/K
    de0dt_source: str = ""
    note: str = ""

    @property
    def electrons(self) -> float:
        return self.reaction.electrons


@dataclass(frozen=True)
class SpeciesData:
    """Standard formation data at 298.15 K: kJ/mol, kJ/mol, J/(mol K)."""

    name: str
    dfH: float | None
    dfG: float | None
    S0: float | None
    source: str
    note: str = ""


@dataclass(frozen=True)
class Fact:
    value: str
    unit: str
    source: str
    note: str = ""


@dataclass(frozen=True)
class Cycling:
    """How an active material cycles, from its catalogue rows (mAh/g, V).

    ``first_charge_capacity`` is what the material takes up or gives up on the
    cell's first charge (a cathode is delithiated or desodiated, an anode
    lithiated or sodiated), per g of active material; the reversible capacity
    is that times ``first_cycle_efficiency``. Voltages are against
    ``reference`` (``Li/Li+``, ``Na/Na+``): the average on discharge and the
    usable window.
    """

    first_charge_capacity: float
    first_cycle_efficiency: float
    average_voltage: float
    voltage_min: float
    voltage_max: float
    reference: str

    @property
    def reversible_capacity(self) -> float:
        """mAh/g delivered on discharge and on later cycles: first charge x FCE."""
        return self.first_charge_capacity * self.first_cycle_efficiency

    @property
    def first_cycle_loss(self) -> float:
        """mAh/g lost on the first cycle (SEI, irreversible sites): first charge - reversible."""
        return self.first_charge_capacity - self.reversible_capacity


@dataclass(frozen=True)
class Recipe:
    """The usual coating of an electrode of one active material (dry mass
    fractions, calendered porosity, usual loading and thickness per side).

    ``binder`` lists binder materials with their share of ``binder_fraction``;
    ``carbon`` is the conductive carbon, ``foil`` the current collector.
    ``solids_density`` (g/cm^3, pore-free coating) is worked out from the
    catalogue densities of the components, counting any remainder
    1 - active - binder - carbon at the carbon's density.
    """

    material: str
    active_fraction: float
    binder_fraction: float
    carbon_fraction: float
    binder: tuple[tuple[str, float], ...]
    carbon: str
    foil: str
    porosity: float
    loading_mg_cm2: tuple[float, float]
    thickness_um: tuple[float, float]
    solids_density: float

    @property
    def other_fraction(self) -> float:
        """Mass fraction not named (additives), 1 - active - binder - carbon (>= 0)."""
        return max(1.0 - self.active_fraction - self.binder_fraction - self.carbon_fraction, 0.0)

    @property
    def coating_density(self) -> float:
        """g/cm^3 of the calendered coating: solids density x (1 - porosity)."""
        return self.solids_density * (1.0 - self.porosity)

    def thickness_for(self, loading_mg_cm2: float) -> float:
        """Coating thickness (um per side) of a loading (mg/cm^2 per side)."""
        return loading_mg_cm2 * 10.0 / self.coating_density


@dataclass(frozen=True)
class UnitCell:
    """A crystallographic unit cell: edges in angstrom, ``z`` formula units per cell."""

    system: str
    a: float
    b: float
    c: float
    z: float

    @property
    def volume_A3(self) -> float:
        if self.system == "hexagonal":
            return math.sqrt(3.0) / 2.0 * self.a**2 * self.c
        return self.a * self.b * self.c

    def density(self, molar_mass: float) -> float:
        """X-ray density, g/cm^3: Z M / (N_A V)."""
        return self.z * molar_mass / (AVOGADRO * self.volume_A3 * 1e-24)


@dataclass(frozen=True)
class Material:
    """An active or inactive material: named facts, each with its source, and
    for electrode materials the typed :class:`Cycling` and :class:`Recipe`."""

    name: str
    active: bool
    facts: Mapping[str, Fact] = field(default_factory=dict)
    aliases: tuple[str, ...] = ()
    cycling: Cycling | None = None
    recipe: Recipe | None = None
    unit_cell: UnitCell | None = None

    def get(self, prop: str) -> str:
        return self.facts[prop].value

    def number(self, prop: str) -> float:
        return float(self.facts[prop].value)

    @property
    def formula(self) -> Formula | None:
        return parse(self.facts["formula"].value, "formula") if "formula" in self.facts else None

    @property
    def role(self) -> str:
        key = "role" if self.active else "category"
        return self.facts[key].value


@cache
def _couples() -> Mapping[str, Couple]:
    out: dict[str, Couple] = {}
    for i, row in _rows("half_reactions.csv"):
        where = f"half_reactions.csv row {i}"
        cid = row["id"]
        if not cid or cid in out:
            raise DataError(where, cid, detail="missing or duplicate id")
        try:
            reaction = parse_half_reaction(row["equation"], f"{where} equation")
        except CellwrightError as exc:
            raise DataError(where, row["equation"], detail=str(exc)) from None
        e0 = _number(row["e0_V"], where, "e0_V", -4.0, 4.0)
        slope = row.get("de0dt_mV_K", "")
        de0dt = _number(slope, where, "de0dt_mV_K", -5.0, 5.0) / 1000.0 if slope else None
        if de0dt is not None and not row.get("de0dt_source"):
            raise DataError(where, slope, detail="dE0/dT given without de0dt_source")
        out[cid] = Couple(
            cid,
            reaction,
            e0,
            row["source"],
            de0dt,
            row.get("de0dt_source", ""),
            row.get("note", ""),
        )
    return MappingProxyType(out)


@cache
def _species() -> Mapping[str, SpeciesData]:
    out: dict[str, SpeciesData] = {}
    for i, row in _rows("species.csv"):
        where = f"species.csv row {i}"
        name = row["species"]
        f = parse(name, where)
        if f.phase is None:
            raise DataError(where, name, detail="species needs a phase suffix")
        vals = [
            _number(row[c], where, c, lo, hi) if row.get(c) else None
            for c, lo, hi in (
                ("dfH_kJ_mol", -5000, 5000),
                ("dfG_kJ_mol", -5000, 5000),
                ("S0_J_mol_K", -500, 2000),
            )
        ]
        dfh, dfg, s0 = vals
        out[name] = SpeciesData(name, dfh, dfg, s0, row["source"], row.get("note", ""))
    return MappingProxyType(out)


#: Numeric properties of the material tables: (lowest, highest, unit the row gives).
_NUMERIC: dict[str, tuple[float, float, str]] = {
    "electrons": (0.01, 20.0, ""),
    "theoretical_capacity": (1.0, 5000.0, "mAh/g"),
    "practical_capacity": (1.0, 5000.0, "mAh/g"),
    "first_charge_capacity": (1.0, 5000.0, "mAh/g"),
    "first_cycle_efficiency": (0.5, 1.0, ""),
    "average_voltage": (-4.0, 6.0, "V"),
    "voltage_min": (-4.0, 6.0, "V"),
    "voltage_max": (-4.0, 6.0, "V"),
    "density": (0.01, 25.0, "g/cm^3"),
    "porosity": (0.0, 1.0, ""),
    "thickness": (0.1, 5000.0, "um"),
    "electrode_active_fraction": (0.5, 1.0, ""),
    "electrode_binder_fraction": (0.0, 0.2, ""),
    "electrode_carbon_fraction": (0.0, 0.2, ""),
    "electrode_porosity": (0.05, 0.7, ""),
    "electrode_loading_min": (0.5, 100.0, "mg/cm^2"),
    "electrode_loading_max": (0.5, 100.0, "mg/cm^2"),
    "electrode_thickness_min": (5.0, 500.0, "um"),
    "electrode_thickness_max": (5.0, 500.0, "um"),
}
#: Text properties with a fixed set of values.
_CHOICES: dict[str, tuple[str, ...]] = {
    "voltage_reference": ("Li/Li+", "Na/Na+", "SHE"),
    "density_basis": ("crystallographic", "true"),
}
#: Stored rows of the cycling record; the reversible capacity is derived from them.
_CYCLING = (
    "first_charge_capacity",
    "first_cycle_efficiency",
    "average_voltage",
    "voltage_min",
    "voltage_max",
    "voltage_reference",
    "theoretical_capacity",
)
#: Rows of a coating recipe: all or none.
_RECIPE = (
    "electrode_active_fraction",
    "electrode_binder_fraction",
    "electrode_carbon_fraction",
    "electrode_binder",
    "electrode_carbon",
    "electrode_foil",
    "electrode_porosity",
    "electrode_loading_min",
    "electrode_loading_max",
    "electrode_thickness_min",
    "electrode_thickness_max",
)
_UNIT_CELL_EDGES = {
    "cubic": ("a",),
    "tetragonal": ("a", "c"),
    "hexagonal": ("a", "c"),
    "orthorhombic": ("a", "b", "c"),
}
#: A recipe's fractions may exceed 1 by rounding only.
_FRACTION_SUM_TOL = 1e-9


def parse_unit_cell(text: str, where: str = "unit_cell") -> UnitCell:
    """Read ``'hexagonal; a=2.864; c=14.17; Z=3'`` (edges in angstrom; Z may be
    a fraction such as ``8/3``).

    >>> round(parse_unit_cell("cubic; a=8.24; Z=8").volume_A3, 1)
    559.5
    """
    parts = [p.strip() for p in text.split(";") if p.strip()]
    if not parts or parts[0] not in _UNIT_CELL_EDGES:
        raise DataError(
            where, text, f"a crystal system first, one of {', '.join(_UNIT_CELL_EDGES)}"
        )
    system, values = parts[0], {}
    for item in parts[1:]:
        key, sep, number = (x.strip() for x in item.partition("="))
        if not sep or key not in ("a", "b", "c", "Z") or key in values:
            raise DataError(where, text, detail=f"unreadable or repeated entry {item!r}")
        try:
            values[key] = float(Fraction(number))
        except (ValueError, ZeroDivisionError):
            raise DataError(where, text, detail=f"{key} {number!r} is not a number") from None
        if not (math.isfinite(values[key]) and values[key] > 0):
            raise DataError(where, text, detail=f"{key} must be > 0")
    needed = {*_UNIT_CELL_EDGES[system], "Z"}
    if set(values) != needed:
        raise DataError(where, text, detail=f"a {system} cell gives exactly {sorted(needed)}")
    a = values["a"]
    b = values.get("b", a)
    c = values.get("c", a)
    return UnitCell(system, a, b, c, values["Z"])


def _binder_shares(text: str, where: str) -> tuple[tuple[str, float], ...]:
    """``'PVDF'`` or ``'CMC=0.5; SBR=0.5'``: binder names and their shares (sum 1)."""
    out: list[tuple[str, float]] = []
    for item in (p.strip() for p in text.split(";")):
        name, sep, share = (x.strip() for x in item.partition("="))
        value = _number(share, where, "electrode_binder share", 0.0, 1.0) if sep else 1.0
        if not name or value <= 0:
            raise DataError(where, text, detail=f"unreadable binder entry {item!r}")
        out.append((name, value))
    if abs(sum(v for _, v in out) - 1.0) > 1e-9 or len({n for n, _ in out}) != len(out):
        raise DataError(where, text, detail="binder shares must name each binder once and sum to 1")
    return tuple(out)


def _materials_from(name: str, active: bool) -> dict[str, Material]:
    facts: dict[str, dict[str, Fact]] = {}
    aliases: dict[str, list[str]] = {}
    for i, row in _rows(name):
        where = f"{name} row {i}"
        mat, prop = row["material"], row["property"]
        if prop in _NUMERIC:
            lo, hi, unit = _NUMERIC[prop]
            _number(row["value"], where, prop, lo, hi)
            if row.get("unit", "") != unit:
                raise DataError(
                    where, row.get("unit"), detail=f"{prop} is given in {unit or 'no unit'!r}"
                )
        if prop in _CHOICES and row["value"] not in _CHOICES[prop]:
            raise DataError(where, row["value"], f"{prop} one of {', '.join(_CHOICES[prop])}")
        if prop == "unit_cell":
            parse_unit_cell(row["value"], where)
        if prop == "electrode_binder":
            _binder_shares(row["value"], where)
        if prop == "formula":
            try:
                parse(row["value"], where)
            except CellwrightError as exc:
                raise DataError(where, row["value"], detail=str(exc)) from None
        if prop == "reversible_capacity":
            raise DataError(where, prop, detail="reversible_capacity is derived, not stored")
        if prop == "alias":
            aliases.setdefault(mat, []).append(row["value"])
            continue
        if prop in facts.setdefault(mat, {}):
            raise DataError(where, prop, detail=f"duplicate property {prop!r} for {mat!r}")
        facts[mat][prop] = Fact(
            row["value"], row.get("unit", ""), row["source"], row.get("note", "")
        )
    out: dict[str, Material] = {}
    for mat, fs in facts.items():
        kind_key, allowed = ("role", ROLES) if active else ("category", INACTIVE_CATEGORIES)
        if fs.get(kind_key) is None or fs[kind_key].value not in allowed:
            raise DataError(
                f"{name} {mat}", fs.get(kind_key), f"a {kind_key} row, one of {', '.join(allowed)}"
            )
        needed = ("formula", "electrons", "density") if active else ("density",)
        missing = [p for p in needed if p not in fs]
        if missing:
            raise DataError(f"{name} {mat}", mat, detail=f"missing properties {missing}")
        cyc = _cycling_of(f"{name} {mat}", fs) if active else None
        if cyc is not None:
            fs = {**fs, **_derived_capacity(cyc, fs)}
        cell = parse_unit_cell(fs["unit_cell"].value) if "unit_cell" in fs else None
        out[mat] = Material(
            mat, active, MappingProxyType(fs), tuple(aliases.get(mat, ())), cyc, None, cell
        )
    return out


def _cycling_of(where: str, fs: Mapping[str, Fact]) -> Cycling | None:
    """The cycling record of an active material with a first-charge capacity,
    checked: every row of it present, the window around the average voltage,
    no more than the theoretical capacity delivered (nor, for a cathode, charged)."""
    if "first_charge_capacity" not in fs and "first_cycle_efficiency" not in fs:
        return None
    missing = [p for p in _CYCLING if p not in fs]
    if missing:
        raise DataError(where, None, detail=f"first-charge data without {missing}")
    if "practical_capacity" in fs:
        raise DataError(
            where,
            None,
            detail="practical_capacity is derived (first charge x FCE) and may not be given too",
        )
    v = {p: float(fs[p].value) for p in _CYCLING if p != "voltage_reference"}
    cyc = Cycling(
        v["first_charge_capacity"],
        v["first_cycle_efficiency"],
        v["average_voltage"],
        v["voltage_min"],
        v["voltage_max"],
        fs["voltage_reference"].value,
    )
    if not cyc.voltage_min < cyc.average_voltage < cyc.voltage_max:
        raise DataError(where, cyc.average_voltage, detail="average_voltage outside the window")
    limit = v["theoretical_capacity"] * 1.01
    if cyc.reversible_capacity > limit:
        raise DataError(where, cyc.reversible_capacity, detail="reversible above theoretical")
    if fs["role"].value == "cathode" and cyc.first_charge_capacity > limit:
        raise DataError(where, cyc.first_charge_capacity, detail="first charge above theoretical")
    return cyc


def _derived_capacity(cyc: Cycling, fs: Mapping[str, Fact]) -> dict[str, Fact]:
    """``reversible_capacity`` and its older name ``practical_capacity``, both
    first charge x FCE, with the sources of the two rows they come from."""
    first, fce = fs["first_charge_capacity"], fs["first_cycle_efficiency"]
    fact = Fact(
        f"{cyc.reversible_capacity:.6g}",
        "mAh/g",
        f"computed: first_charge_capacity ({first.source}) x first_cycle_efficiency ({fce.source})",
        f"reversible (discharge) capacity = {first.value} mAh/g x {fce.value}",
    )
    return {"reversible_capacity": fact, "practical_capacity": fact}


def _recipe_of(m: Material, inactive: Mapping[str, Material]) -> Recipe | None:
    """The coating recipe of an active material, its components checked
    against the inactive table and its fractions summing to at most 1."""
    fs = m.facts
    present = [p for p in _RECIPE if p in fs]
    if not present:
        return None
    where = f"active_materials.csv {m.name}"
    missing = [p for p in _RECIPE if p not in fs]
    if missing:
        raise DataError(where, None, detail=f"recipe without {missing}")
    num = {p: float(fs[p].value) for p in _RECIPE if p in _NUMERIC}
    binder = _binder_shares(fs["electrode_binder"].value, where)
    parts = [
        *((n, "binder") for n, _ in binder),
        (fs["electrode_carbon"].value, "conductive_carbon"),
        (fs["electrode_foil"].value, "foil"),
    ]
    for part, category in parts:
        if part not in inactive or inactive[part].role != category:
            raise DataError(where, part, f"a {category} material of inactive_materials.csv")
    active, bind, carbon = (
        num["electrode_active_fraction"],
        num["electrode_binder_fraction"],
        num["electrode_carbon_fraction"],
    )
    if active + bind + carbon > 1.0 + _FRACTION_SUM_TOL:
        raise DataError(where, active + bind + carbon, detail="recipe fractions sum above 1")
    for lo_key, hi_key in (
        ("electrode_loading_min", "electrode_loading_max"),
        ("electrode_thickness_min", "electrode_thickness_max"),
    ):
        if not num[lo_key] < num[hi_key]:
            raise DataError(where, num[lo_key], detail=f"{lo_key} not below {hi_key}")
    carbon_rho = inactive[fs["electrode_carbon"].value].number("density")
    other = max(1.0 - active - bind - carbon, 0.0)
    volume = active / m.number("density") + (carbon + other) / carbon_rho
    volume += sum(bind * share / inactive[n].number("density") for n, share in binder)
    return Recipe(
        m.name,
        active,
        bind,
        carbon,
        binder,
        fs["electrode_carbon"].value,
        fs["electrode_foil"].value,
        num["electrode_porosity"],
        (num["electrode_loading_min"], num["electrode_loading_max"]),
        (num["electrode_thickness_min"], num["electrode_thickness_max"]),
        1.0 / volume,
    )


@cache
def _materials() -> Mapping[str, Material]:
    active = _materials_from("active_materials.csv", True)
    inactive = _materials_from("inactive_materials.csv", False)
    both = set(active) & set(inactive)
    if both:
        raise DataError("materials", sorted(both), detail="names used in both tables")
    for inert in inactive.values():
        stray = [p for p in inert.facts if p in _CYCLING or p in _RECIPE]
        if stray:
            raise DataError(f"inactive_materials.csv {inert.name}", stray, "no electrode rows")
    active = {k: replace(m, recipe=_recipe_of(m, inactive)) for k, m in active.items()}
    return MappingProxyType({**active, **inactive})


@cache
def _alias_index() -> Mapping[str, str]:
    index: dict[str, str] = {}
    for m in _materials().values():
        for key in (m.name, *m.aliases):
            norm = normalise(key)
            if index.get(norm, m.name) != m.name:
                raise DataError("materials", key, detail=f"alias {key!r} is ambiguous")
            index[norm] = m.name
    return MappingProxyType(index)


@cache
def _prices() -> Mapping[str, Fact]:
    out: dict[str, Fact] = {}
    for i, row in _rows("demo_prices.csv"):
        where = f"demo_prices.csv row {i}"
        _number(row["price"], where, "price", 0.0, 1e7)
        out[row["material"]] = Fact(row["price"], row["unit"], row["source"], row.get("note", ""))
    return MappingProxyType(out)


def couple_ids() -> list[str]:
    return list(_couples())


def couple(cid: str, argument: str = "couple") -> Couple:
    """A couple by id, e.g. ``'Cu2+/Cu'`` (spaces and case forgiven when unambiguous)."""
    table = _couples()
    if isinstance(cid, str) and cid in table:
        return table[cid]
    if isinstance(cid, str):
        squeezed = cid.replace(" ", "")
        hits = [k for k in table if k.lower() == squeezed.lower()]
        if len(hits) == 1:
            return table[hits[0]]
    return table[lookup(cid, table, "couple", argument)]


def species_names() -> list[str]:
    return list(_species())


def species(name: str, argument: str = "species") -> SpeciesData:
    table = _species()
    if name in table:
        return table[name]
    raise NotFoundError(argument, name, "species in the thermodynamic table", closest(name, table))


def material_names(role: str | None = None) -> list[str]:
    """Names of materials, optionally only one role or category."""
    mats = _materials().values()
    if role is None or (isinstance(role, str) and not role.strip()):
        return [m.name for m in mats]
    key = role.strip().lower()
    valid = (*ROLES, *INACTIVE_CATEGORIES, "active", "inactive")
    if key not in valid:
        raise NotFoundError("role", role, "role or category", closest(role, valid))
    if key in ("active", "inactive"):
        return [m.name for m in mats if m.active == (key == "active")]
    return [m.name for m in mats if m.role == key]


def material(name: str, argument: str = "name") -> Material:
    """A material by name or alias, case- and space-insensitive."""
    if not isinstance(name, str) or not name.strip():
        raise CellwrightError(argument, name, "the name of a material (text)")
    key = normalise(name)
    hit = _alias_index().get(key)
    if hit is None:
        raise NotFoundError(argument, name, "material", list(_material_suggestions(key)))
    return _materials()[hit]


@lru_cache(maxsize=4096)
def _material_suggestions(key: str) -> tuple[str, ...]:
    """The names closest to an unknown one, worked out once per name: a template asks for
    the same unknown name (its "(none)" choice) many times per evaluation, and difflib
    takes about 0.5 ms a time (half of a cell-sizing sweep's time before)."""
    return tuple(
        closest(key, [*_materials(), *(a for m in _materials().values() for a in m.aliases)])
    )


def cycling(name: str, argument: str = "material") -> Cycling:
    """The first-charge capacity, first-cycle efficiency and voltages of an
    electrode material (those of the Li-ion and Na-ion families)."""
    m = material(name, argument)
    if m.cycling is None:
        have = [k for k, v in _materials().items() if v.cycling is not None]
        raise NotFoundError(argument, name, "material with first-charge data", closest(name, have))
    return m.cycling


def recipe(name: str, argument: str = "material") -> Recipe:
    """The usual electrode recipe of an active material."""
    m = material(name, argument)
    if m.recipe is None:
        have = [k for k, v in _materials().items() if v.recipe is not None]
        raise NotFoundError(
            argument, name, "material with an electrode recipe", closest(name, have)
        )
    return m.recipe


def price(name: str, argument: str = "material") -> Fact:
    """The demo price of a material (invented demo data)."""
    m = material(name, argument)
    table = _prices()
    if m.name not in table:
        raise NotFoundError(argument, name, "material with a demo price", closest(name, table))
    return table[m.name]


def source_of(item: str, prop: str | None = None, argument: str = "id") -> str:
    """The citation behind a catalogue value: a couple, a material (and property)
    or a species of the thermodynamic table."""
    if isinstance(item, str):
        if item in _couples() or any(
            k.lower() == item.replace(" ", "").lower() for k in _couples()
        ):
            c = couple(item, argument)
            if prop and prop.strip().lower() in ("de0dt", "dedt", "de0/dt"):
                return c.de0dt_source or "no dE0/dT in the catalogue"
            return c.source
        if item in _species():
            return _species()[item].source
        if normalise(item) in _alias_index():
            m = material(item, argument)
            key = (prop or "").strip().lower() or (
                "theoretical_capacity" if m.active else "density"
            )
            if key == "price":
                return price(m.name).source
            facts = {k.lower(): v for k, v in m.facts.items()}
            if key not in facts:
                raise NotFoundError("property", prop, f"property of {m.name}", closest(key, facts))
            return facts[key].source
    names = [*_couples(), *_materials(), *_species()]
    raise NotFoundError(argument, item, "couple, material or species", closest(item, names))


def reload() -> None:
    """Forget the loaded tables, so that the next look-up reads ``data/`` again
    (after a CSV was edited)."""
    for loader in (_couples, _species, _materials, _alias_index, _prices):
        loader.cache_clear()


def validate_all() -> dict[str, int]:
    """Load every table (raising on the first bad row); return row counts."""
    return {
        "couples": len(_couples()),
        "species": len(_species()),
        "materials": len(_materials()),
        "prices": len(_prices()),
    }
