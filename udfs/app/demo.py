"""The demo scenario -- demo data: invented company, product and prices.

"Brackenridge Cell Works" and its "Tern 55" pouch cell do not exist; the prices
come from ``data/demo_prices.csv`` and are invented too. The cell spec uses
typical figures of the trade (see :class:`udfs.core.sizing.CellSpec`).

>>> from udfs.core.sizing import design_cell
>>> text = format_bom(design_cell(demo_spec()))
>>> "demo data: invented company, product and prices" in text
True
"""

from __future__ import annotations

import os
import textwrap

import numpy as np

from udfs.core.caution import CAUTION
from udfs.core.errors import InputError
from udfs.core.sizing import CellDesign
from udfs.templates.demo_scenario import DEMO_COMPANY, DEMO_LABEL, DEMO_PRODUCT, demo_spec

__all__ = [
    "DEMO_COMPANY",
    "DEMO_LABEL",
    "DEMO_PRODUCT",
    "demo_spec",
    "format_bom",
    "fresh_demo_name",
]



def _value(a: np.ndarray, index: int | tuple[int, ...] | None) -> float:
    if a.ndim == 0:
        return float(a)
    if index is None:
        if a.size != 1:
            raise InputError(
                "index", None, detail=f"the design holds {a.size} scenarios; pick one with index"
            )
        return float(a.reshape(-1)[0])
    try:
        return float(a[index])
    except (IndexError, TypeError, ValueError):
        raise InputError("index", index, f"an index into shape {a.shape}") from None


def format_bom(
    design: CellDesign, index: int | tuple[int, ...] | None = None, title: str | None = None
) -> str:
    """A readable bill of materials of one scenario of ``design``.

    Columns: component, mass (g), share of cell mass (%), cost per good cell
    (USD, scrap and yield included), share of cost (%); then totals, capacity,
    energy, Wh/kg, Wh/L, cost per cell and per kWh, and a caution.
    """
    if not isinstance(design, CellDesign):
        raise InputError("design", design, "a CellDesign from design_cell")
    masses = {k: _value(v, index) for k, v in design.components.items()}
    costs = {k: _value(v, index) for k, v in design.component_costs_USD.items()}
    mass_total = _value(design.cell_mass_g, index)
    cost_total = _value(design.cost_per_cell_USD, index)

    def num(name: str) -> float:
        return _value(getattr(design, name), index)

    width = max(len("Component"), *(len(k) for k in masses))
    head = f"{'Component':<{width}}  {'Mass g':>9}  {'Share %':>7}  {'Cost USD':>9}  {'Cost %':>6}"
    rule = "-" * len(head)
    if title is None:
        lines = [f"Bill of materials ({DEMO_LABEL})", f"{DEMO_COMPANY}: {DEMO_PRODUCT}"]
    else:
        lines = [title]
    fmt = design.cell_format if design.formats is None else str(
        np.asarray(design.formats).reshape(-1)[0] if index is None else design.formats[index])
    if np.isfinite(num("cathode_sheets")):
        build = (f"stacked: {num('cathode_sheets'):.0f} cathode and {num('anode_sheets'):.0f} "
                 f"anode sheets, {num('separator_layers'):.0f} separator layers")
        layers = f"Stack thickness        {num('stack_thickness_um') / 1000.0:10.2f} mm"
    else:
        build = (f"wound: {num('turns'):.1f} turns, cathode strip {num('cathode_length_mm'):.0f} "
                 f"x {num('cathode_width_mm'):.1f} mm")
        layers = f"Roll thickness         {num('roll_thickness_mm'):10.2f} mm"
    if np.isfinite(num("cell_diameter_mm")):
        size = f"{num('cell_diameter_mm'):.1f} mm diameter x {num('cell_height_mm'):.1f} mm"
    else:
        size = (f"{num('cell_width_mm'):.1f} x {num('cell_height_mm'):.1f} x "
                f"{num('cell_thickness_mm'):.2f} mm")
    lines += [
        f"{design.cathode} / {design.anode}, {fmt} cell ({design.sizing_mode} mode), {build}",
        f"Outer size {size}",
        "",
        head,
        rule,
    ]
    for k in masses:
        lines.append(
            f"{k:<{width}}  {masses[k]:>9.2f}  {100 * masses[k] / mass_total:>7.2f}  "
            f"{costs[k]:>9.3f}  {100 * costs[k] / cost_total:>6.2f}"
        )
    lines += [
        rule,
        f"{'Total':<{width}}  {mass_total:>9.2f}  {100.0:>7.2f}  {cost_total:>9.3f}  {100.0:>6.2f}",
        "",
        f"Nominal voltage        {num('nominal_voltage_V'):10.3f} V",
        f"Capacity               {num('capacity_Ah'):10.2f} Ah "
        + (f"(target {num('target_capacity_Ah'):.2f} Ah)"
           if np.isfinite(num("target_capacity_Ah")) else "(envelope mode: what fits)"),
        f"Energy                 {num('energy_Wh'):10.1f} Wh",
        f"Cell mass              {mass_total:10.1f} g",
        f"Cell volume            {num('cell_volume_cm3'):10.1f} cm3",
        f"Specific energy        {num('specific_energy_Wh_kg'):10.1f} Wh/kg",
        f"Energy density         {num('energy_density_Wh_L'):10.1f} Wh/L",
        f"Cathode loading        {num('cathode_loading_mg_cm2'):10.2f} mg/cm2 per side, "
        f"{num('cathode_coating_thickness_um'):.1f} um",
        f"Anode loading          {num('anode_loading_mg_cm2'):10.2f} mg/cm2 per side, "
        f"{num('anode_coating_thickness_um'):.1f} um",
        layers,
        f"Cost per good cell     {cost_total:10.2f} USD",
        f"Cost per kWh           {num('cost_per_kWh_USD'):10.1f} USD/kWh",
        "",
        *textwrap.wrap(
            "Costs are materials only, per good cell: electrode materials (coatings and foils) "
            f"divided by (1 - scrap {num('electrode_scrap'):.1%}), every component divided by "
            f"the cell yield ({num('cell_yield'):.1%}).",
            88,
        ),
        "",
        *textwrap.wrap(CAUTION, 88),
    ]
    return "\n".join(lines)


def fresh_demo_name(stem: str = "cellwright-demo") -> str:
    """The default demo file: ``cellwright-demo.xlsx``, or the first free
    ``cellwright-demo-N.xlsx`` when earlier demos are there (never overwritten)."""
    name = f"{stem}.xlsx"
    n = 1
    while os.path.exists(name):
        n += 1
        name = f"{stem}-{n}.xlsx"
    return name
