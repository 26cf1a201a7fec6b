"""Error values for cells.

A :class:`SheetError` is text (so the classic Windows add-in, which cannot
return real error values, shows ``#NUM! concentration must be > 0 (got -0.1)``)
that also carries its code, so the headless engine can turn it into a real
spreadsheet error value that IFERROR and propagation understand.

>>> e = SheetError("#NUM!", "mass_g must be > 0 (got -1)")
>>> e.code, str(e)
('#NUM!', '#NUM! mass_g must be > 0 (got -1)')
"""

from __future__ import annotations

__all__ = ["CODES", "SheetError"]

CODES = ("#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A")


class SheetError(str):
    """Text of an error value that remembers its spreadsheet error code."""

    code: str
    message: str

    def __new__(cls, code: str, message: str = "") -> SheetError:
        if code not in CODES:
            code = "#VALUE!"
        self = super().__new__(cls, f"{code} {message}".strip())
        self.code = code
        self.message = message
        return self

    def __reduce__(self) -> tuple[type[SheetError], tuple[str, str]]:
        return (SheetError, (self.code, self.message))
