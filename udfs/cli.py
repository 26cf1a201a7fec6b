"""The ``cellwright`` command: evaluate workbooks, write templates, run sweeps.

Commands (each with ``--help``)::

    cellwright calc IN.xlsx -o OUT.xlsx [--set Sheet!B4=40 ...] [--values-only] [--force]
    cellwright template NAME -o PATH [--force]      |  cellwright template --list
    cellwright demo [-o PATH] [--force]
    cellwright sweep IN.xlsx --vary Sheet!B4=40:80:5 [--vary ...] --out OUT.csv|OUT.xlsx
    cellwright sweep [IN.xlsx] --model core --vary in_cathode=NMC811,LFP
                     --vary index:nickel=12000:20000:2000 --out OUT.csv
                     [--prices BOOK.csv] [--workers N|ADDRESS]
    cellwright compare [IN.xlsx ...] [--case "LABEL: in_x=V; in_y=W" ...] [--prices BOOK.csv]
                       [--out OUT.csv|OUT.xlsx]
    cellwright risk [IN.xlsx] --range index:nickel=12000,15500,20000 [--range ...] [--samples N]
                    [--seed S] [--prices BOOK.csv] [--workers N|ADDRESS] [--out OUT.csv|OUT.xlsx]
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
    from udfs.core.caution import CAUTION

    _say(CAUTION)


def _lines(out: list[str], err: list[str]) -> None:
    for line in out:
        _say(line)
    for line in err:
        _say(line, sys.stderr)


def _parse_set(text: str) -> tuple[str, str]:
    """``Sheet!B4=40`` / ``'My sheet'!B4=x`` / ``name=40`` -> (target, value as typed)."""
    from udfs.app.safe_text import check_argument
    from udfs.xlsx.file_errors import ReferenceSyntaxError

    check_argument(text, "--set")
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
            f"--set {text[:60]!r}: write CELL=VALUE, e.g. Inputs!B4=40 or a_defined_name=40"
        )
    return text[:eq].strip(), text[eq + 1 :]


# ----------------------------------------------------------------------- commands

_MODE_TEXT = {
    "live": "every formula kept with its computed value",
    "values": "a values-only copy, labelled as such, its formulas kept for restoring",
}


def _cmd_calc(args: argparse.Namespace) -> int:
    from udfs.app.calc import (
        check_output_suffix,
        checked_overrides,
        findings,
        open_model,
        prepare_output,
        write_prepared,
    )
    from udfs.app.report import evaluation_lines
    from udfs.xlsx.file_errors import ReferenceSyntaxError
    from udfs.xlsx.files import check_output

    texts: dict[str, str] = {}
    for text in args.set or []:
        target, value = _parse_set(text)
        if any(target.casefold() == t.casefold() for t in texts):
            # a second --set of the same target would silently win over the first
            raise ReferenceSyntaxError(f"--set {target[:60]} is given twice")
        texts[target] = value
    check_output(args.output, args.force, inputs=[args.input])
    model = open_model(args.input, _limits(args), cached=False)  # one shot: not kept
    check_output_suffix(model, args.output)
    evaluation = model.evaluate(checked_overrides(model, texts))
    found = findings(evaluation)
    _lines(*evaluation_lines(model, evaluation, found))
    problems = len(evaluation.errors())
    mode = "values" if args.values_only else "live"
    prepared = prepare_output(model, evaluation, mode)
    del model, evaluation  # writing needs neither: their memory is free for it
    path = write_prepared(prepared, args.output, force=args.force, inputs=(args.input,))
    _say(f"Wrote {path} ({_MODE_TEXT[mode]}); {args.input} was not modified.")
    _caution()
    if args.strict and (found or problems):
        _say(f"{PROG} calc: --strict: {len(found)} design check(s) fire, "
             f"{problems} problem(s)", sys.stderr)
        return 1
    return 0


def _cmd_template(args: argparse.Namespace) -> int:
    from udfs.app import templates

    names = sorted(templates.available())
    if args.list or not args.name:
        if not args.list:
            _say(f"{PROG} template: give a template NAME and -o PATH, or --list", sys.stderr)
        _say("Templates: " + ", ".join(names))
        return 0 if args.list else 2
    if not args.output:
        _say(f"{PROG} template: error: -o PATH is required (see --help)", sys.stderr)
        return 2
    templates.write_template(args.name, args.output, args.force)
    _say(f"Wrote template {args.name!r} to {args.output} (computed: it shows its values "
         "without the add-in).")
    _caution()
    return 0


def _cmd_demo(args: argparse.Namespace) -> int:
    from udfs.app import templates
    from udfs.app.calc import findings
    from udfs.app.demo import demo_spec, format_bom, fresh_demo_name
    from udfs.app.report import evaluation_lines
    from udfs.core.sizing import design_cell
    from udfs.xlsx.files import check_output, write_bytes_atomic

    out = args.output if args.output is not None else fresh_demo_name()
    check_output(out, args.force)  # refuse early, before any work
    _say(format_bom(design_cell(demo_spec())))
    model, evaluation, data = templates.demo_workbook()
    _say("")
    _say("Demo workbook (the cell-sizing template filled with the demo scenario), computed:")
    _lines(*evaluation_lines(model, evaluation, findings(evaluation)))
    write_bytes_atomic(out, data, args.force)
    _say(f"Wrote the demo workbook to {Path(out).resolve()} ({_MODE_TEXT['live']}).")
    _caution()
    return 0


def _cmd_sweep(args: argparse.Namespace) -> int:
    from udfs.app.safe_text import check_argument, one_line, show
    from udfs.app.sweep import all_failed, axes, failures, run_sweep
    from udfs.app.tables import check_table_output, write_table

    for cell in args.output_cells or ():
        check_argument(cell, "--output")
    inputs = [args.input] if args.input else []
    check_table_output(args.out, args.force, inputs)
    table = run_sweep(args.vary or [], args.input, args.model, args.output_cells or (),
                      args.prices, args.workers, _limits(args))
    path = write_table(table, args.out, args.force, inputs)
    _say(f"Swept {table.rows:,} scenarios ({' x '.join(str(n) for n in axes(table))}) "
         f"of {table.source}.")
    _say(f"Outputs: {show(', '.join(table.outputs), 400)}")
    for note in table.notes:
        _say(f"note: {one_line(note)}", sys.stderr)
    _say(f"Wrote {path}.")
    _caution()
    if all_failed(table):
        _say(one_line(f"{PROG} sweep: error: every scenario gives an error value in every "
                      f"output ({'; '.join(failures(table))})"), sys.stderr)
        return 1
    return 0


def _cmd_compare(args: argparse.Namespace) -> int:
    from udfs.app.compare import compare_files
    from udfs.app.tables import check_table_output, write_table

    inputs = list(args.inputs or [])
    if args.out:
        check_table_output(args.out, args.force, inputs)
    result = compare_files(inputs, args.case or [], args.prices)
    for line in result.lines():
        _say(line)
    if args.out:
        _say(f"Wrote {write_table(result.table, args.out, args.force, inputs)}.")
    _caution()
    return 0


def _cmd_risk(args: argparse.Namespace) -> int:
    from udfs.app.risk import risk_paths, run_risk, write_risk_tables
    from udfs.app.tables import check_table_output

    inputs = [args.input] if args.input else []
    if args.out:
        for path in risk_paths(args.out).values():
            check_table_output(path, args.force, inputs)
    result = run_risk(args.range or [], args.samples, args.seed, args.output or ["full_USD_kWh"],
                      args.input, args.prices, args.workers)
    for line in result.lines():
        _say(line)
    if args.out:
        for path in write_risk_tables(result, args.out, args.force, inputs):
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
    p.add_argument(
        "--values-only",
        action="store_true",
        help="write a values-only copy instead of the model: formulas replaced by their values, "
        "labelled as such with the inputs it was computed from (calc restores its formulas)",
    )
    p.add_argument("--force", action="store_true", help="replace OUT if it exists")
    p.add_argument(
        "--strict",
        action="store_true",
        help="exit 1 if any design check fires or any cell has an error or a problem",
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
    p.add_argument("input", nargs="?", metavar="IN.xlsx",
                   help="workbook to sweep; with --model core, the workbook whose inputs start "
                   "the core model (default: the demo cell)")
    p.add_argument(
        "--vary",
        action="append",
        metavar="TARGET=START:STOP:STEP",
        help="Sheet!B4=40:80:5, name=1.05,1.1,1.2, in_cathode=NMC811,LFP or (core) "
        "np_ratio=1.05:1.2:0.05, index:nickel=12000,20000, price:graphite=5:9:1 (repeatable)",
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
        help="an output cell or defined name (repeatable; default: the named formula cells); "
        "with --model core an output such as full_USD_kWh or specific_energy_Wh_kg",
    )
    _prices_and_workers(p)
    _max_formulas(p)
    p.add_argument("--force", action="store_true", help="replace OUT if it exists")
    p.set_defaults(func=_cmd_sweep)

    p = sub.add_parser(
        "compare",
        help="designs side by side: key figures, cost and bill of materials with differences",
        description="Size and cost each design with the core: each workbook's inputs (a "
        "cell-sizing or cost workbook, only read) and each --case (the first design's inputs, "
        "or the demo cell's, with some changed). Prints every key figure, the cost and the "
        "bill of materials in columns with the differences from the first design.",
    )
    p.add_argument("inputs", nargs="*", metavar="IN.xlsx", help="workbooks, one design each")
    p.add_argument("--case", action="append", metavar='"LABEL: in_x=V; in_y=W"',
                   help="a design: the first design's inputs with some changed (repeatable)")
    p.add_argument("--prices", metavar="BOOK.csv", help="a price-book CSV for every design")
    p.add_argument("--out", metavar="OUT.csv|OUT.xlsx", help="also write the table")
    p.add_argument("--force", action="store_true", help="replace OUT if it exists")
    p.set_defaults(func=_cmd_compare)

    p = sub.add_parser(
        "risk",
        help="Monte Carlo of the cost: P10/P50/P90, histogram and tornado",
        description="Run a seeded Monte Carlo of the full cost model of a workbook's cell (or "
        "the demo cell) with inputs given as ranges, and swing each input alone for the "
        "tornado. The same seed gives the same numbers, on this machine or a cluster.",
    )
    p.add_argument("input", nargs="?", metavar="IN.xlsx",
                   help="workbook whose inputs give the cell (default: the demo cell)")
    p.add_argument("--range", action="append", metavar="NAME=LOW,LIKELY,HIGH[,DIST]",
                   help="index:nickel=12000,15500,20000, price:graphite=5,6,9,pert, "
                   "energy_price_USD_per_kWh=0.08,0.1,0.15,uniform (repeatable)")
    p.add_argument("--samples", type=_positive_count, default=1_000_000, metavar="N",
                   help="samples (default 1,000,000)")
    p.add_argument("--seed", type=int, default=2025, help="seed of the draws (default 2025)")
    p.add_argument("--output", action="append", metavar="NAME",
                   help="an output of the cost model (repeatable; default full_USD_kWh)")
    _prices_and_workers(p)
    p.add_argument("--out", metavar="OUT.csv|OUT.xlsx",
                   help="also write OUT-percentiles, OUT-histogram and OUT-tornado")
    p.add_argument("--force", action="store_true", help="replace the tables if they exist")
    p.set_defaults(func=_cmd_risk)

    p = sub.add_parser(
        "functions",
        help="print the reference of the spreadsheet functions",
        description="Print every CW_ function with its arguments, units and an example.",
    )
    p.set_defaults(func=_cmd_functions)
    return parser


def _prices_and_workers(p: argparse.ArgumentParser) -> None:
    p.add_argument("--prices", metavar="BOOK.csv",
                   help="a price-book CSV (columns in data/README.md) instead of the workbook's "
                   "or the latest shipped demo book (core model only)")
    p.add_argument("--workers", metavar="N|ADDRESS",
                   help='run on Dask: N local workers, or a scheduler address such as '
                   'tcp://host:8786 (pip install "cellwright[cluster]")')


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
    from udfs.xlsx.guard import limits_for

    return limits_for(args.max_formulas)


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
    from udfs.app.safe_text import one_line
    from udfs.core.errors import CellwrightError
    from udfs.xlsx.file_errors import EngineError
    from udfs.xlsx.files import WriteInterrupted

    debug = os.environ.get("CELLWRIGHT_DEBUG") == "1"
    where = f"{PROG} {args.command}"
    out_of_memory = False
    try:
        return int(args.func(args))
    except (EngineError, CellwrightError) as exc:
        if debug:
            raise
        _say(f"{where}: error: {one_line(exc)}", sys.stderr)
        return 1
    except BrokenPipeError:  # e.g. piped into `head`: stop quietly
        with contextlib.suppress(OSError):
            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 1
    except WriteInterrupted as exc:  # a signal stopped a write: its file is gone
        _say(f"{where}: {one_line(exc)}", sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        _say(f"{where}: interrupted; no output was written", sys.stderr)
        return 130
    except MemoryError:
        out_of_memory = True  # answered below, outside the handler that holds the frames
    except OSError as exc:
        if debug:
            raise
        _say(f"{where}: error: {one_line(exc.strerror or exc)}", sys.stderr)
        return 1
    except Exception as exc:  # never a traceback for the user
        if isinstance(exc, SystemError) and "without exception set" in str(exc):
            # CPython's answer when an allocation fails inside C code (eval() of a
            # number while parsing, seen under a memory cap): out of memory
            out_of_memory = True
        else:
            if debug:
                raise
            _say(
                f"{where}: internal error: {one_line(f'{type(exc).__name__}: {exc}', 300)} "
                "(set CELLWRIGHT_DEBUG=1 for details)",
                sys.stderr,
            )
            return 3
    assert out_of_memory
    _out_of_memory(where)
    return 1


def _out_of_memory(where: str) -> NoReturn:
    """Say so in one line and stop at once: printing or a normal shutdown would need
    memory that is not there (and could print a chain of tracebacks or hang)."""
    import gc

    message = f"{where}: error: out of memory\n".encode()
    gc.collect()
    sys.unraisablehook = lambda _unraisable: None
    with contextlib.suppress(OSError):
        os.write(2, message)
    os._exit(1)


if __name__ == "__main__":
    raise SystemExit(main())
