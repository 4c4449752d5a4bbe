"""Dense polygon outlines: the compiled edge sum and the chain tree (sitesettle.stress).

References: the numpy edge sum of METHODS.md §1.6 (kept as the plain reference,
``_polygon_sum_reference`` / ``_polygon_dense``); the Boussinesq (1885) point-load
kernel integrated by scipy quadrature (an independent check); the closed-form
centreline stress of a uniformly loaded circle, σz/q = 1 − [1 + (a/z)²]^(−3/2)
(direct integration of Boussinesq 1885; METHODS.md §1.5).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate

from sitesettle import stress as S


def star(n, rng, r0=5.0, wobble=0.4):
    """A random star-shaped (hence simple) polygon of n vertices about the origin."""
    th = np.sort(rng.uniform(0, 2 * math.pi, n))
    r = r0 * (1 + wobble * rng.uniform(-1, 1, n))
    return np.column_stack([r * np.cos(th), r * np.sin(th)])


def wavy(n, amp, wavelength, a=12.0, b=7.0, x0=0.0, y0=0.0):
    """An ellipse a × b [m] whose edge carries a wave of amplitude ``amp`` [m]."""
    th = np.arange(n) * 2 * math.pi / n
    per = math.pi * (3 * (a + b) - math.sqrt((3 * a + b) * (a + 3 * b)))  # Ramanujan
    k = max(1, round(per / wavelength))
    r = 1 + amp / math.hypot(a, b) * np.sin(k * th)
    return np.column_stack([x0 + a * r * np.cos(th), y0 + b * r * np.sin(th)])


def boussinesq_quad(outline, px, py, z):
    """σz/q by scipy dblquad of (3/2π) z³/R⁵ over a star-shaped outline, one fan
    triangle (origin, edge) at a time in polar coordinates about the origin."""
    total = 0.0
    for a, b in zip(outline, np.roll(outline, -1, axis=0)):
        t0, t1 = math.atan2(a[1], a[0]), math.atan2(b[1], b[0])
        if t1 < t0:
            t1 += 2 * math.pi
        e = b - a

        def radius(t, a=a, e=e):  # the edge's line along the ray of angle t
            c, s_ = math.cos(t), math.sin(t)
            return (a[0] * e[1] - a[1] * e[0]) / (c * e[1] - s_ * e[0])

        def f(r, t):
            x, y = r * math.cos(t) - px, r * math.sin(t) - py
            return 1.5 / math.pi * z**3 / (x * x + y * y + z * z) ** 2.5 * r

        total += integrate.dblquad(f, t0, t1, 0.0, radius, epsabs=1e-13, epsrel=1e-11)[0]
    return total


# --- the compiled exact sum -------------------------------------------------


@pytest.mark.parametrize("seed", range(6))
def test_compiled_edge_sum_equals_numpy_reference(seed):
    # reference: the plain numpy edge sum (METHODS.md §1.6), kept unchanged
    rng = np.random.default_rng(seed)
    poly = star(int(rng.integers(3, 300)), rng)
    if seed % 2:
        poly = poly[::-1]  # clockwise
    px, py = rng.uniform(-9, 9, 400), rng.uniform(-9, 9, 400)
    w = rng.choice([0.0, 1e-6, 0.3, 2.0, 15.0], 400)
    px[:5], py[:5] = poly[:5, 0], poly[:5, 1]  # at vertices
    ref = S._polygon_sum_reference(poly, px, py, w)
    got = S._polygon_sum(poly, px, py, w)
    for a, b in zip(got, ref):
        assert np.max(np.abs(a - b)) <= 1e-12 * np.max(np.abs(b))


def test_exact_dense_equals_numpy_dense_on_several_polygons():
    # reference: the numpy loop over flattened edges (_edges + _polygon_dense), depths differ
    rng = np.random.default_rng(11)
    outs = [star(n, rng) + rng.uniform(-20, 20, 2) for n in (3, 17, 250, 2500)]
    ld = S.Loads.polygons(outs, rng.uniform(-50, 200, 4), [0.0, 0.5, 1.0, 1.5])
    pts = rng.uniform([-30, -30, 0.0], [30, 30, 20.0], (3000, 3))
    got = S.stress_sums(ld, pts, tolerance=0)
    ref = S._polygon_dense(S._edges(ld, np.arange(4)), pts[:, 0], pts[:, 1], pts[:, 2])
    for a, b in zip(got, ref):
        assert np.max(np.abs(a - b)) <= 1e-12 * np.max(np.abs(b))


def test_nan_points_and_points_above_the_plane():
    # as the numpy reference: nothing above the loaded plane, NaN from a NaN plan coordinate
    poly = star(50, np.random.default_rng(3))
    ld = S.Loads.polygons([poly], 100.0, 2.0)
    px, py, pz = np.array([0.0, np.nan, 0.0]), np.zeros(3), np.array([1.0, 3.0, np.nan])
    s, t = S._exact_dense(ld, [0], px, py, pz)
    rs, rt = S._polygon_dense(S._edges(ld, [0]), px, py, pz)
    assert s[0] == 0.0 and t[0] == 0.0  # above the loaded plane (depth 2 m)
    assert np.isnan(s[1]) and np.isnan(t[1])
    np.testing.assert_array_equal(np.isnan(s), np.isnan(rs))
    np.testing.assert_array_equal(np.isnan(t), np.isnan(rt))
    # stress_sums and own_stress give NaN wherever a coordinate is NaN
    pts = np.column_stack([px, py, pz])
    assert np.isnan(S.stress_sums(ld, pts)[0][1:]).all()
    assert np.isnan(S.own_stress(ld, pts, [0, 0, 0])[0][1:]).all()


def test_dense_circle_equals_closed_form_centreline():
    # Boussinesq (1885) integrated over a circle: σz/q = 1 − (1 + (a/z)²)^(−3/2) (METHODS §1.5)
    a, n = 3.0, 20_000
    th = np.arange(n) * 2 * math.pi / n
    # equal-area polygon: radius scaled so the n-gon has the circle's area
    rr = a * math.sqrt(2 * math.pi / (n * math.sin(2 * math.pi / n)))
    poly = np.column_stack([rr * np.cos(th), rr * np.sin(th)])
    z = np.array([0.5, 1.0, 3.0, 6.0, 15.0])
    got = S.polygon_stress(1.0, poly, 0.0, 0.0, z)
    want = 1 - (1 + (a / z) ** 2) ** -1.5
    # discretisation: the n-gon differs from the circle by ≈ (2π²/3n²)·a of radius, ~1e-7 a
    assert got == pytest.approx(want, abs=1e-8)
    # off the axis: the project's circle kernel (its quadrature is accurate to 1e-8 q)
    r = np.array([1.0, 2.9, 3.1, 5.0])
    got = S.polygon_stress(1.0, poly, r, 0.0, 1.5)
    assert got == pytest.approx(S.circle_stress(1.0, a, r, 1.5), abs=2e-8)


def test_polygon_equals_scipy_quadrature():
    # independent reference: scipy dblquad of the Boussinesq (1885) point-load kernel
    rng = np.random.default_rng(5)
    poly = star(40, rng, wobble=0.2)
    for px, py, z in ((0.3, -0.2, 1.0), (4.0, 1.0, 0.7), (8.0, 3.0, 2.5)):
        ref = boussinesq_quad(poly, px, py, z)
        assert float(S.polygon_stress(1.0, poly, px, py, z)) == pytest.approx(ref, abs=2e-9)


# --- the chain tree ------------------------------------------------------------


@given(
    px=st.floats(-12.0, 12.0),
    py=st.floats(-8.0, 8.0),
    z=st.floats(0.05, 20.0),
)
@settings(max_examples=60, deadline=None)
def test_chain_bounds_bound_the_box_integral(px, py, z):
    # reference: scipy dblquad of the Boussinesq kernels over the box (Boussinesq 1885)
    ax, ay, t = 1.0, -2.0, 0.6
    tx, ty = math.cos(t), math.sin(t)
    x0, x1, hlo, hhi = -0.01, 3.0, -0.02, 0.05

    def pt(u, v):
        return ax + u * tx - v * ty, ay + u * ty + v * tx

    def ks(v, u):
        x, y = pt(u, v)
        r2 = (x - px) ** 2 + (y - py) ** 2 + z * z
        return 1.5 / math.pi * z**3 / r2**2.5

    def kt(v, u):
        x, y = pt(u, v)
        r2 = (x - px) ** 2 + (y - py) ** 2 + z * z
        return z / math.pi / r2**1.5

    bs, bt = S._chain_bounds(px, py, z, ax, ay, tx, ty, x0, x1, hlo, hhi)
    es = integrate.dblquad(ks, x0, x1, hlo, hhi, epsabs=1e-14, epsrel=1e-9)[0]
    et = integrate.dblquad(kt, x0, x1, hlo, hhi, epsabs=1e-14, epsrel=1e-9)[0]
    assert es <= bs * (1 + 1e-6) + 1e-14
    assert et <= bt * (1 + 1e-6) + 1e-14


@given(
    n=st.integers(2048, 12_000),
    amp=st.floats(0.0, 0.2),
    wavelength=st.floats(0.5, 5.0),
    budget=st.sampled_from([1e-6, 1e-5, 1e-3, 0.1]),
    seed=st.integers(0, 2**31),
)
@settings(max_examples=15, deadline=None)
def test_chain_tree_error_within_its_bound(n, amp, wavelength, budget, seed):
    # reference: the exact compiled edge sum (equal to the numpy sum, tests above)
    rng = np.random.default_rng(seed)
    poly = wavy(n, amp, wavelength)
    if seed % 2:
        poly = poly[::-1]
    pts = rng.uniform([-16, -11, 0.0], [16, 11, 25.0], (300, 3))
    pts[:20, 2] = rng.uniform(0, 0.05, 20)  # shallow points, where the bound is tight
    o = S._Outline(poly)
    sz, tt, stats = S._chain_sum(o, 100.0 * o.sign, 0.0, budget, pts[:, 0], pts[:, 1], pts[:, 2])
    ex_s, ex_t = S._rings_sum([o], [100.0 * o.sign], [0.0], pts[:, 0], pts[:, 1], pts[:, 2])
    assert np.max(np.abs(sz - ex_s)) <= budget * (1 + 1e-9) + 1e-11
    assert np.max(np.abs(tt - ex_t)) <= budget * (1 + 1e-9) + 1e-11
    assert stats[3] <= budget * (1 + 1e-9)


def test_chain_tree_drops_vertices_and_saves_work():
    # a smooth, densely digitised outline: most points need only a few hundred chords
    poly = wavy(50_000, 0.05, 2.0)
    o = S._Outline(poly)
    rng = np.random.default_rng(2)
    pts = rng.uniform([-16, -11, 0.5], [16, 11, 20.0], (200, 3))
    sz, tt, stats = S._chain_sum(o, 100.0, 0.0, 1e-3, pts[:, 0], pts[:, 1], pts[:, 2])
    assert stats[0] == len(pts)  # every point used chords
    assert stats[2] / len(pts) > 0.9 * len(poly)  # over 90 % of the vertices left out


def _dense_loads():
    rng = np.random.default_rng(4)
    raft = wavy(8000, 0.05, 2.0)
    pads = S.Loads.rectangles(
        rng.uniform(-30, 30, 20), rng.uniform(20, 30, 20), 2.0, 2.0, 0.0, 150.0, 1.0
    )
    return S.Loads.concat(pads, S.Loads.polygons([raft], 50.0, 1.0)), rng


def test_stress_sums_with_a_dense_polygon_stays_within_tolerance():
    # reference: the exact sum (tolerance = 0); the bound of stress_sums is tol·max|q|
    loads, rng = _dense_loads()
    pts = rng.uniform([-20, -15, 1.05], [20, 32, 25.0], (4000, 3))
    tol = 1e-3
    notes = []
    a = S.stress_sums(loads, pts, tolerance=tol, notes=notes)
    b = S.stress_sums(loads, pts, tolerance=0)
    eps = tol * 150.0
    assert np.max(np.abs(a[0] - b[0])) <= eps
    assert np.max(np.abs(a[1] - b[1])) <= eps
    assert len(notes) == 1 and notes[0].load == 20 and notes[0].vertices == 8000
    assert notes[0].bound <= S._CHAIN_SHARE * eps


def test_warning_names_the_polygon_when_vertices_are_dropped():
    loads, rng = _dense_loads()
    pts = rng.uniform([-10, -5, 2.0], [10, 5, 10.0], (500, 3))
    with pytest.warns(S.OutlineSimplified, match=r"polygon load 20 \(8000 vertices\)"):
        S.stress_sums(loads, pts)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        S.stress_sums(loads, pts, tolerance=0)  # exact: nothing dropped, no warning


def test_analysis_warning_names_the_footing():
    from sitesettle.analysis import analyse
    from sitesettle.options import Behaviour
    from sitesettle.site import AnalysisSettings, Borehole, Footing, Interval, Site, Stratum

    raft = wavy(4096, 0.05, 2.0, a=10.0, b=6.0)
    area = 0.5 * abs(
        np.dot(raft[:, 0], np.roll(raft[:, 1], -1)) - np.dot(raft[:, 1], np.roll(raft[:, 0], -1))
    )
    feet = (
        Footing(
            "RAFT-W",
            raft,
            "polygon",
            0.0,
            0.0,
            12.0,
            20.0,
            0.0,
            1.0,
            40.0 * area,
            10.0 * area,
            0.3,
            False,
            20.0,
        ),
    )
    sand = Stratum("sand", Behaviour.GRANULAR, 18.0, 20.0, 0.3, youngs_modulus=40000.0)
    bh = Borehole("BH", 0.0, 0.0, (Interval("sand", 0.0, 12.0), Interval("rock", 12.0, 14.0)), None)
    rock = Stratum("rock", Behaviour.RIGID, unit_weight=22.0, saturated_unit_weight=22.0)
    site = Site(
        "dense",
        feet,
        (sand, rock),
        (bh,),
        water_depth=math.inf,
        analysis=AnalysisSettings(report_times=(1.0,), design_life=1.0),
    )
    res = analyse(site, with_map=False)
    hits = [w for w in res.warnings if w.startswith("footing RAFT-W: its outline of 4096")]
    assert len(hits) == 1, res.warnings
