"""The function reference: complete, generated from the declarations, and the
README's copy is not stale."""

from __future__ import annotations

from pathlib import Path

import pytest

from udfs.sheet import reference
from udfs.sheet.registry import CATALOGUE_ORDER, PLANS

README = Path(__file__).resolve().parents[2] / "README.md"


def test_readme_block_is_current() -> None:
    text = README.read_text(encoding="utf-8")
    assert reference.START in text and reference.END in text
    assert reference.current_block(text) == reference.render_markdown().rstrip(), (
        "README function reference is stale: run python -m udfs.sheet.reference --write-readme"
    )


def test_text_reference_lists_every_function_with_its_help() -> None:
    text = reference.render_text()
    for name in CATALOGUE_ORDER:
        plan = PLANS[name]
        assert plan.signature_text in text
        assert plan.help in text
        for a in plan.args:
            assert plan.arg_help(a) in text
    assert "qualified engineers" in text  # the caution


def test_markdown_reference_has_every_function_and_example() -> None:
    md = reference.render_markdown()
    for name in CATALOGUE_ORDER:
        assert f"#### `{PLANS[name].signature_text}`" in md
        assert f"Example: `={name}(" in md
    assert "#VALUE!" in md and "UDF Modules" in md


def test_write_readme_only_touches_the_block(tmp_path: Path) -> None:
    path = tmp_path / "README.md"
    path.write_text(f"# Title\n\nbefore\n\n{reference.START}\nold text\n{reference.END}\n\nafter\n")
    assert reference.main([str(path), "--check"]) == 1
    assert reference.write_readme(path) is True
    new = path.read_text()
    assert new.startswith("# Title\n\nbefore\n\n") and new.endswith(f"{reference.END}\n\nafter\n")
    assert "old text" not in new
    assert reference.main([str(path), "--check"]) == 0
    assert reference.write_readme(path) is False


def test_missing_markers_are_an_error(tmp_path: Path) -> None:
    path = tmp_path / "README.md"
    path.write_text("# no markers\n")
    with pytest.raises(ValueError):
        reference.write_readme(path)
    assert path.read_text() == "# no markers\n"
