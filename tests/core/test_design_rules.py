"""Design rules (udfs.core.design_rules): each rule fires on its own case,
names its bound and the bound's source, and is silent on a plain design;
errors (the model cannot compute) are per scenario and set apart from warnings.

The designs are round-number cells (common practice magnitudes); the bounds
are the table's defaults (sizing_table.py, each with its basis) and the
catalogue's recipes (data/active_materials.csv, each row with its source).
"""

from __future__ import annotations

import numpy as np
import pytest

from udfs.core import catalogue
from udfs.core.design_rules import ALL_PASS, RULES, review_design
from udfs.core.sizing import CellSpec

BASE = dict(cathode="NMC811", anode="graphite", target_capacity_Ah=50.0,
            cathode_loading_mg_cm2=22.0)


def _review(**kw: object) -> list[str]:
    r = review_design(CellSpec(**{**BASE, **kw}))  # type: ignore[arg-type]
    return [f"{f.rule}|{f.level}|{f.message}" for f in r.findings()]


def test_a_plain_design_passes() -> None:
    r = review_design(CellSpec(**BASE))  # type: ignore[arg-type]
    assert r.summary() == [ALL_PASS] and bool(r.passed())
    for fmt in ("cylindrical", "prismatic"):
        assert review_design(CellSpec(**{**BASE, "cell_format": fmt, "target_capacity_Ah":  # type: ignore[arg-type]
                                         5.0 if fmt == "cylindrical" else 200.0})
                             ).summary() == [ALL_PASS]


def test_np_below_one_on_the_first_charge_basis() -> None:
    # issue 11: N/P 0.5 gave 336 Wh/kg with "all checks pass"
    got = _review(np_ratio=0.5)
    plating = [g for g in got if g.startswith("plating|warning|")]
    assert len(plating) == 1
    assert "N/P 0.5 on the first-charge basis is below 1 (rule_np_min" in plating[0]
    assert "lithium plating" in plating[0] and "the anode's" in plating[0]
    assert not [g for g in _review(np_ratio=1.0) if g.startswith("plating")]  # the bound itself
    # the bound is an input
    assert [g for g in _review(np_ratio=1.05, rule_np_min=1.1) if g.startswith("plating")]


def test_electrolyte_below_the_pore_volume() -> None:
    # issue 11: fill 0.3 of the pore volume gave 352.6 Wh/kg with "all checks pass"
    got = _review(electrolyte_fill=0.3)
    assert any(g.startswith("dry_pores|warning|electrolyte fill 0.3 x the pore volume is below 1")
               for g in got)
    assert not any(g.startswith("dry_pores") for g in _review(electrolyte_fill=0.3,
                                                              rule_fill_min=0.25))


def test_porosity_loading_and_thickness_outside_the_recipe() -> None:
    # issue 11: 80 mg/cm2 at 2 % porosity gave 318 Wh/kg with "all checks pass"
    got = _review(cathode_loading_mg_cm2=80.0, cathode_porosity=0.02)
    rules = {g.split("|")[0] for g in got}
    assert {"porosity", "loading", "thickness"} <= rules
    nmc = catalogue.material("NMC811")
    src = nmc.facts["electrode_loading_max"].source
    loading = next(g for g in got if g.startswith("loading|") and "cathode" in g)
    assert "outside the usual 15-30 mg/cm2" in loading and src in loading  # data/ NMC811 range
    # user bounds replace the recipe's
    assert not any(g.startswith("loading|warning|cathode") for g in _review(
        cathode_loading_mg_cm2=80.0, rule_cathode_loading_max=90.0))


def test_voltages_outside_the_couple_window() -> None:
    # NMC811 vs graphite in data/: window 3.0 - 0.5 = 2.5 V to 4.3 - 0.05 = 4.25 V
    got = _review(voltage_max_V=4.4)
    assert any("go beyond the couple's window 2.5-4.25 V" in g for g in got)
    assert not any(g.startswith("voltage") for g in _review(voltage_max_V=4.4,
                                                            rule_voltage_margin_V=0.2))
    got = _review(nominal_voltage_V=4.5)
    assert any("nominal voltage 4.5 V is outside the cell's limits" in g for g in got)


def test_what_the_catalogue_cannot_describe_is_said() -> None:
    got = _review(anode="silicon", anode_active_fraction=0.8, anode_binder_fraction=0.1,
                  anode_porosity=0.4, anode_binder="PVDF", anode_carbon="carbon black",
                  anode_foil="copper foil", np_ratio=1.2)
    text = " ".join(got)
    assert "no first-charge data for silicon" in text and "no usual coating for silicon" in text


def test_errors_are_per_scenario_and_apart_from_warnings() -> None:
    r = review_design(CellSpec(**{**BASE, "np_ratio": [1.1, 0.5, -1.0],  # type: ignore[arg-type]
                                  "sizing_mode": "target"}))
    assert r.summary(0) == [ALL_PASS]
    assert r.summary(1)[0].startswith("warning: N/P 0.5")
    assert r.summary(2) == ["error: np_ratio must be > 0 (got -1)"]
    assert r.failed().tolist() == [False, False, True]
    assert r.warned().tolist() == [False, True, False]
    assert r.passed().tolist() == [True, False, False]
    assert np.isnan(r.design.capacity_Ah[2]) and np.isfinite(r.design.capacity_Ah[1])


def test_envelope_errors_name_the_dimension() -> None:
    r = review_design(CellSpec("NMC811", "graphite", sizing_mode="envelope",
                               cathode_loading_mg_cm2=22.0, cell_thickness_mm=[10.0, 0.3]))
    assert r.summary(0) == [ALL_PASS]
    assert r.summary(1)[0].startswith("error: cell_thickness_mm must be > ")


def test_every_rule_is_declared_with_its_bounds() -> None:
    from udfs.core.sizing_table import CELL_SIZING

    keys = [r.key for r in RULES]
    assert len(keys) == len(set(keys))
    for rule in RULES:
        assert rule.level in ("error", "warning")
        for bound in rule.bounds:
            inp = CELL_SIZING.get(bound)
            assert inp.source, bound  # sourced, common practice or catalogue


@pytest.mark.parametrize("kw", [dict(np_ratio=0.5), dict(electrolyte_fill=0.3),
                                dict(cathode_loading_mg_cm2=80.0, cathode_porosity=0.02)])
def test_each_issue_case_is_no_longer_all_pass(kw: dict[str, object]) -> None:
    assert review_design(CellSpec(**{**BASE, **kw})).summary() != [ALL_PASS]  # type: ignore[arg-type]
