"""``sitesettle size``: footing sizes that meet the limits.

Check values come from outside the search: Steinbrenner's (1934) closed form for
the centre of a flexible rectangle on an elastic layer over a rigid base (form as
in Bowles 1996 §5-6; METHODS.md §2.2), solved for the width with scipy's brentq;
the net pressure q = P/A + γ_f·D − σ_v0(D) of common practice (DESIGN §3) for the
bearing cap; symmetry (a fact of the mechanics); and a full ``sitesettle check``
of the written plan.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import json
import math
import pathlib
import shutil
from contextlib import redirect_stderr, redirect_stdout

import pytest
from _sites import ROCK, rect
from scipy.optimize import brentq
from sitesettle_cli.main import main

import sitesettle
from sitesettle.errors import InputError
from sitesettle.methods import elastic
from sitesettle.options import Behaviour, GranularMethod
from sitesettle.site import AnalysisSettings, Borehole, CheckSettings, Interval, Site, Stratum
from sitesettle.sizing import SizingLimits, ceil_to, size_footings

STARTER = pathlib.Path(sitesettle.__file__).parent / "templates" / "starter"
E, NU, H = 20000.0, 0.3, 6.0  # kPa, -, m
LIMIT = 0.025  # m


def run(*args: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        rc = main(list(args))
    return rc, out.getvalue(), err.getvalue()


def sand(modulus=E):
    return Stratum(
        "sand",
        Behaviour.GRANULAR,
        unit_weight=18.0,
        saturated_unit_weight=20.0,
        poisson=NU,
        youngs_modulus=modulus,
        method=GranularMethod.ELASTIC,
    )


def clay():
    return Stratum(
        "clay",
        Behaviour.COHESIVE,
        unit_weight=18.0,
        saturated_unit_weight=18.0,
        compression_index=0.5,
        recompression_index=0.06,
        void_ratio=1.3,
        consolidation_coefficient=2.0,
        secondary_index=0.0,
        undrained_modulus=8000.0,
    )


def site_of(footings, strata, thicknesses, *, total=LIMIT, beta=None):
    z, intervals = 0.0, []
    for s, h in zip(strata, thicknesses):
        intervals.append(Interval(s.name, z, z + h))
        z += h
    limits = {"total": total}
    if beta is not None:
        limits["angular_distortion"] = beta
    return Site(
        "sizing test",
        tuple(footings),
        tuple(strata),
        (Borehole("BH", 0.0, 0.0, tuple(intervals), None),),
        analysis=AnalysisSettings(report_times=(1.0,), design_life=1.0, stress_tolerance=0.0),
        checks=CheckSettings(overrides=limits),
    )


def pad(fid, x, y, b, load, depth=0.0, fill=0.0):
    return rect(fid, x, y, b, depth=depth, load=load, rigid=False, fill=fill)


@pytest.mark.parametrize("load", [900.0, 1200.0])
def test_isolated_pad_is_sized_to_steinbrenner_within_one_step(load):
    # s(B) = Steinbrenner centre settlement of q = P/B² on a 6 m layer (E 20 MPa,
    # ν 0.3) over rock; the width where s = 25 mm by brentq. The engine matches the
    # closed form within 0.5 % (tests/test_depth_and_engine.py), so the sized width
    # is the grid width just above B*, within one step.
    def s(b):
        return float(elastic.steinbrenner_centre_settlement(load / b**2, b, b, H, E, NU))

    b_star = brentq(lambda b: s(b) - LIMIT, 0.3, 6.0)
    step = 0.1
    site = site_of([pad("P", 0, 0, 1.0, load)], [sand(), ROCK], [H, 5.0])
    out = size_footings(site, SizingLimits(step=step))
    b = out.site.footing("P").width
    assert out.converged and out.passed
    assert abs(b - ceil_to(b_star, step)) <= step + 1e-9
    assert b >= b_star - step  # never a step below what the closed form needs
    assert out.site.footing("P").length == pytest.approx(b)  # a square stays square
    # one step smaller fails in the engine: the width is the least on the grid
    smaller = site.with_footing("P", width=b - step, length=b - step)
    r = sitesettle.analyse(smaller, with_map=False)
    assert r.total[0, -1] > LIMIT


def test_a_passing_pad_is_reduced_to_its_bearing_width():
    # a lightly loaded pad passes 25 mm at any width from the bearing cap up: it is
    # sized to the cap, B = ceil(√(P / (q_a − (γ_f − γ)·D))) on the grid (net pressure
    # of common practice, DESIGN §3: P/A + γ_f·D − σ_v0(D), dry sand γ = 18 kN/m³)
    load, depth, cap = 300.0, 1.0, 150.0
    site = site_of([pad("P", 0, 0, 3.0, load, depth=depth, fill=20.0)], [sand(), ROCK], [H, 5.0])
    out = size_footings(site, SizingLimits(step=0.05, bearing_pressure=cap))
    b = out.site.footing("P").width
    b_cap = math.sqrt(load / (cap - (20.0 - 18.0) * depth))
    assert b == pytest.approx(ceil_to(b_cap, 0.05))
    assert out.results.net_pressure[0] <= cap
    assert out.passed


def test_a_symmetric_group_stays_symmetric():
    # a 3 × 3 grid of equal pads: the centre settles most, then the edges, then the
    # corners (superposition); sized, equal positions must keep equal widths
    fs = [pad(f"P{i}{j}", 4.0 * i, 4.0 * j, 1.4, 900.0) for i in range(3) for j in range(3)]
    site = site_of(fs, [sand(), ROCK], [H, 5.0])
    out = size_footings(site, SizingLimits(step=0.1))
    w = {f.id: f.width for f in out.site.footings}
    corners = {w[k] for k in ("P00", "P02", "P20", "P22")}
    edges = {w[k] for k in ("P01", "P10", "P12", "P21")}
    assert len(corners) == 1 and len(edges) == 1
    assert w["P11"] >= next(iter(edges)) >= next(iter(corners))
    assert out.passed
    assert max(out.results.total[:, -1]) <= LIMIT


def test_grow_only_keeps_passing_pads_exactly_and_grows_the_failing_one():
    # a lightly loaded pad of 3.07 × 3.33 m passes 25 mm at any width from the bearing
    # cap up: by default it is reduced to the cap's width on the grid (the test
    # above), with --grow-only it keeps its size exactly, off the grid as given; a
    # heavy pad beside it that fails as given grows to the grid width just above the
    # Steinbrenner width B* (as the isolated pad of the first test: the light one is
    # 30 m away and adds under 0.1 mm)
    load = 1200.0

    def s(b):
        return float(elastic.steinbrenner_centre_settlement(load / b**2, b, b, H, E, NU))

    b_star = brentq(lambda b: s(b) - LIMIT, 0.3, 6.0)
    light = pad("L", 30.0, 0.0, 3.07, 300.0)
    light = dataclasses.replace(light, length=3.33)
    site = site_of([light, pad("P", 0, 0, 1.0, load)], [sand(), ROCK], [H, 5.0])
    shrink = size_footings(site, SizingLimits(step=0.1))
    assert shrink.site.footing("L").width < 3.07  # the default proposes the smallest
    out = size_footings(site, SizingLimits(step=0.1, grow_only=True))
    assert out.passed
    kept = out.site.footing("L")
    assert (kept.width, kept.length) == (3.07, 3.33)  # exactly as given
    b = out.site.footing("P").width
    assert abs(b - ceil_to(b_star, 0.1)) <= 0.1 + 1e-9
    assert b >= 1.0  # never smaller than given
    assert b >= b_star - 0.1


def test_grow_only_never_shrinks_a_footing():
    # the 3 × 3 group of the symmetry test with uneven sizes as given: with
    # grow_only every footing is at least its given size, and the plan passes
    fs = [pad(f"P{i}{j}", 4.0 * i, 4.0 * j, 1.2 + 0.15 * ((i + 2 * j) % 3), 900.0)
          for i in range(3) for j in range(3)]  # fmt: skip
    site = site_of(fs, [sand(), ROCK], [H, 5.0])
    out = size_footings(site, SizingLimits(step=0.1, grow_only=True))
    for f0, f1 in zip(site.footings, out.site.footings):
        assert f1.width >= f0.width - 1e-12 and f1.length >= f0.length - 1e-12
    assert out.passed


def test_a_pad_over_a_deep_clay_says_why_sizing_cannot_pass():
    # 6 m of dense sand (60 MPa) over 8 m of soft clay: at 6 m below a 2–4 m pad the
    # Boussinesq stress depends on the load far more than on the pad's width, so the
    # clay's consolidation stays over the 25 mm limit at the largest width allowed
    site = site_of([pad("P", 0, 0, 2.0, 2500.0)], [sand(60000.0), clay(), ROCK], [6.0, 8.0, 5.0])
    out = size_footings(site, SizingLimits(step=0.2, max_width=4.0))
    assert not out.passed
    assert out.site.footing("P").width == pytest.approx(4.0)
    (u,) = out.unresolved
    assert u.footings == ("P",)
    assert "largest width allowed" in u.reason and "consolidation" in u.reason
    assert "4.0 times the plan area reduced its settlement by only" in u.reason
    assert "raft" in u.reason and "piles" in u.reason
    cons = out.results.consolidation[0, -1]
    before = out.original.consolidation[0, -1]
    # four times the area, under a tenth less consolidation: insensitive, as said
    assert cons > 0.9 * before


@pytest.fixture(scope="module")
def sized_starter(tmp_path_factory):
    """The starter project sized to a 22 mm total (the starter's totals are 20–28 mm)."""
    root = tmp_path_factory.mktemp("size")
    out = root / "sized"
    rc, stdout, err = run(
        "size",
        str(STARTER),
        "--out",
        str(out),
        "--set",
        "checks.overrides.total=22 mm",
        "--bearing-pressure",
        "300 kPa",
    )
    return root, out, rc, stdout, err


def test_size_writes_a_plan_that_passes_when_checked(sized_starter):
    root, out, rc, stdout, err = sized_starter
    assert rc == 0, stdout + err
    assert "PASS: the sized plan passes every check" in stdout
    assert max(len(line) for line in stdout.splitlines()) <= 100
    for name in ("footings_sized.csv", "sizing.csv", "sizing.json", "footings.csv", "report.html"):
        assert (out / name).is_file()
    # the written plan, swapped in for the project's footings, passes a plain check
    project = root / "project"
    shutil.copytree(STARTER, project)
    shutil.copy(out / "footings_sized.csv", project / "footings.csv")
    checked = root / "checked"
    rc2, stdout2, err2 = run(
        "check", str(project), "--out", str(checked), "--set", "checks.overrides.total=22 mm"
    )
    assert rc2 == 0, stdout2 + err2
    with open(checked / "footings.csv", encoding="utf-8") as fh:
        rows = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    assert max(float(r["total_mm"]) for r in rows) <= 22.0
    with open(out / "footings.csv", encoding="utf-8") as fh:
        sized = {
            r["id"]: r for r in csv.DictReader(line for line in fh if not line.startswith("#"))
        }
    for r in rows:  # the same sizes and the same settlements as the size run's results
        assert float(r["width_m"]) == pytest.approx(float(sized[r["id"]]["width_m"]))
        assert float(r["total_mm"]) == pytest.approx(float(sized[r["id"]]["total_mm"]), abs=0.002)


def test_size_records_and_tabulates_the_changes(sized_starter):
    root, out, rc, stdout, err = sized_starter
    info = json.loads((out / "sizing.json").read_text(encoding="utf-8"))
    assert info["converged"] and info["passed"] and info["unresolved"] == []
    with open(out / "sizing.csv", encoding="utf-8") as fh:
        changes = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    resized = [c["id"] for c in changes if c["changed"] == "true"]
    assert resized == info["resized"] and resized
    summary = json.loads((out / "summary.json").read_text(encoding="utf-8"))
    for fid in resized:
        assert any(o.startswith(f"footing.{fid}.width=") for o in summary["overrides"])
    for c in changes:
        # the table's own arithmetic: area = B·L (a circle: π B²/4), q_net ≤ the cap
        b, l = float(c["width_m"]), float(c["length_m"])
        area = math.pi * b * b / 4 if c["id"] == "T1" else b * l
        assert float(c["area_m2"]) == pytest.approx(area, abs=2e-3)
        assert float(c["concrete_m3"]) == pytest.approx(0.5 * area, abs=2e-3)
        assert float(c["q_net_kPa"]) <= 300.05
    strip = next(c for c in changes if c["id"] == "S1")
    assert float(strip["length_m"]) == pytest.approx(8.0)  # a strip keeps its length


def test_size_bad_option_exits_2_and_writes_nothing(tmp_path):
    out = tmp_path / "sized"
    rc, stdout, err = run("size", str(STARTER), "--out", str(out), "--step", "0.1 kg")
    assert rc == 2 and "--step" in err and "Traceback" not in err
    assert not out.exists()
    rc, stdout, err = run("size", str(STARTER), "--out", str(out), "--max-size", "0.3 m")
    assert rc == 2 and "sizing range" in err
    assert not out.exists()


def test_limits_are_checked():
    with pytest.raises(InputError):
        SizingLimits(step=0.0)  # noqa: B018
    with pytest.raises(InputError):
        SizingLimits(bearing_pressure=-5.0)
    assert dataclasses.replace(SizingLimits(), step=0.05).step == 0.05


def test_a_failing_pair_grows_the_footing_that_settles_more():
    # two pads 5 m apart whose totals pass a 50 mm limit but whose differential
    # breaks β ≤ 1/500 (EN 1997-1:2004 Annex H, the set's own limit): growing the
    # heavier pad is what reduces the differential; the lighter one never grows
    heavy, light = pad("H", 0, 0, 1.6, 1500.0), pad("L", 5.0, 0, 1.6, 300.0)
    site = site_of([heavy, light], [sand(), ROCK], [H, 5.0], total=0.050)
    before = sitesettle.analyse(site, with_map=False)
    (n,) = range(len(before.checks.pairs.a))
    assert not before.checks.pairs.passed[n]
    out = size_footings(site, SizingLimits(step=0.1))
    assert out.passed
    w = {f.id: f.width for f in out.site.footings}
    assert w["H"] > 1.6 and w["L"] <= 1.6
    # the sized plan re-analysed from scratch: β = |Δs| / span within 1/500
    again = sitesettle.analyse(out.site, with_map=False)
    s = again.total[:, -1]
    assert abs(s[0] - s[1]) / 5.0 <= 1 / 500 + 1e-12
