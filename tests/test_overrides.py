"""What-if changes on the command line (``--set``, ``--criteria``).

A change must give the same site as editing the files would (the starter's
footings.csv row read with the csv module is the independent record of the
original size), must pass through the same checks as site.toml, must name the
``--set`` when it is refused, and must be recorded in the results.
"""

from __future__ import annotations

import csv
import io
import json
import math
import pathlib
import shutil
from contextlib import redirect_stderr, redirect_stdout

import pytest
from sitesettle_cli.main import main

import sitesettle
from sitesettle.errors import InputError
from sitesettle.io.overrides import parse_override

STARTER = pathlib.Path(sitesettle.__file__).parent / "templates" / "starter"


def run(*args: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        rc = main(list(args))
    return rc, out.getvalue(), err.getvalue()


def starter_row(fid: str) -> dict:
    lines = [
        line
        for line in (STARTER / "footings.csv").read_text(encoding="utf-8").splitlines()
        if not line.startswith("#")
    ]
    return next(r for r in csv.DictReader(lines) if r["id"] == fid)


def test_parse_reads_toml_values_and_text():
    assert parse_override("footing.F4.width=3.0").value == 3.0
    assert parse_override("footing.A.1.width=2 m").name == "A.1"  # ids may hold dots
    assert parse_override("analysis.design_life=25 yr").value == "25 yr"
    assert parse_override('analysis.design_life="25 yr"').value == "25 yr"
    assert parse_override("checks.overrides.total=40 mm").path == ("overrides", "total")
    for bad in ("footing.F4.width", "footing.F4=3", "slab.S1.width=3", "analysis.=2", "=3"):
        with pytest.raises(InputError, match="--set"):
            parse_override(bad)


def test_size_keeps_the_shape_and_equals_editing_the_row():
    row = starter_row("C4")  # 2.2 m x 2.4 m in the starter's own file
    b, l = float(row["width [m]"]), float(row["length [m]"])
    site = sitesettle.load_site(STARTER, overrides=["footing.C4.size=3.3"])
    f = site.footing("C4")
    assert f.width == pytest.approx(3.3)
    assert f.length == pytest.approx(3.3 * l / b)  # L/B kept
    assert f.area == pytest.approx(3.3 * 3.3 * l / b)
    by_api = sitesettle.load_site(STARTER).with_footing("C4", width=3.3, length=3.3 * l / b)
    assert f.outline == pytest.approx(by_api.footing("C4").outline)
    assert site.overrides == ("footing.C4.size=3.3",)


def test_units_on_a_footing_value_are_converted():
    # 1 ft = 0.3048 m exactly (NIST SP 811); 1 kip = 4.4482216152605 kN
    site = sitesettle.load_site(
        STARTER,
        overrides=["footing.C1.size=7 ft", "footing.C1.dead_load=100 kip"],
    )
    f = site.footing("C1")
    assert f.width == pytest.approx(7 * 0.3048) and f.length == pytest.approx(7 * 0.3048)
    assert f.dead_load == pytest.approx(444.82216152605)


def test_stratum_and_table_changes_equal_the_edited_file(tmp_path):
    changed = sitesettle.load_site(
        STARTER,
        overrides=[
            "strata.clay.compression_index=0.41",
            "analysis.design_life=20 yr",
            "checks.criteria=bjerrum_no_cracking",
        ],
    )
    edited = tmp_path / "p"
    shutil.copytree(STARTER, edited)
    toml = (edited / "site.toml").read_text(encoding="utf-8")
    toml = toml.replace('criteria = "eurocode7"', 'criteria = "bjerrum_no_cracking"')
    (edited / "site.toml").write_text(toml, encoding="utf-8")
    by_file = sitesettle.load_site(edited).with_stratum("clay", compression_index=0.41)
    assert changed.stratum("clay") == by_file.stratum("clay")
    assert changed.checks.criteria == by_file.checks.criteria == "bjerrum_no_cracking"
    assert changed.analysis.design_life == pytest.approx(20.0)
    assert sitesettle.load_site(STARTER).stratum("clay").compression_index != 0.41


@pytest.mark.parametrize(
    "change, words",
    [
        ("footing.C9.width=2", "no footing 'C9'"),
        ("footing.C1.wdth=2", 'did you mean "width"'),
        ("footing.C1.width=2 kg", "--set footing.C1.width=2 kg"),
        ("strata.peat.ocr=2", "no stratum 'peat'"),
        ("strata.clay.youngs_modulus=5", "if the number is in MPa"),  # the file's own range
        ("analysis.design_lif=20", 'did you mean "design_life"'),
        ("analysis.design_life=5000 yr", "out of range"),
        ("checks.criteria=nonsense", "unknown criteria set"),
    ],
)
def test_bad_changes_exit_2_naming_the_set_and_write_nothing(tmp_path, change, words):
    out = tmp_path / "results"
    rc, stdout, err = run("check", str(STARTER), "--out", str(out), "--set", change)
    assert rc == 2
    assert "--set" in err and words in err
    assert "Traceback" not in err
    assert not out.exists()


def test_a_change_that_makes_footings_overlap_is_refused(tmp_path):
    # C1 at (0, 0) and C2 at (6, 0) (the starter's footings.csv); C2 2.2 m wide
    # starts at x = 4.9 m, and C1 10 m wide reaches x = 5 m
    rc, _, err = run(
        "check", str(STARTER), "--out", str(tmp_path / "r"), "--set", "footing.C1.size=10"
    )
    assert rc == 2 and "overlaps footing 'C2'" in err and "--set footing.C1.size=10" in err


def test_results_record_the_changes(tmp_path):
    out = tmp_path / "r"
    rc, stdout, err = run(
        "check",
        str(STARTER),
        "--out",
        str(out),
        "--set",
        "footing.C2.size=2.6",
        "--criteria",
        "eurocode7",
    )
    assert rc in (0, 1)
    summary = json.loads((out / "summary.json").read_text(encoding="utf-8"))
    assert summary["overrides"] == ["footing.C2.size=2.6", "checks.criteria=eurocode7"]
    assert "what-if changes" in stdout and "footing.C2.size=2.6" in stdout
    assert "footing.C2.size=2.6" in (out / "report.html").read_text(encoding="utf-8")
    with open(out / "footings.csv", encoding="utf-8") as fh:
        rows = {r["id"]: r for r in csv.DictReader(line for line in fh if not line.startswith("#"))}
    assert math.isclose(float(rows["C2"]["width_m"]), 2.6, abs_tol=0.005)
    assert math.isclose(float(rows["C2"]["length_m"]), 2.6, abs_tol=0.005)
    plain = tmp_path / "plain"
    assert run("check", str(STARTER), "--out", str(plain))[0] in (0, 1)
    assert json.loads((plain / "summary.json").read_text(encoding="utf-8"))["overrides"] == []
