"""Spreadsheet functions for electrode potentials: E0, Nernst, catalogue
couples with activities, OCV of two couples, membrane potential.

>>> round(CW_NERNST(0.34, 2, 0.1, 1), 4)
0.3104
>>> round(CW_OCV("Cu2+/Cu", "Zn2+/Zn"), 2)
1.1
"""

from __future__ import annotations

from typing import Any

from ..core import nernst
from ..core.catalogue import couple, couple_ids
from ..core.errors import CellwrightError
from ..core.validate import ANY, CELSIUS, ELECTRONS, NONZERO_INTEGER, POSITIVE
from .declare import Activities, Kind, Num, Section, Text, sheet_function
from .resolve import activities, relabel

__all__ = [
    "CW_COUPLES",
    "CW_E0",
    "CW_HALF_REACTION",
    "CW_MEMBRANE_POTENTIAL",
    "CW_NERNST",
    "CW_OCV",
    "CW_POTENTIAL",
]

COUPLE_DOC = 'catalogue couple id, e.g. "Cu2+/Cu" (see CW_COUPLES)'
ACTIVITY_FORMS = (
    'text "Cu2+=0.1; pH=3" (mol/L, bar) or a 2-column range species/value; others at standard'
    " state; a pH sets OH- as 10^(pH - pKw) with pKw at temp_C"
)
ACTIVITIES_DOC = "activities as " + ACTIVITY_FORMS


def _temp() -> Num:
    return Num("temp_C", "temperature, degC", CELSIUS, default=25.0)


def _potential(couple_id: str, acts: str, temp_C: Any, couple_arg: str, acts_arg: str) -> Any:
    c = couple(couple_id, couple_arg)
    try:
        return nernst.potential(c.id, activities(acts, acts_arg), temp_C)
    except CellwrightError as exc:
        if exc.argument.startswith("activities"):
            raise relabel(exc, acts_arg) from None
        raise


@sheet_function(
    "CW_E0",
    "Standard potential (V vs SHE) of a catalogue couple at temp_C (dE0/dT applied where "
    "tabulated).",
    [Text("couple", COUPLE_DOC), _temp()],
    section=Section.POTENTIALS,
    returns="V vs SHE",
    example=("Cu2+/Cu",),
)
def CW_E0(couple_id: str, temp_C: Any) -> Any:
    return nernst.e0(couple(couple_id, "couple").id, temp_C)


@sheet_function(
    "CW_NERNST",
    "Electrode potential (V) of Ox + n e- = Red by the Nernst equation: "
    "E0 - (ln10 R T / n F) log10(a_red / a_ox).",
    [
        Num("e0", "standard potential, V", ANY),
        Num("electrons", "electrons transferred, n", ELECTRONS),
        Num("ox_activity", "activity of the oxidised form (mol/L, bar)", POSITIVE),
        Num("red_activity", "activity of the reduced form (mol/L, bar; 1 for a solid)", POSITIVE),
        _temp(),
    ],
    section=Section.POTENTIALS,
    returns="V",
    example=(0.34, 2, 0.1, 1),
)
def CW_NERNST(e0: Any, electrons: Any, ox_activity: Any, red_activity: Any, temp_C: Any) -> Any:
    return nernst.nernst(e0, electrons, ox_activity, red_activity, temp_C)


@sheet_function(
    "CW_POTENTIAL",
    "Electrode potential (V vs SHE) of a catalogue couple at the given activities and "
    "temperature (Nernst).",
    [Text("couple", COUPLE_DOC), Activities("activities", ACTIVITIES_DOC, default=""), _temp()],
    section=Section.POTENTIALS,
    returns="V vs SHE",
    example=("O2/H2O", "pH=7; O2=0.21"),
)
def CW_POTENTIAL(couple_id: str, acts: str, temp_C: Any) -> Any:
    return _potential(couple_id, acts, temp_C, "couple", "activities")


@sheet_function(
    "CW_HALF_REACTION",
    "The balanced half-reaction of a catalogue couple, as text.",
    [Text("couple", COUPLE_DOC)],
    section=Section.POTENTIALS,
    kind=Kind.VALUE,
    returns="text",
    example=("Cu2+/Cu",),
)
def CW_HALF_REACTION(couple_id: str) -> str:
    return couple(couple_id, "couple").reaction.as_text()


@sheet_function(
    "CW_COUPLES",
    "The ids of the catalogue's couples, spilled down a column.",
    [],
    section=Section.POTENTIALS,
    kind=Kind.COLUMN,
    returns="list of text",
    example=(),
)
def CW_COUPLES() -> list[str]:
    return couple_ids()


@sheet_function(
    "CW_OCV",
    "Open-circuit voltage (V) of two catalogue couples: E(cathode) - E(anode) at the given "
    "activities and temperature, from tabulated E0. CW_REACTION_THERMO's emf uses formation data; "
    "the two differ by up to 38 mV (docs/sources.md).",
    [
        Text("cathode_couple", 'couple id of the positive electrode, e.g. "Cu2+/Cu"'),
        Text("anode_couple", 'couple id of the negative electrode, e.g. "Zn2+/Zn"'),
        Activities(
            "cathode_activities", "activities at the cathode as " + ACTIVITY_FORMS, default=""
        ),
        Activities("anode_activities", "activities at the anode as " + ACTIVITY_FORMS, default=""),
        _temp(),
    ],
    section=Section.POTENTIALS,
    returns="V",
    example=("Cu2+/Cu", "Zn2+/Zn"),
)
def CW_OCV(
    cathode_couple: str,
    anode_couple: str,
    cathode_activities: str,
    anode_activities: str,
    temp_C: Any,
) -> Any:
    ec = _potential(
        cathode_couple, cathode_activities, temp_C, "cathode_couple", "cathode_activities"
    )
    ea = _potential(anode_couple, anode_activities, temp_C, "anode_couple", "anode_activities")
    return ec - ea


@sheet_function(
    "CW_MEMBRANE_POTENTIAL",
    "Equilibrium membrane potential (V, inside minus outside) of one permeating ion: "
    "(R T / z F) ln(c_outside / c_inside).",
    [
        Num("c_inside", "concentration inside, mol/L", POSITIVE),
        Num("c_outside", "concentration outside, mol/L", POSITIVE),
        Num("charge", "charge number z of the ion, e.g. 1 for K+", NONZERO_INTEGER),
        _temp(),
    ],
    section=Section.POTENTIALS,
    returns="V",
    example=(0.140, 0.005, 1, 37),
)
def CW_MEMBRANE_POTENTIAL(c_inside: Any, c_outside: Any, charge: Any, temp_C: Any) -> Any:
    return nernst.membrane_potential(c_inside, c_outside, charge, temp_C)
