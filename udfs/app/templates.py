"""Template workbooks as files: built by ``udfs.templates``, computed, written safely.

A template is written computed: every formula keeps its formula and carries its
value, so it shows numbers wherever it is opened, with or without the add-in.
``python -m udfs.app.templates --write`` regenerates ``workbook_templates/``
this way; ``--check`` says whether the committed files match their builders.

>>> sorted(available())
['cell_sizing', 'cost', 'electrolysis', 'potentials']
"""

from __future__ import annotations

import argparse
import difflib
import os
import sys
from collections.abc import Callable
from pathlib import Path

from openpyxl import Workbook, load_workbook

from udfs.engine.model import Evaluation, WorkbookModel, load_model
from udfs.templates import TEMPLATES, build_demo
from udfs.templates.snapshot import diff_snapshots, reproducible_bytes, snapshot
from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.files import check_output, write_bytes_atomic

from .calc import evaluation_bytes

__all__ = [
    "available",
    "computed",
    "demo_workbook",
    "main",
    "template_bytes",
    "write_template",
]

_SOURCE_TREE = Path(__file__).resolve().parents[2]
#: workbook_templates/ of a source checkout; an installed package has none (give --dir).
DEFAULT_DIR = (
    _SOURCE_TREE / "workbook_templates" if (_SOURCE_TREE / "pyproject.toml").is_file() else None
)


def available() -> dict[str, Callable[[], Workbook]]:
    """Template name -> builder."""
    return dict(TEMPLATES)


def computed(workbook: Workbook, name: str) -> tuple[WorkbookModel, Evaluation, bytes]:
    """A built workbook computed by the engine: (model, evaluation, live .xlsx bytes)."""
    model = load_model(reproducible_bytes(workbook), name)
    evaluation = model.evaluate()
    return model, evaluation, evaluation_bytes(model, evaluation, "live")


def demo_workbook() -> tuple[WorkbookModel, Evaluation, bytes]:
    """The cell-sizing template filled with the demo scenario, computed."""
    return computed(build_demo(), "cellwright-demo.xlsx")


def template_bytes(name: str) -> bytes:
    """The .xlsx bytes of a freshly built and computed template ``name``."""
    if name not in TEMPLATES:
        near = difflib.get_close_matches(name, list(TEMPLATES), n=3)
        hint = f"; did you mean {', '.join(near)}?" if near else ""
        raise WorkbookError(
            f"unknown template {name!r}{hint} (available: {', '.join(sorted(TEMPLATES))})"
        )
    _model, evaluation, data = computed(TEMPLATES[name](), f"{name}.xlsx")
    bad = evaluation.errors()
    if bad:
        raise WorkbookError(f"template {name!r} computes with problems: {bad[0]}")
    return data


def write_template(name: str, path: str | os.PathLike[str], force: bool = False) -> None:
    """Write template ``name``, computed, to ``path`` (atomically; never over a file
    unless ``force``)."""
    if not str(path).lower().endswith(".xlsx"):
        raise WorkbookError(f"{os.fspath(path)}: a template is written as .xlsx")
    check_output(path, force)
    write_bytes_atomic(path, template_bytes(name), force)


def main(argv: list[str] | None = None) -> int:
    """``--write``: regenerate the committed templates (computed, only when changed);
    ``--check``: exit 1 when a committed template differs from its builder."""
    p = argparse.ArgumentParser(prog="python -m udfs.app.templates")
    mode = p.add_mutually_exclusive_group(required=True)
    mode.add_argument("--write", action="store_true", help="write the templates into DIR")
    mode.add_argument("--check", action="store_true", help="compare DIR with the builders")
    p.add_argument("--dir", type=Path, default=DEFAULT_DIR, help="folder of the .xlsx files")
    args = p.parse_args(argv)
    if args.dir is None:
        print("python -m udfs.app.templates: give --dir (no source checkout here)", file=sys.stderr)
        return 2
    folder: Path = args.dir
    status = 0
    for name, build in TEMPLATES.items():
        path = folder / f"{name}.xlsx"
        if args.write:
            folder.mkdir(parents=True, exist_ok=True)
            data = template_bytes(name)
            if path.is_file() and path.read_bytes() == data:
                print(f"{path}: unchanged")
                continue
            write_bytes_atomic(path, data, force=True)
            print(f"{path}: written (computed)")
            continue
        if not path.is_file():
            print(f"{path}: missing (run --write)")
            status = 1
            continue
        diffs = diff_snapshots(snapshot(load_workbook(path)), snapshot(build()))
        if diffs:
            status = 1
            print(f"{path}: differs from its builder (run --write):")
            for line in diffs[:20]:
                print(f"  {line}")
        else:
            print(f"{path}: matches its builder")
    return status


if __name__ == "__main__":
    sys.exit(main())
