"""Calling a declared spreadsheet function: cell values in, cell values out.

A :class:`Caller` wraps one declaration (:class:`udfs.sheet.declare.Plan`) and

* takes positional cell values only (ranges as 2-D lists or arrays);
* coerces every argument by its declaration (:mod:`udfs.sheet.coerce`),
  applying defaults to omitted or empty optional arguments;
* broadcasts all arguments like numpy (a 1x3 row against a 4x1 column gives a
  4x3 grid; shapes that cannot broadcast give one ``#VALUE!`` naming both);
* marks bad elements only, calls the core ONCE on the whole arrays with the
  bad elements replaced by a safe stand-in, and puts their errors back;
* groups the elements by their texts when a text argument is a range (one
  core call per distinct text);
* returns a scalar for a one-element result, a 2-D list that spills
  otherwise; never NaN, None or inf (a non-finite result is ``#NUM!``);
* never raises: an unexpected exception becomes
  ``#VALUE! internal error in CW_X: <type>`` and is logged.

A plain-float fast path skips all array work when every argument is a single
number or text that is valid as it stands.

>>> from udfs.sheet.registry import PLANS
>>> nernst = Caller(PLANS["CW_NERNST"])
>>> round(nernst((0.34, 2, 0.1, 1)), 4), nernst((0.34, 2, [[0.1, -1.0]], 1))[0][1]
(0.3104, '#NUM! ox_activity must be > 0 (got -1)')
"""

from __future__ import annotations

import logging
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import NDArray

from ..core.errors import CellwrightError, ShapeError
from .args import Activities, Kind, Num, Table
from .coerce import Coerced, activities_arg, number_arg, table_arg, text_arg
from .error_values import COM_ERROR_MAX, COM_ERROR_MIN, SheetError, from_exception

if TYPE_CHECKING:
    from .declare import Plan

__all__ = ["PER_ELEMENT_LIMIT", "Caller"]

log = logging.getLogger("udfs.sheet")

#: Above this many elements a failing vectorised call is not retried per element.
PER_ELEMENT_LIMIT = 4096

_SLOW = object()


def _accept(x: float) -> bool:
    return True


def _com_range(v: int) -> bool:
    """An integer that may be an error value the add-in passed (see coerce)."""
    return COM_ERROR_MIN <= v <= COM_ERROR_MAX


def _nonfinite() -> SheetError:
    return SheetError("#NUM!", "the result is not a finite number; check the size of the inputs")


def _shape_text(shape: tuple[int, ...]) -> str:
    if not shape:
        return "a single cell"
    return "x".join(str(n) for n in shape)


class Caller:
    """Calls one declared function with cell values (see the module docstring)."""

    def __init__(self, plan: Plan):
        self.plan = plan
        self.name = plan.name
        self.args = plan.args
        self.kind = plan.kind
        self.columns = plan.columns
        self.compute: Callable[..., Any] = plan.compute
        self.n_args = len(plan.args)
        self.n_required = sum(1 for a in plan.args if not a.optional)
        # texts that broadcast element by element (a table is one value for all elements)
        self.text_positions = tuple(
            i for i, a in enumerate(plan.args) if not a.is_number and not isinstance(a, Table)
        )
        self._fast_specs = tuple(
            (a.is_number, a.optional, a.default, a.scalar_ok if isinstance(a, Num) else _accept)
            for a in plan.args
        )

    def __call__(self, args: tuple[Any, ...]) -> Any:
        try:
            out = self._fast(args)
            if out is _SLOW:
                out = self._general(args)
            return out
        except Exception as exc:  # the cell boundary: nothing may escape
            log.exception("internal error in %s", self.name)
            return SheetError("#VALUE!", f"internal error in {self.name}: {type(exc).__name__}")

    def _fast(self, args: tuple[Any, ...]) -> Any:
        """Plain floats and texts that are valid as they stand: no arrays."""
        n = len(args)
        if n > self.n_args or n < self.n_required:
            return _SLOW
        vals = list(args)
        for i, (is_num, optional, default, ok) in enumerate(self._fast_specs):
            if i >= n:
                vals.append(default)
                continue
            v = vals[i]
            if type(v) is list:  # a single cell passed as [[x]] (xlwings ndim=2)
                if len(v) != 1 or type(v[0]) is not list or len(v[0]) != 1:
                    return _SLOW
                v = v[0][0]
            if is_num:
                if type(v) is not float:
                    if v is None and optional:
                        v = default
                    elif type(v) is int and -(2**53) <= v <= 2**53 and not _com_range(v):
                        v = float(v)
                    else:
                        return _SLOW
                if not ok(v):
                    return _SLOW
            elif type(v) is str:
                v = v.strip()
                if not v:
                    if not optional:
                        return _SLOW
                    v = default
                elif v[0] == "#":
                    return _SLOW
            elif v is None and optional:
                v = default
            else:
                return _SLOW
            vals[i] = v
        try:
            res = self.compute(*vals)
        except CellwrightError as exc:
            return from_exception(exc)
        return self._scalar_out(res)

    def _scalar_out(self, res: Any) -> Any:
        kind = self.kind
        if kind is Kind.NUMBER or (kind is Kind.VALUE and not isinstance(res, str)):
            r = float(res)
            return r if r - r == 0.0 else _nonfinite()
        if kind is Kind.VALUE:
            return res
        if kind is Kind.COLUMN:
            items = list(res)
            if not items:
                return SheetError("#N/A", "the list is empty")
            return [[x] for x in items]
        row = [float(x) for x in res]
        if all(x - x == 0.0 for x in row):
            return [row]
        return [[_nonfinite()] * len(row)]

    # ------------------------------------------------------------------ general path

    def _coerce(self, args: tuple[Any, ...]) -> list[Coerced]:
        out = []
        for i, a in enumerate(self.args):
            v = args[i] if i < len(args) else None
            if isinstance(a, Num):
                out.append(number_arg(v, a))
            elif isinstance(a, Activities):
                out.append(activities_arg(v, a))
            elif isinstance(a, Table):
                out.append(table_arg(v, a))
            else:
                out.append(text_arg(v, a))
        return out

    def _broadcast(self, coerced: list[Coerced]) -> tuple[int, ...]:
        shape: tuple[int, ...] = ()
        owners: list[str] = []
        for a, c in zip(self.args, coerced, strict=True):
            s = c.shape
            if not s:
                continue
            try:
                new = np.broadcast_shapes(shape, s)
            except ValueError:
                who = " and ".join(owners)
                raise ShapeError(
                    a.name,
                    detail=(
                        f"ranges cannot be combined: {who} {'are' if len(owners) > 1 else 'is'} "
                        f"{_shape_text(shape)} but {a.name} is {_shape_text(s)} (give ranges of "
                        "the same size, or a row against a column)"
                    ),
                ) from None
            if new != shape or not owners:
                owners.append(a.name)
            shape = new
        return shape

    def _general(self, args: tuple[Any, ...]) -> Any:
        n = len(args)
        if n > self.n_args:
            return SheetError(
                "#VALUE!",
                f"{self.name} takes at most {self.n_args} arguments, got {n}: "
                f"{self.plan.signature_text}",
            )
        if n < self.n_required:
            missing = ", ".join(a.name for a in self.args[n : self.n_required])
            return SheetError("#VALUE!", f"{self.name} needs {missing}: {self.plan.signature_text}")
        try:
            coerced = self._coerce(args)
            shape = self._broadcast(coerced)
        except CellwrightError as exc:
            return from_exception(exc)
        if self.kind is Kind.COLUMN:
            return self._column(coerced, shape)
        if self.kind is Kind.RECORD and len(shape) == 2 and shape[1] != 1:
            return SheetError(
                "#VALUE!",
                f"{self.name} spills {len(self.columns)} columns per row: give single cells or "
                f"columns (got {_shape_text(shape)})",
            )
        bad, errors = _combine(coerced, shape)
        size = int(np.prod(shape)) if shape else 1
        if bad is not None and bad.all():
            flat_vals: Any = None
        else:
            with np.errstate(all="ignore"):
                flat_vals, bad, errors = self._evaluate(coerced, shape, size, bad, errors)
        return self._emit(flat_vals, shape, size, bad, errors)

    def _column(self, coerced: list[Coerced], shape: tuple[int, ...]) -> Any:
        if shape not in ((), (1, 1)):
            a = next(
                a for a, c in zip(self.args, coerced, strict=True) if c.shape not in ((), (1, 1))
            )
            return SheetError(
                "#VALUE!", f"{a.name} must be a single cell (got a {_shape_text(shape)} range)"
            )
        for c in coerced:
            if c.bad is not None:
                return c.errors.item()  # type: ignore[union-attr]
        vals = [c.value.item() if isinstance(c.value, np.ndarray) else c.value for c in coerced]
        try:
            return self._scalar_out(self.compute(*vals))
        except CellwrightError as exc:
            return from_exception(exc)

    def _evaluate(
        self,
        coerced: list[Coerced],
        shape: tuple[int, ...],
        size: int,
        bad: NDArray[np.bool_] | None,
        errors: NDArray[np.object_] | None,
    ) -> tuple[Any, NDArray[np.bool_] | None, NDArray[np.object_] | None]:
        """Compute every good element; return flat values and updated marks."""
        text_ranges = any(isinstance(coerced[i].value, np.ndarray) for i in self.text_positions)
        if not text_ranges and self.kind is Kind.NUMBER:
            vals = [c.value for c in coerced]
            try:
                res = self.compute(*vals)
                return np.broadcast_to(np.asarray(res, dtype=float), shape).ravel(), bad, errors
            except CellwrightError as exc:
                failure: CellwrightError | None = exc
            # fall through: retry per group/element to localise the error
        else:
            failure = None
        flat = [
            np.broadcast_to(
                np.asarray(c.value, dtype=float if a.is_number else object), shape
            ).ravel()
            for a, c in zip(self.args, coerced, strict=True)
        ]
        good = np.ones(size, dtype=bool) if bad is None else ~bad.ravel()
        groups: dict[tuple[str, ...], list[int]] = {}
        tp = self.text_positions
        if not text_ranges:
            key = tuple(str(coerced[i].value) for i in tp)
            groups[key] = np.flatnonzero(good).tolist()
        else:
            texts = [flat[i] for i in tp]
            for k in np.flatnonzero(good).tolist():
                groups.setdefault(tuple(t[k] for t in texts), []).append(k)
        out = self._new_output(size)
        errs: dict[int, SheetError] = {}
        for members in groups.values():
            idx = np.asarray(members, dtype=np.intp)
            if failure is None:
                try:
                    self._assign(out, idx, self._call_group(flat, idx, members[0]))
                    continue
                except CellwrightError as exc:
                    group_error: CellwrightError = exc
            else:
                group_error, failure = failure, None
            if len(members) > PER_ELEMENT_LIMIT:
                err = from_exception(group_error)
                errs.update((k, err) for k in members)
                continue
            for k in members:
                one = np.asarray([k], dtype=np.intp)
                try:
                    self._assign(out, one, self._call_group(flat, one, k))
                except CellwrightError as exc:
                    errs[k] = from_exception(exc)
        if errs:
            flat_bad = np.zeros(size, dtype=bool) if bad is None else bad.ravel().copy()
            flat_err = np.empty(size, dtype=object) if errors is None else errors.ravel().copy()
            for k, e in errs.items():
                flat_bad[k] = True
                flat_err[k] = e
            bad, errors = flat_bad.reshape(shape), flat_err.reshape(shape)
        return out, bad, errors

    def _call_group(self, flat: list[NDArray[Any]], idx: NDArray[np.intp], first: int) -> Any:
        vals: list[Any] = []
        for i, a in enumerate(self.args):
            if a.is_number:
                col = flat[i][idx]
                vals.append(float(col[0]) if idx.size == 1 else col)
            else:
                vals.append(flat[i][first])
        return self.compute(*vals)

    def _new_output(self, size: int) -> Any:
        if self.kind is Kind.NUMBER:
            return np.zeros(size)
        if self.kind is Kind.RECORD:
            return np.zeros((size, len(self.columns)))
        return np.empty(size, dtype=object)

    def _assign(self, out: Any, idx: NDArray[np.intp], res: Any) -> None:
        if self.kind is Kind.NUMBER:
            out[idx] = np.broadcast_to(np.asarray(res, dtype=float), idx.shape)
        elif self.kind is Kind.RECORD:
            for j, col in enumerate(res):
                out[idx, j] = np.broadcast_to(np.asarray(col, dtype=float), idx.shape)
        elif isinstance(res, (str, float, int, np.floating, np.integer)):
            value = res if isinstance(res, str) else float(res)
            for k in idx.tolist():
                out[k] = value
        else:
            arr = np.broadcast_to(np.asarray(res, dtype=float), idx.shape)
            for k, v in zip(idx.tolist(), arr.tolist(), strict=True):
                out[k] = v

    def _emit(
        self,
        flat_vals: Any,
        shape: tuple[int, ...],
        size: int,
        bad: NDArray[np.bool_] | None,
        errors: NDArray[np.object_] | None,
    ) -> Any:
        """Cell values: scalar for one element, else a 2-D list."""
        if self.kind is Kind.RECORD:
            return self._emit_record(flat_vals, size, bad, errors)
        if flat_vals is None:
            grid: Any = np.empty(size, dtype=object)
        elif self.kind is Kind.NUMBER:
            finite = np.isfinite(flat_vals)
            if not finite.all():
                nf = ~finite if bad is None else (~finite & ~bad.ravel())
                if nf.any():
                    bad = np.zeros(size, dtype=bool) if bad is None else bad.ravel().copy()
                    errors = (
                        np.empty(size, dtype=object) if errors is None else errors.ravel().copy()
                    )
                    errors[nf] = _nonfinite()
                    bad |= nf
            grid = flat_vals
        else:
            grid = flat_vals
            for k, v in enumerate(grid.tolist()):
                if isinstance(v, float) and v - v != 0.0:
                    bad = np.zeros(size, dtype=bool) if bad is None else bad.ravel().copy()
                    errors = (
                        np.empty(size, dtype=object) if errors is None else errors.ravel().copy()
                    )
                    bad[k] = True
                    errors[k] = _nonfinite()
        rows, cols = (shape[0], shape[1]) if len(shape) == 2 else (1, size)
        if size == 1:
            if bad is not None and bool(bad.ravel()[0]):
                return errors.ravel()[0]  # type: ignore[union-attr]
            return grid[0] if self.kind is not Kind.NUMBER else float(grid[0])
        out = grid.reshape(rows, cols).tolist()
        if bad is not None:
            b = bad.reshape(rows, cols)
            e = errors.reshape(rows, cols)  # type: ignore[union-attr]
            for i, j in zip(*np.nonzero(b), strict=True):
                out[i][j] = e[i, j]
        return out

    def _emit_record(
        self,
        vals: Any,
        size: int,
        bad: NDArray[np.bool_] | None,
        errors: NDArray[np.object_] | None,
    ) -> Any:
        width = len(self.columns)
        flat_bad = np.zeros(size, dtype=bool) if bad is None else bad.ravel()
        flat_err = errors.ravel() if errors is not None else None
        if size == 1 and flat_bad[0]:
            return flat_err[0]  # type: ignore[index]
        out: list[list[Any]] = []
        rows = vals.tolist() if vals is not None else [[0.0] * width] * size
        for k in range(size):
            if flat_bad[k]:
                out.append([flat_err[k]] * width)  # type: ignore[index]
            elif all(x - x == 0.0 for x in rows[k]):
                out.append(rows[k])
            else:
                out.append([_nonfinite()] * width)
        return out


def _combine(
    coerced: list[Coerced], shape: tuple[int, ...]
) -> tuple[NDArray[np.bool_] | None, NDArray[np.object_] | None]:
    """Broadcast every argument's bad marks; the leftmost argument's error wins."""
    bad: NDArray[np.bool_] | None = None
    errors: NDArray[np.object_] | None = None
    for c in coerced:
        if c.bad is None:
            continue
        b = np.broadcast_to(c.bad, shape)
        e = np.broadcast_to(c.errors, shape)  # type: ignore[arg-type]
        if bad is None or errors is None:
            bad, errors = b.copy(), e.copy()
        else:
            take = b & ~bad
            errors[take] = e[take]
            bad |= take
    return bad, errors
