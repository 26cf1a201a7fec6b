"""The cell-sizing workbook's checks: every input refused in its check cell as
the core refuses it, inputs that the chosen format and mode do not read
greyed (and refused when given where the core refuses them), the design rules
(``warn_...``) and errors (``err_...``) firing exactly where the core's
:func:`udfs.core.design_rules.review_design` does, names and aliases resolved
everywhere, and prices read in every unit and currency the core reads.

The input values here are test cases (past a bound, an implausible design
named by issue 11), not reference values; prices are the demo list's
(invented demo data) restated in other units.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import pytest
from openpyxl import Workbook

from udfs.app.demo import demo_spec
from udfs.core import catalogue, prices
from udfs.core.cell_formats import CORE_TYPES, FORMATS, GEOMETRY_FIELDS, MODES, used_fields
from udfs.core.design_rules import ALL_PASS, review_design
from udfs.core.errors import CellwrightError
from udfs.core.input_tables import table_for
from udfs.core.procurement import order_materials
from udfs.core.sizing import CellSpec, design_cell
from udfs.core.sizing_table import CELL_SIZING, COMPONENTS
from udfs.core.sizing_values import spec_from_values
from udfs.core.validate import Domain, FreeText, Names, Options
from udfs.engine.model import Evaluation, WorkbookModel
from udfs.sheet.error_values import SheetError
from udfs.templates.sizing_checks import RULES
from udfs.templates.sizing_lists import ELEMENTS
from udfs.xlsx.refs import CellRef

REL = 1e-9
Sizing = tuple[Workbook, WorkbookModel]


def _close(got: Any, want: Any, what: str) -> None:
    assert isinstance(got, (int, float)) and not isinstance(got, bool), f"{what}: {got!r}"
    assert math.isclose(float(got), float(want), rel_tol=REL), f"{what}: {got!r} != {want!r}"


def _cell(wb: Workbook, name: str, column: int) -> CellRef:
    sheet, ref = next(iter(wb.defined_names[name].destinations))
    return CellRef(sheet, int(ref.split("$")[-1]), column)


def _fired(ev: Evaluation) -> dict[str, str]:
    """The rules of the workbook that fire: name -> message."""
    out = {}
    for rule in RULES:
        value = ev.value(rule.name)
        assert isinstance(value, str), (rule.name, value)  # never an error value
        if value:
            out[rule.name] = value
    return out


def _core_keys(spec: CellSpec) -> set[str]:
    return {f.rule for f in review_design(spec).findings()}


def _workbook_keys(fired: dict[str, str]) -> set[str]:
    """The core's rule key of each workbook rule that fires."""
    out = set()
    for name in fired:
        if name.startswith("err_"):
            out.add("cannot_compute")
        else:
            key = name.removeprefix("warn_")
            out.add(key.split("_")[0] if key.startswith(("porosity", "loading", "thickness",
                                                           "voltage")) else key)
    return out


# ----------------------------------------------------------------- the demo and the rules


def test_the_table_still_recognises_the_template(sizing: Sizing) -> None:
    wb, _ = sizing
    assert table_for(wb.defined_names) is CELL_SIZING  # the `calc --set` route checks with it


def test_every_rule_is_quiet_on_the_demo(sizing: Sizing, overrides: Any) -> None:
    _, model = sizing
    ev = model.evaluate(overrides(demo_spec()))
    assert _fired(ev) == {}
    assert ev.value("out_checks") == ALL_PASS
    assert review_design(demo_spec()).summary() == [ALL_PASS]


@pytest.mark.parametrize("changes, rule, words", [
    # issue 11: electrolyte fill 0.3 of the pore volume
    ({"electrolyte_fill": 0.3}, "warn_dry_pores", ("0.3", "in_rule_fill_min", "common practice")),
    # issue 11: loading 80 mg/cm2 at 2 % porosity
    ({"cathode_loading_mg_cm2": 80.0, "cathode_porosity": 0.02}, "warn_loading_cathode",
     ("80", "15-30", "electrode_loading_min")),
    ({"cathode_loading_mg_cm2": 80.0, "cathode_porosity": 0.02}, "warn_porosity_cathode",
     ("0.02", "in_rule_porosity_band")),
    # issue 11: N/P 0.5 (the anode cannot take the cathode's lithium)
    ({"np_ratio": 0.5}, "warn_plating", ("N/P 0.5", "first-charge basis", "in_rule_np_min",
                                         "the capacity is the anode's")),
    ({"voltage_min_V": 2.0}, "warn_voltage_window", ("2-4.25", "2.5-4.25")),
    ({"nominal_voltage_V": 4.5}, "warn_voltage_nominal", ("4.5", "2.5-4.25")),
], ids=["fill-0.3", "loading-80", "porosity-2%", "np-0.5", "window", "nominal"])
def test_each_design_rule_fires_on_its_case_as_in_the_core(
    sizing: Sizing, overrides: Any, changes: dict[str, Any], rule: str, words: tuple[str, ...]
) -> None:
    _, model = sizing
    spec = dataclasses.replace(demo_spec(), **changes)
    ev = model.evaluate(overrides(spec))
    fired = _fired(ev)
    assert rule in fired, fired
    assert all(w in fired[rule] for w in words), fired[rule]
    assert not [n for n in fired if n.startswith("err_")], fired  # warnings, not errors
    assert _workbook_keys(fired) == _core_keys(spec)  # the same rules as the core's review
    assert ev.value("out_checks") != ALL_PASS
    _close(ev.value("out_capacity_Ah"), design_cell(spec).capacity_Ah, "capacity")


def test_below_np_one_the_capacity_is_the_anodes(
    sizing: Sizing, overrides: Any
) -> None:
    wb, model = sizing
    spec = dataclasses.replace(demo_spec(), np_ratio=0.5)
    ev = model.evaluate(overrides(spec))
    d = design_cell(spec)
    assert float(d.anode_limited) == 1.0

    def electrodes(label: str, column: int = 3) -> float:
        for row in wb["Electrodes"].iter_rows(min_col=2, max_col=2):
            if row[0].value == label:
                value = ev.value(CellRef("Electrodes", row[0].row, column))
                assert isinstance(value, float), (label, value)
                return value
        raise KeyError(label)

    qa = electrodes("Areal capacity per side, first-charge basis", 4)
    eta_a = electrodes("First-cycle efficiency", 4)
    assert electrodes("Anode limits the capacity") == 1.0
    # the anode's: its first-charge areal capacity times its first-cycle efficiency
    _close(electrodes("Reversible areal capacity, Q_rev"), qa * eta_a, "Q_rev")
    _close(ev.value("out_capacity_Ah"), float(ev.value("geo_cathode_coated_area_cm2"))  # type: ignore[arg-type]
           * qa * eta_a / 1000, "capacity by hand")
    _close(ev.value("out_capacity_Ah"), d.capacity_Ah, "capacity")


@pytest.mark.parametrize("changes, rule, words", [
    ({"sizing_mode": "envelope", "target_capacity_Ah": None, "width_mm": None,
      "height_mm": None, "cell_thickness_mm": 0.5}, "err_fit", ("in_cell_thickness",)),
    ({"anode_first_cycle_efficiency": 0.05}, "err_capacity", ("no reversible capacity",)),
    ({"cathode_active_fraction": 0.9, "cathode_binder_fraction": 0.2}, "err_fractions",
     ("cathode",)),
    ({"cell_format": "cylindrical"}, "err_inputs", ("in_width", "leave blank")),
    ({"prices": {"NMC811": (26.0, "USD/L")}}, "err_prices", ("Cathode active material",)),
], ids=["too-thin", "no-capacity", "fractions", "width-on-a-cylinder", "price-per-litre"])
def test_each_error_fires_where_the_core_refuses(
    sizing: Sizing, overrides: Any, changes: dict[str, Any], rule: str, words: tuple[str, ...]
) -> None:
    _, model = sizing
    spec = dataclasses.replace(demo_spec(), **changes)
    with pytest.raises(CellwrightError):
        design_cell(spec)
    values = overrides(dataclasses.replace(spec, prices=None))
    if spec.prices:  # a unit the workbook's table does not take: set as the cells would hold it
        values.update({"in_price_cathode_active": 26.0, "in_price_unit_cathode_active": "USD/L"})
    ev = model.evaluate(values)
    fired = _fired(ev)
    assert rule in fired and all(w in fired[rule] for w in words), fired
    assert "error(s)" in str(ev.value("out_checks"))


# ----------------------------------------------------------------- formats: inputs that apply


@pytest.mark.parametrize("fmt, mode, core", [
    (f, m, c) for f in FORMATS for m in MODES
    for c in (CORE_TYPES if f == "prismatic" else CORE_TYPES[:1])
])
def test_dimensions_not_read_are_greyed_and_presets_shown(
    sizing: Sizing, fmt: str, mode: str, core: str
) -> None:
    wb, model = sizing
    ev = model.evaluate({"in_format": fmt, "in_sizing_mode": mode, "in_prismatic_core": core})
    used = set(used_fields(fmt, mode, core)) | ({"cores"} if fmt == "prismatic" else set())
    for fld in (*GEOMETRY_FIELDS, "cores"):
        name = CELL_SIZING.get(fld).name
        shown = ev.value(_cell(wb, name, 7))  # column G: the value in use
        if fld in used:
            assert isinstance(shown, float), (name, shown)  # the preset (or the laminate)
        else:
            assert isinstance(shown, str) and shown.startswith("not used"), (name, shown)
    assert ev.value("out_checks") == ALL_PASS or fmt != "pouch"
    assert not [str(r) for r, v in ev.values.items() if isinstance(v, SheetError)]


def test_a_dimension_given_where_the_core_refuses_it(sizing: Sizing) -> None:
    wb, model = sizing
    ev = model.evaluate({"in_format": "cylindrical", "in_width": 100.0, "in_cell_height": 65.0})
    assert str(ev.value(_cell(wb, "in_width", 6))).startswith("leave blank")
    assert "computes it" in str(ev.value(_cell(wb, "in_cell_height", 6)))
    assert "in_width" in str(ev.value("err_inputs"))
    with pytest.raises(CellwrightError, match="width_mm"):
        design_cell(CellSpec("NMC811", "graphite", cell_format="cylindrical", width_mm=100.0,
                             target_capacity_Ah=5.0, cathode_loading_mg_cm2=20.0))


def test_presets_come_from_the_format_preset_function(sizing: Sizing) -> None:
    from udfs.core.cell_formats import PRESETS

    wb, model = sizing
    ev = model.evaluate({"in_format": "cylindrical", "in_cylinder_class": "46 mm",
                         "in_sizing_mode": "envelope"})
    for fld, preset in PRESETS["cylindrical 46 mm"].items():
        assert ev.value(_cell(wb, CELL_SIZING.get(fld).name, 7)) == preset.value, fld
    grey = model.evaluate({"in_tab_mass": 2.0})  # given tab mass: the tab size is not read
    assert str(grey.value(_cell(wb, "in_tab_width", 7))).startswith("not used")


# ----------------------------------------------------------------- input checks and names
# One declaration per input (udfs.core.sizing_table): the workbook's check cells test the
# same domain as the core, and a name is resolved once, beside its input.


def _bad_values(name: str) -> list[Any]:
    """Values the input's domain refuses: past each bound, text for a number, an
    unknown word."""
    d = CELL_SIZING.get(name).domain
    if isinstance(d, Domain):
        out: list[Any] = ["abc"]
        if d.lower is not None:
            out.append(d.lower if d.lower_open else d.lower - 1.0)
        if d.upper is not None:
            out.append(d.upper if d.upper_open else d.upper + 1.0)
        return out
    if isinstance(d, Names):
        return ["no such material"]
    assert isinstance(d, Options)
    return ["sideways"]


@pytest.mark.parametrize(
    "name", [i.name for i in CELL_SIZING if not isinstance(i.domain, FreeText)]
)
def test_a_refused_value_shows_in_its_check_cell_and_the_summary(
    sizing: Sizing, name: str
) -> None:
    wb, model = sizing
    inp = CELL_SIZING.get(name)
    for value in _bad_values(name):
        assert CELL_SIZING.reason(name, value) is not None  # the core's check refuses it ...
        ev = model.evaluate({name: value})
        text = ev.value(_cell(wb, name, 6))
        if isinstance(inp.domain, Names):  # ... the cell beside shows the catalogue's error
            assert isinstance(ev.value(_cell(wb, name, 4)), SheetError)
        assert isinstance(text, str) and text.endswith(f"must be {inp.allowed}"), (value, text)
        assert name in str(ev.value("err_inputs"))  # ... and the workbook says so
        assert ev.value("out_checks") != ALL_PASS
    assert model.evaluate().value(_cell(wb, name, 6)) == "ok"


def test_aliases_work_in_every_input_and_lookup(sizing: Sizing) -> None:
    # aliases and spellings the catalogue accepts (data/*.csv); LFP is used in our README
    values = {"in_cathode": "LFP", "in_anode": " Graphite", "in_cathode_binder": "pvdf",
              "in_separator": "pe separator", "in_cathode_foil": "Aluminium Foil",
              "in_housing": "Pouch Laminate"}
    _, model = sizing
    ev = model.evaluate(values)
    assert ev.value("mat_cathode") == "LiFePO4" and ev.value("mat_separator") == "PE separator"
    assert ev.value("out_checks") == ALL_PASS
    bad = [str(ref) for ref, v in ev.values.items() if isinstance(v, SheetError)]
    assert not bad, bad[:10]
    d = design_cell(spec_from_values(values))
    o = order_materials(d, order_MWh=100.0)
    _close(ev.value("out_cost_per_kWh_USD"), d.cost_per_kWh_USD, "cost per kWh")
    _close(ev.value("out_Wh_kg"), d.specific_energy_Wh_kg, "Wh/kg")
    for el in ELEMENTS:
        if float(o.metals_kg.get(el, 0.0)):
            _close(ev.value(f"out_{el}_kg"), o.metals_kg[el], f"{el} kg")
    assert float(o.metals_kg["Fe"]) > 0  # LiFePO4's iron reached the metals


def test_an_unknown_name_is_an_error_beside_its_input(sizing: Sizing) -> None:
    _, model = sizing
    for name in ("LiFePO5", "graphite"):  # unknown; a name of the wrong kind
        ev = model.evaluate({"in_cathode": name})
        assert isinstance(ev.value("mat_cathode"), SheetError)
        assert isinstance(ev.value("out_cost_per_kWh_USD"), SheetError)  # no number from it
        assert "in_cathode" in str(ev.value("err_inputs"))
        assert ev.value("out_checks") != ALL_PASS


# ----------------------------------------------------------------- prices in any unit


def _restated(d: Any) -> dict[str, tuple[float, str]]:
    """The demo price of each component restated in another unit or currency:
    (value, unit) per component key. Facts linking bases come from the design
    (mass per area, density, mass of a piece); rates from data/exchange_rates.csv
    (invented demo rates), read through the core's public API."""
    eur = prices.exchange_rates().rate("EUR")[0]
    cny = prices.exchange_rates().rate("CNY")[0]
    names = list(d.components)
    out = {}
    restate = {
        "cathode_active": lambda usd_kg, m, a: (usd_kg * 1000.0, "USD/t"),
        "cathode_binder": lambda usd_kg, m, a: (usd_kg / 1000.0, "USD/g"),
        "cathode_carbon": lambda usd_kg, m, a: (usd_kg / eur, "EUR/kg"),
        "cathode_foil": lambda usd_kg, m, a: (usd_kg * m / a, "USD/m2"),
        "anode_active": lambda usd_kg, m, a: (usd_kg * 1000.0 / cny, "CNY/t"),
        "anode_binder": lambda usd_kg, m, a: (usd_kg / eur * 1000.0, "EUR/t"),
        "anode_binder2": lambda usd_kg, m, a: (usd_kg * 0.45359237, "USD/lb"),
        "anode_foil": lambda usd_kg, m, a: (usd_kg * m / a / 1e4, "USD/cm^2"),
        "separator": lambda usd_kg, m, a: (usd_kg * m / a / eur, "EUR/m^2"),
        "electrolyte": lambda usd_kg, m, a: (usd_kg * 1.28, "USD/L"),
        "cathode_tab": lambda usd_kg, m, a: (usd_kg * m, "USD/each"),
        "anode_tab": lambda usd_kg, m, a: (usd_kg * m / eur, "EUR/pc"),
        "housing": lambda usd_kg, m, a: (usd_kg * m, "USD/each"),
    }
    assert catalogue.material("LiPF6 1M in EC:DMC").number("density") == 1.28  # data/
    comps = [c for c in COMPONENTS if not (c.optional and c.key == "cathode_binder2")]
    assert len(comps) == len(names)
    for comp, name in zip(comps, names, strict=True):
        if comp.key not in restate:  # the anode's carbon black: the cathode's price applies
            continue
        material = d.component_materials[name]
        fact = catalogue.price(material)
        assert fact.unit in ("USD/kg", "USD/m^2")
        mass = float(d.components[name])
        area = float(d.component_areas_cm2.get(name, math.nan)) / 1e4
        usd_kg = float(fact.value) if fact.unit == "USD/kg" else float(fact.value) * area / (
            mass / 1000.0)
        out[comp.key] = restate[comp.key](usd_kg, mass / 1000.0, area)
    return out


def test_demo_prices_in_every_unit_and_currency_give_the_same_cost(
    sizing: Sizing, overrides: Any
) -> None:
    _, model = sizing
    spec = demo_spec()
    d = design_cell(spec)
    restated = _restated(d)
    units = {unit for _, unit in restated.values()}
    assert {"USD/t", "USD/g", "USD/m2", "USD/L", "USD/each", "EUR/kg", "CNY/t"} <= units
    values = overrides(spec)
    for comp in COMPONENTS:
        if comp.key in restated:
            value, unit = restated[comp.key]
            values[comp.price], values[comp.price_unit] = value, unit
    # the material inputs the demo leaves to the recipe are named, so their prices apply
    values.update({"in_cathode_binder": "PVDF", "in_anode_binder": "CMC",
                   "in_anode_binder2": "SBR", "in_anode_binder2_share": 0.5,
                   "in_cathode_carbon": "carbon black", "in_anode_carbon": "carbon black",
                   "in_cathode_foil": "aluminium foil", "in_anode_foil": "copper foil",
                   "in_electrolyte": "LiPF6 1M in EC:DMC", "in_anode_tab": "nickel tab",
                   "in_housing": "pouch laminate"})
    ev = model.evaluate(values)
    assert ev.value("err_prices") == ""
    _close(ev.value("out_cost_per_kWh_USD"), d.cost_per_kWh_USD, "cost per kWh")
    _close(ev.value("out_cost_per_cell_USD"), d.cost_per_cell_USD, "cost per cell")
    # the core reads the same quotes to the same cost
    quoted = dataclasses.replace(spec, prices={
        d.component_materials[n]: restated[c.key] for c, n in zip(
            [c for c in COMPONENTS if c.key != "cathode_binder2"], d.components, strict=True)
        if c.key in restated
    })
    _close(float(design_cell(quoted).cost_per_kWh_USD), d.cost_per_kWh_USD, "core, restated")
    # a price typed on one row prices that material on every row that uses it (as the core)
    tabs = model.evaluate({**overrides(dataclasses.replace(spec, anode_tab="aluminium tab")),
                           "in_price_cathode_tab": 20.0, "in_price_unit_cathode_tab": "USD/kg"})
    core = design_cell(dataclasses.replace(spec, anode_tab="aluminium tab",
                                           prices={"aluminium tab": 20.0}))
    _close(tabs.value("out_cost_per_kWh_USD"), core.cost_per_kWh_USD, "shared price")


def test_prices_that_cannot_be_used_are_errors(sizing: Sizing, overrides: Any) -> None:
    _, model = sizing
    base = overrides(demo_spec())
    for extra, words in (
        ({"in_price_separator": 1.0, "in_price_unit_separator": "USD/ton"}, "cannot be turned"),
        ({"in_price_separator": 1.0}, "give the unit"),
        ({"in_price_cathode_foil": 1.0, "in_price_unit_cathode_foil": "USD/kg"},
         "recipe's material"),
        ({"in_cathode_tab": "aluminium tab", "in_anode_tab": "aluminium tab",
          "in_price_cathode_tab": 20.0, "in_price_unit_cathode_tab": "USD/kg",
          "in_price_anode_tab": 21.0, "in_price_unit_anode_tab": "USD/kg"}, "two different"),
    ):
        ev = model.evaluate({**base, **extra})
        assert words in str(ev.value("err_prices")), (extra, ev.value("err_prices"))
        assert ev.value("out_checks") != ALL_PASS
