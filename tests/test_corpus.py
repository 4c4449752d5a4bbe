"""Every broken project of tests/corpus/ is refused with one clear message and writes nothing.

Each case folder holds a complete project and a ``case.toml`` saying what is wrong,
where the message must point (file and row, column or key) and what it must say
(tests/corpus/make_corpus.py writes them). The command must exit with code 2, print
exactly one line ``error: …`` on stderr, no traceback, nothing on stdout, and leave
every file of the folder as it was (no results folder, no temporary folder; an
earlier results folder unchanged). A case marked ``warning`` is valid but unusual:
it runs (exit 0 or 1) and prints a warning naming the key.
"""

from __future__ import annotations

import pathlib
import re
import shutil
import subprocess
import sys
import tomllib

import pytest
from sitesettle_cli.main import main

CORPUS = pathlib.Path(__file__).resolve().parent / "corpus"
CASES = sorted(p.name for p in CORPUS.iterdir() if (p / "case.toml").is_file())
#: the families of cases the corpus must cover (prefix of the case name → what)
FAMILIES = {
    "toml_": "site.toml syntax, keys and values",
    "unit_": "units of the wrong dimension or unknown",
    "suspicious_": "valid values of suspicious magnitude (warnings)",
    "implausible_": "values outside the plausible range (bad input naming the unit meant)",
    "override_": "limit overrides without a unit or outside the plausible range",
    "strata_": "[[strata]] parameters",
    "footing_": "the footings CSV file",
    "gis_": "GIS footing files: geometry and coordinate systems",
    "bh_": "the boreholes file",
    "cpt_": "the soundings file",
    "out_": "the results folder",
    "text_": "ids and names: invisible, control and formula characters, length",
    "file_": "input files that are not what they claim (folders, GDAL virtual files)",
    "ags_": "AGS4 investigation files: the format's checker, the strata mapping",
    "gef_": "GEF cone-sounding files",
    "xlsx_": ".xlsx schedules: merged cells, sheets, cells",
    "dxf_": "DXF footing plans: open outlines, missing ids",
}


#: the installed console script when it sits beside this interpreter, else the module
_SCRIPT = pathlib.Path(sys.executable).with_name("sitesettle")
_COMMAND = [str(_SCRIPT)] if _SCRIPT.is_file() else [sys.executable, "-m", "sitesettle_cli.main"]


def _spec(name: str) -> dict:
    return tomllib.loads((CORPUS / name / "case.toml").read_text(encoding="utf-8"))


def _snapshot(folder: pathlib.Path) -> dict[str, bytes | None]:
    """Every file and folder under ``folder``: relative path → bytes (None for a folder)."""
    return {
        str(p.relative_to(folder)): (p.read_bytes() if p.is_file() else None)
        for p in sorted(folder.rglob("*"))
    }


def _copy(name: str, tmp_path: pathlib.Path) -> tuple[pathlib.Path, list[str]]:
    """The case copied to tmp_path (the repository's copy is never run) and its extra args."""
    folder = tmp_path / name
    shutil.copytree(CORPUS / name, folder)
    args = [a.replace("{case}", str(folder)) for a in _spec(name).get("args", [])]
    return folder, args


def _check_message(spec: dict, err: str) -> None:
    lines = err.strip().splitlines()
    assert len(lines) == 1, err  # one message, no traceback
    line = lines[0]
    assert line.startswith("error: "), line
    assert "Traceback" not in err
    assert spec["where"] in line, (spec["where"], line)  # file and row, column or key
    assert re.search(spec["message"], line), (spec["message"], line)  # what is wrong
    if spec.get("expected"):
        assert re.search(r"; expected .*" + spec["expected"], line), line  # what is expected


def test_corpus_is_large_and_covers_every_family():
    assert len(CASES) >= 40
    for prefix in FAMILIES:
        assert any(c.startswith(prefix) for c in CASES), prefix
    assert all(any(c.startswith(p) for p in FAMILIES) for c in CASES)


def test_corpus_folders_match_the_generator():
    """Every case of make_corpus.py has its folder and every folder its case."""
    sys.path.insert(0, str(CORPUS))
    try:
        import make_corpus
    finally:
        sys.path.remove(str(CORPUS))
    assert sorted(make_corpus.CASES) == CASES
    for name, spec in make_corpus.CASES.items():
        assert _spec(name)["where"] == spec["where"]


@pytest.mark.parametrize("name", [c for c in CASES if not _spec(c).get("warning")])
def test_broken_project_is_refused_and_nothing_is_written(name, tmp_path, capsys):
    spec = _spec(name)
    folder, args = _copy(name, tmp_path)
    before = _snapshot(tmp_path)
    rc = main(["check", str(folder), *args])
    out, err = capsys.readouterr()
    assert rc == 2, (rc, err)
    assert out == ""
    _check_message(spec, err)
    assert _snapshot(tmp_path) == before  # nothing written, nothing removed, nothing changed


@pytest.mark.parametrize("name", ["toml_syntax", "gis_self_intersecting"])
def test_broken_project_through_the_real_command(name, tmp_path):
    """The installed console script in a fresh process: no traceback reaches stderr."""
    spec = _spec(name)
    folder, args = _copy(name, tmp_path)
    before = _snapshot(tmp_path)
    run = subprocess.run(
        [*_COMMAND, "check", str(folder), *args],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert run.returncode == 2, run.stderr
    assert run.stdout == ""
    _check_message(spec, run.stderr)
    assert _snapshot(tmp_path) == before


@pytest.mark.parametrize("name", [c for c in CASES if _spec(c).get("warning")])
def test_suspicious_value_warns_and_runs(name, tmp_path, capsys):
    spec = _spec(name)
    folder, args = _copy(name, tmp_path)
    rc = main(["check", str(folder), *args])
    out, err = capsys.readouterr()
    assert rc in (0, 1), err
    # warnings go to stderr (issue 16), wrapped at 100 columns: join the continuations
    warnings: list[str] = []
    for line in err.splitlines():
        if line.startswith("warning: "):
            warnings.append(line)
        elif warnings and line.startswith("    "):
            warnings[-1] += " " + line.strip()
    assert warnings, err
    assert any(spec["where"] in w and re.search(spec["message"], w) for w in warnings), warnings
    assert "Traceback" not in err
    assert (folder / "results" / "footings.csv").is_file()
