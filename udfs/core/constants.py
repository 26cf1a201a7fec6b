"""Physical constants from CODATA 2018 (the exact SI defining constants), typed in once.

Since the 2019 SI redefinition F = N_A e and R = N_A k are exact.

>>> round(F, 5)
96485.33212
>>> round(LN10 * R * T_STANDARD / F * 1000, 3)  # Nernst slope, mV/decade
59.159
"""

from __future__ import annotations

import math

from .water import pkw_kelvin

#: The SI defining constants (exact since 2019; CODATA 2018 lists them unchanged).
#: Typed here once; a test checks them against pint's own definitions, so the
#: package does not build a unit registry just to know F and R (it costs ~0.3 s).
AVOGADRO: float = 6.02214076e23  # 1/mol
ELEMENTARY_CHARGE: float = 1.602176634e-19  # C
BOLTZMANN: float = 1.380649e-23  # J/K

#: Faraday constant, C/mol: F = N_A e (CODATA 2018, exact).
F: float = AVOGADRO * ELEMENTARY_CHARGE
#: Molar gas constant, J/(mol K): R = N_A k (CODATA 2018, exact).
R: float = AVOGADRO * BOLTZMANN
#: 0 degC in kelvin (SI definition).
T0: float = 273.15
#: Standard temperature of the tables, 25 degC, in kelvin.
T_STANDARD: float = 298.15
LN10: float = math.log(10.0)
SECONDS_PER_HOUR: float = 3600.0
#: pKw of liquid water at 25 degC from the temperature-dependent formulation
#: (BANDURA2006, see :mod:`udfs.core.water`): 13.9949, printed as 13.995 in the
#: CRC Handbook's table of the ionization constant of water.
PKW_25C: float = float(pkw_kelvin(T_STANDARD))

_TABLE: dict[str, tuple[float, str, str]] = {
    "F": (F, "C/mol", "Faraday constant (CODATA 2018, exact)"),
    "R": (R, "J/(mol*K)", "molar gas constant (CODATA 2018, exact)"),
    "NA": (AVOGADRO, "1/mol", "Avogadro constant (exact)"),
    "e": (ELEMENTARY_CHARGE, "C", "elementary charge (exact)"),
    "k": (BOLTZMANN, "J/K", "Boltzmann constant (exact)"),
    "T0": (T0, "K", "0 degC in kelvin"),
    "T25": (T_STANDARD, "K", "25 degC in kelvin, the tables' standard temperature"),
    "NERNST_SLOPE": (
        LN10 * R * T_STANDARD / F,
        "V",
        "ln(10) RT/F at 25 degC, per decade and electron",
    ),
    "PKW": (
        PKW_25C,
        "dimensionless",
        "pKw of water at 25 degC (BANDURA2006; the potentials use pKw at their temperature)",
    ),
}


def constant_names() -> list[str]:
    """Names accepted by :func:`constant`."""
    return list(_TABLE)


def constant(name: str) -> tuple[float, str, str]:
    """``(value, unit, description)`` of a named constant; case-insensitive.

    >>> constant("f")[1]
    'C/mol'
    """
    from .errors import NotFoundError
    from .names import closest

    for key in _TABLE:
        if key.lower() == name.strip().lower():
            return _TABLE[key]
    raise NotFoundError("name", name, "constant", closest(name, _TABLE))
