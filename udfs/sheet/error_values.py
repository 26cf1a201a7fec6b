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

**Newer error values.** Excel has error values besides the classic seven
(``#SPILL!``, ``#CALC!``, ``#GETTING_DATA``, ...); :data:`CODES`, the codes a
runtime with real error values is given, are the classic seven only. Our choice:
a newer error keeps its own code text, because the classic add-in shows our
error as text and can show it as it is (``str(e)`` starts with ``e.shown``), and
counts as ``#N/A`` (value not available) wherever a real error value is needed
(``e.code``: the headless engine's cell value, IFERROR):

>>> e = SheetError("#SPILL!")
>>> str(e), e.shown, e.code
('#SPILL!', '#SPILL!', '#N/A')

**Error values as integers.** The classic Windows add-in (xlwings) translates
the classic seven error values of a cell to their text, but passes every other
error value as the integer COM gives it: ``COM_ERROR_BASE`` plus the error's
CVErr number (``#SPILL!`` is 2045, so -2146826243). :func:`com_error` reads
such an integer back as its error value:

>>> com_error(-2146826243).shown, com_error(-2146826246).code
('#SPILL!', '#N/A')
>>> com_error(-2146826243 + 1000)       # not a CVErr number: an ordinary number
>>> str(com_error(COM_ERROR_BASE + 2099))
'#N/A Excel error value number 2099 (not known to cellwright) from another cell'
"""

from __future__ import annotations

from typing import SupportsInt

__all__ = [
    "CODES",
    "COM_ERROR_BASE",
    "CVERR",
    "NEWER_CODES",
    "CellValue",
    "SheetError",
    "com_error",
    "from_exception",
    "incoming_error",
]

#: A plain cell value: number, text, TRUE/FALSE, empty (None); errors are SheetError (a str).
CellValue = float | int | str | bool | None

#: The classic seven error values: every runtime can show them as real error values.
CODES = ("#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A")

#: Newer error values, shown with their own code text and counted as ``NEWER_AS``.
NEWER_CODES = (
    "#GETTING_DATA",
    "#SPILL!",
    "#CONNECT!",
    "#BLOCKED!",
    "#UNKNOWN!",
    "#FIELD!",
    "#CALC!",
    "#BUSY!",
    "#DATA!",
    "#EXTERNAL!",
    "#TIMEOUT!",
)
NEWER_AS = "#N/A"

#: Excel's CVErr numbers (the XlCVError enumeration) and their error values. The classic
#: seven and #SPILL! are in Microsoft's XlCVError reference page (learn.microsoft.com,
#: office/vba/api/excel.xlcverror); the other newer ones are the XlCVError members of
#: Excel's type library. #BUSY! and the others without a CVErr number here still arrive
#: as errors (see :func:`com_error`), shown as #N/A with their number.
CVERR: dict[int, str] = {
    2000: "#NULL!",
    2007: "#DIV/0!",
    2015: "#VALUE!",
    2023: "#REF!",
    2029: "#NAME?",
    2036: "#NUM!",
    2042: "#N/A",
    2043: "#GETTING_DATA",
    2045: "#SPILL!",
    2046: "#CONNECT!",
    2047: "#BLOCKED!",
    2048: "#UNKNOWN!",
    2049: "#FIELD!",
    2050: "#CALC!",
}

#: A cell's error value as COM passes it: the HRESULT 0x800A0000 (as a signed 32-bit
#: integer) plus its CVErr number; e.g. #DIV/0! (2007) is -2146826281 (the same numbers
#: as xlwings' own table of the classic seven, xlwings/_xlwindows.py ``cell_errors``).
COM_ERROR_BASE = -2146828288
#: CVErr numbers read as error values: Excel's error numbers start at 2000 (#NULL!);
#: the range leaves room for error values newer than this table.
_CVERR_FIRST, _CVERR_LAST = 2000, 2099
COM_ERROR_MIN = COM_ERROR_BASE + _CVERR_FIRST
COM_ERROR_MAX = COM_ERROR_BASE + _CVERR_LAST


class SheetError(str):
    """Text of an error value that remembers its spreadsheet error code.

    ``code`` is one of :data:`CODES` (what a runtime with real error values
    shows); ``shown`` is the code the text starts with: ``code`` itself, or a
    newer error value's own code (:data:`NEWER_CODES`). An unknown code gives
    ``#VALUE!``."""

    code: str
    shown: str
    message: str

    def __new__(cls, code: str, message: str = "") -> SheetError:
        if code in CODES:
            shown = code
        elif code in NEWER_CODES:
            shown, code = code, NEWER_AS
        else:
            shown = code = "#VALUE!"
        self = super().__new__(cls, f"{shown} {message}".strip())
        self.code = code
        self.shown = shown
        self.message = message
        return self

    def __reduce__(self) -> tuple[type[SheetError], tuple[str, str]]:
        return (SheetError, (self.shown, self.message))


def incoming_error(text: str) -> SheetError | None:
    """The error value that ``text`` stands for, or ``None`` for ordinary text.

    Recognises the bare codes (``"#N/A"``, as xlwings passes cell errors with
    ``err_to_str``; the headless engine's error tokens are ``str`` too), the
    newer codes (``"#SPILL!"``) and our own error text arriving from another
    cell (``"#NUM! mass_g must be ..."``, ``"#SPILL! ..."``).
    """
    if isinstance(text, SheetError):
        return text
    if not text.startswith("#"):
        return None
    for code in (*CODES, *NEWER_CODES):
        if text.startswith(code) and (len(text) == len(code) or text[len(code)] == " "):
            return SheetError(code, text[len(code) :].strip())
    return None


def com_error(value: SupportsInt) -> SheetError | None:
    """The error value of an integer in COM's CVErr range, else ``None``.

    Give it integers only (``int`` or a numpy integer): coercion never asks
    about a float, since Excel passes numbers as floats. So a Python caller's
    integer -2146826243 is read as #SPILL! as well, the float -2146826243.0 is
    a number, and every other integer is an ordinary number."""
    number = int(value) - COM_ERROR_BASE
    if not _CVERR_FIRST <= number <= _CVERR_LAST:
        return None
    code = CVERR.get(number)
    if code is None:
        return SheetError(
            NEWER_AS,
            f"Excel error value number {number} (not known to cellwright) from another cell",
        )
    return SheetError(code)


def from_exception(exc: Exception) -> SheetError:
    """The error value for a core error (its ``code`` and message)."""
    return SheetError(getattr(exc, "code", "#VALUE!"), str(exc))
