"""Numerical robustness: awkward but valid geometry and parameters give finite, decided results.

Points exactly under edges and corners and at zero depth, footings of 0.1 m and
200 m, coincident loads, zero live load, a clay stratum present at one borehole
only, and extreme parameters (very stiff and very soft, OCR 1 and 10, cv tiny and
huge). Each result must be finite and every movement check decided (pass or fail,
no NaN utilisation). Check values are limits of the Boussinesq solution: at z → 0
the stress under a uniformly loaded area is q inside, q/2 on a smooth edge, q/4 at
a right-angled corner and 0 outside (a point on the boundary sees half, a quarter of
the plane loaded: Boussinesq 1885, as used by Holl 1940 and Newmark 1935).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from _sites import ROCK, rect
from _sites import clay as clay_base

from sitesettle import stress
from sitesettle.analysis import analyse
from sitesettle.errors import InputError
from sitesettle.io.footings import parse_footings_csv
from sitesettle.io.output import footing_table, pair_table
from sitesettle.options import Behaviour
from sitesettle.site import AnalysisSettings, Borehole, Interval, Site, Stratum

Q = 100.0  # kPa


def pad(fid, x, y, width, length=None, depth=1.0, load=None, live=0.0, rigid=False):
    """A rectangular footing centred on (x, y); default load: 150 kPa on its area."""
    length = width if length is None else length
    load = 150.0 * width * length if load is None else load
    return rect(fid, x, y, width, length, depth=depth, load=load, live=live, rigid=rigid)


SAND = Stratum(
    "sand",
    Behaviour.GRANULAR,
    unit_weight=18.0,
    saturated_unit_weight=20.0,
    poisson=0.3,
    youngs_modulus=30000.0,
)


def clay(**kw):
    return clay_base(**{"ocr": 2.0, "undrained_modulus": 10000.0, **kw})


def site_of(footings, strata, boreholes, **settings):
    base = dict(report_times=(0.1, 1.0, 10.0), design_life=10.0)
    base.update(settings)
    return Site(
        "robust",
        tuple(footings),
        tuple(strata),
        tuple(boreholes),
        water_depth=2.0,
        analysis=AnalysisSettings(**base),
    )


def layered(strata, thicknesses, x=0.0, y=0.0, bid="BH"):
    z, intervals = 0.0, []
    for s, h in zip(strata, thicknesses):
        intervals.append(Interval(s.name, z, z + h))
        z += h
    return Borehole(bid, x, y, tuple(intervals))


def assert_meaningful(results):
    """Finite settlements of every part; every pair decided; no NaN in the written tables."""
    for name in (
        "immediate",
        "consolidation",
        "secondary",
        "total",
        "tilt",
        "net_pressure",
        "influence_depth",
    ):
        value = np.asarray(getattr(results, name), dtype=float)
        assert np.all(np.isfinite(value)), name
    assert np.all(results.total >= -1e-12)  # a load never lifts its own footing here
    if results.checks is not None:
        pairs = results.checks.pairs
        assert np.all(np.isfinite(pairs.utilisation)) and pairs.passed.dtype == bool
        assert results.checks.footing_passed.dtype == bool
    table = footing_table(results)
    # a raft has no total limit under eurocode7 (EN 1997-1 Annex H): blank by design
    numbers = table.select_dtypes("number").drop(columns=["total_limit_mm"], errors="ignore")
    assert not numbers.isna().any().any(), numbers.columns[numbers.isna().any()].tolist()
    if results.checks is not None and len(results.checks.pairs.a):
        numbers = pair_table(results).select_dtypes("number")
        assert not numbers.isna().any().any()


# ------------------------------------------------------------------ stress at awkward points


def test_rectangle_stress_at_zero_depth_inside_edge_corner_outside():
    # Boussinesq surface limits (module docstring): q, q/2, q/4, 0.
    L, B = 4.0, 2.0
    x = np.array([0.0, L / 2, L / 2, L])
    y = np.array([0.0, 0.0, B / 2, 0.0])
    s = stress.rectangle_stress(Q, L, B, x, y, 0.0)
    np.testing.assert_allclose(s, [Q, Q / 2, Q / 4, 0.0], atol=1e-12)


def test_rectangle_stress_just_below_edges_and_corners_tends_to_the_surface_limits():
    # At z = 1e-9 m the continuous solution is within ~1e-9 relative of the z = 0
    # limits; 1e-6 q allows for rounding in atan2 near the singular line.
    L, B = 4.0, 2.0
    x = np.array([0.0, L / 2, L / 2, -L / 2])
    y = np.array([0.0, 0.0, B / 2, -B / 2])
    s = stress.rectangle_stress(Q, L, B, x, y, 1e-9)
    assert np.all(np.isfinite(s))
    np.testing.assert_allclose(s, [Q, Q / 2, Q / 4, Q / 4], atol=1e-6 * Q)


def test_corner_factor_of_a_square_at_depth_equal_to_its_side():
    # Newmark (1935) / Fadum (1948) influence factor for m = n = 1: 0.1752.
    s = stress.rectangle_stress(Q, 2.0, 2.0, 1.0, 1.0, 2.0)
    assert s / Q == pytest.approx(0.1752, abs=5e-5)


def test_circle_stress_at_the_edge_and_centre_at_zero_and_tiny_depth():
    s0 = stress.circle_stress(Q, 1.5, np.array([0.0, 1.5, 3.0]), 0.0)
    np.testing.assert_allclose(s0, [Q, Q / 2, 0.0], atol=1e-9)
    s = stress.circle_stress(Q, 1.5, np.array([0.0, 1.5, 3.0]), 1e-9)
    assert np.all(np.isfinite(s))
    np.testing.assert_allclose(s, [Q, Q / 2, 0.0], atol=1e-6 * Q)


@pytest.mark.parametrize("size", [0.1, 200.0])
def test_superposed_stress_of_tiny_and_huge_footings_is_finite(size):
    # Just below the base (z = 1e-9 B): q under the centre, q/4 under a corner, q/2
    # under an edge (surface limits, module docstring). Under the centre at z = B:
    # 4 corner terms of m = n = 1/2 → 4 × 0.0840 = 0.336 (Newmark 1935 table,
    # m = n = 0.5: 0.0840; 2e-3 covers the table's 3 decimals); the same at any scale.
    loads = stress.Loads.rectangles([0.0], [0.0], [size], [size], [0.0], [Q], [0.0])
    eps = 1e-9 * size
    pts = np.array(
        [[0.0, 0.0, eps], [size / 2, size / 2, eps], [0.0, 0.0, size], [size / 2, 0.0, eps]]
    )
    s = stress.vertical_stress(loads, pts, tolerance=0.0)
    assert np.all(np.isfinite(s))
    np.testing.assert_allclose(s[[0, 1, 3]], [Q, Q / 4, Q / 2], rtol=1e-6)
    assert s[2] / Q == pytest.approx(0.336, abs=2e-3)


def test_superposed_stress_at_and_just_below_the_loaded_plane():
    # The documented convention of sitesettle.stress: a point at or above a load's
    # plane (z <= depth) gets nothing from it; just below, the stress tends to the
    # surface limit of the single-load kernel (q inside, q/4 under a corner).
    loads = stress.Loads.rectangles([0.0], [0.0], [2.0], [2.0], [0.0], [Q], [1.0])
    at = np.array([[0.0, 0.0, 1.0], [1.0, 1.0, 1.0]])
    np.testing.assert_array_equal(stress.vertical_stress(loads, at, tolerance=0.0), [0.0, 0.0])
    below = at + [0.0, 0.0, 1e-9]
    s = stress.vertical_stress(loads, below, tolerance=0.0)
    np.testing.assert_allclose(s, [Q, Q / 4], atol=1e-6 * Q)


def test_coincident_loads_just_add():
    # Superposition (linear elasticity): two equal loads in one place give twice one.
    one = stress.Loads.rectangles([3.0], [1.0], [2.0], [3.0], [30.0], [Q], [0.5])
    two = stress.Loads.concat(one, one)
    pts = np.array([[3.0, 1.0, 0.5], [4.0, 1.5, 0.5], [3.0, 1.0, 2.5], [9.0, 9.0, 4.0]])
    np.testing.assert_allclose(
        stress.vertical_stress(two, pts, tolerance=0.0),
        2 * stress.vertical_stress(one, pts, tolerance=0.0),
        rtol=1e-12,
        atol=1e-12,
    )


def test_the_reader_refuses_coincident_footings():
    text = "id,x,y,width,depth,dead_load\nA,0,0,2,1,400\nB,0,0,2,1,400\n"
    with pytest.raises(InputError, match=r'row 3.*"B" overlaps footing "A"'):
        parse_footings_csv(text)


# ------------------------------------------------------------------ whole analyses


@pytest.mark.parametrize("width", [0.1, 200.0])
def test_tiny_and_huge_footings_give_finite_settlements(width):
    f = pad("F", 0.0, 0.0, width)
    g = pad("G", 3 * width, 0.0, width)
    site = site_of([f, g], [SAND, ROCK], [layered([SAND, ROCK], [60.0, 5.0])])
    r = analyse(site, with_map=False)
    assert_meaningful(r)
    assert np.all(r.total[:, -1] > 0)


def test_zero_live_load_and_zero_load_footing():
    # A footing with no live load, and a light one whose gross pressure is below the
    # excavated overburden (net pressure ≤ 0 → no settlement of its own).
    f = pad("F", 0.0, 0.0, 2.0, live=0.0)
    light = pad("L", 8.0, 0.0, 2.0, load=1e-6, live=0.0)
    site = site_of([f, light], [SAND, ROCK], [layered([SAND, ROCK], [30.0, 5.0])])
    r = analyse(site, with_map=False)
    assert_meaningful(r)
    assert r.total[0, -1] > 0


def test_clay_present_at_one_borehole_only():
    # Clay of zero thickness at two boreholes: the footing beside BH1 settles by
    # consolidation; D lies outside the boreholes' hull, nearest to BH3 (no clay),
    # which then applies (docs/input.md, "How the ground is built"): no consolidation.
    cl = clay()
    bh1 = layered([SAND, cl, ROCK], [3.0, 4.0, 5.0], 0.0, 0.0, "BH1")
    bh2 = layered([SAND, ROCK], [7.0, 5.0], 20.0, 0.0, "BH2")
    bh3 = layered([SAND, ROCK], [7.0, 5.0], 10.0, 15.0, "BH3")
    fs = [
        pad("A", 1.0, 1.0, 2.0),
        pad("B", 10.0, 5.0, 2.0),
        pad("C", 17.0, 2.0, 2.0),
        pad("D", 10.0, 20.0, 2.0),
    ]
    site = site_of(fs, [SAND, cl, ROCK], [bh1, bh2, bh3])
    r = analyse(site, with_map=False)
    assert_meaningful(r)
    assert r.consolidation[0, -1] > r.consolidation[3, -1] >= 0.0
    assert r.consolidation[3, -1] == pytest.approx(0.0, abs=1e-9)  # D: no clay at BH3


EXTREMES = {
    "very stiff sand": dict(sand=dict(youngs_modulus=2e6)),
    "very soft sand": dict(sand=dict(youngs_modulus=500.0)),
    "normally consolidated clay (OCR 1)": dict(clay=dict(ocr=1.0)),
    "heavily overconsolidated clay (OCR 10)": dict(clay=dict(ocr=10.0)),
    "tiny cv": dict(clay=dict(consolidation_coefficient=1e-4)),
    "huge cv": dict(clay=dict(consolidation_coefficient=1e4)),
    "very stiff clay": dict(
        clay=dict(compression_index=1e-3, recompression_index=1e-4, undrained_modulus=1e6)
    ),
    "very soft clay": dict(
        clay=dict(
            compression_index=2.0, recompression_index=0.4, void_ratio=4.0, undrained_modulus=500.0
        )
    ),
    "secondary compression": dict(clay=dict(secondary_index=0.05)),
}


@pytest.mark.parametrize("case", list(EXTREMES), ids=list(EXTREMES))
def test_extreme_but_valid_parameters(case):
    kw = EXTREMES[case]
    sand = Stratum(
        "sand",
        Behaviour.GRANULAR,
        unit_weight=18.0,
        saturated_unit_weight=20.0,
        poisson=0.3,
        **{"youngs_modulus": 30000.0, **kw.get("sand", {})},
    )
    cl = clay(**kw.get("clay", {}))
    fs = [pad("A", 0.0, 0.0, 2.0), pad("B", 5.0, 0.0, 2.5), pad("C", 0.0, 5.0, 1.5)]
    site = site_of(fs, [sand, cl, ROCK], [layered([sand, cl, ROCK], [4.0, 6.0, 5.0])])
    r = analyse(site, with_map=False)
    assert_meaningful(r)
    assert np.all(r.total[:, -1] > 0)
    # primary consolidation never decreases with time (Terzaghi's degree of consolidation)
    assert np.all(np.diff(r.consolidation, axis=1) >= -1e-12)


def test_map_over_awkward_plan_is_finite():
    # The settlement map includes points exactly on footing edges and corners (grid
    # lines through them): every value finite.
    fs = [pad("A", 0.0, 0.0, 2.0), pad("B", 4.0, 0.0, 2.0)]
    site = site_of(
        fs, [SAND, ROCK], [layered([SAND, ROCK], [20.0, 5.0])], map_spacing=1.0, map_margin=1.0
    )
    r = analyse(site)
    assert r.map is not None and np.all(np.isfinite(r.map.settlement))
    assert_meaningful(r)
    assert math.isfinite(float(np.max(r.map.settlement)))


@pytest.mark.parametrize("spacing, margin", [(0.0, 1000.0), (1e-3, 5.0)])
def test_map_grid_size_is_bounded(spacing, margin):
    from sitesettle.mapping import GRID_MAX_LINES, default_grid

    x, y = default_grid([pad("A", 0.0, 0.0, 2.0), pad("B", 30.0, 10.0, 2.0)], spacing, margin)
    assert len(x) <= GRID_MAX_LINES and len(y) <= GRID_MAX_LINES  # bounded cost (a design choice)
    assert x[0] <= -margin + 1e-9 and x[-1] >= 31.0 + margin - 1e-9  # the margin is still covered
