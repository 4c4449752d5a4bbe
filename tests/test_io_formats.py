"""Investigation data and drawings as delivered: AGS4, GEF, .xlsx and DXF.

Each format is checked against the project's own CSV form of the same invented
data (read by the CSV reader, which tests/test_io_project.py checks) and, for
the files written here, against the general-purpose library that wrote or reads
them (python-ags4 writes the AGS4 files and its checker judges them; openpyxl
writes the workbooks; ezdxf reads site.dxf back).
"""

from __future__ import annotations

import math
import pathlib
import warnings

import numpy as np
import pytest
from _factories import make_results
from _formats import csv_to_xlsx, write_ags, write_gef

import sitesettle
from sitesettle.errors import InputError, InputWarning
from sitesettle.io import cad, output
from sitesettle.io.footings import FootingDefaults, parse_footings_csv, read_footings
from sitesettle.io.investigation import (
    parse_boreholes,
    parse_soundings,
    read_boreholes,
    read_soundings,
)
from sitesettle.io.project import parse_strata

STARTER = pathlib.Path(sitesettle.__file__).resolve().parent / "templates" / "starter"
DEMO = pathlib.Path(__file__).resolve().parents[1] / "demo_site"

STRATA = parse_strata(
    [
        {"name": "made ground", "behaviour": "granular", "unit_weight": 17,
         "saturated_unit_weight": 19, "poisson_ratio": 0.3, "youngs_modulus": "8 MPa"},
        {"name": "sand", "behaviour": "granular", "unit_weight": 18,
         "saturated_unit_weight": 20, "poisson_ratio": 0.3, "youngs_modulus": "30 MPa"},
        {"name": "clay", "behaviour": "cohesive", "unit_weight": 17.5,
         "saturated_unit_weight": 18, "poisson_ratio": 0.35, "compression_index": 0.25,
         "recompression_index": 0.04, "void_ratio": 0.85, "ocr": 2.0,
         "consolidation_coefficient": "3 m^2/yr", "drainage": "both"},
    ]
)  # fmt: skip

LOCATIONS = [("BH1", "CP", 100.0, 200.0), ("BH2", "CP", 130.0, 200.0), ("CPT1", "CPT", 115, 210)]
GEOL = [
    ("BH1", 0.0, 1.2, "MADE GROUND of brick and ash", "MG"),
    ("BH1", 1.2, 3.0, "Loose brown fine SAND", "SA"),
    ("BH1", 3.0, 6.0, "Medium dense brown SAND", "SA"),
    ("BH1", 6.0, 12.0, "Soft grey silty CLAY", "CL"),
    ("BH2", 0.0, 0.8, "MADE GROUND", "MG"),
    ("BH2", 0.8, 7.0, "Dense SAND and gravel", "SG"),
    ("BH2", 7.0, 12.0, "Firm grey CLAY", "CL"),
]
WSTG = [("BH1", 2.4), ("BH1", 5.0), ("BH2", 3.1)]
ISPT = [("BH1", 2.0, 12), ("BH1", 4.5, 20), ("BH2", 3.0, 15), ("BH2", 5.0, 25)]
SCPT = [("CPT1", "1", 0.5 + 0.25 * k, 4.0 + 0.5 * k, 30.0 + 2 * k) for k in range(12)]
#: the same investigation in the project's CSV form (merged sand rows of BH1; SPT N
#: as the mean inside each stratum: BH1 sand (12 + 20) / 2, BH2 sand (15 + 25) / 2;
#: water at the shallowest strike)
BOREHOLES_CSV = """borehole,x [m],y [m],stratum,top [m],bottom [m],water_depth [m],spt_n
BH1,100,200,made ground,0,1.2,2.4,
BH1,100,200,sand,1.2,6.0,,16
BH1,100,200,clay,6.0,12.0,,
BH2,130,200,made ground,0,0.8,3.1,
BH2,130,200,sand,0.8,7.0,,20
BH2,130,200,clay,7.0,12.0,,
"""
LEGEND = {"MG": "made ground", "CL": "clay"}
DESCRIPTION = {"sand": "sand"}


def _same_boreholes(a, b) -> None:
    assert [h.id for h in a] == [h.id for h in b]
    for p, q in zip(a, b):
        assert (p.x, p.y) == pytest.approx((q.x, q.y))
        assert p.water_depth == pytest.approx(q.water_depth)
        assert [(i.stratum, i.top, i.bottom) for i in p.intervals] == [
            (i.stratum, pytest.approx(i.top), pytest.approx(i.bottom)) for i in q.intervals
        ]
        assert [i.overrides for i in p.intervals] == [i.overrides for i in q.intervals]


# ------------------------------------------------------------------- AGS4
def test_ags4_written_by_the_library_reads_to_the_csv_boreholes(tmp_path):
    path = write_ags(tmp_path / "si.ags", LOCATIONS, GEOL, WSTG, ISPT, SCPT)
    got = read_boreholes(path, STRATA, legend=LEGEND, description=DESCRIPTION)
    _same_boreholes(got, parse_boreholes(BOREHOLES_CSV, STRATA))


def test_ags4_cone_soundings_read_to_the_csv_form(tmp_path):
    path = write_ags(tmp_path / "si.ags", LOCATIONS, GEOL, scpt=SCPT)
    csv = "sounding,x [m],y [m],depth [m],qc [MPa],fs [kPa]\n" + "".join(
        f"CPT1,115,210,{z},{q},{f}\n" for _, _, z, q, f in SCPT
    )
    (got,) = read_soundings(path)
    (want,) = parse_soundings(csv)
    assert got.id == want.id and (got.x, got.y) == (want.x, want.y)
    np.testing.assert_allclose(got.depth, want.depth)
    np.testing.assert_allclose(got.qc, want.qc)  # MN/m2 read as 1000 kPa (SI definition)
    np.testing.assert_allclose(got.fs, want.fs)


def test_ags4_without_a_unit_line_is_refused_with_the_checker_finding(tmp_path):
    path = write_ags(tmp_path / "si.ags", LOCATIONS, GEOL, drop_unit="GEOL")
    with pytest.raises(InputError) as e:
        read_boreholes(path, STRATA, legend=LEGEND, description=DESCRIPTION)
    assert "si.ags line" in e.value.where and "group GEOL" in e.value.where
    assert "AGS4 checker" in e.value.problem and "UNIT" in e.value.problem


def test_ags4_with_an_unknown_heading_is_refused_naming_it(tmp_path):
    path = write_ags(tmp_path / "si.ags", LOCATIONS, GEOL, extra_heading="GEOL_WOBBLE")
    with pytest.raises(InputError) as e:
        read_boreholes(path, STRATA, legend=LEGEND, description=DESCRIPTION)
    assert "group GEOL" in e.value.where
    assert "GEOL_WOBBLE" in e.value.problem


def test_ags4_stratum_without_a_mapping_names_the_geol_line(tmp_path):
    path = write_ags(tmp_path / "si.ags", LOCATIONS, GEOL)
    with pytest.raises(InputError) as e:
        read_boreholes(path, STRATA, legend=LEGEND)  # no description for the sands
    assert "group GEOL line" in e.value.where and "GEOL_DESC" in e.value.where
    assert "'SA'" in e.value.problem


def test_a_csv_renamed_ags_is_refused(tmp_path):
    path = tmp_path / "si.ags"
    path.write_text(BOREHOLES_CSV, encoding="utf-8")
    with pytest.raises(InputError, match="not an AGS4 file"):
        read_boreholes(path, STRATA)


# -------------------------------------------------------------------- GEF
READINGS = [(0.2 * k + 0.2, 2.0 + 0.3 * k, 0.02 + 0.001 * k) for k in range(40)]


def test_generated_gef_reads_to_the_csv_qc_profile(tmp_path):
    path = write_gef(tmp_path / "cpt7.gef", "CPT7", 431258.0, 289404.0, READINGS)
    csv = "sounding,x [m],y [m],depth [m],qc [MPa],fs [MPa]\n" + "".join(
        f"CPT7,431258,289404,{z:.2f},{q:.4f},{f:.4f}\n" for z, q, f in READINGS
    )
    (got,) = read_soundings(path)
    (want,) = parse_soundings(csv)
    assert got.id == "CPT7" and (got.x, got.y) == (want.x, want.y)
    np.testing.assert_allclose(got.depth, want.depth)
    np.testing.assert_allclose(got.qc, want.qc)
    np.testing.assert_allclose(got.fs, want.fs)


def test_gef_units_of_the_columninfo_lines_are_used(tmp_path):
    kpa = [(z, q * 1000.0, f * 1000.0) for z, q, f in READINGS]
    a = read_soundings(write_gef(tmp_path / "a.gef", "A", 0, 0, READINGS))[0]
    b = read_soundings(write_gef(tmp_path / "b.gef", "B", 0, 0, kpa, qc_unit="kPa", fs_unit="kPa"))[
        0
    ]
    np.testing.assert_allclose(a.qc, b.qc)
    np.testing.assert_allclose(a.fs, b.fs)


def test_a_gef_file_without_cone_resistance_is_refused(tmp_path):
    path = write_gef(tmp_path / "x.gef", "X", 0, 0, READINGS)
    text = path.read_text().replace("2, MPa, cone resistance, 2", "2, MPa, cone resistance, 9")
    path.write_text(text)
    with pytest.raises(InputError) as e:
        read_soundings(path)
    assert e.value.where.startswith("x.gef")


# ------------------------------------------------------------------- xlsx
def _same_footings(a, b) -> None:
    assert [f.id for f in a] == [f.id for f in b]
    for p, q in zip(a, b):
        assert p.shape == q.shape
        np.testing.assert_allclose(p.outline, q.outline, atol=1e-9)
        for k in ("x", "y", "width", "length", "rotation", "depth", "dead_load", "live_load"):
            assert getattr(p, k) == pytest.approx(getattr(q, k), abs=1e-9), k
        assert p.rigid == q.rigid


def test_demo_schedule_as_xlsx_reads_identical_to_the_csv(tmp_path):
    text = (DEMO / "footings.csv").read_text(encoding="utf-8")
    path = csv_to_xlsx(text, tmp_path / "schedule.xlsx", sheet="Footings")
    defaults = FootingDefaults(sustained_live_fraction=0.3)
    got, crs = read_footings(path, defaults, sheet="Footings")
    assert crs is None
    _same_footings(got, parse_footings_csv(text, "footings.csv", defaults))


def test_xlsx_messages_give_the_row_the_spreadsheet_shows(tmp_path):
    text = (STARTER / "footings.csv").read_text(encoding="utf-8")
    lines = text.splitlines()
    data_at = next(i for i, ln in enumerate(lines) if ln.startswith("C2"))  # 0-based
    lines[data_at] = lines[data_at].replace("2.2,2.2", "wide,2.2", 1)
    path = csv_to_xlsx("\n".join(lines) + "\n", tmp_path / "f.xlsx")
    with pytest.raises(InputError) as e:
        read_footings(path, FootingDefaults())
    assert e.value.where.startswith(f'f.xlsx sheet "Sheet1" row {data_at + 1}, column "width')


def test_xlsx_rows_keep_their_numbers_after_empty_rows_and_columns(tmp_path):
    import openpyxl

    book = openpyxl.Workbook()
    ws = book.active
    header = ["id", "x [m]", "y [m]", "width [m]", "depth [m]", "dead_load [kN]"]
    for j, h in enumerate(header):
        ws.cell(row=4, column=2 + j, value=h)  # header in B4: rows 1-3 and column A empty
    for j, v in enumerate(["P1", 0.0, 0.0, -1.0, 1.0, 500.0]):
        ws.cell(row=5, column=2 + j, value=v)
    book.save(tmp_path / "f.xlsx")
    with pytest.raises(InputError) as e:
        read_footings(tmp_path / "f.xlsx", FootingDefaults())
    assert e.value.where == 'f.xlsx sheet "Sheet" row 5, column "width [m]"'


def test_a_merged_header_is_refused_clearly(tmp_path):
    text = (STARTER / "footings.csv").read_text(encoding="utf-8")
    path = csv_to_xlsx(text, tmp_path / "f.xlsx")
    import openpyxl

    book = openpyxl.load_workbook(path)
    header = next(r for r in book.active.iter_rows() if r[0].value == "id")[0].row
    book.active.merge_cells(start_row=header, start_column=3, end_row=header, end_column=4)
    book.save(path)
    with pytest.raises(InputError) as e:
        read_footings(path, FootingDefaults())
    assert e.value.where == f'f.xlsx sheet "Sheet1" row {header}'
    assert f"C{header}:D{header}" in e.value.problem and "merged" in e.value.problem


def test_xlsx_with_two_sheets_needs_the_sheet_name(tmp_path):
    import openpyxl

    path = csv_to_xlsx((STARTER / "footings.csv").read_text(), tmp_path / "f.xlsx")
    book = openpyxl.load_workbook(path)
    book.create_sheet("Notes")
    book.save(path)
    with pytest.raises(InputError, match="2 sheets"):
        read_footings(path, FootingDefaults())
    with pytest.raises(InputError, match="no sheet 'Loads'"):
        read_footings(path, FootingDefaults(), sheet="Loads")
    assert len(read_footings(path, FootingDefaults(), sheet="Sheet1")[0]) == 6


def test_boreholes_and_soundings_from_xlsx(tmp_path):
    b = csv_to_xlsx(BOREHOLES_CSV, tmp_path / "b.xlsx")
    _same_boreholes(read_boreholes(b, STRATA), parse_boreholes(BOREHOLES_CSV, STRATA))
    s_text = (STARTER / "soundings.csv").read_text()
    s = csv_to_xlsx(s_text, tmp_path / "s.xlsx")
    got, want = read_soundings(s), parse_soundings(s_text)
    assert [g.id for g in got] == [w.id for w in want]
    for g, w in zip(got, want):
        np.testing.assert_allclose(g.qc, w.qc)
        np.testing.assert_allclose(g.depth, w.depth)


def test_a_csv_named_xlsx_is_refused(tmp_path):
    path = tmp_path / "f.xlsx"
    path.write_text((STARTER / "footings.csv").read_text())
    with pytest.raises(InputError, match="not an .xlsx workbook"):
        read_footings(path, FootingDefaults())


# -------------------------------------------------------------------- DXF
@pytest.fixture(scope="module")
def drawing(tmp_path_factory):
    import ezdxf

    results = make_results()
    path = tmp_path_factory.mktemp("dxf") / "site.dxf"
    cad.write_dxf(results, path)
    return results, path, ezdxf.readfile(path)


def test_site_dxf_has_one_layer_per_kind(drawing):
    results, _, doc = drawing
    msp = doc.modelspace()
    assert {"FOOTINGS", "PAIRS", "CONTOURS", "POINTS"} <= {lay.dxf.name for lay in doc.layers}
    outlines = msp.query("LWPOLYLINE CIRCLE[layer=='FOOTINGS']")
    assert len(outlines) == len(results.site.footings)
    assert all(e.closed for e in outlines if e.dxftype() == "LWPOLYLINE")
    ids = {t.dxf.text for t in msp.query("TEXT[layer=='FOOTINGS']")}
    assert ids == {f.id for f in results.site.footings}
    assert doc.header["$INSUNITS"] == 6  # metres (DXF reference: 6 = metres)


def test_site_dxf_passes_the_ezdxf_audit_and_us_units_are_feet(drawing, tmp_path):
    import ezdxf
    from ezdxf import recover

    results, path, _ = drawing
    _, auditor = recover.readfile(path)
    assert not auditor.has_errors and not auditor.has_fixes
    cad.write_dxf(results, tmp_path / "us.dxf", "us")
    doc = ezdxf.readfile(tmp_path / "us.dxf")
    assert doc.header["$INSUNITS"] == 2  # feet (DXF reference: 2 = feet)
    f = results.site.footings[0]
    ring = np.array(
        list(doc.modelspace().query("LWPOLYLINE[layer=='FOOTINGS']")[0].get_points("xy"))
    )
    np.testing.assert_allclose(ring, np.asarray(f.outline) / 0.3048)  # NIST SP 811: ft = 0.3048 m


def test_site_dxf_pairs_coloured_by_status(drawing):
    results, _, doc = drawing
    pt = output.pair_table(results)
    lines = doc.modelspace().query("LINE[layer=='PAIRS']")
    assert len(lines) == len(pt)
    want = sorted(cad.PAIR_COLOURS[s] for s in pt["status"])
    assert sorted(e.dxf.color for e in lines) == want
    assert {1, 3} & set(want)  # the factory's site has checked pairs


def test_site_dxf_contours_carry_their_levels(drawing):
    results, _, doc = drawing
    ct = output.contour_table(results)
    msp = doc.modelspace()
    polys = msp.query("LWPOLYLINE[layer=='CONTOURS']")
    assert len(polys) == len(ct) > 0
    assert sorted(p.dxf.elevation for p in polys) == pytest.approx(sorted(ct["level_mm"]))
    texts = {t.dxf.text for t in msp.query("TEXT[layer=='CONTOURS']")}
    assert texts == {f"{v:g} mm" for v in ct["level_mm"]}
    first = np.array(list(polys[0].get_points("xy")))
    geom = np.asarray(ct.geometry.iloc[0].coords)
    assert any(np.allclose(first, np.asarray(g.coords)) for g in ct.geometry) or len(geom)


def test_site_dxf_footings_layer_reads_back_to_the_outlines(drawing):
    results, path, _ = drawing
    outlines = cad.read_dxf_footings(path, "FOOTINGS")
    by_id = {o["cells"]["id"]: o for o in outlines}
    for f in results.site.footings:
        o = by_id[f.id]
        ring = np.asarray(o["shape"].exterior.coords)[:-1]
        np.testing.assert_allclose(ring, np.asarray(f.outline), atol=1e-9)


def _plan_dxf(path: pathlib.Path, footings, *, blocks: bool) -> pathlib.Path:
    """A drawing of footings: outlines on FOOTINGS, a block with attributes (or a text)."""
    import ezdxf

    doc = ezdxf.new("R2013")
    doc.layers.add("FOOTINGS")
    blk = doc.blocks.new("FTG")
    for tag in ("ID", "DEPTH", "DEAD_LOAD", "LIVE_LOAD", "RIGID"):
        blk.add_attdef(tag, (0, 0))
    msp = doc.modelspace()
    for f in footings:
        if f.shape == "circle":
            msp.add_circle((f.x, f.y), f.width / 2, dxfattribs={"layer": "FOOTINGS"})
        else:
            msp.add_lwpolyline(
                [tuple(p) for p in f.outline], close=True, dxfattribs={"layer": "FOOTINGS"}
            )
        if blocks:
            msp.add_blockref("FTG", (f.x, f.y), dxfattribs={"layer": "FOOTINGS"}).add_auto_attribs(
                {
                    "ID": f.id,
                    "DEPTH": f"{f.depth} m",
                    "DEAD_LOAD": f"{f.dead_load} kN",
                    "LIVE_LOAD": f"{f.live_load} kN",
                    "RIGID": "yes" if f.rigid else "no",
                }
            )
        else:
            msp.add_text(f.id, dxfattribs={"layer": "FOOTINGS", "insert": (f.x, f.y)})
    doc.saveas(path)
    return path


def test_a_dxf_plan_reads_to_the_csv_footings(tmp_path):
    text = (STARTER / "footings.csv").read_text(encoding="utf-8")
    want = parse_footings_csv(text)
    path = _plan_dxf(tmp_path / "plan.dxf", want, blocks=True)
    got, crs = read_footings(path, FootingDefaults(), layer="FOOTINGS")
    assert crs is None
    _same_footings(got, want)


def test_dxf_text_ids_take_the_loads_from_the_defaults_or_fail_clearly(tmp_path):
    want = parse_footings_csv((STARTER / "footings.csv").read_text(encoding="utf-8"))
    path = _plan_dxf(tmp_path / "plan.dxf", want, blocks=False)
    with pytest.raises(InputError, match="dead_load"):
        read_footings(path, FootingDefaults(depth=1.0))
    outlines = cad.read_dxf_footings(path, None)
    assert [o["cells"]["id"] for o in outlines] == [f.id for f in want]


def test_dxf_open_polyline_and_missing_label_are_refused(tmp_path):
    import ezdxf

    doc = ezdxf.new("R2013")
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (2, 0), (2, 2)], dxfattribs={"layer": "FOOTINGS"})
    doc.saveas(tmp_path / "open.dxf")
    with pytest.raises(InputError, match="open"):
        cad.read_dxf_footings(tmp_path / "open.dxf", "FOOTINGS")
    doc = ezdxf.new("R2013")
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (2, 0), (2, 2), (0, 2)], close=True, dxfattribs={"layer": "F"})
    msp.add_lwpolyline([(9, 0), (11, 0), (11, 2), (9, 2)], close=True, dxfattribs={"layer": "F"})
    msp.add_text("A", dxfattribs={"layer": "F", "insert": (1, 1)})
    doc.saveas(tmp_path / "nolabel.dxf")
    with pytest.raises(InputError) as e:
        cad.read_dxf_footings(tmp_path / "nolabel.dxf", "F")
    assert "(9.000, 0.000)" in e.value.where and "no text or block" in e.value.problem
    with pytest.raises(InputError, match="no such layer"):
        cad.read_dxf_footings(tmp_path / "nolabel.dxf", "PADS")


# ---------------------------------------------------------------- circles
CIRCLE_CSV = """id,shape,x [m],y [m],width [m],depth [m],dead_load [kN]
T1,circle,0,0,6.0,1.0,3000
P1,rectangle,10,0,2.0,1.0,500
"""


def test_circles_round_trip_as_circles_through_site_gpkg_and_site_dxf(tmp_path):
    import geopandas as gpd

    footings = parse_footings_csv(CIRCLE_CSV)
    frame = gpd.GeoDataFrame(
        {"id": [f.id for f in footings], "dead_load": [f.dead_load for f in footings],
         "depth": [f.depth for f in footings]},
        geometry=gpd.GeoSeries.from_xy([0, 10], [0, 0]).buffer(1.0),
        crs="EPSG:32633",
    )  # fmt: skip
    import shapely

    frame.geometry = [shapely.Polygon(f.outline) for f in footings]  # as site.gpkg writes them
    frame.to_file(tmp_path / "plan.gpkg", driver="GPKG")
    got, _ = read_footings(tmp_path / "plan.gpkg")
    assert [f.shape for f in got] == ["circle", "rectangle"]
    assert got[0].width == pytest.approx(6.0, rel=1e-9)
    assert (got[0].x, got[0].y) == pytest.approx((0.0, 0.0), abs=1e-9)
    path = _plan_dxf(tmp_path / "plan.dxf", footings, blocks=True)
    got, _ = read_footings(path)
    assert [f.shape for f in got] == ["circle", "rectangle"]
    assert got[0].width == pytest.approx(6.0, rel=1e-12)


def test_a_gis_point_with_a_diameter_is_a_circle(tmp_path):
    import geopandas as gpd

    frame = gpd.GeoDataFrame(
        {"id": ["T1"], "diameter": [6.0], "dead_load": [3000.0], "depth": [1.0]},
        geometry=gpd.points_from_xy([5.0], [7.0]),
        crs="EPSG:32633",
    )
    frame.to_file(tmp_path / "tank.geojson", driver="GeoJSON")
    (got,), _ = read_footings(tmp_path / "tank.geojson")
    assert got.shape == "circle" and got.width == 6.0 and (got.x, got.y) == (5.0, 7.0)
    frame = frame.drop(columns=["diameter"])
    frame.to_file(tmp_path / "bare.geojson", driver="GeoJSON")
    with pytest.raises(InputError, match="Point without a diameter"):
        read_footings(tmp_path / "bare.geojson")


def test_a_polygon_with_a_diameter_property_is_that_circle(tmp_path):
    import geopandas as gpd
    import shapely

    coarse = shapely.Point(2.0, 3.0).buffer(2.0, quad_segs=4)  # a 16-gon, area 3 % short
    frame = gpd.GeoDataFrame(
        {"id": ["T1"], "diameter": [4.0], "dead_load": [900.0], "depth": [1.0]},
        geometry=[coarse],
        crs="EPSG:32633",
    )
    frame.to_file(tmp_path / "t.geojson", driver="GeoJSON")
    (got,), _ = read_footings(tmp_path / "t.geojson")
    assert got.shape == "circle" and got.width == 4.0
    assert (got.x, got.y) == pytest.approx((2.0, 3.0), abs=1e-9)
    frame.geometry = [shapely.box(0, 1, 4, 5)]  # a 4 m square is 27 % larger than the circle
    frame.to_file(tmp_path / "sq.geojson", driver="GeoJSON")
    with pytest.raises(InputError, match="not that of a circle"):
        read_footings(tmp_path / "sq.geojson")


def test_a_buffered_point_is_a_circle_and_a_square_is_not(tmp_path):
    import geopandas as gpd
    import shapely

    frame = gpd.GeoDataFrame(
        {"id": ["T1", "P1"], "dead_load": [3000.0, 400.0], "depth": [1.0, 1.0]},
        geometry=[shapely.Point(0, 0).buffer(3.0), shapely.box(10, 0, 12, 2)],
        crs="EPSG:32633",
    )
    frame.to_file(tmp_path / "p.geojson", driver="GeoJSON")
    got, _ = read_footings(tmp_path / "p.geojson")
    assert [f.shape for f in got] == ["circle", "rectangle"]
    assert got[0].width == pytest.approx(6.0, rel=1e-9)
    assert math.pi * got[0].width ** 2 / 4 == pytest.approx(math.pi * 9.0, rel=1e-9)


# ------------------------------------------------------------ whole project
def _load(folder):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", InputWarning)
        return sitesettle.load_site(folder)


def test_alternative_demo_reads_to_the_csv_demo():
    """demo_site/alt (AGS4, GEF, .xlsx, DXF) holds the CSV demo's data: the same site.

    BH3 was logged in feet; the AGS4 file holds its depths in metres to 2 decimals
    (AGS4 type 2DP), hence the 5 mm tolerance on depths.
    """
    alt, csv = _load(DEMO / "alt"), _load(DEMO)
    assert {p.suffix for p in (DEMO / "alt").iterdir()} >= {".ags", ".gef", ".xlsx", ".dxf"}
    _same_footings(
        sorted(alt.footings, key=lambda f: f.id), sorted(csv.footings, key=lambda f: f.id)
    )
    assert [b.id for b in alt.boreholes] == [b.id for b in csv.boreholes]
    for p, q in zip(alt.boreholes, csv.boreholes):
        assert (p.x, p.y) == (q.x, q.y)
        assert p.water_depth == pytest.approx(q.water_depth, abs=5e-3)
        assert [i.stratum for i in p.intervals] == [i.stratum for i in q.intervals]
        for i, j in zip(p.intervals, q.intervals):
            assert (i.top, i.bottom) == pytest.approx((j.top, j.bottom), abs=5e-3)
            assert i.overrides == j.overrides  # SPT means equal the CSV's N
    alt_s = {s.id: s for s in alt.soundings}
    assert set(alt_s) == {s.id for s in csv.soundings}
    for s in csv.soundings:
        np.testing.assert_allclose(alt_s[s.id].qc, s.qc, rtol=1e-3)
        np.testing.assert_allclose(alt_s[s.id].depth, s.depth)
