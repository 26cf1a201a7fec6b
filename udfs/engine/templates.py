"""The seam between the engine/CLI and the template builders in ``udfs.templates``.

The builders are looked up, in this order, as ``udfs.templates.TEMPLATES`` or
``udfs.templates.registry.TEMPLATES``: a ``dict[str, Callable[[], Workbook]]``
from template name to a function building a fresh openpyxl workbook.

The ``demo`` command takes its workbook from ``udfs.templates.build_demo()``
(a template already filled with the demo scenario) when that exists;
otherwise it uses the template named ``udfs.templates.DEMO_TEMPLATE``, or the
first of :data:`DEMO_CANDIDATES` that exists, as built. Until the builders
exist, :func:`available` is empty and the commands say so.

>>> sorted(available()) == sorted(available())  # whatever exists now
True
"""

from __future__ import annotations

import difflib
import importlib
import io
import os
from collections.abc import Callable
from typing import Any

from .errors import WorkbookError
from .files import check_output, write_bytes_atomic

__all__ = [
    "DEMO_CANDIDATES",
    "available",
    "demo_template",
    "demo_workbook",
    "template_bytes",
    "write_template",
]

DEMO_CANDIDATES = ("cell-sizing", "cell_sizing", "sizing")

Builder = Callable[[], Any]


def _registry_module() -> Any:
    for name in ("udfs.templates", "udfs.templates.registry"):
        try:
            module = importlib.import_module(name)
        except ImportError:
            continue
        if isinstance(getattr(module, "TEMPLATES", None), dict):
            return module
    return None


def available() -> dict[str, Builder]:
    """Template name -> builder, as far as the template builders exist yet."""
    module = _registry_module()
    return dict(module.TEMPLATES) if module is not None else {}


def demo_template() -> str | None:
    """Name of the template the demo fills, if it exists yet."""
    module = _registry_module()
    if module is None:
        return None
    chosen = getattr(module, "DEMO_TEMPLATE", None)
    names = module.TEMPLATES
    if isinstance(chosen, str) and chosen in names:
        return chosen
    return next((n for n in DEMO_CANDIDATES if n in names), None)


def demo_workbook() -> tuple[str, bytes] | None:
    """(description, .xlsx bytes) of the demo workbook, or None if none exists yet."""
    module = _registry_module()
    build = getattr(module, "build_demo", None) if module is not None else None
    if callable(build):
        return "the cell-sizing template filled with the demo scenario", _save(build())
    name = demo_template()
    if name is None:
        return None
    return f"template {name!r}", template_bytes(name)


def _save(workbook: Any) -> bytes:
    buf = io.BytesIO()
    workbook.save(buf)
    return buf.getvalue()


def template_bytes(name: str) -> bytes:
    """The .xlsx bytes of a freshly built template ``name``."""
    builders = available()
    if name not in builders:
        if not builders:
            raise WorkbookError("no templates are available yet")
        near = difflib.get_close_matches(name, list(builders), n=3)
        hint = f"; did you mean {', '.join(near)}?" if near else ""
        raise WorkbookError(
            f"unknown template {name!r}{hint} (available: {', '.join(sorted(builders))})"
        )
    return _save(builders[name]())


def write_template(name: str, path: str | os.PathLike[str], force: bool = False) -> None:
    """Write template ``name`` to ``path`` (atomically; refuses to overwrite unless force)."""
    if not str(path).lower().endswith(".xlsx"):
        raise WorkbookError(f"{os.fspath(path)}: a template is written as .xlsx")
    check_output(path, force)
    data = template_bytes(name)
    write_bytes_atomic(path, data, force)
