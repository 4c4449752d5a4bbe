"""Every Python example in the README runs as written (from the repository root)."""

from __future__ import annotations

import os
import pathlib
import re

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]
BLOCKS = re.findall(r"```python\n(.*?)```", (ROOT / "README.md").read_text(encoding="utf-8"), re.S)


@pytest.mark.parametrize("code", BLOCKS, ids=[f"block{i}" for i in range(len(BLOCKS))])
def test_readme_python_example_runs(code, capsys):
    here = os.getcwd()
    os.chdir(ROOT)
    try:
        exec(compile(code, "README.md", "exec"), {})
    finally:
        os.chdir(here)
    assert capsys.readouterr().out.strip()


def test_readme_has_the_two_quick_start_commands():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "sitesettle check demo_site" in text and "python -m pytest -q" in text
