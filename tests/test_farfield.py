"""The compiled inner loops of the treecode (sitesettle.farfield).

Independent references: the Newmark (1935) / Fadum (1948) corner table for the
compiled rectangle; the Taylor expansion of the Boussinesq kernels to third order
with derivatives taken by central differences (numerical differentiation, not
the project's derived form) for the multipole, and the rate at which its error
falls with distance against the closed form; the exact sum
(tolerance = 0) for the whole treecode, whatever kinds of load it leaves to
the caller and however many threads run it.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numba.core import config as numba_config
from test_stress import NEWMARK_TABLE
from test_stress_superposition import grid_plan

from sitesettle import farfield as ff
from sitesettle import stress as S
from sitesettle import treecode as T


@pytest.mark.parametrize(("m", "n", "published"), [r for r in NEWMARK_TABLE if np.isfinite(r[1])])
def test_compiled_rectangle_matches_the_corner_table(m, n, published):
    # below a corner of a B × L rectangle at depth z: σz/q = I(m, n), m = B/z, n = L/z
    # (Newmark 1935 / Fadum 1948, 4 printed decimals → half a unit in the 4th place)
    z = 2.0
    b, l = m * z, n * z
    sz, _ = ff.rectangle(l / 2, b / 2, l / 2, b / 2, z)
    assert sz == pytest.approx(published, abs=5e-5)


def test_compiled_rectangle_equals_the_vectorised_closed_form():
    # the compiled kernel is the same closed form as stress.rectangle_stress
    # (itself checked against the corner table) at points inside, outside and
    # under edges: agreement to rounding
    rng = np.random.default_rng(3)
    for _ in range(300):
        hl, hw = rng.uniform(0.3, 4.0, 2)
        u, v = rng.choice([rng.uniform(-8, 8), hl, -hw]), rng.uniform(-8, 8)
        w = rng.uniform(0.01, 30.0)
        sz, om = ff.rectangle(hl, hw, u, v, w)
        ref = S.rectangle_stress(1.0, 2 * hl, 2 * hw, u, v, w)
        ref_om = S.rectangle_solid_angle(2 * hl, 2 * hw, u, v, w)
        assert sz == pytest.approx(float(ref), rel=1e-12, abs=1e-15)
        assert om == pytest.approx(float(ref_om), rel=1e-12, abs=1e-15)


def _kernels(u):
    """Boussinesq kernels (3/2π)·W³/r⁵ and (1/π)·W/r³ at offsets u (…, 3)."""
    r = np.sqrt((u * u).sum(axis=-1))
    w = u[..., 2]
    return 1.5 / math.pi * w**3 / r**5, w / r**3 / math.pi


def _taylor_reference(tree, node, p):
    """Σ q ∫ k(p − s) dA to second order about the node's centre C, and to third
    where the node carries an octupole, with the derivatives of k by central
    differences (step 1e-3 of the distance for the gradient and Hessian, 2e-3
    for the third derivatives)."""
    u = p - tree.c[node]
    h = 1e-3 * np.linalg.norm(u)
    e = np.eye(3) * h
    k0 = np.array(_kernels(u))
    grad = np.array(
        [(np.array(_kernels(u + e[a])) - _kernels(u - e[a])) / (2 * h) for a in range(3)]
    )
    hess = np.zeros((3, 3, 2))
    for a in range(3):
        for b in range(3):
            hess[a, b] = (
                np.array(_kernels(u + e[a] + e[b]))
                - _kernels(u + e[a] - e[b])
                - _kernels(u - e[a] + e[b])
                + _kernels(u - e[a] - e[b])
            ) / (4 * h * h)
    qxx, qxy, qyy, qxw, qyw, qww = tree.quad[node]
    quad = np.array([[qxx, qxy, qxw], [qxy, qyy, qyw], [qxw, qyw, qww]])
    # k(u − h) ≈ k − h·∇k + ½ hᵀ∇∇k h − (1/6) h⊗h⊗h : ∇³k, integrated over the
    # sources (q dA)
    out = (
        tree.Q0[node] * k0
        - np.einsum("a,ak->k", tree.dip[node], grad)
        + 0.5 * np.einsum("ab,abk->k", quad, hess)
    )
    if tree.has_oct[node]:
        h3 = 2e-3 * np.linalg.norm(u)
        e3 = np.eye(3) * h3
        octo = np.zeros((3, 3, 3))
        for (a, b, c), v in zip(T._OCT_INDEX, tree.oct[node]):
            for perm in set(itertools.permutations((a, b, c))):
                octo[perm] = v
        third = np.zeros((3, 3, 3, 2))
        for a, b, c in itertools.product(range(3), repeat=3):
            acc = np.zeros(2)
            for sa, sb, sc in itertools.product((1, -1), repeat=3):
                acc += sa * sb * sc * np.array(_kernels(u + sa * e3[a] + sb * e3[b] + sc * e3[c]))
            third[a, b, c] = acc / (8 * h3**3)
        out = out - np.einsum("abc,abck->k", octo, third) / 6.0
    return out


def _multipole(tree, node, p):
    a, b = ff.multipole_many(tree.nt, tree.st[:1], np.array([node]), p[:1], p[1:2], p[2:3])
    return np.array([a[0, 0], b[0, 0]])


def test_multipole_is_the_taylor_expansion():
    # clusters of rectangles carry the octupole: third order; single loads and
    # clusters with a polygon stop at second order
    rng = np.random.default_rng(11)
    loads = S.Loads.concat(
        grid_plan(5, 4, spacing=6.0, seed=11),
        S.Loads.polygons([np.array([[30.0, 0], [36, 0], [36, 5], [31, 7]])], 120.0, 0.5),
    )
    tree = S._tree(loads, np.arange(len(loads)))
    assert tree.has_oct.any() and (~tree.has_oct & ~tree.leaf).any()
    for node in rng.choice(tree.n, 30, replace=False):
        for _ in range(4):
            d = rng.uniform(25.0, 80.0)
            th, ph = rng.uniform(0, 2 * math.pi), rng.uniform(0.15, 1.4)
            p = tree.c[node] + d * np.array(
                [math.cos(ph) * math.cos(th), math.cos(ph) * math.sin(th), math.sin(ph)]
            )
            ref = _taylor_reference(tree, node, p)
            got = _multipole(tree, node, p)
            # central differences: relative error O(step²) ≈ 1e-6 of the monopole
            scale = abs(tree.Q0[node]) * np.abs(_kernels(p - tree.c[node])).max() + 1e-300
            assert np.abs(got - ref).max() <= 1e-5 * scale


def test_octupole_makes_the_error_fall_as_the_sixth_power_of_distance():
    # a cluster of four unequal rectangles: along a ray from its centre the
    # multipole's error against the exact sum (tolerance=0, the closed form) falls
    # as d^−(2+n) with n the first order left out: n = 4 with the octupole
    # (ratio 2^6 = 64 per doubling), 3 without (2^5 = 32); from the Taylor
    # remainder, the σz kernel being homogeneous of degree −2
    loads = S.Loads.rectangles(
        [0.0, 7.0, 1.0, 9.0], [0.0, 1.0, 8.0, 6.0], [2.0, 3.0, 1.5, 2.5], [3.0, 2.0, 1.5, 4.0],
        [0.0, 30.0, 0.0, 80.0], [150.0, 220.0, 90.0, 300.0], 0.0,
    )  # fmt: skip
    tree = S._tree(loads, np.arange(4))
    assert tree.has_oct[0]
    direction = np.array([0.6, 0.3, 0.742])
    errs = []
    for d in (80.0, 160.0, 320.0):
        p = tree.c[0] + d * direction / np.linalg.norm(direction)
        got = _multipole(tree, 0, p)
        ex, et = S.stress_sums(loads, p[None, :], tolerance=0)
        errs.append(abs(got[0] - ex[0]))
    for a, b in zip(errs[:-1], errs[1:]):
        assert 50.0 < a / b < 80.0


@pytest.mark.parametrize(("threads", "capacity"), [(1, 256), (2, 256), (2, 1)])
def test_many_polygons_and_circles_in_columns(monkeypatch, threads, capacity):
    # hundreds of exact (block, polygon or circle) pairs left to the caller; with
    # capacity 1 the compiled traversal grows its pair stack and that list many
    # times; any threads and capacity give sums within tolerance · max|q| of the
    # exact sum
    monkeypatch.setattr(T, "_THREADS", threads)
    monkeypatch.setattr(T, "_CAPACITY", capacity)
    rng = np.random.default_rng(8)
    hexagons = [
        np.column_stack(
            [x + 1.2 * np.cos(np.arange(6) * np.pi / 3), y + 1.2 * np.sin(np.arange(6) * np.pi / 3)]
        )
        for x, y in zip(np.arange(12) * 5.0, rng.uniform(0, 30, 12))
    ]
    loads = S.Loads.concat(
        grid_plan(8, 6, spacing=6.0, seed=8),
        S.Loads.polygons(hexagons, rng.uniform(80, 200, 12), 1.2),
        S.Loads.circles(rng.uniform(0, 40, 10), rng.uniform(0, 30, 10), 0.9, 150.0, 1.0),
    )
    xy = rng.uniform(-5, 48, (220, 2))
    z = np.linspace(1.0, 25.0, 20)
    pts = np.column_stack([np.repeat(xy, len(z), axis=0), np.tile(z, len(xy))])
    counts = {}
    monkeypatch.setattr(T, "_STATS", counts)
    fast = S.stress_sums(loads, pts, tolerance=1e-3)
    monkeypatch.setattr(T, "_STATS", None)
    exact = S.stress_sums(loads, pts, tolerance=0)
    allowed = 1e-3 * np.abs(loads.pressure).max()
    assert np.abs(fast[0] - exact[0]).max() <= allowed
    assert np.abs(fast[1] - exact[1]).max() <= allowed
    assert counts["far"] > 0 and counts["exact"] > 0
    assert np.abs(fast[0] - exact[0]).max() > 0  # the far field was used


@settings(max_examples=60, deadline=None)
@given(
    seed=st.integers(0, 2**31 - 1),
    flat=st.booleans(),
    order=st.sampled_from([3, 4]),
)
def test_sup_terms_is_the_maximum_over_the_depth_range(seed, flat, order):
    # each bound term amp·(v + Δ)^a (h² + v²)^(−b/2) maximised over v in
    # [vmin, vmax]: against a dense grid of v (numpy, an independent search),
    # the compiled sup is never below the grid's maximum and at most 1e-4 above
    # it (the grid's spacing); with Δ = 0 the closed form at the stationary point
    # is used, otherwise the root of the quadratic
    rng = np.random.default_rng(seed)
    amp = rng.uniform(0.1, 10.0, 6) * (rng.random(6) < 0.8)
    b = np.array([5 + order - j for j in range(4)] + [3 + order - j for j in range(2)])
    hh = rng.choice([0.0, rng.uniform(0, 400.0)])
    vmin = rng.uniform(0.05, 20.0)
    vmax = vmin + rng.choice([0.0, rng.uniform(0, 40.0)])
    dd = 0.0 if flat else rng.uniform(0.0, 3.0)
    es, et = ff._sup_terms(amp, b, hh, vmin, vmax, dd)
    v = np.linspace(vmin, vmax, 200_001)
    grid = [
        (amp[k] * (v + dd) ** ff.TERM_A[k] * (hh + v * v) ** (-b[k] / 2)).max() for k in range(6)
    ]
    ref_s, ref_t = sum(grid[:4]), sum(grid[4:])
    assert ref_s * (1 - 1e-12) <= es <= ref_s * (1 + 1e-4) + 1e-300
    assert ref_t * (1 - 1e-12) <= et <= ref_t * (1 + 1e-4) + 1e-300


def test_one_or_two_threads_give_identical_sums(monkeypatch):
    # every root group is traversed by one thread in a fixed order, so the
    # sums are the same to the last bit however the work is shared
    rng = np.random.default_rng(4)
    loads = grid_plan(10, 8, spacing=6.0, seed=4)
    pts = np.column_stack(
        [rng.uniform(-5, 60, 4000), rng.uniform(-5, 48, 4000), rng.uniform(1, 30, 4000)]
    )
    monkeypatch.setattr(T, "_THREADS", 1)
    one = S.stress_sums(loads, pts)
    monkeypatch.setattr(T, "_THREADS", 2)
    two = S.stress_sums(loads, pts)
    assert np.array_equal(one[0], two[0]) and np.array_equal(one[1], two[1])


@pytest.mark.skipif(numba_config.DISABLE_JIT, reason="NUMBA_DISABLE_JIT: nothing is compiled")
def test_compiles_without_a_writable_cache(monkeypatch):
    # where numba finds nowhere to keep its cache (here: only the zip-file
    # locator is allowed, which refuses a plain source file) the loops are
    # compiled without one instead of failing at import
    monkeypatch.setattr(numba_config, "CACHE_LOCATOR_CLASSES", "ZipCacheLocator")

    def twice(x):
        return 2.0 * x

    fn = ff._compiled(twice)
    assert fn(1.5) == 3.0
    assert fn._cache.__class__.__name__ == "NullCache"


@settings(max_examples=10, deadline=None)
@given(
    seed=st.integers(0, 2**31 - 1),
    offset=st.sampled_from([0.0, 4.3e5, 6.2e6]),
    tol=st.sampled_from([1e-2, 1e-3, 1e-4]),
)
def test_within_the_bound_at_grid_coordinates_and_on_load_planes(seed, offset, tol):
    # projected coordinates (hundreds of km), loads on several planes, some
    # unloaded, points in columns that start exactly on a load plane: every
    # point within tolerance · max|q| of the exact sum (the reference)
    rng = np.random.default_rng(seed)
    n = 60
    x, y = rng.uniform(0, 60, n) + offset, rng.uniform(0, 60, n) + offset
    q = rng.uniform(-50, 300, n) * (rng.random(n) < 0.9)
    d = rng.choice([0.0, 0.6, 1.2, 2.5], n)
    outlines = [
        np.column_stack([x[k] + r * np.cos(t), y[k] + r * np.sin(t)])
        for k in range(50, n)
        for t, r in [(np.arange(5) * 2 * np.pi / 5, rng.uniform(0.6, 2.0))]
    ]
    loads = S.Loads.concat(
        S.Loads.rectangles(
            x[:40],
            y[:40],
            rng.uniform(0.4, 4, 40),
            rng.uniform(0.4, 7, 40),
            rng.uniform(0, 360, 40),
            q[:40],
            d[:40],
        ),  # fmt: skip
        S.Loads.circles(x[40:50], y[40:50], rng.uniform(0.4, 2.5, 10), q[40:50], d[40:50]),
        S.Loads.polygons(outlines, q[50:], d[50:]),
    )
    xy = np.column_stack([rng.uniform(-10, 70, 200), rng.uniform(-10, 70, 200)]) + offset
    z = np.concatenate([[rng.choice(d)], np.sort(rng.uniform(0.05, 35, 19))])
    pts = np.column_stack([np.repeat(xy, len(z), axis=0), np.tile(z, len(xy))])
    T._STATS = counts = {}
    try:
        fast = S.stress_sums(loads, pts, tolerance=tol)
    finally:
        T._STATS = None
    assert counts["far"] > 0  # the far field was used
    exact = S.stress_sums(loads, pts, tolerance=0)
    allowed = tol * np.abs(loads.pressure).max()
    assert np.abs(fast[0] - exact[0]).max() <= allowed
    assert np.abs(fast[1] - exact[1]).max() <= allowed
