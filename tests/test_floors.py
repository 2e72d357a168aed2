"""The floors of docs/architecture.md import only downwards (a static check of the source)."""

from __future__ import annotations

import ast
from pathlib import Path

import nestfit
from nestfit import _display

SRC = Path(nestfit.__file__).resolve().parent
# Floor of each top-level part of the package (docs/architecture.md, "Floors").
FLOORS = {"errors": 1, "_data": 1, "_decimal": 1, "_decimal_numbers": 1, "_display": 1, "linalg": 2,
          "design": 3, "report": 5, "cli": 6, "_commands": 6}


def _floor(module: str) -> int:
    part = module.split(".")[1] if module.count(".") else ""
    return FLOORS.get(part, 4)


def _imports(path: Path) -> list[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names = []
    for node in ast.walk(tree):  # every import, at module level or inside functions
        if isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.append(node.module)
        elif isinstance(node, ast.Import):
            names.extend(alias.name for alias in node.names)
    return [n for n in names if n.startswith("nestfit.")]


def test_no_module_imports_a_higher_floor() -> None:
    upward = []
    for path in SRC.rglob("*.py"):
        rel = path.relative_to(SRC.parent).with_suffix("")
        module = ".".join(rel.parts)
        if module in ("nestfit.__init__", "nestfit.__main__"):
            continue  # the package's front door re-exports every floor
        own = _floor(module)
        for target in _imports(path):
            if _floor(target) > own:
                upward.append(f"{module} -> {target}")
    assert upward == []


def test_display_registry_falls_back_to_text() -> None:
    assert _display.html_for("no such result", object()) is None
    fit = nestfit.groups(y=[1.0, 2.0, 3.0, 5.0], factor=["a", "a", "b", "b"]).separate_means()
    html = fit._repr_html_()
    assert html is not None and "separate means" in html
