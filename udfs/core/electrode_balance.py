"""The capacity basis the trade uses: first-charge areal capacities, N/P on
that basis, and the reversible capacity of the cell after both electrodes'
first-cycle losses. Vectorised: every argument may be an array.

Per unit of facing area (mAh/cm2, one cathode face against one anode face),
with first-charge areal capacities Qc and Qa and first-cycle efficiencies
eta_c and eta_a of the cathode and the anode (derivation in
``docs/sizing-model.md``)::

    N/P    = Qa / Qc                                  (first-charge basis)
    Q1     = min(Qc, Qa)                              charge passed on the first charge
    Q_rev  = min(Qc * eta_c, Q1 - Qa * (1 - eta_a))   lithium (sodium) back in the cathode

The cathode takes back at most Qc * eta_c; the anode keeps Qa * (1 - eta_a) in
its first-cycle loss (a loss proportional to its first-charge capacity, the
usual approximation); below N/P 1 the anode is full before the cathode is
empty, so the first charge stops at Qa (any more would plate lithium) and the
cell holds at most Qa * eta_a: the anode limits the capacity.

>>> q = reversible_areal_capacity(4.0, 4.4, 0.9, 0.93)   # N/P 1.1
>>> round(float(q), 6), int(anode_limited(4.0, 4.4, 0.9, 0.93))
(3.6, 0)
>>> round(float(reversible_areal_capacity(4.0, 3.2, 0.9, 0.93)), 6)   # N/P 0.8: the anode's
2.976
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "anode_limited",
    "areal_capacity",
    "first_charge",
    "loading_for",
    "reversible_areal_capacity",
]

Array = NDArray[np.float64]


def areal_capacity(
    loading_mg_cm2: ArrayLike, active_fraction: ArrayLike, capacity_mAh_g: ArrayLike
) -> Array:
    """mAh/cm2 per side: loading (mg/cm2) x active fraction x mAh/g / 1000.

    >>> round(float(areal_capacity(22.0, 0.96, 225.0)), 6)
    4.752
    """
    return (
        np.asarray(loading_mg_cm2, dtype=float) * np.asarray(active_fraction, dtype=float)
        * np.asarray(capacity_mAh_g, dtype=float) / 1000.0
    )


def loading_for(
    areal_mAh_cm2: ArrayLike, active_fraction: ArrayLike, capacity_mAh_g: ArrayLike
) -> Array:
    """The loading (mg/cm2 per side) that gives an areal capacity: the inverse
    of :func:`areal_capacity`.

    >>> round(float(loading_for(4.752, 0.96, 225.0)), 9)
    22.0
    """
    return (
        np.asarray(areal_mAh_cm2, dtype=float) * 1000.0
        / (np.asarray(active_fraction, dtype=float) * np.asarray(capacity_mAh_g, dtype=float))
    )


def first_charge(qc: ArrayLike, qa: ArrayLike) -> Array:
    """Charge passed on the first charge per unit area: min(Qc, Qa).

    >>> float(first_charge(4.0, 3.0))
    3.0
    """
    return np.minimum(np.asarray(qc, dtype=float), np.asarray(qa, dtype=float))


def reversible_areal_capacity(
    qc: ArrayLike, qa: ArrayLike, eta_c: ArrayLike, eta_a: ArrayLike
) -> Array:
    """Reversible (discharge) areal capacity of the cell, mAh/cm2 per facing
    pair of faces, from first-charge areal capacities and first-cycle
    efficiencies (see the module docstring). Negative where the anode's loss
    exceeds the charge: the caller refuses that design.

    >>> round(float(reversible_areal_capacity(4.0, 4.4, 0.95, 0.90)), 6)   # the anode's loss
    3.56
    """
    c = np.asarray(qc, dtype=float)
    a = np.asarray(qa, dtype=float)
    cathode = c * np.asarray(eta_c, dtype=float)
    lithium = np.minimum(c, a) - a * (1.0 - np.asarray(eta_a, dtype=float))
    return np.minimum(cathode, lithium)


def anode_limited(
    qc: ArrayLike, qa: ArrayLike, eta_c: ArrayLike, eta_a: ArrayLike
) -> NDArray[np.bool_]:
    """Where the anode side sets the capacity (its loss or, below N/P 1, its
    size), not the cathode's own first-cycle efficiency.

    >>> anode_limited([4.0, 4.0], [4.4, 3.2], 0.9, 0.93).tolist()
    [False, True]
    """
    c = np.asarray(qc, dtype=float)
    a = np.asarray(qa, dtype=float)
    cathode = c * np.asarray(eta_c, dtype=float)
    lithium = np.minimum(c, a) - a * (1.0 - np.asarray(eta_a, dtype=float))
    return np.asarray(lithium < cathode)
