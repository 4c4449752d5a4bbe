"""Boussinesq stresses under uniformly loaded areas, superposed over a whole plan.

Two quantities are computed at every point, both linear in the loads:

* the vertical stress increment σz [kPa], and
* ``T = Σ q·Ω/π`` [kPa], where Ω is the solid angle that a loaded area subtends
  at the point. The first stress invariant is Θ = σx + σy + σz = (1 + ν)·T
  (METHODS.md §1.2), so ``σx + σy = (1 + ν)·T − σz`` for any Poisson's ratio.

The kernels (point load, rectangle, circle, any simple polygon) are exact
closed forms or a 1-D quadrature of stated accuracy; :func:`stress_sums`
superposes a :class:`Loads` collection at many points with a treecode whose
truncation error is bounded rigorously (see :func:`stress_sums`; the tree is
built in :mod:`sitesettle.treecode`, its inner loops compiled in
:mod:`sitesettle.farfield`).

Conventions: x east, y north, z depth below ground, positive down [m];
pressures [kPa]; forces [kN]. A load acts on the horizontal plane at its own
depth ``depth``; a point at depth z sees it at ``w = z − depth`` below that
plane, and a point with ``w <= 0`` gets nothing from it. The kernels
themselves take ``w`` and return the surface limit at ``w = 0`` (q inside,
q/2 on an edge, 0 outside).

Performance (benchmarks/stress_bench.py on the shared 2-core machine, whose
other jobs make every figure vary by up to ±30 %): exact evaluation (numpy,
the reference path, tolerance = 0) runs at about 8–14 million rectangle-point
pairs and 2–4 million hexagon-point pairs per second. The 2,000-footing plan at
600,000 points (20,000 columns of 30 depths) takes 4.1–4.3 s with the
default tolerance (RSS 0.33 GB), with a measured error of 2e-3 kPa (σz) and
5e-3 kPa (T) against the allowed 0.3 kPa; about 340 multipole clusters and 17
exact loads are evaluated per point. The traversal, the bounds and the
evaluations are compiled (:mod:`sitesettle.farfield`, numba) and run on two
threads, and the load tree is built one level at a time (0.08 s for 2,000
loads); the same algorithm written with numpy arrays of pairs and a recursive
tree took 42–66 s, most of it in building and gathering those arrays.
Polygons (benchmarks/polygon_bench.py): the compiled edge sum costs 30–40 ns per
(point × vertex) on two threads, against 110–280 ns for the numpy sum; at the
default tolerance a raft outline of 8,000–200,000 vertices costs 0.1–0.5 ms
per point through its chain tree, nearly independent of the vertex count.

References
----------
.. [1] Boussinesq, J. (1885). Application des potentiels à l'étude de
   l'équilibre et du mouvement des solides élastiques. Gauthier-Villars, Paris.
.. [2] Newmark, N.M. (1935). Simplified computation of vertical pressures in
   elastic foundations. Univ. Illinois Eng. Exp. Station Circular 24.
.. [3] Holl, D.L. (1940). Stress transmission in earths. Proc. Highway
   Research Board 20, 709–721.
.. [4] Damy, J. & Casales, C. (1985). Soil stresses under a polygonal area
   uniformly loaded. Proc. 11th ICSMFE, San Francisco.
.. [5] Van Oosterom, A. & Strackee, J. (1983). The solid angle of a plane
   triangle. IEEE Trans. Biomed. Eng. BME-30(2), 125–126.
.. [6] Barnes, J. & Hut, P. (1986). A hierarchical O(N log N) force-calculation
   algorithm. Nature 324, 446–449 (the treecode idea used for the far field).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
import shapely

from sitesettle import farfield as _ff
from sitesettle import treecode as _tc
from sitesettle.errors import InputError

__all__ = [
    "Loads",
    "vertical_stress",
    "stress_sums",
    "horizontal_stress_sum",
    "own_stress",
    "point_load_stress",
    "point_load_invariant",
    "rectangle_corner_factor",
    "rectangle_stress",
    "rectangle_solid_angle",
    "circle_stress",
    "circle_solid_angle",
    "polygon_stress",
    "polygon_solid_angle",
    "spread_2to1",
    "OutlineSimplified",
]

_TWO_PI = 2.0 * math.pi
#: Boussinesq point-load coefficient 3/(2π) (Boussinesq 1885; METHODS.md §1.1)
_K_SIGMA = 3.0 / _TWO_PI
#: solid-angle kernel coefficient 1/π for T = q·Ω/π (METHODS.md §1.2)
_K_THETA = 1.0 / math.pi
#: added to denominators that are exactly zero only where their numerator is too
_TINY = 1e-300
#: largest finite side ratio used for "infinite" sides in the corner factor
_BIG = 1e100

#: elements (points × loads × quadrature nodes) held at once by the dense loops;
#: about 8 bytes × 20 temporaries each, so 2e6 keeps a chunk near 300 MB at worst
_CHUNK_ELEMENTS = 1 << 15


# ---------------------------------------------------------------------------
# kernels
# ---------------------------------------------------------------------------


def point_load_stress(force, x, y, z):
    r"""Vertical stress below a vertical point load on the surface of a half-space.

    Parameters
    ----------
    force : array_like
        Point load P, downward positive. [kN]
    x, y : array_like
        Plan offsets of the stress point from the load. [m]
    z : array_like
        Depth of the stress point below the loaded surface. [m]

    Returns
    -------
    numpy.ndarray
        Vertical stress increment σz; 0 for z <= 0. [kPa]

    Notes
    -----
    .. math:: \sigma_z = \frac{3 P z^3}{2 \pi R^5},\quad R = \sqrt{x^2 + y^2 + z^2}

    References
    ----------
    .. [1] Boussinesq (1885); METHODS.md §1.1.

    Examples
    --------
    >>> float(point_load_stress(100.0, 0.0, 0.0, 1.0))  # doctest: +ELLIPSIS
    47.746...
    """
    force, x, y, z = (np.asarray(a, dtype=float) for a in (force, x, y, z))
    r2 = x * x + y * y + z * z
    w = np.where(z > 0, z, 0.0)
    out = _K_SIGMA * force * w**3 / (r2 * r2 * np.sqrt(r2) + _TINY)
    return np.where(np.isnan(z), np.nan, out)


def point_load_invariant(force, x, y, z, poisson):
    r"""First stress invariant Θ = σx + σy + σz below a vertical point load.

    Parameters
    ----------
    force : array_like
        Point load P. [kN]
    x, y : array_like
        Plan offsets of the stress point from the load. [m]
    z : array_like
        Depth below the loaded surface. [m]
    poisson : array_like
        Poisson's ratio ν. [-]

    Returns
    -------
    numpy.ndarray
        Θ; 0 for z <= 0. [kPa]

    Notes
    -----
    .. math:: \Theta = \frac{(1 + \nu) P z}{\pi R^3}

    Derived by adding the Boussinesq components (METHODS.md §1.2, after
    Timoshenko & Goodier 1970, §138); ``z dA / R³`` is the solid-angle element.
    """
    force, x, y, z, poisson = (np.asarray(a, dtype=float) for a in (force, x, y, z, poisson))
    r2 = x * x + y * y + z * z
    w = np.where(z > 0, z, 0.0)
    out = (1.0 + poisson) * force * w * _K_THETA / (r2 * np.sqrt(r2) + _TINY)
    return np.where(np.isnan(z), np.nan, out)


def rectangle_corner_factor(m, n):
    r"""Influence factor I(m, n) for σz below the corner of a loaded rectangle.

    Parameters
    ----------
    m, n : array_like
        Side ratios B/z and L/z (symmetric; ``numpy.inf`` allowed). [-]

    Returns
    -------
    numpy.ndarray
        I = σz / q; NaN where m or n is negative or NaN. [-]

    Notes
    -----
    Holl's branch-free form (equal to Newmark's arctangent form with its +π
    correction for m²n² > m² + n² + 1, METHODS.md §1.3):

    .. math:: I = \frac{1}{2\pi}\left[\arctan\frac{mn}{\sqrt{m^2+n^2+1}}
              + \frac{mn}{\sqrt{m^2+n^2+1}}\left(\frac{1}{1+m^2}
              + \frac{1}{1+n^2}\right)\right]

    References
    ----------
    .. [1] Newmark (1935); Fadum (1948) tables; Holl (1940).

    Examples
    --------
    >>> round(float(rectangle_corner_factor(2.0, 2.0)), 4)
    0.2325
    """
    m, n = np.asarray(m, dtype=float), np.asarray(n, dtype=float)
    bad = (m < 0) | (n < 0)
    m = np.minimum(np.abs(m), _BIG)
    n = np.minimum(np.abs(n), _BIG)
    r3 = np.sqrt(m * m + n * n + 1.0)
    mn = m * n
    out = (np.arctan2(mn, r3) + mn / r3 * (1.0 / (1.0 + m * m) + 1.0 / (1.0 + n * n))) / _TWO_PI
    return np.where(bad, np.nan, out)


def _rect_terms(half_length, half_width, u, v, w):
    """σz/q and Ω at local offsets (u, v) from the centre of a rectangle, depth w >= 0.

    Signed corner superposition (METHODS.md §1.3 "any point"): the Holl corner
    expression is odd in each corner offset, so no sign functions are needed.
    """
    x1, x0 = half_length - u, -half_length - u
    y1, y0 = half_width - v, -half_width - v
    w2 = w * w
    sx1, sx0, sy1, sy0 = x1 * x1, x0 * x0, y1 * y1, y0 * y0
    ix1, ix0 = 1.0 / (sx1 + w2 + _TINY), 1.0 / (sx0 + w2 + _TINY)
    iy1, iy0 = 1.0 / (sy1 + w2 + _TINY), 1.0 / (sy0 + w2 + _TINY)
    kk = 0.0
    re, im = [], []
    for xs, sxx, ixx, sgn_x in ((x1, sx1, ix1, 1.0), (x0, sx0, ix0, -1.0)):
        for ys, syy, iyy, sgn_y in ((y1, sy1, iy1, 1.0), (y0, sy0, iy0, -1.0)):
            r3 = np.sqrt(sxx + syy + w2)
            xy = xs * ys
            wr = w * r3
            re.append(wr)
            im.append(xy)
            # Holl's second term XYz/R3 · (1/(X²+z²) + 1/(Y²+z²)), written as XYz²/(z R3)
            k = (xy * w) * (ixx + iyy) / (r3 + _TINY)
            kk = kk + k if sgn_x * sgn_y > 0 else kk - k
    # Ω = Σ ± atan2(XY, w R3); each pair difference of two angles in [−π/2, π/2]
    # lies in [−π, π], so it is one atan2 of the product z1·conj(z2)
    om = np.arctan2(im[0] * re[1] - re[0] * im[1], re[0] * re[1] + im[0] * im[1]) + np.arctan2(
        im[3] * re[2] - re[3] * im[2], re[3] * re[2] + im[3] * im[2]
    )
    sz = (om + kk) / _TWO_PI
    if np.any(w <= 0):
        # surface limit: 1 inside, 1/2 on an edge, 1/4 at a corner, 0 outside
        frac = 0.25 * (np.sign(x1) - np.sign(x0)) * (np.sign(y1) - np.sign(y0))
        sz = np.where(w > 0, sz, frac)
        om = np.where(w > 0, om, _TWO_PI * frac)
    return sz, om


def rectangle_stress(pressure, length, width, x, y, z):
    r"""Vertical stress at any point below a uniformly loaded rectangle.

    Parameters
    ----------
    pressure : array_like
        Uniform pressure q. [kPa]
    length, width : array_like
        Sides of the rectangle along its local x and y axes. [m]
    x, y : array_like
        Offsets of the point from the rectangle's centre along those axes. [m]
    z : array_like
        Depth below the loaded plane. [m]

    Returns
    -------
    numpy.ndarray
        σz; q, q/2, q/4 or 0 at z = 0 inside, on an edge, at a corner,
        outside; 0 for z < 0. [kPa]

    Notes
    -----
    Four signed corner terms c(X, Y) (METHODS.md §1.3), each Holl's expression

    .. math:: c = \frac{1}{2\pi}\left[\arctan\frac{XY}{z R_3}
              + \frac{XYz}{R_3}\left(\frac{1}{X^2+z^2} + \frac{1}{Y^2+z^2}\right)\right]

    with R3 = √(X² + Y² + z²), odd in X and Y, evaluated with atan2.

    References
    ----------
    .. [1] Holl (1940); Newmark (1935).
    """
    pressure, length, width, x, y, z = (
        np.asarray(a, dtype=float) for a in (pressure, length, width, x, y, z)
    )
    w = np.where(z > 0, z, 0.0)
    sz, _ = _rect_terms(length / 2.0, width / 2.0, x, y, w)
    return np.where(z >= 0, pressure * sz, np.where(np.isnan(z), np.nan, 0.0))


def rectangle_solid_angle(length, width, x, y, z):
    r"""Solid angle Ω that a rectangle subtends at a point below its plane.

    Parameters
    ----------
    length, width : array_like
        Sides along the local x and y axes. [m]
    x, y : array_like
        Offsets from the centre along those axes. [m]
    z : array_like
        Depth below the plane. [m]

    Returns
    -------
    numpy.ndarray
        Ω; 2π, π or 0 at z = 0 inside, on an edge, outside; 0 for z < 0. [sr]

    Notes
    -----
    Corner superposition of :math:`\Omega = \arctan[BL/(z\sqrt{B^2+L^2+z^2})]`
    (METHODS.md §1.7).
    """
    length, width, x, y, z = (np.asarray(a, dtype=float) for a in (length, width, x, y, z))
    w = np.where(z > 0, z, 0.0)
    _, om = _rect_terms(length / 2.0, width / 2.0, x, y, w)
    return np.where(z >= 0, om, np.where(np.isnan(z), np.nan, 0.0))


# --- polygon ---------------------------------------------------------------


def _edge_terms(ax, ay, bx, by, w):
    """Per-edge Ω_e and K_e of METHODS.md §1.6, for edges a→b relative to the point.

    Written with atan2 instead of arcsin (same values, no loss of precision
    near sin φ = ±1): with t the unit edge direction, d = (a × b)/ℓ and
    D = |d|, arcsin(s) = atan2(v·t, D) and arcsin(z s / c) = atan2(z v·t, D √(|v|²+z²)),
    and K_e = z d [b·t/√(|b|²+z²) − a·t/√(|a|²+z²)] / (d² + z²).
    """
    ex, ey = bx - ax, by - ay
    ell = np.sqrt(ex * ex + ey * ey)
    tx, ty = ex / ell, ey / ell
    d = (ax * by - ay * bx) / ell
    dd = np.abs(d)
    ta = ax * tx + ay * ty
    tb = bx * tx + by * ty
    w2 = w * w
    ra = np.sqrt(ax * ax + ay * ay + w2)
    rb = np.sqrt(bx * bx + by * by + w2)
    g = (np.arctan2(tb, dd) - np.arctan2(w * tb, dd * rb)) - (
        np.arctan2(ta, dd) - np.arctan2(w * ta, dd * ra)
    )
    om = np.sign(d) * g
    k = w * d * (tb / (rb + _TINY) - ta / (ra + _TINY)) / (d * d + w2 + _TINY)
    return om, k


def _as_outline(vertices, where="polygon"):
    xy = np.asarray(vertices, dtype=float)
    if xy.ndim != 2 or xy.shape[1] != 2:
        raise InputError(where, f"outline has shape {xy.shape}", "an (n, 2) array of plan vertices")
    if len(xy) > 1 and np.array_equal(xy[0], xy[-1]):
        xy = xy[:-1]
    if len(xy) < 3 or not np.all(np.isfinite(xy)):
        raise InputError(where, f"outline has {len(xy)} finite vertices", "at least 3")
    return xy


def _polygon_sum_reference(vertices, x, y, w):
    """(σz/q, Ω) of one outline by the plain numpy edge sum (the reference of the tests)."""
    xy = _as_outline(vertices)
    area2 = float(np.dot(xy[:, 0], np.roll(xy[:, 1], -1)) - np.dot(xy[:, 1], np.roll(xy[:, 0], -1)))
    sign_a = 1.0 if area2 > 0 else -1.0
    x = np.asarray(x, dtype=float)[..., None]
    y = np.asarray(y, dtype=float)[..., None]
    w = np.asarray(w, dtype=float)[..., None]
    a = xy
    b = np.roll(xy, -1, axis=0)
    om, k = _edge_terms(a[:, 0] - x, a[:, 1] - y, b[:, 0] - x, b[:, 1] - y, w)
    om = sign_a * om.sum(axis=-1)
    k = sign_a * k.sum(axis=-1)
    return (om + k) / _TWO_PI, om


# The compiled edge sum. The same per-edge terms as ``_edge_terms``, with each
# difference of two angles in [−π/2, π/2] written as one atan2 of the product
# z_b·conj(z_a) (as in ``_rect_terms``), so an edge costs two atan2 and one
# square root (the vertex's |v|² + w² is shared by its two edges); the edge
# direction and length come from the absolute coordinates once per edge.


@_ff._compiled
def _edge_pair(ax, ay, bx, by, tx, ty, ell, ra, rb, w):
    """(Ω_e, K_e) of one edge a → b (relative to the point), t its unit direction,
    ℓ its length, ra, rb = √(|a|² + w²), √(|b|² + w²)."""
    d = (ax * by - ay * bx) / ell
    if d == 0.0:
        return 0.0, 0.0
    dd = abs(d)
    ta = ax * tx + ay * ty
    tb = bx * tx + by * ty
    w2 = w * w
    g1 = math.atan2(dd * ell, dd * dd + ta * tb)
    g2 = math.atan2(w * dd * (tb * ra - ta * rb), dd * dd * ra * rb + w2 * ta * tb)
    om = g1 - g2 if d > 0.0 else g2 - g1
    k = w * d * (tb / (rb + _TINY) - ta / (ra + _TINY)) / (d * d + w2 + _TINY)
    return om, k


@_ff._compiled
def _segment(vx, vy, lo, hi, x, y, w, tx, ty, ell):
    """:func:`_edge_pair` of the segment from vertex ``lo`` to vertex ``hi`` (an edge,
    or the chord of a chain) seen from (x, y) at depth w below the plane."""
    w2 = w * w
    ax = vx[lo] - x
    ay = vy[lo] - y
    bx = vx[hi] - x
    by = vy[hi] - y
    ra = math.sqrt(ax * ax + ay * ay + w2)
    rb = math.sqrt(bx * bx + by * by + w2)
    return _edge_pair(ax, ay, bx, by, tx, ty, ell, ra, rb, w)


@_ff._compiled
def _rings_exact(vx, vy, etx, ety, ell, start, dep, wq, px, py, pz, out_s, out_t):
    """Add Σ over rings of q·σ_A·(σz/q, Ω/π) to ``out_s``, ``out_t`` at each point.

    Ring r has vertices ``start[r] … start[r+1] − 1`` of ``vx``, ``vy``, the
    first repeated at the end (closed); edge j runs from vertex j to j + 1 with
    unit direction (etx[j], ety[j]) and length ell[j] (0: a repeated vertex,
    skipped). A point with w = z − depth ≤ 0 gets nothing from a ring (a NaN
    coordinate gives NaN, as in the numpy sum).
    """
    for i in range(len(px)):
        x, y, z = px[i], py[i], pz[i]
        acc_s = 0.0
        acc_t = 0.0
        for r in range(len(dep)):
            w = z - dep[r]
            q = wq[r]
            if not w > 0.0:
                if w == w and x == x and y == y:
                    continue
                w = 0.0
                q = 0.0
            w2 = w * w
            j0, j1 = start[r], start[r + 1] - 1
            ax = vx[j0] - x
            ay = vy[j0] - y
            ra = math.sqrt(ax * ax + ay * ay + w2)
            som = 0.0
            sk = 0.0
            for j in range(j0, j1):
                bx = vx[j + 1] - x
                by = vy[j + 1] - y
                rb = math.sqrt(bx * bx + by * by + w2)
                if ell[j] > 0.0:
                    om, k = _edge_pair(ax, ay, bx, by, etx[j], ety[j], ell[j], ra, rb, w)
                    som += om
                    sk += k
                ax, ay, ra = bx, by, rb
            acc_s += q * (som + sk)
            acc_t += q * som
        out_s[i] += acc_s / _TWO_PI
        out_t[i] += acc_t * _K_THETA


@_ff._compiled
def _chain_bounds(x, y, w, ax, ay, tx, ty, x0, x1, hlo, hhi):
    """Upper bounds of ∫_R k dA for k the σz/q and the T/q kernels, R the box
    [x0, x1] × [hlo, hhi] in the frame of a chord from (ax, ay) along (tx, ty),
    at the point (x, y) and depth w > 0 (see ``_chain_tree``).

    R is crossed by lines parallel to the chord; on each the kernel is at most
    its value on the nearest one (plan offset dm from the box, c² = dm² + w²),
    whose integral over [X0, X1] is elementary:
    ∫ dX/(X² + c²)^{5/2} = X(2X² + 3c²)/(3c⁴(X² + c²)^{3/2}) and
    ∫ dX/(X² + c²)^{3/2} = X/(c²(X² + c²)^{1/2}).
    """
    dx = x - ax
    dy = y - ay
    u = dx * tx + dy * ty
    v = tx * dy - ty * dx
    if v < hlo:
        dm = hlo - v
    elif v > hhi:
        dm = v - hhi
    else:
        dm = 0.0
    c2 = dm * dm + w * w
    xa = x0 - u
    xb = x1 - u
    sa = math.sqrt(xa * xa + c2)
    sb = math.sqrt(xb * xb + c2)
    width = hhi - hlo
    fa, fb = xa / sa, xb / sb
    bt = _K_THETA * w * width * (fb - fa + 1e-15 * (abs(fa) + abs(fb))) / c2
    ga = xa * (2.0 * xa * xa + 3.0 * c2) / (sa * sa * sa)
    gb = xb * (2.0 * xb * xb + 3.0 * c2) / (sb * sb * sb)
    bs = _K_SIGMA * w * w * w * width * (gb - ga + 1e-15 * (abs(ga) + abs(gb))) / (3.0 * c2 * c2)
    return bs * (1.0 + 1e-12), bt * (1.0 + 1e-12)


@_ff._compiled
def _chain_eval(vx, vy, etx, ety, ell, nodes, nfl, arc_total, ox, oy, dep, wq, eps_q,
                px, py, pz, out_s, out_t, stats):
    """Add q·σ_A·(σz/q, Ω/π) of one outline to ``out_s``, ``out_t``, replacing
    chains by their chords where the bound allows (see ``_chain_tree``).

    ``nodes`` (int64, one row per node): first vertex lo, last vertex hi (the
    chain's edges are lo … hi − 1), left child, right child, approximable flag;
    ``nfl`` (float): chord start x, y, direction tx, ty, length, box x0, x1, hlo,
    hhi, arc length of the chain. Depth first from the root, a point accepts an
    approximable node when both its bounds (σz/q and T/q) are at most
    eps_q·arc/arc_total; the accepted chains are disjoint, so their bounds sum
    to at most eps_q at every point. ``stats`` gets the number of points where
    a chord was used, the most vertices dropped at one point and their total.
    Returns the largest sums of the bounds (σz/q, T/q) at a point.
    """
    stack = np.empty(256, dtype=np.int64)
    worst_s = 0.0
    worst_t = 0.0
    for i in range(len(px)):
        w = pz[i] - dep
        if not w > 0.0:
            continue
        x = px[i] - ox
        y = py[i] - oy
        som = 0.0
        sk = 0.0
        es = 0.0
        et = 0.0
        dropped = 0
        stack[0] = 0
        sp = 1
        while sp > 0:
            sp -= 1
            c = stack[sp]
            lo = nodes[c, 0]
            hi = nodes[c, 1]
            if nodes[c, 4] == 1:
                bs, bt = _chain_bounds(
                    x, y, w, nfl[c, 0], nfl[c, 1], nfl[c, 2], nfl[c, 3],
                    nfl[c, 5], nfl[c, 6], nfl[c, 7], nfl[c, 8],
                )
                lim = eps_q * nfl[c, 9] / arc_total
                if bs <= lim and bt <= lim:
                    om, k = _segment(vx, vy, lo, hi, x, y, w, nfl[c, 2], nfl[c, 3], nfl[c, 4])
                    som += om
                    sk += k
                    es += bs
                    et += bt
                    dropped += hi - lo - 1
                    continue
            if hi - lo == 1:
                if ell[lo] > 0.0:
                    om, k = _segment(vx, vy, lo, hi, x, y, w, etx[lo], ety[lo], ell[lo])
                    som += om
                    sk += k
                continue
            stack[sp] = nodes[c, 3]
            stack[sp + 1] = nodes[c, 2]
            sp += 2
        out_s[i] += wq * (som + sk) / _TWO_PI
        out_t[i] += wq * som * _K_THETA
        if dropped > 0:
            stats[0] += 1
            stats[1] = max(stats[1], dropped)
            stats[2] += dropped
        worst_s = max(worst_s, es)
        worst_t = max(worst_t, et)
    return worst_s, worst_t


#: outlines with at least this many vertices are evaluated through their chain
#: tree when a tolerance allows it (on benchmarks/polygon_bench.py the tree
#: costs about as much as the exact sum near 1,000 vertices)
_TREE_MIN_VERTICES = 2048
#: share of the stress engine's allowed error ε that chain replacement may spend
#: (the far field keeps the rest); 10 % rather than 1 % makes a dense raft's tree
#: 2.5–3 times faster (benchmarks/README.md) and leaves the far field 90 %
_CHAIN_SHARE = 0.1
#: (point × vertex) work above which the compiled loops run on two threads
_THREAD_WORK = 1 << 18


class _Outline:
    """Cached per-outline tables: the closed ring, its edges, its chain tree."""

    __slots__ = ("n", "sign", "vx", "vy", "etx", "ety", "ell", "_tree", "__weakref__")

    def __init__(self, xy):
        self.n = len(xy)
        area2 = float(
            np.dot(xy[:, 0], np.roll(xy[:, 1], -1)) - np.dot(xy[:, 1], np.roll(xy[:, 0], -1))
        )
        self.sign = 1.0 if area2 > 0 else -1.0
        v = np.vstack([xy, xy[:1]])
        self.vx, self.vy = np.ascontiguousarray(v[:, 0]), np.ascontiguousarray(v[:, 1])
        ex, ey = np.diff(self.vx), np.diff(self.vy)
        ell = np.sqrt(ex * ex + ey * ey)
        safe = np.where(ell > 0, ell, 1.0)
        self.etx, self.ety, self.ell = ex / safe, ey / safe, ell
        self._tree = None

    def tree(self):
        if self._tree is None:
            self._tree = _chain_tree(self.vx, self.vy)
        return self._tree


_OUTLINES: dict[int, tuple] = {}


def _outline(xy) -> _Outline:
    """The cached tables of the outline array ``xy`` (kept while ``xy`` lives)."""
    import weakref

    key = id(xy)
    hit = _OUTLINES.get(key)
    if hit is not None and hit[0]() is xy:
        return hit[1]
    data = _Outline(xy)
    try:
        ref = weakref.ref(xy, lambda _r, k=key: _OUTLINES.pop(k, None))
    except TypeError:
        return data
    _OUTLINES[key] = (ref, data)
    return data


def _chain_tree(vx, vy):
    """Binary tree of the outline's chains of consecutive edges, with the box
    that bounds each chain's difference from its chord.

    Node c covers the edges lo … hi − 1 (vertices lo … hi of the closed ring).
    Replacing a chain by its chord a → b changes the edge sum by exactly
    q ∫ k(p − s) w_c(s) dA, where w_c is the winding number of the closed loop
    "chain, then chord back" (the edge sum of any closed polygon is the
    winding-number-weighted integral of the kernel, by the radial integration of
    METHODS.md §1.6). If the chain is monotone along the chord (every edge has
    a non-negative component along it), each line across the chord meets the
    chain once and the chord once, so |w_c| ≤ 1, and w_c = 0 outside the box
    [x0, x1] × [hlo, hhi] of the chain's vertices in the chord's frame (the
    loop's convex hull lies in it). With the kernel k ≥ 0,
    |error| ≤ |q| ∫_box k dA, bounded by ``_chain_bounds``. Only monotone
    chains with a chord of non-zero length are marked approximable; the box
    is widened by a rounding margin.

    Returns (nodes int64 (m, 5), nfl float (m, 10), origin x, y, total arc
    length, relative vx, vy, edge tx, ty, ℓ); coordinates relative to the
    origin (the vertices' mean), so that the bounds keep their precision.
    """
    ox, oy = float(np.mean(vx[:-1])), float(np.mean(vy[:-1]))
    x, y = vx - ox, vy - oy
    n = len(x) - 1
    ex, ey = np.diff(x), np.diff(y)
    ell = np.hypot(ex, ey)
    safe = np.where(ell > 0, ell, 1.0)
    etx, ety = ex / safe, ey / safe
    pad = 1e-13 * (1.0 + float(np.max(np.abs(np.concatenate([x, y])))))
    # the nodes, level by level (breadth first)
    lo_all, hi_all, left, right = [np.array([0])], [np.array([n])], [], []
    lo, hi = lo_all[0], hi_all[0]
    count = 1
    while True:
        split = hi - lo > 1
        lf = np.full(len(lo), -1)
        rt = np.full(len(lo), -1)
        ns = int(split.sum())
        lf[split] = count + 2 * np.arange(ns)
        rt[split] = lf[split] + 1
        left.append(lf)
        right.append(rt)
        if ns == 0:
            break
        mid = (lo[split] + hi[split]) // 2
        nlo = np.empty(2 * ns, dtype=np.int64)
        nhi = np.empty(2 * ns, dtype=np.int64)
        nlo[0::2], nhi[0::2] = lo[split], mid
        nlo[1::2], nhi[1::2] = mid, hi[split]
        count += 2 * ns
        lo, hi = nlo, nhi
        lo_all.append(lo)
        hi_all.append(hi)
    lo, hi = np.concatenate(lo_all), np.concatenate(hi_all)
    m = len(lo)
    nodes = np.zeros((m, 5), dtype=np.int64)
    nodes[:, 0], nodes[:, 1] = lo, hi
    nodes[:, 2], nodes[:, 3] = np.concatenate(left), np.concatenate(right)
    nfl = np.zeros((m, 10))
    cum = np.concatenate([[0.0], np.cumsum(ell)])
    # per level: the chains of one level are disjoint, so their vertices fit in O(n)
    off = 0
    for llo, lhi in zip(lo_all, hi_all):
        k = len(llo)
        sl = slice(off, off + k)
        off += k
        ax, ay = x[llo], y[llo]
        cx, cy = x[lhi] - ax, y[lhi] - ay
        clen = np.hypot(cx, cy)
        ok = (clen > 0) & (lhi - llo > 1)
        cs = np.where(clen > 0, clen, 1.0)
        tx, ty = cx / cs, cy / cs
        size = lhi - llo + 1
        node_of = np.repeat(np.arange(k), size)
        starts = np.concatenate([[0], np.cumsum(size)[:-1]])
        vidx = llo[node_of] + (np.arange(int(size.sum())) - starts[node_of])
        rx, ry = x[vidx] - ax[node_of], y[vidx] - ay[node_of]
        proj = rx * tx[node_of] + ry * ty[node_of]
        offs = tx[node_of] * ry - ty[node_of] * rx
        x0 = np.minimum.reduceat(proj, starts)
        x1 = np.maximum.reduceat(proj, starts)
        hlo = np.minimum.reduceat(offs, starts)
        hhi = np.maximum.reduceat(offs, starts)
        # monotone: every edge's component along the chord >= 0 (edges lo … hi − 1)
        esize = lhi - llo
        enode = np.repeat(np.arange(k), esize)
        estart = np.concatenate([[0], np.cumsum(esize)[:-1]])
        eidx = llo[enode] + (np.arange(int(esize.sum())) - estart[enode])
        dots = ex[eidx] * tx[enode] + ey[eidx] * ty[enode]
        mono = np.minimum.reduceat(dots, estart) >= 0
        nodes[sl, 4] = (ok & mono).astype(np.int64)
        nfl[sl, 0], nfl[sl, 1], nfl[sl, 2], nfl[sl, 3], nfl[sl, 4] = ax, ay, tx, ty, clen
        nfl[sl, 5], nfl[sl, 6] = x0 - pad, x1 + pad
        nfl[sl, 7], nfl[sl, 8] = np.minimum(hlo, 0.0) - pad, np.maximum(hhi, 0.0) + pad
        nfl[sl, 9] = cum[lhi] - cum[llo]
    return nodes, nfl, ox, oy, float(cum[-1]), x, y, etx, ety, ell


def _threaded(fn, n, work):
    """Run ``fn(sl)`` over two halves of range(n) in threads when ``work`` is large."""
    if n < 2 or work < _THREAD_WORK or _tc._THREADS < 2:
        return [fn(slice(0, n))]
    from concurrent.futures import ThreadPoolExecutor

    half = n // 2
    with ThreadPoolExecutor(max_workers=2) as pool:
        return list(pool.map(fn, (slice(0, half), slice(half, n))))


def _rings_sum(outs, weights, depths, px, py, pz):
    """Exact (σz, T) at points (P,) of the outlines ``outs`` (``_Outline``) with
    pressures × orientation ``weights`` [kPa] and plane depths [m], compiled."""
    n = len(px)
    sz, tt = np.zeros(n), np.zeros(n)
    if n == 0 or not outs:
        return sz, tt
    if len(outs) == 1:
        o = outs[0]
        vx, vy, etx, ety, ell = o.vx, o.vy, o.etx, o.ety, o.ell
        start = np.array([0, len(vx)], dtype=np.int64)
    else:
        vx = np.concatenate([o.vx for o in outs])
        vy = np.concatenate([o.vy for o in outs])
        # one padding edge per ring (its last slot) is never used
        etx = np.concatenate([np.append(o.etx, 0.0) for o in outs])
        ety = np.concatenate([np.append(o.ety, 0.0) for o in outs])
        ell = np.concatenate([np.append(o.ell, 0.0) for o in outs])
        start = np.concatenate([[0], np.cumsum([len(o.vx) for o in outs])]).astype(np.int64)
    wq = np.asarray(weights, dtype=float)
    dep = np.asarray(depths, dtype=float)
    px, py, pz = (np.ascontiguousarray(a, dtype=float) for a in (px, py, pz))

    def run(sl):
        _rings_exact(vx, vy, etx, ety, ell, start, dep, wq, px[sl], py[sl], pz[sl], sz[sl], tt[sl])

    _threaded(run, n, n * len(vx))
    return sz, tt


def _chain_sum(o: _Outline, weight, depth, budget, px, py, pz):
    """(σz, T) at points (P,) of one outline with chains replaced by chords where
    the error bound stays within ``budget`` [kPa] at every point; also the stats
    (points simplified, most and total vertices dropped, largest bound spent [kPa])."""
    n = len(px)
    sz, tt = np.zeros(n), np.zeros(n)
    nodes, nfl, ox, oy, arc, x, y, etx, ety, ell = o.tree()
    eps_q = budget / abs(weight)
    px, py, pz = (np.ascontiguousarray(a, dtype=float) for a in (px, py, pz))

    def run(sl):
        st = np.zeros(3, dtype=np.int64)
        ws, wt = _chain_eval(
            x, y, etx, ety, ell, nodes, nfl, arc, ox, oy, float(depth), float(weight), eps_q,
            px[sl], py[sl], pz[sl], sz[sl], tt[sl], st,
        )
        return st, ws, wt

    parts = _threaded(run, n, n * 64)
    stats = (
        sum(int(p[0][0]) for p in parts),
        max(int(p[0][1]) for p in parts),
        sum(int(p[0][2]) for p in parts),
        abs(weight) * max(max(p[1], p[2]) for p in parts),
    )
    return sz, tt, stats


def _polygon_sum(vertices, x, y, w):
    """(σz/q, Ω) of one outline at points broadcast from x, y, w (compiled edge sum)."""
    xy = _as_outline(vertices)
    x, y, w = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (x, y, w)))
    shape = x.shape
    o = _Outline(xy)
    xf, yf, wf = (np.ascontiguousarray(a.ravel()) for a in (x, y, w))
    # w = 0 is the surface limit, which the edge sum gives with w = 0 itself
    sz, tt = _rings_sum([o], [o.sign], [0.0], xf, yf, np.where(wf > 0, wf, 0.0))
    surf = ~(wf > 0)
    if surf.any():
        a, b = _polygon_sum_reference(xy, xf[surf], yf[surf], wf[surf])
        sz[surf], tt[surf] = a, b * _K_THETA
    return sz.reshape(shape), (tt / _K_THETA).reshape(shape)


def polygon_stress(pressure, vertices, x, y, z):
    r"""Vertical stress below a uniformly loaded simple polygon (exact, no meshing).

    Parameters
    ----------
    pressure : array_like
        Uniform pressure q. [kPa]
    vertices : array_like
        (n, 2) plan vertices of one simple polygon, convex or not, either
        orientation, closed or not. [m]
    x, y : array_like
        Plan position of the stress points. [m]
    z : array_like
        Depth below the loaded plane. [m]

    Returns
    -------
    numpy.ndarray
        σz; q, q/2 or 0 at z = 0 inside, on an edge, outside; 0 for z < 0. [kPa]

    Notes
    -----
    Edge sum of METHODS.md §1.6: for each directed edge a → b, with the point's
    plan projection at the origin,

    .. math:: \sigma_z = \frac{q}{2\pi}\,\sigma_A \sum_e (\Omega_e + K_e)

    where Ω_e is the edge's share of the solid angle and K_e the remaining
    term of the radial integral of the Boussinesq kernel, σ_A the orientation.

    References
    ----------
    .. [1] Damy & Casales (1985); METHODS.md §1.6 (our derivation).

    Examples
    --------
    >>> tri = [(0, 0), (3, 0), (1, 2)]
    >>> round(float(polygon_stress(1.0, tri, 1.0, 0.5, 1.0)), 6)
    0.560359
    """
    pressure, z = np.asarray(pressure, dtype=float), np.asarray(z, dtype=float)
    w = np.where(z > 0, z, 0.0)
    sz, _ = _polygon_sum(vertices, x, y, w)
    return np.where(z >= 0, pressure * sz, np.where(np.isnan(z), np.nan, 0.0))


def polygon_solid_angle(vertices, x, y, z):
    r"""Solid angle a simple polygon subtends at points below its plane.

    Parameters
    ----------
    vertices : array_like
        (n, 2) plan vertices. [m]
    x, y : array_like
        Plan position of the points. [m]
    z : array_like
        Depth below the plane. [m]

    Returns
    -------
    numpy.ndarray
        Ω = σ_A Σ Ω_e (METHODS.md §1.6–1.7); 0 for z < 0. [sr]

    References
    ----------
    .. [1] Van Oosterom & Strackee (1983) for the triangle form it agrees with.
    """
    z = np.asarray(z, dtype=float)
    w = np.where(z > 0, z, 0.0)
    _, om = _polygon_sum(vertices, x, y, w)
    return np.where(z >= 0, om, np.where(np.isnan(z), np.nan, 0.0))


# --- circle ------------------------------------------------------------------


def _graded_rule(levels=7, ratio=0.25, order=8):
    """Composite Gauss–Legendre nodes/weights on [0, 1], panels graded to both ends."""
    inner = [ratio**k / 2.0 for k in range(1, levels + 1)]
    breaks = np.unique(np.concatenate([[0.0, 0.5, 1.0], inner, 1.0 - np.array(inner)]))
    gx, gw = np.polynomial.legendre.leggauss(order)
    lo, hi = breaks[:-1, None], breaks[1:, None]
    nodes = (lo + hi) / 2.0 + (hi - lo) / 2.0 * gx
    weights = (hi - lo) / 2.0 * gw
    return nodes.ravel(), weights.ravel()


#: quadrature on [0, 1] for the circle (15 graded panels × 8 Gauss–Legendre nodes)
_CIRCLE_T, _CIRCLE_W = _graded_rule()


def _circle_terms(radius, r, w):
    """σz/q and Ω of a disc at plan distance r from its centre, depth w > 0.

    Polar integral about the point's projection O (METHODS.md §1.6):
    σz/q = (1/2π) ∫ [Φ(ρ_out) − Φ(ρ_in)] dθ with Φ(ρ) = 1 − w³/(ρ²+w²)^{3/2}
    (and Ψ(ρ) = 1 − w/√(ρ²+w²) for Ω). Inside the circle θ runs over [0, π]
    (twice, by symmetry) with ρ_in = 0; outside, the substitution
    sin θ = (a/r) sin ψ, ψ ∈ [0, π/2], removes the square-root end points.
    Both use the graded composite Gauss–Legendre rule.
    """
    a, r, w0 = np.broadcast_arrays(
        np.asarray(radius, dtype=float), np.asarray(r, dtype=float), np.asarray(w, dtype=float)
    )
    shape = a.shape
    a, r, w0 = a.ravel(), r.ravel(), w0.ravel()
    w = np.where(w0 > 0, w0, 1.0)  # the surface limit is set below
    sz, om = np.empty(a.shape), np.empty(a.shape)
    # each point needs only its own branch of the integral
    inside = r <= a
    for sel, fn in (
        (np.flatnonzero(inside), _circle_inside),
        (np.flatnonzero(~inside), _circle_outside),
    ):
        if len(sel):
            sz[sel], om[sel] = fn(a[sel, None], r[sel, None], w[sel, None])
    # surface limit (w = 0): 1, 1/2, 0 of q; 2π, π, 0 of Ω
    wz = w0 <= 0
    edge = np.where(r < a, 1.0, np.where(r == a, 0.5, 0.0))
    sz = np.where(wz, edge, sz)
    om = np.where(wz, _TWO_PI * edge, om)
    return sz.reshape(shape), om.reshape(shape)


def _circle_inside(a, r, w):
    """σz/q and Ω of a disc at points inside it (r <= a), w > 0; (P, 1) arrays."""
    w2 = w * w
    # θ ∈ [0, π], θ = 0 points away from the centre; two halves so that the
    # panels are graded towards θ = 0 and both sides of θ = π/2
    th = 0.5 * math.pi * np.concatenate([_CIRCLE_T, 1.0 + _CIRCLE_T])
    c, s = np.cos(th), np.sin(th)
    root = np.sqrt(np.maximum(a * a - (r * s) ** 2, 0.0))
    rho = np.where(c > 0, (a * a - r * r) / (r * c + root + _TINY), root - r * c)
    rho = np.maximum(rho, 0.0)
    q2 = rho * rho + w2
    sq = np.sqrt(q2)
    phi_in = 1.0 - w2 * w / (q2 * sq)
    psi_in = 1.0 - w / sq
    wts = np.concatenate([_CIRCLE_W, _CIRCLE_W]) * (0.5 * math.pi)
    return 2.0 * np.sum(phi_in * wts, axis=-1) / _TWO_PI, 2.0 * np.sum(psi_in * wts, axis=-1)


def _circle_outside(a, r, w):
    """σz/q and Ω of a disc at points outside it (r > a), w > 0; (P, 1) arrays."""
    w2 = w * w
    # ψ ∈ [0, π/2]
    ps = 0.5 * math.pi * _CIRCLE_T
    cp, sp = np.cos(ps), np.sin(ps)
    ratio = np.where(r > a, a / np.where(r > 0, r, 1.0), 0.0)
    ct = np.sqrt(np.maximum(1.0 - (ratio * sp) ** 2, 0.0))
    rho1 = (r * r - a * a) / (r * ct + a * cp + _TINY)
    rho1 = np.maximum(rho1, 0.0)
    rho2 = r * ct + a * cp
    jac = ratio * cp / np.where(ct > 0, ct, 1.0) * (0.5 * math.pi) * _CIRCLE_W
    q1, q2 = rho1 * rho1 + w2, rho2 * rho2 + w2
    s1, s2 = np.sqrt(q1), np.sqrt(q2)
    sz_out = (
        2.0 * np.sum((w2 * w / (q1 * s1 + _TINY) - w2 * w / (q2 * s2)) * jac, axis=-1) / _TWO_PI
    )
    om_out = 2.0 * np.sum((w / (s1 + _TINY) - w / s2) * jac, axis=-1)
    return sz_out, om_out


def circle_stress(pressure, radius, r, z):
    r"""Vertical stress at any point below a uniformly loaded circle.

    Parameters
    ----------
    pressure : array_like
        Uniform pressure q. [kPa]
    radius : array_like
        Radius a of the circle. [m]
    r : array_like
        Plan distance of the point from the centre. [m]
    z : array_like
        Depth below the loaded plane. [m]

    Returns
    -------
    numpy.ndarray
        σz; q, q/2, 0 at z = 0 inside, on the edge, outside; 0 for z < 0. [kPa]

    Notes
    -----
    A 1-D polar integral of the Boussinesq kernel about the point's plan
    projection,

    .. math::
        \sigma_z = \frac{q}{2\pi}\int
        \left[1-\frac{z^3}{(\rho^2+z^2)^{3/2}}\right]_{\rho_{in}}^{\rho_{out}} d\theta

    evaluated with a composite Gauss–Legendre rule (120 nodes, panels graded
    towards the places where the integrand varies fastest). Accuracy, tested
    against scipy double integration of the point-load formula: better than
    1e-9 q at points more than 0.01 a from the edge, and better than 1e-6 q
    for points within 1e-3 a of the edge at any z > 0 (tests/test_stress.py).
    On the axis it reduces to σz/q = 1 − [1 + (a/z)²]^(−3/2).

    References
    ----------
    .. [1] Boussinesq (1885); METHODS.md §1.5–1.6.

    Examples
    --------
    >>> round(float(circle_stress(1.0, 1.0, 0.0, 1.0)), 6)
    0.646447
    """
    pressure, radius, r, z = (np.asarray(a, dtype=float) for a in (pressure, radius, r, z))
    w = np.where(z > 0, z, 0.0)
    sz, _ = _circle_terms(radius, np.abs(r), w)
    return np.where(z >= 0, pressure * sz, np.where(np.isnan(z), np.nan, 0.0))


def circle_solid_angle(radius, r, z):
    r"""Solid angle a disc of radius a subtends at a point below its plane.

    Parameters
    ----------
    radius : array_like
        Radius a. [m]
    r : array_like
        Plan distance of the point from the centre. [m]
    z : array_like
        Depth below the plane. [m]

    Returns
    -------
    numpy.ndarray
        Ω, by the same quadrature as :func:`circle_stress`; on the axis
        2π[1 − z/√(a² + z²)]. [sr]
    """
    radius, r, z = (np.asarray(a, dtype=float) for a in (radius, r, z))
    w = np.where(z > 0, z, 0.0)
    _, om = _circle_terms(radius, np.abs(r), w)
    return np.where(z >= 0, om, np.where(np.isnan(z), np.nan, 0.0))


def spread_2to1(pressure, width, length, z):
    r"""The 2:1 load-spread approximation — for comparison only, not used by the engine.

    Parameters
    ----------
    pressure : array_like
        Uniform pressure q on a B × L rectangle. [kPa]
    width, length : array_like
        Sides B and L. [m]
    z : array_like
        Depth below the loaded plane. [m]

    Returns
    -------
    numpy.ndarray
        Average σz over the spread area, q B L / [(B + z)(L + z)]. [kPa]

    Notes
    -----
    An area average, not a centreline value; it under-estimates the centreline
    stress at shallow depth and over-estimates it deep down (METHODS.md §1.9).

    References
    ----------
    .. [1] Standard textbook approximation (e.g. Holtz & Kovacs 1981), common practice.
    """
    pressure, width, length, z = (np.asarray(a, dtype=float) for a in (pressure, width, length, z))
    zz = np.where(z > 0, z, 0.0)
    out = pressure * width * length / ((width + zz) * (length + zz))
    return np.where(z >= 0, out, np.where(np.isnan(z), np.nan, 0.0))


# ---------------------------------------------------------------------------
# a collection of loads
# ---------------------------------------------------------------------------

#: kinds of loaded area held by :class:`Loads`
RECTANGLE, CIRCLE, POLYGON = 0, 1, 2


def _vector(value, n, name, where):
    arr = np.asarray(value, dtype=float)
    if arr.ndim > 1:
        raise InputError(where, f'"{name}" has shape {arr.shape}', "a number or a 1-D array")
    try:
        arr = np.broadcast_to(arr, (n,)).astype(float)
    except ValueError:
        raise InputError(
            where, f'"{name}" has {arr.size} values for {n} loads', f"1 or {n}"
        ) from None
    bad = ~np.isfinite(arr)
    if bad.any():
        raise InputError(
            f"{where}, load {int(np.argmax(bad))}", f'"{name}" is not finite', "a number"
        )
    return arr


def _common_length(args, where):
    """Length of the 1-D broadcast of ``args`` (1 when all are scalars)."""
    try:
        shape = np.broadcast_shapes(*(np.shape(a) for a in args))
    except ValueError:
        sizes = sorted({np.size(a) for a in args})
        raise InputError(where, f"arguments have different lengths {sizes}", "one length") from None
    if len(shape) > 1:
        raise InputError(where, f"arguments broadcast to shape {shape}", "1-D arrays")
    return int(shape[0]) if shape else 1


def _polygon_moments(xy):
    """Area, centroid and second moments about the centroid of one outline."""
    o = xy.mean(axis=0)
    x, y = xy[:, 0] - o[0], xy[:, 1] - o[1]
    x1, y1 = np.roll(x, -1), np.roll(y, -1)
    cr = x * y1 - x1 * y
    a = cr.sum() / 2.0
    if not abs(a) > 0:
        return 0.0, float(o[0]), float(o[1]), 0.0, 0.0, 0.0
    s = 1.0 if a > 0 else -1.0
    cx = ((x + x1) * cr).sum() / (6.0 * a)
    cy = ((y + y1) * cr).sum() / (6.0 * a)
    ixx = s * ((x * x + x * x1 + x1 * x1) * cr).sum() / 12.0 - abs(a) * cx * cx
    iyy = s * ((y * y + y * y1 + y1 * y1) * cr).sum() / 12.0 - abs(a) * cy * cy
    ixy = s * ((x * y1 + 2 * x * y + 2 * x1 * y1 + x1 * y) * cr).sum() / 24.0 - abs(a) * cx * cy
    return abs(a), cx + o[0], cy + o[1], ixx, ixy, iyy


@dataclass(frozen=True, eq=False)
class Loads:
    """Uniformly loaded plan areas (rectangles, circles, simple polygons).

    Index ``i`` is the i-th load in construction / :meth:`concat` order. Build
    with :meth:`rectangles`, :meth:`circles`, :meth:`polygons`; the fields are
    1-D arrays of equal length (``outlines`` holds a polygon's vertices and an
    empty (0, 2) array for the other kinds).

    Attributes
    ----------
    kind : ndarray of int
        0 rectangle, 1 circle, 2 polygon.
    x, y : ndarray
        Plan centroid. [m]
    length, width : ndarray
        Rectangle sides along and across its rotated axis; for a circle both are
        the diameter; 0 for a polygon. [m]
    rotation : ndarray
        Angle of a rectangle's ``length`` side from +x, counter-clockwise. [deg]
    radius : ndarray
        Circle radius, else 0. [m]
    pressure : ndarray
        Uniform pressure. [kPa]
    depth : ndarray
        Depth of the loaded plane below ground. [m]
    """

    kind: np.ndarray
    x: np.ndarray
    y: np.ndarray
    length: np.ndarray
    width: np.ndarray
    rotation: np.ndarray
    radius: np.ndarray
    pressure: np.ndarray
    depth: np.ndarray
    outlines: tuple[np.ndarray, ...] = field(default=())

    # -- construction --------------------------------------------------------

    @classmethod
    def rectangles(cls, x, y, width, length, rotation, pressure, depth) -> Loads:
        """Rectangles centred on (x, y) [m], sides ``width`` × ``length`` [m].

        ``rotation`` [deg] turns the ``length`` side counter-clockwise from +x;
        ``pressure`` [kPa]; ``depth`` of the loaded plane below ground [m]. All
        arguments broadcast to one 1-D length.
        """
        where = "Loads.rectangles"
        args = [
            np.asarray(a, dtype=float) for a in (x, y, width, length, rotation, pressure, depth)
        ]
        n = _common_length(args, where)
        names = ("x", "y", "width", "length", "rotation", "pressure", "depth")
        x, y, b, l, rot, q, d = (_vector(a, n, nm, where) for a, nm in zip(args, names))
        for arr, nm in ((b, "width"), (l, "length")):
            if (arr <= 0).any():
                i = int(np.argmax(arr <= 0))
                raise InputError(f"{where}, load {i}", f'"{nm}" is {arr[i]:g}', "a positive length")
        if (d < 0).any():
            i = int(np.argmax(d < 0))
            raise InputError(f"{where}, load {i}", f'"depth" is {d[i]:g}', "a depth >= 0")
        z = np.zeros(n)
        empty = np.zeros((0, 2))
        return cls(np.zeros(n, dtype=np.int8), x, y, l, b, rot, z, q, d, (empty,) * n)

    @classmethod
    def circles(cls, x, y, radius, pressure, depth) -> Loads:
        """Circles centred on (x, y) with ``radius`` [m], ``pressure`` [kPa], ``depth`` [m]."""
        where = "Loads.circles"
        args = [np.asarray(a, dtype=float) for a in (x, y, radius, pressure, depth)]
        n = _common_length(args, where)
        names = ("x", "y", "radius", "pressure", "depth")
        x, y, a, q, d = (_vector(v, n, nm, where) for v, nm in zip(args, names))
        if (a <= 0).any():
            i = int(np.argmax(a <= 0))
            raise InputError(f"{where}, load {i}", f'"radius" is {a[i]:g}', "a positive length")
        if (d < 0).any():
            i = int(np.argmax(d < 0))
            raise InputError(f"{where}, load {i}", f'"depth" is {d[i]:g}', "a depth >= 0")
        z = np.zeros(n)
        empty = np.zeros((0, 2))
        return cls(np.ones(n, dtype=np.int8), x, y, 2 * a, 2 * a, z, a, q, d, (empty,) * n)

    @classmethod
    def polygons(cls, outlines: Sequence, pressure, depth) -> Loads:
        """Simple polygons, convex or not, either orientation, closed or not.

        ``outlines`` is a sequence of (n, 2) vertex arrays [m]; ``pressure``
        [kPa] and ``depth`` [m] broadcast to one value per outline.
        """
        where = "Loads.polygons"
        outs = tuple(_as_outline(o, f"{where}, load {i}") for i, o in enumerate(outlines))
        n = len(outs)
        q = _vector(pressure, n, "pressure", where)
        d = _vector(depth, n, "depth", where)
        if (d < 0).any():
            i = int(np.argmax(d < 0))
            raise InputError(f"{where}, load {i}", f'"depth" is {d[i]:g}', "a depth >= 0")
        cx, cy = np.zeros(n), np.zeros(n)
        for i, xy in enumerate(outs):
            area, cx[i], cy[i], *_ = _polygon_moments(xy)
            if not area > 0:
                raise InputError(
                    f"{where}, load {i}", "the outline has zero area", "a simple polygon"
                )
        if n:
            # the edge sum and the far-field moments hold for simple outlines only
            rings = shapely.polygons([shapely.linearrings(o) for o in outs])
            bad = np.flatnonzero(~shapely.is_valid(rings))
            if len(bad):
                i = int(bad[0])
                raise InputError(
                    f"{where}, load {i}",
                    f"the outline is not simple ({shapely.is_valid_reason(rings[i])})",
                    "a simple polygon whose edges do not cross or touch",
                )
        z = np.zeros(n)
        return cls(np.full(n, POLYGON, dtype=np.int8), cx, cy, z, z, z, z, q, d, outs)

    @classmethod
    def concat(cls, *loads: Loads) -> Loads:
        """All the given collections, in order."""
        if not loads:
            return cls.rectangles([], [], [], [], [], [], [])
        names = ("kind", "x", "y", "length", "width", "rotation", "radius", "pressure", "depth")
        arrays = [np.concatenate([getattr(ld, nm) for ld in loads]) for nm in names]
        outs = tuple(o for ld in loads for o in ld.outlines)
        return cls(*arrays, outs)

    def __len__(self) -> int:
        return len(self.kind)

    def subset(self, index) -> Loads:
        """The loads at ``index`` (integer array, slice or boolean mask), in that order."""
        idx = np.arange(len(self))[index]
        idx = np.atleast_1d(idx)
        names = ("kind", "x", "y", "length", "width", "rotation", "radius", "pressure", "depth")
        arrays = [getattr(self, nm)[idx] for nm in names]
        return Loads(*arrays, tuple(self.outlines[i] for i in idx))

    def with_pressure(self, pressure) -> Loads:
        """Same geometry, new pressures [kPa] (one value or one per load)."""
        q = _vector(pressure, len(self), "pressure", "Loads.with_pressure")
        return Loads(
            self.kind,
            self.x,
            self.y,
            self.length,
            self.width,
            self.rotation,
            self.radius,
            q,
            self.depth,
            self.outlines,
        )

    # -- geometry used by the far field --------------------------------------

    def _moments(self):
        """Area, plan second moments (xx, xy, yy) about the centroid, and the
        radius of the smallest centroid-centred circle holding each load."""
        n = len(self)
        area, ixx, ixy, iyy, reach = (np.zeros(n) for _ in range(5))
        rect = self.kind == RECTANGLE
        l, b = self.length[rect], self.width[rect]
        t = np.radians(self.rotation[rect])
        c, s = np.cos(t), np.sin(t)
        area[rect] = l * b
        il, ib = l * b * l * l / 12.0, l * b * b * b / 12.0
        ixx[rect] = il * c * c + ib * s * s
        iyy[rect] = il * s * s + ib * c * c
        ixy[rect] = (il - ib) * c * s
        reach[rect] = 0.5 * np.hypot(l, b)
        circ = self.kind == CIRCLE
        a = self.radius[circ]
        area[circ] = math.pi * a * a
        ixx[circ] = iyy[circ] = math.pi * a**4 / 4.0
        reach[circ] = a
        for i in np.flatnonzero(self.kind == POLYGON):
            xy = self.outlines[i]
            area[i], cx, cy, ixx[i], ixy[i], iyy[i] = _polygon_moments(xy)
            reach[i] = np.max(np.hypot(xy[:, 0] - cx, xy[:, 1] - cy))
        return area, ixx, ixy, iyy, reach

    def _geometry(self) -> _tc.LoadGeometry:
        """Per-load moments, extents and rectangle tables for the treecode."""
        area, ixx, ixy, iyy, reach = self._moments()
        mu2 = ixx + iyy
        # radial moments μk = ∫|s − c|^k dA about each centroid: exact for k = 0, 2 and,
        # for rectangles and circles, k = 4; otherwise bounded (Cauchy–Schwarz for
        # k = 1, |s − c| ≤ reach for k = 3, 4)
        mu4 = reach * reach * mu2
        rect, circ = self.kind == RECTANGLE, self.kind == CIRCLE
        l, b = self.length[rect], self.width[rect]
        mu4[rect] = area[rect] * ((l**4 + b**4) / 80.0 + (l * b) ** 2 / 72.0)
        mu4[circ] = area[circ] * self.radius[circ] ** 4 / 3.0
        mu = np.stack([area, np.sqrt(area * mu2), mu2, reach * mu2, mu4], axis=1)
        # half-extents in x and y of each load's plan bounding box about its centroid
        ext = np.column_stack([reach, reach])
        t = np.radians(self.rotation[rect])
        ct, st = np.abs(np.cos(t)), np.abs(np.sin(t))
        hl, hb = self.length[rect] / 2.0, self.width[rect] / 2.0
        ext[rect, 0] = np.minimum(ct * hl + st * hb, reach[rect])
        ext[rect, 1] = np.minimum(st * hl + ct * hb, reach[rect])
        for i in np.flatnonzero(self.kind == POLYGON):
            xy = self.outlines[i]
            ext[i] = np.abs(xy - [self.x[i], self.y[i]]).max(axis=0)
        # plan second-moment tensors ∫ t tᵀ dA of each load about its centroid (3 × 3)
        inert = np.zeros((len(self), 3, 3))
        inert[:, 0, 0], inert[:, 0, 1], inert[:, 1, 0], inert[:, 1, 1] = ixx, ixy, ixy, iyy
        th = np.radians(self.rotation)
        table = np.column_stack(
            [
                self.x,
                self.y,
                np.cos(th),
                np.sin(th),
                self.length / 2.0,
                self.width / 2.0,
                self.pressure,
                self.depth,
                (self.kind == RECTANGLE).astype(float),
            ]
        )
        return _tc.LoadGeometry(
            self.pressure,
            np.stack([self.x, self.y, self.depth], axis=1),
            area,
            mu,
            inert,
            reach,
            self.kind != POLYGON,
            ext,
            table,
        )


# ---------------------------------------------------------------------------
# exact superposition
# ---------------------------------------------------------------------------


def _rect_pairs(ld, j, px, py, pz):
    """(σz, T) of rectangles ``j`` at points (broadcast together), exact."""
    t = np.radians(ld.rotation[j])
    c, s = np.cos(t), np.sin(t)
    dx, dy = px - ld.x[j], py - ld.y[j]
    w = pz - ld.depth[j]
    on = w > 0
    sz, om = _rect_terms(
        ld.length[j] / 2.0,
        ld.width[j] / 2.0,
        dx * c + dy * s,
        dy * c - dx * s,
        np.where(on, w, 0.0),
    )
    q = np.where(on, ld.pressure[j], 0.0)
    return q * sz, q * om * _K_THETA


def _circle_pairs(ld, j, px, py, pz):
    """(σz, T) of circles ``j`` at points (broadcast together), exact to the quadrature."""
    w = pz - ld.depth[j]
    on = w > 0
    r = np.hypot(px - ld.x[j], py - ld.y[j])
    sz, om = _circle_terms(ld.radius[j], r, np.where(on, w, 1.0))
    q = np.where(on, ld.pressure[j], 0.0)
    return q * sz, q * om * _K_THETA


def _edges(ld, j):
    """Flattened directed edges of polygons ``j``: a, b, weight q·σ_A, depth, owner."""
    ax, ay, bx, by, wt, dep, own = ([] for _ in range(7))
    for k in j:
        xy = ld.outlines[k]
        area2 = float(
            np.dot(xy[:, 0], np.roll(xy[:, 1], -1)) - np.dot(xy[:, 1], np.roll(xy[:, 0], -1))
        )
        nb = np.roll(xy, -1, axis=0)
        ax.append(xy[:, 0])
        ay.append(xy[:, 1])
        bx.append(nb[:, 0])
        by.append(nb[:, 1])
        wt.append(np.full(len(xy), ld.pressure[k] * (1.0 if area2 > 0 else -1.0)))
        dep.append(np.full(len(xy), ld.depth[k]))
        own.append(np.full(len(xy), k))
    return tuple(np.concatenate(a) if a else np.zeros(0) for a in (ax, ay, bx, by, wt, dep, own))


def _polygon_dense(edges, px, py, pz):
    """(σz, T) summed over all given polygon edges at points px (P,), exact: the
    plain numpy sum, kept as the reference of the compiled ``_rings_exact``."""
    ax, ay, bx, by, wt, dep, _ = edges
    w = pz[:, None] - dep
    on = w > 0
    om, k = _edge_terms(
        ax - px[:, None], ay - py[:, None], bx - px[:, None], by - py[:, None], np.where(on, w, 0.0)
    )
    wq = np.where(on, wt, 0.0)
    return ((om + k) * wq).sum(axis=1) / _TWO_PI, (om * wq).sum(axis=1) * _K_THETA


def _exact_dense(ld, idx, px, py, pz, budget=None, notes=None):
    """(σz, T) at points (P,) summed over the loads ``idx``, in bounded-memory chunks.

    Exact, unless ``budget`` (one value per load of ``ld``, kPa) is given: then
    a polygon of at least ``_TREE_MIN_VERTICES`` vertices with a positive budget
    may replace chains of its outline by chords, each point's error staying
    within its budget (``_chain_tree``); ``notes`` (a dict) collects, per such
    load, the points simplified, the most and total vertices dropped, the
    points evaluated and the largest bound spent [kPa].
    """
    n = len(px)
    sz, tt = np.zeros(n), np.zeros(n)
    if n == 0 or len(idx) == 0:
        return sz, tt
    idx = np.asarray(idx)
    for kind, fn, per in ((RECTANGLE, _rect_pairs, 1), (CIRCLE, _circle_pairs, 2 * len(_CIRCLE_T))):
        j = idx[ld.kind[idx] == kind]
        if len(j) == 0:
            continue
        lc = max(1, _CHUNK_ELEMENTS // per)
        for j0 in range(0, len(j), lc):
            jj = j[j0 : j0 + lc]
            pc = max(1, _CHUNK_ELEMENTS // (per * len(jj)))
            for p0 in range(0, n, pc):
                sl = slice(p0, p0 + pc)
                a, b = fn(ld, jj[None, :], px[sl, None], py[sl, None], pz[sl, None])
                sz[sl] += a.sum(axis=1)
                tt[sl] += b.sum(axis=1)
    j = idx[ld.kind[idx] == POLYGON]
    if len(j) == 0:
        return sz, tt
    outs = [_outline(ld.outlines[k]) for k in j]
    weight = np.array([ld.pressure[k] * o.sign for k, o in zip(j, outs)])
    exact = []
    for k, o, wq in zip(j, outs, weight):
        b = 0.0 if budget is None else float(budget[k])
        if b > 0 and o.n >= _TREE_MIN_VERTICES and wq != 0:
            a, c, st = _chain_sum(o, wq, ld.depth[k], b, px, py, pz)
            sz += a
            tt += c
            if notes is not None:
                old = notes.get(int(k), (0, 0, 0, 0, 0.0))
                notes[int(k)] = (
                    old[0] + st[0],
                    max(old[1], st[1]),
                    old[2] + st[2],
                    old[3] + n,
                    max(old[4], st[3]),
                )
        else:
            exact.append((o, wq, ld.depth[k]))
    if exact:
        a, c = _rings_sum([e[0] for e in exact], [e[1] for e in exact], [e[2] for e in exact],
                          px, py, pz)
        sz += a
        tt += c
    return sz, tt


def _exact_pairs(ld, j, px, py, pz, budget=None, notes=None):
    """(σz, T) of load ``j[k]`` at point k, for 1-D arrays of one length; exact,
    or within ``budget`` for dense polygons (see ``_exact_dense``)."""
    sz, tt = np.zeros(len(j)), np.zeros(len(j))
    kind = ld.kind[j]
    for code, fn, per in ((RECTANGLE, _rect_pairs, 1), (CIRCLE, _circle_pairs, 2 * len(_CIRCLE_T))):
        sel = np.flatnonzero(kind == code)
        step = max(1, _CHUNK_ELEMENTS // per)
        for k0 in range(0, len(sel), step):
            k = sel[k0 : k0 + step]
            sz[k], tt[k] = fn(ld, j[k], px[k], py[k], pz[k])
    poly = np.flatnonzero(kind == POLYGON)
    for one in np.unique(j[poly]):
        k = poly[j[poly] == one]
        sz[k], tt[k] = _exact_dense(ld, [one], px[k], py[k], pz[k], budget, notes)
    return sz, tt


def _tree(loads: Loads, idx) -> _tc.Tree:
    """The treecode's load tree over the loads ``idx`` (for tests and benchmarks)."""
    return _tc.Tree(loads._geometry(), np.asarray(idx))


def _check_points(points):
    pts = np.asarray(points, dtype=float)
    if pts.ndim == 1 and pts.shape == (3,):
        pts = pts[None, :]
    if pts.ndim != 2 or pts.shape[1] != 3:
        raise InputError("points", f"array of shape {pts.shape}", "an (N, 3) array of x, y, z")
    return pts


def own_stress(loads: Loads, points, owner) -> tuple[np.ndarray, np.ndarray]:
    """Exact (σz, T) at point i from the single load ``owner[i]`` (−1: none).

    Parameters
    ----------
    loads : Loads
        The loads.
    points : array_like
        (N, 3) points x, y, z (depth below ground). [m]
    owner : array_like of int
        (N,) index of the load acting at each point, −1 for none.

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        σz and T = q·Ω/π of that load alone (0 where ``owner`` is −1). [kPa]
    """
    pts = _check_points(points)
    owner = np.broadcast_to(np.asarray(owner, dtype=int), (len(pts),))
    if ((owner < -1) | (owner >= len(loads))).any():
        i = int(np.argmax((owner < -1) | (owner >= len(loads))))
        raise InputError(f"owner[{i}]", f"load index {owner[i]}", f"-1 … {len(loads) - 1}")
    sz, tt = np.zeros(len(pts)), np.zeros(len(pts))
    has = owner >= 0
    kind = np.where(has, loads.kind[np.maximum(owner, 0)], -1)
    for k, fn in ((RECTANGLE, _rect_pairs), (CIRCLE, _circle_pairs)):
        sel = np.flatnonzero(kind == k)
        for s0 in range(0, len(sel), _CHUNK_ELEMENTS):
            ss = sel[s0 : s0 + _CHUNK_ELEMENTS]
            sz[ss], tt[ss] = fn(loads, owner[ss], pts[ss, 0], pts[ss, 1], pts[ss, 2])
    sel = np.flatnonzero(kind == POLYGON)
    for j in np.unique(owner[sel]):
        ss = sel[owner[sel] == j]
        sz[ss], tt[ss] = _exact_dense(loads, [j], pts[ss, 0], pts[ss, 1], pts[ss, 2])
    bad = np.isnan(pts).any(axis=1)
    sz[bad] = tt[bad] = np.nan
    return sz, tt


def stress_sums(
    loads: Loads, points, *, tolerance: float = 1e-3, notes: list | None = None
) -> tuple[np.ndarray, np.ndarray]:
    r"""Superposed σz and T = Σ q·Ω/π of every load at every point.

    Parameters
    ----------
    loads : Loads
        The loaded areas.
    points : array_like
        (N, 3) points: x, y and z, the depth below ground. [m]
    tolerance : float, optional
        Allowed error of each sum as a fraction of the largest |pressure|;
        0 gives the exact sum (to rounding and the circle quadrature).
    notes : list, optional
        Where an :class:`OutlineSimplified` is appended for each dense polygon
        whose outline was simplified; without it each is issued as a warning.

    Returns
    -------
    sigma_z, T : numpy.ndarray
        (N,) vertical stress and T [kPa]; Θ = (1 + ν)·T and
        σx + σy = (1 + ν)·T − σz. NaN where a coordinate is NaN.

    Notes
    -----
    **Error bound.** Let ε = tolerance · max|q|. Points are grouped into compact
    blocks; loads into a binary tree of clusters. For a cluster with
    |q|-weighted centroid C the far field uses the Taylor expansion of the
    kernel about C to second order (monopole, dipole, quadrupole, in 3-D:
    loads of a cluster may lie at different depths), and to third order
    (octupole) for clusters of rectangles and circles. The kernels are
    k = (3/2π) w³ r⁻⁵ for σz and t = (1/π) w r⁻³ for T (u = p − s, w its vertical
    component, r = |u|). Along a segment s = C + τh the n-th derivative of
    w^p·r^−m is, by Leibniz's rule,

    .. math:: \frac{d^n}{d\tau^n} = \sum_j \binom{n}{j} \frac{p!}{(p-j)!}
              w^{p-j}(-h_w)^j \frac{d^{n-j}}{d\tau^{n-j}} r^{-m}

    and :math:`|d^k r^{-m}/d\tau^k| = k!\,|C_k^{(m/2)}(\cos\gamma)|\,|h|^k r^{-m-k}
    \le (m)_k |h|^k r^{-m-k}`, because the Gegenbauer polynomial attains its
    maximum modulus on [−1, 1] at 1, where k!·C_k^{(λ)}(1) = (2λ)_k. With the
    Lagrange remainder, integrating over the cluster's sources gives

    .. math:: |e| \le \frac{c}{n!}\sum_j \binom{n}{j}\frac{p!}{(p-j)!}
              \,w_{max}^{p-j}\,\delta^j\,(m)_{n-j}\,\frac{M_{n-j}}{r_{min}^{m+n-j}}

    (c = 3/2π, p = 3, m = 5 for σz; c = 1/π, p = 1, m = 3 for T), with
    M_k = Σ|q|∫|s − C|^k dA (bounded from each load's area, polar moment μ2,
    reach a: μ1 ≤ √(Aμ2), μ3 ≤ aμ2, μ4 exact for rectangles and circles and
    ≤ a²μ2 for polygons, and the smaller of the binomial expansion of
    |s − C| ≤ |s − c_i| + |c_i − C| and the exact M2, M4 of ``treecode._cluster_moments``
    with M1 ≤ √(M0 M2), M3 ≤ √(M2 M4)), δ the largest depth offset of the
    cluster's planes from C, and each w^a/r^b replaced by its supremum over the
    segments from C to the sources and the points of a box (``treecode.Tree.pair_bounds``):
    every such segment lies in the cluster's bounding box (C is inside the
    cluster's convex hull), which bounds r from below by the plan gap and the
    vertical gap between that box and the points' box.
    Order n = 3 where the cluster holds a polygon; n = 4 for a single rectangle
    or circle, whose third moments vanish by central symmetry, and for a
    cluster of them, whose expansion carries the third-order term (below). The
    formula of a load is exact only below its plane, so a cluster whose deepest
    plane is not above the whole block is never approximated.

    **Octupole for clusters of rectangles and circles.** For these loads the
    odd moments about their own centroids vanish, so the third-moment tensor
    O = Σ q∫(s − C)⊗(s − C)⊗(s − C) dA is exact from the centroids and the plan
    second-moment tensors: ∫(h + t)⊗3 dA = A h⊗h⊗h + h_a I_bc + h_b I_ac +
    h_c I_ab (h = c_i − C). The far field of such a cluster adds the exact
    third-order term −(1/6)·O : ∇³k(p − C), and its truncation error is the
    order-4 remainder: the bound above with n = 4 and M_4. On the benchmark plan
    (2,000 rectangles, 600,000 points) this needs 247 instead of 332 cluster
    evaluations per point, and the whole sum about a quarter less time, though
    each evaluation costs more.

    **Harmonic bound for T.** With u = p − s, t = (1/π) w r⁻³ = −(1/π) ∂/∂z of
    1/|p − s| (z the point's depth). Let R = |p − C| and, for a source s,
    h = s − C, ρ = |h| < R. The Legendre series 1/|p − s| = Σ_n ρⁿ Y_n(p),
    Y_n = R^(−n−1) P_n(cos γ), γ the angle between h and p − C, converges with
    its derivatives, and its n-th term is the part of degree n in h of the
    Taylor series about C; so a far field of orders 0–2 leaves the error
    −(1/π) Σ_{n≥3} ρⁿ ∂Y_n/∂z per unit source. In spherical coordinates about
    the axis h, |∇Y_n|² = R^(−2n−4)[(n+1)² P_n² + (1 − x²) P_n′²], x = cos γ.
    By Legendre's equation f = P_n² + (1 − x²) P_n′²/(n(n+1)) has
    f′ = 2x P_n′²/(n(n+1)), so f ≤ f(±1) = 1 on [−1, 1]; hence
    (1 − x²) P_n′² ≤ n(n+1)(1 − P_n²) and |∇Y_n|² ≤ (n+1)(n + P_n²) R^(−2n−4)
    ≤ (n+1)² R^(−2n−4). With r_c the least distance from the points' box to C
    and a = max_i(|c_i − C| + reach_i) < r_c, so that ρ ≤ a for every source,
    Σ_{n≥4} (n+1) ρⁿ R^(−n−2) ≤ ρ⁴ r_c^(−6) Σ_k (k+5)(a/r_c)^k
    = ρ⁴ r_c^(−6) S(a/r_c), S(x) = 5/(1 − x) + x/(1 − x)², and integrating over
    the sources (|q| dA)

    .. math:: |e_T| \le \frac{1}{\pi}\left[\frac{4 M_3}{r_c^5}
              + \frac{M_4\,S(a/r_c)}{r_c^6}\right]

    (points below all the cluster's planes, where t is the kernel). For a single
    rectangle or circle the n = 3 term integrates to zero (odd in h), and a
    cluster of them carries it in its expansion: both lose the M_3 term. T's
    bound is the smaller of the two. The first bound alone is computed for
    pairs whose first bound e₁ is far from the threshold λ (e₁ ≤ λ/4 or
    e₁ > 5λ): the harmonic bound can only lower e where it hardly matters, and
    either is a valid bound of the same error.

    **Blocks and acceptance.** Points are grouped into blocks of one 0.5 m plan
    cell and one depth band [2^k, 2^(k+1)) m, so that a vertical column of
    points (the usual layout) gives blocks with no plan extent; consecutive
    blocks along a Z-order curve form an implicit binary tree of groups. The
    load tree and the groups are traversed together, one numpy call per round
    for all pairs: a (group, cluster) pair is accepted when its bound over the
    group's box is e ≤ λ; a (block, single load) pair that is not accepted is
    evaluated exactly; otherwise the one of the two with the larger plan extent
    is split. Each block thus sees every load through exactly one accepted or
    exact pair of one of its groups (accepted clusters are disjoint), so at every
    point of the block the error is at most the sum of e over those pairs. The
    threshold is tried as λ = ε·2^−7, then ε·2^−8, and a block keeps the
    result only if that sum is ≤ ε; a block that fails both is redone with the
    rule e ≤ ε·F/F_total (F = Σ|q|A of the cluster), for which the sum is at
    most ε·Σ F/F_total ≤ ε whatever happens. Hence |σz − exact| ≤ ε and
    |T − exact| ≤ ε at every point.
    The expansion uses the signed pressures (dipole term included, so loads of
    both signs may share a cluster); the bound uses |q|. Circles add their
    quadrature error (below 1e-8 q per circle, see :func:`circle_stress`),
    which tolerance = 0 keeps too.

    **Evaluation.** The dual traversal runs compiled (:mod:`sitesettle.farfield`),
    depth first from each root group, and adds an accepted cluster's multipole
    (one vectorised loop over the group's contiguous points) or an exact
    rectangle to the points as soon as the pair is decided, so no
    list of pairs is ever held; exact circles and polygons are returned as
    (block, load) pairs and summed by the vectorised kernels. The root groups
    are shared between two threads in chunks of consecutive groups, whose
    points are disjoint; each point's sum is formed in the same order whatever
    the threads, so the result does not depend on them.

    **Dense polygons.** With tolerance > 0, a polygon of at least 2,048 vertices
    is evaluated through the binary tree of the chains of its outline
    (``_chain_tree``): a chain may be replaced by its chord at a point where a
    rigorous bound of the change is small enough. The change is exactly
    q ∫ k w_c dA, w_c the winding number of the loop "chain, then chord back";
    for a chain monotone along its chord |w_c| ≤ 1 and w_c = 0 outside the box
    of the chain's vertices in the chord's frame, so with k ≥ 0 it is at most
    |q| ∫_box k dA ≤ |q|·(box width)·∫ k along the box's nearest parallel line
    (closed form). A point accepts a chain when both bounds (σz, T) are at most
    its budget × the chain's share of the outline's length; the accepted chains
    are disjoint, so the error at a point is at most its budget. The budgets of
    all dense polygons add up to 10 % of ε (shared by |q|·A) and the far field
    above uses the remaining 90 %, so the stated bound holds unchanged. Each
    such polygon is reported by an :class:`OutlineSimplified`. With
    tolerance = 0 every edge is summed (a compiled loop, the same terms as
    ``_edge_terms``).

    Memory is bounded: the treecode holds a few copies of the (N, 3) points and
    (N,) results and the tree's tables (about 0.3 kB per load); the exact sum
    works in chunks of 32,768 (point × load) elements.
    """
    sz, tt = stress_states(loads, loads.pressure[None, :], points, tolerance=tolerance, notes=notes)
    return sz[0], tt[0]


def stress_states(
    loads: Loads, pressures, points, *, tolerance: float = 1e-3, notes: list | None = None
) -> tuple[np.ndarray, np.ndarray]:
    r"""σz and T of K load states on one geometry, in one pass (:func:`stress_sums` each).

    Parameters
    ----------
    loads : Loads
        The loaded areas (their own pressures are not used).
    pressures : array_like
        (K, n) pressure of each of the n loads in each of K states, e.g. the full
        and the sustained loads of a plan. [kPa]
    points : array_like
        (N, 3) points: x, y and z, the depth below ground. [m]
    tolerance : float, optional
        Allowed error of each state's sums as a fraction of that state's largest
        |pressure|; 0 gives the exact sums.
    notes : list, optional
        As for :func:`stress_sums` (one note per state and simplified outline).

    Returns
    -------
    sigma_z, T : numpy.ndarray
        (K, N) vertical stress and T of each state [kPa]; NaN where a coordinate
        is NaN.

    Notes
    -----
    Every state's sums are those of :func:`stress_sums` and keep its bound:
    |σz − exact| ≤ ε_k and |T − exact| ≤ ε_k in state k, ε_k = tolerance ·
    max|q_k|. The states share what depends on geometry alone: the load tree, its
    clusters' centre C (the centroid weighted by Σ_k |q_k|·A, inside each
    cluster's convex hull as the proof needs), the point blocks, the traversal,
    the geometric factor of every bound term (each state's bound is its own
    moments M_k times it) and the kernel of every exact rectangle (times each
    state's pressure). A (group, cluster) pair is accepted only when its bound
    fits the threshold of every state, and a block keeps a pass's result only
    when every state's bound sum does (the fallback rule ε_k·F_k/F_k,total holds
    state by state), so the proof of :func:`stress_sums` applies to each state.
    Only the multipole itself and the exact circles and polygons are evaluated
    once per state.
    """
    if tolerance < 0 or not np.isfinite(tolerance):
        raise InputError("tolerance", f"{tolerance!r}", "a fraction >= 0")
    qs = np.atleast_2d(np.asarray(pressures, dtype=float))
    if qs.ndim != 2 or qs.shape[1] != len(loads) or not np.isfinite(qs).all():
        raise InputError(
            "pressures", f"shape {qs.shape}", f"(K, {len(loads)}) finite pressures [kPa]"
        )
    pts = _check_points(points)
    n, ns = len(pts), len(qs)
    sz, tt = np.zeros((ns, n)), np.zeros((ns, n))
    good = np.flatnonzero(np.isfinite(pts).all(axis=1))
    bad = np.ones(n, dtype=bool)
    bad[good] = False
    sz[:, bad] = tt[:, bad] = np.nan
    active = np.flatnonzero((qs != 0).any(axis=0)) if len(loads) else np.zeros(0, dtype=int)
    if len(good) == 0 or len(active) == 0:
        return sz, tt
    p = pts[good]
    states = [loads.with_pressure(q) for q in qs]
    eps = tolerance * np.abs(qs).max(axis=1)
    budgets, eps_far = zip(*(_chain_budgets(ld, active, e) for ld, e in zip(states, eps)))
    found: list[dict] = [{} for _ in states]
    if tolerance == 0 or len(active) * len(good) <= 4 * _CHUNK_ELEMENTS or len(active) < 8:
        for k, ld in enumerate(states):
            a, b = _exact_dense(ld, active, p[:, 0], p[:, 1], p[:, 2], budgets[k], found[k])
            sz[k, good], tt[k, good] = a, b
    else:

        def exact(j, x, y, z):
            parts = [
                _exact_pairs(ld, j, x, y, z, budgets[k], found[k]) for k, ld in enumerate(states)
            ]
            return np.stack([a for a, _ in parts]), np.stack([b for _, b in parts])

        a, b = _tc.treecode(loads._geometry(), active, p, np.array(eps_far), exact, pressures=qs)
        sz[:, good], tt[:, good] = a, b
    for ld, f in zip(states, found):
        _report_chains(ld, f, notes)
    return sz, tt


class OutlineSimplified(UserWarning):
    """A dense polygon outline had chains replaced by chords (within the tolerance).

    Attributes
    ----------
    load : int
        Index of the polygon in the :class:`Loads`.
    vertices : int
        Its number of vertices.
    points, evaluated : int
        Points where a chord was used, and points where the outline was evaluated.
    most_dropped, mean_dropped : float
        Most vertices left out at one point, and the mean over ``points``.
    bound : float
        The largest error bound spent at a point. [kPa]
    """

    def __init__(self, load, vertices, points, evaluated, most_dropped, mean_dropped, bound):
        self.load, self.vertices = load, vertices
        self.points, self.evaluated = points, evaluated
        self.most_dropped, self.mean_dropped, self.bound = most_dropped, mean_dropped, bound
        super().__init__(
            f"polygon load {load} ({vertices} vertices): chains of its outline replaced by "
            f"chords at {points} of {evaluated} points (up to {most_dropped} vertices "
            f"dropped, {mean_dropped:.0f} on average), stress error at most {bound:.2g} kPa"
        )


def _chain_budgets(loads: Loads, active, eps):
    """Per-load error budgets [kPa] of the dense polygons and the far field's ε.

    ``_CHAIN_SHARE`` of ε goes to the polygons of at least ``_TREE_MIN_VERTICES``
    vertices, shared in proportion to |q|·A, so that their bounds add up to at
    most that share at any point; the far field keeps the rest. None (and ε)
    when there is no such polygon or ε is 0.
    """
    if not eps > 0:
        return None, eps
    dense = [
        int(k)
        for k in active
        if loads.kind[k] == POLYGON and len(loads.outlines[k]) >= _TREE_MIN_VERTICES
    ]
    if not dense:
        return None, eps
    share = eps * _CHAIN_SHARE
    f = np.array([abs(loads.pressure[k]) * _polygon_moments(loads.outlines[k])[0] for k in dense])
    budget = np.zeros(len(loads))
    budget[dense] = share * f / f.sum()
    return budget, eps - share


def _report_chains(loads: Loads, found: dict, notes) -> None:
    """One ``OutlineSimplified`` per polygon where chords were used: appended to
    ``notes`` when it is a list, else issued as a warning."""
    import warnings

    for k in sorted(found):
        pts, most, total, evaluated, bound = found[k]
        if pts == 0:
            continue
        w = OutlineSimplified(k, len(loads.outlines[k]), pts, evaluated, most, total / pts, bound)
        if notes is not None:
            notes.append(w)
        else:
            warnings.warn(w, stacklevel=3)


def vertical_stress(loads: Loads, points, *, tolerance: float = 1e-3) -> np.ndarray:
    """Superposed vertical stress increment σz [kPa] at (N, 3) points.

    Parameters
    ----------
    loads : Loads
        The loaded areas (pressures [kPa], plan sizes and depths [m]).
    points : array_like
        (N, 3) points x, y [m] and depth below ground z [m].
    tolerance : float, optional
        Allowed error as a fraction of the largest load pressure [-] (0: exact
        sum); see :func:`stress_sums` for the bound.

    Returns
    -------
    ndarray
        (N,) σz [kPa], compression positive.

    Examples
    --------
    Under the centre of a 2 m × 2 m square carrying 100 kPa, 1 m below it,
    σz = 4 · 100 kPa · I(1, 1) = 70.1 kPa (Newmark 1935 corner factor
    I(m = 1, n = 1) = 0.1752, from memory):

    >>> loads = Loads.rectangles(0.0, 0.0, 2.0, 2.0, 0.0, 100.0, 0.0)
    >>> round(float(vertical_stress(loads, [[0.0, 0.0, 1.0]], tolerance=0)[0]), 1)
    70.1
    """
    return stress_sums(loads, points, tolerance=tolerance)[0]


def horizontal_stress_sum(loads: Loads, points, poisson, *, tolerance: float = 1e-3) -> np.ndarray:
    """σx + σy = (1 + ν)·T − σz [kPa] at (N, 3) points.

    From the first stress invariant Θ = (1 + ν) q Ω/π of a uniform load
    (METHODS.md §1.2, §1.8). The error bound of :func:`stress_sums` becomes
    (2 + ν)·tolerance·max|q|.

    Parameters
    ----------
    loads : Loads
        The loaded areas (pressures [kPa], plan sizes and depths [m]).
    points : array_like
        (N, 3) points x, y [m] and depth below ground z [m].
    poisson : float or array_like
        Poisson's ratio ν [-], a scalar or one per point (N,).
    tolerance : float, optional
        Allowed error of σz and T as a fraction of the largest pressure [-].

    Returns
    -------
    ndarray
        (N,) σx + σy [kPa].
    """
    sz, tt = stress_sums(loads, points, tolerance=tolerance)
    return (1.0 + np.asarray(poisson, dtype=float)) * tt - sz
