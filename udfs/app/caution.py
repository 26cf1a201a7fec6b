"""The one-line caution every output-writing command prints (and sweep tables carry).

>>> CAUTION.startswith("Caution: results are estimates")
True
"""

from __future__ import annotations

__all__ = ["CAUTION"]

CAUTION = (
    "Caution: results are estimates; follow the applicable standards, local codes and "
    "qualified engineers."
)
