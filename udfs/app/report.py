"""What the commands print about an evaluation: named outputs, design checks, problems.

Text that comes from a workbook is shown with control characters escaped and
bounded in length, so it can never rewrite the terminal line it is printed on.

>>> shown("a\\x1b[2Kb")
'a\\\\x1b[2Kb'
>>> show_value(3.14159265), show_value(True), show_value(None)
('3.14159', 'TRUE', '(empty)')
"""

from __future__ import annotations

from typing import Any

from udfs.engine.model import Evaluation, WorkbookModel
from udfs.sheet.error_values import SheetError

from .calc import Finding
from .safe_text import show

__all__ = ["MAX_SHOWN", "evaluation_lines", "show_value", "shown"]

MAX_SHOWN = 200


def shown(text: str, limit: int = MAX_SHOWN) -> str:
    """Workbook text for the terminal: control characters escaped, at most ``limit``."""
    return show(text, limit)


def show_value(value: Any) -> str:
    if isinstance(value, SheetError):
        return value.code
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, float):
        return f"{value:.6g}"
    if value is None:
        return "(empty)"
    return shown(str(value))


def evaluation_lines(
    model: WorkbookModel,
    evaluation: Evaluation,
    found: list[Finding],
    limit: int = 30,
) -> tuple[list[str], list[str]]:
    """(lines for stdout, lines for stderr) summarising an evaluation."""
    out: list[str] = []
    err: list[str] = []
    setting = ", ".join(
        f"{shown(ref.address)} = {show_value(v)}" for ref, v in evaluation.inputs.items()
    )
    how = "" if model.evaluator == "plan" else ", by the formulas package's own model"
    out.append(
        f"Evaluated {shown(model.name)}: {model.formula_count:,} formula cells (read and planned "
        f"in {model.build_seconds:.2f} s, evaluated in {evaluation.seconds:.2f} s{how})"
        + (f" with {setting}" if setting else "")
    )
    if model.restored_from_values:
        out.append("The input was a values-only copy: its kept formulas were restored first.")
    named = evaluation.named()
    outputs = [n for n in named if n.is_output and not n.name.lower().startswith(("warn_", "err_"))]
    set_inputs = [n for n in named if not n.is_output and n.ref in evaluation.inputs]
    rows = outputs + set_inputs
    if rows:
        width = min(max(len(n.name) for n in rows), 40)
        out.append("Named outputs:" if outputs else "Named cells:")
        for n in rows:
            tag = "  (input, set)" if not n.is_output else ""
            out.append(f"  {shown(n.name, 40):<{width}} = {show_value(n.value)}{tag}")
    if not outputs:
        out.append("The workbook has no defined names for single formula cells (no named outputs).")
    hidden = len(named) - len(rows) - sum(
        1 for n in named if n.name.lower().startswith(("warn_", "err_"))
    )
    if hidden > 0:
        out.append(f"({hidden} named input cells not shown)")
    rules = [n for n in named if n.name.lower().startswith(("warn_", "err_"))]
    if rules:
        if found:
            out.append(f"Design checks: {len(found)} of {len(rules)} fire:")
            for f in found:
                out.append(f"  {f.kind}: {shown(f.name, 40)}: {shown(f.message)}")
        else:
            out.append(f"Design checks: all {len(rules)} pass.")
    notes = [d for d in evaluation.diagnostics if d.kind == "note"]
    for note in notes:
        err.append(f"note: {shown(str(note), 1000)}")
    problems = evaluation.errors()
    if problems:
        err.append(f"{len(problems)} problem(s):")
        for d in problems[:limit]:
            err.append(f"  {shown(str(d), 400)}")
        if len(problems) > limit:
            err.append(f"  ... and {len(problems) - limit} more")
    return out, err
