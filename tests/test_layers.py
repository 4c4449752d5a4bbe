"""The core modules stay pure: no pint, matplotlib, pandas, I/O or CLI imports.

Rule from the project's style guide (DEVELOPERS.md, "Layers").
"""

import ast
import pathlib

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1] / "sitesettle"
CORE = [
    "stress.py",
    "treecode.py",
    "farfield.py",
    "ground.py",
    "checks.py",
    "criteria.py",
    "analysis.py",
    "site.py",
    "results.py",
]
CORE += [f"methods/{p.name}" for p in (ROOT / "methods").glob("*.py")]
FORBIDDEN = ("pint", "matplotlib", "pandas", "geopandas", "sitesettle.io", "sitesettle_cli", "tqdm")


@pytest.mark.parametrize("name", CORE)
def test_core_module_imports_nothing_from_the_edges(name):
    path = ROOT / name
    if not path.exists():
        pytest.skip(f"{name} not written yet")
    tree = ast.parse(path.read_text())
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            mods = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            mods = [node.module or ""]
        else:
            continue
        for m in mods:
            assert not m.startswith(FORBIDDEN), f"{name} imports {m}"
