"""Design rules: per scenario, what the model could not compute (errors) and
what it computed but a cell designer would not build as it stands (warnings):
N/P below its minimum on the first-charge basis (lithium plating), electrolyte
below the pore volume, porosity, loading or coating thickness outside the
chemistry's usual range, voltages outside the couple's window, and cells the
catalogue cannot fully describe. Every bound is an input of
:data:`udfs.core.sizing_table.CELL_SIZING` (``rule_...``) or a catalogue row,
and every message names it and its source. "all checks pass" means that no
rule fired.

>>> from udfs.core.sizing import CellSpec
>>> r = review_design(CellSpec("NMC811", "graphite", target_capacity_Ah=50.0,
...                            cathode_loading_mg_cm2=22.0, np_ratio=[1.1, 0.9]))
>>> r.summary(0)
['all checks pass']
>>> r.summary(1)[0][:64]
'warning: N/P 0.9 on the first-charge basis is below 1 (rule_np_m'
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np
from numpy.typing import NDArray

from . import catalogue
from .element_errors import ElementErrors
from .sizing import CellDesign, CellSpec, review_cell
from .sizing_table import CELL_SIZING

__all__ = ["ALL_PASS", "RULES", "DesignReview", "Finding", "Rule", "review_design"]

ALL_PASS = "all checks pass"
Index = int | tuple[int, ...]


@dataclass(frozen=True)
class Rule:
    """A design rule: its key, level (``error`` or ``warning``), what it checks
    and the inputs that hold its bounds (``rule_...`` fields, or the catalogue)."""

    key: str
    level: str
    checks: str
    bounds: tuple[str, ...] = ()


RULES: tuple[Rule, ...] = (
    Rule("cannot_compute", "error", "inputs the model cannot compute (named in the message)"),
    Rule("plating", "warning", "N/P on the first-charge basis below its minimum: lithium "
         "plating risk; the anode limits the capacity", ("rule_np_min",)),
    Rule("dry_pores", "warning", "electrolyte fill below its minimum share of the pore volume",
         ("rule_fill_min",)),
    Rule("porosity", "warning", "coating porosity further from the chemistry's usual porosity "
         "than the band", ("rule_porosity_band",)),
    Rule("loading", "warning", "coating loading outside the chemistry's usual range",
         ("rule_cathode_loading_min", "rule_cathode_loading_max", "rule_anode_loading_min",
          "rule_anode_loading_max")),
    Rule("thickness", "warning", "coating thickness outside the chemistry's usual range",
         ("rule_cathode_thickness_min", "rule_cathode_thickness_max",
          "rule_anode_thickness_min", "rule_anode_thickness_max")),
    Rule("voltage", "warning", "cell voltages outside the couple's window (plus the margin), "
         "or the nominal voltage outside the cell's limits", ("rule_voltage_margin_V",)),
    Rule("catalogue", "warning", "a material the catalogue cannot fully describe (no "
         "first-charge data, no usual coating, no voltage window, an aqueous couple)"),
)
_BY_KEY: Mapping[str, Rule] = MappingProxyType({r.key: r for r in RULES})


@dataclass(frozen=True)
class Finding:
    """One rule that fired for one scenario."""

    rule: str
    level: str
    message: str

    def __str__(self) -> str:
        return f"{self.level}: {self.message}"


@dataclass(frozen=True)
class _Hit:
    rule: str
    mask: NDArray[np.bool_]
    message: Callable[[Index], str]


def _source(field: str) -> str:
    return CELL_SIZING.get(field).source


def _constant(text: str) -> Callable[[Index], str]:
    def message(index: Index) -> str:
        return text
    return message


def _at(a: NDArray[np.float64], index: Index) -> float:
    return float(a[index]) if np.ndim(a) else float(a)


@dataclass(frozen=True)
class DesignReview:
    """The findings of every scenario of a design (arrays of ``shape``)."""

    design: CellDesign
    shape: tuple[int, ...]
    errors: ElementErrors
    hits: tuple[_Hit, ...]

    def findings(self, index: Index = ()) -> list[Finding]:
        """Errors first (what could not be computed), then warnings in rule order."""
        out = [Finding("cannot_compute", "error", m) for m in self.errors.messages(index)]
        for hit in self.hits:
            if bool(hit.mask[index]):
                out.append(Finding(hit.rule, _BY_KEY[hit.rule].level, hit.message(index)))
        return out

    def summary(self, index: Index = ()) -> list[str]:
        """One line per finding (``error: ...``, ``warning: ...``), or
        ``["all checks pass"]`` when none fired."""
        lines = [str(f) for f in self.findings(index)]
        return lines or [ALL_PASS]

    def failed(self) -> NDArray[np.bool_]:
        """Scenarios with an error (their numbers are NaN)."""
        return self.errors.failed()

    def warned(self) -> NDArray[np.bool_]:
        """Scenarios with at least one warning."""
        out = np.zeros(self.shape, dtype=bool)
        for hit in self.hits:
            out = out | hit.mask
        return out & ~self.failed()

    def passed(self) -> NDArray[np.bool_]:
        """Scenarios where no rule fired: "all checks pass"."""
        return ~(self.failed() | self.warned())


def _range_rule(
    hits: list[_Hit], rule: str, side: str, what: str, unit: str, value: NDArray[np.float64],
    spec: CellSpec, material: catalogue.Material, prop: str, fmt: str, shape: tuple[int, ...],
) -> None:
    """value outside [lo, hi]: the given rule bounds, else the recipe's range."""
    lo_field, hi_field = f"rule_{side}_{what}_min", f"rule_{side}_{what}_max"
    given_lo, given_hi = getattr(spec, lo_field), getattr(spec, hi_field)
    rec = material.recipe
    if rec is None and (given_lo is None or given_hi is None):
        return  # reported once by the catalogue rule
    rng = (0.0, 0.0) if rec is None else rec.loading_mg_cm2 if prop == "loading" \
        else rec.thickness_um
    lo = np.asarray(given_lo if given_lo is not None else rng[0], dtype=float)
    hi = np.asarray(given_hi if given_hi is not None else rng[1], dtype=float)
    basis = []
    for given, fld, key in ((given_lo, lo_field, "min"), (given_hi, hi_field, "max")):
        if given is not None:
            basis.append(f"{fld} given")
        else:
            fact = material.facts[f"electrode_{prop}_{key}"]
            basis.append(f"{material.name} electrode_{prop}_{key}: {fact.source}")
    mask = np.broadcast_to((value < lo) | (value > hi), shape)

    def message(index: Index) -> str:
        x = _at(value, index)
        a, b = _at(lo, index), _at(hi, index)
        return (f"{side} {what} {x:{fmt}} {unit} is outside the usual {a:g}-{b:g} {unit} "
                f"({'; '.join(basis)})")
    hits.append(_Hit(rule, mask, message))


def review_design(spec: CellSpec) -> DesignReview:
    """Size ``spec`` without raising for single scenarios, then apply every
    rule of :data:`RULES` to each scenario (see the module docstring)."""
    design, errors = review_cell(spec)
    shape = design.shape
    hits: list[_Hit] = []
    ok = ~errors.failed()
    cath, anod = catalogue.material(design.cathode), catalogue.material(design.anode)

    def add(rule: str, mask: object, message: Callable[[Index], str]) -> None:
        hits.append(_Hit(rule, np.broadcast_to(np.asarray(mask, dtype=bool), shape) & ok,
                         message))

    with np.errstate(invalid="ignore"):
        # ---- N/P on the first-charge basis
        np_min = np.asarray(spec.rule_np_min, dtype=float)
        add("plating", design.np_ratio < np_min, lambda i: (
            f"N/P {_at(design.np_ratio, i):.3g} on the first-charge basis is below "
            f"{_at(np_min, i):g} (rule_np_min, {_source('rule_np_min')}): lithium plating risk; "
            f"the capacity is the anode's ({_at(design.capacity_Ah, i):.4g} Ah)"))
        # ---- electrolyte
        fill_min = np.asarray(spec.rule_fill_min, dtype=float)
        add("dry_pores", design.electrolyte_fill < fill_min, lambda i: (
            f"electrolyte fill {_at(design.electrolyte_fill, i):.3g} x the pore volume is below "
            f"{_at(fill_min, i):g} (rule_fill_min, {_source('rule_fill_min')}): pores left dry"))
        # ---- coatings: porosity, loading, thickness against the chemistry's recipe
        band = np.asarray(spec.rule_porosity_band, dtype=float)
        for side, mat in (("cathode", cath), ("anode", anod)):
            if mat.recipe is not None:
                usual = mat.recipe.porosity
                poro = getattr(design, f"{side}_porosity")
                fact = mat.facts["electrode_porosity"]

                def poro_msg(i: Index, side: str = side, poro: NDArray[np.float64] = poro,
                             usual: float = usual, name: str = mat.name,
                             src: str = fact.source) -> str:
                    b = _at(band, i)
                    return (f"{side} porosity {_at(poro, i):.3g} is outside {usual - b:.3g}-"
                            f"{usual + b:.3g} ({name} electrode_porosity {usual:g}, {src}; "
                            f"rule_porosity_band {b:g}, {_source('rule_porosity_band')})")
                add("porosity", np.abs(poro - usual) > band + 1e-12, poro_msg)
            _range_rule(hits, "loading", side, "loading", "mg/cm2",
                        getattr(design, f"{side}_loading_mg_cm2"), spec, mat, "loading", ".3g",
                        shape)
            _range_rule(hits, "thickness", side, "thickness", "um",
                        getattr(design, f"{side}_coating_thickness_um"), spec, mat, "thickness",
                        ".4g", shape)
        # ---- voltages
        margin = np.asarray(spec.rule_voltage_margin_V, dtype=float)
        c_cyc, a_cyc = cath.cycling, anod.cycling
        vmin, vmax, vnom = design.voltage_min_V, design.voltage_max_V, design.nominal_voltage_V
        add("voltage", (vnom < vmin) | (vnom > vmax), lambda i: (
            f"nominal voltage {_at(vnom, i):.4g} V is outside the cell's limits "
            f"{_at(vmin, i):.4g}-{_at(vmax, i):.4g} V"))
        if c_cyc is not None and a_cyc is not None and c_cyc.reference == a_cyc.reference:
            lo = c_cyc.voltage_min - a_cyc.voltage_max
            hi = c_cyc.voltage_max - a_cyc.voltage_min
            where = (f"{cath.name} voltage_min/max ({cath.facts['voltage_max'].source}) against "
                     f"{anod.name} ({anod.facts['voltage_max'].source})")
            add("voltage", (vmin < lo - margin - 1e-12) | (vmax > hi + margin + 1e-12),
                lambda i: (f"cell limits {_at(vmin, i):.4g}-{_at(vmax, i):.4g} V go beyond the "
                           f"couple's window {lo:.4g}-{hi:.4g} V ({where}; rule_voltage_margin_V "
                           f"{_at(margin, i):g})"))
        # ---- what the catalogue cannot describe
        notes: list[str] = []
        for side, mat in (("cathode", cath), ("anode", anod)):
            given = (getattr(spec, f"{side}_first_charge_mAh_g"),
                     getattr(spec, f"{side}_first_cycle_efficiency"))
            if mat.cycling is None and None in given:
                notes.append(
                    f"the catalogue has no first-charge data for {mat.name}: its practical "
                    "capacity stands for the first charge and its first-cycle efficiency for 1; "
                    f"give {side}_first_charge_mAh_g and {side}_first_cycle_efficiency")
            if mat.recipe is None:
                notes.append(
                    f"the catalogue has no usual coating for {mat.name}: its porosity, loading "
                    f"and thickness are not checked (give rule_{side}_loading_min/max and "
                    f"rule_{side}_thickness_min/max)")
        if not (np.all(np.isfinite(vmin[ok])) and np.all(np.isfinite(vmax[ok]))):
            notes.append(f"the catalogue has no voltage window for {cath.name} against "
                         f"{anod.name}: give voltage_min_V and voltage_max_V (a pack needs them)")
        refs = {m.facts["voltage_reference"].value for m in (cath, anod)
                if "voltage_reference" in m.facts}
        if "SHE" in refs:
            notes.append("an aqueous couple sized with the construction of a non-aqueous cell "
                         "(foils, separator, organic electrolyte): check every inactive input")
        for note in notes:
            add("catalogue", True, _constant(note))
    return DesignReview(design, shape, errors, tuple(hits))
