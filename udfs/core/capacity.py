"""Capacity and energy: theoretical specific capacity n F / M, Ah and Wh,
electrode areal quantities, the theoretical specific energy of a couple, and
series/parallel counts for a pack target.

>>> round(float(theoretical_capacity(157.7548, 1)), 1)   # LiFePO4, mAh/g
169.9
>>> [int(x) for x in series_parallel(48.0, 5000.0, 3.65, 50.0)[:3]]
[14, 2, 28]
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .constants import SECONDS_PER_HOUR, F
from .errors import CellwrightError
from .validate import (
    ELECTRONS,
    FRACTION_OPEN,
    NONNEGATIVE,
    POSITIVE,
    UNIT_INTERVAL_HALF_OPEN,
    check,
)

__all__ = [
    "areal_capacity",
    "capacity",
    "ceil_count",
    "coating_thickness",
    "couple_specific_energy",
    "electrode_area",
    "energy",
    "np_ratio",
    "series_parallel",
    "theoretical_capacity",
]

Array = NDArray[np.float64]
_CEIL_TOL = 1e-9


def ceil_count(x: ArrayLike) -> Array:
    """Whole-number ceiling that forgives float noise: a value within 1e-9
    (relative) of a whole number counts as that number.

    >>> ceil_count([2.0000000000004, 2.01, 3.0]).tolist()
    [2.0, 3.0, 3.0]
    """
    a = np.asarray(x, dtype=float)
    r = np.round(a)
    near = np.abs(a - r) <= _CEIL_TOL * np.maximum(np.abs(a), 1.0)
    return np.where(near, r, np.ceil(a))


def theoretical_capacity(molar_mass: ArrayLike, electrons: ArrayLike) -> Array:
    """Theoretical specific capacity, mAh/g: n F / (3.6 M)."""
    m = check("molar_mass", molar_mass, POSITIVE)
    n = check("electrons", electrons, ELECTRONS)
    return n * F / (SECONDS_PER_HOUR * m) * 1000.0


def capacity(mass_g: ArrayLike, specific_capacity_mAh_g: ArrayLike) -> Array:
    """Capacity in Ah of a mass (g) of active material."""
    m = check("mass_g", mass_g, NONNEGATIVE)
    q = check("specific_capacity_mAh_g", specific_capacity_mAh_g, NONNEGATIVE)
    return m * q / 1000.0


def energy(capacity_Ah: ArrayLike, voltage_V: ArrayLike) -> Array:
    """Energy in Wh of a capacity (Ah) at an average voltage (V)."""
    c = check("capacity_Ah", capacity_Ah, NONNEGATIVE)
    v = check("voltage_V", voltage_V, NONNEGATIVE)
    return c * v


def areal_capacity(
    loading_mg_cm2: ArrayLike, active_fraction: ArrayLike, specific_capacity_mAh_g: ArrayLike
) -> Array:
    """Areal capacity (mAh/cm2) of a coating (loading per side, mg/cm2).

    >>> float(areal_capacity(20.0, 0.95, 200.0))
    3.8
    """
    w = check("loading_mg_cm2", loading_mg_cm2, NONNEGATIVE)
    f = check("active_fraction", active_fraction, FRACTION_OPEN)
    q = check("specific_capacity_mAh_g", specific_capacity_mAh_g, NONNEGATIVE)
    return w * f * q / 1000.0


def coating_thickness(
    loading_mg_cm2: ArrayLike, solids_density_g_cm3: ArrayLike, porosity: ArrayLike
) -> Array:
    """Coating thickness (um): loading / (solids density * (1 - porosity)).

    >>> round(float(coating_thickness(20.0, 4.0, 0.3)), 3)
    71.429
    """
    w = check("loading_mg_cm2", loading_mg_cm2, NONNEGATIVE)
    rho = check("solids_density_g_cm3", solids_density_g_cm3, POSITIVE)
    eps = check("porosity", porosity, UNIT_INTERVAL_HALF_OPEN)
    return w * 10.0 / (rho * (1.0 - eps))


def electrode_area(capacity_Ah: ArrayLike, areal_capacity_mAh_cm2: ArrayLike) -> Array:
    """Coated area (cm2) needed for a capacity (Ah) at an areal capacity."""
    c = check("capacity_Ah", capacity_Ah, NONNEGATIVE)
    q = check("areal_capacity_mAh_cm2", areal_capacity_mAh_cm2, POSITIVE)
    return c * 1000.0 / q


def np_ratio(anode_areal_capacity: ArrayLike, cathode_areal_capacity: ArrayLike) -> Array:
    """N/P ratio: negative over positive areal capacity (same units)."""
    a = check("anode_areal_capacity", anode_areal_capacity, NONNEGATIVE)
    c = check("cathode_areal_capacity", cathode_areal_capacity, POSITIVE)
    return a / c


def series_parallel(
    target_V: ArrayLike, target_Wh: ArrayLike, cell_V: ArrayLike, cell_Ah: ArrayLike
) -> tuple[Array, Array, Array, Array]:
    """Series count, parallel count, cell count and pack Wh for a target.

    Series = ceil(target V / cell V); parallel = ceil(target Wh / (series *
    cell Wh)); the pack meets or exceeds both targets.
    """
    tv = check("target_V", target_V, POSITIVE)
    tw = check("target_Wh", target_Wh, POSITIVE)
    cv = check("cell_V", cell_V, POSITIVE)
    ca = check("cell_Ah", cell_Ah, POSITIVE)
    series = ceil_count(tv / cv)
    parallel = ceil_count(tw / (series * cv * ca))
    cells = series * parallel
    return series, parallel, cells, cells * cv * ca


def _material_numbers(name: str, basis: str, argument: str) -> tuple[float, float, str]:
    from .catalogue import material

    m = material(name, argument)
    if not m.active:
        raise CellwrightError(argument, name, "an active material (cathode or anode)")
    if basis == "theoretical":
        f = m.formula
        assert f is not None
        q = float(theoretical_capacity(f.mass, m.number("electrons")))
    else:
        q = m.number("practical_capacity")
    return (
        q,
        m.number("average_voltage"),
        m.get("voltage_reference") if "voltage_reference" in m.facts else "",
    )


def couple_specific_energy(
    cathode_material: str, anode_material: str, basis: str = "theoretical"
) -> float:
    """Specific energy (Wh/kg of both active materials) of a couple.

    Voltage = cathode minus anode average voltage (same reference); capacity
    per kg of both = 1 / (1/q_c + 1/q_a). ``basis`` is "theoretical" (n F / M
    of each formula) or "practical" (catalogue typical capacities).
    """
    key = basis.strip().lower() if isinstance(basis, str) else basis
    if key not in ("theoretical", "practical"):
        raise CellwrightError("basis", basis, "'theoretical' or 'practical'")
    qc, vc, refc = _material_numbers(cathode_material, key, "cathode_material")
    qa, va, refa = _material_numbers(anode_material, key, "anode_material")
    if refc != refa:
        raise CellwrightError(
            "anode_material",
            anode_material,
            detail=f"voltages on different references ({refc} vs {refa}); "
            "pick materials of one family",
        )
    volts = vc - va
    if volts <= 0:
        raise CellwrightError(
            "anode_material",
            anode_material,
            detail=f"gives no positive voltage against {cathode_material} ({volts:.3g} V)",
        )
    return volts / (1.0 / qc + 1.0 / qa)
