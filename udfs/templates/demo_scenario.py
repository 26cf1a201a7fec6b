"""The demo scenario -- demo data: an invented company, product and prices.

"Brackenridge Cell Works" and its "Tern 55" pouch cell do not exist; the prices
come from ``data/demo_prices.csv`` and are invented too. The cell spec uses
typical figures of the trade (see :class:`udfs.core.sizing.CellSpec`); what it
leaves blank comes from the catalogue (first-charge capacities, first-cycle
efficiencies, the couple's voltages), the chemistries' electrode recipes
(fractions, porosities, binders, foils) and the pouch preset (seals, laminate,
tabs), so the pouch's and the tabs' masses follow from their size.

>>> demo_spec().cathode, demo_spec().cell_format
('NMC811', 'pouch')
"""

from __future__ import annotations

from udfs.core.sizing import CellSpec

__all__ = ["DEMO_COMPANY", "DEMO_LABEL", "DEMO_PRODUCT", "demo_spec"]

DEMO_LABEL = "demo data: invented company, product and prices"
DEMO_COMPANY = "Brackenridge Cell Works (invented)"
DEMO_PRODUCT = "Tern 55 - NMC811/graphite stacked pouch cell, about 55 Ah (invented)"


def demo_spec() -> CellSpec:
    """The demo cell: NMC811 against graphite, a 55 Ah stacked pouch (demo data).

    >>> demo_spec().target_capacity_Ah, demo_spec().np_ratio
    (55.0, 1.1)
    """
    return CellSpec(
        cathode="NMC811",
        anode="graphite",
        cell_format="pouch",
        sizing_mode="target",
        target_capacity_Ah=55.0,
        cathode_loading_mg_cm2=22.0,  # common practice (18-25 mg/cm2 per side, energy cells)
        np_ratio=1.1,  # common practice (first-charge basis)
        width_mm=100.0,  # invented demo footprint (the cathode sheet)
        height_mm=300.0,  # invented demo footprint
        electrode_scrap=0.05,  # from memory
        cell_yield=0.95,  # from memory
    )
