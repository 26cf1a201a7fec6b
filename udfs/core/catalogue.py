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
"""

from __future__ import annotations

import csv
import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from functools import cache
from pathlib import Path
from types import MappingProxyType

from .errors import CellwrightError, DataError, NotFoundError
from .formula import Formula, parse
from .names import closest, lookup, normalise
from .reactions import HalfReaction, parse_half_reaction

__all__ = [
    "Couple",
    "Fact",
    "Material",
    "SpeciesData",
    "couple",
    "couple_ids",
    "data_dir",
    "material",
    "material_names",
    "price",
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
class Material:
    """An active or inactive material: named facts, each with its source."""

    name: str
    active: bool
    facts: Mapping[str, Fact] = field(default_factory=dict)
    aliases: tuple[str, ...] = ()

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


_NUMERIC = {
    "electrons": (0.01, 20.0),
    "theoretical_capacity": (1.0, 5000.0),
    "practical_capacity": (1.0, 5000.0),
    "average_voltage": (-4.0, 6.0),
    "density": (0.01, 25.0),
    "porosity": (0.0, 1.0),
    "thickness": (0.1, 5000.0),
}


def _materials_from(name: str, active: bool) -> dict[str, Material]:
    facts: dict[str, dict[str, Fact]] = {}
    aliases: dict[str, list[str]] = {}
    for i, row in _rows(name):
        where = f"{name} row {i}"
        mat, prop = row["material"], row["property"]
        if prop in _NUMERIC:
            _number(row["value"], where, prop, *_NUMERIC[prop])
        if prop == "formula":
            try:
                parse(row["value"], where)
            except CellwrightError as exc:
                raise DataError(where, row["value"], detail=str(exc)) from None
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
        out[mat] = Material(mat, active, MappingProxyType(fs), tuple(aliases.get(mat, ())))
    return out


@cache
def _materials() -> Mapping[str, Material]:
    active = _materials_from("active_materials.csv", True)
    inactive = _materials_from("inactive_materials.csv", False)
    both = set(active) & set(inactive)
    if both:
        raise DataError("materials", sorted(both), detail="names used in both tables")
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
    index = _alias_index()
    hit = index.get(normalise(name))
    if hit is None:
        raise NotFoundError(
            argument,
            name,
            "material",
            closest(name, [*_materials(), *(a for m in _materials().values() for a in m.aliases)]),
        )
    return _materials()[hit]


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


def validate_all() -> dict[str, int]:
    """Load every table (raising on the first bad row); return row counts."""
    return {
        "couples": len(_couples()),
        "species": len(_species()),
        "materials": len(_materials()),
        "prices": len(_prices()),
    }
