"""One family of exceptions for every input problem the core can meet.

Every error is a :class:`ValueError` and carries the spreadsheet error code a
cell would show, so the sheet layer can turn it into an error value without
guessing.

>>> try:
...     raise DomainError("concentration", -0.1, "> 0")
... except ValueError as exc:
...     print(exc)
concentration must be > 0 (got -0.1)
"""

from __future__ import annotations

from typing import Any

__all__ = [
    "CellwrightError",
    "DataError",
    "DomainError",
    "InputError",
    "NotFoundError",
    "ParseError",
    "ShapeError",
    "UnitError",
    "show_value",
]


def show_value(value: Any, limit: int = 60) -> str:
    """A value as a message shows it: floats to 6 digits, long texts cut to ``limit``.

    >>> show_value(0.1 + 0.2), show_value("x" * 70, 10)
    ('0.3', "'xxxxxxx...'")
    """
    if isinstance(value, float):
        return f"{value:.6g}"
    if isinstance(value, str):
        return repr(value) if len(value) <= limit else repr(value[: limit - 3] + "...")
    text = repr(value)
    return text if len(text) <= limit else text[: limit - 3] + "..."


class CellwrightError(ValueError):
    """Base class: names the argument, the value and what is allowed."""

    code = "#VALUE!"

    def __init__(self, argument: str, value: Any = None, allowed: str = "", detail: str = ""):
        self.argument = argument
        self.value = value
        self.allowed = allowed
        self.detail = detail
        super().__init__(self.describe())

    def describe(self) -> str:
        if self.detail:
            return f"{self.argument}: {self.detail}"
        return f"{self.argument} must be {self.allowed} (got {show_value(self.value)})"


class InputError(CellwrightError):
    """Wrong kind of input: text where a number belongs, an empty cell, ..."""

    code = "#VALUE!"


class DomainError(CellwrightError):
    """A number outside the allowed range (negative mass, T below 0 K, ...)."""

    code = "#NUM!"


class NotFoundError(CellwrightError):
    """An unknown name: couple, material, species, element or property."""

    code = "#N/A"

    def __init__(
        self, argument: str, value: Any, kind: str, suggestions: list[str] | tuple[str, ...] = ()
    ):
        self.kind = kind
        self.suggestions = list(suggestions)
        hint = (
            f"; did you mean {', '.join(repr(s) for s in self.suggestions)}?" if suggestions else ""
        )
        super().__init__(argument, value, detail=f"unknown {kind} {show_value(value)}{hint}")


class ParseError(CellwrightError):
    """Text that cannot be read; points at the offending position."""

    code = "#VALUE!"

    def __init__(self, argument: str, text: str, position: int, reason: str):
        self.text = text
        self.position = position
        shown = text if len(text) <= 60 else text[:57] + "..."
        super().__init__(argument, text, detail=f"{reason} at position {position + 1} of {shown!r}")


class UnitError(CellwrightError):
    """An unknown unit or a unit of the wrong dimension."""

    code = "#VALUE!"


class ShapeError(CellwrightError):
    """Ranges whose shapes cannot be broadcast together."""

    code = "#VALUE!"


class DataError(CellwrightError):
    """A reference-data row that fails validation on load."""

    code = "#N/A"
