"""Project folders: site.toml keys, strata, boreholes, soundings, pairs and their messages."""

import pathlib
import shutil

import geopandas as gpd
import numpy as np
import pytest
from shapely.geometry import box

import sitesettle
from sitesettle.errors import InputError, InputWarning
from sitesettle.ground import Ground
from sitesettle.io.investigation import parse_boreholes, parse_soundings
from sitesettle.io.project import load_site, parse_analysis, parse_checks, parse_toml
from sitesettle.io.strata import parse_strata
from sitesettle.options import Behaviour, Drainage, EndOfPrimary, GranularMethod

SITE = """
[project]
name = "Test yard"
client = "Nobody"
output_units = "us"

[groundwater]
depth = "2 m"

[footings]
file = "footings.csv"
depth = "1 m"

[boreholes]
file = "boreholes.csv"

[[strata]]
name = "sand"
behaviour = "granular"
youngs_modulus = "20 MPa"

[[strata]]
name = "clay"
behaviour = "cohesive"
compression_index = 0.3
recompression_index = 0.05
void_ratio = 0.9
ocr = 1.5
consolidation_coefficient = "2 m^2/yr"

[[strata]]
name = "rock"
behaviour = "rigid"
"""
FOOTINGS = "id,x,y,width,dead_load\nA,0,0,2,600\nB,6,0,2,600\n"
BOREHOLES = """borehole,x,y,stratum,top,bottom
BH1,0,0,sand,0,4
BH1,0,0,clay,4,9
BH1,0,0,rock,9,10
"""


def write_project(
    folder: pathlib.Path, files: dict[str, str | bytes] | None = None, **replace
) -> pathlib.Path:
    """Write a project folder from strings; ``files`` adds or replaces files (None deletes)."""
    content = {
        "site.toml": SITE,
        "footings.csv": FOOTINGS,
        "boreholes.csv": BOREHOLES,
        **(files or {}),
    }
    folder.mkdir(parents=True, exist_ok=True)
    for name, text in content.items():
        if text is None:
            continue
        path = folder / name
        if isinstance(text, bytes):
            path.write_bytes(text)
        else:
            path.write_text(text, encoding="utf-8")
    return folder


def test_load_site_maps_every_table(tmp_path):
    site = sitesettle.load_site(write_project(tmp_path))
    assert site.name == "Test yard" and site.info == {"client": "Nobody"} and site.units == "us"
    assert site.water_depth == 2.0 and site.crs is None
    assert [s.name for s in site.strata] == ["sand", "clay", "rock"]
    assert site.strata[2].behaviour == Behaviour.RIGID
    assert [f.id for f in site.footings] == ["A", "B"] and site.footings[0].depth == 1.0
    assert site.boreholes[0].intervals[1].stratum == "clay"


def test_load_site_accepts_the_toml_path(tmp_path):
    write_project(tmp_path)
    assert load_site(tmp_path / "site.toml").name == "Test yard"


def test_analysis_and_checks_keys():
    a = parse_analysis(
        {
            "granular_method": "Burland-Burbidge",
            "report_times": ["10 yr", "6 months"],
            "design_life": "100 yr",
            "influence_fraction": 0.2,
            "map_spacing": "10 ft",
            "end_of_primary": "given",
            "time_factor_r3": 0.7,
            "cohesive_immediate": "no",
        }
    )
    assert a.granular_method == GranularMethod.BURLAND_BURBIDGE
    assert a.report_times == (0.5, 10.0) and a.design_life == 100.0 and a.bb_r3 == 0.7
    assert a.map_spacing == pytest.approx(3.048, rel=1e-12)  # 10 ft, NIST SP 811 exact foot
    assert a.end_of_primary == EndOfPrimary.GIVEN and a.cohesive_immediate is False
    c = parse_checks(
        {
            "criteria": "Bjerrum No-Cracking",
            "overrides": {"total": "1 in", "angular_distortion": "1/500"},
            "checked_after": "1 month",
            "pairs": "listed",
        }
    )
    assert c.criteria == "bjerrum_no_cracking" and c.pairs == "listed"
    assert c.overrides == pytest.approx({"total": 0.0254, "angular_distortion": 0.002})
    assert c.checked_after == pytest.approx(1 / 12)


def test_stratum_keys_and_units():
    (s,) = parse_strata(
        [
            {
                "name": "clay",
                "behaviour": "cohesive",
                "unit_weight": "110 pcf",
                "saturated_unit_weight": "115 pcf",
                "compression_index": 0.3,
                "recompression_index": 0.04,
                "void_ratio": 1.0,
                "preconsolidation": "2 ksf",
                "consolidation_coefficient": "0.05 ft^2/day",
                "drainage": "top",
                "poisson_ratio": 0.4,
                "secondary_index": 0.01,
            }
        ]
    )
    assert s.drainage == Drainage.TOP and s.poisson == 0.4
    assert s.preconsolidation == pytest.approx(2 * 4448.2216152605 / 0.3048**2 / 1000, rel=1e-12)
    assert s.consolidation_coefficient == pytest.approx(0.05 * 0.3048**2 * 365.25, rel=1e-12)


def test_from_soundings_marks_the_stratum():
    (s,) = parse_strata(
        [{"name": "sand", "behaviour": "granular", "cone_resistance": "From Soundings"}]
    )
    assert s.use_soundings and s.cone_resistance is None


# --------------------------------------------------------------------------- TOML errors
def test_toml_syntax_error_names_the_line(tmp_path):
    write_project(tmp_path, {"site.toml": SITE.replace('depth = "2 m"', "depth = 2 m")})
    with pytest.raises(InputError, match=r"site.toml: not valid TOML: .*line 8"):
        load_site(tmp_path)


def test_not_utf8_names_the_line(tmp_path):
    write_project(
        tmp_path, {"footings.csv": (FOOTINGS + "C,12,0,2,600 # caf\xe9\n").encode("latin-1")}
    )
    with pytest.raises(InputError, match="footings.csv line 4: the file is not UTF-8 text"):
        load_site(tmp_path)


def test_utf8_with_byte_order_mark_is_fine(tmp_path):
    write_project(tmp_path, {"footings.csv": "\ufeff" + FOOTINGS})
    assert len(load_site(tmp_path).footings) == 2


def test_missing_referenced_file(tmp_path):
    write_project(tmp_path)
    (tmp_path / "boreholes.csv").unlink()
    with pytest.raises(
        InputError,
        match=r"site.toml \[boreholes\], key 'file': the file \"boreholes.csv\" does not exist",
    ):
        load_site(tmp_path)


def test_missing_project_file(tmp_path):
    with pytest.raises(InputError, match="no project file here"):
        load_site(tmp_path)


@pytest.mark.parametrize(
    "line, match",
    [
        ("sustained_live_fraction = 30", r"key 'sustained_live_fraction': 30 is out of range"),
        ('depth = "-1 m"', r"key 'depth': -1 is out of range"),
        ('fill_unit_weight = "-5 kN/m^3"', r"key 'fill_unit_weight': -5 is out of range"),
    ],
)
def test_footing_defaults_are_checked_where_they_are_written(tmp_path, line, match):
    # a default out of range is reported at its key in site.toml, not at the first
    # row of footings.csv that takes it (which has no such column)
    text = SITE.replace('depth = "1 m"\n', "") if line.startswith("depth") else SITE
    text = text.replace('file = "footings.csv"\n', f'file = "footings.csv"\n{line}\n', 1)
    write_project(tmp_path, {"site.toml": text})
    with pytest.raises(InputError, match=r"site\.toml \[footings\], " + match):
        load_site(tmp_path)


@pytest.mark.parametrize(
    "old, new, match",
    [
        ("[analysis]", "", None),
        (
            "[groundwater]",
            "[groundwatr]",
            r'site.toml, \[groundwatr\]: unknown table .*did you mean "groundwater"',
        ),
        (
            'client = "Nobody"',
            'cliant = "Nobody"',
            r"site.toml \[project\], key 'cliant': unknown key; did you mean \"client\"",
        ),
        (
            'youngs_modulus = "20 MPa"',
            'youngs_modulos = "20 MPa"',
            r"1 \('sand'\), key 'youngs_modulos': unknown key; did you mean \"youngs_modulus\"",
        ),
        (
            'behaviour = "granular"',
            'behaviour = "sandy"',
            r"1 \('sand'\), key 'behaviour': unknown value \"sandy\"; expected one of \"granular\"",
        ),
        (
            'output_units = "us"',
            'output_units = "imperial"',
            r"key 'output_units': unknown value \"imperial\"",
        ),
    ],
)
def test_unknown_keys_and_values(tmp_path, old, new, match):
    if match is None:
        return
    write_project(tmp_path, {"site.toml": SITE.replace(old, new)})
    with pytest.raises(InputError, match=match):
        load_site(tmp_path)


def test_unknown_analysis_key_suggests_the_nearest():
    with pytest.raises(
        InputError,
        match=r"\[analysis\], key 'design_lfe': unknown key; did you mean \"design_life\"",
    ):
        parse_toml('[analysis]\ndesign_lfe = "50 yr"\n')


def test_unknown_criteria_set_and_measure():
    with pytest.raises(
        InputError, match=r"key 'criteria': unknown criteria set \"eurocod7\"; did you mean"
    ):
        parse_checks({"criteria": "eurocod7"})
    with pytest.raises(
        InputError, match=r"overrides key 'totl': unknown measure; did you mean \"total\""
    ):
        parse_checks({"overrides": {"totl": "25 mm"}})
    with pytest.raises(InputError, match=r"overrides key 'total': \"1/500\" .*expected a length"):
        parse_checks({"overrides": {"total": "1/500"}})


def test_wrong_dimension_in_a_key():
    with pytest.raises(
        InputError, match=r"\[analysis\], key 'design_life': \"50 m\" is a length; expected a time"
    ):
        parse_analysis({"design_life": "50 m"})


def test_out_of_range_settings():
    with pytest.raises(InputError, match=r"key 'influence_fraction': 1.5 is out of range"):
        parse_analysis({"influence_fraction": 1.5})
    with pytest.raises(
        InputError, match=r"key 'report_times' item 2: the time 0 yr is not positive"
    ):
        parse_analysis({"report_times": [1, 0]})


# --------------------------------------------------------------------------- strata errors
def test_missing_parameter_for_the_method(tmp_path):
    write_project(tmp_path, {"site.toml": SITE.replace('youngs_modulus = "20 MPa"', "")})
    with pytest.raises(
        InputError,
        match=r"\[\[strata\]\] 1 \('sand'\), key 'youngs_modulus': the schmertmann "
        r"method needs a modulus or a cone resistance",
    ):
        load_site(tmp_path)


def test_burland_burbidge_needs_spt_n_which_boreholes_may_give(tmp_path):
    site = SITE.replace(
        '[[strata]]\nname = "sand"',
        '[analysis]\ngranular_method = "burland_burbidge"\n\n[[strata]]\nname = "sand"',
        1,
    )
    write_project(tmp_path, {"site.toml": site})
    with pytest.raises(
        InputError, match=r"\('sand'\), key 'spt_n': Burland & Burbidge needs the SPT blow count"
    ):
        load_site(tmp_path)
    write_project(
        tmp_path,
        {
            "boreholes.csv": BOREHOLES.replace("top,bottom", "top,bottom,spt_n").replace(
                "sand,0,4", "sand,0,4,12"
            )
        },
    )
    s = load_site(tmp_path)
    assert s.boreholes[0].intervals[0].overrides == {"spt_n": 12.0}


def test_overconsolidated_clay_needs_cr(tmp_path):
    write_project(tmp_path, {"site.toml": SITE.replace("recompression_index = 0.05", "")})
    with pytest.raises(
        InputError, match=r"\('clay'\), key 'recompression_index': an overconsolidated clay"
    ):
        load_site(tmp_path)


def test_cohesive_needs_ocr_or_preconsolidation(tmp_path):
    write_project(tmp_path, {"site.toml": SITE.replace("ocr = 1.5", "")})
    with pytest.raises(
        InputError, match=r"\('clay'\), key 'ocr': neither preconsolidation nor ocr"
    ):
        load_site(tmp_path)


def test_from_soundings_without_soundings(tmp_path):
    write_project(
        tmp_path,
        {
            "site.toml": SITE.replace(
                'youngs_modulus = "20 MPa"', 'cone_resistance = "from soundings"'
            )
        },
    )
    with pytest.raises(
        InputError,
        match=r"\('sand'\), key 'cone_resistance': \"from soundings\" but the project has no",
    ):
        load_site(tmp_path)


@pytest.mark.parametrize(
    "tables, match",
    [
        (
            [{"name": "a", "behaviour": "rigid"}, {"name": "b", "behaviour": "granular"}],
            r"\[\[strata\]\] 1 \('a'\): a rigid stratum is not the last one",
        ),
        (
            [{"name": "a", "behaviour": "granular"}, {"name": "a", "behaviour": "granular"}],
            r'\[\[strata\]\] 2: the stratum name "a" is used twice',
        ),
        ([{"behaviour": "granular"}], r'\[\[strata\]\] 1: the key "name" is missing'),
        (
            [{"name": "a", "behaviour": "granular", "poisson_ratio": 0.5}],
            r"key 'poisson_ratio': 0.5 is out of range; expected a value ≥ 0 and < 0.5",
        ),
        ([{"name": "a", "behaviour": "cohesive", "ocr": 0.8}], r"key 'ocr': 0.8 is out of range"),
        (
            [{"name": "a", "behaviour": "cohesive", "method": "elastic"}],
            r"key 'method': a granular method on a cohesive",
        ),
        ([], r"no \[\[strata\]\] tables"),
    ],
)
def test_strata_list_rules(tables, match):
    with pytest.raises(InputError, match=match):
        parse_strata(tables)


# --------------------------------------------------------------------------- boreholes
STRATA = parse_strata(
    [
        {"name": "fill", "behaviour": "granular"},
        {"name": "sand", "behaviour": "granular"},
        {"name": "clay", "behaviour": "cohesive"},
    ]
)


def test_boreholes_long_form_with_units_overrides_and_water():
    text = """borehole,x [ft],y [ft],stratum,top [ft],bottom [ft],water_depth,spt_n
B1,0,0,fill,0,3,1.5 m,
B1,,,sand,3,10,,14
B1,,,clay,10,30,,
B2,100,0,sand,0,12,,
"""
    b1, b2 = parse_boreholes(text, STRATA)
    assert (b1.x, b1.y, b1.water_depth) == (0.0, 0.0, 1.5)
    assert [iv.stratum for iv in b1.intervals] == ["fill", "sand", "clay"]
    assert b1.intervals[1].top == pytest.approx(3 * 0.3048) and b1.intervals[1].overrides == {
        "spt_n": 14.0
    }
    assert b2.x == pytest.approx(30.48) and b2.water_depth is None


@pytest.mark.parametrize(
    "rows, match",
    [
        ("B1,0,0,silt,0,2\n", r'boreholes.csv row 2, column "stratum": unknown stratum "silt"'),
        ("B1,0,0,snad,0,2\n", r'unknown stratum "snad"; did you mean "sand"\?'),
        (
            "B1,0,0,fill,0,2\nB1,0,0,sand,1.5,4\n",
            r"row 3, column \"top\": in borehole \"B1\" the interval 1.5–4 m overlaps 0–2 m",
        ),
        (
            "B1,0,0,fill,0,2\nB1,0,0,sand,2.5,4\n",
            r'row 3, column "top": in borehole "B1" there is a gap from 2 to 2.5 m',
        ),
        (
            "B1,0,0,sand,0,2\nB1,0,0,fill,2,4\n",
            r'row 3, column "stratum": in borehole "B1" "fill" lies below "sand"',
        ),
        ("B1,0,0,fill,0.5,2\n", r'row 2, column "top": borehole "B1" starts at 0.5 m'),
        ("B1,0,0,fill,2,1\n", r'row 2, column "bottom": the bottom 1 m is not below the top 2 m'),
        (
            "B1,0,0,fill,0,2\nB1,5,0,sand,2,4\n",
            r'row 3, column "x": borehole "B1" has x = 0 m at row 2 but 5 m here',
        ),
        (
            "B1,0,0,fill,0,2\nB2,0,0,fill,0,2\n",
            r'row 3: borehole "B2" is at the same position as borehole "B1"',
        ),
        ("B1,0,0,fill,0,two\n", r'row 2, column "bottom": cannot read "two"'),
    ],
)
def test_borehole_rules(rows, match):
    with pytest.raises(InputError, match=match):
        parse_boreholes("borehole,x,y,stratum,top,bottom\n" + rows, STRATA)


def test_borehole_missing_column_and_unknown_column():
    with pytest.raises(InputError, match=r'boreholes.csv: the required column "bottom" is missing'):
        parse_boreholes("borehole,x,y,stratum,top\nB1,0,0,fill,0\n", STRATA)
    with pytest.raises(
        InputError,
        match=r'boreholes.csv column "spt": unknown column; did you mean "spt_n"',
    ):
        parse_boreholes("borehole,x,y,stratum,top,bottom,spt\nB1,0,0,fill,0,1,5\n", STRATA)


def test_borehole_interval_values_are_checked():
    # 250 kPa: inside the plausible range (100 kPa–5 GPa, common practice), outside the
    # usual one (0.5 MPa–2 GPa): a warning
    with pytest.warns(
        InputWarning, match=r'row 2, column "youngs_modulus": 250 kPa is outside the usual range'
    ):
        parse_boreholes(
            "borehole,x,y,stratum,top,bottom,youngs_modulus\nB1,0,0,fill,0,1,250\n", STRATA
        )
    # 25 with no unit is 25 kPa, below any soil (peat is about 200 kPa, common practice):
    # bad input that names the unit probably meant
    with pytest.raises(
        InputError,
        match=r'row 2, column "youngs_modulus": 25 kPa is outside the plausible range '
        r'100–5,000,000 kPa; if the number is in MPa it is 25,000 kPa: write the unit, '
        r'e.g. "25 MPa"',
    ):
        parse_boreholes(
            "borehole,x,y,stratum,top,bottom,youngs_modulus\nB1,0,0,fill,0,1,25\n", STRATA
        )


# --------------------------------------------------------------------------- soundings
def test_soundings_with_mixed_units():
    text = "sounding,x,y,depth,qc [MPa],fs\nC1,0,0,0.5,5,40 kPa\nC1,0,0,1.0,60 tsf,\n"
    (c,) = parse_soundings(text)
    np.testing.assert_allclose(c.depth, [0.5, 1.0])
    # 60 tsf = 60 × 2000 lbf/ft² (NIST SP 811 factors) = 5745.6 kPa
    np.testing.assert_allclose(
        c.qc, [5000.0, 60 * 2000 * 4.4482216152605e-3 / 0.3048**2], rtol=1e-12
    )
    assert c.fs[0] == 40.0 and np.isnan(c.fs[1])


@pytest.mark.parametrize(
    "rows, match",
    [
        (
            "C1,0,0,1.0,5\nC1,0,0,1.0,6\n",
            r'soundings.csv row 3, column "depth": in sounding "C1" the depth 1 m does not incr',
        ),
        (
            "C1,0,0,1.0,5\nC1,0,0,0.8,6\n",
            r"row 3, column \"depth\": .*does not increase \(previous 1 m\)",
        ),
        ("C1,0,0,1.0,0\n", r'row 2, column "qc": the cone resistance 0 kPa is not positive'),
        ("C1,0,0,1.0,5 m\n", r'row 2, column "qc": "5 m" is a length; expected a pressure'),
    ],
)
def test_sounding_rules(rows, match):
    with pytest.raises(InputError, match=match):
        parse_soundings("sounding,x,y,depth,qc\n" + rows)


def test_suspicious_qc_warns_once():
    # a few readings of 60 kPa (soft clay, or the top of a pre-bored hole) in a sounding of
    # MPa readings: outside the usual 0.1–100 MPa (common practice), a warning once
    with pytest.warns(InputWarning, match=r"row 2, column \"qc\": 2 cone reading\(s\) outside"):
        parse_soundings(
            "sounding,x,y,depth,qc\nC1,0,0,1,60\nC1,0,0,2,70\nC1,0,0,3,5 MPa\nC1,0,0,4,8 MPa\n"
            "C1,0,0,5,9 MPa\n"
        )


def test_sounding_in_wrong_unit_refused():
    # qc = 5 and 6 with no unit: 5–6 kPa, far below any soil (very soft clay is about
    # 0.1 MPa, common practice): bad input naming the unit probably meant
    with pytest.raises(
        InputError,
        match=r'row 2, column "qc": the median cone resistance of sounding "C1" is 5.5 kPa, '
        r'outside the plausible 50–100,000 kPa; if the number is in MPa it is 5500 kPa',
    ):
        parse_soundings("sounding,x,y,depth,qc\nC1,0,0,1,5\nC1,0,0,2,6\n")


# --------------------------------------------------------------------------- pairs, CRS
def test_pairs_and_structure_lines(tmp_path):
    site = SITE.replace(
        "[[strata]]",
        '[checks]\npairs = "listed"\npairs_file = "pairs.csv"\n'
        'structure_lines_file = "lines.csv"\n\n[[strata]]',
        1,
    )
    write_project(
        tmp_path,
        {
            "site.toml": site,
            "pairs.csv": "a,b\nA,B\nB,A\n",
            "lines.csv": "line,footing\nwall,A\nwall,B\n",
        },
    )
    s = load_site(tmp_path)
    assert s.checks.listed_pairs == (("A", "B"),) and s.checks.structure_lines == (("A", "B"),)
    write_project(tmp_path, {"site.toml": site, "pairs.csv": "a,b\nA,C\n"})
    with pytest.raises(InputError, match=r'pairs.csv row 2, column "b": unknown footing "C"'):
        load_site(tmp_path)


def test_listed_pairs_need_a_file(tmp_path):
    site = SITE.replace("[[strata]]", '[checks]\npairs = "listed"\n\n[[strata]]', 1)
    write_project(tmp_path, {"site.toml": site})
    with pytest.raises(InputError, match=r"key 'pairs': \"listed\" but no pairs_file"):
        load_site(tmp_path)


def _gis_site(tmp_path, crs_key):
    gdf = gpd.GeoDataFrame(
        {"id": ["A"], "dead_load": [600.0]}, geometry=[box(0, 0, 2, 2)], crs="EPSG:32633"
    )
    gdf.to_file(tmp_path / "plan.gpkg", driver="GPKG")
    site = SITE.replace('file = "footings.csv"', 'file = "plan.gpkg"')
    if crs_key:
        site = site.replace('output_units = "us"', f'output_units = "us"\ncrs = "{crs_key}"')
    write_project(tmp_path, {"site.toml": site})
    return load_site(tmp_path)


def test_crs_kept_from_the_gis_file(tmp_path):
    assert _gis_site(tmp_path, None).crs == "EPSG:32633"
    assert _gis_site(tmp_path, "epsg:32633").crs == "EPSG:32633"


def test_crs_mismatch_between_files(tmp_path):
    with pytest.raises(
        InputError,
        match=r"key 'crs': EPSG:27700 differs from the coordinate system of plan.gpkg \(EPSG:32633",
    ):
        _gis_site(tmp_path, "EPSG:27700")


def test_unknown_crs(tmp_path):
    write_project(tmp_path, {"site.toml": SITE.replace('output_units = "us"', 'crs = "EPSG:1"')})
    with pytest.raises(InputError, match=r"key 'crs': unknown coordinate system \"EPSG:1\""):
        load_site(tmp_path)


# --------------------------------------------------------------------------- starter project
STARTER = pathlib.Path(sitesettle.__file__).parent / "templates" / "starter"


def test_starter_project_loads_cleanly(tmp_path):
    # warnings are errors in this suite, so a clean load also means no InputWarning
    shutil.copytree(STARTER, tmp_path / "p")
    site = load_site(tmp_path / "p")
    assert len(site.footings) == 6 and len(site.boreholes) == 3 and len(site.soundings) == 2
    assert {f.shape for f in site.footings} == {"rectangle", "circle"}
    assert site.strata[-1].behaviour == Behaviour.RIGID
    ground = Ground(site)
    assert not ground.outside_hull([f.x for f in site.footings], [f.y for f in site.footings]).any()


def test_starter_site_toml_comments_every_key():
    # every key line of the starter file carries a comment, or sits under a commented stratum
    text = (STARTER / "site.toml").read_text()
    data = parse_toml(text)
    for table in ("project", "groundwater", "footings", "analysis", "checks"):
        for key in data[table]:
            if key == "overrides":
                continue
            line = next(l for l in text.splitlines() if l.startswith(f"{key} ="))
            assert "#" in line, line


@pytest.mark.parametrize("crs, unit", [("EPSG:4326", "degree"), ("EPSG:2263", "US survey foot")])
def test_crs_not_in_metres_is_refused(tmp_path, crs, unit):
    # EPSG:4326 is latitude/longitude; EPSG:2263 (New York Long Island) is in US survey feet
    write_project(tmp_path, {"site.toml": SITE.replace('output_units = "us"', f'crs = "{crs}"')})
    with pytest.raises(
        InputError, match=rf"key 'crs': the coordinate system .* has its axes in {unit}"
    ):
        load_site(tmp_path)
    gdf = gpd.GeoDataFrame({"id": ["A"], "dead_load": [600.0]}, geometry=[box(0, 0, 2, 2)], crs=crs)
    gdf.to_file(tmp_path / "plan.gpkg", driver="GPKG")
    write_project(
        tmp_path, {"site.toml": SITE.replace('file = "footings.csv"', 'file = "plan.gpkg"')}
    )
    with pytest.raises(
        InputError, match=rf"plan.gpkg: the coordinate system .* has its axes in {unit}"
    ):
        load_site(tmp_path)


def test_geopackage_layer_and_text_units_in_attributes(tmp_path):
    gdf = gpd.GeoDataFrame(
        {"id": ["A", "B"], "depth": ["4 ft", "1.2 m"], "dead_load": ["100 kip", "500"]},
        geometry=[box(0, 0, 2, 2), box(5, 0, 7, 3)],
        crs="EPSG:32633",
    )
    gdf.to_file(tmp_path / "plan.gpkg", layer="pads", driver="GPKG")
    gdf.iloc[:1].to_file(tmp_path / "plan.gpkg", layer="other", driver="GPKG")
    site = SITE.replace('file = "footings.csv"', 'file = "plan.gpkg"\nlayer = "pads"')
    write_project(tmp_path, {"site.toml": site})
    a, b = load_site(tmp_path).footings
    assert a.depth == pytest.approx(4 * 0.3048) and b.depth == 1.2  # NIST SP 811 foot
    assert a.dead_load == pytest.approx(100 * 4.4482216152605)  # 100 kip in kN


def test_boreholes_from_a_frame_count_rows_as_a_sheet():
    import pandas as pd

    frame = pd.DataFrame(
        {
            "borehole": ["B1", "B1"],
            "x": [0, 0],
            "y": [0, 0],
            "stratum": ["fill", "silt"],
            "top": [0, 1],
            "bottom": [1, 2],
        }
    )
    with pytest.raises(InputError, match=r'boreholes.csv row 3, column "stratum": unknown stratum'):
        parse_boreholes(frame, STRATA)


def test_no_water_table_by_name(tmp_path):
    write_project(tmp_path, {"site.toml": SITE.replace('depth = "2 m"', 'depth = "none"')})
    assert load_site(tmp_path).water_depth == float("inf")


def test_soundings_missing_column():
    with pytest.raises(InputError, match=r'soundings.csv: the required column "qc" is missing'):
        parse_soundings("sounding,x,y,depth\nC1,0,0,1\n")


def test_strata_as_a_single_table_is_an_error(tmp_path):
    site = SITE.replace("[[strata]]", "[strata]", 1).split("[[strata]]")[0]
    write_project(tmp_path, {"site.toml": site})
    with pytest.raises(InputError, match=r"no \[\[strata\]\] tables"):
        load_site(tmp_path)


# --------------------------------------------------------------------------- several footing files
def _raft(path, crs="EPSG:32633", poly=None):
    gpd.GeoDataFrame(
        {"id": ["R1"], "dead_load": [3000.0]}, geometry=[poly or box(20, -2, 26, 3)], crs=crs
    ).to_file(path, driver="GPKG")


def test_footings_from_a_csv_and_a_gis_file(tmp_path):
    folder = write_project(tmp_path / "p")
    _raft(folder / "raft.gpkg")
    toml = SITE.replace('file = "footings.csv"', 'file = ["footings.csv", "raft.gpkg"]')
    (folder / "site.toml").write_text(toml)
    site = load_site(folder)
    assert [f.id for f in site.footings] == ["A", "B", "R1"]
    assert site.crs is not None and "32633" in site.crs
    assert site.footing("R1").area == pytest.approx(30.0)


def test_duplicate_id_across_footing_files_names_both(tmp_path):
    folder = write_project(tmp_path / "p")
    gpd.GeoDataFrame(
        {"id": ["A"], "dead_load": [3000.0]}, geometry=[box(20, -2, 26, 3)], crs="EPSG:32633"
    ).to_file(folder / "raft.gpkg", driver="GPKG")
    (folder / "site.toml").write_text(
        SITE.replace('file = "footings.csv"', 'file = ["footings.csv", "raft.gpkg"]')
    )
    with pytest.raises(
        InputError, match=r'raft.gpkg: the footing id "A" is also used in footings.csv'
    ):
        load_site(folder)


def test_overlap_across_footing_files(tmp_path):
    folder = write_project(tmp_path / "p")
    _raft(folder / "raft.gpkg", poly=box(5, -1, 9, 1))  # over footing B at (6, 0)
    (folder / "site.toml").write_text(
        SITE.replace('file = "footings.csv"', 'file = ["footings.csv", "raft.gpkg"]')
    )
    with pytest.raises(
        InputError, match=r'raft.gpkg: footing "R1" overlaps footing "B" of footings.csv'
    ):
        load_site(folder)


def test_crs_mismatch_between_footing_files(tmp_path):
    folder = write_project(tmp_path / "p")
    _raft(folder / "a.gpkg", crs="EPSG:32633", poly=box(20, -2, 26, 3))
    gpd.GeoDataFrame(
        {"id": ["R2"], "dead_load": [3000.0]}, geometry=[box(40, -2, 46, 3)], crs="EPSG:32632"
    ).to_file(folder / "b.gpkg", driver="GPKG")
    (folder / "site.toml").write_text(
        SITE.replace('file = "footings.csv"', 'file = ["footings.csv", "a.gpkg", "b.gpkg"]')
    )
    with pytest.raises(InputError, match=r"b.gpkg: .*differs from the coordinate system"):
        load_site(folder)


def test_absurd_footing_pressure_is_an_error_naming_the_row(tmp_path):
    # 1e300 kN would overflow the analysis; no shallow footing carries 100 MPa (fact of the trade)
    folder = write_project(
        tmp_path / "p", {"footings.csv": "id,x,y,width,dead_load\nA,0,0,2,1e300\n"}
    )
    with pytest.raises(
        InputError, match=r'footings.csv row 2, column "dead_load".*kPa on its base'
    ):
        load_site(folder)


@pytest.mark.parametrize("key, value", [("name", "{ a = 1 }"), ("crs", "32633")])
def test_project_text_keys_must_be_text(tmp_path, key, value):
    toml = SITE.replace(
        'name = "Test yard"',
        f"{key} = {value}" if key == "name" else f'name = "Test yard"\n{key} = {value}',
    )
    folder = write_project(tmp_path / "p", {"site.toml": toml})
    with pytest.raises(InputError, match=rf"\[project\], key '{key}'.* is not text"):
        load_site(folder)


def test_wrong_dimension_messages_name_the_dimension():
    from sitesettle.units import parse

    with pytest.raises(InputError, match=r'"3 kg" is a mass; expected a length'):
        parse("3 kg", "length", "x")
    with pytest.raises(InputError, match=r'"0.3" is a plain number|"30 %" is a plain number'):
        parse("30 %", "length", "x")


def test_checked_after_must_precede_the_design_life(tmp_path):
    toml = SITE + '\n[analysis]\ndesign_life = "50 yr"\n\n[checks]\nchecked_after = "80 yr"\n'
    folder = write_project(tmp_path / "p", {"site.toml": toml})
    msg = r"site.toml \[checks\], key 'checked_after': 80 yr is not before"
    with pytest.raises(InputError, match=msg):
        load_site(folder)
