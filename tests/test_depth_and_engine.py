"""Right with the default settings: the depth rule and the one settlement engine.

Every check value here comes from outside the project: the half-space and
Steinbrenner (1934) closed forms (METHODS.md §2.1–2.2), scipy quadrature of the
superposed Boussinesq stress through a clay, Terzaghi's (1943) consolidation theory,
or facts of the trade (symmetry, superposition). The sites are built here and use
the *default* analysis settings unless a test says otherwise.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from _sites import ROCK, rect
from scipy import integrate

from sitesettle import columns as colmod
from sitesettle import stress
from sitesettle.analysis import analyse
from sitesettle.methods import consolidation as cons
from sitesettle.methods import elastic
from sitesettle.options import Behaviour, DepthRule, Drainage, GranularMethod
from sitesettle.site import AnalysisSettings, Borehole, Interval, QueryPoint, Site, Stratum

E, NU = 20000.0, 0.3


def sand(E=E, nu=NU, name="sand"):
    return Stratum(
        name,
        Behaviour.GRANULAR,
        unit_weight=18.0,
        saturated_unit_weight=20.0,
        poisson=nu,
        youngs_modulus=E,
        method=GranularMethod.ELASTIC,
    )


def soft_clay(name="clay", **kw):
    base = dict(
        unit_weight=18.0,
        saturated_unit_weight=18.0,
        compression_index=0.4,
        recompression_index=0.06,
        void_ratio=1.2,
        consolidation_coefficient=2.0,
        secondary_index=0.0,
    )
    base.update(kw)
    return Stratum(name, Behaviour.COHESIVE, **base)


def site_of(footings, strata, thicknesses, *, water=math.inf, points=(), **settings):
    """One borehole (the same ground everywhere); the last stratum may be open-ended."""
    z, intervals = 0.0, []
    for s, h in zip(strata, thicknesses):
        intervals.append(Interval(s.name, z, z + h))
        z += h
    bh = Borehole("BH", 0.0, 0.0, tuple(intervals), None if math.isinf(water) else water)
    base = dict(report_times=(1.0,), design_life=1.0, stress_tolerance=0.0)
    base.update(settings)
    return Site(
        "t",
        tuple(footings),
        tuple(strata),
        (bh,),
        water_depth=water,
        analysis=AnalysisSettings(**base),
        points=tuple(points),
    )


def pad(fid, x, y, B, L=None, *, q, depth=0.0, rigid=False, rotation=0.0):
    L = B if L is None else L
    return rect(
        fid, x, y, B, L, depth=depth, load=q * B * L, rigid=rigid, fill=0.0, rotation=rotation
    )


def halfspace_point(q, B, L, u, v, E=E, nu=NU):
    """Flexible half-space settlement at (u, v) from the centre of a B × L rectangle:
    four corner rectangles (superposition; corner factor of Terzaghi 1943, METHODS §2.1)."""
    total = 0.0
    for a in (L / 2 + u, L / 2 - u):
        for b in (B / 2 + v, B / 2 - v):
            lo, hi = min(a, b), max(a, b)
            if lo <= 0:
                continue
            total += q * lo * (1 - nu**2) * float(elastic.halfspace_corner_factor(hi / lo)) / E
    return total


# --------------------------------------------------------------------------- half-space


def test_default_settings_reproduce_the_half_space_centre_and_corner():
    # Flexible square on a deep uniform layer with no base in reach: centre factor
    # 1.1222 and corner 0.5611 (Terzaghi 1943; METHODS.md §2.1 [C]; printed 1.12/0.56),
    # within 0.5 % with the default settings (nothing switched off).
    q, B = 150.0, 2.0
    f = pad("F", 0, 0, B, q=q)
    corner = QueryPoint("corner", B / 2, B / 2, 0.0)
    site = site_of([f], [sand()], [6.0], points=[corner])  # a 6 m borehole, no base
    r = analyse(site, with_map=False)
    centre_ref = 2 * 0.5611 * q * B * (1 - NU**2) / E
    corner_ref = 0.5611 * q * B * (1 - NU**2) / E
    assert 2 * float(elastic.halfspace_corner_factor(1.0)) == pytest.approx(1.1222, abs=1e-4)
    assert r.total[0, -1] == pytest.approx(centre_ref, rel=5e-3)
    assert r.points.total[0, -1] == pytest.approx(corner_ref, rel=5e-3)
    # the integration went far below the 30 m of the borehole, and said so
    assert r.influence_depth[0] > 100 * B
    assert any("below the deepest borehole" in w for w in r.warnings)


def test_default_settings_reproduce_the_rigid_half_space_value():
    # rigid = mean of the flexible settlement at the four characteristic points
    # (±0.37 B, ±0.37 L; Graßhoff 1955, from memory), each by corner superposition.
    q, B, L = 150.0, 2.0, 3.0
    f = pad("F", 0, 0, B, L, q=q, rigid=True)
    r = analyse(site_of([f], [sand()], [30.0]), with_map=False)
    ref = halfspace_point(q, B, L, 0.37 * L, 0.37 * B)
    assert r.total[0, -1] == pytest.approx(ref, rel=5e-3)


@pytest.mark.parametrize("thickness", [2.0, 6.0, 20.0])
def test_default_settings_reproduce_steinbrenner_on_a_finite_layer(thickness):
    # Steinbrenner (1934) F1, F2 (form as in Bowles 1996 §5-6): the centre of a flexible
    # square on a layer over a rigid base, within 0.5 % with the default settings.
    q, B = 100.0, 2.0
    f = pad("F", 0, 0, B, q=q)
    r = analyse(site_of([f], [sand(), ROCK], [thickness, 10.0]), with_map=False)
    ref = float(elastic.steinbrenner_centre_settlement(q, B, B, thickness, E, NU))
    assert r.total[0, -1] == pytest.approx(ref, rel=5e-3)
    assert r.influence_depth[0] == pytest.approx(thickness)  # stopped at the rigid top


# --------------------------------------------------------------------------- groups over clay


def grid(n=6, spacing=6.0, B=2.0, q=250.0):
    feet = []
    for i in range(n):
        for j in range(n):
            feet.append(pad(f"P{i}{j}", i * spacing, j * spacing, B, q=q, depth=1.0))
    return feet


def deep_clay_site(**settings):
    # a 6 × 6 grid of 2 m pads at 6 m, 250 kPa net, over normally consolidated clay
    # between 18 and 26 m (the scenario of the depth issue), rock below
    strata = [sand(50000.0, name="sand"), soft_clay(), ROCK]
    return site_of(
        grid(),
        strata,
        [18.0, 8.0, 10.0],
        water=1.0,
        design_life=1000.0,
        report_times=(1000.0,),
        **settings,
    )


def clay_reference(site, x, y):
    """scipy quad of e–log σ' strain under the superposed Boussinesq σz through the clay.

    Net pressure 250 − γ·D = 250 − 18 = 232 kPa (DESIGN §3: no fill weight given).
    """
    n = len(site.footings)
    loads = stress.Loads.rectangles(
        [f.x for f in site.footings],
        [f.y for f in site.footings],
        [f.width for f in site.footings],
        [f.length for f in site.footings],
        [0.0] * n,
        [232.0] * n,
        [f.depth for f in site.footings],
    )
    gw = 9.81

    def sig0(z):
        return 18.0 * 1.0 + (20.0 - gw) * 17.0 + (18.0 - gw) * (z - 18.0)

    def strain(z):
        ds = float(stress.vertical_stress(loads, np.array([[x, y, z]]), tolerance=0.0)[0])
        s0 = sig0(z)
        return float(cons.primary_strain(s0, ds, s0, 0.4, 0.06, 1.2))

    val, _ = integrate.quad(strain, 18.0, 26.0, epsabs=1e-10, limit=200)
    return val


def test_group_over_deep_clay_loses_no_clay_by_default():
    site = deep_clay_site()
    r = analyse(site, with_map=False, with_checks=False)
    np.testing.assert_allclose(r.net_pressure, 232.0)
    ids = r.ids
    for fid in ("P22", "P00"):  # a centre pad and the corner pad
        f = site.footing(fid)
        ref = clay_reference(site, f.x, f.y)
        got = r.consolidation[ids.index(fid), -1]
        assert got == pytest.approx(ref, rel=0.01), fid  # 1000 yr: U = 1 to 1e-6
    # the old default (stop where Δσz < 0.1 σ'v0, at most 10 widths) drops most of it
    cut = analyse(
        dataclasses.replace(
            site,
            analysis=dataclasses.replace(
                site.analysis, depth_rule=DepthRule.STRESS_RATIO, max_depth_widths=10.0
            ),
        ),
        with_map=False,
        with_checks=False,
    )
    i = ids.index("P00")
    assert cut.consolidation[i, -1] < 0.2 * r.consolidation[i, -1]
    # ... and says what it left out, footing by footing
    assert any("P00" in w and "left out" in w for w in cut.warnings)


def test_own_part_in_a_group_equals_the_footing_alone():
    # DESIGN §4 / issue: the "own" part is what the footing settles alone
    site = deep_clay_site()
    r = analyse(site, with_map=False, with_checks=False)
    i = r.ids.index("P22")
    alone = analyse(
        dataclasses.replace(site, footings=(site.footings[i],)), with_map=False, with_checks=False
    )
    assert r.own[i, -1] == pytest.approx(alone.total[0, -1], rel=5e-3)
    assert r.neighbours[i, -1] > 0.5 * r.own[i, -1]  # the group matters here


# --------------------------------------------------------------------------- the map


def test_map_equals_footings_at_their_points_and_is_continuous():
    # one engine: with the elastic method (no footing-specific own method) the map at a
    # footing's own point is the footing's value there (grid chosen through it)
    q, B = 150.0, 2.0
    feet = [pad("A", 0.0, 0.0, B, q=q), pad("B", 6.0, 0.0, B, q=q)]
    site = site_of(feet, [sand(), ROCK], [12.0, 5.0], map_spacing=0.5, map_margin=4.0)
    r = analyse(site, with_map=True, with_checks=False)
    m = r.map
    ix = int(np.argmin(np.abs(m.x - 0.0)))
    iy = int(np.argmin(np.abs(m.y - 0.0)))
    assert m.x[ix] == pytest.approx(0.0) and m.y[iy] == pytest.approx(0.0)
    assert m.settlement[iy, ix] == pytest.approx(r.total[0, -1], rel=5e-3)
    # decays smoothly outside the plan, never an artificial zero
    assert np.all(m.settlement > 0)
    row = m.settlement[iy]
    assert row[0] < row[ix]


def test_footing_results_do_not_depend_on_the_map_grid_or_query_points():
    # the stress engine's far field groups the points of one call, so the map's and
    # the query points' columns are summed apart from the footings': with the default
    # tolerance (treecode, 48 pads) the footings' settlements are the same to the last
    # bit whatever the map spacing and whether query points are asked for (a fact the
    # user relies on: changing the map must not change a checked value)
    feet = [pad(f"P{k}", 6.0 * (k % 8), 6.0 * (k // 8), 2.0, q=150.0 + 5 * k) for k in range(48)]
    runs = []
    for spacing, points in ((3.0, ()), (2.0, ()), (3.0, (QueryPoint("q", 50.0, 10.0),))):
        site = site_of(
            feet, [sand(), ROCK], [12.0, 5.0], points=points, map_spacing=spacing,
            stress_tolerance=1e-3,
        )  # fmt: skip
        runs.append(analyse(site, with_map=True, with_checks=False).total)
    assert np.array_equal(runs[0], runs[1]) and np.array_equal(runs[0], runs[2])


def test_settlement_is_continuous_across_a_footing_edge():
    # no pasted values: the surface settlement just inside and just outside the edge
    # of a flexible footing differ by less and less as the two points close in (a
    # continuous function; query points use the map's code path, owner −1)
    q, B = 150.0, 2.0
    gaps = []
    for d in (0.2, 0.02):
        pts = [QueryPoint("in", B / 2 - d, 0.0), QueryPoint("out", B / 2 + d, 0.0)]
        r = analyse(
            site_of([pad("A", 0, 0, B, q=q)], [sand(), ROCK], [12.0, 5.0], points=pts),
            with_map=False,
        )
        gaps.append(abs(r.points.total[0, -1] - r.points.total[1, -1]))
    assert gaps[1] < 0.2 * gaps[0]


def test_clay_with_no_bottom_matches_one_that_ends_far_below():
    # a clay that the boreholes never bottom out consolidates like one that ends far
    # below (Terzaghi's equation: the load drains through the top either way), within 1 %
    f = pad("F", 0, 0, 3.0, q=120.0, depth=1.0)
    kw = dict(water=1.0, report_times=(0.5, 5.0), design_life=50.0)
    a = analyse(site_of([f], [sand(40000.0), soft_clay()], [4.0, 20.0], **kw), with_map=False)
    deep = [sand(40000.0), soft_clay(drainage=Drainage.TOP), ROCK]
    b = analyse(site_of([f], deep, [4.0, 400.0, 5.0], **kw), with_map=False)
    np.testing.assert_allclose(a.consolidation[0], b.consolidation[0], rtol=0.01)
    assert a.consolidation[0, 0] > 0.1 * a.consolidation[0, -1]  # not an infinite path


# --------------------------------------------------------------------------- truncation


def test_truncation_bound_holds_against_a_run_ten_times_deeper():
    # the documented bound: what lies below the integration depth is at most
    # truncation_tolerance of the settlement; a run integrated 10× deeper (a rigid base
    # far below) must not add more than that
    q, B = 150.0, 2.0
    feet = [pad("A", 0, 0, B, q=q), pad("B", 8, 0, B, q=q, rigid=True)]
    r = analyse(site_of(feet, [sand()], [30.0]), with_map=False, with_checks=False)
    deep = 10.0 * float(np.max(r.influence_depth))
    r10 = analyse(site_of(feet, [sand(), ROCK], [deep, 10.0]), with_map=False, with_checks=False)
    tol = AnalysisSettings().truncation_tolerance
    assert np.all(r10.total[:, -1] >= r.total[:, -1] * (1 - 1e-6))
    assert np.all(r10.total[:, -1] - r.total[:, -1] <= tol * r.total[:, -1] * 1.001)


def test_tail_bound_is_an_upper_bound_of_the_half_space_tail():
    # Boussinesq point load: the displacement at depth Z on the axis of a point load P,
    # w = P(1+ν)(3−2ν)/(2πE Z) (Boussinesq 1885; Timoshenko & Goodier), is the settlement
    # of everything below Z; the bound 3(1+ν)P/(2πE Z) must exceed it
    from sitesettle.columns import GroundColumns
    from sitesettle.ground import Ground

    P, Z = 600.0, 40.0
    site = site_of([pad("F", 0, 0, 2.0, q=150.0)], [sand()], [30.0])
    gc = GroundColumns.build(Ground(site), np.array([[0.0, 0.0]]))
    b = colmod.tail_bound(
        np.array([Z]),
        P,
        0.0,
        gc,
        field_modulus_min=np.array([[E]]),
        creep=np.ones((1, 1)),
        undrained=False,
    )[0]
    exact = P * (1 + NU) * (3 - 2 * NU) / (2 * math.pi * E * Z)
    assert b == pytest.approx(3 * (1 + NU) * P / (2 * math.pi * E * Z), rel=1e-12)
    assert exact < b < 1.3 * exact


# --------------------------------------------------------------------------- strips


def test_uniform_strip_on_uniform_ground_has_no_tilt_and_sags():
    # symmetry (a fact of the problem): a uniformly loaded strip on uniform ground does
    # not tilt; a flexible strip settles more in the middle than at its ends
    f = pad("S", 0, 0, 1.0, 20.0, q=120.0, rotation=30.0)
    r = analyse(site_of([f], [sand(), ROCK], [15.0, 5.0]), with_map=False)
    assert r.tilt[0] == pytest.approx(0.0, abs=1e-6)
    st = r.station_total[0, :, -1]
    st = st[np.isfinite(st)]
    assert len(st) == 20
    np.testing.assert_allclose(st, st[::-1], rtol=1e-9)
    assert st[len(st) // 2] > st[0]
    line = r.checks.lines
    assert line is not None and line.ids[-1] == ("S",) and line.relative_deflection[-1] > 0
