"""Boussinesq kernels of sitesettle.stress against published tables, closed forms
and scipy quadrature of the point-load formula (an independent check).

References used below:
* Boussinesq (1885) point-load formula σz = 3Pz³/(2πR⁵), as reproduced in every
  soil-mechanics text (METHODS.md §1.1);
* Newmark (1935) / Fadum (1948) rectangle-corner tables (METHODS.md §1.3), printed
  to 4 decimals;
* METHODS.md check values marked [C] (computed by scipy while preparing the sheet)
  or [D] (derived), as stated beside each.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate

from sitesettle import stress as S

Q = 1.0  # unit pressure: the kernels are linear in q


def boussinesq(px, py, z, sx, sy):
    """Point-load kernel per unit force at (px, py, z) from a source at (sx, sy, 0)."""
    r2 = (px - sx) ** 2 + (py - sy) ** 2 + z * z
    return 3.0 * z**3 / (2.0 * math.pi * r2**2.5)


def invariant_kernel(px, py, z, sx, sy):
    """Θ/(1 + ν) per unit force: z/(π R³) (METHODS.md §1.2)."""
    r2 = (px - sx) ** 2 + (py - sy) ** 2 + z * z
    return z / (math.pi * r2**1.5)


def quad_rect(x0, x1, y0, y1, px, py, z, kernel=boussinesq):
    """scipy double integral of a point kernel over [x0, x1] × [y0, y1]."""
    v, _ = integrate.dblquad(
        lambda sy, sx: kernel(px, py, z, sx, sy), x0, x1, y0, y1, epsabs=1e-13, epsrel=1e-12
    )
    return v


# ---------------------------------------------------------------------------
# rectangle corner factor
# ---------------------------------------------------------------------------

#: Newmark (1935) / Fadum (1948) influence values I(m, n) as printed to 4 decimals
#: (reproduced in METHODS.md §1.3, table of I(m, n); values agree with the
#: published charts and tables, e.g. Das, Principles of Geotechnical Engineering)
NEWMARK_TABLE = [
    (0.1, 0.1, 0.0047),
    (0.1, 1.0, 0.0279),
    (0.25, 0.25, 0.0270),
    (0.25, 2.0, 0.0752),
    (0.5, 0.5, 0.0840),
    (0.5, 1.0, 0.1202),
    (0.5, 3.0, 0.1368),
    (1.0, 1.0, 0.1752),
    (1.0, 1.5, 0.1936),
    (1.0, 2.0, 0.1999),
    (1.5, 1.5, 0.2157),
    (1.5, 2.0, 0.2236),
    (2.0, 2.0, 0.2325),
    (2.0, 3.0, 0.2378),
    (3.0, 3.0, 0.2439),
    (1.0, np.inf, 0.2046),
    (2.0, np.inf, 0.2399),
    (0.5, np.inf, 0.1375),
    (np.inf, np.inf, 0.2500),
]


@pytest.mark.parametrize(("m", "n", "published"), NEWMARK_TABLE)
def test_corner_factor_matches_newmark_fadum_table(m, n, published):
    # the tables print 4 decimals → agreement to half a unit in the 4th place
    assert S.rectangle_corner_factor(m, n) == pytest.approx(published, abs=5e-5)
    assert S.rectangle_corner_factor(n, m) == pytest.approx(published, abs=5e-5)  # symmetric


@pytest.mark.parametrize(
    ("m", "n"),
    [(0.5, 0.5), (1, 1), (1, 2), (1.5, 1.5), (1.5, 2), (2, 2), (3, 3), (0.3, 4.0), (5.0, 5.0)],
)
def test_corner_factor_equals_scipy_integral_of_point_load(m, n):
    # independent check: integrate Boussinesq over the B × L rectangle, z = 1;
    # (2, 2), (3, 3), (1.5, 2) have m²n² > m² + n² + 1 (Newmark's arctan branch)
    ref = quad_rect(0, m, 0, n, 0, 0, 1.0)
    assert S.rectangle_corner_factor(m, n) == pytest.approx(ref, rel=1e-6)


def newmark_plain(m, n):
    """Newmark (1935) arctangent form WITHOUT the +π branch correction (METHODS.md §1.3)."""
    s = m * m + n * n + 1
    a = 2 * m * n * math.sqrt(s) / (m * m + n * n + m * m * n * n + 1) * (m * m + n * n + 2) / s
    b = math.atan(2 * m * n * math.sqrt(s) / (s - m * m * n * n))
    return (a + b) / (4 * math.pi)


def test_branch_past_the_arctangent_switch():
    # METHODS.md §1.3 [C]: m = n = 2 gives 0.2325 corrected, −0.0175 with a plain arctan
    assert newmark_plain(2, 2) == pytest.approx(-0.0175, abs=5e-5)
    assert S.rectangle_corner_factor(2, 2) == pytest.approx(newmark_plain(2, 2) + 0.25, abs=1e-12)
    # below the switch (5.06 < 5.5) the plain form is right
    assert S.rectangle_corner_factor(1.5, 1.5) == pytest.approx(newmark_plain(1.5, 1.5), abs=1e-12)


def test_corner_factor_strip_limit():
    # I(m, ∞) = (1/2π)[arctan m + m/(1+m²)], METHODS.md §1.3 [D]
    m = np.array([0.2, 0.7, 1.3, 4.0])
    exact = (np.arctan(m) + m / (1 + m * m)) / (2 * math.pi)
    np.testing.assert_allclose(S.rectangle_corner_factor(m, np.inf), exact, rtol=1e-12)


def test_corner_factor_negative_is_nan():
    assert np.isnan(S.rectangle_corner_factor(-1.0, 2.0))


# ---------------------------------------------------------------------------
# rectangle at any point
# ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("px", "py", "z"),
    [
        (0.0, 0.0, 1.0),  # centre
        (0.7, -0.3, 0.5),  # inside
        (1.5, 0.2, 1.0),  # under the edge x = L/2
        (1.5, 1.0, 2.0),  # under a corner
        (4.0, 2.5, 1.5),  # outside
        (-3.0, 0.0, 0.3),  # outside, shallow
    ],
)
def test_rectangle_any_point_vs_scipy(px, py, z):
    l, b = 3.0, 2.0
    ref = quad_rect(-l / 2, l / 2, -b / 2, b / 2, px, py, z)
    assert S.rectangle_stress(Q, l, b, px, py, z) == pytest.approx(ref, rel=1e-6, abs=1e-12)
    ref_om = quad_rect(-l / 2, l / 2, -b / 2, b / 2, px, py, z, invariant_kernel) * math.pi
    assert S.rectangle_solid_angle(l, b, px, py, z) == pytest.approx(ref_om, rel=1e-6, abs=1e-12)


def test_square_centre_and_corner_solid_angle():
    # METHODS.md §1.6 [C]: square centre 4·I(1,1) = 0.7008859; §1.7: B = L = 2, z = 2 → Ω = π/6
    assert S.rectangle_stress(Q, 2, 2, 0, 0, 1) == pytest.approx(0.7008859, abs=1e-7)
    assert S.rectangle_solid_angle(2, 2, 1, 1, 2) == pytest.approx(math.pi / 6, rel=1e-12)


@pytest.mark.parametrize(
    ("px", "py", "expected"),
    [
        (0.0, 0.0, 1.0),
        (1.5, 0.0, 0.5),
        (1.5, 1.0, 0.25),
        (2.0, 0.0, 0.0),
        (0.0, -1.0, 0.5),
    ],
)
def test_rectangle_surface_limit(px, py, expected):
    # z → 0: q inside, q/2 on an edge, q/4 at a corner, 0 outside (limit of the half-space solution)
    assert S.rectangle_stress(Q, 3, 2, px, py, 0.0) == pytest.approx(expected, abs=1e-15)
    # and continuity as z → 0⁺ (the limit is approached linearly in z)
    assert S.rectangle_stress(Q, 3, 2, px, py, 1e-7) == pytest.approx(expected, abs=1e-6)
    assert S.rectangle_solid_angle(3, 2, px, py, 0.0) == pytest.approx(
        2 * math.pi * expected, abs=1e-15
    )


def test_strip_centreline_as_long_rectangle():
    # strip of width B: σz/q = (α + sin α)/π, α = 2 arctan(B/2z);
    # z/B = 1 → 0.5498 (METHODS.md §1.4 [C])
    assert S.rectangle_stress(Q, 1e6, 1.0, 0, 0, 1.0) == pytest.approx(0.5498, abs=5e-5)


def test_horizontal_sum_corner_quadrature_value():
    # METHODS.md §1.8 [C]: B = 1, L = 2, z = 1, ν = 0.3 → σx + σy = 0.083398 q under the corner
    nu = 0.3
    loads = S.Loads.rectangles(1.0, 0.5, 1.0, 2.0, 0.0, 1.0, 0.0)  # corner at the origin
    hs = S.horizontal_stress_sum(loads, [[0.0, 0.0, 1.0]], nu, tolerance=0)
    assert hs[0] == pytest.approx(0.083398, abs=5e-7)
    # independent: scipy integral of the point-load invariant (1+ν)Pz/(πR³) minus σz
    theta = (1 + nu) * quad_rect(0, 2, 0, 1, 0, 0, 1.0, invariant_kernel)
    sz = quad_rect(0, 2, 0, 1, 0, 0, 1.0)
    assert hs[0] == pytest.approx(theta - sz, rel=1e-7)


# ---------------------------------------------------------------------------
# point load
# ---------------------------------------------------------------------------


def test_point_load_influence_factor():
    # I_B(r/z = 0) = 3/(2π) = 0.47746 (METHODS.md §1.1 [V])
    assert S.point_load_stress(1.0, 0, 0, 1.0) == pytest.approx(0.47746, abs=5e-6)
    # I_B at r/z = 1: (3/2π)·2^(−5/2) = 0.0844 (texts' table, from memory; equals the formula)
    assert S.point_load_stress(1.0, 1.0, 0, 1.0) == pytest.approx(0.0844, abs=5e-5)


def test_point_load_invariant_matches_solid_angle_of_tiny_area():
    # a 1 cm square of pressure q carries P = q·1e-4: Θ/(1+ν) → P z/(π R³)
    a = 0.01
    om = S.rectangle_solid_angle(a, a, 2.0, 1.0, 3.0)
    theta = S.point_load_invariant(a * a, 2.0, 1.0, 3.0, 0.0)
    assert om / math.pi == pytest.approx(theta, rel=1e-5)  # O((a/R)²) ≈ 1e-5


# ---------------------------------------------------------------------------
# circle
# ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("z_over_a", "value"),
    [
        (0.5, 0.9106),
        (1.0, 0.6464),
        (1.5, 0.4240),
        (2.0, 0.2845),
        (3.0, 0.1462),
        (5.0, 0.0571),
    ],
)
def test_circle_centreline_table(z_over_a, value):
    # METHODS.md §1.5 [C] values of 1 − [1 + (a/z)²]^(−3/2), printed to 4 decimals
    assert S.circle_stress(Q, 2.0, 0.0, 2.0 * z_over_a) == pytest.approx(value, abs=5e-5)


def test_circle_centreline_closed_form():
    z = np.linspace(0.05, 10, 40)
    a = 1.3
    exact = 1 - (1 + (a / z) ** 2) ** -1.5
    np.testing.assert_allclose(S.circle_stress(Q, a, 0.0, z), exact, rtol=0, atol=1e-12)
    np.testing.assert_allclose(
        S.circle_solid_angle(a, 0.0, z), 2 * math.pi * (1 - z / np.hypot(a, z)), rtol=0, atol=1e-12
    )


def quad_circle(a, r, z, kernel=boussinesq):
    v, _ = integrate.dblquad(
        lambda rho, th: rho * kernel(r, 0.0, z, rho * math.cos(th), rho * math.sin(th)),
        0,
        2 * math.pi,
        0,
        a,
        epsabs=1e-13,
        epsrel=1e-12,
    )
    return v


@pytest.mark.parametrize(
    ("r", "z"),
    [
        (0.5, 1.0),
        (0.9, 0.2),
        (0.99, 0.05),
        (0.999, 0.01),
        (1.0, 0.01),
        (1.001, 0.01),
        (1.01, 0.05),
        (1.5, 0.3),
        (3.0, 1.0),
        (0.3, 0.001),
        (2.0, 4.0),
    ],
)
def test_circle_off_axis_vs_scipy(r, z):
    # the stated accuracy of circle_stress: 1e-8 q (points down to 1e-3 a from the edge)
    assert S.circle_stress(Q, 1.0, r, z) == pytest.approx(quad_circle(1.0, r, z), abs=1e-8)
    ref = math.pi * quad_circle(1.0, r, z, invariant_kernel)
    assert S.circle_solid_angle(1.0, r, z) == pytest.approx(ref, abs=1e-8)


def test_circle_equals_fine_polygon():
    # METHODS.md §1.5 [C]: a 4000-sided polygon reproduces the circle to ~1e-7
    th = np.linspace(0, 2 * math.pi, 4000, endpoint=False)
    poly = np.column_stack([np.cos(th), np.sin(th)])
    for r, z in [(0.4, 0.7), (1.3, 0.5), (0.95, 0.1)]:
        assert S.circle_stress(Q, 1.0, r, z) == pytest.approx(
            S.polygon_stress(Q, poly, r, 0.0, z), abs=2e-6
        )


def test_circle_surface_limit():
    np.testing.assert_array_equal(
        S.circle_stress(Q, 1.0, [0.0, 0.5, 1.0, 1.5], 0.0), [1.0, 1.0, 0.5, 0.0]
    )


# ---------------------------------------------------------------------------
# polygon
# ---------------------------------------------------------------------------


def test_triangle_check_value():
    # METHODS.md §1.6 [C]: triangle (0,0),(3,0),(1,2) at (1, 0.5), z = 1 → 0.560359, Ω = 1.606113 sr
    tri = [(0, 0), (3, 0), (1, 2)]
    assert S.polygon_stress(Q, tri, 1.0, 0.5, 1.0) == pytest.approx(0.560359, abs=5e-7)
    assert S.polygon_solid_angle(tri, 1.0, 0.5, 1.0) == pytest.approx(1.606113, abs=5e-7)
    # independent: scipy over the triangle (x from 0 to 3, y between the edges)
    ref, _ = integrate.dblquad(
        lambda y, x: boussinesq(1.0, 0.5, 1.0, x, y),
        0,
        3,
        0,
        lambda x: 2 * x if x <= 1 else (3 - x),
        epsabs=1e-13,
        epsrel=1e-12,
    )
    assert S.polygon_stress(Q, tri, 1.0, 0.5, 1.0) == pytest.approx(ref, rel=1e-6)


L_SHAPE = np.array([(0, 0), (4, 0), (4, 2), (2, 2), (2, 4), (0, 4)], dtype=float)


def quad_l_shape(px, py, z):
    return quad_rect(0, 4, 0, 2, px, py, z) + quad_rect(0, 2, 2, 4, px, py, z)


@pytest.mark.parametrize(
    ("px", "py", "z"), [(1, 1, 1), (3, 3, 1.5), (2, 2, 0.7), (5, -1, 2), (0.5, 3.5, 0.4)]
)
def test_l_shape_vs_scipy(px, py, z):
    assert S.polygon_stress(Q, L_SHAPE, px, py, z) == pytest.approx(
        quad_l_shape(px, py, z), rel=1e-6, abs=1e-12
    )
    # clockwise order gives the same (the orientation sign σ_A)
    assert S.polygon_stress(Q, L_SHAPE[::-1], px, py, z) == pytest.approx(
        quad_l_shape(px, py, z), rel=1e-6
    )


def test_l_shape_worked_example():
    # METHODS.md §7.2: three 2 m squares, q = 300 kPa, z = 4 m; exact 61.26 kPa below A = (0, 2)
    # and 75.62 kPa below the re-entrant corner B = (2, 2) (course-note chart readings 61.5 / 76.5)
    sz = S.polygon_stress(300.0, L_SHAPE, [0.0, 2.0], [2.0, 2.0], 4.0)
    np.testing.assert_allclose(sz, [61.26, 75.62], atol=0.005)


CHEVRON = np.array([(0, 0), (4, 0), (4, 3), (2, 1), (0, 3)], dtype=float)  # concave at (2, 1)


@pytest.mark.parametrize(("px", "py", "z"), [(2, 2, 1.0), (2, 0.5, 0.5), (1, 1, 2.0), (6, 1, 1.0)])
def test_concave_polygon_vs_scipy(px, py, z):
    def top(x):
        return 3 - x if x <= 2 else x - 1

    ref = sum(
        integrate.dblquad(
            lambda y, x: boussinesq(px, py, z, x, y), x0, x1, 0, top, epsabs=1e-13, epsrel=1e-12
        )[0]
        for x0, x1 in ((0, 2), (2, 4))
    )
    assert S.polygon_stress(Q, CHEVRON, px, py, z) == pytest.approx(ref, rel=1e-6, abs=1e-12)


def test_rotated_rectangle_polygon_vs_scipy():
    # a 3 × 1 rectangle turned 30°: integrate in its own axes (scipy) at a point given in plan
    t = math.radians(30)
    c, s = math.cos(t), math.sin(t)
    corners = np.array([(-1.5, -0.5), (1.5, -0.5), (1.5, 0.5), (-1.5, 0.5)])
    outline = corners @ np.array([[c, s], [-s, c]]) + [10.0, 5.0]
    px, py, z = 11.0, 5.8, 0.8
    u, v = (px - 10) * c + (py - 5) * s, -(px - 10) * s + (py - 5) * c
    ref = quad_rect(-1.5, 1.5, -0.5, 0.5, u, v, z)
    assert S.polygon_stress(Q, outline, px, py, z) == pytest.approx(ref, rel=1e-6)
    loads = S.Loads.rectangles(10.0, 5.0, 1.0, 3.0, 30.0, 1.0, 0.0)
    assert S.vertical_stress(loads, [[px, py, z]], tolerance=0)[0] == pytest.approx(ref, rel=1e-6)


def test_polygon_surface_limit_and_vertex():
    # z = 0: q inside, q/2 on an edge, 3q/4 at the re-entrant corner (270°), 0 outside;
    # no NaN at a vertex
    got = S.polygon_stress(Q, L_SHAPE, [1, 2, 2, 5, 0, 4], [1, 0, 2, 1, 0, 0], 0.0)
    np.testing.assert_allclose(got, [1, 0.5, 0.75, 0, 0.25, 0.25], atol=1e-15)
    assert np.isfinite(S.polygon_stress(Q, L_SHAPE, 2.0, 2.0, 1.0))


def test_polygon_equals_rectangle_superposition():
    # METHODS.md §1.6 [C]: outside point equals rectangle superposition
    pts = np.array([(5.0, 5.0), (1.0, 3.0), (-2.0, 1.0), (3.0, 1.0)])
    for z in (0.5, 2.0):
        poly = S.polygon_stress(Q, L_SHAPE, pts[:, 0], pts[:, 1], z)
        rect = S.rectangle_stress(Q, 4, 2, pts[:, 0] - 2, pts[:, 1] - 1, z) + S.rectangle_stress(
            Q, 2, 2, pts[:, 0] - 1, pts[:, 1] - 3, z
        )
        np.testing.assert_allclose(poly, rect, rtol=1e-12, atol=1e-15)


def test_large_square_solid_angle_tends_to_2pi():
    # METHODS.md §1.7 [C]: a very large square seen from its centre subtends 2π
    sq = [(-1e4, -1e4), (1e4, -1e4), (1e4, 1e4), (-1e4, 1e4)]
    assert S.polygon_solid_angle(sq, 0, 0, 1.0) == pytest.approx(2 * math.pi, rel=1e-4)


# ---------------------------------------------------------------------------
# 2:1 spread (comparison only)
# ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("z_over_b", "spread", "exact"),
    [
        (0.25, 0.6400, 0.9299),
        (0.5, 0.4444, 0.7009),
        (1, 0.2500, 0.3361),
        (2, 0.1111, 0.1081),
        (4, 0.0400, 0.0291),
    ],
)
def test_spread_2to1_vs_boussinesq_table(z_over_b, spread, exact):
    # METHODS.md §1.9 table [C] (values printed to 4 decimals)
    assert S.spread_2to1(Q, 1.0, 1.0, z_over_b) == pytest.approx(spread, abs=5e-5)
    assert S.rectangle_stress(Q, 1.0, 1.0, 0, 0, z_over_b) == pytest.approx(exact, abs=5e-5)


# ---------------------------------------------------------------------------
# array behaviour of every kernel: scalar, 1-D, 2-D, NaN
# ---------------------------------------------------------------------------

KERNELS = {
    "point_load_stress": lambda z: S.point_load_stress(10.0, 0.5, 0.2, z),
    "point_load_invariant": lambda z: S.point_load_invariant(10.0, 0.5, 0.2, z, 0.3),
    "rectangle_corner_factor": lambda z: S.rectangle_corner_factor(1.0 / z, 2.0 / z),
    "rectangle_stress": lambda z: S.rectangle_stress(Q, 2.0, 1.0, 0.3, 0.1, z),
    "rectangle_solid_angle": lambda z: S.rectangle_solid_angle(2.0, 1.0, 0.3, 0.1, z),
    "circle_stress": lambda z: S.circle_stress(Q, 1.0, 0.6, z),
    "circle_solid_angle": lambda z: S.circle_solid_angle(1.0, 0.6, z),
    "polygon_stress": lambda z: S.polygon_stress(Q, L_SHAPE, 1.0, 1.0, z),
    "polygon_solid_angle": lambda z: S.polygon_solid_angle(L_SHAPE, 1.0, 1.0, z),
    "spread_2to1": lambda z: S.spread_2to1(Q, 1.0, 2.0, z),
}


@pytest.mark.parametrize("name", sorted(KERNELS))
def test_kernel_shapes_and_nan(name):
    f = KERNELS[name]
    scalar = f(1.5)
    assert np.ndim(scalar) == 0 and np.isfinite(scalar)
    one = f(np.array([0.5, 1.5, 3.0]))
    assert one.shape == (3,)
    assert one[1] == pytest.approx(float(scalar), rel=1e-14)
    two = f(np.array([[0.5, 1.5], [3.0, 1.5]]))
    assert two.shape == (2, 2)
    np.testing.assert_allclose(two.ravel(), [one[0], one[1], one[2], one[1]], rtol=1e-14)
    withnan = f(np.array([np.nan, 1.5]))
    assert np.isnan(withnan[0]) and withnan[1] == pytest.approx(float(scalar), rel=1e-14)
