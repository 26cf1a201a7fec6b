"""Lenient look-up of names: exact, then case- and space-insensitive, then a
list of the closest valid names for the error message.

>>> lookup("graphite ", ["Graphite", "LiCoO2"], "material", "name")
'Graphite'
>>> closest("LiFePo4", ["LiFePO4", "LiCoO2"])
['LiFePO4']
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable

from .errors import CellwrightError, NotFoundError

__all__ = ["closest", "lookup", "normalise"]


def normalise(text: str) -> str:
    """Lower case, spaces, underscores and hyphens removed."""
    return "".join(ch for ch in text.lower() if ch not in " _-\t")


def closest(text: object, names: Iterable[str], n: int = 3) -> list[str]:
    names = list(names)
    key = normalise(str(text))
    by_norm = {normalise(x): x for x in names}
    hits = difflib.get_close_matches(key, list(by_norm), n=n, cutoff=0.5)
    return [by_norm[h] for h in hits]


def lookup(text: object, names: Iterable[str], kind: str, argument: str) -> str:
    """Return the canonical name matching ``text`` or raise NotFoundError."""
    names = list(names)
    if not isinstance(text, str) or not text.strip():
        raise CellwrightError(argument, text, f"the name of a {kind} (text)")
    stripped = text.strip()
    if stripped in names:
        return stripped
    key = normalise(stripped)
    matches = [x for x in names if normalise(x) == key]
    if len(matches) == 1:
        return matches[0]
    raise NotFoundError(argument, text, kind, matches or closest(text, names))
