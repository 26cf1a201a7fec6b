"""Errors of the headless engine: each carries a one-line reason for the user.

The command line prints ``str(error)`` and exits non-zero; no traceback.

>>> str(HostileFileError("book.xlsx", "42 parts (limit 10)"))
'book.xlsx: refused: 42 parts (limit 10)'
"""

from __future__ import annotations

__all__ = [
    "EngineError",
    "FileSafetyError",
    "HostileFileError",
    "ReferenceSyntaxError",
    "WorkbookError",
]


class EngineError(Exception):
    """Base class: ``str(err)`` is a single line that says what is wrong."""

    def __init__(self, message: str):
        super().__init__(" ".join(str(message).split()))


class FileSafetyError(EngineError):
    """A file cannot be read or written safely (missing, read-only, exists, disk full)."""


class HostileFileError(EngineError):
    """A workbook past a stated limit, or with content that is never processed."""

    def __init__(self, name: str, reason: str):
        self.name = name
        self.reason = reason
        super().__init__(f"{name}: refused: {reason}")


class WorkbookError(EngineError):
    """Not a usable workbook, or an unknown sheet, cell or defined name."""


class ReferenceSyntaxError(EngineError):
    """A reference, value or range written on the command line cannot be read."""
