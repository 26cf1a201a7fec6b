"""Cell formats: where the electrodes go and what holds them. A stacked pouch,
a wound cylinder and a prismatic aluminium can (flat wound rolls or stacks),
each in two modes:

* ``target``: a required coated cathode area and the free dimensions in, the
  remaining dimension out (pouch: the cathode sheet's width and height in, the
  layer count and the outer size out; cylinder: the diameter in, the height
  out; prismatic: the width and height in, the thickness out);
* ``envelope``: the outer dimensions in, the electrode area (hence the
  capacity) and the housing out.

Vectorised: every dimension and layer thickness may be an array. Lengths are
mm, layer thicknesses um, areas cm2, volumes cm3. The equations are written
out in ``docs/sizing-model.md``; this module knows geometry only (no material,
no capacity): housing and tab masses are volumes here, times the density of
the material in :mod:`udfs.core.sizing`.

Presets (:data:`PRESETS`) give the housing numbers of generic classes: the
18, 21 and 46 mm cylinder classes, a large pouch and a large prismatic can.
They are typical figures of the trade (common practice, from memory, or
QUINN2018 where noted), never a product's drawing; every one can be given.

>>> g = PRESETS["cylindrical 18 mm"]
>>> g["cell_diameter_mm"].value, g["cell_height_mm"].value
(18.3, 65.0)
>>> used_fields("cylindrical", "target", "wound")[:3]
('cell_diameter_mm', 'wall_mm', 'bottom_mm')
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, fields
from types import MappingProxyType

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .capacity import ceil_count
from .element_errors import ElementErrors
from .errors import DomainError
from .spiral import wound_length, wound_thickness

__all__ = [
    "CORE_TYPES",
    "CYLINDER_CLASSES",
    "FORMATS",
    "GEOMETRY_FIELDS",
    "MODES",
    "PRESETS",
    "Geometry",
    "Layers",
    "Preset",
    "computed_fields",
    "floor_count",
    "preset_key",
    "size_format",
    "used_fields",
]

Array = NDArray[np.float64]

FORMATS = ("pouch", "cylindrical", "prismatic")
MODES = ("target", "envelope")
CYLINDER_CLASSES = ("18 mm", "21 mm", "46 mm")
#: What fills a prismatic can.
CORE_TYPES = ("wound", "stacked")

#: Geometry inputs (CellSpec fields), mm; blank means the format's preset.
GEOMETRY_FIELDS = (
    "width_mm", "height_mm",
    "cell_width_mm", "cell_height_mm", "cell_thickness_mm", "cell_diameter_mm",
    "wall_mm", "bottom_mm", "lid_mm", "seal_mm", "headspace_mm", "core_mm", "tab_lane_mm",
    "tab_width_mm", "tab_thickness_mm", "tab_length_mm",
)

_TOL = 1e-9


@dataclass(frozen=True)
class Preset:
    """A preset number (mm; a count for ``cores``) and where it comes from."""

    value: float
    basis: str


def _p(value: float, basis: str) -> Preset:
    return Preset(value, basis)


_MEMORY = "from memory"
_CYL_MEMORY = "from memory (generic class; QUINN2018 for the 18 and 21 mm classes)"
_TABS = "from memory (strip of the tab metal, each of the two tabs)"

#: Housing and size presets by class (see :func:`preset_key`).
PRESETS: Mapping[str, Mapping[str, Preset]] = MappingProxyType({
    "pouch": MappingProxyType({
        "width_mm": _p(100.0, "from memory (cathode sheet of a large pouch cell)"),
        "height_mm": _p(300.0, "from memory (cathode sheet of a large pouch cell)"),
        "cell_width_mm": _p(115.0, "from memory (large pouch class)"),
        "cell_height_mm": _p(315.0, "from memory (large pouch class)"),
        "cell_thickness_mm": _p(10.0, "from memory (large pouch class)"),
        "seal_mm": _p(5.0, "common practice (heat seal 3-8 mm wide)"),
        "tab_width_mm": _p(30.0, _TABS),
        "tab_thickness_mm": _p(0.2, _TABS),
        "tab_length_mm": _p(35.0, _TABS),
    }),
    "cylindrical 18 mm": MappingProxyType({
        "cell_diameter_mm": _p(18.3, "common practice (18 mm diameter class)"),
        "cell_height_mm": _p(65.0, "common practice (18 mm class, 65 mm tall)"),
        "wall_mm": _p(0.25, _CYL_MEMORY),
        "bottom_mm": _p(0.3, _CYL_MEMORY),
        "lid_mm": _p(1.0, _CYL_MEMORY + "; cap assembly as an equivalent disc of the can metal"),
        "headspace_mm": _p(4.0, _CYL_MEMORY + "; insulators, tab folds above and below the roll"),
        "core_mm": _p(2.0, _CYL_MEMORY + "; hole left by the mandrel"),
        "tab_lane_mm": _p(0.0, "common practice (tabbed roll: tabs welded on, no lane)"),
        "tab_width_mm": _p(4.0, _TABS),
        "tab_thickness_mm": _p(0.1, _TABS),
        "tab_length_mm": _p(60.0, _TABS),
    }),
    "cylindrical 21 mm": MappingProxyType({
        "cell_diameter_mm": _p(21.2, "common practice (21 mm diameter class)"),
        "cell_height_mm": _p(70.0, "common practice (21 mm class, 70 mm tall)"),
        "wall_mm": _p(0.25, _CYL_MEMORY),
        "bottom_mm": _p(0.35, _CYL_MEMORY),
        "lid_mm": _p(1.0, _CYL_MEMORY + "; cap assembly as an equivalent disc of the can metal"),
        "headspace_mm": _p(4.5, _CYL_MEMORY + "; insulators, tab folds above and below the roll"),
        "core_mm": _p(2.5, _CYL_MEMORY + "; hole left by the mandrel"),
        "tab_lane_mm": _p(0.0, "common practice (tabbed roll: tabs welded on, no lane)"),
        "tab_width_mm": _p(5.0, _TABS),
        "tab_thickness_mm": _p(0.1, _TABS),
        "tab_length_mm": _p(65.0, _TABS),
    }),
    "cylindrical 46 mm": MappingProxyType({
        "cell_diameter_mm": _p(46.0, "common practice (46 mm diameter class)"),
        "cell_height_mm": _p(80.0, "common practice (46 mm class, 80 mm tall)"),
        "wall_mm": _p(0.5, _MEMORY),
        "bottom_mm": _p(0.6, _MEMORY),
        "lid_mm": _p(1.2, _MEMORY + "; cap assembly as an equivalent disc of the can metal"),
        "headspace_mm": _p(5.0, _MEMORY + "; collector plates and insulators"),
        "core_mm": _p(6.0, _MEMORY + "; hole left by the mandrel"),
        "tab_lane_mm": _p(6.0, "from memory (tabless roll: uncoated lanes folded onto plates)"),
        "tab_width_mm": _p(40.0, _MEMORY + " (collector plate as a strip of equal area)"),
        "tab_thickness_mm": _p(0.3, _MEMORY + " (collector plate)"),
        "tab_length_mm": _p(38.0, _MEMORY + " (collector plate as a strip of equal area)"),
    }),
    "prismatic": MappingProxyType({
        "cell_width_mm": _p(174.0, "common practice (large prismatic storage class)"),
        "cell_height_mm": _p(200.0, "common practice (large prismatic storage class, body)"),
        "cell_thickness_mm": _p(72.0, "common practice (large prismatic storage class)"),
        "wall_mm": _p(1.0, _MEMORY + " (aluminium can wall)"),
        "bottom_mm": _p(1.0, _MEMORY),
        "lid_mm": _p(5.0, _MEMORY + "; lid with terminals and vent as an equivalent plate"),
        "headspace_mm": _p(15.0, _MEMORY + "; tab bundles, connectors and insulators"),
        "core_mm": _p(1.0, _MEMORY + "; gap left by the flat mandrel"),
        "tab_lane_mm": _p(10.0, _MEMORY + " (uncoated lane cut into tabs)"),
        "tab_width_mm": _p(30.0, _MEMORY + " (connector from the rolls to a terminal)"),
        "tab_thickness_mm": _p(1.5, _MEMORY + " (connector)"),
        "tab_length_mm": _p(50.0, _MEMORY + " (connector)"),
        "cores": _p(2.0, "common practice (large prismatic cells hold 2 to 4 rolls)"),
    }),
})


def preset_key(cell_format: str, cylinder_class: str) -> str:
    """The key of :data:`PRESETS` for a format (a cylinder by its class).

    >>> preset_key("cylindrical", "46 mm"), preset_key("pouch", "46 mm")
    ('cylindrical 46 mm', 'pouch')
    """
    return f"cylindrical {cylinder_class}" if cell_format == "cylindrical" else cell_format


_HOUSING = {
    "pouch": ("wall_mm", "seal_mm"),
    "cylindrical": ("wall_mm", "bottom_mm", "lid_mm", "headspace_mm"),
    "prismatic": ("wall_mm", "bottom_mm", "lid_mm", "headspace_mm"),
}
_TAB_FIELDS = ("tab_width_mm", "tab_thickness_mm", "tab_length_mm")
_WOUND = ("core_mm", "tab_lane_mm")


def used_fields(cell_format: str, mode: str, core: str = "wound") -> tuple[str, ...]:
    """The geometry inputs a format reads in a mode (given, or the preset);
    ``core`` matters for prismatic cans only.

    >>> used_fields("pouch", "envelope")
    ('cell_width_mm', 'cell_height_mm', 'cell_thickness_mm', 'wall_mm', 'seal_mm', \
'tab_width_mm', 'tab_thickness_mm', 'tab_length_mm')
    """
    if cell_format == "pouch":
        size: tuple[str, ...] = (
            ("width_mm", "height_mm") if mode == "target"
            else ("cell_width_mm", "cell_height_mm", "cell_thickness_mm"))
        return (*size, *_HOUSING["pouch"], *_TAB_FIELDS)
    if cell_format == "cylindrical":
        size = ("cell_diameter_mm",) if mode == "target" else ("cell_diameter_mm",
                                                               "cell_height_mm")
        return (*size, *_HOUSING["cylindrical"], *_WOUND, *_TAB_FIELDS)
    size = ("cell_width_mm", "cell_height_mm")
    if mode == "envelope":
        size = (*size, "cell_thickness_mm")
    wound = _WOUND if core == "wound" else ()
    return (*size, *_HOUSING["prismatic"], *wound, *_TAB_FIELDS, "cores")


def computed_fields(cell_format: str, mode: str) -> tuple[str, ...]:
    """The dimensions a format computes in a mode (they must be left blank).

    >>> computed_fields("cylindrical", "target"), computed_fields("prismatic", "envelope")
    (('cell_height_mm',), ())
    """
    if cell_format == "pouch":
        return (("cell_width_mm", "cell_height_mm", "cell_thickness_mm") if mode == "target"
                else ("width_mm", "height_mm"))
    if cell_format == "cylindrical":
        return ("cell_height_mm",) if mode == "target" else ()
    return ("cell_thickness_mm",) if mode == "target" else ()


def floor_count(x: ArrayLike) -> Array:
    """Whole-number floor that forgives float noise (the twin of ``ceil_count``).

    >>> floor_count([2.9999999999996, 2.99, 3.0]).tolist()
    [3.0, 2.0, 3.0]
    """
    a = np.asarray(x, dtype=float)
    r = np.round(a)
    near = np.abs(a - r) <= _TOL * np.maximum(np.abs(a), 1.0)
    return np.where(near, r, np.floor(a))


# --------------------------------------------------------------------------- layers


@dataclass(frozen=True)
class Layers:
    """The electrode layers (um) and the overhangs (mm, each edge)."""

    cathode_foil_um: Array
    cathode_coating_um: Array
    anode_foil_um: Array
    anode_coating_um: Array
    separator_um: Array
    anode_overhang_mm: Array
    separator_overhang_mm: Array

    @property
    def cathode_um(self) -> Array:
        """A cathode coated on both faces."""
        return self.cathode_foil_um + 2.0 * self.cathode_coating_um

    @property
    def anode_um(self) -> Array:
        return self.anode_foil_um + 2.0 * self.anode_coating_um

    @property
    def pitch_um(self) -> Array:
        """Repeat unit: cathode + separator + anode + separator."""
        return self.cathode_um + self.anode_um + 2.0 * self.separator_um

    def stack_um(self, n: ArrayLike) -> Array:
        """A stack of ``n`` cathodes between ``n + 1`` anodes with ``2 n`` separators."""
        k = np.asarray(n, dtype=float)
        return k * self.cathode_um + (k + 1.0) * self.anode_foil_um \
            + 2.0 * k * self.anode_coating_um + 2.0 * k * self.separator_um

    def take(self, index: NDArray[np.intp]) -> Layers:
        """The layers of the flat elements ``index`` (arrays broadcast to ``shape``)."""
        return Layers(*(a[index] for a in (getattr(self, f.name) for f in fields(self))))

    def full(self, shape: tuple[int, ...]) -> Layers:
        return Layers(*(np.broadcast_to(getattr(self, f.name), shape).reshape(-1)
                        for f in fields(self)))


# --------------------------------------------------------------------------- geometry


@dataclass(frozen=True)
class Geometry:
    """What a format gives (arrays; NaN where a number does not apply).

    Per cell: ``cores`` (rolls or stacks), sheets (stacked), coated and foil
    areas (cm2, every face and core counted), outer size (mm), volume and
    bounding-box volume (cm3), the housing's body and lid volumes of metal or
    laminate (cm3), the laminate's area (pouch, cm2) and each tab's volume
    (cm3). Per core: ``turns`` and the strip or sheet sizes (mm): width across,
    length along the winding (a sheet's height), ``stack_thickness_um`` or
    ``roll_thickness_mm``."""

    cores: Array
    cathode_sheets: Array
    anode_sheets: Array
    separator_layers: Array
    turns: Array
    cathode_width_mm: Array
    cathode_length_mm: Array
    anode_width_mm: Array
    anode_length_mm: Array
    separator_width_mm: Array
    separator_length_mm: Array
    cathode_coated_area_cm2: Array
    anode_coated_area_cm2: Array
    separator_area_cm2: Array
    cathode_foil_area_cm2: Array
    anode_foil_area_cm2: Array
    stack_thickness_um: Array
    roll_thickness_mm: Array
    cell_width_mm: Array
    cell_height_mm: Array
    cell_thickness_mm: Array
    cell_diameter_mm: Array
    cell_volume_cm3: Array
    box_volume_cm3: Array
    housing_body_cm3: Array
    housing_lid_cm3: Array
    housing_area_cm2: Array
    tab_cm3: Array


def _nan(like: Array) -> Array:
    return np.full(np.shape(like), np.nan)


def _tab(d: Mapping[str, Array]) -> Array:
    return d["tab_width_mm"] * d["tab_thickness_mm"] * d["tab_length_mm"] / 1000.0


def _too_small(argument: str, what: str) -> Callable[[float, float], DomainError]:
    """An error naming the dimension, its value and the least that fits."""
    def make(value: float, minimum: float) -> DomainError:
        return DomainError(argument, value, f"> {minimum:.6g} mm ({what})")
    return make


def _no_fit(argument: str, what: str) -> Callable[[float], DomainError]:
    """An error naming the dimension and why nothing fits."""
    def make(value: float) -> DomainError:
        return DomainError(argument, value, detail=f"{value:.6g} mm: {what}")
    return make


def _stacked(
    layers: Layers, n: Array, cores: Array, w: Array, h: Array
) -> dict[str, Array]:
    """Areas and sheet counts of ``cores`` stacks of ``n`` cathode sheets w x h."""
    oa, os_ = layers.anode_overhang_mm, layers.separator_overhang_mm
    wa, ha = w + 2.0 * oa, h + 2.0 * oa
    ws, hs = wa + 2.0 * os_, ha + 2.0 * os_
    k = n * cores
    return dict(
        cores=cores, cathode_sheets=k, anode_sheets=(n + 1.0) * cores, separator_layers=2.0 * k,
        cathode_width_mm=w, cathode_length_mm=h, anode_width_mm=wa, anode_length_mm=ha,
        separator_width_mm=ws, separator_length_mm=hs,
        cathode_coated_area_cm2=2.0 * k * w * h / 100.0,
        anode_coated_area_cm2=2.0 * k * wa * ha / 100.0,
        separator_area_cm2=2.0 * k * ws * hs / 100.0,
        cathode_foil_area_cm2=k * w * h / 100.0,
        anode_foil_area_cm2=(n + 1.0) * cores * wa * ha / 100.0,
        stack_thickness_um=layers.stack_um(n),
    )


def _wound(layers: Layers, ls: Array, cores: Array, wc: Array, lane: Array) -> dict[str, Array]:
    """Areas of ``cores`` rolls of separator strips ``ls`` long (per core) and a
    cathode coated ``wc`` wide; foils carry an uncoated ``lane``."""
    oa, os_ = layers.anode_overhang_mm, layers.separator_overhang_mm
    la = ls - 2.0 * os_
    lc = la - 2.0 * oa
    wa = wc + 2.0 * oa
    ws = wa + 2.0 * os_
    return dict(
        cores=cores, cathode_width_mm=wc, cathode_length_mm=lc, anode_width_mm=wa,
        anode_length_mm=la, separator_width_mm=ws, separator_length_mm=ls,
        cathode_coated_area_cm2=2.0 * cores * lc * wc / 100.0,
        anode_coated_area_cm2=2.0 * cores * la * wa / 100.0,
        separator_area_cm2=2.0 * cores * ls * ws / 100.0,
        cathode_foil_area_cm2=cores * lc * (wc + lane) / 100.0,
        anode_foil_area_cm2=cores * la * (wa + lane) / 100.0,
    )


def _lanes(layers: Layers, lane: Array) -> Array:
    """Height the uncoated lanes add beyond the separator (cathode lane at one
    end, anode lane at the other)."""
    oa, os_ = layers.anode_overhang_mm, layers.separator_overhang_mm
    return np.maximum(lane - oa - os_, 0.0) + np.maximum(lane - os_, 0.0)


def _margin(layers: Layers) -> Array:
    """Separator width minus cathode coated width."""
    return 2.0 * layers.anode_overhang_mm + 2.0 * layers.separator_overhang_mm


def _pouch(mode: str, layers: Layers, d: Mapping[str, Array], need: Array | None,
           errors: ElementErrors) -> dict[str, Array]:
    seal, wall = d["seal_mm"], d["wall_mm"]
    m = _margin(layers)
    one = np.ones_like(layers.pitch_um)
    if mode == "target":
        assert need is not None
        w, h = d["width_mm"], d["height_mm"]
        n = np.maximum(ceil_count(need / (2.0 * w * h / 100.0)), 1.0)
        out = _stacked(layers, n, one, w, h)
        cw = out["separator_width_mm"] + 2.0 * seal
        ch = out["separator_length_mm"] + 2.0 * seal
        ct = out["stack_thickness_um"] / 1000.0 + 2.0 * wall
    else:
        cw, ch, ct = d["cell_width_mm"], d["cell_height_mm"], d["cell_thickness_mm"]
        w = cw - 2.0 * seal - m
        h = ch - 2.0 * seal - m
        errors.add(w <= 0, _too_small("cell_width_mm", "room for the seals and overhangs"),
                   cw, 2.0 * seal + m)
        errors.add(h <= 0, _too_small("cell_height_mm", "room for the seals and overhangs"),
                   ch, 2.0 * seal + m)
        avail = (ct - 2.0 * wall) * 1000.0
        n = floor_count((avail - layers.anode_foil_um) / layers.pitch_um)
        errors.add(n < 1, _too_small("cell_thickness_mm", "two laminate walls and one cathode "
                                     "between two anodes"),
                   ct, 2.0 * wall + layers.stack_um(1.0) / 1000.0)
        n = np.maximum(n, 1.0)
        out = _stacked(layers, n, one, w, h)
    st = out["stack_thickness_um"] / 1000.0
    area = (2.0 * cw * ch + 2.0 * (out["separator_width_mm"] + out["separator_length_mm"]) * st)
    area_cm2 = area / 100.0
    out.update(
        turns=_nan(cw), roll_thickness_mm=_nan(cw), cell_width_mm=cw, cell_height_mm=ch,
        cell_thickness_mm=ct, cell_diameter_mm=_nan(cw), cell_volume_cm3=cw * ch * ct / 1000.0,
        box_volume_cm3=cw * ch * ct / 1000.0, housing_body_cm3=area_cm2 * wall / 10.0,
        housing_lid_cm3=np.zeros_like(cw), housing_area_cm2=area_cm2, tab_cm3=_tab(d),
    )
    return out


def _inner_height(d: Mapping[str, Array], height: Array) -> Array:
    return height - d["bottom_mm"] - d["lid_mm"] - d["headspace_mm"]


def _cylindrical(mode: str, layers: Layers, d: Mapping[str, Array], need: Array | None,
                 errors: ElementErrors) -> dict[str, Array]:
    dia, wall, core, lane = d["cell_diameter_mm"], d["wall_mm"], d["core_mm"], d["tab_lane_mm"]
    roll = dia - 2.0 * wall
    pitch = layers.pitch_um
    errors.add(roll <= core + 2.0 * pitch / 1000.0,
               _too_small("cell_diameter_mm", "two walls, the core and one turn"),
               dia, 2.0 * wall + core + 2.0 * pitch / 1000.0)
    ls = wound_length(roll, core, pitch)
    extra = _lanes(layers, lane) + _margin(layers)
    probe = _wound(layers, ls, np.ones_like(ls), np.ones_like(ls), lane)
    errors.add(probe["cathode_length_mm"] <= 0,
               _no_fit("cell_diameter_mm", "the roll is shorter than the overhangs at its ends"),
               dia)
    if mode == "target":
        assert need is not None
        wc = need * 100.0 / (2.0 * probe["cathode_length_mm"])
        height = wc + extra + d["bottom_mm"] + d["lid_mm"] + d["headspace_mm"]
    else:
        height = d["cell_height_mm"]
        wc = _inner_height(d, height) - extra
        errors.add(wc <= 0, _too_small("cell_height_mm", "bottom, lid, headspace, lanes and "
                                       "overhangs"),
                   height, height - wc)
    out = _wound(layers, ls, np.ones_like(ls), wc, lane)
    area = np.pi / 4.0 * dia * dia
    body = np.pi / 4.0 * (dia * dia - roll * roll) * (height - d["bottom_mm"] - d["lid_mm"])
    body = body + area * d["bottom_mm"]
    out.update(
        cathode_sheets=_nan(dia), anode_sheets=_nan(dia), separator_layers=_nan(dia),
        turns=(roll - core) / 2.0 / (pitch / 1000.0), stack_thickness_um=_nan(dia),
        roll_thickness_mm=roll, cell_width_mm=_nan(dia), cell_height_mm=height,
        cell_thickness_mm=_nan(dia), cell_diameter_mm=dia, cell_volume_cm3=area * height / 1000.0,
        box_volume_cm3=dia * dia * height / 1000.0, housing_body_cm3=body / 1000.0,
        housing_lid_cm3=area * d["lid_mm"] / 1000.0, housing_area_cm2=_nan(dia), tab_cm3=_tab(d),
    )
    return out


def _prismatic(mode: str, layers: Layers, d: Mapping[str, Array], need: Array | None,
               errors: ElementErrors, core_type: str, cores: Array) -> dict[str, Array]:
    cw, ch, wall = d["cell_width_mm"], d["cell_height_mm"], d["wall_mm"]
    w_in = cw - 2.0 * wall
    h_asm = _inner_height(d, ch)
    pitch = layers.pitch_um
    if core_type == "wound":
        core, lane = d["core_mm"], d["tab_lane_mm"]
        wc = h_asm - _lanes(layers, lane) - _margin(layers)
        errors.add(wc <= 0, _too_small("cell_height_mm", "bottom, lid, headspace, lanes and "
                                       "overhangs"),
                   ch, ch - wc)
        if mode == "target":
            assert need is not None
            lc = need * 100.0 / (2.0 * wc) / cores
            ls = lc + _margin(layers)
            roll = wound_thickness(ls, core, pitch, w_in)
            errors.add(~np.isfinite(roll), _no_fit(
                "cell_width_mm", "the flat rolls that hold the target do not fit this width; "
                "give a wider or taller can, or more rolls"), cw)
            ct = cores * roll + 2.0 * wall
        else:
            ct = d["cell_thickness_mm"]
            roll = (ct - 2.0 * wall) / cores
            errors.add(roll <= core + 2.0 * pitch / 1000.0, _too_small(
                "cell_thickness_mm", "two walls and one turn around the core per roll"),
                ct, 2.0 * wall + cores * (core + 2.0 * pitch / 1000.0))
            errors.add(roll > w_in, _too_small(
                "cell_width_mm", "a flat roll is at least as wide as it is thick"),
                cw, roll + 2.0 * wall)
            ls = wound_length(roll, core, pitch, w_in)
        out = _wound(layers, ls, cores, wc, lane)
        out.update(cathode_sheets=_nan(cw), anode_sheets=_nan(cw), separator_layers=_nan(cw),
                   turns=(roll - core) / 2.0 / (pitch / 1000.0), stack_thickness_um=_nan(cw),
                   roll_thickness_mm=roll)
    else:
        m = _margin(layers)
        w, h = w_in - m, h_asm - m
        errors.add(w <= 0, _too_small("cell_width_mm", "two walls and the overhangs"),
                   cw, 2.0 * wall + m)
        errors.add(h <= 0, _too_small("cell_height_mm", "bottom, lid, headspace and overhangs"),
                   ch, ch - h)
        if mode == "target":
            assert need is not None
            total = np.maximum(ceil_count(need / (2.0 * w * h / 100.0)), 1.0)
            n = ceil_count(total / cores)
            ct = cores * layers.stack_um(n) / 1000.0 + 2.0 * wall
        else:
            ct = d["cell_thickness_mm"]
            per = (ct - 2.0 * wall) * 1000.0 / cores
            n = floor_count((per - layers.anode_foil_um) / pitch)
            errors.add(n < 1, _too_small(
                "cell_thickness_mm", "two walls and one cathode between two anodes per stack"),
                ct, 2.0 * wall + cores * layers.stack_um(1.0) / 1000.0)
            n = np.maximum(n, 1.0)
        out = _stacked(layers, n, cores, w, h)
        out.update(turns=_nan(cw), roll_thickness_mm=_nan(cw))
    t_in = ct - 2.0 * wall
    body = cw * ct * (ch - d["lid_mm"]) - w_in * t_in * (ch - d["lid_mm"] - d["bottom_mm"])
    out.update(
        cell_width_mm=cw, cell_height_mm=ch, cell_thickness_mm=ct, cell_diameter_mm=_nan(cw),
        cell_volume_cm3=cw * ch * ct / 1000.0, box_volume_cm3=cw * ch * ct / 1000.0,
        housing_body_cm3=body / 1000.0, housing_lid_cm3=cw * ct * d["lid_mm"] / 1000.0,
        housing_area_cm2=_nan(cw), tab_cm3=_tab(d),
    )
    return out


def size_format(
    cell_format: str,
    mode: str,
    layers: Layers,
    dims: Mapping[str, Array],
    cathode_area_cm2: Array | None,
    errors: ElementErrors,
    core_type: str = "wound",
    cores: ArrayLike = 1.0,
) -> Geometry:
    """The geometry of one format in one mode (see the module docstring).

    ``dims`` holds every field of :func:`used_fields` (given or preset, checked
    by the caller); ``cathode_area_cm2`` is the coated cathode area wanted
    (target mode; None in envelope mode); ``cores`` counts the rolls or stacks
    of a prismatic can. Impossible sizes go to ``errors`` (naming the dimension
    and the least that fits).
    """
    with np.errstate(all="ignore"):
        if cell_format == "pouch":
            out = _pouch(mode, layers, dims, cathode_area_cm2, errors)
        elif cell_format == "cylindrical":
            out = _cylindrical(mode, layers, dims, cathode_area_cm2, errors)
        else:
            k = np.asarray(cores, dtype=float)
            out = _prismatic(mode, layers, dims, cathode_area_cm2, errors, core_type, k)
    shape = np.broadcast_shapes(*(np.shape(v) for v in out.values()))
    return Geometry(**{f.name: np.broadcast_to(np.asarray(out[f.name], dtype=float), shape)
                       for f in fields(Geometry)})
