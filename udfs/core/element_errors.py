"""Errors of single scenarios inside a vectorised model.

A model sized on arrays meets inputs that cannot be computed in some
elements only (an envelope too small for one layer, an anode whose loss
exceeds the lithium). :class:`ElementErrors` collects them as masks: strict
(the default of :func:`udfs.core.sizing.design_cell`) raises the first error,
naming the argument and the value of the first bad element; lenient records
every one, so a review of the design (:mod:`udfs.core.design_rules`) reports
each scenario's own errors and the other scenarios still compute.

>>> from udfs.core.errors import DomainError
>>> e = ElementErrors((3,), strict=False)
>>> e.add(np.array([False, True, False]), lambda v: DomainError("x", v, "> 0"),
...       np.array([1.0, -2.0, 3.0]))
>>> e.failed().tolist(), e.messages(1)
([False, True, False], ['x must be > 0 (got -2)'])
>>> ElementErrors((), strict=True).add(np.True_, lambda v: DomainError("y", v, "> 0"), -1.0)
Traceback (most recent call last):
...
udfs.core.errors.DomainError: y must be > 0 (got -1)
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .errors import CellwrightError

__all__ = ["ElementErrors", "ErrorItem"]

Make = Callable[..., CellwrightError]


@dataclass(frozen=True)
class ErrorItem:
    """One kind of error: where it happens (``mask``) and how each element's
    message is made from its values (``make(*values at the element)``)."""

    mask: NDArray[np.bool_]
    make: Make
    values: tuple[NDArray[np.float64], ...]

    def error(self, index: int | tuple[int, ...]) -> CellwrightError:
        return self.make(*(float(v[index]) for v in self.values))


class ElementErrors:
    """Per-element errors of arrays of ``shape`` (see the module docstring)."""

    def __init__(self, shape: tuple[int, ...], strict: bool = True,
                 parent: ElementErrors | None = None, index: NDArray[np.intp] | None = None):
        self.shape = shape
        self.strict = strict
        self.items: list[ErrorItem] = []
        self._parent = parent
        self._index = index

    def add(self, mask: ArrayLike, make: Make, *values: ArrayLike) -> None:
        """Record (lenient) or raise (strict) the error ``make(*values)`` (the
        values at the element) where ``mask`` is true."""
        m = np.broadcast_to(np.asarray(mask, dtype=bool), self.shape)
        if not m.any():
            return
        vs = [np.broadcast_to(np.asarray(v, dtype=float), self.shape) for v in values]
        if self.strict:
            first = next(zip(*np.nonzero(m), strict=True)) if m.ndim else ()
            raise make(*(float(v[first]) for v in vs))
        if self._parent is not None and self._index is not None:
            full_m = np.zeros(self._parent.shape, dtype=bool).reshape(-1)
            full_m[self._index] = m.reshape(-1)
            full_vs = []
            for v in vs:
                f = np.full(self._parent.shape, np.nan).reshape(-1)
                f[self._index] = v.reshape(-1)
                full_vs.append(f.reshape(self._parent.shape))
            self._parent.add(full_m.reshape(self._parent.shape), make, *full_vs)
            return
        self.items.append(ErrorItem(m.copy(), make, tuple(np.array(v) for v in vs)))

    def subset(self, index: NDArray[np.intp]) -> ElementErrors:
        """The errors of the flat elements ``index`` of a 1-D array (a group of
        scenarios computed apart); what is added there lands here."""
        return ElementErrors((len(index),), self.strict, self, index)

    def failed(self) -> NDArray[np.bool_]:
        """Elements with at least one error."""
        out = np.zeros(self.shape, dtype=bool)
        for item in self.items:
            out = out | item.mask
        return out

    def errors(self, index: int | tuple[int, ...] = ()) -> list[CellwrightError]:
        """The errors of one element, in the order they were found."""
        return [item.error(index) for item in self.items if bool(item.mask[index])]

    def messages(self, index: int | tuple[int, ...] = ()) -> list[str]:
        return [str(e) for e in self.errors(index)]
