"""The demo scenario -- demo data: an invented company, product and prices.

"Brackenridge Cell Works" and its "Tern 55" pouch cell do not exist; the prices
come from ``data/demo_prices.csv`` and are invented too. The cell spec uses
typical figures of the trade (see :class:`udfs.core.sizing.CellSpec`).

>>> demo_spec().cathode
'NMC811'
"""

from __future__ import annotations

from udfs.core.sizing import CellSpec

__all__ = ["DEMO_COMPANY", "DEMO_LABEL", "DEMO_PRODUCT", "demo_spec"]

DEMO_LABEL = "demo data: invented company, product and prices"
DEMO_COMPANY = "Brackenridge Cell Works (invented)"
DEMO_PRODUCT = "Tern 55 - NMC811/graphite stacked pouch cell, about 55 Ah (invented)"


def demo_spec() -> CellSpec:
    """The demo cell: NMC811 against graphite, 55 Ah target (demo data).

    >>> demo_spec().target_capacity_Ah
    55.0
    """
    return CellSpec(
        cathode="NMC811",
        anode="graphite",
        target_capacity_Ah=55.0,
        cathode_loading_mg_cm2=22.0,  # common practice (18-25 mg/cm2 per side, energy cells)
        cathode_active_fraction=0.96,  # common practice
        cathode_binder_fraction=0.02,  # common practice
        anode_active_fraction=0.96,  # common practice
        anode_binder_fraction=0.03,  # common practice
        np_ratio=1.1,  # common practice
        first_cycle_loss=0.08,  # from memory
        tab_mass_g=2.0,  # from memory
        housing="pouch laminate",
        housing_mass_g=15.0,  # from memory
        width_mm=100.0,  # invented demo footprint
        height_mm=300.0,  # invented demo footprint
        electrode_scrap=0.05,  # from memory
        cell_yield=0.95,  # from memory
    )
