"""Chemical formulas: parsing (fractional stoichiometry, groups, hydrates, ionic
charge, phase), molar mass and element mass fractions.

Atomic weights are the IUPAC 2021 standard (abridged/conventional) values as
shipped by the ``periodictable`` package.

>>> round(molar_mass("LiFePO4"), 3)
157.755
>>> parse("SO42-(aq)").charge, parse("SO42-(aq)").phase
(-2, 'aq')
>>> round(mass_fraction("LiNi0.8Mn0.1Co0.1O2", "Ni"), 4)
0.4827
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from types import MappingProxyType

import periodictable

from .errors import CellwrightError, NotFoundError, ParseError
from .names import closest

__all__ = ["Formula", "atomic_weight", "element_symbols", "mass_fraction", "molar_mass", "parse"]

_SYMBOLS: dict[str, float] = {
    el.symbol: float(el.mass) for el in periodictable.elements if el.number > 0 and el.mass
}
_PHASES = ("s", "l", "g", "aq")
_MAX_LEN = 200
_MAX_DEPTH = 10


def element_symbols() -> list[str]:
    return list(_SYMBOLS)


def atomic_weight(symbol: str) -> float:
    """Standard atomic weight in g/mol (IUPAC 2021 via periodictable)."""
    sym = symbol.strip() if isinstance(symbol, str) else symbol
    if isinstance(sym, str) and sym in _SYMBOLS:
        return _SYMBOLS[sym]
    if isinstance(sym, str) and sym.capitalize() in _SYMBOLS:
        return _SYMBOLS[sym.capitalize()]
    raise NotFoundError("element", symbol, "element", closest(symbol, _SYMBOLS))


@dataclass(frozen=True)
class Formula:
    """A parsed formula: element counts (may be fractional), charge, phase."""

    text: str
    atoms: Mapping[str, float]
    charge: int = 0
    phase: str | None = None

    @property
    def mass(self) -> float:
        """Molar mass in g/mol."""
        return sum(_SYMBOLS[el] * n for el, n in self.atoms.items())

    @property
    def neutral(self) -> str:
        """The text without charge and phase, e.g. ``'Cu'`` for ``'Cu2+(aq)'``."""
        return self.text


class _Reader:
    def __init__(self, text: str, argument: str):
        self.text = text
        self.pos = 0
        self.argument = argument

    def fail(self, reason: str, pos: int | None = None) -> ParseError:
        return ParseError(self.argument, self.text, self.pos if pos is None else pos, reason)

    def peek(self) -> str:
        return self.text[self.pos] if self.pos < len(self.text) else ""

    def number(self) -> float | None:
        start = self.pos
        while self.peek().isdigit() or (
            self.peek() == "."
            and self.pos + 1 < len(self.text)
            and self.text[self.pos + 1].isdigit()
        ):
            self.pos += 1
        if self.pos == start:
            return None
        try:
            return float(self.text[start : self.pos])
        except ValueError:
            raise self.fail("malformed number", start) from None

    def group(self, closer: str, depth: int) -> dict[str, float]:
        if depth > _MAX_DEPTH:
            raise self.fail("groups nested too deeply")
        atoms: dict[str, float] = {}
        while self.pos < len(self.text):
            ch = self.peek()
            if ch == closer:
                return atoms
            if ch in "([":
                opener = self.pos
                self.pos += 1
                inner = self.group(")" if ch == "(" else "]", depth + 1)
                if self.peek() != (")" if ch == "(" else "]"):
                    raise self.fail("unclosed bracket", opener)
                if not inner:  # '()' would otherwise count as a formula of mass 0
                    raise self.fail("empty brackets", opener)
                self.pos += 1
                count = self.number()
                for el, n in inner.items():
                    atoms[el] = atoms.get(el, 0.0) + n * (1.0 if count is None else count)
            elif ch.isupper():
                start = self.pos
                self.pos += 1
                while self.peek().islower():
                    self.pos += 1
                symbol = self.text[start : self.pos]
                if symbol not in _SYMBOLS:
                    # try the longest known prefix (e.g. 'Cox' -> error at 'x')
                    if symbol[:2] in _SYMBOLS and len(symbol) > 2:
                        raise self.fail(f"unknown element {symbol!r}", start)
                    hint = closest(symbol, _SYMBOLS, 2)
                    extra = f" (did you mean {' or '.join(hint)}?)" if hint else ""
                    raise self.fail(f"unknown element {symbol!r}{extra}", start)
                count = self.number()
                atoms[symbol] = atoms.get(symbol, 0.0) + (1.0 if count is None else count)
            elif ch in ")]":
                raise self.fail(f"unexpected {ch!r}")
            else:
                raise self.fail(f"unexpected character {ch!r}")
        if closer:
            raise self.fail("missing closing bracket")
        return atoms


def _split_phase(text: str) -> tuple[str, str | None]:
    for ph in _PHASES:
        suffix = f"({ph})"
        if text.endswith(suffix) and len(text) > len(suffix):
            return text[: -len(suffix)], ph
    return text, None


def _split_charge(body: str, argument: str, full: str) -> tuple[str, int]:
    """Trailing charge: 'Cu2+', 'OH-', 'SO4^2-', 'Hg2^2+', 'e-' ...

    The trade's notation: Cu2+ is copper(II), SO42- sulfate, MnO4- permanganate,
    NH4+ ammonium; '^' separates subscript and charge explicitly (Hg2^2+, I3^-).
    """
    if not body or body[-1] not in "+-":
        return body, 0
    sign = 1 if body[-1] == "+" else -1
    core = body[:-1]
    # repeated signs: Fe+++ style
    n_signs = 1
    while core.endswith(("+", "-")):
        if core[-1] != body[-1]:
            raise ParseError(argument, full, len(core) - 1, "mixed charge signs")
        core = core[:-1]
        n_signs += 1
    if n_signs > 1:
        return core.rstrip("^"), sign * n_signs
    if "^" in core:
        head, _, mag = core.rpartition("^")
        if not mag.isdigit() and mag:
            raise ParseError(
                argument, full, len(head) + 1, "charge after '^' must be a whole number"
            )
        return head, sign * (int(mag) if mag else 1)
    # Digits just before the sign (ionic charges are 1..9):
    #  two or more digits: the last is the charge (SO42-, Hg22+, Fe(CN)63-);
    #  one digit after a single bare element or a ']': the charge (Cu2+, [Fe(CN)6]3-);
    #  one digit after a polyatomic body: a subscript, charge 1 (MnO4-, NO3-, NH4+).
    if len(core) >= 2 and core[-1].isdigit() and core[-2] != ".":
        head = core[:-1]
        if head[-1].isdigit() or head[-1] == "]" or re.fullmatch(r"[A-Z][a-z]?", head):
            return head, sign * int(core[-1])
    return core, sign


@lru_cache(maxsize=4096)
def _parse_cached(text: str, argument: str) -> Formula:
    stripped = text.strip().replace(" ", "")
    if not stripped:
        raise ParseError(argument, text, 0, "empty formula")
    if len(stripped) > _MAX_LEN:
        raise ParseError(
            argument, text[:_MAX_LEN], _MAX_LEN - 1, f"formula longer than {_MAX_LEN} characters"
        )
    body, phase = _split_phase(stripped)
    body, charge = _split_charge(body, argument, stripped)
    atoms: dict[str, float] = {}
    for k, part in enumerate(body.replace("·", "*").split("*")):
        reader = _Reader(part, argument)
        lead = reader.number()
        mult = 1.0 if lead is None else lead
        if not part or (lead is not None and reader.pos == len(part)):
            raise ParseError(
                argument, stripped, 0, "no elements in formula" if k == 0 else "empty hydrate part"
            )
        for el, n in reader.group("", 0).items():
            atoms[el] = atoms.get(el, 0.0) + mult * n
    if body == "e":  # the electron
        raise ParseError(argument, stripped, 0, "the electron is not a formula")
    if any(n <= 0 for n in atoms.values()):
        raise ParseError(argument, stripped, 0, "element counts must be > 0")
    return Formula(body, MappingProxyType(atoms), charge, phase)


def parse(text: str, argument: str = "formula") -> Formula:
    """Parse a formula such as ``'LiNi0.8Mn0.1Co0.1O2'``, ``'CuSO4*5H2O'``,
    ``'[Fe(CN)6]3-'`` or ``'H2O(l)'``. Errors point at the offending position."""
    if not isinstance(text, str):
        raise CellwrightError(argument, text, "a chemical formula (text)")
    return _parse_cached(text, argument)


def molar_mass(text: str, argument: str = "formula") -> float:
    """Molar mass in g/mol."""
    return parse(text, argument).mass


def mass_fraction(text: str, element: str, argument: str = "formula") -> float:
    """Mass fraction (0..1) of ``element`` in the formula; 0 if absent."""
    f = parse(text, argument)
    sym = element.strip() if isinstance(element, str) else element
    atomic_weight(sym)  # validates the element
    sym = sym if sym in _SYMBOLS else sym.capitalize()
    return _SYMBOLS[sym] * f.atoms.get(sym, 0.0) / f.mass
