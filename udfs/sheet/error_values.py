"""Error values for cells.

A :class:`SheetError` is text (so the classic Windows add-in, which cannot
return real error values, shows ``#NUM! concentration must be > 0 (got -0.1)``)
that also carries its code, so the headless engine can turn it into a real
spreadsheet error value that IFERROR and propagation understand.

>>> e = SheetError("#NUM!", "mass_g must be > 0 (got -1)")
>>> e.code, str(e)
('#NUM!', '#NUM! mass_g must be > 0 (got -1)')
>>> incoming_error("#N/A").code               # an error value from another cell
'#N/A'
>>> incoming_error("#NUM! mass_g must be > 0").message
'mass_g must be > 0'
>>> incoming_error("#1 grade") is None
True
"""

from __future__ import annotations

__all__ = ["CODES", "CellValue", "SheetError", "from_exception", "incoming_error"]

#: A plain cell value: number, text, TRUE/FALSE, empty (None); errors are SheetError (a str).
CellValue = float | int | str | bool | None

CODES = ("#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A")
# Error values some runtimes produce besides the classic seven (passed on as #N/A-like
# errors of their own text).
_EXTRA = ("#GETTING_DATA", "#SPILL!", "#CALC!", "#FIELD!", "#BLOCKED!", "#CONNECT!", "#BUSY!")


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


def incoming_error(text: str) -> SheetError | None:
    """The error value that ``text`` stands for, or ``None`` for ordinary text.

    Recognises the bare codes (``"#N/A"``, as xlwings passes cell errors with
    ``err_to_str``; the headless engine's error tokens are ``str`` too) and our
    own error text arriving from another cell (``"#NUM! mass_g must be ..."``).
    """
    if isinstance(text, SheetError):
        return text
    if not text.startswith("#"):
        return None
    for code in CODES:
        if text.startswith(code) and (len(text) == len(code) or text[len(code)] == " "):
            return SheetError(code, text[len(code) :].strip())
    for code in _EXTRA:
        if text.startswith(code) and (len(text) == len(code) or text[len(code)] == " "):
            return SheetError("#N/A", f"{code} from another cell")
    return None


def from_exception(exc: Exception) -> SheetError:
    """The error value for a core error (its ``code`` and message)."""
    return SheetError(getattr(exc, "code", "#VALUE!"), str(exc))
