"""A cell-sizing scenario as flat input values (defined name -> value, as the
cells of the workbook hold them) and back: the bridge between
:class:`udfs.core.sizing.CellSpec` (and :class:`udfs.core.pack.PackSpec`) and
:data:`udfs.core.sizing_table.CELL_SIZING`.

Every value read goes through the table's check (aliases resolve to the
catalogue's names, numbers are checked against their domains), so a scenario
from a workbook is refused for the same reasons as the same ``CellSpec``.

>>> values = spec_values(CellSpec("LFP", "graphite", target_energy_Wh=100.0,
...                               cathode_areal_capacity_mAh_cm2=3.0))
>>> values["in_cathode"], values["in_target_basis"], values["in_target"]
('LiFePO4', 'energy', 100.0)
>>> spec = spec_from_values({**values, "in_cathode": "LFP", "in_np_ratio": 1.2})
>>> spec.cathode, spec.target_energy_Wh, spec.np_ratio
('LiFePO4', 100.0, 1.2)
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from . import catalogue
from .errors import InputError, NotFoundError
from .inputs import Input
from .names import closest
from .pack import PackSpec
from .sizing import CellSpec, Price, price_basis
from .sizing_table import CELL_SIZING, COMPONENTS, PRICE_UNITS, SIDES, Component
from .validate import FreeText

__all__ = [
    "PACK_INPUTS",
    "SPEC_INPUTS",
    "field_of",
    "order_from_values",
    "pack_from_values",
    "pack_values",
    "spec_from_values",
    "spec_values",
    "vary",
]

Value = float | str | None
_SPEC_FIELDS = frozenset(f.name for f in dataclasses.fields(CellSpec))
_PACK_FIELDS = frozenset(f.name for f in dataclasses.fields(PackSpec))


def _sets_spec(inp: Input) -> bool:
    """Whether the input sets a CellSpec field (the order's and the pack's do not)."""
    return bool(inp.fields) and all(f in _SPEC_FIELDS for f in inp.fields)


def _other_inputs() -> frozenset[str]:
    """The inputs of the order (procurement) and of the pack, not of the cell:
    they set no CellSpec field, or pick the meaning of one that does not."""
    other = {inp.name for inp in CELL_SIZING if inp.fields and not _sets_spec(inp)}
    return frozenset(other | {CELL_SIZING.get(n).chooser or n for n in other})


#: The inputs that describe one cell (a CellSpec): all but the title, the order and the pack.
SPEC_INPUTS: tuple[str, ...] = tuple(
    inp.name for inp in CELL_SIZING
    if inp.name not in _other_inputs() and not isinstance(inp.domain, FreeText)
)
#: The inputs that describe the pack (a PackSpec).
PACK_INPUTS: tuple[str, ...] = tuple(
    inp.name for inp in CELL_SIZING if inp.field is not None and inp.field in _PACK_FIELDS
)


def _share_of(c: Component) -> str:
    """The input holding the share of an optional component (a second binder)."""
    return f"{c.material}_share"


def _scalar(field: str, value: Any) -> float | str | None:
    if value is None or isinstance(value, str):
        return value
    arr = np.asarray(value)
    if arr.ndim == 0 and arr.dtype.kind in "iuf":
        return float(arr)
    raise InputError(field, value, "a single number (the workbook holds one scenario)")


def _binders(field: str, value: Any) -> tuple[str | None, str | None, float]:
    """(main binder or None for the recipe's, second binder or None, share of the second)."""
    if value is None:
        return None, None, 0.0
    if isinstance(value, str):
        return value, None, 0.0
    if isinstance(value, Mapping) and 1 <= len(value) <= 2:
        items = list(value.items())
        if len(items) == 1:
            return items[0][0], None, 0.0
        (first, _), (second, share) = items
        return first, second, float(share)
    raise InputError(field, value, "a binder name or a mapping of at most two binders")


def _workbook_price(where: str, raw: Price) -> tuple[float, str]:
    """A price as the workbook's two inputs hold it: a value in USD/kg or USD/m^2
    (a price per tonne or per cm2 is converted; see :func:`~udfs.core.sizing.price_basis`)."""
    value, unit = raw if isinstance(raw, tuple) else (raw, "USD/kg")
    basis, factor = price_basis(str(unit), where)
    number = _scalar(where, value)
    if not isinstance(number, float):
        raise InputError(where, raw, "a price: a number, or (number, unit)")
    return number * factor, PRICE_UNITS[0] if basis == "kg" else PRICE_UNITS[1]


def spec_values(
    spec: CellSpec, order_cells: float | None = None, order_MWh: float | None = None
) -> dict[str, Value]:
    """The input values (defined name -> value) that describe ``spec`` and the
    order; material names in the catalogue's spelling. Every input of
    :data:`CELL_SIZING` but ``in_scenario`` gets a value (None: blank)."""
    if not isinstance(spec, CellSpec):
        raise InputError("spec", spec, "a CellSpec")
    out: dict[str, Value] = {}
    for inp in CELL_SIZING:
        if inp.field not in _SPEC_FIELDS or inp.field in ("cathode_binder", "anode_binder"):
            continue
        value = _scalar(inp.field, getattr(spec, inp.field))
        out[inp.name] = inp.check(value, argument=inp.field) if isinstance(value, str) else value
    for inp in CELL_SIZING:
        if inp.choices and _sets_spec(inp):
            given = [c for c in inp.choices if getattr(spec, c.field) is not None]
            pick = given[0] if given else inp.choices[0]
            out[inp.chooser or ""] = pick.option
            value = _scalar(pick.field, getattr(spec, pick.field))
            out[inp.name] = value if value is not None else inp.default  # envelope: unused
    for side in SIDES:
        field = f"{side}_binder"
        first, second, share = _binders(field, getattr(spec, field))
        names = CELL_SIZING.get(f"in_{side}_binder")
        out[names.name] = None if first is None else names.check(first, argument=field)
        out[f"in_{side}_binder2"] = None if second is None else names.check(second, field)
        out[f"in_{side}_binder2_share"] = share
    prices: dict[str, tuple[float, str]] = {}
    for name, raw in (spec.prices or {}).items():
        prices[catalogue.material(name, "prices").name] = _workbook_price(
            f"prices[{name!r}]", raw
        )
    for c in COMPONENTS:
        material = out[c.material]
        hit = prices.get(material) if isinstance(material, str) else None
        out[c.price] = None if hit is None else hit[0]
        out[c.price_unit] = None if hit is None else hit[1]
    for name in PACK_INPUTS:
        out[name] = CELL_SIZING.get(name).default
    if order_cells is not None and order_MWh is not None:
        raise InputError("order_cells", order_cells, detail="give at most one of the two orders")
    size = CELL_SIZING.get("in_order_size")
    if order_cells is not None:
        out["in_order_basis"] = "cells"
        out["in_order_size"] = float(size.check(order_cells, "order_cells", "order_cells"))
    elif order_MWh is not None:
        out["in_order_basis"] = "MWh"
        out["in_order_size"] = float(size.check(order_MWh, "order_MWh", "order_MWh"))
    else:
        for name in ("in_order_basis", "in_order_size"):
            out[name] = CELL_SIZING.get(name).default
    return out


def _checked(values: Mapping[str, Any]) -> dict[str, Any]:
    """Every input of the table checked (missing ones take the table's default)."""
    unknown = [k for k in values if k not in CELL_SIZING.names]
    if unknown:
        raise NotFoundError(
            "inputs", unknown[0], "input of the cell-sizing model",
            closest(unknown[0], CELL_SIZING.names),
        )
    return {inp.name: inp.check(values.get(inp.name, inp.default)) for inp in CELL_SIZING}


def _chosen(inp: Input, v: Mapping[str, Any]) -> str:
    """The field an input with choices sets, as its chooser says."""
    option = v[inp.chooser or ""]
    return next(c.field for c in inp.choices if c.option == option)


def spec_from_values(values: Mapping[str, Any]) -> CellSpec:
    """The :class:`CellSpec` that input values (defined name -> value) describe.
    Missing inputs take their defaults; every value is checked by the table."""
    v = _checked(values)
    kw: dict[str, Any] = {}
    for inp in CELL_SIZING:
        if inp.field is not None:
            if inp.field in _SPEC_FIELDS:
                kw[inp.field] = v[inp.name]
        elif inp.choices and _sets_spec(inp):
            field = _chosen(inp, v)
            if field in ("target_capacity_Ah", "target_energy_Wh") and \
                    v["in_sizing_mode"] == "envelope":
                continue  # the envelope mode takes no target: the value is not used
            kw[field] = v[inp.name]
    live: dict[str, str] = {}  # component key -> material, for the components present
    for side in SIDES:
        first, second = v[f"in_{side}_binder"], v[f"in_{side}_binder2"]
        share = float(v[f"in_{side}_binder2_share"])
        kw[f"{side}_binder"] = first
        if first is None and (second is not None or share > 0):
            raise InputError(f"in_{side}_binder", None,
                             detail="name the main binder, or leave both binders blank for the "
                             "recipe's")
        if share > 0:
            where = f"in_{side}_binder2"
            if second is None:
                raise InputError(where, None, detail="name the second binder or set its share to 0")
            if second == first:
                raise InputError(where, second, detail="the second binder repeats the first")
            kw[f"{side}_binder"] = {first: 1.0 - share, second: share}
    for c in COMPONENTS:
        material = v[c.material]
        if material is not None and not (c.optional and not v[_share_of(c)]):
            live[c.key] = material
    prices: dict[str, tuple[float, str]] = {}
    for c in COMPONENTS:
        price, unit = v[c.price], v[c.price_unit]
        if price is None or c.key not in live:
            continue
        if unit is None:
            raise InputError(c.price_unit, None, detail=f"give the unit of {c.price}")
        material = live[c.key]
        if prices.get(material, (price, unit)) != (price, unit):
            raise InputError(
                c.price, price,
                detail=f"{material!r} has two different prices; give one price per material",
            )
        prices[material] = (price, unit)
    if prices:
        kw["prices"] = prices
    return CellSpec(**kw)


def pack_values(pack: PackSpec) -> dict[str, Value]:
    """The input values (defined name -> value) that describe ``pack``.

    >>> pack_values(PackSpec(pack_energy_kWh=80.0))["in_pack_energy"]
    80.0
    """
    if not isinstance(pack, PackSpec):
        raise InputError("pack", pack, "a PackSpec")
    out: dict[str, Value] = {}
    for name in PACK_INPUTS:
        inp = CELL_SIZING.get(name)
        assert inp.field is not None
        value = _scalar(inp.field, getattr(pack, inp.field))
        out[name] = inp.check(value, argument=inp.field)
    return out


def pack_from_values(values: Mapping[str, Any]) -> PackSpec:
    """The :class:`PackSpec` that input values describe (missing ones take
    their defaults; every value is checked by the table).

    >>> pack_from_values({"in_pack_structure": "components"}).structure
    'components'
    """
    v = _checked(values)
    kw = {}
    for name in PACK_INPUTS:
        field = CELL_SIZING.get(name).field
        assert field is not None
        kw[field] = v[name]
    return PackSpec(**kw)


def order_from_values(values: Mapping[str, Any]) -> dict[str, float]:
    """The order the values describe: ``{"order_cells": n}`` or ``{"order_MWh": x}``."""
    v = _checked(values)
    inp = CELL_SIZING.get("in_order_size")
    field = _chosen(inp, v)
    return {field: float(inp.check(v[inp.name], field, field))}


def field_of(key: str, chosen: Mapping[str, Any]) -> str:
    """The CellSpec field the numeric input ``key`` (defined name or field) sets;
    for a defined name whose meaning another input picks (``in_target``), the
    field that input's value in ``chosen`` (input values) picks.

    >>> field_of("in_target", {"in_target_basis": "energy"}), field_of("np_ratio", {})
    ('target_energy_Wh', 'np_ratio')
    """
    inp = CELL_SIZING.get(key)
    if not inp.is_number or not _sets_spec(inp):
        raise InputError(
            "input", key, detail=f"{key} is not a numeric input of the cell sizing that can vary"
        )
    if key in inp.fields:
        return key
    if inp.field is not None:
        return inp.field
    return _chosen(inp, _checked(chosen))


def vary(spec: CellSpec, field: str, values: ArrayLike) -> CellSpec:
    """``spec`` with the numeric field ``field`` set to ``values`` (an array
    that broadcasts with the others); the other field of a pair (a loading or
    an areal capacity) is cleared.

    >>> s = vary(CellSpec("NMC811", "graphite", target_capacity_Ah=50.0,
    ...                   cathode_areal_capacity_mAh_cm2=3.0),
    ...          "cathode_loading_mg_cm2", [18.0, 22.0])
    >>> s.cathode_loading_mg_cm2, s.cathode_areal_capacity_mAh_cm2
    ([18.0, 22.0], None)
    """
    inp = CELL_SIZING.get(field_of(field, {}))
    changes: dict[str, Any] = {other: None for other in inp.fields}
    changes[field] = values
    return dataclasses.replace(spec, **changes)
