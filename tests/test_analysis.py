"""The orchestration against independent references.

Each test builds a Site directly (no files) and compares what ``analyse`` returns
with a published value, a closed form evaluated here, or scipy quadrature of the
governing equation. Sources are named beside every check value.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from _sites import ROCK, rect
from _sites import clay as clay_base
from scipy import integrate

from sitesettle import stress
from sitesettle.analysis import analyse, characteristic_points
from sitesettle.methods import consolidation as cons
from sitesettle.methods import elastic
from sitesettle.options import Behaviour, GranularMethod
from sitesettle.site import AnalysisSettings, Borehole, Interval, Site, Stratum


def pad(
    fid,
    x,
    y,
    width,
    length=None,
    depth=0.0,
    load=400.0,
    rigid=False,
    fill=0.0,
    live=0.0,
    rotation=0.0,
    sustained=0.0,
):
    """A rectangular footing at the surface by default, loads including the footing."""
    return rect(
        fid,
        x,
        y,
        width,
        length,
        depth=depth,
        load=load,
        live=live,
        sustained=sustained,
        rigid=rigid,
        fill=fill,
        rotation=rotation,
    )


def uniform_site(footings, strata, thicknesses, *, water=math.inf, **settings):
    """One borehole: the same strata everywhere (a uniform site)."""
    z, intervals = 0.0, []
    for s, h in zip(strata, thicknesses):
        intervals.append(Interval(s.name, z, z + h))
        z += h
    bh = Borehole("BH", 0.0, 0.0, tuple(intervals), None if math.isinf(water) else water)
    base = dict(report_times=(0.1, 1.0, 10.0), design_life=10.0, stress_tolerance=0.0)
    base.update(settings)
    return Site(
        "test",
        tuple(footings),
        tuple(strata),
        (bh,),
        water_depth=water,
        analysis=AnalysisSettings(**base),
    )


SAND = Stratum(
    "sand",
    Behaviour.GRANULAR,
    unit_weight=18.0,
    saturated_unit_weight=20.0,
    poisson=0.3,
    cone_resistance=8000.0,
)


def mm(results, name="total", k=-1):
    return getattr(results, name)[:, k] * 1000.0


# --------------------------------------------------------------------------- Schmertmann


def test_schmertmann_square_through_the_whole_pipeline():
    # METHODS.md §3.6 (computed from Schmertmann, Hartman & Brown 1978 equations, not
    # published): B = 2 m square at D = 1 m, γ = 18 kN/m³ dry, gross q = 200 kPa,
    # qc = 8 MPa → 12.97 mm (0.1 yr), 15.57 mm (1 yr), 18.16 mm (10 yr).
    f = pad("F", 0, 0, 2.0, depth=1.0, load=800.0)  # 800 kN / 4 m² = 200 kPa gross
    site = uniform_site([f], [SAND], [60.0])
    r = analyse(site, with_map=False)
    assert r.net_pressure[0] == pytest.approx(182.0)
    np.testing.assert_allclose(
        r.total[0] * 1000, [12.97, 15.57, 18.16], atol=0.006
    )  # 2 d.p. printed
    assert r.neighbours[0, -1] == 0.0
    assert r.methods[0] == "schmertmann"


def test_schmertmann_plane_strain_strip():
    # METHODS.md §3.6 (computed): strip B = 1.5 m (L/B ≥ 10 → plane-strain diagram,
    # Schmertmann, Hartman & Brown 1978), same soil and pressure → 13.92 mm at C2 = 1.
    f = pad("S", 0, 0, 1.5, 30.0, depth=1.0, load=200.0 * 1.5 * 30.0)
    site = uniform_site([f], [SAND], [60.0], report_times=(0.1,), design_life=0.1)
    r = analyse(site, with_map=False)
    assert r.total[0, 0] * 1000 == pytest.approx(13.92, abs=0.006)


# --------------------------------------------------------------------------- elastic


def elastic_sand(E=20000.0, nu=0.3):
    return Stratum(
        "sand",
        Behaviour.GRANULAR,
        unit_weight=18.0,
        saturated_unit_weight=20.0,
        poisson=nu,
        youngs_modulus=E,
        method=GranularMethod.ELASTIC,
    )


@pytest.mark.parametrize("thickness", [2.0, 4.0, 10.0])
def test_elastic_centre_on_finite_layer_matches_steinbrenner(thickness):
    # Steinbrenner (1934) F1, F2 (form as in Bowles 1996 §5-6), centre by four corners:
    # the exact truncated half-space strain integral. The pipeline's midpoint sublayers
    # must agree within 0.5 % (the convergence target of the settlement issue).
    q, B, E, nu = 100.0, 2.0, 20000.0, 0.3
    f = pad("F", 0, 0, B, load=q * B * B)
    site = uniform_site(
        [f],
        [elastic_sand(E, nu), ROCK],
        [thickness, 10.0],
        influence_fraction=0.0,
        sublayer_fraction=0.05,
    )
    r = analyse(site, with_map=False)
    ref = float(elastic.steinbrenner_centre_settlement(q, B, B, thickness, E, nu))
    assert r.total[0, -1] == pytest.approx(ref, rel=5e-3)


def test_settlement_past_a_tenth_of_the_width_is_flagged():
    # a settlement of 0.1 B is commonly taken as bearing failure (common practice):
    # past it the result is outside the methods' range and the run says so. Under
    # 150 kPa on a 2 m pad, E = 20 MPa gives about 10 mm (no warning) and E = 50 kPa
    # (a modulus meant in MPa, given in kPa) metres
    q, B = 150.0, 2.0
    f = pad("F", 0, 0, B, load=q * B * B)
    for E, warned in ((20000.0, False), (50.0, True)):
        site = uniform_site([f], [elastic_sand(E), ROCK], [6.0, 10.0])
        r = analyse(site, with_map=False)
        assert (r.total[0, -1] > 0.1 * B) == warned
        hits = [w for w in r.warnings if "more than 10% of its width" in w]
        assert len(hits) == (1 if warned else 0), r.warnings
        if warned:
            assert hits[0].startswith("footing F settles")


def test_rigid_footing_is_the_mean_of_its_characteristic_points():
    # Flexible settlement at any point inside a rectangle = sum of four corner
    # rectangles (superposition; Steinbrenner 1934 corner formula). At the
    # characteristic points (0.37 B, 0.37 L from the centre; Graßhoff 1955, from
    # memory) this is the rigid footing's settlement.
    q, B, L, H, E, nu = 150.0, 2.0, 3.0, 6.0, 25000.0, 0.3
    f = pad("F", 0, 0, B, L, load=q * B * L, rigid=True)
    site = uniform_site(
        [f], [elastic_sand(E, nu), ROCK], [H, 10.0], influence_fraction=0.0, sublayer_fraction=0.05
    )
    r = analyse(site, with_map=False)
    u, v = 0.37 * L, 0.37 * B
    corners = [
        (L / 2 + u, B / 2 + v),
        (L / 2 - u, B / 2 + v),
        (L / 2 + u, B / 2 - v),
        (L / 2 - u, B / 2 - v),
    ]
    ref = sum(
        float(elastic.steinbrenner_corner_settlement(q, min(a, b), max(a, b), H, E, nu))
        for a, b in corners
    )
    assert r.total[0, -1] == pytest.approx(ref, rel=5e-3)
    # the rigid value lies below the flexible centre (on this thin layer, H = 3B, the
    # ratio is about 0.72; the half-space rule of thumb 0.8 does not apply to it)
    centre = float(elastic.steinbrenner_centre_settlement(q, B, L, H, E, nu))
    assert r.total[0, -1] < centre
    assert r.tilt[0] == pytest.approx(0.0, abs=1e-9)  # symmetric: no tilt


def test_characteristic_points_positions():
    # Graßhoff (1955), from memory: 0.74 of the half-dimension = 0.37 B, 0.37 L.
    f = pad("F", 10, 20, 2.0, 4.0, rigid=True, rotation=90.0)
    p = characteristic_points(f)
    np.testing.assert_allclose(np.sort(np.abs(p[:, 0] - 10)), [0.74] * 4, atol=1e-12)
    np.testing.assert_allclose(np.sort(np.abs(p[:, 1] - 20)), [1.48] * 4, atol=1e-12)


# --------------------------------------------------------------------------- consolidation


def clay(**kw):
    return clay_base(**{"secondary_index": 0.0, **kw})


def test_consolidation_under_a_wide_load_matches_quadrature_of_elog():
    # Terzaghi's one-dimensional e–log σ' settlement (METHODS.md §5.1), integrated by
    # scipy quad over the clay thickness with σ'0(z) and the exact Boussinesq Δσz
    # under the centre of the wide load. At Tv = 0.1967 the average degree of
    # consolidation is 50 % (Terzaghi 1943; METHODS.md §5.2); the settlement then is the
    # final strain weighted by the local degree 1 − u/u0 of Terzaghi's isochrones,
    # u/u0 = Σ (2/M) sin(M z/H_dr) exp(−M² Tv), M = (2m + 1)π/2 (Terzaghi 1943), since
    # the e–log strain is larger near the top where σ'0 is smaller.
    q, B = 50.0, 60.0
    sand = elastic_sand()
    cl = clay(drainage="both")  # the stratum states that it drains into the rock too
    f = pad("R", 0, 0, B, load=q * B * B)
    hdr = 2.0  # 4 m clay drained both faces
    t50 = 0.1967 * hdr**2 / cl.consolidation_coefficient
    site = uniform_site(
        [f],
        [sand, cl, ROCK],
        [2.0, 4.0, 10.0],
        water=0.0,
        influence_fraction=0.0,
        sublayer_fraction=0.005,
        report_times=(t50,),
        design_life=100.0,
    )
    r = analyse(site, with_map=False)
    gw = 9.81

    def sig0(z):
        return (20.0 - gw) * 2.0 + (19.0 - gw) * (z - 2.0)

    loads = stress.Loads.rectangles([0.0], [0.0], [B], [B], [0.0], [q], [0.0])

    def strain(z):
        ds = float(stress.vertical_stress(loads, np.array([[0.0, 0.0, z]]), tolerance=0.0)[0])
        return float(cons.primary_strain(sig0(z), ds, sig0(z), 0.3, 0.05, 1.0))

    ref, _ = integrate.quad(strain, 2.0, 6.0, epsabs=1e-12)
    assert r.consolidation[0, -1] == pytest.approx(ref, rel=5e-3)

    def local_degree(z, tv=0.1967):
        zz = min(z - 2.0, 6.0 - z) / hdr  # symmetric about mid-layer
        m = np.arange(200)
        big_m = 0.5 * np.pi * (2 * m + 1)
        return 1.0 - float(np.sum(2.0 / big_m * np.sin(big_m * zz) * np.exp(-(big_m**2) * tv)))

    at_t50, _ = integrate.quad(lambda z: strain(z) * local_degree(z), 2.0, 6.0, limit=200)
    assert r.consolidation[0, 0] == pytest.approx(at_t50, rel=5e-3)
    # and half of the final settlement when the strain is uniform (the average degree)
    assert at_t50 / ref == pytest.approx(0.5, abs=0.02)


def test_group_settles_more_than_one_footing_alone_over_clay():
    # Superposition of stress (Boussinesq) under a group: the centre footing of a 3 × 3
    # group on deep clay settles more than the same footing alone (fact of the trade;
    # DESIGN §4 "Interaction").
    cl = clay(ocr=1.0)
    single = [pad("C", 0, 0, 2.0, depth=1.0, load=600.0)]
    group = [
        pad(f"P{i}{j}", 5.0 * i, 5.0 * j, 2.0, depth=1.0, load=600.0)
        for i in (-1, 0, 1)
        for j in (-1, 0, 1)
    ]
    kw = dict(
        water=1.0, design_life=50.0, influence_fraction=0.0
    )  # to the rock: same depth for both
    r1 = analyse(uniform_site(single, [cl, ROCK], [30.0, 5.0], **kw), with_map=False)
    rg = analyse(uniform_site(group, [cl, ROCK], [30.0, 5.0], **kw), with_map=False)
    centre = [f.id for f in group].index("P00")
    assert rg.total[centre, -1] > 1.05 * r1.total[0, -1]  # about 10 % more at 5 m centres
    assert rg.own[centre, -1] == pytest.approx(r1.own[0, -1], rel=1e-9)
    assert rg.neighbours[centre, -1] > 0


# --------------------------------------------------------------------------- interaction


def test_two_identical_footings_settle_equally_and_tilt_towards_each_other():
    # Symmetry of the elastic half-space (fact of the trade).
    a = pad("A", 0, 0, 2.0, load=500.0, rigid=True)
    b = pad("B", 4.0, 0, 2.0, load=500.0, rigid=True)
    site = uniform_site([a, b], [elastic_sand(), ROCK], [15.0, 10.0])
    r = analyse(site, with_map=False)
    assert r.total[0, -1] == pytest.approx(r.total[1, -1], rel=1e-9)
    assert r.neighbours[0, -1] > 0
    assert r.tilt[0] > 0 and r.tilt[1] > 0
    # direction of steepest descent: A tilts toward +x (B), B toward −x (A)
    assert math.cos(math.radians(r.tilt_direction[0])) == pytest.approx(1.0, abs=1e-6)
    assert math.cos(math.radians(r.tilt_direction[1])) == pytest.approx(-1.0, abs=1e-6)


def test_far_apart_footings_do_not_interact():
    a = pad("A", 0, 0, 2.0, load=500.0)
    b = pad("B", 2000.0, 0, 2.0, load=500.0)
    site = uniform_site([a, b], [elastic_sand(), ROCK], [15.0, 10.0])
    r = analyse(site, with_map=False)
    assert abs(r.neighbours[0, -1]) < 1e-6 * r.own[0, -1]


def test_neighbour_part_equals_elastic_strain_of_the_neighbour_load_alone():
    # The neighbour part is the elastic strain εz = [Δσz − ν(Δσx + Δσy)]/E of the other
    # footing's stress (DESIGN §4), integrated here by scipy quad with the stress
    # engine's exact kernels, independent of the pipeline's sublayers.
    E, nu, H = 20000.0, 0.3, 12.0
    a = pad("A", 0, 0, 2.0, depth=1.0, load=500.0)
    b = pad("B", 3.5, 1.0, 2.5, depth=1.0, load=900.0)
    site = uniform_site(
        [a, b],
        [elastic_sand(E, nu), ROCK],
        [H, 10.0],
        influence_fraction=0.0,
        sublayer_fraction=0.02,
    )
    r = analyse(site, with_map=False)
    qb = r.net_pressure[1]
    lb = stress.Loads.rectangles([3.5], [1.0], [2.5], [2.5], [0.0], [qb], [1.0])

    def strain(z):
        p = np.array([[0.0, 0.0, z]])
        sz, t = stress.stress_sums(lb, p, tolerance=0.0)
        hs = (1 + nu) * t - sz
        return float(elastic.vertical_strain(sz, hs, E, nu)[0])

    ref, _ = integrate.quad(strain, 1.0, H, epsabs=1e-12, limit=200)
    assert r.neighbours[0, -1] == pytest.approx(ref, rel=5e-3)


# --------------------------------------------------------------------------- wiring


def varied_site(fraction=0.1, method=GranularMethod.SCHMERTMANN):
    sand = Stratum(
        "sand",
        Behaviour.GRANULAR,
        unit_weight=18.0,
        saturated_unit_weight=20.0,
        poisson=0.3,
        cone_resistance=9000.0,
    )
    soft = clay(ocr=1.3, undrained_modulus=8000.0, secondary_index=0.01)
    gravel = Stratum(
        "gravel",
        Behaviour.GRANULAR,
        unit_weight=20.0,
        saturated_unit_weight=21.0,
        poisson=0.3,
        youngs_modulus=80000.0,
        method=GranularMethod.ELASTIC,
    )
    bhs = (
        Borehole(
            "BH1",
            -5,
            -5,
            (Interval("sand", 0, 5), Interval("clay", 5, 6), Interval("gravel", 6, 30)),
        ),
        Borehole(
            "BH2",
            25,
            -5,
            (Interval("sand", 0, 4), Interval("clay", 4, 9), Interval("gravel", 9, 30)),
        ),
        Borehole("BH3", 10, 25, (Interval("sand", 0, 6), Interval("gravel", 6, 30))),
    )
    feet = [
        pad(
            f"C{i}{j}",
            6.0 * i,
            6.0 * j,
            1.8 + 0.2 * i,
            depth=1.0,
            load=700.0 + 100 * j,
            rigid=True,
            fill=20.0,
            live=200.0,
            sustained=0.3,
        )
        for i in range(4)
        for j in range(3)
    ]
    st = AnalysisSettings(
        granular_method=method,
        report_times=(0.1, 1.0, 10.0),
        design_life=50.0,
        sublayer_fraction=fraction,
        stress_tolerance=0.0,
    )
    return Site("varied", tuple(feet), (sand, soft, gravel), bhs, water_depth=2.0, analysis=st)


def test_halving_the_sublayers_changes_no_footing_by_more_than_half_a_percent():
    # The convergence requirement of the settlement issue (project criterion).
    r1 = analyse(varied_site(0.1), with_map=False, with_checks=False)
    r2 = analyse(varied_site(0.05), with_map=False, with_checks=False)
    np.testing.assert_allclose(r2.total, r1.total, rtol=5e-3)


def test_each_stratum_gets_its_method_and_the_parts_add_up():
    r = analyse(varied_site(), with_map=False)
    tr = r.traces["C30"][0]
    by = dict(zip(tr.stratum, tr.method))
    assert by["sand"] == "schmertmann"
    assert by.get("clay") == "consolidation"
    assert by["gravel"] in ("elastic", "below influence depth")
    np.testing.assert_allclose(
        r.immediate + r.creep + r.consolidation + r.secondary,
        r.own + r.neighbours,
        rtol=1e-9,
        atol=1e-12,
    )
    # the trace of each point adds up to that point's settlement at the design life
    for i, f in enumerate(r.site.footings):
        for p, t in enumerate(r.traces[f.id]):
            s = float(np.sum(t.own_settlement + t.neighbour_settlement))
            assert s == pytest.approx(r.point_total[i, p, r.design_life_index], rel=1e-9)
    assert np.all(np.diff(r.total, axis=1) >= -1e-12)  # settlement never decreases with time
    assert np.all(r.secondary[:, 0] <= r.secondary[:, -1])


def test_burland_burbidge_footing_through_the_pipeline():
    # Burland & Burbidge (1985) equations (constants from memory, METHODS.md §4):
    # B = L = 3 m, N̄ = 20, q' = 150 kPa, normally consolidated → s_i = 8.35 mm;
    # ft = 1 + R3 + R log10(t/3) → 1.30 at 3 years (static loads).
    sand = Stratum(
        "sand",
        Behaviour.GRANULAR,
        unit_weight=18.0,
        saturated_unit_weight=20.0,
        poisson=0.3,
        spt_n=20.0,
        method=GranularMethod.BURLAND_BURBIDGE,
    )
    f = pad("F", 0, 0, 3.0, depth=1.0, load=150.0 * 9 + 18.0 * 9)  # q_net = 150 kPa
    site = uniform_site(
        [f], [sand], [40.0], report_times=(3.0,), design_life=30.0, bb_pressure="net"
    )
    r = analyse(site, with_map=False)
    assert r.net_pressure[0] == pytest.approx(150.0)
    # the "net" reading (q' = q_net, no σ'p): METHODS.md §4 benchmark, 8.35 mm
    assert r.total[0, 0] * 1000 == pytest.approx(8.35 * 1.30, abs=0.01)
    assert r.total[0, 1] * 1000 == pytest.approx(8.35 * 1.50, abs=0.01)
    # the paper's reading (default): q' = gross effective = 150 + 18 kPa and the footing
    # in an excavation is preloaded by σ'p = 18 kPa (the overburden at its base), so
    # s_i = (q' − 2/3 σ'p) B^0.7 Ic = 156 × 3^0.7 × 1.71/20^1.4 (Burland & Burbidge 1985)
    r = analyse(
        dataclasses.replace(
            site, analysis=dataclasses.replace(site.analysis, bb_pressure="gross_effective")
        ),
        with_map=False,
    )
    ref = (168.0 - 2.0 / 3.0 * 18.0) * 3.0**0.7 * 1.71 / 20.0**1.4
    assert r.total[0, 0] * 1000 == pytest.approx(ref * 1.30, rel=1e-3)


def test_burland_burbidge_depth_of_influence_where_n_decreases():
    # Burland & Burbidge (1985), METHODS.md §4 [V]: where N decreases with depth, z1 is
    # 2B or the base of the soft layer, whichever is less; here a loose sand from
    # 2.5 m to 5 m below a 3 m footing at the surface: z1 = min(6 m, 5 m) = 5 m
    from sitesettle.field import bb_influence_depth

    z = np.arange(0.25, 8.0, 0.5)
    n = np.where(z < 2.5, 25.0, 8.0)
    bottoms = np.where(z < 2.5, 2.5, 5.0)
    z1, decreasing = bb_influence_depth(3.0, z, n, bottoms)
    assert decreasing and z1 == pytest.approx(5.0)
    # N increasing with depth: the usual z1 = B^0.763
    z1, decreasing = bb_influence_depth(3.0, z, np.linspace(10, 30, len(z)), bottoms)
    assert not decreasing and z1 == pytest.approx(3.0**0.763, rel=1e-12)


def test_rotating_and_translating_the_site_changes_nothing():
    # Invariance of the half-space solution (fact of the trade).
    feet = [pad("A", 0, 0, 2.0, 3.0, load=600.0), pad("B", 5.0, 1.0, 2.5, load=800.0)]
    site = uniform_site(feet, [elastic_sand(), ROCK], [12.0, 10.0])
    r0 = analyse(site, with_map=False)
    th = math.radians(30.0)
    R = np.array([[math.cos(th), -math.sin(th)], [math.sin(th), math.cos(th)]])
    moved = []
    for f in feet:
        c = R @ np.array([f.x, f.y]) + [100.0, -40.0]
        moved.append(
            dataclasses.replace(
                f,
                outline=(R @ f.outline.T).T + [100.0, -40.0],
                x=c[0],
                y=c[1],
                rotation=f.rotation + 30.0,
            )
        )
    site2 = dataclasses.replace(site, footings=tuple(moved))
    r1 = analyse(site2, with_map=False)
    np.testing.assert_allclose(r1.total, r0.total, rtol=1e-9)
