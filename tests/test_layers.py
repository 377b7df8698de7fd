"""The pipeline's import order: each stage imports only the stages before it (DEVELOPERS.md)."""

from __future__ import annotations

import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parent.parent / "sortcheck"
STAGES = ["errors", "model", "load", "engines", "explain", "report", "certify", "cli"]


def stage_of(module: str) -> int | None:
    parts = module.split(".")
    if parts[0] != "sortcheck":
        return None
    if len(parts) == 1 or parts[1] in ("__init__", "__main__", "api", "testing"):
        return len(STAGES)  # the package facade may import everything
    return STAGES.index(parts[1])


def imported_modules(path: Path):
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            yield from (alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module:
            yield node.module


def test_every_module_imports_only_earlier_stages():
    checked = 0
    for path in PACKAGE.rglob("*.py"):
        relative = path.relative_to(PACKAGE.parent).with_suffix("")
        module = ".".join(relative.parts).removesuffix(".__init__")
        own = stage_of(module)
        for imported in imported_modules(path):
            other = stage_of(imported)
            if other is None or imported == "sortcheck":
                continue
            assert other <= own, f"{module} (stage {STAGES[own] if own < len(STAGES) else 'top'}) imports {imported}"
            checked += 1
    assert checked > 20


def test_the_stage_list_names_real_modules():
    present = {p.stem if p.is_file() else p.name for p in PACKAGE.iterdir() if not p.name.startswith("_")}
    assert {"errors", "model", "load", "engines", "report", "cli"} <= present
