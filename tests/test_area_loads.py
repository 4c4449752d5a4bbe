"""Area loads (fill, slabs, stockpiles) through the one engine.

Check values: superposition (the engine is linear in the elastic stress field:
an area load must act exactly as the same load given as a footing), and a wide fill
over a clay on rock against one-dimensional e–log consolidation (Terzaghi 1943:
σ'v increases by the fill pressure at every depth under a load much wider than the
clay is thick) integrated independently with scipy, and Terzaghi's U(Tv) series.
"""

from __future__ import annotations

import math
import pathlib
import shutil

import numpy as np
import pytest
from _sites import ROCK, rect
from scipy import integrate

from sitesettle.analysis import analyse
from sitesettle.errors import InputError
from sitesettle.io.project import load_site, parse_area_loads
from sitesettle.options import Behaviour, GranularMethod
from sitesettle.site import AnalysisSettings, AreaLoad, Borehole, Interval, Site, Stratum

GW = 9.81
SAND = Stratum(
    "sand",
    Behaviour.GRANULAR,
    18.0,
    20.0,
    0.3,
    youngs_modulus=30000.0,
    method=GranularMethod.ELASTIC,
)
STARTER = pathlib.Path(__file__).resolve().parents[1] / "sitesettle" / "templates" / "starter"


def site_of(footings, strata, thicknesses, area=(), points=(), **settings):
    z, intervals = 0.0, []
    for s, h in zip(strata, thicknesses):
        intervals.append(Interval(s.name, z, z + h))
        z += h
    bh = Borehole("BH", 0.0, 0.0, tuple(intervals), 0.0)
    base = dict(report_times=(1.0,), design_life=50.0, stress_tolerance=0.0)
    base.update(settings)
    return Site(
        "t",
        tuple(footings),
        tuple(strata),
        (bh,),
        water_depth=0.0,
        analysis=AnalysisSettings(**base),
        area_loads=tuple(area),
        points=tuple(points),
    )


def square(x, y, side):
    h = side / 2
    return np.array([[x - h, y - h], [x + h, y - h], [x + h, y + h], [x - h, y + h]])


def test_area_load_acts_as_the_same_load_given_as_a_footing():
    # superposition: F's settlement beside a 3 m square at 100 kPa is the same whether the
    # square is a footing (at the ground surface, fill_unit_weight 0: q_net = P/A) or an
    # area load; only the kernel differs (exact rectangle vs exact polygon edge sum)
    f = rect("F", 0.0, 0.0, 2.0, depth=1.0, load=600.0)
    g = rect("G", 4.0, 0.0, 3.0, depth=0.0, load=900.0, fill=0.0)
    as_footing = analyse(
        site_of([f, g], [SAND, ROCK], [12.0, 5.0]), with_map=False, with_checks=False
    )
    area = AreaLoad("slab", square(4.0, 0.0, 3.0), 100.0, 0.0)
    as_area = analyse(
        site_of([f], [SAND, ROCK], [12.0, 5.0], area=[area]), with_map=False, with_checks=False
    )
    a = as_footing.at_design_life()[0]
    b = as_area.at_design_life()[0]
    assert b == pytest.approx(a, rel=1e-6)
    nb = as_area.at_design_life("neighbours")[0]
    assert nb == pytest.approx(as_footing.at_design_life("neighbours")[0], rel=1e-6)
    assert nb > 0.05 * b  # the slab really loads F (not a vacuous equality)


def test_wide_fill_over_clay_is_one_dimensional_consolidation():
    # 1 m of fill at 20 kN/m³ (20 kPa) over 2 km × 2 km; a 4 m normally consolidated clay
    # (water at the surface) on rock, drained at the top only: H_dr = 4 m.
    # Final: ∫ Cc/(1 + e0) log10((σ'0 + Δσ)/σ'0) dz (e–log, Terzaghi 1943), by scipy quad;
    # at t: × U(Tv), Tv = cv t / H_dr² (Terzaghi's series, written out here).
    cc, e0, cv, gsat = 0.3, 1.0, 2.0, 18.0
    clay = Stratum(
        "clay",
        Behaviour.COHESIVE,
        18.0,
        gsat,
        compression_index=cc,
        recompression_index=0.05,
        void_ratio=e0,
        ocr=1.0,
        consolidation_coefficient=cv,
        secondary_index=0.0,
    )
    far = rect("F", 3000.0, 0.0, 1.0, depth=0.0, load=1.0, fill=0.0)  # outside the fill
    fill = AreaLoad("fill", square(0.0, 0.0, 2000.0), 20.0, 0.0)
    from sitesettle.site import QueryPoint

    t = 0.1967 * 4.0**2 / cv  # U = 50 % (Tv = 0.1967, Terzaghi 1943)
    site = site_of(
        [far],
        [clay, ROCK],
        [4.0, 5.0],
        area=[fill],
        points=[QueryPoint("P", 0.0, 0.0, 0.0)],
        report_times=(t, 10.0, 20.0),
        design_life=100.0,
        cohesive_immediate=False,
    )
    r = analyse(site, with_map=False, with_checks=False)
    gamma_w = gsat - GW

    def strain(z):
        s0 = gamma_w * z
        return cc / (1 + e0) * math.log10((s0 + 20.0) / s0)

    final, _ = integrate.quad(strain, 0.0, 4.0, limit=200)

    def degree(tv):
        m = math.pi / 2 * (2 * np.arange(200) + 1)
        return 1.0 - float(np.sum(2.0 / m**2 * np.exp(-(m**2) * tv)))

    def local_degree(z, tv):  # Terzaghi's isochrone, z from the drained top, H_dr = 4 m
        m = math.pi / 2 * (2 * np.arange(400) + 1)
        return 1.0 - float(np.sum(2.0 / m * np.sin(m * z / 4.0) * np.exp(-(m**2) * tv)))

    tv = cv * t / 16.0
    assert degree(tv) == pytest.approx(0.5, abs=0.001)
    # the e–log strain is largest near the drained top, which consolidates first: the
    # settlement at Tv = 0.1967 is ∫ ε(z) U(z, Tv) dz, more than half the final
    at_t, _ = integrate.quad(lambda z: strain(z) * local_degree(z, tv), 0.0, 4.0, limit=400)
    pts = r.points
    k = list(r.times).index(t)
    life = r.design_life_index
    total = pts.total[0]
    assert total[life] == pytest.approx(final, rel=0.01)
    assert total[k] == pytest.approx(at_t, rel=0.01)
    assert at_t > 0.55 * final


def test_area_load_keys(tmp_path):
    f = rect("F", 0.0, 0.0, 2.0, depth=1.0, load=600.0)
    (a,) = parse_area_loads(
        [
            {
                "name": "site fill",
                "fill_thickness": "1.2 m",
                "fill_unit_weight": "19 kN/m^3",
                "extent": "plan + 20 m",
            }
        ],
        [f],
    )
    assert a.pressure == pytest.approx(1.2 * 19.0)  # thickness × unit weight
    np.testing.assert_allclose(a.outline.min(axis=0), [-21.0, -21.0])
    np.testing.assert_allclose(a.outline.max(axis=0), [21.0, 21.0])
    (b,) = parse_area_loads(
        [
            {
                "name": "racking",
                "pressure": "15 kPa",
                "polygon": [[0, 0], [10, 0], [10, 5], [0, 5]],
                "depth": "0.2 m",
            }
        ],
        [f],
    )
    assert b.pressure == 15.0 and b.depth == 0.2 and b.area == pytest.approx(50.0)


@pytest.mark.parametrize(
    "table, match",
    [
        ({"name": "x", "extent": "plan"}, "either a pressure or a fill"),
        (
            {"name": "x", "pressure": "10 kPa", "fill_thickness": "1 m", "extent": "plan"},
            "either a pressure or a fill",
        ),
        ({"name": "x", "pressure": "-10 kPa", "extent": "plan"}, "unloading"),
        ({"name": "x", "pressure": "10 MPa", "extent": "plan"}, "beyond any fill"),
        ({"name": "x", "pressure": "10 kPa"}, "either a polygon or an extent"),
        ({"name": "x", "pressure": "10 kPa", "extent": "site + 5 m"}, "cannot read"),
        ({"name": "x", "pressure": "10 kPa", "polygon": [[0, 0], [1, 1]]}, "2 vertices"),
        (
            {"name": "x", "pressure": "10 kPa", "polygon": [[0, 0], [1, 1], [1, 0], [0, 1]]},
            "crosses itself",
        ),
        ({"name": "x", "presure": "10 kPa", "extent": "plan"}, 'did you mean "pressure"'),
        ({"pressure": "10 kPa", "extent": "plan"}, 'the key "name" is missing'),
        (
            {"name": "x", "fill_thickness": "1 m", "fill_unit_weight": "1900", "extent": "plan"},
            "plausible 5–30",
        ),
    ],
)
def test_bad_area_loads_are_refused(table, match):
    f = rect("F", 0.0, 0.0, 2.0, depth=1.0, load=600.0)
    with pytest.raises(InputError, match=match):
        parse_area_loads([table], [f])


def test_area_load_from_site_toml_end_to_end(tmp_path):
    # the starter project with a site-wide fill: every footing settles more, by about the
    # same amount, and the fill is not checked as a footing
    folder = tmp_path / "p"
    shutil.copytree(STARTER, folder)
    base = analyse(load_site(folder), with_map=False)
    toml = folder / "site.toml"
    toml.write_text(
        toml.read_text(encoding="utf-8")
        + '\n[[area_loads]]\nname = "site fill"\nfill_thickness = "0.5 m"\n'
        'fill_unit_weight = "19 kN/m^3"\nextent = "plan + 20 m"\n',
        encoding="utf-8",
    )
    site = load_site(folder)
    assert [a.name for a in site.area_loads] == ["site fill"]
    filled = analyse(site, with_map=False)
    assert len(filled.ids) == len(base.ids)
    assert np.all(filled.at_design_life() > base.at_design_life() + 0.001)
    assert np.all(filled.at_design_life("neighbours") > base.at_design_life("neighbours"))


# --------------------------------------------------------------------------- unloading


def test_excavation_rebound_is_the_negative_of_loading_with_the_unloading_modulus():
    # elastic sand: at the base of an excavation 2 m deep (40 m square) the rebound equals
    # minus the settlement under the same pressure as a load, with E_ur = 3 E (linear
    # elasticity; UNLOADING_MODULUS_RATIO, common practice)
    from sitesettle.field import UNLOADING_MODULUS_RATIO
    from sitesettle.site import QueryPoint

    far = rect("F", 500.0, 0.0, 1.0, depth=0.0, load=1.0, fill=0.0)
    dig = AreaLoad("pit", square(0.0, 0.0, 40.0), math.nan, 0.0, excavation_depth=2.0)
    p = [QueryPoint("P", 0.0, 0.0, 2.0)]
    r_dig = analyse(site_of([far], [SAND, ROCK], [30.0, 5.0], area=[dig], points=p),
                    with_map=False, with_checks=False)
    (resolved,) = r_dig.site.area_loads
    # the overburden removed: 2 m of saturated sand at 20 kN/m³ (water at the surface)
    assert resolved.pressure == pytest.approx(-40.0, rel=1e-9) and resolved.depth == 2.0
    load = AreaLoad("heap", square(0.0, 0.0, 40.0), 40.0, 2.0)
    r_load = analyse(site_of([far], [SAND, ROCK], [30.0, 5.0], area=[load], points=p),
                     with_map=False, with_checks=False)
    up = r_dig.points.total[0, -1]
    down = r_load.points.total[0, -1]
    assert down > 0.01
    assert up == pytest.approx(-down / UNLOADING_MODULUS_RATIO, rel=1e-6)


def test_clay_under_a_wide_excavation_swells_on_cr():
    # a 1 m excavation (18 kPa removed) over 2 km × 2 km; stiff sand 0–3 m, clay 3–7 m on
    # rock, water at the surface. After consolidation the clay swells by
    # ∫ Cr/(1 + e0) log10((σ'0 − 18)/σ'0) dz (e–log swelling line; scipy quad)
    from sitesettle.site import QueryPoint

    cr, e0 = 0.06, 1.0
    clay = Stratum("clay", Behaviour.COHESIVE, 18.0, 18.0, compression_index=0.3,
                   recompression_index=cr, void_ratio=e0, ocr=2.0,
                   consolidation_coefficient=5.0, secondary_index=0.01)
    stiff = Stratum("sand", Behaviour.GRANULAR, 18.0, 18.0, 0.3, youngs_modulus=1e9,
                    method=GranularMethod.ELASTIC)
    far = rect("F", 3000.0, 0.0, 1.0, depth=0.0, load=1.0, fill=0.0)
    dig = AreaLoad("basement", square(0.0, 0.0, 2000.0), math.nan, 0.0, excavation_depth=1.0)
    site = site_of([far], [stiff, clay, ROCK], [3.0, 4.0, 5.0], area=[dig],
                   points=[QueryPoint("P", 0.0, 0.0, 1.0)], design_life=200.0,
                   cohesive_immediate=False)
    r = analyse(site, with_map=False, with_checks=False)
    gw = 18.0 - GW

    def swell(z):
        s0 = gw * z
        return cr / (1 + e0) * math.log10((s0 - 18.0) / s0)

    ref, _ = integrate.quad(swell, 3.0, 7.0)
    got = r.points.total[0, r.design_life_index]
    assert ref < -0.003
    assert got == pytest.approx(ref, rel=0.01)  # no secondary compression on unloading


def test_footing_lighter_than_the_soil_it_replaces_rebounds():
    # a 2 m pad 2 m down with fill_unit_weight 0 and 10 kN: q_net = 10/4 − 2 × 20 = −37.5 kPa
    # (water at the surface, γsat 20): it rebounds by 1/3 of what +37.5 kPa settles
    # (E_ur = 3 E, common practice), with a warning that names it
    from sitesettle.field import UNLOADING_MODULUS_RATIO

    light = rect("L", 0.0, 0.0, 2.0, depth=2.0, load=10.0, fill=0.0)
    heavy = rect("L", 0.0, 0.0, 2.0, depth=2.0, load=(37.5 + 40.0) * 4.0, fill=0.0)
    r_l = analyse(site_of([light], [SAND, ROCK], [30.0, 5.0]), with_map=False,
                  with_checks=False)
    r_h = analyse(site_of([heavy], [SAND, ROCK], [30.0, 5.0]), with_map=False,
                  with_checks=False)
    assert r_l.net_pressure[0] == pytest.approx(-37.5)
    assert r_l.at_design_life()[0] == pytest.approx(
        -r_h.at_design_life()[0] / UNLOADING_MODULUS_RATIO, rel=1e-6
    )
    assert any("footing L: net pressure -37.5 kPa < 0: it unloads the ground" in w
               for w in r_l.warnings)
