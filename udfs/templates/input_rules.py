"""Excel's side of an input's declaration (:class:`udfs.core.inputs.Input`):
the data-validation rule of its cell, a native formula that tests the cell
against the same domain (for the check cells and rows of a workbook), the
formula of a unit that another input picks, and the drop-down list of a
catalogue name input. Everything here is derived from the input table; nothing
about an input's limits is written twice.

>>> from udfs.core.sizing_table import CELL_SIZING
>>> dv = data_validation(CELL_SIZING.get("in_np_ratio"), "C9")
>>> dv.type, dv.operator, dv.formula1, dv.error
('decimal', 'greaterThan', '0', 'N/P ratio, first-charge basis (in_np_ratio): > 0.')
>>> excel_test(CELL_SIZING.get("in_yield"), "C9")
'IF(ISNUMBER(C9),AND(C9>0,C9<=1),FALSE)'
>>> unit_formula(CELL_SIZING.get("in_target"))
'=IF(in_target_basis="energy","Wh","Ah")'
"""

from __future__ import annotations

from openpyxl.worksheet.datavalidation import DataValidation

from ..core.inputs import Input
from ..core.validate import Domain, FreeText, Names, Options

__all__ = [
    "check_formula", "data_validation", "excel_test", "list_name", "must", "unit_formula",
]


def _num(x: float) -> str:
    return f"{x:g}"


def list_name(names: Names) -> str:
    """Defined name of the drop-down list of a catalogue name input.

    >>> list_name(Names(("conductive_carbon",)))
    'list_conductive_carbon'
    """
    return "list_" + "_".join(names.roles or (names.kind,))


def _number_test(domain: Domain, ref: str) -> str:
    """A number within the domain; text (or an error-free blank) is FALSE, never an
    error value (the bounds are tested only once the cell holds a number)."""
    terms = []
    if domain.lower is not None:
        terms.append(f"{ref}{'>' if domain.lower_open else '>='}{_num(domain.lower)}")
    if domain.upper is not None:
        terms.append(f"{ref}{'<' if domain.upper_open else '<='}{_num(domain.upper)}")
    if domain.nonzero:
        terms.append(f"{ref}<>0")
    if domain.integer:
        terms.append(f"{ref}=ROUND({ref},0)")
    if not terms:
        return f"ISNUMBER({ref})"
    test = terms[0] if len(terms) == 1 else f"AND({','.join(terms)})"
    return f"IF(ISNUMBER({ref}),{test},FALSE)"


def excel_test(inp: Input, ref: str, resolved: str | None = None) -> str:
    """A native boolean expression: the cell ``ref`` holds a value the input's
    domain allows (blank too, for an optional input). A catalogue name is tested
    through the cell that resolves it (``resolved``, a ``CW_MATERIAL_NAME``
    cell): allowed when that cell is not an error.

    >>> from udfs.core.sizing_table import CELL_SIZING
    >>> excel_test(CELL_SIZING.get("in_target_basis"), "C9")
    'OR(C9="capacity",C9="energy")'
    >>> excel_test(CELL_SIZING.get("in_separator_um"), "C9")
    'OR(ISBLANK(C9),IF(ISNUMBER(C9),C9>0,FALSE))'
    """
    d = inp.domain
    if isinstance(d, Domain):
        test = _number_test(d, ref)
    elif isinstance(d, Options):
        test = "OR(" + ",".join(f'{ref}="{c}"' for c in d.choices) + ")"
    elif isinstance(d, Names):
        if resolved is None:
            raise ValueError(f"{inp.name}: a name is tested through its resolved cell")
        test = f"NOT(ISERROR({resolved}))"
    elif isinstance(d, FreeText):
        test = "TRUE"
    else:  # pragma: no cover - InputDomain is closed
        raise TypeError(type(d))
    return f"OR(ISBLANK({ref}),{test})" if inp.optional else test


def check_formula(inp: Input, ref: str, resolved: str | None = None) -> str:
    """A check cell: ``ok``, or what the input allows.

    >>> from udfs.core.sizing_table import CELL_SIZING
    >>> check_formula(CELL_SIZING.get("in_np_ratio"), "in_np_ratio")
    '=IF(IF(ISNUMBER(in_np_ratio),in_np_ratio>0,FALSE),"ok","must be > 0")'
    """
    return f'=IF({excel_test(inp, ref, resolved)},"ok","{must(inp)}")'


def must(inp: Input) -> str:
    """What a check cell says when the value is not allowed, ready for a
    formula's text literal: ``must be > 0``."""
    return f"must be {inp.allowed}".replace('"', '""')


def data_validation(inp: Input, ref: str) -> DataValidation:
    """The data-validation rule of the input's cell ``ref`` (``C9``): a whole or
    decimal rule with its operator where Excel has one for the domain, a list
    for options and catalogue names, a custom formula otherwise (a range with
    one open end and one closed, a non-zero number). The error message names
    the input and what it allows; the input message is its hint. A catalogue
    name that is not in the drop-down (an alias in another spelling) is
    questioned, not refused: the cell beside shows how the catalogue reads it.
    """
    d = inp.domain
    if isinstance(d, Domain):
        dv = _number_rule(d, ref)
    elif isinstance(d, Options):
        dv = DataValidation(type="list", formula1='"' + ",".join(d.choices) + '"')
    elif isinstance(d, Names):
        dv = DataValidation(type="list", formula1=list_name(d))
        dv.errorStyle = "warning"
    else:
        raise ValueError(f"{inp.name}: free text has no data validation")
    dv.allow_blank = inp.optional
    dv.promptTitle = inp.label[:32]
    dv.prompt = inp.hint[:255]
    dv.errorTitle = inp.label[:32]
    extra = ""
    if isinstance(d, Names):
        extra = " Not in the list: the name cell beside shows how the catalogue reads it."
    dv.error = f"{inp.label} ({inp.name}): {inp.allowed}.{extra}"[:255]
    dv.showInputMessage = True
    dv.showErrorMessage = True
    if dv.errorStyle is None:
        dv.errorStyle = "stop"
    dv.add(ref)
    return dv


def _number_rule(d: Domain, ref: str) -> DataValidation:
    kind = "whole" if d.integer else "decimal"
    lo, hi = d.lower, d.upper
    if d.nonzero or (lo is not None and hi is not None and (d.lower_open or d.upper_open)):
        return DataValidation(type="custom", formula1=_number_test(d, ref))
    if lo is not None and hi is not None:
        return DataValidation(type=kind, operator="between", formula1=_num(lo),
                              formula2=_num(hi))
    if lo is not None:
        op = "greaterThan" if d.lower_open else "greaterThanOrEqual"
        return DataValidation(type=kind, operator=op, formula1=_num(lo))
    if hi is not None:
        op = "lessThan" if d.upper_open else "lessThanOrEqual"
        return DataValidation(type=kind, operator=op, formula1=_num(hi))
    return DataValidation(type="custom", formula1=_number_test(d, ref))


def unit_formula(inp: Input) -> str:
    """The unit cell of an input: its unit, or a formula when another input
    picks what it means (``Ah`` or ``Wh``)."""
    if not inp.choices:
        return inp.unit
    expr = f'"{inp.choices[0].unit}"'
    for c in inp.choices[1:]:
        expr = f'IF({inp.chooser}="{c.option}","{c.unit}",{expr})'
    return "=" + expr
