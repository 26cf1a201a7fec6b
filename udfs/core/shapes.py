"""Broadcasting of named arrays, with an error that names the argument whose
shape does not fit (the rule every vectorised model of the core follows).

>>> broadcast_shape({"a": np.zeros(3), "b": np.zeros((2, 1)), "c": np.float64(1.0)})
(2, 3)
>>> broadcast_shape({"a": np.zeros(3), "b": np.zeros(2)})
Traceback (most recent call last):
...
udfs.core.errors.ShapeError: b: shape (2,) cannot be broadcast with shape (3,) of a
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .errors import ShapeError

__all__ = ["broadcast_shape", "full"]


def broadcast_shape(values: Mapping[str, ArrayLike]) -> tuple[int, ...]:
    """The common shape of ``values``; :class:`ShapeError` names the first that
    does not fit and the arguments that set the shape so far."""
    shape: tuple[int, ...] = ()
    shaped: list[str] = []
    for name, a in values.items():
        s = np.shape(a)
        try:
            shape = np.broadcast_shapes(shape, s)
        except ValueError:
            raise ShapeError(
                name, s,
                detail=f"shape {s} cannot be broadcast with shape {shape} of {', '.join(shaped)}",
            ) from None
        if len(s):
            shaped.append(name)
    return shape


def full(value: ArrayLike, shape: tuple[int, ...]) -> NDArray[np.float64]:
    """``value`` as a float array of ``shape`` (a read-only broadcast view)."""
    return np.broadcast_to(np.asarray(value, dtype=float), shape)
