"""Hostile text cannot spoof the terminal, run as a spreadsheet formula or hide a file read.

* A project name holding a line break, a fake "PASS — every check passes" line and
  ANSI escapes prints as one escaped line; the real FAIL verdict is the only verdict.
* Every text cell of the written CSV files that begins with = + - @ tab or CR is a
  number (negative values stay numbers); any other such text gets a leading quote
  (OWASP "CSV Injection": a leading apostrophe makes a spreadsheet keep it as text).
* Hypothesis properties: any text prints as one line of visible characters; any id
  that is accepted prints as itself and stays text in a spreadsheet; NFC and NFD
  spellings of an id are the same id.
* Files read from outside the project folder are listed in the warning lines, in
  summary.json and in the report.
"""

from __future__ import annotations

import csv
import io
import json
import pathlib
import shutil
import unicodedata
from contextlib import redirect_stderr, redirect_stdout

import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from sitesettle_cli.main import main

import sitesettle
from sitesettle.errors import InputError
from sitesettle.io.output import format_table, spreadsheet_safe
from sitesettle.io.text import (
    FORBIDDEN_CATEGORIES,
    FORMULA_START,
    identifier,
    spreadsheet_text,
    terminal_line,
    terminal_text,
)

STARTER = pathlib.Path(sitesettle.__file__).resolve().parent / "templates" / "starter"
SPOOF = "Unit 4\nPASS — every check passes\x1b[2K\x1b[1A\u202e"


def run(*args: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        rc = main(list(args))
    return rc, out.getvalue(), err.getvalue()


def _project(tmp_path: pathlib.Path, name: str = "p") -> pathlib.Path:
    folder = tmp_path / name
    shutil.copytree(STARTER, folder)
    toml = (folder / "site.toml").read_text(encoding="utf-8")
    toml = toml.replace('map_spacing = "0 m"', 'map_spacing = "3 m"')  # a quick map
    (folder / "site.toml").write_text(toml, encoding="utf-8")
    return folder


@pytest.fixture(scope="module")
def spoofed(tmp_path_factory):
    """A project folder whose name (the default project name) holds a line break, a
    fake verdict and escapes; a 1 mm total limit makes the real verdict FAIL."""
    base = tmp_path_factory.mktemp("spoof")
    folder = _project(base, SPOOF)
    toml = (folder / "site.toml").read_text(encoding="utf-8")
    toml = toml.replace('name = "Workshop, Unit 4"', "")
    toml = toml.replace("[checks.overrides]", '[checks.overrides]\ntotal = "1 mm"')
    (folder / "site.toml").write_text(toml, encoding="utf-8")
    results = base / "results"
    rc, stdout, err = run("check", str(folder), "--out", str(results))
    return results, rc, stdout, err


def test_a_spoofing_folder_name_prints_as_one_escaped_line(spoofed):
    results, rc, out, err = spoofed
    assert rc == 1, err
    lines = out.splitlines()
    assert not [ln for ln in lines if ln.startswith("PASS")], out  # no fake verdict line
    verdicts = [ln for ln in lines if ln.startswith(("PASS —", "FAIL —"))]
    assert len(verdicts) == 1 and verdicts[0].startswith("FAIL"), verdicts
    assert "\x1b" not in out and "\u202e" not in out
    assert "Unit 4\\nPASS — every check passes\\x1b[2K\\x1b[1A\\u202e" in lines[0], lines[0]


def test_a_spoofing_results_path_is_refused_on_one_escaped_line(tmp_path):
    folder = _project(tmp_path)
    rc, out, err = run("check", str(folder), "--out", str(tmp_path / SPOOF))
    assert rc == 2 and out == "", err
    assert len(err.splitlines()) == 1 and "\x1b" not in err and "\u202e" not in err, err
    assert "Unit 4\\nPASS" in err and "U+000A" in err, err
    assert not (tmp_path / SPOOF).exists()


def test_a_spoofing_project_name_is_refused_on_one_line(tmp_path):
    folder = _project(tmp_path)
    toml = (folder / "site.toml").read_text(encoding="utf-8")
    toml = toml.replace('name = "Workshop, Unit 4"', f"name = {json.dumps(SPOOF)}")
    (folder / "site.toml").write_text(toml, encoding="utf-8")
    rc, out, err = run("check", str(folder))
    assert rc == 2 and out == ""
    assert len(err.splitlines()) == 1 and "\x1b" not in err and "\u202e" not in err, err
    assert "[project], key 'name'" in err and "U+000A" in err, err


def test_notes_may_run_over_several_lines(tmp_path):
    folder = _project(tmp_path)
    toml = (folder / "site.toml").read_text(encoding="utf-8")
    toml = toml.replace('notes = "Starter project:', 'notes = "Line one\\nStarter project:')
    (folder / "site.toml").write_text(toml, encoding="utf-8")
    assert sitesettle.load_site(folder).info["notes"].startswith("Line one\nStarter")


def test_every_formula_like_csv_cell_is_a_number(spoofed):
    """In a real run no number is quoted and every formula-like cell is a number."""
    results, *_ = spoofed
    cells = 0
    for name in ("footings.csv", "pairs.csv", "settlement_time.csv"):
        rows = list(csv.reader((results / name).read_text("utf-8").splitlines()))
        for row in rows[1:]:
            for cell in row:
                cells += 1
                assert not cell.startswith("'"), (name, cell)  # nothing here needed a quote
                if cell.startswith(FORMULA_START):
                    float(cell)  # a number such as -0.012, never text
    assert cells > 100


def test_text_cells_are_neutralised_and_numbers_kept():
    df = pd.DataFrame(
        {
            "id": ["C1", "C2", "C3"],
            "tilt": [-3.2, 0.0, 1.5],
            "total_mm": [-0.0123, 4.0, 5.0],
            "reasons": ["=HYPERLINK(1)", "+cmd|x", "total 85 mm > 50 mm"],
            "limit_source": ["@SUM(1)", "-2+3", "\tx"],
        }
    )
    text = format_table(spreadsheet_safe(df)).to_csv(index=False, lineterminator="\n")
    rows = list(csv.DictReader(io.StringIO(text)))
    assert [r["reasons"] for r in rows] == ["'=HYPERLINK(1)", "'+cmd|x", "total 85 mm > 50 mm"]
    assert [r["limit_source"] for r in rows] == ["'@SUM(1)", "'-2+3", "'\tx"]
    assert rows[0]["tilt"] == "-3.2" and rows[0]["total_mm"] == "-0.012"


# ------------------------------------------------------------------ hypothesis
_ANY_TEXT = st.text(st.characters(codec="utf-8"), max_size=60)
_ESCAPED = FORBIDDEN_CATEGORIES | {"Zs"}


@given(_ANY_TEXT)
@settings(max_examples=400, deadline=None)
def test_any_text_prints_as_one_line_of_visible_characters(text):
    line = terminal_line(text)
    assert "\n" not in line and "\r" not in line
    assert not [c for c in line if unicodedata.category(c) in _ESCAPED and c != " "]
    assert terminal_text(text).count("\n") == text.count("\n")


@given(_ANY_TEXT)
@settings(max_examples=400, deadline=None)
def test_any_text_cell_stays_text_in_a_spreadsheet(text):
    cell = spreadsheet_text(text)
    assert not cell.startswith(FORMULA_START)
    assert cell in (text, "'" + text)


@given(_ANY_TEXT)
@settings(max_examples=400, deadline=None)
def test_an_accepted_id_prints_as_itself_and_stays_text(text):
    try:
        fid = identifier(text, "footings.csv row 2")
    except InputError as exc:
        assert "\n" not in str(exc)  # the refusal is one line too
        return
    assert terminal_line(fid) == fid  # nothing to escape: one line, as written
    assert spreadsheet_text(fid) == fid  # nothing to neutralise
    assert not fid.startswith(FORMULA_START)
    assert fid == unicodedata.normalize("NFC", fid)
    buf = io.StringIO()
    csv.writer(buf, lineterminator="\n").writerow([fid, -1.5])
    back = next(csv.reader(io.StringIO(buf.getvalue())))
    assert back == [fid, "-1.5"]


@given(st.text(st.characters(categories=["L", "N", "M"]), min_size=1, max_size=20))
@settings(max_examples=200, deadline=None)
def test_nfc_and_nfd_spellings_are_one_id(text):
    nfc, nfd = unicodedata.normalize("NFC", text), unicodedata.normalize("NFD", text)
    try:
        a = identifier(nfc, "x")
    except InputError:
        return
    assert identifier(nfd, "x") == a


# ------------------------------------------------------------- outside files
def test_files_read_from_outside_the_project_are_listed(tmp_path):
    folder = _project(tmp_path, "p")
    shared = tmp_path / "shared"
    shared.mkdir()
    shutil.move(folder / "boreholes.csv", shared / "boreholes.csv")
    toml = (folder / "site.toml").read_text(encoding="utf-8")
    toml = toml.replace('file = "boreholes.csv"', 'file = "../shared/boreholes.csv"')
    (folder / "site.toml").write_text(toml, encoding="utf-8")
    rc, out, err = run("check", str(folder))
    assert rc in (0, 1), err
    real = str((shared / "boreholes.csv").resolve())
    lines: list[str] = []  # warnings on stderr (issue 16), wrapped lines joined
    for ln in err.splitlines():
        if ln.startswith("    ") and lines:
            lines[-1] += ln.strip()
        else:
            lines.append(ln)
    assert any(ln.startswith("warning: files read from outside") and real in ln for ln in lines), (
        err
    )
    summary = json.loads((folder / "results" / "summary.json").read_text("utf-8"))
    assert summary["files_outside_project"] == [real]
    assert real in (folder / "results" / "report.html").read_text("utf-8")


def test_no_file_is_listed_for_a_self_contained_project(tmp_path):
    site = sitesettle.load_site(_project(tmp_path))
    assert site.outside_files == ()
