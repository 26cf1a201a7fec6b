"""The function reference, generated from the functions' own declarations:
``render_text()`` for ``cellwright functions``, ``render_markdown()`` for the
README block between ``<!-- functions:start -->`` and ``<!-- functions:end -->``.

``python -m udfs.sheet.reference --write-readme [README.md]`` rewrites that
block (and nothing else); ``--check`` exits 1 when it is stale.

>>> "CW_NERNST(e0, electrons, ox_activity, red_activity, [temp_C=25])" in render_text()
True
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from udfs.core.caution import CAUTION

from .declare import Kind, Plan, Section
from .error_values import SheetError
from .registry import CATALOGUE_ORDER, PLANS

__all__ = [
    "END",
    "START",
    "render_markdown",
    "render_text",
    "replace_block",
    "sections",
    "write_readme",
]

START = "<!-- functions:start -->"
END = "<!-- functions:end -->"



def sections() -> Iterator[tuple[str, list[Plan]]]:
    """``(title, declarations)`` per section, each function in the section its
    own declaration names; sections in :class:`Section` order, functions in the
    design's catalogue order (then any others by name)."""
    rank = {name: k for k, name in enumerate(CATALOGUE_ORDER)}
    for section in Section:
        plans = [p for p in PLANS.values() if p.section is section]
        if plans:
            plans.sort(key=lambda p: (rank.get(p.name, len(rank)), p.name))
            yield section.title, plans


def _cell(value: Any) -> str:
    if isinstance(value, str):
        return f'"{value}"'
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def _result(value: Any) -> str:
    if isinstance(value, SheetError):
        return str(value)
    if isinstance(value, float):
        return f"{value:.6g}"
    if isinstance(value, str):
        return f'"{value}"'
    if isinstance(value, list):
        flat = [x for row in value for x in row]
        shown = ", ".join(_result(x) for x in flat[:4])
        more = ", ..." if len(flat) > 4 else ""
        direction = "down" if len(value) > 1 else "right"
        return f"spills {direction}: {shown}{more}"
    return str(value)


def example_line(plan: Plan) -> str:
    """``=CW_X(args) -> result``, computed by the function itself."""
    if plan.example is None:
        return ""
    from .registry import FUNCTIONS

    formula = f"={plan.name}({', '.join(_cell(a) for a in plan.example)})"
    return f"{formula} -> {_result(FUNCTIONS[plan.name](*plan.example))}"


def _returns(plan: Plan) -> str:
    if plan.kind is Kind.RECORD:
        return f"a row of {len(plan.columns)}: {', '.join(plan.columns)} ({plan.returns})"
    return plan.returns


def render_text() -> str:
    """Plain-text reference for the terminal (``cellwright functions``)."""
    lines = ["cellwright spreadsheet functions", ""]
    for title, plans in sections():
        lines += [title, "-" * len(title), ""]
        for plan in plans:
            lines.append(f"{plan.signature_text}  ->  {_returns(plan)}")
            lines.append(f"    {plan.help}")
            width = max((len(a.name) for a in plan.args), default=0)
            for a in plan.args:
                lines.append(f"    {a.name.ljust(width)}  {plan.arg_help(a)}")
            ex = example_line(plan)
            if ex:
                lines.append(f"    e.g. {ex}")
            lines.append("")
    lines += [CONVENTIONS_TEXT, "", CAUTION]
    return "\n".join(lines) + "\n"


CONVENTIONS_TEXT = """\
Conventions: arguments are positional; [optional] ones may be omitted or left empty.
Numeric arguments take a cell or a range; ranges broadcast like numpy (a row against a
column fills a grid). Numeric text counts as its number; TRUE/FALSE are refused. Text
arguments may be ranges too (element by element). Errors name the argument and what
is allowed; in a range result only the bad elements are errors. An error value from
another cell is passed on as that error (#SPILL! and the other newer ones included)."""


_MD_INTRO = """\
_Generated from the functions' declarations by `python -m udfs.sheet.reference --write-readme`;
do not edit by hand. `cellwright functions` prints the same reference in the terminal._

### Using the functions in Excel (Windows, xlwings add-in)

1. Install cellwright into the Python that Excel should use: `pip install .` in this folder.
2. Install the xlwings add-in: `xlwings addin install`.
3. In Excel, allow the add-in to write the function wrappers: File > Options > Trust Center >
   Trust Center Settings > Macro Settings > "Trust access to the VBA project object model".
4. In the workbook (saved as `.xlsm`), open the xlwings ribbon tab, set **UDF Modules** to `udfs`
   (and **Interpreter** to that Python if it is not the default), then click **Import Functions**.
   The functions appear in the function wizard under the category *cellwright*, with help for
   every argument.

Other runtimes: the headless engine (`cellwright calc`) evaluates the same functions without Excel.
xlwings' classic add-in used here is open source (BSD-3-Clause) and runs user-defined functions
on Windows only. xlwings Server is part of xlwings PRO (free for noncommercial use under the
PolyForm Noncommercial License 1.0.0; commercial use needs a paid plan); xlwings Lite runs Python
inside Excel and is described by its makers as free for personal and commercial use. cellwright
is not tested on either of those.

### Conventions

- **Arguments** are positional; `[optional]` ones may be omitted or left empty and take the
  default shown. Units are in the argument names or help (temperatures in degC, charge in Ah,
  energy in Wh, mass in g unless a unit argument says otherwise; units in pint syntax such as
  `"mAh/g"`, `"kWh"`, `"mg/cm^2"`). Unit text is at most 100 characters of unit names, `*`,
  `/`, `^` or `**` with an exponent up to 12 (or a fraction such as `^(1/2)`), parentheses and
  plain numbers as factors (`"1/h"`); anything else is `#VALUE!` with the reason.
- **Ranges broadcast** like numpy arrays: a 1x3 row against a 4x1 column fills a 4x3 grid from
  one formula. Text arguments (formulas, names, units) may be ranges too and broadcast element
  by element. Ranges that cannot be combined give one `#VALUE!` naming both shapes. A result of
  one element is a single value; larger results spill (Excel 365/2021 dynamic arrays; older
  Excel needs the result range selected and the formula entered with Ctrl+Shift+Enter).
- **Cell values**: numbers must be finite; numeric text (`"0.1"`) counts as its number; TRUE/FALSE
  are refused (`#VALUE!`); an empty cell takes the default of an optional argument and is an error
  for a required one. Text is matched leniently in case and spaces where that is unambiguous;
  unknown names give `#N/A` with the closest valid names.
- **Errors** say which argument is wrong and what is allowed, e.g.
  `#NUM! ox_activity must be > 0 (got -0.1)`. In a range result only the bad elements are errors.
  An error value arriving from another cell is passed on; when several arguments are bad, the
  leftmost one decides, in Excel and in the headless engine alike. A newer error value
  (`#SPILL!`, `#CALC!`, `#GETTING_DATA`, ...) is passed on showing its own code; where only the
  classic seven exist (the headless engine's real error values) it counts as `#N/A`. The
  classic Windows add-in cannot return real error values, so there the cell shows this text
  (test it with `=LEFT(A1,1)="#"`; IFERROR does not see it); the headless engine returns real
  error values (`#NUM!`, `#VALUE!`, `#N/A`) that IFERROR and propagation understand. A Python
  traceback never reaches a cell.
"""


def _md_escape(text: str) -> str:
    return text.replace("|", "\\|")


def render_markdown() -> str:
    """The README's function reference (the text between the markers)."""
    out = [_MD_INTRO]
    for title, plans in sections():
        out.append(f"### {title}\n")
        for plan in plans:
            out.append(f"#### `{plan.signature_text}`\n")
            out.append(f"{plan.help} Returns: {_returns(plan)}.\n")
            if plan.args:
                out.append("| argument | meaning |\n|---|---|")
                for a in plan.args:
                    out.append(f"| `{a.name}` | {_md_escape(plan.arg_help(a))} |")
                out.append("")
            ex = example_line(plan)
            if ex:
                out.append(f"Example: `{ex}`\n")
    out.append(f"> {CAUTION}\n")
    return "\n".join(out)


def replace_block(text: str, block: str) -> str:
    """``text`` with the part between the markers replaced by ``block``."""
    start = text.find(START)
    end = text.find(END)
    if start < 0 or end < start:
        raise ValueError(f"README has no {START} ... {END} block")
    head = text[: start + len(START)]
    return f"{head}\n{block.rstrip()}\n{text[end:]}"


def current_block(text: str) -> str:
    start = text.find(START)
    end = text.find(END)
    if start < 0 or end < start:
        raise ValueError(f"README has no {START} ... {END} block")
    return text[start + len(START) : end].strip("\n")


def write_readme(path: Path) -> bool:
    """Regenerate the block in ``path`` (atomic rename); True if it changed."""
    text = path.read_text(encoding="utf-8")
    new = replace_block(text, render_markdown())
    if new == text:
        return False
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=".README.", suffix=".tmp")
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(new)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return True


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(
        prog="python -m udfs.sheet.reference", description="Print or write the function reference."
    )
    parser.add_argument(
        "readme", nargs="?", default="README.md", help="README path (default README.md)"
    )
    group = parser.add_mutually_exclusive_group()
    group.add_argument(
        "--write-readme", action="store_true", help="rewrite the README's function block"
    )
    group.add_argument("--check", action="store_true", help="exit 1 if the README block is stale")
    group.add_argument("--markdown", action="store_true", help="print the markdown block")
    ns = parser.parse_args(argv)
    path = Path(ns.readme)
    if ns.write_readme or ns.check:
        if not path.is_file():
            print(f"error: {path} not found", file=sys.stderr)
            return 2
        if ns.check:
            stale = current_block(path.read_text(encoding="utf-8")) != render_markdown().rstrip()
            print(f"{path}: function reference is {'stale' if stale else 'up to date'}")
            return 1 if stale else 0
        changed = write_readme(path)
        print(f"{path}: function reference {'rewritten' if changed else 'already up to date'}")
        return 0
    print(render_markdown() if ns.markdown else render_text(), end="")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
