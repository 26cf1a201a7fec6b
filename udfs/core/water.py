"""Liquid water at temperature: the density of the saturated liquid and the
ionization constant pKw(T) that turns a pH into the activity of OH-.

pKw follows the Bandura-Lvov formulation (BANDURA2006, adopted by IAPWS as
its release R11-07), evaluated at the density of liquid water on the
saturation line (the IAPWS auxiliary equation of WAGNER1993). Below 100 degC
the saturation pressure is under 1 bar and the pressure makes no visible
difference (pKw changes by about 1e-4 per 10 bar).

Temperatures here are in kelvin; callers convert from degC.

>>> round(float(pkw_kelvin(298.15)), 3)
13.995
>>> round(float(pkw_kelvin(333.15)), 2)       # 60 degC
13.02
>>> round(float(saturated_liquid_density(298.15)), 1)   # kg/m^3
997.0
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "LIQUID_RANGE_K",
    "pkw_at_density",
    "pkw_kelvin",
    "saturated_liquid_density",
]

Array = NDArray[np.float64]

#: Temperatures (K) where both equations hold for liquid water: from the
#: melting point to 350 degC (the saturation-density equation runs to the
#: critical point, 647.096 K; the pKw formulation to 1273 K).
LIQUID_RANGE_K: tuple[float, float] = (273.15, 623.15)

# WAGNER1993 (IAPWS SR1-86, revised 1992): saturated liquid density,
# rho'/rho_c = 1 + sum b_i theta^(e_i), theta = 1 - T/T_c.
_T_CRIT = 647.096  # K
_RHO_CRIT = 322.0  # kg/m^3
_RHO_B = (1.99274064, 1.09965342, -0.510839303, -1.75493479, -45.5170352, -6.74694450e5)
_RHO_E = (1 / 3, 2 / 3, 5 / 3, 16 / 3, 43 / 3, 110 / 3)

# BANDURA2006, Table 2 (coefficients as adopted in IAPWS R11-07); density in g/cm^3.
_N = 6.0
_ALPHA = (-0.864671, 8659.19, -22786.2)
_BETA = (0.642044, -56.8534, -0.375754)
_GAMMA = (0.61415, 48251.33, -67707.93, 10102100.0)  # pKw of the ideal gas
_M_WATER = 18.015268  # g/mol, as in the formulation


def saturated_liquid_density(temp_K: ArrayLike) -> Array:
    """Density (kg/m^3) of liquid water on the saturation line (WAGNER1993)."""
    t = np.asarray(temp_K, dtype=float)
    theta = 1.0 - t / _T_CRIT
    total = 1.0 + sum(b * theta**e for b, e in zip(_RHO_B, _RHO_E, strict=True))
    return np.asarray(_RHO_CRIT * total, dtype=float)


def pkw_at_density(temp_K: ArrayLike, density_kg_m3: ArrayLike) -> Array:
    """-log10 Kw (Kw in mol^2/kg^2) at a temperature and density of water
    (BANDURA2006).

    >>> round(float(pkw_at_density(300.0, 1000.0)), 6)
    13.906565
    """
    t = np.asarray(temp_K, dtype=float)
    rho = np.asarray(density_kg_m3, dtype=float) / 1000.0
    a0, a1, a2 = _ALPHA
    b0, b1, b2 = _BETA
    g0, g1, g2, g3 = _GAMMA
    q = rho * np.exp(a0 + a1 / t + a2 / t**2 * rho ** (2.0 / 3.0))
    pkw_gas = g0 + g1 / t + g2 / t**2 + g3 / t**3
    bracket = np.log10(1.0 + q) - q / (q + 1.0) * rho * (b0 + b1 / t + b2 * rho)
    return np.asarray(-2.0 * _N * bracket + pkw_gas + 2.0 * np.log10(_M_WATER / 1000.0))


def pkw_kelvin(temp_K: ArrayLike) -> Array:
    """pKw of liquid water at saturation pressure (BANDURA2006 with WAGNER1993
    density); the caller checks that ``temp_K`` lies in :data:`LIQUID_RANGE_K`."""
    return pkw_at_density(temp_K, saturated_liquid_density(temp_K))
