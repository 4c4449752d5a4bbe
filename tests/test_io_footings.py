"""Footing files: the same plan from CSV and GIS files, shapes, loads and validation."""

import math

import geopandas as gpd
import numpy as np
import pytest
import shapely
from shapely import affinity
from shapely.geometry import MultiPolygon, Polygon, box

from sitesettle.errors import InputError, InputWarning
from sitesettle.io.footings import (
    FootingDefaults,
    parse_footings_csv,
    parse_footings_frame,
    read_footings,
)

# An invented plan: two pads, a rotated strip, a square turned 30° (3 significant
# figures of the coordinates are exact binary fractions or simple decimals).
PLAN_CSV = """id,x,y,width,length,rotation,depth,dead_load,live_load,sustained_live_fraction,rigid
P1,0,0,2.0,2.0,0,1.0,600,200,0.3,yes
P2,8,0,2.0,3.0,0,1.2,800,250,0.3,yes
S1,4,9,1.0,10.0,30,0.8,1500,500,0.5,no
Q1,16,4,2.5,2.5,30,1.0,700,200,0.3,yes
"""


def _plan_polygons():
    """The same plan drawn independently with shapely (box, then rotate about the centre)."""

    def rect(x, y, w, l, rot):
        return affinity.rotate(box(x - l / 2, y - w / 2, x + l / 2, y + w / 2), rot, origin=(x, y))

    return [
        rect(0, 0, 2.0, 2.0, 0),
        rect(8, 0, 2.0, 3.0, 0),
        rect(4, 9, 1.0, 10.0, 30),
        # clockwise ring, to test orientation
        Polygon(list(rect(16, 4, 2.5, 2.5, 30).exterior.coords)[::-1]),
    ]


def _plan_frame(crs="EPSG:32633"):
    attrs = {
        "id": ["P1", "P2", "S1", "Q1"],
        "depth": [1.0, 1.2, 0.8, 1.0],
        "dead_load": [600.0, 800.0, 1500.0, 700.0],
        "live_load": [200.0, 250.0, 500.0, 200.0],
        "sustained": [0.3, 0.3, 0.5, 0.3],
        "rigid": [1, 1, 0, 1],
    }
    return gpd.GeoDataFrame(attrs, geometry=_plan_polygons(), crs=crs)


def _same(a, b):
    # GIS files store doubles (GeoJSON as decimal text, ~15 digits): 1e-9 m is far below any drawing
    assert (a.id, a.shape, a.rigid) == (b.id, b.shape, b.rigid)
    for name in (
        "x",
        "y",
        "width",
        "length",
        "rotation",
        "depth",
        "dead_load",
        "live_load",
        "sustained_live_fraction",
        "fill_unit_weight",
    ):
        assert getattr(a, name) == pytest.approx(getattr(b, name), abs=1e-9), name
    np.testing.assert_allclose(a.outline, b.outline, atol=1e-9)


@pytest.mark.parametrize(
    "suffix, driver", [(".geojson", "GeoJSON"), (".gpkg", "GPKG"), (".shp", "ESRI Shapefile")]
)
def test_same_plan_from_csv_and_gis_files(tmp_path, suffix, driver):
    from_csv = parse_footings_csv(PLAN_CSV)
    path = tmp_path / f"plan{suffix}"
    _plan_frame().to_file(path, driver=driver)
    from_gis, crs = read_footings(path)
    assert crs == "EPSG:32633"
    assert len(from_gis) == len(from_csv)
    for a, b in zip(from_csv, from_gis):
        _same(a, b)


def test_csv_rectangle_geometry():
    f = parse_footings_csv(PLAN_CSV)[2]  # S1: 1 m × 10 m strip at 30°
    assert (f.width, f.length, f.rotation) == (1.0, 10.0, 30.0)
    assert f.area == pytest.approx(10.0, rel=1e-12)
    # the long axis is at 30° from east: the far corner lies 5 m along it and 0.5 m across
    a = math.radians(30)
    corner = np.array(
        [4 + 5 * math.cos(a) - 0.5 * -math.sin(a), 9 + 5 * math.sin(a) - 0.5 * math.cos(a)]
    )
    assert np.min(np.hypot(*(f.outline - corner).T)) < 1e-12
    assert Polygon(f.outline).exterior.is_ccw


def test_width_above_length_is_swapped_and_rotated():
    f = parse_footings_csv("id,x,y,width,length,rotation,depth,dead_load\nA,0,0,3,2,10,1,500\n")[0]
    assert (f.width, f.length, f.rotation) == (2.0, 3.0, 100.0)


def test_circle_outline_and_exact_area():
    f = parse_footings_csv("id,shape,x,y,width,depth,dead_load\nT,circle,1,2,3,1,1000\n")[0]
    assert f.shape == "circle" and f.outline.shape == (64, 2)
    assert f.area == pytest.approx(math.pi * 1.5**2, rel=1e-12)  # π r², exact for the circle
    np.testing.assert_allclose(np.hypot(f.outline[:, 0] - 1, f.outline[:, 1] - 2), 1.5, rtol=1e-12)


def test_polygon_footprint_uses_minimum_rotated_rectangle():
    # an L-shaped combined footing: 4 m × 3 m with a 2 m × 1.5 m notch; bounding box 3 × 4
    L = Polygon([(0, 0), (4, 0), (4, 1.5), (2, 1.5), (2, 3), (0, 3)])
    frame = gpd.GeoDataFrame({"id": ["L1"], "depth": [1.0], "dead_load": [900.0]}, geometry=[L])
    (f,), crs = parse_footings_frame(frame)
    assert crs is None
    assert f.shape == "polygon" and f.outline.shape == (6, 2)
    assert (f.width, f.length) == pytest.approx((3.0, 4.0))
    assert f.rotation == pytest.approx(0.0, abs=1e-9)
    assert f.area == pytest.approx(4 * 3 - 2 * 1.5)
    assert (f.x, f.y) == pytest.approx((L.centroid.x, L.centroid.y))


def test_pressure_columns_and_header_units():
    text = (
        "id,x [ft],y [ft],width [ft],depth [ft],dead_pressure [ksf],live_load [kip]\n"
        "A,0,0,10,3,2,50\n"
    )
    f = parse_footings_csv(text)[0]
    ft, lbf = 0.3048, 4.4482216152605e-3  # NIST SP 811: exact; lbf in kN
    assert f.width == pytest.approx(10 * ft, rel=1e-12)
    # pressure × area: 2 ksf over (10 ft)² = 200 kip
    assert f.dead_load == pytest.approx(200_000 * lbf, rel=1e-12)
    assert f.live_load == pytest.approx(50_000 * lbf, rel=1e-12)


def test_defaults_fill_blank_columns():
    d = FootingDefaults(depth=1.5, sustained_live_fraction=0.25, rigid=False, fill_unit_weight=0.0)
    f = parse_footings_csv("id,x,y,width,dead_load,live_load\nA,0,0,2,500,100\n", defaults=d)[0]
    assert (f.depth, f.sustained_live_fraction, f.rigid, f.fill_unit_weight) == (
        1.5,
        0.25,
        False,
        0.0,
    )


def test_extra_columns_are_ignored_but_typos_are_not():
    parse_footings_csv("id,x,y,width,depth,dead_load,grid_line\nA,0,0,2,1,500,B/3\n")
    with pytest.raises(
        InputError,
        match=r'footings.csv column "widht": unknown column; did you mean "width"',
    ):
        parse_footings_csv("id,x,y,width,widht,depth,dead_load\nA,0,0,2,2,1,500\n")


# --------------------------------------------------------------------------- validation
HEAD = "id,x,y,width,length,depth,dead_load,live_load\n"


@pytest.mark.parametrize(
    "rows, match",
    [
        ("A,0,0,0,2,1,500,0\n", r'row 2, column "width": the width 0 m is not positive'),
        ("A,0,0,2,-1,1,500,0\n", r'row 2, column "length": the length -1 m is not positive'),
        ("A,0,0,2,2,1,0,0\n", r'row 2, column "dead_load": the dead load 0 kN is not positive'),
        ("A,0,0,2,2,1,500,-5\n", r'row 2, column "live_load": the live load -5 kN is negative'),
        ("A,0,0,2,2,-1,500,0\n", r'row 2, column "depth": the base depth -1 m is negative'),
        ("A,0,0,nan,2,1,500,0\n", r'row 2, column "width": "nan" is not a finite number'),
        ("A,0,inf,2,2,1,500,0\n", r'row 2, column "y": "inf" is not a finite number'),
        (
            "A,0,0,2,2,1,500 kPa,0\n",
            r'row 2, column "dead_load": "500 kPa" is a pressure; expected a force',
        ),
        ("A,0,0,2,2,1,,0\n", r'row 2, column "dead_load": the dead load is missing'),
        (
            "A,0,0,2,2,1,500,0\nA,5,0,2,2,1,500,0\n",
            r'row 3: the footing id "A" is used again \(first at row 2\)',
        ),
        (
            "A,0,0,2,2,1,500,0\nB,1.5,0,2,2,1,500,0\n",
            r'row 3: footing "B" overlaps footing "A" \(row 2\) by 1 m²',
        ),
    ],
)
def test_footing_rows_are_validated(rows, match):
    with pytest.raises(InputError, match=match):
        parse_footings_csv(HEAD + rows)


def test_touching_footings_are_not_an_overlap():
    parse_footings_csv(HEAD + "A,0,0,2,2,1,500,0\nB,2,0,2,2,1,500,0\n")


def test_row_numbers_count_comments_and_blank_lines_as_a_spreadsheet_does():
    text = "# plan\n" + HEAD + "\nA,0,0,2,2,1,500,0\nB,9,0,-2,2,1,500,0\n"
    with pytest.raises(InputError, match="footings.csv row 5, "):
        parse_footings_csv(text)


def test_empty_footing_file():
    with pytest.raises(InputError, match="footings.csv: the file has no footings"):
        parse_footings_csv(HEAD)
    with pytest.raises(InputError, match="footings.csv: the file is empty"):
        parse_footings_csv("\n\n")


def test_missing_required_column():
    with pytest.raises(InputError, match=r'footings.csv: the required column "width" is missing'):
        parse_footings_csv("id,x,y,depth,dead_load\nA,0,0,1,500\n")
    with pytest.raises(
        InputError, match=r'footings.csv: the required column "dead_load" \(or "dead_pressure"\)'
    ):
        parse_footings_csv("id,x,y,width,depth\nA,0,0,1,1\n")


def test_both_load_and_pressure_is_an_error():
    with pytest.raises(
        InputError, match=r'row 2, column "dead_pressure": both dead_load and dead_pressure'
    ):
        parse_footings_csv("id,x,y,width,depth,dead_load,dead_pressure\nA,0,0,2,1,500,100\n")


def test_suspicious_pressure_warns():
    # 5000 kN on 1 m² = 5 MPa, beyond any shallow footing (common practice ≤ ~1 MPa)
    with pytest.warns(InputWarning, match=r"row 2: footing 'A' carries 5000 kPa"):
        parse_footings_csv("id,x,y,width,depth,dead_load\nA,0,0,1,1,5000\n")


@pytest.mark.parametrize(
    "geom, match",
    [
        (
            Polygon([(0, 0), (2, 2), (2, 0), (0, 2)]),
            r"feature 1: the polygon is invalid \(Self-intersection",
        ),
        (Polygon(), "feature 1: the geometry is empty"),
        (MultiPolygon([box(0, 0, 1, 1), box(3, 0, 4, 1)]), "feature 1: the geometry has 2 parts"),
        (shapely.Point(0, 0).buffer(0), "feature 1: the geometry is empty"),
        (shapely.LineString([(0, 0), (1, 1)]), "feature 1: the geometry is a LineString"),
        (Polygon([(0, 0), (2, 0), (4, 0)]), r"feature 1: the polygon (has no area|is invalid)"),
        (
            Polygon(box(0, 0, 4, 4).exterior, [box(1, 1, 2, 2).exterior]),
            "feature 1: the polygon has a hole",
        ),
    ],
)
def test_bad_geometries(geom, match):
    frame = gpd.GeoDataFrame({"id": ["A"], "depth": [1.0], "dead_load": [500.0]}, geometry=[geom])
    with pytest.raises(InputError, match=match):
        parse_footings_frame(frame, "plan.gpkg")


def test_single_part_multipolygon_is_accepted(tmp_path):
    frame = gpd.GeoDataFrame(
        {"id": ["A"], "depth": [1.0], "dead_load": [500.0]},
        geometry=[MultiPolygon([box(0, 0, 2, 3)])],
    )
    (f,), _ = parse_footings_frame(frame)
    assert f.shape == "rectangle" and (f.width, f.length) == pytest.approx((2.0, 3.0))
    assert f.rotation == pytest.approx(90.0)  # long side (3 m) along north


def test_gis_property_with_numbers_and_blanks_is_read_cell_by_cell(tmp_path):
    # a GeoJSON property that is a number in one feature and blank text in another
    # comes back as text; each cell is parsed, a blank takes the default (the
    # reader's own warning about the mixed column is not passed on: the test suite
    # turns warnings into errors)
    import json

    square = [[[0.0, 0.0], [2.0, 0.0], [2.0, 2.0], [0.0, 2.0], [0.0, 0.0]]]
    feats = [
        {
            "type": "Feature",
            "properties": {"id": fid, "dead_load": 500.0, "depth": depth},
            "geometry": {"type": "Polygon", "coordinates": [[[x + a, b] for a, b in square[0]]]},
        }
        for fid, depth, x in (("P1", "", 0.0), ("P2", 1.0, 6.0), ("P3", "1.4 m", 12.0))
    ]
    p = tmp_path / "plan.geojson"
    crs = {"type": "name", "properties": {"name": "urn:ogc:def:crs:EPSG::32633"}}  # metres
    collection = {"type": "FeatureCollection", "crs": crs, "features": feats}
    p.write_text(json.dumps(collection), encoding="utf-8")
    found, _ = read_footings(p, FootingDefaults(depth=0.8))
    assert [f.depth for f in found] == pytest.approx([0.8, 1.0, 1.4])


def test_unreadable_gis_file(tmp_path):
    p = tmp_path / "plan.gpkg"
    p.write_bytes(b"not a geopackage")  # refused on its first bytes, before GDAL opens it
    with pytest.raises(InputError, match="plan.gpkg: the footings file is not a GeoPackage"):
        read_footings(p)


@pytest.mark.parametrize(
    "text, match",
    [
        (
            HEAD + "A,0,0,2,2,1,500,0,extra\n",
            r"footings.csv row 2: 9 cells but the header has 8 columns",
        ),
        (
            "id,x,x,width,depth,dead_load\nA,0,0,2,1,500\n",
            r'footings.csv row 1: the column "x" appears twice',
        ),
        (
            "id,shape,x,y,width,depth,dead_load\nA,hexagon,0,0,2,1,500\n",
            r'column "shape": unknown shape "hexagon"',
        ),
        (
            "id,x,y,width,depth,dead_load,sustained_live_fraction\nA,0,0,2,1,500,1.5\n",
            r'column "sustained_live_fraction": 1.5 is outside 0–1',
        ),
        (
            "id,x,y,width,depth,dead_load,rigid\nA,0,0,2,1,500,maybe\n",
            r'column "rigid": cannot read "maybe"',
        ),
        (
            "id,x,y,width,depth,dead_load\n,0,0,2,1,500\n",
            r'row 2, column "id": the value is missing',
        ),
    ],
)
def test_malformed_footing_files(text, match):
    with pytest.raises(InputError, match=match):
        parse_footings_csv(text)


def test_semicolon_separated_file_is_read():
    f = parse_footings_csv("id;x;y;width;depth;dead_load\nA;0;0;2;1;500\n")
    assert f[0].width == 2.0


def test_separator_comes_from_the_header_not_from_comments():
    # comment lines with commas above a semicolon table (a spreadsheet export with
    # notes on top): the header row decides; a tab table likewise
    text = (
        "# pads C1, C2, wall S1\n# loads: dead, live\n"
        "id;x;y;width;depth;dead_load\nA;0;0;2.5;1;500\n"
    )
    assert parse_footings_csv(text)[0].width == 2.5
    text = "# a, b, c\nid\tx\ty\twidth\tdepth\tdead_load\nA\t0\t0\t1.5\t1\t500\n"
    assert parse_footings_csv(text)[0].width == 1.5


def test_decimal_comma_in_a_semicolon_file_is_refused_at_its_row():
    # "1,8" in a semicolon file is a decimal comma: refused with a message that
    # names the row as a spreadsheet shows it (header on row 2, first data row 3)
    text = "# exported\nid;x;y;width [m];depth;dead_load\nA;0;0;1,8;1;500\n"
    with pytest.raises(InputError, match=r'row 3, column "width \[m\]": "1,8" has a comma'):
        parse_footings_csv(text)


def test_bad_header_names_its_own_row():
    text = "# notes\n# more notes\nid,x,y,[m],depth,dead_load\nA,0,0,2,1,500\n"
    with pytest.raises(InputError, match=r"row 3, column 4: cannot read the header"):
        parse_footings_csv(text)
