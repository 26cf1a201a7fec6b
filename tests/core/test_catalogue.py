"""The reference data: every row sourced, every reaction balanced, required ids present."""

from __future__ import annotations

import csv
import re
from pathlib import Path

import pytest

from udfs.core import catalogue
from udfs.core.capacity import theoretical_capacity
from udfs.core.errors import CellwrightError, NotFoundError

REQUIRED_COUPLES = [
    "Li+/Li",
    "Na+/Na",
    "Mg2+/Mg",
    "Al3+/Al",
    "Zn2+/Zn",
    "Fe2+/Fe",
    "Cd2+/Cd",
    "Ni2+/Ni",
    "Pb2+/Pb",
    "H+/H2",
    "Cu2+/Cu",
    "Cu+/Cu",
    "Ag+/Ag",
    "AgCl/Ag",
    "Hg2Cl2/Hg",
    "O2/H2O",
    "O2/OH-",
    "Cl2/Cl-",
    "Fe3+/Fe2+",
    "PbO2/PbSO4",
    "PbSO4/Pb",
    "NiOOH/Ni(OH)2",
    "MnO2/Mn2+",
]

REQUIRED_MATERIALS = [
    "LiCoO2",
    "LiFePO4",
    "LMFP",
    "LiMn2O4",
    "NMC111",
    "NMC532",
    "NMC622",
    "NMC811",
    "NMC92",
    "NCA",
    "LiNi0.5Mn1.5O4",
    "NFM111",
    "Prussian white",
    "NVPF",
    "graphite",
    "hard carbon",
    "SiOx",
    "Si-C composite",
    "silicon",
    "lithium metal",
    "Li4Ti5O12",
    "Zn",
    "MnO2",
    "PbO2",
    "Pb",
    "NiOOH",
    "Cd",
]

# CRC-ECS (97th ed.), electrochemical series, V vs SHE at 25 C; values from memory
# of the printed table (OpenStax Chemistry 2e App. L agrees where it lists them).
# Tolerance 2 mV.
CRC_E0 = {
    "Li+/Li": -3.0401,
    "Na+/Na": -2.71,
    "Mg2+/Mg": -2.372,
    "Al3+/Al": -1.662,
    "Zn2+/Zn": -0.7618,
    "Fe2+/Fe": -0.447,
    "Cd2+/Cd": -0.4030,
    "Ni2+/Ni": -0.257,
    "Pb2+/Pb": -0.1262,
    "H+/H2": 0.0,
    "Cu2+/Cu": 0.3419,
    "Cu+/Cu": 0.521,
    "Ag+/Ag": 0.7996,
    "AgCl/Ag": 0.22233,
    "Hg2Cl2/Hg": 0.26808,
    "O2/H2O": 1.229,
    "O2/OH-": 0.401,
    "Cl2/Cl-": 1.35827,
    "Fe3+/Fe2+": 0.771,
    "PbO2/PbSO4": 1.6913,
    "PbSO4/Pb": -0.3588,
    "MnO2/Mn2+": 1.224,
}


def test_all_tables_load_and_validate() -> None:
    counts = catalogue.validate_all()
    assert counts["couples"] >= 30
    assert counts["materials"] >= len(REQUIRED_MATERIALS)


@pytest.mark.parametrize("name", sorted(p.name for p in catalogue.data_dir().glob("*.csv")))
def test_every_row_has_a_source(name: str) -> None:
    with (catalogue.data_dir() / name).open(newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert rows, f"{name} is empty"
    missing = [i + 2 for i, row in enumerate(rows) if not (row.get("source") or "").strip()]
    assert not missing, f"{name}: rows without a source: {missing}"


def test_demo_prices_are_labelled_as_demo_data() -> None:
    with (catalogue.data_dir() / "demo_prices.csv").open(newline="", encoding="utf-8") as fh:
        for row in csv.DictReader(fh):
            assert "demo" in row["source"].lower()


@pytest.mark.parametrize("cid", REQUIRED_COUPLES)
def test_required_couples_exist_and_balance(cid: str) -> None:
    c = catalogue.couple(cid)
    assert c.id == cid
    assert c.electrons > 0  # parse_half_reaction has checked atom and charge balance


@pytest.mark.parametrize(("cid", "e0"), sorted(CRC_E0.items()))
def test_e0_matches_crc_series(cid: str, e0: float) -> None:
    assert catalogue.couple(cid).e0 == pytest.approx(e0, abs=0.002)


@pytest.mark.parametrize("name", REQUIRED_MATERIALS)
def test_required_materials(name: str) -> None:
    m = catalogue.material(name)
    assert m.active
    assert m.role in ("cathode", "anode")
    for prop in (
        "formula",
        "electrons",
        "theoretical_capacity",
        "practical_capacity",
        "average_voltage",
        "density",
        "basis",
    ):
        assert prop in m.facts, f"{name} lacks {prop}"
        assert m.facts[prop].source


# NITTA2015 review table of theoretical capacities (mAh/g; values from memory of the
# paper; Si on the Li15Si4 basis as in SOURCES.md). n F / M from the catalogue's
# formula and electrons must agree within 0.2 %.
NITTA2015_CAPACITY = {
    "LiCoO2": 274,
    "LiFePO4": 170,
    "LiMn2O4": 148,
    "graphite": 372,
    "lithium metal": 3860,
    "silicon": 3579,
    "Li4Ti5O12": 175,
}


@pytest.mark.parametrize(("name", "published"), sorted(NITTA2015_CAPACITY.items()))
def test_theoretical_capacity_against_review_table(name: str, published: float) -> None:
    m = catalogue.material(name)
    f = m.formula
    assert f is not None
    computed = float(theoretical_capacity(f.mass, m.number("electrons")))
    assert computed == pytest.approx(published, rel=0.002)


# The tables this project writes (other files in data/ belong to other parts of the project).
OWN_TABLES = [
    "half_reactions.csv",
    "species.csv",
    "active_materials.csv",
    "inactive_materials.csv",
    "demo_prices.csv",
]
SOURCES_MD = Path(__file__).resolve().parents[2] / "docs" / "sources.md"


def _documented_keys() -> set[str]:
    """First word of every key in the reference table of docs/sources.md."""
    keys = set()
    for line in SOURCES_MD.read_text(encoding="utf-8").splitlines():
        m = re.match(r"^\| ([^|]+?) \|", line)
        if m and m.group(1) not in ("key", "couple") and not m.group(1).startswith(("-", "`")):
            keys.add(m.group(1).split()[0])
    return keys


@pytest.mark.parametrize("name", OWN_TABLES)
def test_every_source_names_a_documented_key(name: str) -> None:
    # Every row's source is one or more keys of docs/sources.md (";"-separated, each maybe
    # followed by an edition, a table or "(computed ...)"), or a derived value's "computed:".
    keys = _documented_keys()
    assert {"BANDURA2006", "WAGNER1993", "HWANG2017", "OBROVAC2014", "VAALMA2018"} <= keys
    with (catalogue.data_dir() / name).open(newline="", encoding="utf-8") as fh:
        for i, row in enumerate(csv.DictReader(fh), start=2):
            for part in (p.strip() for p in row["source"].split(";")):
                assert part.split()[0] in keys, f"{name} row {i}: source {part!r} not documented"
            for col in ("de0dt_source",):
                for part in (p.strip() for p in (row.get(col) or "").split(";") if p.strip()):
                    assert part.split()[0] in keys, f"{name} row {i}: {col} {part!r}"


def test_sodium_ion_inactive_rows_present() -> None:
    assert catalogue.material("NaPF6 1M in EC:DMC").role == "electrolyte"
    assert catalogue.material("aluminium anode foil").role == "foil"
    for name in ("NaPF6 1M in EC:DMC", "aluminium anode foil", "hard carbon", "NVPF"):
        assert "demo" in catalogue.price(name).source  # usable in the demo costing


def test_lenient_names() -> None:
    assert catalogue.couple(" cu2+/cu ").id == "Cu2+/Cu"
    assert catalogue.material("lfp").name == "LiFePO4"
    assert catalogue.material("Lithium Metal").name == "lithium metal"


def test_unknown_names_suggest() -> None:
    with pytest.raises(NotFoundError, match=r"did you mean .*Cu2\+/Cu"):
        catalogue.couple("Cu3+/Cu")
    with pytest.raises(NotFoundError, match="did you mean"):
        catalogue.material("LiFePo5")
    with pytest.raises(CellwrightError):
        catalogue.material("")


def test_sources_are_reachable() -> None:
    assert "CRC" in catalogue.source_of("Cu2+/Cu")
    assert catalogue.source_of("graphite", "theoretical_capacity")
    assert catalogue.source_of("Zn2+(aq)")
    assert "demo" in catalogue.source_of("graphite", "price").lower()


def test_roles_filter() -> None:
    cathodes = catalogue.material_names("cathode")
    assert "LiFePO4" in cathodes and "graphite" not in cathodes
    assert "aluminium foil" in catalogue.material_names("foil")
    with pytest.raises(NotFoundError):
        catalogue.material_names("kathode")
