"""The layout shows the architecture: imports run one way, dependencies by public names.

* ``udfs.core`` imports nothing of ours; ``udfs.sheet`` only core; ``udfs.xlsx`` (file
  handling) only the sheet's error values, and never ``formulas``; ``udfs.engine``
  only sheet and xlsx; ``udfs.templates`` only core; ``udfs.app`` anything below it;
  ``udfs.cli`` only app (and core for the caution text);
* nothing imports a private name (a leading underscore) of ``formulas``, ``schedula``
  or ``openpyxl``, nor reads such an attribute of them.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "udfs"

#: what each layer may import from ``udfs`` (by prefix)
ALLOWED: dict[str, tuple[str, ...]] = {
    "udfs.core": ("udfs.core",),
    "udfs.sheet": ("udfs.sheet", "udfs.core"),
    "udfs.xlsx": ("udfs.xlsx", "udfs.sheet.error_values"),
    "udfs.engine": ("udfs.engine", "udfs.sheet", "udfs.xlsx"),
    "udfs.templates": ("udfs.templates", "udfs.core"),
    "udfs.app": ("udfs.app", "udfs.engine", "udfs.templates", "udfs.xlsx", "udfs.sheet",
                 "udfs.core"),
    "udfs.cli": ("udfs.app", "udfs.core", "udfs.xlsx", "udfs.sheet.reference"),
}
NO_FORMULAS = ("udfs.core", "udfs.sheet", "udfs.xlsx", "udfs.templates")
THIRD_PARTY = ("formulas", "schedula", "openpyxl")


def _modules() -> list[tuple[str, Path]]:
    out = []
    for path in sorted(PACKAGE.rglob("*.py")):
        rel = path.relative_to(ROOT).with_suffix("")
        parts = list(rel.parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out.append((".".join(parts), path))
    return out


def _imports(name: str, path: Path) -> list[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found: list[str] = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found += [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                mod = ".".join(base + ([node.module] if node.module else []))
            else:
                mod = node.module or ""
            found.append(mod)
            found += [f"{mod}.{a.name}" for a in node.names]
    return found


def _layer(name: str) -> str | None:
    for layer in sorted(ALLOWED, key=len, reverse=True):
        if name == layer or name.startswith(layer + "."):
            return layer
    return None


@pytest.mark.parametrize(("name", "path"), _modules(), ids=lambda v: str(v))
def test_imports_run_one_way(name, path):
    layer = _layer(name)
    if layer is None:
        return  # udfs/__init__.py and the data package
    for target in _imports(name, path):
        if target.startswith("udfs.") or target == "udfs":
            ok = any(target == a or target.startswith(a + ".") for a in ALLOWED[layer])
            ok = ok or target in ("udfs", "udfs.data")
            assert ok, f"{name} imports {target} ({layer} may import {ALLOWED[layer]})"
        if layer in NO_FORMULAS:
            assert not target.startswith(("formulas", "schedula")), f"{name} imports {target}"


@pytest.mark.parametrize(("name", "path"), _modules(), ids=lambda v: str(v))
def test_no_private_names_of_the_spreadsheet_libraries(name, path):
    tree = ast.parse(path.read_text(encoding="utf-8"))
    aliases: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and (node.module or "").startswith(THIRD_PARTY):
            assert not any(p.startswith("_") for p in (node.module or "").split(".")), node.module
            for a in node.names:
                assert not a.name.startswith("_"), f"{name}: from {node.module} import {a.name}"
                aliases.add(a.asname or a.name)
        elif isinstance(node, ast.Import):
            for a in node.names:
                if a.name.startswith(THIRD_PARTY):
                    aliases.add((a.asname or a.name).split(".")[0])
    for node in ast.walk(tree):
        if isinstance(node, ast.Attribute) and node.attr.startswith("_") and not (
            node.attr.startswith("__") and node.attr.endswith("__")
        ):
            base = node.value
            while isinstance(base, ast.Attribute):
                base = base.value
            if isinstance(base, ast.Name):
                assert base.id not in aliases, f"{name}: {base.id}...{node.attr}"


def test_every_module_is_in_a_layer():
    assert {_layer(n) for n, _ in _modules()} - {None} == set(ALLOWED)
