"""Template workbooks built by code (openpyxl): cell sizing, potentials, electrolysis.

``TEMPLATES`` maps a template name to a function that builds a fresh workbook;
``python -m udfs.app.templates --write`` builds, computes and stores them in
``workbook_templates/``.
``fill_demo(wb)`` / ``build_demo()`` put the invented demo scenario (demo data,
``udfs.app.demo.demo_spec``) into the cell-sizing template; ``fill_spec(wb, spec)``
puts any one-scenario :class:`udfs.core.sizing.CellSpec` there.

>>> sorted(TEMPLATES)
['cell_sizing', 'cost', 'electrolysis', 'potentials']
>>> DEMO_TEMPLATE
'cell_sizing'
"""

from __future__ import annotations

from collections.abc import Callable

from openpyxl import Workbook

from .cell_sizing import build_cell_sizing, build_demo, fill_demo, fill_spec
from .cost_model import build_cost_model
from .electrolysis import build_electrolysis
from .potentials import build_potentials

__all__ = [
    "DEMO_TEMPLATE",
    "TEMPLATES",
    "build_cell_sizing",
    "build_demo",
    "build_electrolysis",
    "build_potentials",
    "fill_demo",
    "fill_spec",
]

TEMPLATES: dict[str, Callable[[], Workbook]] = {
    "cell_sizing": build_cell_sizing,
    "potentials": build_potentials,
    "electrolysis": build_electrolysis,
    "cost": build_cost_model,
}

#: The template that ``cellwright demo`` fills (with :func:`fill_demo`).
DEMO_TEMPLATE = "cell_sizing"
