"""Metal-indexed material prices: contained metal times index price times a
payable fraction, plus a conversion fee (the usual form of cathode and
precursor contracts).

For a material whose formula holds the mass fraction ``w_e`` of metal ``e``,
priced against index ``i`` quoted per tonne of its product (a metal, or a
lithium salt) that holds the mass fraction ``f_i`` of the same metal::

    price [USD/kg] = sum_e  w_e / f_i * payable_e * index_i [USD/t] / 1000  +  fee [USD/kg]

``c_e = w_e / f_i * payable_e`` (t of index product paid per t of material) is
the coefficient; the price is linear in every index, so the sensitivity of a
price per kg to index ``i`` is ``c_e / 1000`` (USD/kg per USD/t), exactly.
Lithium is indexed as carbonate (Li2CO3) or as hydroxide monohydrate
(LiOH·H2O); ``f`` comes from :mod:`udfs.core.formula` molar masses (IUPAC 2021
weights), so a carbonate index is a price per tonne of LCE.

>>> c = index_coefficients("LiFePO4", {"lithium carbonate": 1.0, "iron": 0.0})
>>> round(float(c["lithium carbonate"]), 4)  # M(Li2CO3) / 2 / M(LiFePO4)
0.2342
>>> p = indexed_price("LiFePO4", {"lithium carbonate": 10000.0},
...                   {"lithium carbonate": 1.0, "iron": 0.0}, conversion_fee_USD_kg=2.5)
>>> round(float(p.price_USD_kg), 4)
4.8419
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import catalogue
from .errors import InputError, NotFoundError
from .formula import mass_fraction, parse
from .names import closest, normalise
from .procurement import NON_METALS, composition
from .shapes import broadcast_shape
from .validate import NONNEGATIVE, Domain, check

__all__ = [
    "INDEXES",
    "PAYABLE",
    "Index",
    "IndexedPrice",
    "index",
    "index_coefficient",
    "index_coefficients",
    "index_for_price",
    "index_names",
    "indexed_price",
    "metals_of",
]

Array = NDArray[np.float64]

#: A payable fraction: share of the index paid for the contained metal (contracts
#: run from well below 1 for intermediates to slightly above 1 with premiums).
PAYABLE = Domain(lower=0, upper=2, note="(a fraction of the index; 1 = 100 %)")

@dataclass(frozen=True)
class Index:
    """A price index: the metal it pays for and the product it is quoted on."""

    name: str
    element: str
    product: str
    aliases: tuple[str, ...] = ()
    note: str = ""

    @property
    def element_fraction(self) -> float:
        """kg of the metal per kg of the quoted product (1 for a metal)."""
        return mass_fraction(self.product, self.element)


#: The indexes the catalogue's materials need (cathodes, anodes, foils, tabs).
#: Quoted per tonne of ``product`` (common practice of the metal markets).
INDEXES: tuple[Index, ...] = (
    Index("lithium carbonate", "Li", "Li2CO3", ("Li2CO3", "LCE", "carbonate"),
          "per t of Li2CO3, i.e. per t of lithium carbonate equivalent"),
    Index("lithium hydroxide", "Li", "LiOH·H2O",
          ("LiOH", "LiOH·H2O", "hydroxide", "lithium hydroxide monohydrate"),
          "per t of LiOH·H2O (the monohydrate, as the battery grade is sold)"),
    Index("nickel", "Ni", "Ni", ("Ni",), "per t of nickel metal"),
    Index("cobalt", "Co", "Co", ("Co",), "per t of cobalt metal"),
    Index("manganese", "Mn", "Mn", ("Mn",), "per t of manganese metal"),
    Index("aluminium", "Al", "Al", ("Al", "aluminum"), "per t of aluminium metal"),
    Index("copper", "Cu", "Cu", ("Cu",), "per t of copper metal"),
    Index("iron", "Fe", "Fe", ("Fe",), "per t of iron"),
    Index("titanium", "Ti", "Ti", ("Ti",), "per t of titanium metal"),
    Index("zinc", "Zn", "Zn", ("Zn",), "per t of zinc metal"),
    Index("lead", "Pb", "Pb", ("Pb",), "per t of lead metal"),
    Index("cadmium", "Cd", "Cd", ("Cd",), "per t of cadmium metal"),
    Index("silicon", "Si", "Si", ("Si",), "per t of silicon metal"),
)
_BY_NAME = {i.name: i for i in INDEXES}


def index_names() -> list[str]:
    """The index names, e.g. for a drop-down list."""
    return list(_BY_NAME)


@lru_cache(maxsize=256)
def _lookup(key: str) -> str | None:
    for ix in INDEXES:
        if key in {normalise(n) for n in (ix.name, *ix.aliases)}:
            return ix.name
    return None


def index(name: object, argument: str = "index") -> Index:
    """An index by name or alias (case, spaces, hyphens forgiven).

    >>> index("LiOH").product, index("Nickel").element
    ('LiOH·H2O', 'Ni')
    """
    if not isinstance(name, str) or not name.strip():
        raise InputError(argument, name, "the name of a price index (text)")
    hit = _lookup(normalise(name))
    if hit is None:
        names = [n for ix in INDEXES for n in (ix.name, *ix.aliases)]
        raise NotFoundError(argument, name, "price index", closest(name, names))
    return _BY_NAME[hit]


@lru_cache(maxsize=256)
def _metals(material: str) -> tuple[str, tuple[tuple[str, float], ...]]:
    """``(display name, ((metal, mass fraction), ...))`` of a catalogue material
    (its composition as :func:`udfs.core.procurement.composition` knows it) or of
    a formula text."""
    try:
        m = catalogue.material(material, "material")
    except NotFoundError:
        f = parse(material, "material")
        comp = {el: mass_fraction(f.text, el) for el in f.atoms}
        name = f.text
    else:
        known = composition(m.name)
        if known is None:
            raise InputError(
                "material", material,
                detail=f"the composition of {m.name!r} is not known, so it cannot be "
                "priced against metal indexes",
            )
        comp, name = dict(known), m.name
    return name, tuple((el, w) for el, w in comp.items() if el not in NON_METALS)


def metals_of(material: str) -> dict[str, float]:
    """Mass fractions of the metals in a catalogue material (or a formula).

    >>> {k: round(v, 3) for k, v in metals_of("LCO").items()}
    {'Li': 0.071, 'Co': 0.602}
    >>> metals_of("copper foil")
    {'Cu': 1.0}
    """
    return dict(_metals(material)[1])


def _terms(material: str, payables: Mapping[str, ArrayLike]
           ) -> tuple[str, list[tuple[Index, float, Array]]]:
    """Validated ``(index, metal fraction, payable)`` per metal of ``material``."""
    if not isinstance(payables, Mapping):
        raise InputError("payables", payables, "a mapping index name -> payable fraction")
    name, pairs = _metals(material)
    metals = dict(pairs)
    terms: list[tuple[Index, float, Array]] = []
    seen: dict[str, str] = {}
    for key, raw in payables.items():
        ix = index(key, "payables")
        where = f"payables[{key!r}]"
        if ix.element not in metals:
            raise InputError(
                where, key, detail=f"{name} contains no {ix.element}; remove the {ix.name} payable"
            )
        if ix.element in seen:
            raise InputError(
                where, key,
                detail=f"{ix.element} of {name} is paid against both {seen[ix.element]} "
                f"and {ix.name}; give one",
            )
        seen[ix.element] = ix.name
        terms.append((ix, metals[ix.element], check(where, raw, PAYABLE)))
    unpaid = [el for el in metals if el not in seen]
    if unpaid:
        hints = [i.name for i in INDEXES if i.element == unpaid[0]]
        raise InputError(
            "payables", None,
            detail=f"{name} contains {', '.join(unpaid)} but no payable names "
            f"{'an index' if not hints else ' or '.join(repr(h) for h in hints)} for "
            f"{unpaid[0]}; give one (0 if the contract does not pay for it)",
        )
    return name, terms


def index_coefficient(material: str, index_name: str, payable: ArrayLike = 1.0) -> Array | float:
    """``c`` of one index: t of the index's product paid per t of ``material``,
    ``w / f x payable`` (0 when the material holds none of the index's metal).
    ``payable`` may be an array.

    >>> round(float(index_coefficient("NMC811", "nickel")), 4)   # 0.8 M(Ni) / M(NMC811)
    0.4827
    >>> index_coefficient("LFP", "cobalt")
    0.0
    """
    ix = index(index_name, "index_name")
    w = dict(_metals(material)[1]).get(ix.element, 0.0)
    out = w / ix.element_fraction * check("payable", payable, PAYABLE)
    return float(out) if out.ndim == 0 else out


def index_coefficients(material: str, payables: Mapping[str, ArrayLike]) -> dict[str, Array]:
    """``c`` per index: t of index product paid per t of material (payable
    included). Every metal of the material needs exactly one payable.

    >>> c = index_coefficients("NMC811", {"lithium hydroxide": 1, "nickel": 1,
    ...                                    "manganese": 0, "cobalt": 1})
    >>> round(float(c["nickel"]), 4), float(c["manganese"])
    (0.4827, 0.0)
    """
    _, terms = _terms(material, payables)
    return {ix.name: w / ix.element_fraction * pay for ix, w, pay in terms}


@dataclass(frozen=True)
class IndexedPrice:
    """An indexed price (USD/kg of material), what each index contributes and
    its sensitivity to each index (USD/kg per USD/t, constant: the price is
    linear in every index)."""

    material: str
    price_USD_kg: Array
    metal_value_USD_kg: Mapping[str, Array]
    conversion_fee_USD_kg: Array
    sensitivity_USD_kg_per_USD_t: Mapping[str, Array]


def _index_values(index_prices_USD_t: Mapping[str, ArrayLike], needed: list[str]
                  ) -> dict[str, Array]:
    if not isinstance(index_prices_USD_t, Mapping):
        raise InputError("index_prices_USD_t", index_prices_USD_t,
                         "a mapping index name -> price in USD/t")
    given: dict[str, Array] = {}
    for key, raw in index_prices_USD_t.items():
        ix = index(key, "index_prices_USD_t")
        given[ix.name] = check(f"index_prices_USD_t[{key!r}]", raw, NONNEGATIVE)
    missing = [n for n in needed if n not in given]
    if missing:
        raise InputError("index_prices_USD_t", None,
                         detail=f"no price for the index {missing[0]!r} (USD/t)")
    return given


def indexed_price(
    material: str,
    index_prices_USD_t: Mapping[str, ArrayLike],
    payables: Mapping[str, ArrayLike],
    conversion_fee_USD_kg: ArrayLike = 0.0,
) -> IndexedPrice:
    """The price of ``material`` from index prices (USD/t of each index's
    product), payable fractions and a conversion fee (USD/kg). Indexes whose
    payable is 0 need no price. Arrays broadcast together.

    >>> p = indexed_price("NMC811", {"LiOH": 10000, "Ni": 16000, "Co": [24000, 34000]},
    ...                   {"LiOH": 1, "Ni": 1, "Mn": 0, "Co": 1}, 9.0)
    >>> [round(x, 3) for x in p.price_USD_kg.tolist()]
    [22.49, 23.096]
    >>> round(float(p.sensitivity_USD_kg_per_USD_t["cobalt"]) * 1000, 4)   # per 1,000 USD/t
    0.0606
    """
    name, terms = _terms(material, payables)
    coeff = {ix.name: w / ix.element_fraction * pay for ix, w, pay in terms}
    needed = [n for n, c in coeff.items() if np.any(c != 0)]
    values = _index_values(index_prices_USD_t, needed)
    fee = check("conversion_fee_USD_kg", conversion_fee_USD_kg, NONNEGATIVE)
    broadcast_shape({"conversion_fee_USD_kg": fee, **{f"payables[{k!r}]": v for k, v in
                      coeff.items()}, **{f"index_prices_USD_t[{k!r}]": v for k, v in
                                         values.items()}})
    parts = {n: c * values[n] / 1000.0 if n in values else c * 0.0 for n, c in coeff.items()}
    total = fee
    for v in parts.values():
        total = total + v
    return IndexedPrice(
        material=name,
        price_USD_kg=np.asarray(total, dtype=float),
        metal_value_USD_kg={k: np.asarray(v, dtype=float) for k, v in parts.items()},
        conversion_fee_USD_kg=fee,
        sensitivity_USD_kg_per_USD_t={k: np.asarray(c / 1000.0) for k, c in coeff.items()},
    )


def index_for_price(
    material: str,
    fixed_price_USD_kg: ArrayLike,
    solve_for: str,
    index_prices_USD_t: Mapping[str, float],
    payables: Mapping[str, float],
    conversion_fee_USD_kg: ArrayLike = 0.0,
) -> Array | float:
    """The value of index ``solve_for`` (USD/t) at which the indexed price equals
    ``fixed_price_USD_kg``, the other indexes held at ``index_prices_USD_t``
    (scalars); the fixed price and the fee may be arrays. Refused when no
    value >= 0 does it.

    >>> pay = {"lithium carbonate": 1.0, "iron": 0.0}
    >>> x = index_for_price("LFP", 9.0, "Li2CO3", {}, pay, conversion_fee_USD_kg=2.5)
    >>> round(float(indexed_price("LFP", {"Li2CO3": x}, pay, 2.5).price_USD_kg), 12)
    9.0
    """
    target = index(solve_for, "solve_for").name
    name, terms = _terms(material, payables)
    coeff = {ix.name: float(w / ix.element_fraction * pay) for ix, w, pay in terms}
    if coeff.get(target, 0.0) == 0.0:
        raise InputError("solve_for", solve_for,
                         detail=f"the price of {name} does not depend on {target!r} (payable 0 "
                         "or metal absent)")
    fixed = check("fixed_price_USD_kg", fixed_price_USD_kg, NONNEGATIVE)
    fee = check("conversion_fee_USD_kg", conversion_fee_USD_kg, NONNEGATIVE)
    broadcast_shape({"fixed_price_USD_kg": fixed, "conversion_fee_USD_kg": fee})
    others = {k: v for k, v in index_prices_USD_t.items() if index(k).name != target}
    needed = [n for n, c in coeff.items() if c != 0.0 and n != target]
    values = _index_values(others, needed)
    rest = fee + sum(coeff[n] * float(values[n]) / 1000.0 for n in needed)
    x = (fixed - rest) * 1000.0 / coeff[target]
    if np.any(x < 0):
        k = int(np.argmax(np.ravel(x < 0)))
        f, r = float(np.ravel(np.broadcast_to(fixed, x.shape))[k]), float(
            np.ravel(np.broadcast_to(rest, x.shape))[k])
        raise InputError(
            "fixed_price_USD_kg", f,
            detail=f"{f:.6g} USD/kg is below the fee and the other metals ({r:.6g} USD/kg); "
            f"no {target} index >= 0 reproduces it",
        )
    return float(x) if x.ndim == 0 else x
