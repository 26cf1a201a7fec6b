"""Template workbooks as files: build one (``udfs.templates``) and write it safely.

>>> sorted(available())
['cell_sizing', 'electrolysis', 'potentials']
"""

from __future__ import annotations

import difflib
import io
import os
from collections.abc import Callable

from openpyxl import Workbook

from udfs.templates import TEMPLATES, build_demo
from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.files import check_output, write_bytes_atomic

__all__ = ["available", "demo_workbook", "template_bytes", "write_template"]


def available() -> dict[str, Callable[[], Workbook]]:
    """Template name -> builder."""
    return dict(TEMPLATES)


def _save(workbook: Workbook) -> bytes:
    buf = io.BytesIO()
    workbook.save(buf)
    return buf.getvalue()


def demo_workbook() -> tuple[str, bytes]:
    """(description, .xlsx bytes) of the cell-sizing template filled with the demo scenario."""
    return "the cell-sizing template filled with the demo scenario", _save(build_demo())


def template_bytes(name: str) -> bytes:
    """The .xlsx bytes of a freshly built template ``name``."""
    if name not in TEMPLATES:
        near = difflib.get_close_matches(name, list(TEMPLATES), n=3)
        hint = f"; did you mean {', '.join(near)}?" if near else ""
        raise WorkbookError(
            f"unknown template {name!r}{hint} (available: {', '.join(sorted(TEMPLATES))})"
        )
    return _save(TEMPLATES[name]())


def write_template(name: str, path: str | os.PathLike[str], force: bool = False) -> None:
    """Write template ``name`` to ``path`` (atomically; refuses to overwrite unless force)."""
    if not str(path).lower().endswith(".xlsx"):
        raise WorkbookError(f"{os.fspath(path)}: a template is written as .xlsx")
    check_output(path, force)
    write_bytes_atomic(path, template_bytes(name), force)
