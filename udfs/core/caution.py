"""The one caution every output carries: the CLI, the templates, the function reference.

>>> "qualified engineers" in CAUTION and "quotations" in CAUTION
True
"""

from __future__ import annotations

__all__ = ["CAUTION"]

CAUTION = (
    "Caution: results are estimates for design and costing studies, not design releases or "
    "quotations. Cells, packs, electrolysers and plating lines can burn, vent toxic or "
    "flammable gas and give dangerous shocks; follow the applicable standards and local codes, "
    "and have qualified engineers check anything that is built, shipped or operated."
)
