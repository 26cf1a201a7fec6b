"""Spreadsheet functions for the materials catalogue and the sources behind
its values.

>>> CW_MATERIAL("LFP", "formula")
'LiFePO4'
>>> CW_MATERIALS("anode")[0]
['graphite']
"""

from __future__ import annotations

import math

from ..core import catalogue
from ..core.capacity import couple_specific_energy
from ..core.errors import NotFoundError
from ..core.names import closest, normalise
from .declare import Kind, Section, Text, sheet_function

__all__ = ["CW_COUPLE_SPECIFIC_ENERGY", "CW_MATERIAL", "CW_MATERIALS", "CW_SOURCE"]

MATERIAL_DOC = 'catalogue material name or alias, e.g. "LFP" (see CW_MATERIALS)'
_EXTRA = ("name", "aliases", "role", "source", "price")


def material_property(name: str, prop: str) -> str | float:
    """A catalogue fact of a material: a number where the value is numeric,
    else text. Besides the table's properties: name, aliases, role, source
    (of the headline value) and price (demo data)."""
    m = catalogue.material(name, "material")
    facts = {normalise(k): k for k in m.facts}
    key = normalise(prop)
    if key in facts:
        value = m.facts[facts[key]].value
        try:
            number = float(value)
        except ValueError:
            return value
        return number if math.isfinite(number) else value
    if key == "name":
        return m.name
    if key == "aliases":
        return ", ".join(m.aliases) if m.aliases else "(none)"
    if key == "role":
        return m.role
    if key == "source":
        return catalogue.source_of(m.name, None, "material")
    if key == "price":
        return float(catalogue.price(m.name, "material").value)
    options = [*m.facts, *_EXTRA]
    raise NotFoundError("property_name", prop, f"property of {m.name}", closest(prop, options))


@sheet_function(
    "CW_MATERIAL",
    "A catalogue value of a material: formula, role, electrons, theoretical_capacity (mAh/g), "
    "practical_capacity, average_voltage (V), density (g/cm3), source, price (demo data), ...",
    [
        Text("material", MATERIAL_DOC),
        Text("property_name", 'property, e.g. "theoretical_capacity", "density", "formula"'),
    ],
    section=Section.CAPACITY,
    kind=Kind.VALUE,
    returns="number or text",
    example=("LFP", "theoretical_capacity"),
)
def CW_MATERIAL(material: str, property_name: str) -> str | float:
    return material_property(material, property_name)


@sheet_function(
    "CW_MATERIALS",
    "Names of the catalogue's materials, optionally of one role or category (cathode, anode, "
    "foil, separator, ...), spilled down a column.",
    [
        Text(
            "role",
            "cathode, anode, active, inactive, foil, separator, electrolyte, ...",
            default="",
        )
    ],
    section=Section.CAPACITY,
    kind=Kind.COLUMN,
    returns="list of text",
    example=("anode",),
)
def CW_MATERIALS(role: str) -> list[str]:
    return catalogue.material_names(role or None)


@sheet_function(
    "CW_SOURCE",
    "The published source behind a catalogue value: a couple id, a material (and property) or "
    "a species of the thermodynamic table.",
    [
        Text("id", 'couple id, material name or species, e.g. "Cu2+/Cu", "LFP", "Zn2+(aq)"'),
        Text(
            "property_name",
            'material property, e.g. "density" (empty: the headline value)',
            default="",
        ),
    ],
    section=Section.CAPACITY,
    kind=Kind.VALUE,
    returns="text",
    example=("Cu2+/Cu",),
)
def CW_SOURCE(id: str, property_name: str) -> str:
    try:
        return catalogue.source_of(id, property_name or None, "id")
    except NotFoundError as exc:
        if exc.argument == "property":
            raise NotFoundError("property_name", property_name, exc.kind, exc.suggestions) from None
        raise


@sheet_function(
    "CW_COUPLE_SPECIFIC_ENERGY",
    "Specific energy (Wh/kg of both active materials) of a cathode and an anode material: "
    "voltage difference times 1/(1/q_c + 1/q_a).",
    [
        Text("cathode_material", 'catalogue cathode material, e.g. "LFP"'),
        Text("anode_material", 'catalogue anode material, e.g. "graphite"'),
        Text(
            "basis",
            '"theoretical" (n F / M) or "practical" (typical capacities)',
            default="theoretical",
        ),
    ],
    section=Section.CAPACITY,
    returns="Wh/kg",
    example=("LFP", "graphite"),
)
def CW_COUPLE_SPECIFIC_ENERGY(cathode_material: str, anode_material: str, basis: str) -> float:
    return couple_specific_energy(cathode_material, anode_material, basis)
