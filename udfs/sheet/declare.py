"""Declaring a spreadsheet function: its name, help, arguments, result kind and
section of the reference, all in one ``@sheet_function`` declaration.

This is the stable import for anyone adding a function::

    from udfs.sheet.declare import Kind, Num, Section, Text, sheet_function

The decorated ``compute`` receives floats (or float arrays) for :class:`Num`
arguments and stripped ``str`` for :class:`Text` ones, in declaration order,
defaults applied; how a cell's values reach it (coercion, broadcasting,
per-element errors, results) is :mod:`udfs.sheet.call`.

>>> from udfs.core.validate import POSITIVE
>>> @sheet_function("CW_DEMO_DOUBLE", "Twice the mass, g.", [Num("mass_g", "mass, g", POSITIVE)],
...                 section=Section.CAPACITY, returns="g", register=False)
... def demo(mass_g):
...     return 2 * mass_g
>>> demo(1.5), demo([[1.0, -1.0]])
(3.0, [[2.0, '#NUM! mass_g must be > 0 (got -1)']])
>>> demo.__cellwright_plan__.elementwise
True
"""

from __future__ import annotations

import enum
import inspect
import os
import sys
from collections.abc import Callable, Sequence
from typing import Any

from .args import REQUIRED, Activities, Arg, Kind, Num, Table, Text
from .call import Caller

__all__ = [
    "CATEGORY",
    "FUNCTIONS",
    "HELP_LIMIT",
    "PLANS",
    "REQUIRED",
    "Activities",
    "Arg",
    "Kind",
    "Num",
    "Plan",
    "Section",
    "Table",
    "Text",
    "build_callable",
    "decorate_for_xlwings",
    "sheet_function",
]

#: Spreadsheet name -> the callable taking positional cell values (no xlwings objects).
FUNCTIONS: dict[str, Callable[..., Any]] = {}
#: Spreadsheet name -> its declaration (arguments, help, units, section).
PLANS: dict[str, Plan] = {}

HELP_LIMIT = 255  # Excel's limit on a MacroOptions description
CATEGORY = "cellwright"  # the function wizard's category


class Section(enum.Enum):
    """The sections of the function reference, in the order it lists them."""

    FORMULA_UNITS = "Formula and units"
    FARADAY = "Faraday's law"
    POTENTIALS = "Potentials"
    THERMODYNAMICS = "Cell thermodynamics"
    CAPACITY = "Materials and capacity"
    SIZING = "Electrode and cell sizing"
    PROCUREMENT = "Procurement"
    COST = "Prices, cost and risk"

    @property
    def title(self) -> str:
        return self.value


class Plan:
    """The declaration of one spreadsheet function: everything known about it
    before it is called (the reference, the function wizard and the headless
    engine read it)."""

    def __init__(
        self,
        name: str,
        help: str,
        args: Sequence[Arg],
        compute: Callable[..., Any],
        *,
        section: Section,
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
        self.section = section
        self._check()
        self.n_args = len(self.args)
        self.n_required = sum(1 for a in self.args if not a.optional)
        #: Element-wise over single cells: every argument is one scalar per element and
        #: the result is exactly one value per element, so a filled-down column of calls
        #: equals one call on the stacked columns (the headless engine relies on this).
        self.elementwise: bool = kind in (Kind.NUMBER, Kind.VALUE) and all(
            a.per_element for a in self.args
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

    def _check(self) -> None:
        if not self.name.startswith("CW_") or not self.name.isidentifier():
            raise ValueError(f"bad spreadsheet name {self.name!r}")
        if not self.help or len(self.help) > HELP_LIMIT:
            raise ValueError(f"{self.name}: help must be 1..{HELP_LIMIT} characters")
        if not isinstance(self.section, Section):
            raise ValueError(f"{self.name}: section must be a Section, not {self.section!r}")
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

    def __repr__(self) -> str:
        return f"Plan({self.signature_text})"


def build_callable(plan: Plan) -> Callable[..., Any]:
    """The spreadsheet function itself: positional cell values in, cell values
    out, with the wizard's signature and help and no annotations (xlwings would
    take a return annotation as a result converter)."""
    call = Caller(plan).__call__  # the bound method: one lookup less per call

    def spreadsheet_function(*args: Any) -> Any:
        return call(args)

    spreadsheet_function.__name__ = plan.name
    spreadsheet_function.__qualname__ = plan.name
    spreadsheet_function.__doc__ = plan.help
    spreadsheet_function.__signature__ = plan.signature  # type: ignore[attr-defined]
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
    section: Section,
    kind: Kind = Kind.NUMBER,
    returns: str = "",
    columns: Sequence[str] = (),
    example: tuple[Any, ...] | None = None,
    register: bool = True,
) -> Callable[[Callable[..., Any]], Callable[..., Any]]:
    """Declare a spreadsheet function in ``section`` of the reference; the
    decorated ``compute`` receives floats or float arrays for :class:`Num`
    arguments and stripped ``str`` for :class:`Text` arguments, in declaration
    order, defaults applied."""

    def wrap(compute: Callable[..., Any]) -> Callable[..., Any]:
        plan = Plan(
            name,
            help,
            args,
            compute,
            section=section,
            kind=kind,
            returns=returns,
            columns=columns,
            example=example,
        )
        fn = build_callable(plan)
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
