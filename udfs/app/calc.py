"""``cellwright calc``: evaluate a workbook and write a new one that is still a model.

* the input is read, never written; a values-only copy made earlier gets its
  formulas back first (:func:`open_model`), so frozen results are never taken
  for inputs;
* ``--set`` values are checked against the workbook's input table when it has
  one (the one declaration of each input: bounds, allowed names), then set;
* the output keeps every formula with its computed value cached
  (:func:`udfs.xlsx.writer.write_live`), or -- on request -- is a labelled
  values-only copy (:func:`udfs.xlsx.values_copy.label_parts`);
* cells that could not be evaluated, and cells computed from them, keep their
  formula and their original cached value in every mode.

>>> import io, pathlib, tempfile, openpyxl
>>> d = pathlib.Path(tempfile.mkdtemp())
>>> wb = openpyxl.Workbook(); ws = wb.active; ws.title = "Calc"
>>> ws["A1"] = 2; ws["A2"] = "=A1*21"; wb.save(d / "in.xlsx")
>>> report = calculate_file(d / "in.xlsx", d / "out.xlsx", {"Calc!A1": "3"})
>>> kept = openpyxl.load_workbook(d / "out.xlsx")["Calc"]["A2"].value
>>> kept, openpyxl.load_workbook(d / "out.xlsx", data_only=True)["Calc"]["A2"].value
('=A1*21', 63)
"""

from __future__ import annotations

import datetime as dt
import os
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, BinaryIO

from udfs.core.errors import CellwrightError
from udfs.engine.functions import to_cell
from udfs.engine.model import Evaluation, WorkbookModel, load_model
from udfs.sheet.error_values import CellValue, SheetError
from udfs.xlsx.collector import collector_paused
from udfs.xlsx.file_errors import ReferenceSyntaxError, WorkbookError
from udfs.xlsx.files import atomic_writer, check_output, read_input
from udfs.xlsx.guard import DEFAULT_LIMITS, Limits
from udfs.xlsx.package import Package
from udfs.xlsx.refs import CellRef, parse_value
from udfs.xlsx.values_copy import (
    MARKER,
    about_xml,
    formulas_xml,
    label_parts,
    restored,
)
from udfs.xlsx.writer import Edit, NewPart, SheetEdits, package_bytes, write_live, write_values

__all__ = [
    "MODES",
    "CalcReport",
    "Finding",
    "PreparedOutput",
    "calculate_file",
    "check_output_suffix",
    "checked_overrides",
    "evaluation_bytes",
    "findings",
    "open_model",
    "prepare_output",
    "write_evaluation",
    "write_prepared",
]

StrPath = str | os.PathLike[str]
MODES = ("live", "values")
MAX_LISTED_INPUTS = 10_000


@dataclass
class CalcReport:
    """What :func:`calculate_file` did."""

    model: WorkbookModel
    evaluation: Evaluation
    output: Path
    mode: str
    findings: list[Finding] = field(default_factory=list)


@dataclass(frozen=True)
class Finding:
    """A design rule of the workbook that fires: ``kind`` is "warning" or "error"."""

    kind: str
    name: str
    message: str


def open_model(
    path: StrPath, limits: Limits = DEFAULT_LIMITS, *, cached: bool = True
) -> WorkbookModel:
    """The model of the workbook at ``path`` (read-only; a values-only copy restored);
    kept in the cache of models unless not ``cached`` (a one-shot command)."""
    data = read_input(path, limits.input_bytes)
    name = Path(path).name
    back = restored(data, name, limits)
    book = back if back is not None else data
    model = load_model(book, name, limits) if cached else WorkbookModel(book, name, limits)
    if back is not None:
        model.restored_from_values = True
    return model


def checked_overrides(
    model: WorkbookModel, texts: Mapping[str, str]
) -> dict[CellRef | str, Any]:
    """``--set`` texts as cell values, each checked against the workbook's input table
    when it has one (refused: a one-line reason naming the input, value and range)."""
    from udfs.core.input_tables import table_for  # only when there is something to check

    if not texts:
        return {}
    table = table_for(model.named_cells)
    by_cell = {ref: name for name, ref in model.named_cells.items()}
    out: dict[CellRef | str, Any] = {}
    for target, text in texts.items():
        ref = model.resolve(target)
        name = by_cell.get(ref)
        value = parse_value(text)
        if table is not None and name is not None and name in table:
            try:
                table.check_typed(name, text)
            except CellwrightError as exc:
                raise ReferenceSyntaxError(f"--set {target}={text}: {exc}") from None
        out[target] = value
    return out


def findings(evaluation: Evaluation) -> list[Finding]:
    """The workbook's design rules that fire: named cells ``warn_*`` and ``err_*`` holding
    a message (empty or FALSE when quiet), in the workbook's order."""
    out: list[Finding] = []
    for named in evaluation.named():
        low = named.name.lower()
        kind = "warning" if low.startswith("warn_") else "error" if low.startswith("err_") else ""
        value = named.value
        if not kind or value in (None, "", False, 0.0):
            continue
        text = value.code if isinstance(value, SheetError) else str(value)
        out.append(Finding(kind, named.name, "fires" if value is True else text))
    return out


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


def _edits(model: WorkbookModel, evaluation: Evaluation, strip: bool) -> SheetEdits:
    """Computed formula cells get their values (and lose their formula when ``strip``);
    cells not evaluated, or computed from them, stay as they are. Grouped by sheet as
    they are made (no cell reference object per formula cell: large sheets write faster;
    the reader's own (row, col) tuples as keys: 11 MB less at 200,000 formula cells)."""
    frozen = model.not_evaluated | model.untrusted
    edits = SheetEdits()
    computed = evaluation.result.values
    formula = "" if strip else None
    for sheet in model.sheets:
        s, cells = sheet.index, edits.cells(sheet.name)
        for pos, written in sheet.formulas.items():  # keyed by the reader's (row, col)
            filled = [pos] if written.span is None else _cells_of(written.span)
            for cell in filled:
                key = (s, *cell)
                if key not in frozen:
                    cells[cell] = Edit(to_cell(computed.get(key)), formula)
    for ref, value in evaluation.inputs.items():
        edits.cells(ref.sheet)[(ref.row, ref.col)] = Edit(value)
    if strip:  # a kept cell of a filled-down formula keeps its own text, not the master's
        for key in frozen:
            ref = model.ref_of(key)
            text = model.formula_text(ref)
            fc = model.sheets[key[0]].formulas.get(key[1:])
            if fc is not None and fc.kind == "shared" and text is not None:
                edits.cells(ref.sheet)[(ref.row, ref.col)] = Edit(formula=text)
    return edits


def _cells_of(span: tuple[int, int, int, int]) -> list[tuple[int, int]]:
    r1, c1, r2, c2 = span
    return [(r, c) for r in range(r1, r2 + 1) for c in range(c1, c2 + 1)]


def _listed_inputs(
    model: WorkbookModel, evaluation: Evaluation
) -> tuple[list[tuple[str, str, str, CellValue]], int]:
    """The inputs a values-only copy was computed from: named input cells, cells set,
    then every constant a formula reads (at most MAX_LISTED_INPUTS)."""
    names = {ref: name for name, ref in model.named_cells.items()}
    seen: dict[CellRef, str] = {}
    for ref in evaluation.inputs:
        seen[ref] = names.get(ref, "set with --set")
    for name, ref in model.named_cells.items():
        if not model.is_formula(ref):
            seen.setdefault(ref, name)
    for key in model.constants_read():
        seen.setdefault(model.ref_of(key), "")
    listed = list(seen.items())[:MAX_LISTED_INPUTS]
    rows = [(label, ref.sheet, ref.coordinate, evaluation.value(ref)) for ref, label in listed]
    return rows, len(seen) - len(listed)


def evaluation_bytes(model: WorkbookModel, evaluation: Evaluation, mode: str = "live") -> bytes:
    """The copy :func:`prepare_output` prepares, in memory."""
    return package_bytes(prepare_output(model, evaluation, mode).write_to)


@dataclass
class PreparedOutput:
    """What writing a computed copy needs, and nothing of the model: the input package
    and the edits (with the values-only copy's labelling parts). A one-shot command lets
    the model go before writing (its plan and values are most of the memory of a large
    workbook: at every limit at once, ``calc`` peaks 54 MiB lower, 431 MiB).
    """

    package: Package
    edits: SheetEdits
    mode: str = "live"
    parts: dict[str, NewPart] = field(default_factory=dict)
    extra: dict[str, bytes] = field(default_factory=dict)

    @collector_paused()
    def write_to(self, out: BinaryIO) -> None:
        """Write the copy to ``out`` (any number of times)."""
        if self.mode == "live":
            write_live(self.package, self.edits, out)
        else:
            write_values(self.package, self.edits, out, dict(self.parts), self.extra)


@collector_paused()
def prepare_output(
    model: WorkbookModel, evaluation: Evaluation, mode: str = "live"
) -> PreparedOutput:
    """A copy of ``model``'s workbook with ``evaluation`` in it, ready to write: ``mode``
    "live" keeps every formula with its value cached, "values" is a labelled values-only
    copy."""
    if mode not in MODES:
        raise ValueError(f"mode must be one of {MODES}")
    if mode == "live":
        return PreparedOutput(model.package, _edits(model, evaluation, strip=False))
    edits = _edits(model, evaluation, strip=True)
    kept = []
    frozen = model.not_evaluated | model.untrusted
    for key in model.formula_keys:
        fc = model.sheets[key[0]].formulas.get(key[1:])
        if key in frozen or fc is None:
            continue  # kept in place, or a member of an array formula (its top cell keeps it)
        ref = model.ref_of(key)
        span = None
        if fc.span is not None:
            r1, c1, r2, c2 = fc.span
            span = f"{CellRef('', r1, c1).coordinate}:{CellRef('', r2, c2).coordinate}"
        kept.append((ref.sheet, ref.coordinate, fc.text_at(ref.row, ref.col), span))
    listed, left_out = _listed_inputs(model, evaluation)
    when = dt.datetime.now(dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    parts: dict[str, NewPart] = {}
    extra = label_parts(
        model.package,
        about_xml(listed, when, model.name, model.sha256, left_out),
        formulas_xml(kept),
        parts,
    )
    return PreparedOutput(model.package, edits, mode, parts, dict(extra))


def write_prepared(
    prepared: PreparedOutput,
    out: StrPath,
    *,
    force: bool = False,
    inputs: tuple[StrPath, ...] = (),
) -> Path:
    """Write ``prepared`` to the file ``out``, atomically (never over ``inputs``)."""
    with atomic_writer(out, force, inputs) as fh:
        prepared.write_to(fh)
    return Path(out)


def write_evaluation(
    model: WorkbookModel,
    evaluation: Evaluation,
    out: StrPath,
    *,
    force: bool = False,
    mode: str = "live",
    inputs: tuple[StrPath, ...] = (),
) -> Path:
    """Write the copy :func:`prepare_output` prepares to the file ``out``, atomically
    (never over ``inputs``)."""
    check_output_suffix(model, out)
    return write_prepared(prepare_output(model, evaluation, mode), out, force=force, inputs=inputs)


def calculate_file(
    src: StrPath,
    out: StrPath,
    overrides: Mapping[str, str] | None = None,
    *,
    force: bool = False,
    mode: str = "live",
    limits: Limits = DEFAULT_LIMITS,
) -> CalcReport:
    """Evaluate ``src`` with ``overrides`` (target -> value as typed) and write ``out``.

    ``src`` is only read. ``out`` is refused if it exists (unless ``force``) or is
    ``src`` itself; it is written whole or not at all.
    """
    check_output(out, force, inputs=[src])
    model = open_model(src, limits)
    check_output_suffix(model, out)
    evaluation = model.evaluate(checked_overrides(model, overrides or {}))
    path = write_evaluation(model, evaluation, out, force=force, mode=mode, inputs=(src,))
    return CalcReport(model, evaluation, path, mode, findings(evaluation))


__all__ += ["MARKER"]
