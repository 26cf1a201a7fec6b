"""Half-reactions in the trade's notation, their balance, and the reaction
quotient under the usual activity conventions.

Notation: ``oxidised side = reduced side``, terms joined by ``+``, each species
with its phase ``(s)``, ``(l)``, ``(g)`` or ``(aq)``, electrons as ``ne-`` on the
left. Activity conventions: pure solids and liquids 1; gases their partial
pressure in bar; dissolved species their concentration in mol/L; ``pH`` may give
H+ (a = 10**-pH) and, through the water ion product, OH- (a = 10**(pH - pKw));
pKw is the caller's (25 degC unless given: :func:`udfs.core.nernst.potential`
passes pKw at its temperature).

>>> r = parse_half_reaction("Cu2+(aq) + 2e- = Cu(s)")
>>> r.electrons
2.0
>>> float(log10_quotient(r, {"Cu2+": 0.1}))
1.0
>>> parse_activities("Cu2+=0.1; pH=3")
{'Cu2+': 0.1, 'pH': 3.0}
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .constants import PKW_25C
from .errors import CellwrightError, DomainError, NotFoundError, ParseError
from .formula import Formula, parse
from .names import closest

__all__ = [
    "HalfReaction",
    "Term",
    "log10_quotient",
    "parse_activities",
    "parse_half_reaction",
]

_TERM = re.compile(r"^(?P<coef>\d+(?:\.\d+)?)?(?P<species>.+)$")
_MAX_TEXT = 400


@dataclass(frozen=True)
class Term:
    """One species of a half-reaction with its stoichiometric coefficient."""

    coefficient: float
    species: str  # as written without phase, e.g. 'Cu2+'
    formula: Formula

    @property
    def phase(self) -> str:
        return self.formula.phase or "aq"

    @property
    def label(self) -> str:
        return f"{self.species}({self.phase})"


@dataclass(frozen=True)
class HalfReaction:
    """``sum(oxidised) + n e- = sum(reduced)``, checked for balance."""

    text: str
    oxidised: tuple[Term, ...]
    reduced: tuple[Term, ...]
    electrons: float

    def species(self) -> list[str]:
        return [t.species for t in (*self.oxidised, *self.reduced)]

    def as_text(self) -> str:
        def side(terms: tuple[Term, ...], electrons: float = 0.0) -> str:
            parts = [f"{_fmt(t.coefficient)}{t.label}" for t in terms]
            if electrons:
                parts.append(f"{_fmt(electrons)}e-")
            return " + ".join(parts)

        return f"{side(self.oxidised, self.electrons)} = {side(self.reduced)}"


def _fmt(x: float) -> str:
    if x == 1:
        return ""
    return str(int(x)) if float(x).is_integer() else f"{x:g}"


def _read_side(text: str, full: str, offset: int, argument: str) -> tuple[list[Term], float]:
    terms: list[Term] = []
    electrons = 0.0
    pos = offset
    for raw in re.split(r"\s\+\s", text):
        piece = raw.strip()
        at = full.find(piece, pos) if piece else pos
        pos = max(pos, at)
        if not piece:
            raise ParseError(argument, full, pos, "empty term")
        m = _TERM.match(piece)
        if m is None:  # pragma: no cover - the regex matches any non-empty text
            raise ParseError(argument, full, pos, "unreadable term")
        coef = float(m.group("coef")) if m.group("coef") else 1.0
        species = m.group("species")
        if species in ("e-", "e"):
            electrons += coef
            continue
        try:
            formula = parse(species, argument)
        except ParseError as exc:
            raise ParseError(
                argument, full, pos + exc.position, exc.detail.split(" at position")[0]
            ) from None
        if formula.phase is None:
            raise ParseError(
                argument,
                full,
                pos + len(piece) - 1,
                f"species {species!r} needs a phase: (s), (l), (g) or (aq)",
            )
        name = species[: -len(f"({formula.phase})")]
        terms.append(Term(coef, name, formula))
    return terms, electrons


def _balance(terms: list[tuple[float, Term]]) -> tuple[dict[str, float], float]:
    atoms: dict[str, float] = {}
    charge = 0.0
    for sign, t in terms:
        for el, n in t.formula.atoms.items():
            atoms[el] = atoms.get(el, 0.0) + sign * t.coefficient * n
        charge += sign * t.coefficient * t.formula.charge
    return atoms, charge


@lru_cache(maxsize=1024)
def parse_half_reaction(text: str, argument: str = "half_reaction") -> HalfReaction:
    """Parse and check a half-reaction; raise ParseError/CellwrightError on faults."""
    if not isinstance(text, str) or not text.strip():
        raise CellwrightError(argument, text, "a half-reaction such as 'Cu2+(aq) + 2e- = Cu(s)'")
    if len(text) > _MAX_TEXT:
        raise ParseError(
            argument, text[:_MAX_TEXT], _MAX_TEXT - 1, f"longer than {_MAX_TEXT} characters"
        )
    normal = text.replace("->", "=").replace("⇌", "=").replace("→", "=")
    if normal.count("=") != 1:
        raise ParseError(
            argument,
            text,
            max(normal.find("="), 0),
            "expected exactly one '=' between the two sides",
        )
    left, right = normal.split("=")
    ox, e_left = _read_side(left, normal, 0, argument)
    red, e_right = _read_side(right, normal, len(left) + 1, argument)
    if e_right:
        raise ParseError(
            argument,
            text,
            len(left) + 1,
            "electrons belong on the oxidised (left) side of a reduction",
        )
    if e_left <= 0:
        raise ParseError(argument, text, 0, "no electrons on the left side")
    if not ox or not red:
        raise ParseError(argument, text, 0, "each side needs at least one species")
    atoms, charge = _balance([(1.0, t) for t in ox] + [(-1.0, t) for t in red])
    charge -= e_left
    off = {el: n for el, n in atoms.items() if abs(n) > 1e-9}
    if off:
        detail = ", ".join(f"{el} {n:+g}" for el, n in off.items())
        raise CellwrightError(
            argument, text, detail=f"atoms do not balance (left minus right: {detail})"
        )
    if abs(charge) > 1e-9:
        raise CellwrightError(
            argument, text, detail=f"charge does not balance (left minus right: {charge:+g})"
        )
    return HalfReaction(text, tuple(ox), tuple(red), e_left)


def parse_activities(text: str, argument: str = "activities") -> dict[str, float]:
    """Read ``'Cu2+=0.1; pH=3'`` (separators ``;`` or ``,``) into a dict.

    Species keep their spelling; ``pH`` is recognised in any case.
    """
    if text is None or (isinstance(text, str) and not text.strip()):
        return {}
    if not isinstance(text, str):
        raise CellwrightError(argument, text, "text such as 'Cu2+=0.1; pH=3'")
    if len(text) > _MAX_TEXT:
        raise ParseError(
            argument, text[:_MAX_TEXT], _MAX_TEXT - 1, f"longer than {_MAX_TEXT} characters"
        )
    out: dict[str, float] = {}
    pos = 0
    for item in re.split(r"[;,]", text):
        here = pos
        pos += len(item) + 1
        if not item.strip():
            continue
        if item.count("=") != 1:
            raise ParseError(argument, text, here, "each entry must look like 'species=value'")
        key, value = (s.strip() for s in item.split("="))
        if not key:
            raise ParseError(argument, text, here, "missing species name before '='")
        try:
            number = float(value)
        except ValueError:
            raise ParseError(
                argument, text, here + item.find("=") + 1, f"{value!r} is not a number"
            ) from None
        if key.lower() == "ph":
            key = "pH"
        if key in out:
            raise ParseError(argument, text, here, f"{key!r} given twice")
        out[key] = number
    return out


def _strip_phase(name: str) -> str:
    for ph in ("(aq)", "(s)", "(l)", "(g)"):
        if name.endswith(ph):
            return name[: -len(ph)]
    return name


def log10_quotient(
    reaction: HalfReaction,
    activities: Mapping[str, ArrayLike] | None = None,
    argument: str = "activities",
    pkw: ArrayLike = PKW_25C,
) -> NDArray[np.float64]:
    """log10 of Q = prod(a_reduced**nu) / prod(a_oxidised**nu), broadcasting.

    Species not given are at their standard state (1 mol/L, 1 bar). Pure solids
    and liquids have activity 1 and may not be given a value. ``pkw`` (a number
    or an array that broadcasts with the activities) turns a given pH into
    log10 a(OH-) = pH - pKw.
    """
    given = dict(activities or {})
    ph = given.pop("pH", None)
    by_name: dict[str, ArrayLike] = {}
    names = reaction.species()
    for key, value in given.items():
        name = _strip_phase(key.strip())
        if name not in names:
            raise NotFoundError(
                argument, key, f"species of {reaction.as_text()!r}", closest(name, names)
            )
        by_name[name] = value
    total: NDArray[np.float64] = np.zeros(())
    used_ph = False
    for sign, terms in ((1.0, reaction.reduced), (-1.0, reaction.oxidised)):
        for t in terms:
            if t.phase in ("s", "l"):
                if t.species in by_name:
                    raise CellwrightError(
                        argument,
                        t.species,
                        detail=f"{t.label} is a pure phase with activity 1; do not give it a value",
                    )
                continue
            if t.species in by_name:
                a = np.asarray(by_name[t.species], dtype=float)
                with np.errstate(invalid="ignore"):
                    bad = ~(np.isfinite(a) & (a > 0))
                if bad.any():
                    raise DomainError(
                        f"{argument} {t.species}",
                        float(a[bad].flat[0]),
                        "> 0 (mol/L, or bar for a gas)",
                    )
                log_a = np.log10(a)
            elif ph is not None and t.species in ("H+", "OH-"):
                p = np.asarray(ph, dtype=float)
                if not np.isfinite(p).all():
                    raise DomainError(
                        f"{argument} pH", float(p[~np.isfinite(p)].flat[0]), "a finite number"
                    )
                log_a = -p if t.species == "H+" else p - np.asarray(pkw, dtype=float)
                used_ph = True
            else:
                continue
            total = total + sign * t.coefficient * log_a
    if ph is not None and not used_ph:
        if "H+" in by_name or "OH-" in by_name:
            raise CellwrightError(
                argument, "pH", detail="give either pH or the H+/OH- activity, not both"
            )
        raise CellwrightError(
            argument, "pH", detail=f"pH given but {reaction.as_text()!r} has no H+ or OH-"
        )
    return np.asarray(total, dtype=float)
