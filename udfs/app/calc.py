"""Evaluate a workbook file and write the results to a new file.

>>> import io, pathlib, tempfile, openpyxl
>>> d = pathlib.Path(tempfile.mkdtemp())
>>> wb = openpyxl.Workbook(); ws = wb.active; ws.title = "Calc"
>>> ws["A1"] = 2; ws["A2"] = "=A1*21"; wb.save(d / "in.xlsx")
>>> report = calculate_file(d / "in.xlsx", d / "out.xlsx", {"Calc!A1": 3})
>>> openpyxl.load_workbook(d / "out.xlsx", data_only=True)["Calc"]["A2"].value
63
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path

from udfs.engine.model import Evaluation, Override, WorkbookModel, load_model
from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.files import check_output, read_input, write_bytes_atomic
from udfs.xlsx.guard import DEFAULT_LIMITS, Limits
from udfs.xlsx.refs import CellRef
from udfs.xlsx.writer import write_results

from .caution import CAUTION

__all__ = [
    "CAUTION",
    "CalcReport",
    "calculate_file",
    "check_output_suffix",
    "read_workbook",
    "write_evaluation",
]


StrPath = str | os.PathLike[str]


@dataclass
class CalcReport:
    """What :func:`calculate_file` did."""

    evaluation: Evaluation
    output: Path
    mode: str


def read_workbook(path: StrPath, limits: Limits = DEFAULT_LIMITS) -> WorkbookModel:
    """The compiled model of the workbook at ``path`` (opened read-only, cached by content)."""
    data = read_input(path, limits.input_bytes)
    return load_model(data, Path(path).name, limits)


def check_output_suffix(model: WorkbookModel, out: StrPath) -> None:
    """A macro-enabled workbook must be written as .xlsm, any other as .xlsx."""
    suffix = Path(out).suffix.lower()
    if model.package.is_macro_enabled():
        if suffix != ".xlsm":
            raise WorkbookError(
                f"{model.name} is macro-enabled: name the output .xlsm "
                "(its macros are copied unchanged and never run)"
            )
    elif suffix != ".xlsx":
        raise WorkbookError(f"{Path(out).name}: the output of a workbook must end in .xlsx")


def write_evaluation(
    model: WorkbookModel,
    evaluation: Evaluation,
    out: StrPath,
    *,
    force: bool = False,
    mode: str = "portable",
    inputs: tuple[StrPath, ...] = (),
) -> Path:
    """Write ``evaluation`` into a copy of ``model``'s workbook at ``out`` (atomically).

    ``mode``: "portable" (formulas calling our functions become values), "all"
    (every formula kept, values cached) or "none" (values only); see
    :mod:`udfs.xlsx.writer`.
    """
    check_output_suffix(model, out)
    frozen = {model.ref_of(k) for k in model.not_evaluated | model.untrusted}
    values = {ref: v for ref, v in evaluation.values.items() if ref not in frozen}
    data = write_results(model.package, values, model.portable_refs(), mode)
    write_bytes_atomic(out, data, force, inputs)
    return Path(out)


def calculate_file(
    src: StrPath,
    out: StrPath,
    overrides: Mapping[CellRef | str, Override] | None = None,
    *,
    force: bool = False,
    mode: str = "portable",
    limits: Limits = DEFAULT_LIMITS,
) -> CalcReport:
    """Evaluate ``src`` with ``overrides`` and write a new workbook ``out``.

    ``src`` is only read. ``out`` is refused if it exists (unless ``force``)
    or is ``src`` itself; it is written whole or not at all.
    """
    check_output(out, force, inputs=[src])
    model = read_workbook(src, limits)
    check_output_suffix(model, out)
    evaluation = model.evaluate(overrides or {})
    path = write_evaluation(model, evaluation, out, force=force, mode=mode, inputs=(src,))
    return CalcReport(evaluation, path, mode)
