"""Opened without the add-in, every output shows a number.

LibreOffice (headless, a fresh profile with its default settings, as a user opens
a file) converts each committed template and each kind of ``calc`` output; every
``out_`` name must show its value there -- a number, or the text of a text output
such as a couple's name -- never an empty cell or an error such as ``#NAME?``.
Skipped with the reason when LibreOffice is missing (CI installs it).
"""

from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import openpyxl
import pytest
from named_outputs import out_values

from udfs.app.calc import calculate_file

ROOT = Path(__file__).resolve().parents[2]
TEMPLATES = sorted((ROOT / "workbook_templates").glob("*.xlsx"))
SOFFICE = shutil.which("soffice") or shutil.which("libreoffice")
pytestmark = pytest.mark.skipif(
    SOFFICE is None, reason="LibreOffice is not installed: apt-get install libreoffice-calc-nogui"
)


#: The calc outputs checked: (overrides, mode) by id.
CALC_CASES = {
    "as built": ({}, "live"),
    "LFP set": ({"in_cathode": "LFP", "in_np_ratio": "1.15"}, "live"),
    "values only": ({}, "values"),
}


@pytest.fixture(scope="module")
def office_shows(tmp_path_factory: pytest.TempPathFactory) -> dict[str, openpyxl.Workbook]:
    """Every committed template and each calc output, as LibreOffice shows them: one
    conversion run for all (starting LibreOffice once; each file converted on its own)."""
    work = tmp_path_factory.mktemp("office")
    files = {p.name: p for p in TEMPLATES}
    for case, (overrides, mode) in CALC_CASES.items():
        out = work / f"calc {case}.xlsx"
        calculate_file(ROOT / "workbook_templates" / "cell_sizing.xlsx", out, overrides, mode=mode)
        files[case] = out
    assert SOFFICE is not None
    shown = work / "office"
    subprocess.run(
        [SOFFICE, "--headless", "--norestore", f"-env:UserInstallation={(work / 'p').as_uri()}",
         "--convert-to", "xlsx", "--outdir", str(shown), *(str(f) for f in files.values())],
        check=True, capture_output=True, timeout=480,
    )
    return {k: openpyxl.load_workbook(shown / f.name, data_only=True) for k, f in files.items()}


def _assert_numbers(values: dict[str, object], where: str) -> None:
    assert values, f"{where}: no out_ names"
    numbers = 0
    for name, value in values.items():
        assert value is not None, (where, name)
        assert not (isinstance(value, str) and value.startswith("#")), (where, name, value)
        numbers += isinstance(value, (int, float)) and not isinstance(value, bool)
    assert numbers >= len(values) // 2, (where, values)  # mostly numbers, as built


@pytest.mark.parametrize("path", TEMPLATES, ids=lambda p: p.name)
def test_every_committed_template_shows_numbers(path, office_shows):
    _assert_numbers(out_values(office_shows[path.name]), path.name)


@pytest.mark.parametrize("case", list(CALC_CASES))
def test_every_calc_output_shows_numbers(case, office_shows):
    _assert_numbers(out_values(office_shows[case]), f"{case} {CALC_CASES[case]}")
