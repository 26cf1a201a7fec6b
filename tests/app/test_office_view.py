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


def _as_office_shows(path: Path, work: Path) -> openpyxl.Workbook:
    out = work / "office"
    assert SOFFICE is not None
    subprocess.run(
        [SOFFICE, "--headless", "--norestore", f"-env:UserInstallation={(work / 'p').as_uri()}",
         "--convert-to", "xlsx", "--outdir", str(out), str(path)],
        check=True, capture_output=True, timeout=240,
    )
    return openpyxl.load_workbook(out / path.name, data_only=True)


def _assert_numbers(values: dict[str, object], where: str) -> None:
    assert values, f"{where}: no out_ names"
    numbers = 0
    for name, value in values.items():
        assert value is not None, (where, name)
        assert not (isinstance(value, str) and value.startswith("#")), (where, name, value)
        numbers += isinstance(value, (int, float)) and not isinstance(value, bool)
    assert numbers >= len(values) // 2, (where, values)  # mostly numbers, as built


@pytest.mark.parametrize("path", TEMPLATES, ids=lambda p: p.name)
def test_every_committed_template_shows_numbers(path, tmp_path):
    _assert_numbers(out_values(_as_office_shows(path, tmp_path)), path.name)


@pytest.mark.parametrize(
    ("overrides", "mode"),
    [({}, "live"), ({"in_cathode": "LFP", "in_np_ratio": "1.15"}, "live"), ({}, "values")],
    ids=["as built", "LFP set", "values only"],
)
def test_every_calc_output_shows_numbers(tmp_path, overrides, mode):
    src = ROOT / "workbook_templates" / "cell_sizing.xlsx"
    out = tmp_path / "out.xlsx"
    calculate_file(src, out, overrides, mode=mode)
    _assert_numbers(out_values(_as_office_shows(out, tmp_path)), f"{mode} {overrides}")
