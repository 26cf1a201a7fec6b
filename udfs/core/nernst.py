"""Electrode potentials: the Nernst equation, catalogue couples at any
temperature and activity, the open-circuit voltage of two couples and the
membrane (concentration) potential of one permeating ion.

E = E0(T) - (ln10 R T / n F) log10 Q, with E0(T) = E0 + dE0/dT (T - 298.15 K)
where the catalogue has dE0/dT (otherwise E0 is taken as temperature
independent, which the catalogue note says). A pH given for a couple with OH-
sets a(OH-) = 10**(pH - pKw(T)) with pKw at the same temperature
(BANDURA2006, :mod:`udfs.core.water`), so the acid and the alkaline form of
a couple agree at any temperature up to the curvature that a constant
dE0/dT leaves out (a few mV at 60-80 degC).

>>> round(float(nernst(0.34, 2, 0.1, 1.0)), 4)      # copper at 0.1 M
0.3104
>>> round(float(ocv("Cu2+/Cu", "Zn2+/Zn")), 2)
1.1
>>> round(float(pkw(60.0)), 2)
13.02
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .catalogue import couple
from .constants import LN10, PKW_25C, T0, T_STANDARD, F, R
from .reactions import log10_quotient
from .validate import ANY, CELSIUS, ELECTRONS, NONZERO_INTEGER, POSITIVE, Domain, check
from .water import LIQUID_RANGE_K, pkw_kelvin

__all__ = [
    "LIQUID_WATER",
    "e0",
    "membrane_potential",
    "nernst",
    "nernst_slope",
    "ocv",
    "pkw",
    "potential",
]

_LO, _HI = (k - T0 for k in LIQUID_RANGE_K)
#: Temperatures (degC) where pKw(T) of liquid water is defined here.
LIQUID_WATER = Domain(lower=_LO, upper=_HI, note="degC (liquid water, where pKw(T) is defined)")

Array = NDArray[np.float64]
Activities = Mapping[str, ArrayLike] | None


def nernst_slope(electrons: ArrayLike, temp_C: ArrayLike = 25.0) -> Array:
    """ln(10) R T / (n F) in V per decade of Q (0.05916 V at 25 degC, n = 1)."""
    n = check("electrons", electrons, ELECTRONS)
    t = check("temp_C", temp_C, CELSIUS)
    return LN10 * R * (t + T0) / (n * F)


def nernst(
    e0_V: ArrayLike,
    electrons: ArrayLike,
    ox_activity: ArrayLike,
    red_activity: ArrayLike,
    temp_C: ArrayLike = 25.0,
) -> Array:
    """Potential (V) of Ox + n e- = Red: E0 - slope * log10(a_red / a_ox)."""
    e = check("e0_V", e0_V, ANY)
    n = check("electrons", electrons, ELECTRONS)
    ox = check("ox_activity", ox_activity, POSITIVE)
    red = check("red_activity", red_activity, POSITIVE)
    t = check("temp_C", temp_C, CELSIUS)
    # one ufunc for one cell and for ranges alike, so a range equals its cells' calls
    return e - LN10 * R * (t + T0) / (n * F) * np.log10(red / ox)


def e0(couple_id: str, temp_C: ArrayLike = 25.0) -> Array:
    """Standard potential (V vs SHE) of a catalogue couple at temp_C."""
    c = couple(couple_id, "couple")
    t = check("temp_C", temp_C, CELSIUS)
    slope = c.de0dt or 0.0
    return c.e0 + slope * (t + T0 - T_STANDARD)


def pkw(temp_C: ArrayLike = 25.0) -> Array:
    """pKw of liquid water at temp_C (degC, 0 to 350) at saturation pressure:
    about 14.95 at 0, 14.00 at 25, 13.02 at 60 and 12.60 at 80 degC (BANDURA2006)."""
    t = check("temp_C", temp_C, LIQUID_WATER)
    return pkw_kelvin(t + T0)


def potential(couple_id: str, activities: Activities = None, temp_C: ArrayLike = 25.0) -> Array:
    """Electrode potential (V vs SHE) of a catalogue couple.

    ``activities`` maps species (``'Cu2+'``, ``'O2'``) to mol/L or bar, and may
    give ``'pH'``; species not given are at their standard state. A pH meets
    OH- through pKw at temp_C (:func:`pkw`), which needs liquid water (0 to
    350 degC).
    """
    c = couple(couple_id, "couple")
    water_pkw: ArrayLike = PKW_25C
    if activities and "pH" in activities and "OH-" in c.reaction.species():
        water_pkw = pkw(temp_C)
    logq = log10_quotient(c.reaction, activities, pkw=water_pkw)
    return e0(couple_id, temp_C) - nernst_slope(c.electrons, temp_C) * logq


def ocv(
    cathode_id: str,
    anode_id: str,
    cathode_activities: Activities = None,
    anode_activities: Activities = None,
    temp_C: ArrayLike = 25.0,
) -> Array:
    """Open-circuit voltage (V): E(cathode) - E(anode)."""
    ec = potential(cathode_id, cathode_activities, temp_C)
    ea = potential(anode_id, anode_activities, temp_C)
    return ec - ea


def membrane_potential(
    c_inside: ArrayLike, c_outside: ArrayLike, charge: ArrayLike, temp_C: ArrayLike = 25.0
) -> Array:
    """Equilibrium potential inside minus outside (V) for one permeating ion of
    charge z: (R T / z F) ln(c_out / c_in).

    >>> round(float(membrane_potential(0.140, 0.005, 1, 37.0)) * 1000, 1)  # K+
    -89.1
    """
    cin = check("c_inside", c_inside, POSITIVE)
    cout = check("c_outside", c_outside, POSITIVE)
    z = check("charge", charge, NONZERO_INTEGER)
    t = check("temp_C", temp_C, CELSIUS)
    return R * (t + T0) / (z * F) * np.log(cout / cin)
