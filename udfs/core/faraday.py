"""Faraday's law: charge <-> amount of electrons <-> mass, with current
efficiency, deposition time, plated thickness and energy per mass.

Units (the trade's): charge in Ah, time in h, mass in g, molar mass in g/mol,
current in A, current density in A/dm2, density in g/cm3, thickness in um.

>>> round(float(charge_to_mass(1.0, 63.546, 2)), 4)   # copper, 1 Ah
1.1855
>>> round(float(electrons_per_day(1.0)), 3)           # 1 A for 24 h, mol e-
0.895
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .constants import SECONDS_PER_HOUR, F
from .validate import ELECTRONS, FRACTION_OPEN, NONNEGATIVE, POSITIVE, check

__all__ = [
    "charge_to_mass",
    "deposition_time",
    "electrochemical_equivalent",
    "electrons_per_day",
    "energy_per_mass",
    "mass_to_charge",
    "moles_of_electrons",
    "plating_thickness",
]

Array = NDArray[np.float64]


def moles_of_electrons(charge_Ah: ArrayLike) -> Array:
    """Amount of electrons (mol) carried by a charge in Ah: Q / F."""
    q = check("charge_Ah", charge_Ah, NONNEGATIVE)
    return q * SECONDS_PER_HOUR / F


def electrons_per_day(current_A: ArrayLike) -> Array:
    """Moles of electrons moved by a steady current in 24 h."""
    i = check("current_A", current_A, NONNEGATIVE)
    return i * 24.0 * SECONDS_PER_HOUR / F


def electrochemical_equivalent(molar_mass: ArrayLike, electrons: ArrayLike) -> Array:
    """Mass deposited per ampere-hour, g/Ah: M * 3600 / (n F).

    >>> round(float(electrochemical_equivalent(107.8682, 1)), 3)  # silver
    4.025
    """
    m = check("molar_mass", molar_mass, POSITIVE)
    n = check("electrons", electrons, ELECTRONS)
    return m * SECONDS_PER_HOUR / (n * F)


def charge_to_mass(
    charge_Ah: ArrayLike, molar_mass: ArrayLike, electrons: ArrayLike, efficiency: ArrayLike = 1.0
) -> Array:
    """Mass (g) converted by a charge (Ah) at a current efficiency (0..1]."""
    q = check("charge_Ah", charge_Ah, NONNEGATIVE)
    eff = check("efficiency", efficiency, FRACTION_OPEN)
    return q * eff * electrochemical_equivalent(molar_mass, electrons)


def mass_to_charge(
    mass_g: ArrayLike, molar_mass: ArrayLike, electrons: ArrayLike, efficiency: ArrayLike = 1.0
) -> Array:
    """Charge (Ah) that must pass to convert a mass (g) at a current efficiency."""
    m = check("mass_g", mass_g, NONNEGATIVE)
    eff = check("efficiency", efficiency, FRACTION_OPEN)
    return m / (eff * electrochemical_equivalent(molar_mass, electrons))


def deposition_time(
    mass_g: ArrayLike,
    current_A: ArrayLike,
    molar_mass: ArrayLike,
    electrons: ArrayLike,
    efficiency: ArrayLike = 1.0,
) -> Array:
    """Time (h) to deposit a mass (g) at a constant current (A).

    >>> round(float(deposition_time(1.1855, 1.0, 63.546, 2)), 3)
    1.0
    """
    i = check("current_A", current_A, POSITIVE)
    return mass_to_charge(mass_g, molar_mass, electrons, efficiency) / i


def energy_per_mass(
    voltage_V: ArrayLike, molar_mass: ArrayLike, electrons: ArrayLike, efficiency: ArrayLike = 1.0
) -> Array:
    """Electrical energy per mass of product, kWh/kg, at a cell voltage.

    V times the charge per gram (Ah/g) is Wh/g, which equals kWh/kg.
    >>> round(float(energy_per_mass(2.0, 63.546, 2)), 4)   # copper at 2 V
    1.6871
    """
    v = check("voltage_V", voltage_V, NONNEGATIVE)
    return v / charge_to_mass(1.0, molar_mass, electrons, efficiency)


def plating_thickness(
    current_density_A_dm2: ArrayLike,
    time_h: ArrayLike,
    molar_mass: ArrayLike,
    electrons: ArrayLike,
    density_g_cm3: ArrayLike,
    efficiency: ArrayLike = 1.0,
) -> Array:
    """Average plated thickness (um) from current density (A/dm2) and time (h).

    Mass per dm2 = j t e (g/dm2); thickness = mass / (rho * 100 cm2) cm = ... um.
    >>> round(float(plating_thickness(1.0, 1.0, 58.6934, 2, 8.908)), 2)  # nickel
    12.29
    """
    j = check("current_density_A_dm2", current_density_A_dm2, NONNEGATIVE)
    t = check("time_h", time_h, NONNEGATIVE)
    rho = check("density_g_cm3", density_g_cm3, POSITIVE)
    grams_per_dm2 = charge_to_mass(j * t, molar_mass, electrons, efficiency)
    return grams_per_dm2 / 100.0 / rho * 1.0e4
