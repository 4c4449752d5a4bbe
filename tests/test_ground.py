"""Ground model: interpolated strata, hull flags, water table, in-situ stress, cone resistance."""

import math

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from sitesettle.ground import Ground, PlanInterpolator, cone_resistance_at, stratigraphy_at
from sitesettle.options import Behaviour
from sitesettle.site import WATER_UNIT_WEIGHT, Borehole, Interval, Site, Sounding, Stratum

SAND = Stratum(
    "sand", Behaviour.GRANULAR, unit_weight=18.0, saturated_unit_weight=20.0, youngs_modulus=2e4
)
CLAY = Stratum("clay", Behaviour.COHESIVE, unit_weight=16.0, saturated_unit_weight=17.0)
ROCK = Stratum("rock", Behaviour.RIGID, unit_weight=23.0, saturated_unit_weight=23.0)
STRATA = (SAND, CLAY, ROCK)


def bh(bid, x, y, sand, clay, end=None, water=None, **over):
    """A borehole with sand 0–sand, clay sand–clay and rock below (to ``end``)."""
    iv = [
        Interval("sand", 0.0, sand, over),
        Interval("clay", sand, clay),
        Interval("rock", clay, end or clay + 1),
    ]
    return Borehole(bid, x, y, tuple(i for i in iv if i.bottom > i.top), water)


def site(*boreholes, water=math.inf, soundings=()):
    return Site("t", (), STRATA, tuple(boreholes), soundings=soundings, water_depth=water)


THREE = site(bh("A", 0, 0, 2.0, 6.0), bh("B", 10, 0, 4.0, 9.0), bh("C", 0, 10, 3.0, 12.0))


def plane(points, values, x, y):
    """Independent check: the plane through three (x, y, v) points, solved with numpy."""
    A = np.column_stack([np.asarray(points, float), np.ones(3)])
    a, b, c = np.linalg.solve(A, values)
    return a * x + b * y + c


def test_each_borehole_is_reproduced_at_its_location():
    g = Ground(THREE)
    for b in THREE.boreholes:
        col = g.column(b.x, b.y)
        np.testing.assert_allclose(col.tops, [iv.top for iv in b.intervals], atol=1e-12)
        assert not col.outside_hull


@pytest.mark.parametrize("x, y", [(3.0, 3.0), (1.0, 0.5), (5.0, 5.0), (0.0, 4.0)])
def test_linear_between_three_boreholes(x, y):
    g = Ground(THREE)
    pts = [(0, 0), (10, 0), (0, 10)]
    expected = [0.0, plane(pts, [2.0, 4.0, 3.0], x, y), plane(pts, [6.0, 9.0, 12.0], x, y)]
    np.testing.assert_allclose(g.column(x, y).tops, expected, rtol=1e-12)


def test_outside_the_hull_takes_the_nearest_borehole_and_is_flagged():
    g = Ground(THREE)
    col = g.column(12.0, -1.0)  # nearest: B
    assert col.outside_hull
    np.testing.assert_allclose(col.tops, [0.0, 4.0, 9.0])
    np.testing.assert_array_equal(
        g.outside_hull([5.0, 6.0, 2.0, -0.1], [5.0, 6.0, 2.0, 1.0]), [False, True, False, True]
    )  # (5,5) lies on the hull edge


def test_one_borehole_everywhere():
    g = Ground(site(bh("A", 5, 5, 2.0, 6.0)))
    np.testing.assert_allclose(g.column(100, -40).tops, [0.0, 2.0, 6.0])
    assert g.column(100, -40).outside_hull and not g.column(5, 5).outside_hull


def test_two_boreholes_linear_along_their_line():
    g = Ground(site(bh("A", 0, 0, 2.0, 6.0), bh("B", 10, 10, 4.0, 10.0)))
    # the point (5, 5) is mid-way: the mean; (10, 0) projects onto (5, 5) too
    np.testing.assert_allclose(g.column(5, 5).tops, [0.0, 3.0, 8.0])
    np.testing.assert_allclose(g.column(10, 0).tops, [0.0, 3.0, 8.0])
    np.testing.assert_allclose(g.column(20, 20).tops, [0.0, 4.0, 10.0])  # beyond B: B
    assert not g.column(5, 5).outside_hull and g.column(10, 0).outside_hull


def test_collinear_boreholes_use_the_line_rule():
    g = Ground(site(bh("A", 0, 0, 2.0, 6.0), bh("B", 10, 0, 4.0, 10.0), bh("C", 20, 0, 2.0, 8.0)))
    np.testing.assert_allclose(g.column(15, 3).tops, [0.0, 3.0, 9.0])
    assert g.column(15, 3).outside_hull and not g.column(15, 0).outside_hull


def test_absent_stratum_has_zero_thickness_where_it_would_sit():
    s = site(
        Borehole("A", 0, 0, (Interval("sand", 0, 3), Interval("rock", 3, 5))),
        bh("B", 10, 0, 2.0, 6.0),
        bh("C", 0, 10, 2.0, 6.0),
    )
    col = Ground(s).column(0, 0)
    np.testing.assert_allclose(col.tops, [0.0, 3.0, 3.0])
    assert col.thicknesses[1] == 0.0
    assert col.index_at(3.0) == 2  # on a boundary: the stratum below, never a zero-thickness one


def test_stratum_below_a_short_borehole_is_estimated_from_the_others_but_not_above_its_end():
    short = Borehole(
        "A", 0, 0, (Interval("sand", 0, 2), Interval("clay", 2, 5))
    )  # ends in clay at 5 m
    s = site(short, bh("B", 10, 0, 4.0, 9.0), bh("C", 0, 10, 3.0, 3.5))
    tops = Ground(s).column(0, 0).tops
    # rock at A: interpolated from B (9 m) and C (3.5 m) on the B–C line; A projects mid-way: 6.25 m
    assert tops[2] == pytest.approx(6.25)
    s2 = site(short, bh("B", 10, 0, 4.0, 4.5), bh("C", 0, 10, 3.0, 3.5))
    assert Ground(s2).column(0, 0).tops[2] == pytest.approx(5.0)  # never above the borehole's end


def test_stratum_no_borehole_reached_starts_at_infinity():
    s = site(
        Borehole("A", 0, 0, (Interval("sand", 0, 4),)),
        Borehole("B", 9, 0, (Interval("sand", 0, 5),)),
    )
    col = Ground(s).column(3, 0)
    assert col.tops[1] == math.inf and col.base_depth == math.inf
    assert col.total_stress(10.0) == pytest.approx(180.0)  # 10 m of sand at 18 kN/m³


def test_strata_stay_ordered_on_random_sites():
    rng = np.random.default_rng(1)
    for _ in range(20):
        n = rng.integers(3, 8)
        holes = []
        for i in range(n):
            t = np.cumsum(rng.uniform(0, 5, 3))
            layers = [
                Interval(nm, a, b)
                for nm, a, b in zip(["sand", "clay", "rock"], [0, t[0], t[1]], t)
                if b > a
            ]
            holes.append(Borehole(str(i), *rng.uniform(0, 50, 2), tuple(layers)))
        tops = Ground(site(*holes)).tops(rng.uniform(-20, 70, 200), rng.uniform(-20, 70, 200))
        assert (
            tops.shape == (200, 3)
            and np.all(np.diff(tops, axis=1) >= 0)
            and np.all(tops[:, 0] == 0)
        )


def test_vectorised_tops_match_single_columns():
    g = Ground(THREE)
    x, y = np.array([[1.0, 3.0], [7.0, 20.0]]), np.array([[1.0, 2.0], [1.0, 3.0]])
    t = g.tops(x, y)
    assert t.shape == (2, 2, 3)
    np.testing.assert_allclose(t[1, 0], g.column(7.0, 1.0).tops)


def test_interpolator_nan_in_nan_out():
    out = PlanInterpolator([[0, 0], [1, 0], [0, 1]])(
        np.array([1.0, 2.0, 3.0]), [np.nan, 0.0], [0.0, 0.0]
    )
    assert np.isnan(out[0]) and out[1] == pytest.approx(1.0)


# --------------------------------------------------------------------------- water and stress
def test_in_situ_stress_with_water_inside_a_stratum():
    # sand 0–4 m (18 / 20 kN/m³), clay 4–10 m (γsat 17), water at 2 m. Hand calculation:
    # z = 2: σ = 2·18 = 36, u = 0; z = 4: σ = 36 + 2·20 = 76, u = 2·9.81;
    # z = 6: σ = 76 + 2·17 = 110, u = 4·9.81 = 39.24, σ' = 70.76 (common practice, γw = 9.81)
    col = Ground(site(bh("A", 0, 0, 4.0, 10.0), water=2.0)).column(0, 0)
    z = np.array([0.0, 1.0, 2.0, 3.0, 4.0, 6.0])
    np.testing.assert_allclose(col.total_stress(z), [0, 18, 36, 56, 76, 110], rtol=1e-12)
    np.testing.assert_allclose(
        col.pore_pressure(z), WATER_UNIT_WEIGHT * np.array([0, 0, 0, 1, 2, 4]), rtol=1e-12
    )
    assert col.effective_stress(6.0) == pytest.approx(110 - 4 * 9.81, rel=1e-12)


def test_stress_shapes_and_nan():
    col = Ground(site(bh("A", 0, 0, 4.0, 10.0), water=2.0)).column(0, 0)
    assert np.ndim(col.effective_stress(3.0)) == 0
    assert col.effective_stress(np.ones((2, 3))).shape == (2, 3)
    out = col.effective_stress(np.array([np.nan, -1.0, 3.0]))
    assert np.isnan(out[0]) and np.isnan(out[1]) and out[2] == pytest.approx(56 - 9.81)
    np.testing.assert_array_equal(
        col.index_at(np.array([np.nan, -1, 0, 3.99, 4, 50])), [-1, -1, 0, 0, 1, 2]
    )


def test_no_water_table():
    col = Ground(site(bh("A", 0, 0, 4.0, 10.0))).column(0, 0)
    assert col.water_depth == math.inf and col.pore_pressure(8.0) == 0.0
    assert col.total_stress(8.0) == pytest.approx(4 * 18 + 4 * 16)


def test_rigid_base_depth():
    col = Ground(THREE).column(0, 0)
    assert col.base_depth == 6.0 and col.bottoms[-1] == math.inf


def test_borehole_water_depths_interpolated_site_value_where_missing():
    s = site(
        bh("A", 0, 0, 2, 6, water=1.0),
        bh("B", 10, 0, 2, 6, water=3.0),
        bh("C", 0, 10, 2, 6),
        water=5.0,
    )
    g = Ground(s)
    assert g.column(5, 0).water_depth == pytest.approx(2.0)  # mid-way A–B, linear
    assert g.column(0, 10).water_depth == pytest.approx(5.0)  # C has none: the site value
    s2 = site(bh("A", 0, 0, 2, 6, water=1.0), bh("B", 10, 0, 2, 6), bh("C", 0, 10, 2, 6))
    assert Ground(s2).column(0, 10).water_depth == pytest.approx(1.0)  # only A: everywhere


def test_interval_overrides_from_the_nearest_borehole_that_gives_them():
    s = site(
        bh("A", 0, 0, 2, 6, spt_n=10.0), bh("B", 10, 0, 2, 6, spt_n=30.0), bh("C", 0, 10, 2, 6)
    )
    g = Ground(s)
    assert g.column(1, 9).strata[0].spt_n == 10.0  # C is nearest but gives none: A
    assert g.column(9, 1).strata[0].spt_n == 30.0
    assert g.column(9, 1).strata[0].youngs_modulus == 2e4 and g.column(9, 1).strata[1] == CLAY


# --------------------------------------------------------------------------- cone resistance
def test_cone_resistance_nearest_sounding_linear_in_depth():
    c1 = Sounding("C1", 0, 0, np.array([0.5, 1.0, 2.0]), np.array([2000.0, 4000.0, 8000.0]))
    c2 = Sounding("C2", 20, 0, np.array([0.5, 3.0]), np.array([500.0, 1000.0]))
    s = site(bh("A", 0, 0, 2, 6), soundings=(c1, c2))
    g = Ground(s)
    np.testing.assert_allclose(
        g.cone_resistance(1.0, 0.0, [0.2, 0.75, 1.5, 5.0]), [2000, 3000, 6000, 8000]
    )
    np.testing.assert_allclose(g.cone_resistance([1.0, 15.0], [0.0, 0.0], 1.75), [7000, 750])
    assert np.isnan(g.cone_resistance(0, 0, np.nan))
    assert g.sounding_end(18, 0) == 3.0 and g.nearest_sounding(18, 0).id == "C2"
    np.testing.assert_allclose(cone_resistance_at(s, 0, 0, 1.5), 6000)


def test_no_soundings_gives_nan():
    assert np.isnan(Ground(THREE).cone_resistance(0, 0, 1.0))


def test_stratigraphy_at_shortcut():
    np.testing.assert_allclose(stratigraphy_at(THREE, 0, 0).tops, [0.0, 2.0, 6.0])


def test_cone_resistance_nan_position_gives_nan():
    c1 = Sounding("C1", 0, 0, np.array([0.5, 1.0]), np.array([2000.0, 4000.0]))
    g = Ground(site(bh("A", 0, 0, 2, 6), soundings=(c1,)))
    out = g.cone_resistance([np.nan, 0.0], 0.0, 1.0)
    assert np.isnan(out[0]) and out[1] == 4000.0
    assert np.isnan(g.sounding_end(np.nan, 0.0))


# --------------------------------------------------------------------------- laws
@settings(max_examples=30, deadline=None)
@given(
    dx=st.floats(-1e4, 1e4),
    dy=st.floats(-1e4, 1e4),
    px=st.floats(-5, 15),
    py=st.floats(-5, 15),
)
def test_translating_the_site_changes_nothing(dx, dy, px, py):
    def moved(b):
        return Borehole(b.id, b.x + dx, b.y + dy, b.intervals, b.water_depth)

    d = sorted(math.hypot(px - b.x, py - b.y) for b in THREE.boreholes)
    assume(d[1] - d[0] > 1e-6)  # outside the hull: a tie between nearest boreholes is arbitrary
    a = Ground(THREE).column(px, py)
    b = Ground(site(*[moved(h) for h in THREE.boreholes])).column(px + dx, py + dy)
    # coordinates up to 1e4 m lose ~1e-12 relative in the barycentric solve → atol 1e-8 m
    np.testing.assert_allclose(a.tops, b.tops, atol=1e-8)


@settings(max_examples=20, deadline=None)
@given(order=st.permutations([0, 1, 2]), px=st.floats(-5, 15), py=st.floats(-5, 15))
def test_borehole_order_changes_nothing(order, px, py):
    # outside the hull the nearest borehole is used: on a tie (equal distances) the
    # choice is arbitrary, so ties are left out
    d = sorted(math.hypot(px - b.x, py - b.y) for b in THREE.boreholes)
    assume(d[1] - d[0] > 1e-6)
    a = Ground(THREE).tops(px, py)
    b = Ground(site(*[THREE.boreholes[i] for i in order])).tops(px, py)
    np.testing.assert_allclose(a, b, atol=1e-12)


def test_columns_match_column_one_by_one():
    s = site(
        bh("A", 0, 0, 2, 6, water=1.0, spt_n=10.0),
        bh("B", 10, 0, 4, 9, water=3.0, spt_n=30.0),
        bh("C", 0, 10, 3, 12, water=2.0),
    )
    g = Ground(s)
    xs, ys = np.array([1.0, 8.0, 20.0]), np.array([1.0, 1.0, 5.0])
    for col, x, y in zip(g.columns(xs, ys), xs, ys):
        one = g.column(x, y)
        np.testing.assert_array_equal(col.tops, one.tops)
        assert (col.water_depth, col.outside_hull, col.strata) == (
            one.water_depth,
            one.outside_hull,
            one.strata,
        )
    assert g.columns(xs, ys)[2].water_depth == 3.0  # outside: nearest borehole B
