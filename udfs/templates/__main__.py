"""``python -m udfs.templates --write`` regenerates ``workbook_templates/``;
``--check`` reports (exit 1) any committed template that differs from its builder.
(Drawing a computed sheet needs the engine: that is :mod:`udfs.app.render`.)

Files are written atomically and only when their bytes change (the builder's
output is reproducible), so an unchanged template leaves git clean.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from openpyxl import load_workbook

from . import TEMPLATES
from .snapshot import diff_snapshots, reproducible_bytes, snapshot, write_atomic

_SOURCE_TREE = Path(__file__).resolve().parents[2]
#: workbook_templates/ of a source checkout; an installed package has none (give --dir).
DEFAULT_DIR = (
    _SOURCE_TREE / "workbook_templates" if (_SOURCE_TREE / "pyproject.toml").is_file() else None
)


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="python -m udfs.templates",
        description="Build the template workbooks (cell sizing, potentials, electrolysis).",
    )
    mode = p.add_mutually_exclusive_group(required=True)
    mode.add_argument("--write", action="store_true", help="write the templates into DIR")
    mode.add_argument("--check", action="store_true", help="compare DIR with the builders")
    p.add_argument("--dir", type=Path, default=DEFAULT_DIR,
                   help=f"folder of the .xlsx files (default: {DEFAULT_DIR or 'none'})")
    return p


def main(argv: list[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    if args.dir is None:
        print("python -m udfs.templates: give --dir (no source checkout here)", file=sys.stderr)
        return 2
    folder: Path = args.dir
    if args.write:
        folder.mkdir(parents=True, exist_ok=True)
    elif not folder.is_dir():
        print(f"python -m udfs.templates: {folder} is not a folder", file=sys.stderr)
        return 2
    status = 0
    for name, build in TEMPLATES.items():
        path = folder / f"{name}.xlsx"
        if args.write:
            data = reproducible_bytes(build())
            if path.is_file() and path.read_bytes() == data:
                print(f"{path}: unchanged")
                continue
            write_atomic(path, data)
            print(f"{path}: written")
            continue
        if not path.is_file():
            print(f"{path}: missing (run --write)")
            status = 1
            continue
        diffs = diff_snapshots(snapshot(load_workbook(path)), snapshot(build()))
        if diffs:
            status = 1
            print(f"{path}: differs from its builder (run --write):")
            for line in diffs:
                print(f"  {line}")
        else:
            print(f"{path}: matches its builder")
    return status


if __name__ == "__main__":
    sys.exit(main())
