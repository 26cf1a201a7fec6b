"""The one adapter between spreadsheet cells and the core.

``@sheet_function`` turns a small ``compute`` function (floats/arrays and
texts in, the core's answer out) into a spreadsheet function that

* takes positional cell values only (ranges as 2-D lists or arrays);
* coerces every argument by its declaration (:mod:`udfs.sheet.args`,
  :mod:`udfs.sheet.coerce`), applying defaults to omitted or empty optional
  arguments;
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

>>> from udfs.core.validate import POSITIVE
>>> @sheet_function("CW_DEMO_DOUBLE", "Twice the mass, g.", [Num("mass_g", "mass, g", POSITIVE)],
...                 returns="g", register=False)
... def demo(mass_g):
...     return 2 * mass_g
>>> demo(1.5), demo([[1.0, -1.0]])
(3.0, [[2.0, '#NUM! mass_g must be > 0 (got -1)']])
"""

from __future__ import annotations

import enum
import inspect
import logging
import os
import sys
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np
from numpy.typing import NDArray

from ..core.errors import CellwrightError, ShapeError
from .args import Activities, Arg, Num
from .coerce import Coerced, activities_arg, number_arg, text_arg
from .error_values import SheetError, from_exception

__all__ = [
    "FUNCTIONS",
    "PLANS",
    "Kind",
    "Plan",
    "decorate_for_xlwings",
    "sheet_function",
]

log = logging.getLogger("udfs.sheet")

#: Spreadsheet name -> the callable taking positional cell values (no xlwings objects).
FUNCTIONS: dict[str, Callable[..., Any]] = {}
#: Spreadsheet name -> its plan (arguments, help, units), for the reference.
PLANS: dict[str, Plan] = {}

#: Above this many elements a failing vectorised call is not retried per element.
PER_ELEMENT_LIMIT = 4096
HELP_LIMIT = 255
CATEGORY = "cellwright"

_SLOW = object()


def _accept(x: float) -> bool:
    return True


class Kind(enum.Enum):
    """What a function returns."""

    NUMBER = "number"  # one number per element
    VALUE = "value"  # one number or text per element
    COLUMN = "column"  # a list that spills down (no broadcasting)
    RECORD = "record"  # a fixed row of numbers per element, spilling to the right


def _nonfinite() -> SheetError:
    return SheetError("#NUM!", "the result is not a finite number; check the size of the inputs")


def _shape_text(shape: tuple[int, ...]) -> str:
    if not shape:
        return "a single cell"
    return "x".join(str(n) for n in shape)


class Plan:
    """Everything the adapter precomputes about one spreadsheet function."""

    def __init__(
        self,
        name: str,
        help: str,
        args: Sequence[Arg],
        compute: Callable[..., Any],
        kind: Kind = Kind.NUMBER,
        returns: str = "",
        columns: Sequence[str] = (),
        example: tuple[Any, ...] | None = None,
    ):
        self.name = name
        self.help = help
        self.args = tuple(args)
        self.compute = compute
        self.kind = kind
        self.returns = returns
        self.columns = tuple(columns)
        self.example = example
        self._check_declaration()
        self.n_args = len(self.args)
        self.n_required = sum(1 for a in self.args if not a.optional)
        self.text_positions = tuple(i for i, a in enumerate(self.args) if not a.is_number)
        self.number_positions = tuple(i for i, a in enumerate(self.args) if a.is_number)
        self._fast_specs = tuple(
            (a.is_number, a.optional, a.default, a.scalar_ok if isinstance(a, Num) else _accept)
            for a in self.args
        )
        self.signature = inspect.Signature(
            [
                inspect.Parameter(
                    a.name,
                    inspect.Parameter.POSITIONAL_OR_KEYWORD,
                    default=None if a.optional else inspect.Parameter.empty,
                )
                for a in self.args
            ]
        )

    # ------------------------------------------------------------------ declaration

    def _check_declaration(self) -> None:
        if not self.name.startswith("CW_") or not self.name.isidentifier():
            raise ValueError(f"bad spreadsheet name {self.name!r}")
        if not self.help or len(self.help) > HELP_LIMIT:
            raise ValueError(f"{self.name}: help must be 1..{HELP_LIMIT} characters")
        seen_optional = False
        for a in self.args:
            if not a.name.isidentifier() or a.name.startswith("_"):
                raise ValueError(f"{self.name}: bad argument name {a.name!r}")
            if seen_optional and not a.optional:
                raise ValueError(f"{self.name}: required {a.name} after an optional argument")
            seen_optional = seen_optional or a.optional
            if len(self.arg_help(a)) > HELP_LIMIT:
                raise ValueError(f"{self.name}: help of {a.name} longer than {HELP_LIMIT}")
        if self.kind is Kind.COLUMN and any(a.is_number for a in self.args):
            raise ValueError(f"{self.name}: a spilled list takes no numeric arguments")

    @property
    def signature_text(self) -> str:
        """``CW_X(a, b, [c=1])`` as the reference shows it."""
        return f"{self.name}({', '.join(a.signature_text for a in self.args)})"

    def arg_help(self, arg: Arg) -> str:
        """The function wizard's help for one argument: its doc, what is
        allowed, and the default."""
        text = arg.doc
        if isinstance(arg, Num) and arg.domain.allowed != "a finite number":
            text += f"; {arg.domain.allowed}"
        if arg.optional:
            d = arg.default
            text += (
                f"; optional, default {d:g}"
                if isinstance(d, float)
                else ("; optional" if d == "" else f'; optional, default "{d}"')
            )
        return text

    # ------------------------------------------------------------------ calling

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
                    elif type(v) is int and -(2**53) <= v <= 2**53:
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
                f"{self.signature_text}",
            )
        if n < self.n_required:
            missing = ", ".join(a.name for a in self.args[n : self.n_required])
            return SheetError("#VALUE!", f"{self.name} needs {missing}: {self.signature_text}")
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


# ---------------------------------------------------------------------- the decorator


def _build_callable(plan: Plan) -> Callable[..., Any]:
    call = plan.__call__

    def spreadsheet_function(*args: Any) -> Any:
        return call(args)

    spreadsheet_function.__name__ = plan.name
    spreadsheet_function.__qualname__ = plan.name
    spreadsheet_function.__doc__ = plan.help
    spreadsheet_function.__signature__ = plan.signature  # type: ignore[attr-defined]
    # no annotations: xlwings would take a return annotation as a result converter
    spreadsheet_function.__annotations__ = {}
    spreadsheet_function.__cellwright_plan__ = plan  # type: ignore[attr-defined]
    return spreadsheet_function


def _runtime_decorators() -> tuple[Any, Any, Any] | None:
    """xlwings' func/arg/ret where they do something (Windows add-in, xlwings
    Server); elsewhere they are no-ops, so xlwings is not imported at all."""
    if not (sys.platform.startswith("win") or os.environ.get("XLWINGS_ON_SERVER") == "true"):
        return None
    try:
        import xlwings as xw
    except ImportError:  # pragma: no cover - xlwings is a dependency
        return None
    return xw.func, xw.arg, xw.ret


def decorate_for_xlwings(fn: Callable[..., Any], plan: Plan, func: Any, arg: Any, ret: Any) -> Any:
    """Apply xlwings' UDF decorators: every argument ``ndim=2`` (a range or a
    cell, always as a 2-D list), cell errors passed in as text (``err_to_str``)
    so they propagate, ``doc=`` with the unit; results are returned as 2-D lists
    (dynamic arrays spill them), never with ``expand``."""
    fn = ret()(fn)
    for a in reversed(plan.args):
        fn = arg(a.name, ndim=2, err_to_str=True, doc=plan.arg_help(a))(fn)
    return func(category=CATEGORY)(fn)


def sheet_function(
    name: str,
    help: str,
    args: Sequence[Arg],
    *,
    kind: Kind = Kind.NUMBER,
    returns: str = "",
    columns: Sequence[str] = (),
    example: tuple[Any, ...] | None = None,
    register: bool = True,
) -> Callable[[Callable[..., Any]], Callable[..., Any]]:
    """Declare a spreadsheet function; the decorated ``compute`` receives
    floats or float arrays for :class:`Num` arguments and stripped ``str`` for
    :class:`Text` arguments, in declaration order, defaults applied."""

    def wrap(compute: Callable[..., Any]) -> Callable[..., Any]:
        plan = Plan(name, help, args, compute, kind, returns, columns, example)
        fn = _build_callable(plan)
        decorators = _runtime_decorators()
        if decorators is not None:
            fn = decorate_for_xlwings(fn, plan, *decorators)
        if register:
            if name in FUNCTIONS:
                raise ValueError(f"{name} declared twice")
            FUNCTIONS[name] = fn
            PLANS[name] = plan
        return fn

    return wrap
