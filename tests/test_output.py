"""The results folder: every file reads back with the Results' values, atomically written.

The Results come from tests/_factories.py (synthetic, made to tie together exactly).
Unit factors are checked against the exact definitions of NIST SP 811 (2008),
Appendix B: 1 ft = 0.3048 m, 1 in = 25.4 mm, 1 lbf = 0.45359237 kg × 9.80665 m/s²,
and against pint, an independent units library.
"""

from __future__ import annotations

import json
import os
import pathlib
import subprocess
import sys

import geopandas as gpd
import numpy as np
import pandas as pd
import pyogrio
import pytest
import shapely
from _factories import make_results, make_section

import sitesettle
from sitesettle.errors import OutputError
from sitesettle.io import output
from sitesettle.io.output import footing_table, pair_table, summary_dict, time_table, write_results
from sitesettle.units import convert

# The CSV files keep 3 decimals of mm and m (so a value is within 0.0005 of the truth)
MM_TOL = 0.0005 + 1e-12
CHECKER = [
    pathlib.Path(__file__).resolve().parents[2] / "shared" / "tools" / "check_results.py",
    pathlib.Path("/work/shared/tools/check_results.py"),
]


def _read_csv(path):
    return pd.read_csv(
        path, dtype={"id": str, "a": str, "b": str}, keep_default_na=False, na_values=[""]
    )


def _snapshot(folder: pathlib.Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    results = make_results()
    out = write_results(
        results, tmp_path_factory.mktemp("run") / "results", section=make_section(results)
    )
    return results, out


def test_every_file_is_written(written):
    _, out = written
    names = {p.name for p in out.iterdir()}
    # no query points, no structure lines or strips here
    assert names == set(output.OUTPUT_FILES) - {"points.csv", "lines.csv"}
    assert all((out / n).stat().st_size > 0 for n in names)
    for png in ("plan.png", "contours.png", "settlement_time.png", "section.png"):
        assert (out / png).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_footings_csv_reads_back_with_the_results_values(written):
    r, out = written
    f = _read_csv(out / "footings.csv")
    life = r.design_life_index
    assert list(f["id"]) == list(r.ids)
    for name, arr in [
        ("immediate", r.immediate),
        ("consolidation", r.consolidation),
        ("secondary", r.secondary),
        ("total", r.total),
        ("own", r.own),
        ("neighbours", r.neighbours),
    ]:
        np.testing.assert_allclose(
            f[f"{name}_mm"], arr[:, life] * 1000, rtol=0, atol=MM_TOL, err_msg=name
        )
    np.testing.assert_allclose(f["x_m"], [ft.x for ft in r.site.footings], atol=MM_TOL)
    np.testing.assert_allclose(f["q_net_kPa"], r.net_pressure, atol=0.005 + 1e-12)
    np.testing.assert_allclose(f["tilt"], r.tilt, rtol=1e-5)  # 6 significant figures
    assert np.isnan(f["tilt"][0])  # NaN is written as an empty cell and reads back as NaN
    np.testing.assert_allclose(f["integration_depth_m"], r.influence_depth, atol=MM_TOL)
    assert list(f["outside_boreholes"]) == [bool(v) for v in r.outside_hull]
    expected = ["pass" if p else "fail" for p in r.checks.footing_passed]
    assert list(f["status"]) == expected and "fail" in expected and "pass" in expected
    assert f.loc[f.status == "fail", "reasons"].str.contains("50 mm").all()
    # the contract: total = immediate + consolidation + secondary = own + neighbours
    np.testing.assert_allclose(
        f.immediate_mm + f.consolidation_mm + f.secondary_mm, f.total_mm, atol=3 * MM_TOL
    )
    np.testing.assert_allclose(f.own_mm + f.neighbours_mm, f.total_mm, atol=2 * MM_TOL)


def test_pairs_csv_reads_back(written):
    r, out = written
    p = _read_csv(out / "pairs.csv")
    pc = r.checks.pairs
    assert list(zip(p.a, p.b)) == [(r.ids[i], r.ids[j]) for i, j in zip(pc.a, pc.b)]
    np.testing.assert_allclose(p.span_m, pc.span, atol=MM_TOL)
    np.testing.assert_allclose(p.differential_mm, pc.differential * 1000, atol=MM_TOL)
    np.testing.assert_allclose(p.angular_distortion, pc.angular_distortion, rtol=1e-5)
    np.testing.assert_allclose(p.utilisation, pc.utilisation, rtol=1e-5)
    assert list(p.status) == ["pass" if ok else "fail" for ok in pc.passed]
    assert set(p.limit_source) == set(pc.limit_source) and set(p.origin) == {"auto"}


def test_settlement_time_csv_has_every_footing_at_every_time(written):
    r, out = written
    t = _read_csv(out / "settlement_time.csv")
    assert len(t) == len(r.ids) * len(r.times)
    for k, fid in enumerate(r.ids):
        rows = t[t.id == fid]
        np.testing.assert_allclose(rows.time_yr, r.times, rtol=1e-12)
        np.testing.assert_allclose(rows.total_mm, r.total[k] * 1000, atol=MM_TOL)
        np.testing.assert_allclose(rows.consolidation_mm, r.consolidation[k] * 1000, atol=MM_TOL)


def test_summary_json(written):
    r, out = written
    s = json.loads((out / "summary.json").read_text())
    total = r.at_design_life() * 1000
    assert s["n_footings"] == 6 and s["n_pairs"] == len(r.checks.pairs.a)
    assert s["max_total_mm"] == pytest.approx(total.max(), abs=MM_TOL)
    assert s["worst_footing"] == r.ids[int(np.argmax(total))]
    assert s["failing_footings"] == [i for i, ok in zip(r.ids, r.checks.footing_passed) if not ok]
    assert s["failing_pairs"] == [
        [r.ids[a], r.ids[b]]
        for a, b, ok in zip(r.checks.pairs.a, r.checks.pairs.b, r.checks.pairs.passed)
        if not ok
    ]
    k = int(np.argmax(r.checks.pairs.utilisation))
    assert s["worst_pair"] == [r.ids[r.checks.pairs.a[k]], r.ids[r.checks.pairs.b[k]]]
    assert s["max_angular_distortion"] == pytest.approx(
        r.checks.pairs.angular_distortion.max(), rel=1e-5
    )
    assert s["design_life_yr"] == 50.0 and s["criteria"] == "eurocode7"
    assert s["criteria_sources"] == list(r.checks.sources)
    assert s["version"] == sitesettle.__version__ and s["warnings"] == list(r.warnings)
    assert any("licensed engineer" in c for c in s["cautions"])
    assert "checked_after_yr" not in s  # only when > 0
    assert not any(k.endswith(("date", "time")) for k in s)  # no run date in the summary


def test_geopackage_layers_values_and_crs(written):
    r, out = written
    layers = {name: geom for name, geom in pyogrio.list_layers(out / "site.gpkg")}
    assert set(layers) == {"footings", "pairs", "contours"}
    fp = gpd.read_file(out / "site.gpkg", layer="footings", engine="pyogrio")
    assert fp.crs is not None and fp.crs.to_epsg() == 32633
    assert list(fp["id"]) == list(r.ids)
    np.testing.assert_allclose(fp.geometry.area, [f.area for f in r.site.footings], rtol=1e-12)
    np.testing.assert_allclose(fp["total_mm"], r.at_design_life() * 1000, atol=MM_TOL)
    pp = gpd.read_file(out / "site.gpkg", layer="pairs", engine="pyogrio")
    np.testing.assert_allclose(pp.geometry.length, r.checks.pairs.span, rtol=1e-12)
    ct = gpd.read_file(out / "site.gpkg", layer="contours", engine="pyogrio")
    assert ct.crs.to_epsg() == 32633 and len(ct) > 0
    assert (ct.geom_type == "LineString").all()
    # contour levels are round multiples (the factory's bowl spans about 5–58 mm → 5 mm steps)
    levels = np.unique(ct["level_mm"])
    assert np.allclose(levels / 5.0, np.round(levels / 5.0))


def test_no_crs_gives_layers_without_crs(tmp_path):
    out = write_results(make_results(crs=None), tmp_path / "r")
    for layer in ("footings", "pairs", "contours"):
        assert gpd.read_file(out / "site.gpkg", layer=layer, engine="pyogrio").crs is None


def test_no_map_no_checks_still_writes_a_complete_folder(tmp_path):
    r = make_results(with_map=False, with_checks=False)
    out = write_results(r, tmp_path / "r")
    f = _read_csv(out / "footings.csv")
    assert set(f.status) == {"unchecked"}
    p = _read_csv(out / "pairs.csv")
    assert len(p) == 0 and {"a", "b", "span_m", "differential_mm", "status"} <= set(p.columns)
    assert len(gpd.read_file(out / "site.gpkg", layer="contours", engine="pyogrio")) == 0
    s = json.loads((out / "summary.json").read_text())
    assert s["failing_pairs"] == [] and s["n_pairs"] == 0 and s["criteria"] is None


def test_us_units_equal_si_converted(tmp_path):
    r = make_results()
    si = write_results(r, tmp_path / "si")
    us = write_results(r, tmp_path / "us", units="us")
    a, b = _read_csv(si / "footings.csv"), _read_csv(us / "footings.csv")
    # NIST SP 811 (2008) App. B: exact definitions
    inch_mm, foot_m = 25.4, 0.3048
    kip_kn = 1000 * 0.45359237 * 9.80665 / 1000  # 1 kip = 1000 lbf, in kN
    ksf_kpa = kip_kn / foot_m**2
    assert output.KSF == pytest.approx(ksf_kpa, rel=1e-15)
    assert convert(1.0, "pressure", "ksf") == pytest.approx(1 / ksf_kpa, rel=1e-12)  # pint agrees
    assert convert(1.0, "length", "ft") == pytest.approx(1 / foot_m, rel=1e-15)
    for col in ("total", "immediate", "consolidation", "secondary", "own", "neighbours"):
        # in written with 4 decimals, mm with 3: each within half a unit of the last digit
        np.testing.assert_allclose(
            b[f"{col}_in"], a[f"{col}_mm"] / inch_mm, atol=5e-5 + MM_TOL / inch_mm
        )
    for col in ("x", "y", "width", "length", "depth", "integration_depth"):
        np.testing.assert_allclose(
            b[f"{col}_ft"], a[f"{col}_m"] / foot_m, atol=5e-4 + MM_TOL / foot_m
        )
    np.testing.assert_allclose(
        b["q_net_ksf"], a["q_net_kPa"] / ksf_kpa, atol=5e-5 + 0.005 / ksf_kpa
    )
    np.testing.assert_allclose(
        b["service_load_kip"], a["service_load_kN"] / kip_kn, atol=5e-3 + 0.05 / kip_kn
    )
    assert not any(c.endswith(("_mm", "_m", "_kPa", "_kN")) for c in b.columns)
    pa, pb = _read_csv(si / "pairs.csv"), _read_csv(us / "pairs.csv")
    np.testing.assert_allclose(pb.span_ft, pa.span_m / foot_m, atol=5e-4 + MM_TOL / foot_m)
    np.testing.assert_allclose(
        pb.differential_in, pa.differential_mm / inch_mm, atol=5e-5 + MM_TOL / inch_mm
    )
    np.testing.assert_allclose(pb.angular_distortion, pa.angular_distortion, rtol=1e-12)  # a ratio
    ta, tb = _read_csv(si / "settlement_time.csv"), _read_csv(us / "settlement_time.csv")
    np.testing.assert_allclose(tb.total_in, ta.total_mm / inch_mm, atol=5e-5 + MM_TOL / inch_mm)
    sa, sb = (json.loads((d / "summary.json").read_text()) for d in (si, us))
    assert sb["max_total_in"] == pytest.approx(
        sa["max_total_mm"] / inch_mm, abs=5e-5 + MM_TOL / inch_mm
    )
    ga = gpd.read_file(si / "site.gpkg", layer="footings", engine="pyogrio")
    gb = gpd.read_file(us / "site.gpkg", layer="footings", engine="pyogrio")
    np.testing.assert_allclose(gb.geometry.area, ga.geometry.area / foot_m**2, rtol=1e-12)
    cb = gpd.read_file(us / "site.gpkg", layer="contours", engine="pyogrio")
    assert "level_in" in cb.columns and len(cb) > 0


def test_csv_and_json_are_byte_identical_across_runs(tmp_path):
    r = make_results()
    a = _snapshot(write_results(r, tmp_path / "a"))
    b = _snapshot(write_results(make_results(), tmp_path / "b"))
    for name in (
        "footings.csv",
        "pairs.csv",
        "settlement_time.csv",
        "summary.json",
        "plan.png",
        "contours.png",
        "settlement_time.png",
    ):
        assert a[name] == b[name], name


def test_rewrite_replaces_an_earlier_results_folder(tmp_path):
    out = tmp_path / "r"
    write_results(make_results(), out)
    (out / "stale.txt").write_text("from before")
    write_results(make_results(scale=0.5), out)
    assert not (out / "stale.txt").exists()
    s = json.loads((out / "summary.json").read_text())
    assert s["max_total_mm"] == pytest.approx(
        0.5 * 56.881, abs=0.002
    )  # factory: 56.881 mm at scale 1
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r"]


@pytest.mark.parametrize("error", [RuntimeError("disk full"), KeyboardInterrupt()])
def test_failure_midway_keeps_the_old_folder_and_no_temp(tmp_path, monkeypatch, error):
    out = tmp_path / "r"
    write_results(make_results(), out)
    before = _snapshot(out)
    calls = []

    def broken(*args, **kwargs):
        calls.append(1)
        raise error

    monkeypatch.setattr(
        output, "write_geopackage", broken
    )  # after the CSV files, before the figures
    with pytest.raises(type(error)):
        write_results(make_results(scale=2.0), out)
    assert calls == [1]
    assert _snapshot(out) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r"]


def test_failure_on_first_write_leaves_nothing(tmp_path, monkeypatch):
    # every figure is drawn by figure_png (in a worker process or, after a worker's
    # failure, here)
    monkeypatch.setattr(
        output, "figure_png", lambda *a, **k: (_ for _ in ()).throw(OSError("no space"))
    )
    with pytest.raises(OSError):
        write_results(make_results(), tmp_path / "r")
    assert list(tmp_path.iterdir()) == []


def test_existing_file_raises_output_error_and_writes_nothing(tmp_path):
    target = tmp_path / "results"
    target.write_text("not a folder")
    with pytest.raises(OutputError, match="existing file"):
        write_results(make_results(), target)
    assert target.read_text() == "not a folder"
    assert [p.name for p in tmp_path.iterdir()] == ["results"]


def test_foreign_folder_is_not_replaced(tmp_path):
    target = tmp_path / "documents"
    target.mkdir()
    (target / "thesis.txt").write_text("precious")
    with pytest.raises(OutputError, match="not written by sitesettle"):
        write_results(make_results(), target)
    assert (target / "thesis.txt").read_text() == "precious"
    assert [p.name for p in tmp_path.iterdir()] == ["documents"]


def test_unwritable_parent_raises_output_error(tmp_path, monkeypatch):
    parent = tmp_path / "locked"
    parent.mkdir()
    # root may write anywhere, so the permission answer is simulated rather than set with chmod
    monkeypatch.setattr(output.os, "access", lambda path, mode: pathlib.Path(path) != parent)
    with pytest.raises(OutputError, match="permission"):
        write_results(make_results(), parent / "r")
    assert list(parent.iterdir()) == []


def test_progress_is_called_for_each_file(tmp_path):
    seen = []
    write_results(make_results(), tmp_path / "r", progress=seen.append)
    assert seen[0] == "footings.csv" and "site.gpkg" in seen and seen[-1] == "report.html"


def test_units_must_be_si_or_us(tmp_path):
    with pytest.raises(ValueError, match="si"):
        write_results(make_results(), tmp_path / "r", units="imperial")
    assert list(tmp_path.iterdir()) == []


def test_tables_as_dataframes():
    r = make_results()
    f = footing_table(r)
    assert len(f) == 6 and f["total_mm"].dtype == float
    np.testing.assert_allclose(f["total_mm"], r.at_design_life() * 1000, rtol=1e-15)  # unrounded
    assert len(pair_table(r)) == len(r.checks.pairs.a)
    assert len(time_table(r, "us")) == 30 and "total_in" in time_table(r, "us")
    assert summary_dict(r)["n_footings"] == 6


def test_checked_after_is_stated_and_differentials_are_the_later_movement(tmp_path):
    r = make_results(checked_after=1.0)
    out = write_results(r, tmp_path / "r")
    s = json.loads((out / "summary.json").read_text())
    assert s["checked_after_yr"] == 1.0
    p = _read_csv(out / "pairs.csv")
    f = _read_csv(out / "footings.csv").set_index("id")
    full = (p.a.map(f.total_mm) - p.b.map(f.total_mm)).abs()
    assert (p.differential_mm < full - 0.01).any()  # movement after 1 yr is smaller
    _run_checker(out, 1)


def _run_checker(out: pathlib.Path, rc: int) -> None:
    tool = next((c for c in CHECKER if c.exists()), None)
    if tool is None:
        pytest.skip(
            "shared/tools/check_results.py (the output contract checker) "
            "is not beside the repository"
        )
    run = subprocess.run(
        [sys.executable, str(tool), str(out), str(rc)], capture_output=True, text=True
    )
    assert run.returncode == 0, run.stdout + run.stderr
    assert run.stdout.startswith("contract ok")


def test_output_contract_checker_passes(written):
    _, out = written
    _run_checker(out, 1)  # the factory has failing footings and pairs: the check run would exit 1


def test_output_contract_checker_passes_when_all_pass(tmp_path):
    r = make_results(scale=0.3)
    assert r.checks.all_passed
    _run_checker(write_results(r, tmp_path / "r"), 0)


def test_footing_outline_polygons_match_the_site(written):
    r, out = written
    fp = gpd.read_file(out / "site.gpkg", layer="footings", engine="pyogrio")
    for geom, f in zip(fp.geometry, r.site.footings):
        assert geom.equals(shapely.Polygon(f.outline))


def test_structure_lines_are_in_the_summary_and_the_report(tmp_path):
    import dataclasses

    from sitesettle.results import LineChecks

    r = make_results(scale=0.3)  # every footing and pair passes
    lines = LineChecks(
        ids=(("C1", "C2", "C3"), ("C4", "C5", "C6")),
        length=np.array([12.0, 12.0]),
        relative_deflection=np.array([0.002, 0.009]),
        deflection_ratio=np.array([0.002 / 12, 0.009 / 12]),
        limit=("deflection ratio ≤ 0.4e-3",) * 2,
        limit_value=np.array([4e-4, 4e-4]),
        limit_source=("Burland & Wroth (1974), from memory",) * 2,
        utilisation=np.array([0.42, 1.9]),
        passed=np.array([True, False]),
    )
    r = dataclasses.replace(r, checks=dataclasses.replace(r.checks, lines=lines))
    out = write_results(r, tmp_path / "r")
    s = json.loads((out / "summary.json").read_text())
    assert s["n_lines"] == 2 and s["failing_lines"] == [["C4", "C5", "C6"]]
    assert s["all_passed"] is False and s["failing_pairs"] == [] and s["failing_footings"] == []
    page = (out / "report.html").read_text()
    assert "C4 → C5 → C6" in page and "Burland &amp; Wroth (1974)" in page


def test_failure_during_the_swap_puts_the_old_folder_back(tmp_path, monkeypatch):
    out = tmp_path / "r"
    write_results(make_results(), out)
    before = _snapshot(out)
    real = os.replace
    calls = []

    def replace(src, dst):
        calls.append((pathlib.Path(src).name, pathlib.Path(dst).name))
        if len(calls) == 2:  # old moved aside; moving the new folder in fails
            raise OSError("simulated rename failure")
        real(src, dst)

    monkeypatch.setattr(output.os, "replace", replace)
    with pytest.raises(OSError, match="simulated"):
        write_results(make_results(scale=2.0), out)
    assert len(calls) == 3  # aside, (failed) in, back
    assert _snapshot(out) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r"]


def test_check_target_is_public_and_writes_nothing(tmp_path):
    (tmp_path / "f").write_text("x")
    with pytest.raises(OutputError):
        output.check_target(tmp_path / "f")
    output.check_target(tmp_path / "new" / "deeper")  # a folder that can be made: fine
    assert sorted(p.name for p in tmp_path.iterdir()) == ["f"]


def test_report_tables_show_ratios_as_one_in_n():
    # angular distortion and tilt as engineers write them (β = 1/500 in EN 1997-1:2004
    # Annex H; "1/N" common practice), utilisation to two decimals; the CSV keeps the values
    from sitesettle.io.summary import ratio_text
    from sitesettle.report import _df_table

    assert ratio_text(1 / 500) == "1/500"
    assert ratio_text(1 / 388.6) == "1/389"
    assert ratio_text(8.86e-6) == "< 1/10,000"  # docs/outputs.md: no spurious digits
    assert ratio_text(1 / 1678) == "1/1680"  # N to 3 significant figures
    assert ratio_text(0.0) == "0" and ratio_text(float("nan")) == ""
    df = pd.DataFrame(
        {
            "a": ["F3", "A1"],
            "angular_distortion": [1 / 388.6, float("nan")],
            "tilt": [0.0, 0.002],
            "utilisation": [1.2845, 0.0835718],
        }
    )
    html = _df_table(df)
    for text in ("1/389", ">0<", "1/500", "1.28", "0.08"):
        assert text in html, text
    assert "0.0835718" not in html and "0.00257" not in html
