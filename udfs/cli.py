"""The ``cellwright`` command: evaluate workbooks, write templates, run sweeps.

Commands (each with ``--help``)::

    cellwright calc IN.xlsx -o OUT.xlsx [--set Sheet!B4=40 ...] [--values-only] [--force]
    cellwright template NAME -o PATH [--force]      |  cellwright template --list
    cellwright demo [-o PATH] [--force]
    cellwright sweep IN.xlsx --vary Sheet!B4=40:80:5 [--vary ...] --out OUT.csv|OUT.xlsx
    cellwright sweep --model core --vary target_capacity_Ah=40:80:5 --out OUT.csv
    cellwright functions

Exit codes: 0 done; 1 the work could not be done (the reason is printed on one
line: missing file, not a workbook, refused file, unknown sheet or cell,
existing output without --force, ...); 2 the command line itself is wrong;
130 interrupted. No traceback is printed (set CELLWRIGHT_DEBUG=1 to see one).

>>> main(["calc", "/no/such.xlsx", "-o", "/tmp/never-written.xlsx"])
1
"""

from __future__ import annotations

import argparse
import contextlib
import os
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any, NoReturn, TextIO

__all__ = ["main"]

PROG = "cellwright"


class _Parser(argparse.ArgumentParser):
    """argparse with a one-line error message (and the usual exit code 2)."""

    def error(self, message: str) -> NoReturn:
        self.exit(2, f"{self.prog}: error: {message} (see {self.prog} --help)\n")


def _say(text: str = "", stream: TextIO | None = None) -> None:
    if stream is sys.stderr:
        sys.stdout.flush()
    print(text, file=stream if stream is not None else sys.stdout)


def _caution() -> None:
    from udfs.app.caution import CAUTION

    _say(CAUTION)


def _show(value: Any) -> str:
    from udfs.sheet.error_values import SheetError

    if isinstance(value, SheetError):
        return value.code
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, float):
        return f"{value:.6g}"
    if value is None:
        return "(empty)"
    return str(value)


def _parse_set(text: str) -> tuple[str, Any]:
    """``Sheet!B4=40`` / ``'My sheet'!B4=x`` / ``name=40`` -> (target, typed value)."""
    from udfs.xlsx.file_errors import ReferenceSyntaxError
    from udfs.xlsx.refs import parse_value

    start = 0
    if text.startswith("'"):
        i = 1
        while i < len(text):
            if text[i] == "'":
                if i + 1 < len(text) and text[i + 1] == "'":
                    i += 2
                    continue
                break
            i += 1
        start = i + 1
    eq = text.find("=", start)
    if eq <= 0 or not text[:eq].strip():  # no '=', or nothing before it but blanks
        raise ReferenceSyntaxError(
            f"--set {text!r}: write CELL=VALUE, e.g. Inputs!B4=40 or a_defined_name=40"
        )
    return text[:eq].strip(), parse_value(text[eq + 1 :])


def _report(evaluation: Any, limit: int = 30) -> None:
    """Named outputs (and the named inputs that were set), then notes and problems."""
    named = evaluation.named()
    outputs = [n for n in named if n.is_output]
    set_inputs = [n for n in named if not n.is_output and n.ref in evaluation.inputs]
    shown = outputs + set_inputs
    if shown:
        width = min(max(len(n.name) for n in shown), 40)
        _say("Named outputs:" if outputs else "Named cells:")
        for n in shown:
            tag = "  (input, set)" if not n.is_output else ""
            _say(f"  {n.name:<{width}} = {_show(n.value)}{tag}")
    hidden = len(named) - len(shown)
    if not outputs:
        _say("The workbook has no defined names for single formula cells (no named outputs).")
    if hidden:
        _say(f"({hidden} named input cells not shown)")
    problems = evaluation.errors()
    notes = [d for d in evaluation.diagnostics if d.kind == "note"] + list(evaluation.notes)
    for note in notes:
        _say(f"note: {note}", sys.stderr)
    if problems:
        _say(f"{len(problems)} problem(s):", sys.stderr)
        for d in problems[:limit]:
            _say(f"  {d}", sys.stderr)
        if len(problems) > limit:
            _say(f"  ... and {len(problems) - limit} more", sys.stderr)


# ----------------------------------------------------------------------- commands


_MODE_TEXT = {
    "portable": "values of cellwright functions, Excel formulas kept with their values",
    "all": "all formulas kept, computed values stored",
    "none": "values only",
}


def _cmd_calc(args: argparse.Namespace) -> int:
    from udfs.app.calc import check_output_suffix, read_workbook, write_evaluation
    from udfs.xlsx.file_errors import ReferenceSyntaxError
    from udfs.xlsx.files import check_output
    from udfs.xlsx.refs import CellRef

    overrides: dict[CellRef | str, Any] = {}
    for text in args.set or []:
        target, value = _parse_set(text)
        if any(target.casefold() == str(t).casefold() for t in overrides):
            # a second --set of the same target would silently win over the first
            raise ReferenceSyntaxError(f"--set {target} is given twice")
        overrides[target] = value
    check_output(args.output, args.force, inputs=[args.input])
    model = read_workbook(args.input, _limits(args))
    check_output_suffix(model, args.output)
    evaluation = model.evaluate(overrides)
    setting = ", ".join(f"{ref.address} = {_show(v)}" for ref, v in evaluation.inputs.items())
    _say(
        f"Evaluated {model.name}: {model.formula_count:,} formula cells (compiled in "
        f"{model.build_seconds:.2f} s, evaluated in {evaluation.seconds:.2f} s)"
        + (f" with {setting}" if setting else "")
    )
    _report(evaluation)
    mode = "all" if args.keep_formulas else "none" if args.values_only else "portable"
    path = write_evaluation(
        model, evaluation, args.output, force=args.force, mode=mode, inputs=(args.input,)
    )
    _say(f"Wrote {path} ({_MODE_TEXT[mode]}); {args.input} was not modified.")
    _caution()
    return 1 if args.strict and evaluation.errors() else 0


def _cmd_template(args: argparse.Namespace) -> int:
    from udfs.app import templates

    names = sorted(templates.available())
    if args.list or not args.name:
        if not args.list:
            _say(f"{PROG} template: give a template NAME and -o PATH, or --list", sys.stderr)
        if names:
            _say("Templates: " + ", ".join(names))
        else:
            _say("No templates are available yet.")
        return 0 if args.list else 2
    if not args.output:
        _say(f"{PROG} template: error: -o PATH is required (see --help)", sys.stderr)
        return 2
    templates.write_template(args.name, args.output, args.force)
    _say(f"Wrote template {args.name!r} to {args.output}.")
    _caution()
    return 0


def _cmd_demo(args: argparse.Namespace) -> int:
    from udfs.app.demo import demo_spec, format_bom
    from udfs.core.sizing import design_cell
    from udfs.xlsx.files import check_output

    has_workbook = True
    out = args.output if args.output is not None else _fresh_demo_name()
    if args.output is not None and not has_workbook:
        raise _DemoUnavailableError()
    if has_workbook:
        check_output(out, args.force)  # refuse early, before any work
    _say(format_bom(design_cell(demo_spec())))
    if not has_workbook:
        _say("")
        _say("(The demo workbook is written once the cell-sizing template exists.)")
        return 0
    return _demo_workbook(out, args.force)


def _fresh_demo_name(stem: str = "cellwright-demo") -> str:
    """The default demo file: ``cellwright-demo.xlsx``, or the first free
    ``cellwright-demo-N.xlsx`` when earlier demos are there (never overwritten)."""
    name = f"{stem}.xlsx"
    n = 1
    while os.path.exists(name):
        n += 1
        name = f"{stem}-{n}.xlsx"
    return name


class _DemoUnavailableError(Exception):
    pass


def _demo_workbook(out: str, force: bool) -> int:
    """Fill the demo workbook headlessly and write it with its computed values."""
    from udfs.app import templates
    from udfs.app.calc import write_evaluation
    from udfs.engine.model import load_model

    what, data = templates.demo_workbook()
    model = load_model(data, "cellwright-demo.xlsx")
    evaluation = model.evaluate()
    _say("")
    _say(f"Demo workbook ({what}), computed headlessly:")
    _report(evaluation)
    path = write_evaluation(model, evaluation, out, force=force)
    _say(f"Wrote the demo workbook to {Path(path).resolve()} ({_MODE_TEXT['portable']}).")
    _caution()
    return 0


def _cmd_sweep(args: argparse.Namespace) -> int:
    from udfs.app.sweep import parse_vary, sweep_core, sweep_workbook
    from udfs.app.tables import check_table_output, write_table
    from udfs.xlsx.file_errors import ReferenceSyntaxError

    varies = [parse_vary(v) for v in args.vary or []]
    if not varies:
        raise ReferenceSyntaxError("give at least one --vary TARGET=start:stop:step")
    inputs = [args.input] if args.input else []
    check_table_output(args.out, args.force, inputs)
    if args.model == "core":
        if args.input:
            raise ReferenceSyntaxError("--model core sweeps the core model; give no workbook")
        if args.output_cells:
            raise ReferenceSyntaxError("--output chooses workbook cells; not with --model core")
        table = sweep_core(varies)
    else:
        if not args.input:
            raise ReferenceSyntaxError("give the workbook to sweep (or --model core)")
        from udfs.app.calc import read_workbook

        model = read_workbook(args.input, _limits(args))
        table = sweep_workbook(model, varies, args.output_cells or ())
    path = write_table(table, args.out, args.force, inputs)
    _say(
        f"Swept {table.rows:,} scenarios ({' x '.join(str(len(v.values)) for v in varies)}) "
        f"of {table.source}."
    )
    _say(f"Outputs: {', '.join(table.outputs)}")
    _say(f"Wrote {path}.")
    _caution()
    return 0


def _cmd_functions(args: argparse.Namespace) -> int:
    from udfs.sheet.reference import render_text

    _say(render_text())
    return 0


# ----------------------------------------------------------------------- parser


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``cellwright`` command."""
    parser = _Parser(
        prog=PROG,
        description="Electrochemical cell sizing and costing: evaluate workbooks headlessly, "
        "write templates, run what-if sweeps. Results are estimates; follow applicable "
        "standards, local codes and qualified engineers.",
    )
    parser.add_argument("--version", action="version", version=f"{PROG} {_version()}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    p = sub.add_parser(
        "calc",
        help="evaluate a workbook and write a new one with the results",
        description="Evaluate every formula of IN (Excel's functions and cellwright's) and "
        "write OUT, a copy of IN with the computed values: cells that call cellwright "
        "functions hold their values (visible in any spreadsheet program), formulas of "
        "Excel's own functions stay, with their values stored. IN is never modified. "
        "Prints the defined names of single cells with their values.",
    )
    p.add_argument("input", metavar="IN.xlsx", help="workbook to evaluate (read only)")
    p.add_argument("-o", "--output", required=True, metavar="OUT.xlsx", help="new workbook")
    p.add_argument(
        "--set",
        action="append",
        metavar="CELL=VALUE",
        help="set an input cell first: Sheet!B4=40, 'My sheet'!B4=LFP, name=40, "
        'Sheet!B5=TRUE or Sheet!B6="42" for text (repeatable)',
    )
    keep = p.add_mutually_exclusive_group()
    keep.add_argument(
        "--keep-formulas",
        action="store_true",
        help="keep every formula, results stored as cached values (Excel with the add-in)",
    )
    keep.add_argument(
        "--values-only", action="store_true", help="replace every formula by its value"
    )
    p.add_argument("--force", action="store_true", help="replace OUT if it exists")
    p.add_argument(
        "--strict", action="store_true", help="exit 1 if any cell has an error or a problem"
    )
    _max_formulas(p)
    p.set_defaults(func=_cmd_calc)

    p = sub.add_parser(
        "template",
        help="write a fresh template workbook (or list them)",
        description="Write a fresh copy of a template workbook, built by code.",
    )
    p.add_argument("name", nargs="?", metavar="NAME", help="template name (see --list)")
    p.add_argument("-o", "--output", metavar="PATH", help="where to write the .xlsx")
    p.add_argument("--list", action="store_true", help="list the available templates")
    p.add_argument("--force", action="store_true", help="replace PATH if it exists")
    p.set_defaults(func=_cmd_template)

    p = sub.add_parser(
        "demo",
        help="size the demo cell (demo data) and print its bill of materials",
        description="Size the invented demo cell (demo data: invented company, product and "
        "prices) with the core model and print its bill of materials; when the cell-sizing "
        "template exists, also fill it, compute it headlessly and write it.",
    )
    p.add_argument("-o", "--output", metavar="PATH", help="where to write the demo workbook")
    p.add_argument("--force", action="store_true", help="replace PATH if it exists")
    p.set_defaults(func=_cmd_demo)

    p = sub.add_parser(
        "sweep",
        help="what-if sweep over a grid of inputs (workbook or core model)",
        description="Evaluate every combination of the varied inputs (cartesian product) and "
        "write a table of the outputs (.csv, or .xlsx with a chart). Workbook sweeps vary "
        "cells or defined names and report the named formula cells (or --output cells); "
        "--model core varies CellSpec fields of the demo spec in one vectorised call.",
    )
    p.add_argument("input", nargs="?", metavar="IN.xlsx", help="workbook (not with --model core)")
    p.add_argument(
        "--vary",
        action="append",
        metavar="TARGET=START:STOP:STEP",
        help="Sheet!B4=40:80:5, name=1.05,1.1,1.2 or (core) np_ratio=1.05:1.2:0.05 (repeatable)",
    )
    p.add_argument("--out", required=True, metavar="OUT.csv|OUT.xlsx", help="table to write")
    p.add_argument(
        "--model", choices=("workbook", "core"), default="workbook", help="what to sweep"
    )
    p.add_argument(
        "--output",
        dest="output_cells",
        action="append",
        metavar="CELL",
        help="an output cell or defined name (repeatable; default: the named formula cells)",
    )
    _max_formulas(p)
    p.add_argument("--force", action="store_true", help="replace OUT if it exists")
    p.set_defaults(func=_cmd_sweep)

    p = sub.add_parser(
        "functions",
        help="print the reference of the spreadsheet functions",
        description="Print every CW_ function with its arguments, units and an example.",
    )
    p.set_defaults(func=_cmd_functions)
    return parser


def _positive_count(text: str) -> int:
    try:
        n = int(text.replace(",", "").replace("_", ""))
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number") from None
    if n < 1:
        raise argparse.ArgumentTypeError(f"must be at least 1 (got {n})")
    return n


def _max_formulas(p: argparse.ArgumentParser) -> None:
    from udfs.xlsx.guard import MAX_FORMULA_CELLS

    p.add_argument(
        "--max-formulas",
        type=_positive_count,
        default=MAX_FORMULA_CELLS,
        metavar="N",
        help=f"refuse workbooks with more than N formula cells (default {MAX_FORMULA_CELLS:,})",
    )


def _limits(args: argparse.Namespace) -> Any:
    from udfs.xlsx.guard import Limits

    return Limits(formula_cells=args.max_formulas)


def _version() -> str:
    try:
        from importlib.metadata import version

        return version("cellwright")
    except Exception:
        return "(not installed)"


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit code (see the module doc)."""
    parser = build_parser()
    args = parser.parse_args(list(argv) if argv is not None else None)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    from udfs.core.errors import CellwrightError
    from udfs.xlsx.file_errors import EngineError

    debug = os.environ.get("CELLWRIGHT_DEBUG") == "1"
    where = f"{PROG} {args.command}"
    try:
        return int(args.func(args))
    except _DemoUnavailableError:
        _say(
            f"{where}: error: the demo workbook needs the cell-sizing template, which does not "
            "exist yet",
            sys.stderr,
        )
        return 1
    except (EngineError, CellwrightError) as exc:
        if debug:
            raise
        _say(f"{where}: error: {exc}", sys.stderr)
        return 1
    except BrokenPipeError:  # e.g. piped into `head`: stop quietly
        with contextlib.suppress(OSError):
            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 1
    except KeyboardInterrupt:
        _say(f"{where}: interrupted; no output was written", sys.stderr)
        return 130
    except MemoryError:
        _say(f"{where}: error: out of memory", sys.stderr)
        return 1
    except OSError as exc:
        if debug:
            raise
        _say(f"{where}: error: {exc.strerror or exc}", sys.stderr)
        return 1
    except Exception as exc:  # never a traceback for the user
        if debug:
            raise
        first = str(exc).splitlines()[0] if str(exc) else ""
        _say(
            f"{where}: internal error: {type(exc).__name__}: {first} "
            "(set CELLWRIGHT_DEBUG=1 for details)",
            sys.stderr,
        )
        return 3


if __name__ == "__main__":
    raise SystemExit(main())
