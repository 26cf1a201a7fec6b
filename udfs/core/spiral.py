"""The length of electrode strip a wound roll holds, and the roll that holds a
given length: an Archimedean spiral, round (cylindrical cells) or flattened
into a racetrack (flat rolls of prismatic cells). Vectorised: every argument
may be an array; all broadcast.

A repeat unit of thickness ``pitch`` (cathode + separator + anode + separator)
winds from the core radius ``r0`` to the outer radius ``R``; each turn adds one
pitch to the radius, so the spiral is r = r0 + b theta with b = pitch / (2 pi).
Its arc length, from ds = sqrt(r^2 + b^2) dtheta and dtheta = dr / b, is::

    L_arc = [ R sqrt(R^2 + b^2) - r0 sqrt(r0^2 + b^2) + b^2 (asinh(R/b) - asinh(r0/b)) ] / (2 b)

A flat roll of outer width ``w`` and thickness ``t = 2 R`` has a straight part
s = w - t on each side of every turn: the strip is ``L_arc + 2 s N`` long, with
N = (R - r0) / pitch turns. Lengths and thicknesses in mm, the pitch in um.

>>> round(float(wound_length(17.8, 1.5, 345.0)), 1)       # a round roll, mm
716.2
>>> round(float(wound_thickness(716.2371953975, 1.5, 345.0)), 9)
17.8
>>> round(float(wound_length(30.0, 2.0, 400.0, width_mm=170.0)), 1)    # a flat roll
11559.4
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["arc_length", "turns", "wound_length", "wound_thickness"]

Array = NDArray[np.float64]

_NEWTON_STEPS = 60
_TOL = 1e-14


def arc_length(r0: ArrayLike, r1: ArrayLike, pitch: ArrayLike) -> Array:
    """Arc length of the spiral r = r0 + pitch * theta / (2 pi) from radius
    ``r0`` to ``r1`` (same length unit throughout).

    >>> round(float(arc_length(0.0, 1.0, 1.0)), 6)      # one turn of unit pitch
    3.383044
    """
    a = np.asarray(r0, dtype=float)
    c = np.asarray(r1, dtype=float)
    b = np.asarray(pitch, dtype=float) / (2.0 * np.pi)

    def g(r: Array) -> Array:
        return r * np.sqrt(r * r + b * b) + b * b * np.arcsinh(r / b)

    return (g(c) - g(a)) / (2.0 * b)


def turns(thickness_mm: ArrayLike, core_mm: ArrayLike, pitch_um: ArrayLike) -> Array:
    """Turns of the repeat unit in a roll: (outer radius - core radius) / pitch.

    >>> float(turns(10.0, 2.0, 400.0))
    10.0
    """
    t = np.asarray(thickness_mm, dtype=float)
    c = np.asarray(core_mm, dtype=float)
    return (t - c) / 2.0 / (np.asarray(pitch_um, dtype=float) / 1000.0)


def wound_length(
    thickness_mm: ArrayLike, core_mm: ArrayLike, pitch_um: ArrayLike,
    width_mm: ArrayLike | None = None,
) -> Array:
    """Strip length (mm) of a roll ``thickness_mm`` thick (a round roll: its
    diameter) wound on a core ``core_mm`` across (a hole or flat mandrel) with
    a repeat unit ``pitch_um`` thick. ``width_mm`` (the flat roll's outer width,
    >= its thickness) makes it a racetrack; None: a round roll.

    The caller checks that core < thickness <= width; the formula itself does
    not (it is used inside vectorised models that mark bad elements).
    """
    t = np.asarray(thickness_mm, dtype=float)
    c = np.asarray(core_mm, dtype=float)
    p = np.asarray(pitch_um, dtype=float) / 1000.0
    length = arc_length(c / 2.0, t / 2.0, p)
    if width_mm is not None:
        straight = np.asarray(width_mm, dtype=float) - t
        length = length + 2.0 * straight * (t - c) / 2.0 / p
    return length


def wound_thickness(
    length_mm: ArrayLike, core_mm: ArrayLike, pitch_um: ArrayLike,
    width_mm: ArrayLike | None = None,
) -> Array:
    """The roll thickness (mm; a round roll's diameter) that holds ``length_mm``
    of strip: the inverse of :func:`wound_length`, solved by safeguarded Newton
    steps (the length rises monotonically with the thickness). A flat roll
    (``width_mm`` given) that cannot hold the length within its width gives
    NaN; so does a negative length.

    >>> round(float(wound_thickness(wound_length(30.0, 2.0, 400.0, 170.0), 2.0, 400.0, 170.0)), 9)
    30.0
    """
    length = np.asarray(length_mm, dtype=float)
    c = np.asarray(core_mm, dtype=float)
    p = np.asarray(pitch_um, dtype=float)
    w = None if width_mm is None else np.asarray(width_mm, dtype=float)
    shape = np.broadcast_shapes(length.shape, c.shape, p.shape, () if w is None else w.shape)
    length, c, p = (np.broadcast_to(x, shape) for x in (length, c, p))
    pm = p / 1000.0
    b = pm / (2.0 * np.pi)
    with np.errstate(all="ignore"):
        # round roll: the area estimate pi (R^2 - r0^2) = L p, a close start
        lo = c.copy()
        if w is None:
            hi = 2.0 * np.sqrt((c / 2.0) ** 2 + (length * pm + pm * pm) / np.pi) + 2.0 * pm
        else:
            hi = np.broadcast_to(w, shape).copy()
        fits = wound_length(hi, c, p, w) >= length
        x = np.where(fits, 2.0 * np.sqrt((c / 2.0) ** 2 + length * pm / np.pi), np.nan)
        x = np.clip(x, lo, hi)
        frozen = ~np.isfinite(x)
        for _ in range(_NEWTON_STEPS):
            f = wound_length(x, c, p, w) - length
            lo = np.where(f < 0, x, lo)
            hi = np.where(f > 0, x, hi)
            r = x / 2.0
            d = np.sqrt(r * r + b * b) / b / 2.0  # d L_arc / d thickness
            if w is not None:
                d = d + (w + c - 2.0 * x) / pm
            step = x - f / d
            bad = ~((step >= lo) & (step <= hi))
            new = np.where(bad, (lo + hi) / 2.0, step)
            done = (np.abs(new - x) <= _TOL * np.maximum(np.abs(x), 1.0)) | (f == 0)
            # an element that has converged stays put, so each element's steps (and its
            # last digits) do not depend on the other elements of the array
            x = np.where(frozen, x, new)
            frozen = frozen | done
            if bool(np.all(frozen)):
                break
        ok = fits & (length >= 0) & np.isfinite(x)
    return np.where(ok, x, np.nan)
