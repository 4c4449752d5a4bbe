"""Untrusted text stays text: HTML, quotes, TeX and very long strings in every name.

The starter project is rewritten so that its name, notes, footing ids, borehole ids
and stratum names hold ``<script>alert(1)</script>``, ``"&'``, ``$x^2$`` and a
300-character string. ``sitesettle check`` must succeed (terminal summary, figures
and report do not fail on such text), report.html must carry the strings escaped,
and headless Chromium (tests/test_report_browser.py's runner) must show them as
text with no script element in the DOM.
"""

from __future__ import annotations

import csv
import html
import io
import json
import pathlib
import re
import warnings

import pytest
from sitesettle_cli.main import main
from test_report_browser import _parse, _run_chromium

import sitesettle

STARTER = pathlib.Path(sitesettle.__file__).resolve().parent / "templates" / "starter"
SCRIPT = "<script>alert(1)</script>"
QUOTES = "\"&'"
TEX = "$x^2$"
LONG = "Long-" + "".join(chr(ord("a") + i % 26) for i in range(295))
NAME = f"{SCRIPT} {QUOTES} {TEX} {LONG}"
#: the longest id accepted (sitesettle.io.text.MAX_ID_LENGTH)
LONG_ID = LONG[:100]
FOOTINGS = {"C1": SCRIPT, "C2": QUOTES, "C3": TEX, "C4": LONG_ID}
BOREHOLES = {"BH1": SCRIPT, "BH2": QUOTES, "BH3": TEX}
#: warnings raised while the command ran (filled by the ``checked`` fixture)
CAUGHT: list[str] = []
STRATA = {"made ground": SCRIPT, "sand": QUOTES, "clay": f"clay {TEX}"}


def _rewrite_csv(path: pathlib.Path, column: int, names: dict[str, str]) -> None:
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    for line in path.read_text(encoding="utf-8").splitlines():
        if line.startswith("#"):
            out.write(line + "\n")
            continue
        cells = next(csv.reader([line]))
        cells[column] = names.get(cells[column], cells[column])
        writer.writerow(cells)
    path.write_text(out.getvalue(), encoding="utf-8")


def _rewrite_stratum(path: pathlib.Path, names: dict[str, str]) -> None:
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    for line in path.read_text(encoding="utf-8").splitlines():
        if line.startswith("#"):
            out.write(line + "\n")
            continue
        cells = next(csv.reader([line]))
        cells[0] = BOREHOLES.get(cells[0], cells[0])
        cells[3] = names.get(cells[3], cells[3])
        writer.writerow(cells)
    path.write_text(out.getvalue(), encoding="utf-8")


@pytest.fixture(scope="module")
def project(tmp_path_factory):
    folder = tmp_path_factory.mktemp("nasty") / "project"
    folder.mkdir()
    for item in STARTER.iterdir():
        (folder / item.name).write_bytes(item.read_bytes())
    toml = (folder / "site.toml").read_text(encoding="utf-8")
    toml = toml.replace('name = "Workshop, Unit 4"', f"name = {json.dumps(NAME)}")
    toml = re.sub(r'^notes = ".*"', f"notes = {json.dumps(NAME + ' notes')}", toml, flags=re.M)
    for old, new in STRATA.items():
        toml = toml.replace(f'name = "{old}"', f"name = {json.dumps(new)}")
    toml = toml.replace('map_spacing = "0 m"', 'map_spacing = "3 m"')  # a quicker map
    (folder / "site.toml").write_text(toml, encoding="utf-8")
    _rewrite_csv(folder / "footings.csv", 0, FOOTINGS)
    _rewrite_stratum(folder / "boreholes.csv", STRATA)
    return folder


@pytest.fixture(scope="module")
def checked(project):
    out = project.parent / "results"
    import contextlib

    stdout, stderr = io.StringIO(), io.StringIO()
    with warnings.catch_warnings(record=True) as caught:  # kept for the layout test below
        warnings.simplefilter("always")
        with contextlib.redirect_stdout(stdout), contextlib.redirect_stderr(stderr):
            rc = main(["check", str(project), "--out", str(out)])
    CAUGHT[:] = [str(w.message) for w in caught]
    return rc, stdout.getvalue(), stderr.getvalue(), out


def test_the_project_loads_with_every_string_intact(project):
    site = sitesettle.load_site(project)
    assert site.name == NAME
    assert [f.id for f in site.footings][:4] == list(FOOTINGS.values())
    assert {b.id for b in site.boreholes} == set(BOREHOLES.values())
    assert [s.name for s in site.strata][:3] == list(STRATA.values())


def test_check_succeeds_and_prints_the_strings_as_they_are(checked):
    rc, out, err, folder = checked
    assert rc in (0, 1), err
    assert "Traceback" not in err
    assert NAME in out  # the terminal shows text, nothing interpreted
    for name in ("report.html", "footings.csv", "summary.json", "plan.png", "contours.png"):
        assert (folder / name).is_file(), name


def test_figures_lay_out_with_a_very_long_name(checked):
    assert not [w for w in CAUGHT if "constrained_layout" in w]


def test_report_carries_every_string_escaped(checked):
    *_, folder = checked
    page = (folder / "report.html").read_text(encoding="utf-8")
    assert SCRIPT not in page  # never raw
    assert html.escape(SCRIPT) in page
    assert "<script" not in page.lower()
    assert html.escape(QUOTES, quote=True) in page or html.escape(QUOTES, quote=False) in page
    assert TEX in page  # dollars are plain text in HTML
    summary = json.loads((folder / "summary.json").read_text(encoding="utf-8"))
    assert summary["site"] == NAME


@pytest.mark.browser
def test_report_in_a_browser_shows_the_strings_and_runs_nothing(checked, tmp_path):
    *_, folder = checked
    dom = _parse(_run_chromium(tmp_path, (folder / "report.html").as_uri(), "--dump-dom"))
    assert not [t for t, _ in dom.tags if t == "script"]
    assert not any(k.startswith("on") for _, a in dom.tags for k in a)
    text = " ".join(dom.text)
    for fid in FOOTINGS.values():
        assert fid in text, fid[:40]
    assert NAME in dom.title or NAME in text
