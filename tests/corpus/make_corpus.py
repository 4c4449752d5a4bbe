"""Write the corpus of broken projects: one small folder per case, each runnable.

Run ``python tests/corpus/make_corpus.py`` from the repository root to (re)write
every case folder from the starter project (sitesettle/templates/starter) and
the patches below. Each folder holds a complete project (what differs from the
starter, and the starter's other files) and a ``case.toml``:

``problem``
    what is wrong, in words;
``where``
    text the message must contain (the file and its row, column or key);
``message``
    a regular expression the message must match (what is wrong);
``expected``
    a regular expression for the "expected …" part (what is expected);
``args``
    extra arguments of ``sitesettle check`` (e.g. ``--out``), optional;
``warning``
    true for a case that must load with a warning and run (exit 0 or 1).

The GIS cases are GeoJSON files written here with shapely and geopandas.
tests/test_corpus.py runs every case through the command.
"""

from __future__ import annotations

import json
import pathlib
import shutil

HERE = pathlib.Path(__file__).resolve().parent
STARTER = HERE.parents[1] / "sitesettle" / "templates" / "starter"

CASES: dict[str, dict] = {}


def case(name: str, problem: str, where: str, message: str, expected: str = "", **extra):
    """Register a case; the decorated function patches the copied starter folder."""

    def wrap(patch):
        CASES[name] = {
            "problem": problem,
            "where": where,
            "message": message,
            "expected": expected,
            "patch": patch,
            **extra,
        }
        return patch

    return wrap


def sub(folder: pathlib.Path, file: str, old: str, new: str, count: int = 1) -> None:
    """Replace ``old`` by ``new`` in a file (``old`` must be there)."""
    path = folder / file
    text = path.read_text(encoding="utf-8")
    assert old in text, (file, old)
    path.write_text(text.replace(old, new, count), encoding="utf-8")


def drop_column(folder: pathlib.Path, file: str, header: str) -> None:
    """Remove a column (by its header) from a CSV file, keeping comment lines."""
    path = folder / file
    lines = path.read_text(encoding="utf-8").splitlines()
    i = None
    out = []
    for line in lines:
        if line.startswith("#") or not line.strip():
            out.append(line)
            continue
        cells = line.split(",")
        if i is None:
            i = cells.index(header)
        out.append(",".join(cells[:i] + cells[i + 1 :]))
    path.write_text("\n".join(out) + "\n", encoding="utf-8")


def toml_sub(folder, old, new):
    sub(folder, "site.toml", old, new)


def footing_geojson(folder, name, polygons, crs="EPSG:32633", ids=None):
    """A GeoJSON footing file: one feature per geometry, with id and dead load."""
    import geopandas

    ids = ids or [f"G{i}" for i in range(1, len(polygons) + 1)]
    frame = geopandas.GeoDataFrame(
        {"id": ids, "dead_load": [500.0] * len(polygons), "depth": [1.0] * len(polygons)},
        geometry=list(polygons),
        crs=crs,
    )
    frame.to_file(folder / name, driver="GeoJSON")


# ------------------------------------------------------------------ site.toml
@case(
    "toml_syntax",
    "an unclosed string in site.toml",
    "site.toml",
    r"not valid TOML.*line \d+",
    "key = value",
)
def _(d):
    toml_sub(d, 'client = "Example client"', 'client = "Example client')


@case(
    "toml_unknown_table",
    "the table [analyses] instead of [analysis]",
    "site.toml, [analyses]",
    r'unknown table.*did you mean "analysis"',
    "one of the tables",
)
def _(d):
    toml_sub(d, "[analysis]", "[analyses]")


@case(
    "toml_misspelt_key",
    "design_life spelt desing_life",
    "site.toml [analysis], key 'desing_life'",
    r'unknown key; did you mean "design_life"',
    "one of",
)
def _(d):
    toml_sub(d, 'design_life = "50 yr"', 'desing_life = "50 yr"')


@case(
    "toml_unknown_key",
    "an unknown key in [footings]",
    "site.toml [footings], key 'colour'",
    r"unknown key",
    "one of file",
)
def _(d):
    toml_sub(d, 'file = "footings.csv"', 'file = "footings.csv"\ncolour = "red"')


@case(
    "toml_strata_misspelt_key",
    "youngs_modulus spelt young_modulus in a stratum",
    "young_modulus",
    r'unknown key.*did you mean "youngs_modulus"',
    "",
)
def _(d):
    toml_sub(d, 'youngs_modulus = "8 MPa"', 'young_modulus = "8 MPa"')


@case(
    "unit_wrong_dimension",
    "a water depth given as a mass",
    "[groundwater], key 'depth'",
    r"mass",
    "length",
)
def _(d):
    toml_sub(d, 'depth = "2.5 m"                    # site-wide', 'depth = "2.5 kg"  # site-wide')


@case("unit_unknown", "a design life in an unknown unit", "key 'design_life'", r"unit", "time")
def _(d):
    toml_sub(d, 'design_life = "50 yr"', 'design_life = "50 blorgs"')


@case(
    "unit_modulus_as_length",
    "a Young's modulus given as a length",
    "youngs_modulus",
    r"length",
    "pressure",
)
def _(d):
    toml_sub(d, 'youngs_modulus = "8 MPa"', 'youngs_modulus = "8 m"')


@case(
    "suspicious_modulus",
    "a modulus of 300 kPa: plausible (peat) but very soft for sand, check the unit",
    "youngs_modulus",
    r"300 kPa is outside the usual range",
    "",
    warning=True,
)
def _(d):
    toml_sub(d, 'youngs_modulus = "8 MPa"', 'youngs_modulus = "300 kPa"')
    toml_sub(d, 'map_spacing = "0 m"', 'map_spacing = "3 m"')  # a coarse map: a quick run


@case(
    "implausible_modulus",
    "a bare modulus of 25 (read as kPa): below any soil, the unit was MPa",
    "youngs_modulus",
    r"25 kPa is outside the plausible range .* if the number is in MPa",
    r"100–5,000,000 kPa",
)
def _(d):
    toml_sub(d, 'youngs_modulus = "8 MPa"', "youngs_modulus = 25")


@case(
    "implausible_unit_weight",
    "a unit weight of 1800 (a density in kg/m³ written without its unit)",
    "unit_weight",
    r"1800 kN/m³ is outside the plausible range .* if the number is in kg/m³",
    r"8–28 kN/m³",
)
def _(d):
    toml_sub(d, 'unit_weight = "17 kN/m^3"', "unit_weight = 1800")


@case(
    "implausible_qc",
    "cone resistances in MPa under a header that says kPa",
    "soundings.csv",
    r"median cone resistance of sounding \"CPT1\" is .* kPa, outside the plausible",
    r"qc\[MPa\]",
)
def _(d):
    sub(d, "soundings.csv", "qc [MPa]", "qc [kPa]")


@case(
    "override_bare_number",
    "a total-settlement override of 75 with no unit (75 m: every footing would pass)",
    "overrides key 'total'",
    r"the limit 75 has no unit",
    r'"40 mm"',
)
def _(d):
    toml_sub(d, '# total = "40 mm"', "total = 75")


@case(
    "override_implausible",
    "an angular-distortion override of 1/5 (a slope, not a damage limit)",
    "overrides key 'angular_distortion'",
    r'the limit "1/5" \(1/5\) is outside the plausible range',
    r"1/100,000 to 1/10",
)
def _(d):
    toml_sub(d, '# angular_distortion = "1/500"', 'angular_distortion = "1/5"')


@case(
    "toml_negative_design_life",
    "a negative design life",
    "key 'design_life'",
    r"out of range",
    "> 0",
)
def _(d):
    toml_sub(d, 'design_life = "50 yr"', 'design_life = "-5 yr"')


@case(
    "toml_zero_sublayer",
    "a sublayer fraction of zero",
    "key 'sublayer_fraction'",
    r"out of range",
    "≥ 0.01",
)
def _(d):
    toml_sub(d, "sublayer_fraction = 0.1", "sublayer_fraction = 0")


@case(
    "toml_nan_influence",
    "an influence fraction of NaN",
    "key 'influence_fraction'",
    r"nan|not a finite|out of range",
    "",
)
def _(d):
    toml_sub(d, "influence_fraction = 0.1", "influence_fraction = nan")


@case(
    "toml_inf_margin", "an infinite map margin", "key 'map_margin'", r"inf|finite|out of range", ""
)
def _(d):
    toml_sub(d, 'map_margin = "5 m"', "map_margin = inf")


@case(
    "toml_negative_groundwater",
    "a negative site-wide water depth",
    "[groundwater], key 'depth'",
    r"negative|above ground|out of range",
    "",
)
def _(d):
    toml_sub(d, 'depth = "2.5 m"                    # site-wide', 'depth = "-2.5 m"  # site-wide')


@case(
    "toml_bad_fraction",
    "a sustained live fraction above 1",
    "sustained_live_fraction",
    r"1\.5",
    "0",
)
def _(d):
    toml_sub(d, "sustained_live_fraction = 0.3", "sustained_live_fraction = 1.5")


@case(
    "toml_unknown_measure",
    "an override of an unknown measure",
    "overrides key 'totl'",
    r'unknown measure; did you mean "total"',
    "one of",
)
def _(d):
    toml_sub(d, '# total = "40 mm"', 'totl = "40 mm"')


@case(
    "toml_missing_footings_file",
    "the referenced footings file does not exist",
    "[footings], key 'file'",
    r'"pads.csv" does not exist',
    "a path relative",
)
def _(d):
    toml_sub(d, 'file = "footings.csv"', 'file = "pads.csv"')


# ------------------------------------------------------------------ strata
@case("strata_poisson_half", "a Poisson ratio of 0.5", "poisson_ratio", r"0\.5", "0.5|< ?0\\.5|ν")
def _(d):
    toml_sub(d, "poisson_ratio = 0.35", "poisson_ratio = 0.5")


@case(
    "strata_negative_cc",
    "a negative compression index",
    "compression_index",
    r"-0\.25|negative|not positive",
    "",
)
def _(d):
    toml_sub(d, "compression_index = 0.25", "compression_index = -0.25")


@case("strata_rigid_not_last", "a rigid stratum above another one", "rigid", r"rigid", "last")
def _(d):
    toml_sub(
        d,
        'behaviour = "granular"\nunit_weight = "18 kN/m^3"',
        'behaviour = "rigid"\nunit_weight = "18 kN/m^3"',
    )


@case(
    "strata_duplicate_name",
    "two strata with the same name",
    "sand",
    r"twice|again|duplicate|unique|more than once",
    "",
)
def _(d):
    toml_sub(d, 'name = "clay"', 'name = "sand"')


@case(
    "strata_missing_void_ratio",
    "a cohesive stratum without its void ratio",
    "void_ratio",
    r"missing|required|needs",
    "",
)
def _(d):
    toml_sub(d, "void_ratio = 0.85                  # initial void ratio e0\n", "")


# ------------------------------------------------------------------ footings.csv
@case(
    "footing_negative_width",
    "a negative width",
    'footings.csv row 5, column "width [m]"',
    r"not positive",
    "width > 0",
)
def _(d):
    sub(d, "footings.csv", "C2,rectangle,6,0,2.2,", "C2,rectangle,6,0,-2.2,")


@case(
    "footing_zero_length",
    "a zero length",
    'footings.csv row 6, column "length [m]"',
    r"not positive",
    "length > 0",
)
def _(d):
    sub(d, "footings.csv", "C3,rectangle,0,7,1.8,1.8,", "C3,rectangle,0,7,1.8,0,")


@case(
    "footing_nan_load",
    "a dead load of NaN",
    'footings.csv row 4, column "dead_load [kN]"',
    r"nan|finite|not positive",
    "",
)
def _(d):
    sub(d, "footings.csv", "1.0,420,140", "1.0,nan,140")


@case("footing_inf_x", "an infinite x", 'footings.csv row 7, column "x [m]"', r"inf|finite", "")
def _(d):
    sub(d, "footings.csv", "C4,rectangle,6,7,", "C4,rectangle,inf,7,")


@case(
    "footing_negative_live",
    "a negative live load",
    'footings.csv row 8, column "live_load [kN]"',
    r"negative",
    "",
)
def _(d):
    sub(d, "footings.csv", "1400,400", "1400,-400")


@case(
    "footing_negative_depth",
    "a negative base depth",
    'footings.csv row 9, column "depth [m]"',
    r"negative|above ground",
    "",
)
def _(d):
    sub(d, "footings.csv", "3.0,,,0.6,", "3.0,,,-0.6,")


@case(
    "footing_cell_wrong_unit",
    "a width given as a mass",
    'footings.csv row 4, column "width [m]"',
    r"mass",
    "length",
)
def _(d):
    sub(d, "footings.csv", "C1,rectangle,0,0,1.8,", "C1,rectangle,0,0,3 kg,")


@case(
    "footing_header_unknown_unit",
    "an unknown unit in a header",
    'footings.csv column "width [furlongz]"',
    r"unit",
    "",
)
def _(d):
    sub(d, "footings.csv", "width [m]", "width [furlongz]")


@case(
    "footing_text_in_number",
    "text where a number is expected",
    'footings.csv row 5, column "y [m]"',
    r"cannot read|not a number|abc",
    "",
)
def _(d):
    sub(d, "footings.csv", "C2,rectangle,6,0,", "C2,rectangle,6,abc,")


@case(
    "footing_missing_column",
    "the dead load column is missing",
    "footings.csv",
    r'"dead_load".*missing',
    "dead load",
)
def _(d):
    drop_column(d, "footings.csv", "dead_load [kN]")


@case(
    "footing_misspelt_column",
    "width spelt widht",
    'footings.csv column "widht [m]"',
    r'unknown column; did you mean "width"',
    "one of",
)
def _(d):
    sub(d, "footings.csv", "width [m]", "widht [m]")


@case(
    "footing_duplicate_id",
    "two footings with the id C1",
    "footings.csv row 6",
    r'"C1" is used again \(first at row 4\)',
    "unique id",
)
def _(d):
    sub(d, "footings.csv", "C3,rectangle,0,7,", "C1,rectangle,0,7,")


@case(
    "footing_overlap",
    "C2 moved onto C1",
    "footings.csv row 5",
    r'"C2" overlaps footing "C1" \(row 4\)',
    "do not overlap",
)
def _(d):
    sub(d, "footings.csv", "C2,rectangle,6,0,", "C2,rectangle,1,0.5,")


@case(
    "footing_coincident",
    "two footings at the same place",
    "footings.csv row 10",
    r'"C1b" overlaps footing "C1" \(row 4\)',
    "do not overlap",
)
def _(d):
    with (d / "footings.csv").open("a", encoding="utf-8") as fh:
        fh.write("C1b,rectangle,0,0,1.8,1.8,0,1.0,420,140,true\n")


@case("footing_empty_file", "an empty footings file", "footings.csv", r"empty", "header")
def _(d):
    (d / "footings.csv").write_text("", encoding="utf-8")


@case(
    "footing_header_only",
    "a footings file with a header and no rows",
    "footings.csv",
    r"no footings",
    "at least one",
)
def _(d):
    (d / "footings.csv").write_text(
        "id,shape,x [m],y [m],width [m],length [m],depth [m],dead_load [kN]\n", encoding="utf-8"
    )


@case(
    "footing_not_utf8",
    "a footings file saved as Latin-1",
    "footings.csv line 9",
    r"not UTF-8",
    "UTF-8",
)
def _(d):
    path = d / "footings.csv"
    text = path.read_text(encoding="utf-8").replace("T1,circle", "Té1,circle")
    path.write_bytes(text.encode("latin-1"))


@case(
    "footing_extra_cells",
    "a row with more cells than the header",
    "footings.csv row 5",
    r"cells but the header has",
    "one cell per column",
)
def _(d):
    sub(d, "footings.csv", "650,230,true", "650,230,true,extra")


@case(
    "footing_duplicate_across_files",
    "the same id in two footing files",
    "extra.csv",
    r'"C1" is also used in footings.csv',
    "",
)
def _(d):
    toml_sub(d, 'file = "footings.csv"', 'file = ["footings.csv", "extra.csv"]')
    (d / "extra.csv").write_text(
        "id,x [m],y [m],width [m],depth [m],dead_load [kN]\nC1,30,30,1.5,1.0,300\n",
        encoding="utf-8",
    )


@case(
    "footing_far_coordinate",
    "a coordinate of 1e300 m (the area of a 1.8 m pad is lost)",
    'footings.csv row 4, column "x [m]"',
    r"beyond",
    "plan coordinates in metres",
)
def _(d):
    sub(d, "footings.csv", "C1,rectangle,0,0,", "C1,rectangle,1e300,0,")


@case(
    "bh_far_coordinate",
    "a borehole 1e12 m away (a unit or column mix-up)",
    'boreholes.csv row 7, column "y [m]"',
    r"beyond",
    "plan coordinates in metres",
)
def _(d):
    sub(d, "boreholes.csv", "BH2,24,2,", "BH2,24,1e12,", count=4)


# ------------------------------------------------------------------ GIS footings
def _gis(d, polygons, crs="EPSG:32633", toml_crs=None):
    footing_geojson(d, "plan.geojson", polygons, crs=crs)
    (d / "footings.csv").unlink()
    toml_sub(d, 'file = "footings.csv"', 'file = "plan.geojson"')
    if toml_crs:
        toml_sub(d, '# crs = "EPSG:32633"', f'crs = "{toml_crs}"')


def _box(x, y, b=2.0):
    from shapely.geometry import box

    return box(x, y, x + b, y + b)


@case(
    "gis_self_intersecting",
    "a bow-tie polygon",
    "plan.geojson feature 2",
    r"invalid.*(Self-intersection|self)",
    "edges do not cross",
)
def _(d):
    from shapely.geometry import Polygon

    _gis(d, [_box(0, 0), Polygon([(6, 0), (8, 2), (8, 0), (6, 2)])])


@case(
    "gis_multi_part",
    "a feature of two polygons",
    "plan.geojson feature 1",
    r"2 parts",
    "one polygon per footing",
)
def _(d):
    from shapely.geometry import MultiPolygon

    _gis(d, [MultiPolygon([_box(0, 0), _box(5, 0)]), _box(0, 6)])


@case(
    "gis_empty_geometry",
    "a feature without a geometry",
    "plan.geojson feature 2",
    r"empty",
    "polygon",
)
def _(d):
    _gis(d, [_box(0, 0), None])


@case(
    "gis_degenerate",
    "a polygon without area (all corners on a line)",
    "plan.geojson feature 1",
    r"no area|invalid",
    "",
)
def _(d):
    from shapely.geometry import Polygon

    _gis(d, [Polygon([(0, 0), (2, 0), (4, 0), (1, 0)]), _box(0, 6)])


@case("gis_hole", "a polygon with a hole", "plan.geojson feature 1", r"hole", "without holes")
def _(d):
    from shapely.geometry import Polygon

    _gis(d, [Polygon([(0, 0), (6, 0), (6, 6), (0, 6)], [[(2, 2), (4, 2), (4, 4), (2, 4)]])])


@case("gis_point", "a point instead of a polygon", "plan.geojson feature 1", r"Point", "polygon")
def _(d):
    from shapely.geometry import Point

    _gis(d, [Point(1, 1), _box(0, 6)])


@case(
    "gis_overlap",
    "two overlapping polygons",
    "plan.geojson feature 2",
    r'overlaps footing "G1"',
    "do not overlap",
)
def _(d):
    _gis(d, [_box(0, 0), _box(1, 1)])


@case(
    "gis_latlon",
    "a GIS file in latitude/longitude",
    "plan.geojson",
    r"degree",
    "projected system in metres",
)
def _(d):
    _gis(d, [_box(0, 0, 0.0001)], crs="EPSG:4326")


@case(
    "gis_folder",
    "the footings file is a folder without GIS data",
    "plan:",
    r"no geometry|not a file|cannot read",
    "",
)
def _(d):
    (d / "plan").mkdir()
    (d / "plan" / "README.txt").write_text("not a footing plan\n", encoding="utf-8")
    (d / "footings.csv").unlink()
    toml_sub(d, 'file = "footings.csv"', 'file = "plan"')


@case(
    "gis_crs_vs_project",
    "[project] crs differs from the GIS file's",
    "[project], key 'crs'",
    r"EPSG:32634 differs from the coordinate system of plan.geojson",
    "the same coordinate",
)
def _(d):
    _gis(d, [_box(0, 0)], toml_crs="EPSG:32634")


@case(
    "gis_crs_between_files",
    "two GIS footing files in different coordinate systems",
    "raft_b.geojson",
    r"differs from the coordinate system of raft_b.geojson",
    "same coordinate",
)
def _(d):
    footing_geojson(d, "raft_a.geojson", [_box(20, 8)], crs="EPSG:32633", ids=["RA"])
    footing_geojson(d, "raft_b.geojson", [_box(20, 12)], crs="EPSG:32634", ids=["RB"])
    toml_sub(
        d, 'file = "footings.csv"', 'file = ["footings.csv", "raft_a.geojson", "raft_b.geojson"]'
    )


# ------------------------------------------------------------------ boreholes
@case(
    "bh_unknown_stratum",
    "a stratum not in [[strata]]",
    'boreholes.csv row 4, column "stratum"',
    r'unknown stratum "snad"; did you mean "sand"',
    "",
)
def _(d):
    sub(d, "boreholes.csv", "BH1,-3,-3,sand,", "BH1,-3,-3,snad,")


@case(
    "bh_out_of_order",
    "clay logged above sand",
    "boreholes.csv",
    r'"sand" lies below "clay"|order',
    "",
)
def _(d):
    sub(
        d,
        "boreholes.csv",
        "BH2,24,2,sand,0.8,7.2,,22\nBH2,24,2,clay,7.2,11.4,,",
        "BH2,24,2,clay,0.8,7.2,,\nBH2,24,2,sand,7.2,11.4,,22",
    )


@case(
    "bh_gap",
    "a gap between two intervals",
    'boreholes.csv row 5, column "top [m]"',
    r"gap from 6 to 6.5 m",
    "",
)
def _(d):
    sub(d, "boreholes.csv", "BH1,-3,-3,clay,6.0,", "BH1,-3,-3,clay,6.5,")


@case(
    "bh_overlap",
    "two intervals that overlap",
    'boreholes.csv row 9, column "top [m]"',
    r"overlaps",
    "",
)
def _(d):
    sub(d, "boreholes.csv", "BH2,24,2,clay,7.2,", "BH2,24,2,clay,6.5,")


@case(
    "bh_bottom_above_top",
    "an interval whose bottom is above its top",
    'boreholes.csv row 11, column "bottom [m]"',
    r"not below the top",
    "",
)
def _(d):
    sub(d, "boreholes.csv", "BH3,-2,13,made ground,0,1.5,", "BH3,-2,13,made ground,0,-1.5,")


@case(
    "bh_not_from_surface",
    "a borehole whose first interval starts at 0.5 m",
    'boreholes.csv row 11, column "top [m]"',
    r'"BH3" starts at 0.5 m',
    "",
)
def _(d):
    sub(d, "boreholes.csv", "BH3,-2,13,made ground,0,", "BH3,-2,13,made ground,0.5,")


@case(
    "bh_missing_column",
    "the stratum column is missing",
    "boreholes.csv",
    r'"stratum" is missing',
    "",
)
def _(d):
    drop_column(d, "boreholes.csv", "stratum")


@case(
    "bh_two_positions",
    "a borehole with two positions",
    'boreholes.csv row 4, column "x [m]"',
    r"BH1.*-3.*-2|x = ",
    "",
)
def _(d):
    sub(d, "boreholes.csv", "BH1,-3,-3,sand,", "BH1,-2,-3,sand,")


@case(
    "bh_missing_file",
    "the boreholes file does not exist",
    "[boreholes], key 'file'",
    r'"bh.csv" does not exist',
    "",
)
def _(d):
    toml_sub(d, 'file = "boreholes.csv"', 'file = "bh.csv"')
    (d / "boreholes.csv").unlink()


# ------------------------------------------------------------------ soundings
@case(
    "cpt_depth_not_increasing",
    "a sounding whose depth goes back up",
    'soundings.csv row 8, column "depth [m]"',
    r"does not increase",
    "",
)
def _(d):
    sub(d, "soundings.csv", "CPT1,3,3.5,1.2,8.65", "CPT1,3,3.5,0.9,8.65")


@case(
    "cpt_negative_qc",
    "a negative cone resistance",
    'soundings.csv row 4, column "qc [MPa]"',
    r"not positive",
    "",
)
def _(d):
    sub(d, "soundings.csv", "CPT1,3,3.5,0.4,2.70", "CPT1,3,3.5,0.4,-2.70")


# ------------------------------------------------------------------ results folder
@case(
    "out_is_a_file",
    "the results path is an existing file",
    "results",
    r"existing file, not a folder",
    "",
)
def _(d):
    (d / "results").write_text("a file where the results folder should go\n", encoding="utf-8")


@case(
    "out_parent_is_a_file",
    "the results path lies below a regular file",
    "blocker",
    r"is a file, not a folder",
    "",
    args=["--out", "{case}/blocker/results"],
)
def _(d):
    (d / "blocker").write_text("a regular file\n", encoding="utf-8")


@case(
    "out_foreign_folder",
    "the results path is a folder that sitesettle did not write",
    "results",
    r"not written by\s+sitesettle",
    "",
)
def _(d):
    (d / "results").mkdir()
    (d / "results" / "thesis.txt").write_text("someone's own work\n", encoding="utf-8")


@case(
    "out_kept_on_bad_input",
    "an input error with an earlier results folder in place",
    "site.toml",
    r"not valid TOML",
    "",
)
def _(d):
    toml_sub(d, "[analysis]", "[analysis")
    (d / "results").mkdir()
    (d / "results" / "summary.json").write_text(
        json.dumps({"program": "sitesettle", "note": "earlier run"}) + "\n", encoding="utf-8"
    )


# ------------------------------------------------------- documented ranges (issue 15)
@case(
    "toml_tiny_sublayer",
    "sublayer_fraction = 1e-4: sublayers thinner than the 1 mm the integration drops",
    "key 'sublayer_fraction'",
    r"0\.0001 is out of range",
    "≥ 0.01",
)
def _(d):
    toml_sub(d, "sublayer_fraction = 0.1", "sublayer_fraction = 1e-4")


@case(
    "toml_huge_design_life",
    "design_life = 1e300 years (overflows the time factors)",
    "key 'design_life'",
    r"1e\+300 yr is out of range",
    "≤ 1000 yr",
)
def _(d):
    toml_sub(d, 'design_life = "50 yr"', "design_life = 1e300")


@case(
    "toml_huge_report_time",
    "a report time of 5,000 years",
    "key 'report_times' item 2",
    r"longer than 1000 yr",
    "up to 1000 yr",
)
def _(d):
    sub(d, "site.toml", "report_times = [", 'report_times = ["1 yr", "5000 yr", ')


@case(
    "toml_shallow_integration",
    "max_depth_widths = 0.001: the integration would end just under the base",
    "key 'max_depth_widths'",
    r"out of range",
    "≥ 1",
)
def _(d):
    toml_sub(d, 'depth_rule = "complete" ', 'depth_rule = "complete"\nmax_depth_widths = 0.001 ')


@case(
    "toml_deep_nesting",
    "a 3,000-deep nested array (a recursion error in the TOML reader)",
    "site.toml",
    r"nested too deeply",
    "flat tables",
)
def _(d):
    path = d / "site.toml"
    path.write_text(
        path.read_text(encoding="utf-8") + "deep = " + "[" * 3000 + "]" * 3000 + "\n",
        encoding="utf-8",
    )


@case(
    "toml_name_too_long",
    "a 10,000-character project name",
    "[project], key 'name'",
    r"10000 characters",
    "at most 1000",
)
def _(d):
    toml_sub(d, 'name = "Workshop, Unit 4"', 'name = "' + "W" * 10000 + '"')


@case(
    "footing_one_millimetre",
    "a 1 mm footing (it gave 0 mm and lost its neighbours' stress)",
    'footings.csv row 4, column "width [m]"',
    r"0\.001 m is outside 0\.2–200 m",
    "between 0.2 m and 200 m",
)
def _(d):
    sub(d, "footings.csv", "C1,rectangle,0,0,1.8,1.8,", "C1,rectangle,0,0,0.001,0.001,")


@case(
    "footing_too_large",
    "a 500 m footing",
    'footings.csv row 5, column "width [m]"',
    r"500 m is outside",
    "between 0.2 m and 200 m",
)
def _(d):
    sub(d, "footings.csv", "C2,rectangle,6,0,2.2,2.2,", "C2,rectangle,6,0,500,500,")


@case(
    "footing_below_boreholes",
    "a base at 14 m, below the deepest borehole (13 m): it gave 0 mm, method none",
    'footing "C4"',
    r"base depth 14 m is at or below the bottom of every borehole",
    "a base above the investigated depth",
)
def _(d):
    sub(d, "footings.csv", "C4,rectangle,6,7,2.2,2.4,90,1.2,", "C4,rectangle,6,7,2.2,2.4,90,14,")


@case(
    "footing_below_nearest_borehole",
    "a base at 11.2 m: below the nearest borehole (BH3, 11 m) but above BH1 and BH2",
    'footing "C3"',
    r"below the bottom of the\s+nearest borehole \"BH3\"",
    "",
    warning=True,
)
def _(d):
    sub(d, "footings.csv", "C3,rectangle,0,7,1.8,1.8,0,1.0,", "C3,rectangle,0,7,1.8,1.8,0,11.2,")
    toml_sub(d, 'map_spacing = "0 m"', 'map_spacing = "3 m"')


@case(
    "footing_on_rigid_base",
    "a base at 10 m, inside the rigid mudstone at BH3 (top 9.8 m): zero own settlement",
    'footing "C3"',
    r'in the rigid stratum "mudstone"',
    "",
    warning=True,
)
def _(d):
    sub(d, "footings.csv", "C3,rectangle,0,7,1.8,1.8,0,1.0,", "C3,rectangle,0,7,1.8,1.8,0,10,")
    toml_sub(d, 'map_spacing = "0 m"', 'map_spacing = "3 m"')


# ------------------------------------------------------- hostile text (issue 15)
def set_id(d, old: str, new: str) -> None:
    """Give footing ``old`` the id ``new``, in quotes (a quoted cell may hold anything)."""
    quoted = '"' + new.replace('"', '""') + '"'
    sub(d, "footings.csv", f"\n{old},", f"\n{quoted},")


for _name, _id, _what in (
    ("text_formula_equals", '=HYPERLINK("http://example.invalid","C1")', "="),
    ("text_formula_plus", "+cmd|' /C calc'!A0", "+"),
    ("text_formula_at", "@SUM(1+1)", "@"),
    ("text_formula_minus", "-2+3", "-"),
):
    case(
        _name,
        f"a footing id beginning with {_what} (a spreadsheet formula)",
        'footings.csv row 4, column "id"',
        r"begins with \"" + ("\\" if _what == "+" else "") + _what + r"\".*formula",
        "an id beginning with a letter",
    )(lambda d, _id=_id: set_id(d, "C1", _id))

R6 = 'footings.csv row 7, column "id"'
for _name, _id, _code, _where in (
    ("text_zero_width_space", "C\u200b4", "U\\+200B", R6),
    ("text_bidi_override", "C\u202e4", "U\\+202E", R6),
    # a quoted line break: the csv module numbers the row by its last line
    ("text_line_break", "C4\nPASS", "U\\+000A", 'column "id"'),
    ("text_ansi_escape", "C4\x1b[32m", "U\\+001B", R6),
):
    case(
        _name,
        "an invisible or control character in a footing id",
        _where,
        r"invisible or control character " + _code,
        "visible characters",
    )(lambda d, _id=_id: set_id(d, "C4", _id))


@case(
    "text_nfc_duplicate",
    "two footing ids that differ only in Unicode normal form (é as one or two code points)",
    "footings.csv row 5",
    r'the footing id "Caf\u00e9" is used again \(first at row 4\)',
    "a unique id",
)
def _(d):
    set_id(d, "C1", "Caf\u00e9")
    set_id(d, "C2", "Cafe\u0301")


@case(
    "text_id_too_long",
    "a 10,000-character footing id",
    'footings.csv row 4, column "id"',
    r"10000 characters",
    "at most 100 characters",
)
def _(d):
    set_id(d, "C1", "C" * 10000)


@case(
    "text_borehole_id_control",
    "an ANSI escape in a borehole id",
    'boreholes.csv row 3, column "borehole"',
    r"borehole id .*U\+001B",
    "visible characters",
)
def _(d):
    sub(d, "boreholes.csv", "\nBH1,", "\nBH1\x1b[2J,", count=1)


@case(
    "text_stratum_bidi",
    "a bidi isolate in a stratum name",
    "key 'name'",
    r"stratum name .*U\+2066",
    "visible characters",
)
def _(d):
    toml_sub(d, 'name = "sand"', 'name = "sa\u2066nd"')


# ------------------------------------------------------- input files (issue 15)
@case(
    "file_gdal_virtual_dataset",
    "a .geojson that is a GDAL virtual dataset pointing at a URL (it sent an HTTP request)",
    "raft.geojson",
    r"is not GeoJSON.*virtual datasets",
    "GeoJSON file",
)
def _(d):
    (d / "raft.geojson").write_text(
        "<OGRVRTDataSource><OGRVRTLayer name=\"raft\">"
        "<SrcDataSource>/vsicurl/http://127.0.0.1:9/raft.geojson</SrcDataSource>"
        "</OGRVRTLayer></OGRVRTDataSource>\n",
        encoding="utf-8",
    )
    toml_sub(d, 'file = "footings.csv"', 'file = ["footings.csv", "raft.geojson"]')


@case(
    "file_gdal_prefix",
    "a footings file named with a GDAL virtual-file prefix",
    "[footings], key 'file'",
    r"GDAL virtual file system",
    "a path to a file on this computer",
)
def _(d):
    toml_sub(d, 'file = "footings.csv"', 'file = "/vsicurl/http://127.0.0.1:9/raft.geojson"')


@case(
    "file_folder_as_table",
    "the boreholes file is a folder",
    "boreholes.csv",
    r"is a folder, not a file",
    "a regular file",
)
def _(d):
    (d / "boreholes.csv").unlink()
    (d / "boreholes.csv").mkdir()
    (d / "boreholes.csv" / "keep.txt").write_text("a folder, not a table\n", encoding="utf-8")


@case(
    "file_zip_with_vrt",
    "a zipped 'shapefile' holding a GDAL virtual dataset",
    "raft.zip",
    r"holds 'raft\.vrt'",
    "a zipped shapefile",
)
def _(d):
    import zipfile

    with zipfile.ZipFile(d / "raft.zip", "w") as zf:
        zf.writestr("raft.vrt", "<OGRVRTDataSource/>")
    toml_sub(d, 'file = "footings.csv"', 'file = ["footings.csv", "raft.zip"]')


# ------------------------------------------- delivered formats (AGS4, GEF, xlsx, DXF)
def _formats():
    import sys

    sys.path.insert(0, str(HERE.parent))
    try:
        import _formats
    finally:
        sys.path.remove(str(HERE.parent))
    return _formats


#: GEOL legend codes of the starter's strata
STARTER_CODES = {"made ground": "MG", "sand": "SA", "clay": "CL", "mudstone": "MS"}


def starter_ags(folder, **kw):
    """The starter's boreholes as investigation.ags (python-ags4), named in site.toml."""
    import csv

    rows = [
        r
        for r in csv.reader((folder / "boreholes.csv").read_text(encoding="utf-8").splitlines())
        if r and not r[0].startswith("#")
    ][1:]
    locations, seen, geol = [], set(), []
    for r in rows:
        if r[0] not in seen:
            seen.add(r[0])
            locations.append((r[0], "CP", float(r[1]), float(r[2])))
        geol.append((r[0], float(r[4]), float(r[5]), f"{r[3]} as logged", STARTER_CODES[r[3]]))
    _formats().write_ags(folder / "investigation.ags", locations, geol, **kw)
    legend = ", ".join(f'{c} = "{n}"' for n, c in STARTER_CODES.items())
    toml_sub(
        folder,
        'file = "boreholes.csv"',
        f'file = "investigation.ags"\nlegend = {{ {legend} }}',
    )


@case(
    "ags_missing_unit_line",
    "an AGS4 file whose GEOL group has no UNIT line",
    "investigation.ags line",
    r"AGS4 checker finds: AGS Format Rule .*UNIT",
    "passes the AGS4 checker",
)
def _(d):
    starter_ags(d, drop_unit="GEOL")


@case(
    "ags_unknown_heading",
    "an AGS4 file with a heading that is not in the AGS4 dictionary",
    "group GEOL",
    r"AGS4 checker finds: .*GEOL_WOBBLE",
    "passes the AGS4 checker",
)
def _(d):
    starter_ags(d, extra_heading="GEOL_WOBBLE")


@case(
    "ags_unmapped_stratum",
    "a GEOL legend code that the [boreholes] legend does not map",
    'investigation.ags group GEOL line 27, column "GEOL_DESC"',
    r"no stratum for legend code 'CL'",
    "legend or description table",
)
def _(d):
    starter_ags(d)
    toml_sub(d, ', CL = "clay"', "")


@case(
    "ags_legend_unknown_stratum",
    "the [boreholes] legend maps a code onto a stratum that does not exist",
    "site.toml [boreholes], key 'legend', entry 'CL'",
    r"'peat' is not a stratum",
    r"one of the \[\[strata\]\] names",
)
def _(d):
    starter_ags(d)
    toml_sub(d, 'CL = "clay"', 'CL = "peat"')


@case(
    "ags_csv_renamed",
    "a CSV file named .ags",
    "boreholes.ags",
    r"not an AGS4 file",
    '"GROUP" line',
)
def _(d):
    (d / "boreholes.csv").rename(d / "boreholes.ags")
    toml_sub(d, 'file = "boreholes.csv"', 'file = "boreholes.ags"')


def starter_gef(folder, name="CPT1.gef"):
    import csv

    rows = [
        r
        for r in csv.reader((folder / "soundings.csv").read_text(encoding="utf-8").splitlines())
        if r and not r[0].startswith("#")
    ][1:]
    cpt = [r for r in rows if r[0] == "CPT1"]
    _formats().write_gef(
        folder / name,
        "CPT1",
        float(cpt[0][1]),
        float(cpt[0][2]),
        [(float(r[3]), float(r[4]), float(r[5])) for r in cpt],
    )
    toml_sub(folder, 'file = "soundings.csv"', f'file = "{name}"')
    return folder / name


@case(
    "gef_no_cone_resistance",
    "a GEF file without a column of cone resistance (quantity 2)",
    "CPT1.gef",
    r"no column of cone resistance",
    "#COLUMNINFO lines for quantities 1 and 2",
)
def _(d):
    path = starter_gef(d)
    sub(d, path.name, "2, MPa, cone resistance, 2", "2, MPa, cone resistance, 9")


@case(
    "gef_negative_qc",
    "a GEF reading with a negative cone resistance",
    "CPT1.gef reading 3",
    r"cone resistance .* is not positive",
    "qc > 0",
)
def _(d):
    path = starter_gef(d)
    lines = path.read_text(encoding="ascii").splitlines()
    k = lines.index("#EOH=") + 3
    z, q, f = lines[k].split()
    lines[k] = f"{z} -{q} {f}"
    path.write_text("\n".join(lines) + "\n", encoding="ascii")


@case(
    "gef_csv_renamed",
    "a CSV file named .gef",
    "soundings.gef",
    r"not a GEF file",
    "#GEFID",
)
def _(d):
    (d / "soundings.csv").rename(d / "soundings.gef")
    toml_sub(d, 'file = "soundings.csv"', 'file = "soundings.gef"')


def starter_xlsx(folder, sheet="Footings"):
    text = (folder / "footings.csv").read_text(encoding="utf-8")
    (folder / "footings.csv").unlink()
    path = _formats().csv_to_xlsx(text, folder / "footings.xlsx", sheet=sheet)
    toml_sub(folder, 'file = "footings.csv"', f'file = "footings.xlsx"\nsheet = "{sheet}"')
    return path


@case(
    "xlsx_merged_header",
    "an .xlsx schedule whose header cells are merged",
    'footings.xlsx sheet "Footings" row 3',
    r"header cells E3:F3 are merged",
    "one header cell per column",
)
def _(d):
    import openpyxl

    path = starter_xlsx(d)
    book = openpyxl.load_workbook(path)
    book["Footings"].merge_cells("E3:F3")
    book.save(path)


@case(
    "xlsx_text_in_number",
    "a word in a number cell of an .xlsx schedule",
    'footings.xlsx sheet "Footings" row 5, column "width [m]"',
    r"wide",
)
def _(d):
    import openpyxl

    path = starter_xlsx(d)
    book = openpyxl.load_workbook(path)
    book["Footings"]["E5"] = "wide"
    book.save(path)


@case(
    "xlsx_unknown_sheet",
    "site.toml names a sheet the workbook does not have",
    "footings.xlsx",
    r"no sheet 'Loads'",
    "one of its sheets: 'Footings'",
)
def _(d):
    starter_xlsx(d)
    toml_sub(d, 'sheet = "Footings"', 'sheet = "Loads"')


@case(
    "xlsx_csv_renamed",
    "a CSV file named .xlsx",
    "footings.xlsx",
    r"not an \.xlsx workbook",
    "saved as .xlsx",
)
def _(d):
    (d / "footings.csv").rename(d / "footings.xlsx")
    toml_sub(d, 'file = "footings.csv"', 'file = "footings.xlsx"')


def plan_dxf(folder, polylines, texts):
    """A DXF plan: closed polylines (or open, given as (points, False)) and id texts."""
    import ezdxf

    doc = ezdxf.new("R2013")
    msp = doc.modelspace()
    for pts, closed in polylines:
        msp.add_lwpolyline(pts, close=closed, dxfattribs={"layer": "FOOTINGS"})
    for text, xy in texts:
        msp.add_text(text, dxfattribs={"layer": "FOOTINGS", "insert": xy})
    doc.saveas(folder / "raft.dxf")
    toml_sub(folder, 'file = "footings.csv"', 'file = ["footings.csv", "raft.dxf"]')


@case(
    "dxf_open_polyline",
    "an open polyline on the footings layer of a DXF plan",
    "raft.dxf polyline #",
    r"the polyline is open",
    "closed polylines and circles",
)
def _(d):
    plan_dxf(d, [([(30, 0), (36, 0), (36, 5)], False)], [("R1", (33, 2))])


@case(
    "dxf_outline_without_id",
    "a DXF outline with no id text nearest to it",
    "raft.dxf polyline #",
    r"no text or block .* nearer to this outline",
    "one id text or block",
)
def _(d):
    square = [(30, 0), (36, 0), (36, 6), (30, 6)]
    other = [(40, 0), (46, 0), (46, 6), (40, 6)]
    plan_dxf(d, [(square, True), (other, True)], [("R1", (33, 3))])


@case(
    "dxf_csv_renamed",
    "a CSV file named .dxf",
    "plan.dxf",
    r"not a DXF drawing",
    "a DXF file",
)
def _(d):
    (d / "plan.dxf").write_text("id,x,y\nR1,1,2\n", encoding="utf-8")
    toml_sub(d, 'file = "footings.csv"', 'file = ["footings.csv", "plan.dxf"]')


def materialise(names=None) -> list[pathlib.Path]:
    """Write the case folders (all, or the named ones); return their paths."""
    out = []
    for name, spec in CASES.items():
        if names and name not in names:
            continue
        folder = HERE / name
        if folder.exists():
            shutil.rmtree(folder)
        shutil.copytree(STARTER, folder)
        spec["patch"](folder)
        meta = {k: v for k, v in spec.items() if k != "patch" and v not in ("", None)}
        lines = [f"# {name}: a broken project for tests/test_corpus.py (written by make_corpus.py)"]
        for key, value in meta.items():
            lines.append(f"{key} = {json.dumps(value, ensure_ascii=False)}")
        (folder / "case.toml").write_text("\n".join(lines) + "\n", encoding="utf-8")
        out.append(folder)
    return out


if __name__ == "__main__":
    written = materialise()
    print(f"{len(written)} cases written under {HERE}")
