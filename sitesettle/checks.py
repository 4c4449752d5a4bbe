"""Movement checks: neighbour pairs, movement measures and their limits.

Pure functions on arrays (core units: m, years, radians) and one entry point,
:func:`check_movements`, that fills :class:`sitesettle.results.Checks`. The
definitions of the measures follow Burland, Broms & de Mello (1977) and
EN 1997-1:2004 Fig. H.1 (METHODS.md §6.1); the rule that finds neighbouring
footings is documented in docs/criteria.md.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
from scipy.spatial import cKDTree

from sitesettle.criteria import MEASURES, CriteriaSet, Limit, format_value, get_criteria
from sitesettle.errors import InputError
from sitesettle.options import Choice, RigidTilt
from sitesettle.results import Checks, LineChecks, PairChecks
from sitesettle.site import CheckSettings, Footing, foundation_kind

#: relative tolerance of the neighbour rule: a footing c blocks the pair ab only when
#: max(d(a,c), d(b,c)) < (1 − tol)·d(a,b), so that exact ties (equilateral triangles,
#: points on a common circle) are decided the same way after rounding.
NEIGHBOUR_TOLERANCE = 1e-9
#: a rectangle or polygon longer than this many widths is represented by points along
#: its long centre-line when neighbours are searched (wall strips)
ELONGATED_RATIO = 2.0
#: at most this many centre-line points per elongated footing
MAX_LINE_SAMPLES = 200
#: a footing whose settlement on loading exceeds this fraction of its width is outside
#: the range of the settlement methods: bearing failure is likely (a common proxy for
#: the ultimate state of a footing: failure load at a settlement of 10 % of B, e.g.
#: Vesić 1975, Briaud 2007; common practice)
BEARING_PROXY = 0.1
#: nearest points queried per footing before the exhaustive fallback
_K_NEAREST = 32


class PairRule(Choice):
    """Which pairs of footings are checked."""

    AUTO = "auto"  #: the automatic neighbour rule plus listed pairs and structure lines
    LISTED = "listed"  #: listed pairs and consecutive footings of structure lines only


# --- neighbour pairs ---------------------------------------------------------------------


#: distances computed at once when points are compared with every point (rows × points)
_FULL_SCAN_ELEMENTS = 1_000_000


def _sector_candidates(xy: np.ndarray, tol: float):
    """Pairs (a, b) where b is the nearest point to a in one of six 60° sectors; and
    each point's k nearest (distances and indices, (n, k), nearest first) and the k-d
    tree of the points, for the blocking test that follows.

    Every edge ab of the relative neighbourhood graph is such a pair: if c lies in
    the same 60° sector of a as b and d(a,c) < d(a,b), then the angle bac ≤ 60° gives
    d(b,c)² ≤ d(a,b)² − d(a,c)(d(a,b) − d(a,c)) < d(a,b)², so c blocks ab. With the
    tie tolerance the bound still blocks when 4·tol < d(a,c)/d(a,b) < 1 − 4·tol, so
    points within 4·tol of the nearest in a sector are kept as candidates and points
    closer than 4·tol·(plan size) to a (the same place) are candidates and do not fill
    a sector.
    """
    n = len(xy)
    tree = cKDTree(xy)
    k = min(n, _K_NEAREST)
    dist, idx = tree.query(xy, k=k)
    dist, idx = dist.reshape(n, k), idx.reshape(n, k)
    scale = max(float(np.ptp(xy, axis=0).max()), 1.0)
    tie = 1.0 + 4.0 * tol
    hull = _hull(xy)

    def pick(a_rows: np.ndarray, d: np.ndarray, j: np.ndarray, complete: bool):
        """Candidates from the neighbour lists (rows) of points a_rows."""
        a = np.repeat(a_rows[:, None], d.shape[1], axis=1)
        other = j != a
        same_place = other & (d <= 4.0 * tol * scale)  # see the tie note above
        use = other & ~same_place
        delta = xy[j] - xy[a]
        sector = np.floor((np.arctan2(delta[..., 1], delta[..., 0]) + math.pi) / (math.pi / 3))
        sector = np.clip(sector, 0, 5).astype(int)
        near = np.full((len(a_rows), 6), np.inf)
        for s in range(6):
            near[:, s] = np.where(use & (sector == s), d, np.inf).min(axis=1)
        keep = use & (d <= np.take_along_axis(near, sector, axis=1) * tie)
        keep |= same_place
        if complete:
            settled = np.ones(len(a_rows), dtype=bool)
        else:
            done = near * tie < d[:, -1:]
            # a sector is complete too when no point of the plan can lie in it beyond
            # the last of the list (the plan's edge: sectors that hold no point at all)
            open_ = np.flatnonzero(~done.all(axis=1))
            if len(open_) and hull is not None:
                reach = _sector_reach(xy[a_rows[open_]], *hull)
                margin = 1e-9 * (reach + scale)
                done[open_] |= reach + margin < d[open_, -1:]
            settled = done.all(axis=1)
        return a[keep & settled[:, None]], j[keep & settled[:, None]], a_rows[~settled]

    a1, b1, todo = pick(np.arange(n), dist, idx, complete=(k == n))
    pairs = [np.stack([a1, b1], axis=1)]
    k2 = min(n, 8 * _K_NEAREST)
    if len(todo) and k2 > k:  # near the plan's edge: look further
        d2, i2 = tree.query(xy[todo], k=k2)
        a2, b2, todo = pick(todo, d2.reshape(len(todo), k2), i2.reshape(len(todo), k2), k2 == n)
        pairs.append(np.stack([a2, b2], axis=1))
    # hull points, collinear plans: look at every point (a block of points at a time,
    # each row as it would be alone: the same distances, the same picks)
    block = max(1, _FULL_SCAN_ELEMENTS // max(1, n))
    for k0 in range(0, len(todo), block):
        a = np.asarray(todo[k0 : k0 + block])
        d = np.hypot(xy[None, :, 0] - xy[a, None, 0], xy[None, :, 1] - xy[a, None, 1])
        j = np.broadcast_to(np.arange(n)[None, :], d.shape)
        aa, bb, _ = pick(a, d, j, complete=True)
        pairs.append(np.stack([aa, bb], axis=1))
    cand = np.concatenate(pairs).astype(np.intp)
    cand = np.sort(cand, axis=1)
    return np.unique(cand, axis=0), dist, idx, tree


def _hull(xy: np.ndarray):
    """The convex hull of the points as (outward unit normals (m, 2), offsets (m,),
    vertices (v, 2)): inside, n·x + c ≤ 0. None when it has no area (fewer than three
    points, all on one line)."""
    from scipy.spatial import ConvexHull, QhullError

    if len(xy) < 3:
        return None
    try:
        h = ConvexHull(xy)
    except (QhullError, ValueError):
        return None
    return h.equations[:, :2], h.equations[:, 2], h.points[h.vertices]


def _sector_reach(p: np.ndarray, normals, offsets, vertices) -> np.ndarray:
    """(len(p), 6): for each point and each 60° sector of :func:`_sector_candidates`,
    the largest distance from the point to a point of the convex hull inside the
    sector (widened by 1e-7 rad on each side).

    The hull's part inside a sector is a convex polygon whose corners are the point,
    where the sector's two edge rays leave the hull and the hull's vertices inside
    the sector; the distance is largest at one of them. A sector whose reach is
    shorter than the distance already searched around the point holds no other
    point of the plan.
    """
    eps = 1e-7
    out = np.zeros((len(p), 6))
    ang = np.arctan2(vertices[None, :, 1] - p[:, 1:2], vertices[None, :, 0] - p[:, 0:1])
    dv = np.hypot(vertices[None, :, 0] - p[:, 0:1], vertices[None, :, 1] - p[:, 1:2])
    inside = -(p @ normals.T + offsets)  # ≥ 0 for points in the hull
    inside = np.maximum(inside, 0.0)
    for s in range(6):
        lo = -math.pi + s * math.pi / 3 - eps
        width = math.pi / 3 + 2 * eps
        in_cone = np.mod(ang - lo, 2 * math.pi) <= width
        far = np.where(in_cone, dv, 0.0).max(axis=1) if vertices.size else np.zeros(len(p))
        for theta in (lo, lo + width):  # where each edge ray leaves the hull
            u = np.array([math.cos(theta), math.sin(theta)])
            nu = normals @ u
            with np.errstate(divide="ignore", invalid="ignore"):
                t = np.where(nu > 0, inside / nu, np.inf)
            far = np.maximum(far, t.min(axis=1))
        out[:, s] = far
    return out


def neighbour_pairs(xy: np.ndarray, groups: np.ndarray | None = None) -> np.ndarray:
    """Neighbouring points: the edges of their relative neighbourhood graph.

    Parameters
    ----------
    xy : array_like
        (n, 2) plan positions [m].
    groups : array_like of int, optional
        (n,) label of the footing each point belongs to (several points along a wall
        strip). Pairs are then pairs of labels, and points of one label never pair.

    Returns
    -------
    numpy.ndarray
        (n_pairs, 2) int: each pair once, ``a < b``, sorted by (a, b).

    Notes
    -----
    The pair ab is kept when no other point c is nearer to both:

    .. math:: \\nexists c:\\ \\max(d(a,c),\\ d(b,c)) < d(a,b)

    (Toussaint 1980 [1]_). The graph is connected, contains the Euclidean minimum
    spanning tree and is a subgraph of the Delaunay triangulation; on a square
    column grid it gives exactly the grid-line neighbours (no diagonals, since the
    other two corners of the square block them); on a rectangular grid every
    grid-line neighbour; points on a line pair with their immediate neighbours. It
    has no degenerate cases: ties (``max = d(a,b)``) keep the pair, within
    :data:`NEIGHBOUR_TOLERANCE`. Computed without a triangulation: candidates are the
    nearest points in six 60° sectors around each point (every edge is one), each
    tested with a k-d tree ball query.

    References
    ----------
    .. [1] Toussaint, G.T. (1980). The relative neighbourhood graph of a finite planar
       set. Pattern Recognition 12(4), 261–268.

    Examples
    --------
    >>> neighbour_pairs([[0, 0], [1, 0], [0, 1], [1, 1]]).tolist()
    [[0, 1], [0, 2], [1, 3], [2, 3]]
    """
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    if not np.all(np.isfinite(xy)):
        raise ValueError("neighbour_pairs: every position must be finite")
    n = len(xy)
    g = np.arange(n) if groups is None else np.asarray(groups, dtype=np.intp)
    if n < 2:
        return np.zeros((0, 2), dtype=np.intp)
    tol = NEIGHBOUR_TOLERANCE
    cand, knn_d, knn_i, tree = _sector_candidates(xy, tol)
    cand = cand[g[cand[:, 0]] != g[cand[:, 1]]]
    a, b = cand[:, 0], cand[:, 1]
    r = np.hypot(*(xy[a] - xy[b]).T)
    blocked = np.zeros(len(cand), dtype=bool)
    # a point c that blocks ab is nearer to a than r: among a's k nearest whenever the
    # k-th is at r or beyond ("covered"); those pairs are decided from the lists alone
    k = knn_i.shape[1]
    covered = (knn_d[a, -1] >= r) | (k == n)
    step = max(1, _FULL_SCAN_ELEMENTS // k)
    for k0 in range(0, len(cand), step):
        sl = slice(k0, k0 + step)
        aa, bb, rr = a[sl], b[sl], r[sl]
        c = knn_i[aa]
        dac = np.hypot(xy[c, 0] - xy[aa, None, 0], xy[c, 1] - xy[aa, None, 1])
        dbc = np.hypot(xy[c, 0] - xy[bb, None, 0], xy[c, 1] - xy[bb, None, 1])
        blk = (c != aa[:, None]) & (c != bb[:, None])
        blk &= np.maximum(dac, dbc) < (1 - tol) * rr[:, None]
        blocked[sl] = blk.any(axis=1)
    # the others (far candidates, near the plan's edge) by ball queries, in chunks of
    # a bounded number of (pair, point) tests
    rest = np.flatnonzero(~blocked & ~covered)
    if len(rest):
        sizes = np.asarray(tree.query_ball_point(xy[a[rest]], r[rest], return_length=True))
        ends = np.cumsum(sizes)
        k0 = 0
        while k0 < len(rest):
            k1 = int(np.searchsorted(ends, ends[k0] - sizes[k0] + _FULL_SCAN_ELEMENTS, "right"))
            k1 = max(k1, k0 + 1)
            blocked[rest[k0:k1]] = _ball_blocked(
                xy, tree, a[rest[k0:k1]], b[rest[k0:k1]], r[rest[k0:k1]], tol
            )
            k0 = k1
    pairs = np.sort(np.stack([g[a[~blocked]], g[b[~blocked]]], axis=1), axis=1)
    return np.unique(pairs, axis=0).reshape(-1, 2)


def _ball_blocked(xy, tree, a, b, r, tol) -> np.ndarray:
    """Whether some point c other than a and b has max(d(a,c), d(b,c)) < (1 − tol)·r,
    for each pair (a, b), from the points within r of a (a k-d tree ball query)."""
    balls = tree.query_ball_point(xy[a], r)
    sizes = np.fromiter((len(x) for x in balls), dtype=np.intp, count=len(balls))
    c = np.fromiter((i for ball in balls for i in ball), dtype=np.intp, count=int(sizes.sum()))
    owner = np.repeat(np.arange(len(a)), sizes)
    dac = np.hypot(*(xy[c] - xy[a[owner]]).T)
    dbc = np.hypot(*(xy[c] - xy[b[owner]]).T)
    blocks = (c != a[owner]) & (c != b[owner]) & (np.maximum(dac, dbc) < (1 - tol) * r[owner])
    blocked = np.zeros(len(a), dtype=bool)
    np.logical_or.at(blocked, owner, blocks)
    return blocked


def centre_line_points(footings: Sequence[Footing]) -> tuple[np.ndarray, np.ndarray]:
    """Points that stand for each footing in the neighbour search.

    A footing is its centroid, except a rectangle or polygon longer than
    :data:`ELONGATED_RATIO` widths (a wall strip): that is represented by points at
    most one width apart along its long centre-line, the segment of length L − B
    through the centroid along the long axis.

    Returns
    -------
    xy : numpy.ndarray
        (n_points, 2) [m].
    groups : numpy.ndarray
        (n_points,) index of the footing each point belongs to.
    """
    xy, groups = [], []
    for i, f in enumerate(footings):
        centre = np.array([f.x, f.y], dtype=float)
        if f.shape != "circle" and f.width > 0 and f.length > ELONGATED_RATIO * f.width:
            c = f.length - f.width
            n = int(min(MAX_LINE_SAMPLES, max(2, math.ceil(c / f.width) + 1)))
            t = np.linspace(-c / 2, c / 2, n)
            xy.append(centre + t[:, None] * f.axes()[0])
            groups.append(np.full(n, i))
        else:
            xy.append(centre[None, :])
            groups.append(np.array([i]))
    if not xy:
        return np.zeros((0, 2)), np.zeros(0, dtype=np.intp)
    return np.concatenate(xy), np.concatenate(groups).astype(np.intp)


#: a footing whose nearest other footing is farther than this many times the plan's
#: typical spacing is "far from the others" (a likely coordinate typo; warned)
FAR_FACTOR = 10.0
#: automatic pairs are not formed across a gap between outlines larger than this many
#: times the plan's typical spacing (a pair 400 m apart is no neighbour; common practice)
LONG_SPAN_FACTOR = 5.0


def plan_spacing(footings: Sequence[Footing]) -> tuple[float, np.ndarray]:
    """The plan's typical spacing and every footing's distance to its nearest other one [m].

    The typical spacing is the median of the nearest-centroid distances (NaN with
    fewer than two footings).

    >>> from sitesettle.site import Footing
    >>> pads = [Footing(f"P{i}", np.zeros((4, 2)), "rectangle", float(x), 0.0, 1.0, 1.0, 0.0,
    ...                 1.0, 100.0) for i, x in enumerate([0, 6, 12, 18, 418])]
    >>> s, d = plan_spacing(pads)
    >>> float(s), d.tolist()
    (6.0, [6.0, 6.0, 6.0, 6.0, 400.0])
    """
    xy = np.array([[f.x, f.y] for f in footings], dtype=float).reshape(-1, 2)
    if len(xy) < 2:
        return math.nan, np.full(len(xy), np.nan)
    d, _ = cKDTree(xy).query(xy, k=2)
    near = d[:, 1]
    return float(np.median(near)), near


def far_footings(footings: Sequence[Footing]) -> list[tuple[int, float, float]]:
    """Footings far from all others: ``(index, distance to the nearest [m], spacing [m])``.

    Far means more than :data:`FAR_FACTOR` times the plan's typical spacing.
    """
    spacing, near = plan_spacing(footings)
    if not math.isfinite(spacing) or spacing <= 0:
        return []
    return [(int(i), float(near[i]), spacing) for i in np.flatnonzero(near > FAR_FACTOR * spacing)]


def outline_gaps(footings: Sequence[Footing], pairs: np.ndarray) -> np.ndarray:
    """Approximate clear gap between the outlines of each pair [m] (≥ 0).

    The nearest distance between the two footings' centre lines
    (:func:`centre_line_points`) less half of each width.
    """
    pairs = np.asarray(pairs, dtype=np.intp).reshape(-1, 2)
    if not len(pairs):
        return np.zeros(0)
    xy, groups = centre_line_points(footings)
    # groups run in footing order: split at the boundaries (one pass, not a scan per footing)
    pts = np.split(xy, np.searchsorted(groups, np.arange(1, len(footings))))
    w = np.array([f.width for f in footings], dtype=float)
    out = np.empty(len(pairs))
    for k, (a, b) in enumerate(pairs):
        pa, pb = pts[a], pts[b]
        d = np.hypot(pa[:, None, 0] - pb[None, :, 0], pa[:, None, 1] - pb[None, :, 1]).min()
        out[k] = max(0.0, float(d) - 0.5 * (w[a] + w[b]))
    return out


def long_span_pairs(footings: Sequence[Footing], pairs: np.ndarray) -> np.ndarray:
    """Mask of the pairs whose outline gap exceeds :data:`LONG_SPAN_FACTOR` × the spacing."""
    pairs = np.asarray(pairs, dtype=np.intp).reshape(-1, 2)
    spacing, _ = plan_spacing(footings)
    if not len(pairs) or not math.isfinite(spacing) or spacing <= 0:
        return np.zeros(len(pairs), dtype=bool)
    return outline_gaps(footings, pairs) > LONG_SPAN_FACTOR * spacing


def footing_pairs(footings: Sequence[Footing], *, drop_long: bool = False) -> np.ndarray:
    """Automatic neighbour pairs of footings (indices into ``footings``).

    The union of two relative neighbourhood graphs (:func:`neighbour_pairs`):

    * of the footing centroids, for every pair;
    * of the points of :func:`centre_line_points`, kept only for pairs that involve
      an elongated footing (a wall strip), so that a long strip pairs with every pad
      beside it, not only with the one nearest its centroid. Its points never block a
      pair of two compact footings (a row of pads beside a wall keeps its grid-line
      pairs).

    With ``drop_long``, pairs across a gap far beyond the plan's spacing
    (:func:`long_span_pairs`) are left out (the checks do this and warn).

    Returns
    -------
    numpy.ndarray
        (n_pairs, 2) int, ``a < b``, sorted.
    """
    centroids = np.array([[f.x, f.y] for f in footings], dtype=float).reshape(-1, 2)
    pairs = [neighbour_pairs(centroids)]
    xy, groups = centre_line_points(footings)
    elongated = np.bincount(groups, minlength=len(footings)) > 1
    if elongated.any():
        extra = neighbour_pairs(xy, groups)
        pairs.append(extra[elongated[extra[:, 0]] | elongated[extra[:, 1]]])
    out = np.unique(np.concatenate(pairs), axis=0).reshape(-1, 2)
    if drop_long:
        out = out[~long_span_pairs(footings, out)]
    return out


# --- measures ------------------------------------------------------------------------------


def angular_distortion(settlement_a, settlement_b, span) -> np.ndarray:
    """Angular distortion (relative rotation) of a pair of footings.

    Parameters
    ----------
    settlement_a, settlement_b : array_like
        Settlements [m] (downward positive).
    span : array_like
        Distance between the two footings [m].

    Returns
    -------
    numpy.ndarray
        β = |s_a − s_b| / span [-]; ∞ for two footings at one place that settle
        differently, 0 when they settle alike.

    Notes
    -----
    .. math:: \\beta = \\frac{|s_a - s_b|}{L_{ab}}

    Burland, Broms & de Mello (1977) [1]_ call δs/L the rotation and β the relative
    rotation or angular distortion once the tilt of the whole structure is removed;
    pass tilt-free settlements to get the latter (see :func:`remove_plane`).

    References
    ----------
    .. [1] Burland, J.B., Broms, B.B. & de Mello, V.F.B. (1977). Behaviour of
       foundations and structures. Proc. 9th ICSMFE, Tokyo, 2, 495–546.

    Examples
    --------
    >>> float(angular_distortion(0.030, 0.018, 6.0))
    0.002
    """
    diff = np.abs(np.asarray(settlement_a, dtype=float) - np.asarray(settlement_b, dtype=float))
    span = np.asarray(span, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        beta = diff / span
    return np.where(span > 0, beta, np.where(diff > 0, np.inf, np.where(diff == 0, 0.0, np.nan)))


def plane_fit(xy, s) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Least-squares plane through settlements at plan points.

    Parameters
    ----------
    xy : array_like
        (..., n, 2) plan positions [m]; rows with a NaN coordinate are left out
        (padding for footings with fewer evaluation points).
    s : array_like
        (..., n) settlements [m].

    Returns
    -------
    c0, gx, gy : numpy.ndarray
        (...) coefficients of s ≈ c0 + gx·x + gy·y ([m], [-], [-]). With one point, or
        with points on one line, the unknown slope is taken as 0 (minimum-norm
        solution: the plane is level across the line). NaN where a used settlement is NaN
        or no point is usable.

    Notes
    -----
    Solves the normal equations of the centred coordinates with a pseudo-inverse,
    so the slopes do not depend on where the origin is.

    Examples
    --------
    >>> c0, gx, gy = plane_fit([[0, 0], [2, 0], [0, 1], [2, 1]], [0.01, 0.03, 0.02, 0.04])
    >>> [round(float(v), 6) for v in (c0, gx, gy)]
    [0.01, 0.01, 0.01]
    """
    xy = np.asarray(xy, dtype=float)
    s = np.asarray(s, dtype=float)
    ok = np.all(np.isfinite(xy), axis=-1)  # (..., n)
    w = ok.astype(float)
    count = w.sum(axis=-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_xy = np.where(ok[..., None], xy, 0.0).sum(axis=-2) / count[..., None]
        s_used = np.where(ok, s, 0.0)
        mean_s = s_used.sum(axis=-1) / count
    X = np.where(ok[..., None], xy - mean_xy[..., None, :], 0.0)
    X = np.nan_to_num(X)
    r = np.where(ok, s - mean_s[..., None], 0.0)
    A = np.swapaxes(X, -1, -2) @ X  # (..., 2, 2)
    rhs = np.einsum("...ni,...n->...i", X, r)
    lam, vec = np.linalg.eigh(A)
    big = np.max(lam, axis=-1, keepdims=True)
    inv = np.where(lam > 1e-12 * np.maximum(big, 1e-300), 1.0 / np.where(lam > 0, lam, 1.0), 0.0)
    proj = np.einsum("...ji,...j->...i", vec, rhs) * inv
    g = np.einsum("...ij,...j->...i", vec, proj)
    g = np.where(np.isfinite(rhs).all(axis=-1, keepdims=True), g, np.nan)
    gx, gy = g[..., 0], g[..., 1]
    c0 = mean_s - gx * mean_xy[..., 0] - gy * mean_xy[..., 1]
    none = count == 0
    return (np.where(none, np.nan, c0), np.where(none, np.nan, gx), np.where(none, np.nan, gy))


def tilt_from_gradient(gx, gy) -> tuple[np.ndarray, np.ndarray]:
    """Tilt magnitude and direction of a settlement plane s = c0 + gx·x + gy·y.

    Returns
    -------
    tilt : numpy.ndarray
        arctan |∇s| [rad].
    direction : numpy.ndarray
        Direction of steepest descent of the tilted base (the way the settlement
        grows), degrees counter-clockwise from east in [0, 360); 0 when level.

    Examples
    --------
    >>> t, d = tilt_from_gradient(0.0, -0.004)
    >>> round(float(t), 6), float(d)
    (0.004, 270.0)
    """
    gx = np.asarray(gx, dtype=float)
    gy = np.asarray(gy, dtype=float)
    tilt = np.arctan(np.hypot(gx, gy))
    direction = np.mod(np.degrees(np.arctan2(gy, gx)), 360.0)
    direction = np.where(np.isnan(tilt), np.nan, direction)
    return tilt, direction


def footing_tilt(point_xy, point_s) -> tuple[np.ndarray, np.ndarray]:
    """Tilt of footings from the settlement of their evaluation points.

    Parameters
    ----------
    point_xy : array_like
        (..., n_p, 2) plan positions of each footing's evaluation points [m] (the
        four characteristic points of a rigid footing; NaN rows for unused points).
    point_s : array_like
        (..., n_p) their settlements [m].

    Returns
    -------
    tilt, direction : numpy.ndarray
        (...) tilt [rad] and direction of steepest descent [deg from east] of the
        least-squares plane through the points (:func:`plane_fit`); 0 for a footing
        with a single point (flexible footings evaluated at the centre).

    Examples
    --------
    >>> xy = [[-0.74, -0.74], [0.74, -0.74], [-0.74, 0.74], [0.74, 0.74]]
    >>> t, d = footing_tilt(xy, [0.010, 0.012, 0.010, 0.012])
    >>> round(float(t) * 1480), float(d)
    (2, 0.0)
    """
    _, gx, gy = plane_fit(point_xy, point_s)
    return tilt_from_gradient(gx, gy)


def remove_plane(xy, s) -> np.ndarray:
    """Settlements with the least-squares plane's slope removed (rigid-body tilt).

    The mean is kept, so totals stay comparable; differences between points then
    exclude the tilt ω of the whole group (β = θ − ω, Burland, Broms & de Mello 1977).

    Examples
    --------
    >>> remove_plane([[0, 0], [10, 0], [20, 0]], [0.01, 0.02, 0.03]).round(6).tolist()
    [0.02, 0.02, 0.02]
    """
    xy = np.asarray(xy, dtype=float)
    s = np.asarray(s, dtype=float)
    _, gx, gy = plane_fit(xy, s)
    mean = xy.mean(axis=-2)
    return s - (
        gx[..., None] * (xy[..., 0] - mean[..., None, 0])
        + gy[..., None] * (xy[..., 1] - mean[..., None, 1])
    )


def relative_deflection(xy, s) -> tuple[np.ndarray, np.ndarray]:
    """Relative deflection Δ of a structure line and its length L.

    Parameters
    ----------
    xy : array_like
        (n, 2) plan positions of the footings along the line, in order [m].
    s : array_like
        (..., n) their settlements [m].

    Returns
    -------
    delta : numpy.ndarray
        (...) largest displacement of the settlement profile from the chord joining
        its two ends [m]; positive when the profile sags (settles more than the
        chord), negative when it hogs.
    length : float
        Length of the line measured along it [m] (the chord's abscissa is the
        distance along the line).

    Notes
    -----
    With chainage x_i along the line and L = x_n:

    .. math:: d_i = s_i - \\left[s_1 + (s_n - s_1)\\,x_i / L\\right],\\quad
              \\Delta = d_{k},\\ k = \\arg\\max_i |d_i|

    Deflection ratio Δ/L (Burland & Wroth 1974; Burland, Broms & de Mello 1977;
    EN 1997-1:2004 Fig. H.1).

    Examples
    --------
    >>> d, L = relative_deflection([[0, 0], [5, 0], [10, 0]], [0.010, 0.025, 0.020])
    >>> round(float(d), 6), float(L)
    (0.01, 10.0)
    """
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    s = np.asarray(s, dtype=float)
    seg = np.hypot(*np.diff(xy, axis=0).T)
    chain = np.concatenate([[0.0], np.cumsum(seg)])
    length = float(chain[-1])
    if length <= 0:
        raise ValueError("relative_deflection: the line has no length")
    chord = s[..., :1] + (s[..., -1:] - s[..., :1]) * (chain / length)
    d = s - chord
    k = np.argmax(np.where(np.isnan(d), np.inf, np.abs(d)), axis=-1)
    delta = np.take_along_axis(d, k[..., None], axis=-1)[..., 0]
    return delta, length


def angular_strain(xy, s) -> np.ndarray:
    """Angular strain α at each interior point of a line (EN 1997-1:2004 Fig. H.1).

    Parameters
    ----------
    xy : array_like
        (n, 2) points in order along the line [m].
    s : array_like
        (n,) their settlements [m] (downward positive).

    Returns
    -------
    numpy.ndarray
        (n − 2,) α_i = (s_i − s_{i−1})/L_{i−1,i} − (s_{i+1} − s_i)/L_{i,i+1} [-]:
        the change of slope at point i, positive where the line sags (the point
        settles more than the line joining its neighbours).

    Examples
    --------
    >>> angular_strain([[0, 0], [5, 0], [10, 0]], [0.0, 0.01, 0.0]).round(6).tolist()
    [0.004]
    """
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    s = np.asarray(s, dtype=float)
    d = np.hypot(*np.diff(xy, axis=0).T)
    slope = np.diff(s) / d
    return slope[:-1] - slope[1:]


def deflection_zones(xy, s) -> list[tuple[int, int, float, float, str]]:
    """Sagging and hogging zones of a line and the relative deflection of each.

    Parameters
    ----------
    xy : array_like
        (n, 2) points in order along the line [m] (n ≥ 2).
    s : array_like
        (n,) their settlements [m] (downward positive).

    Returns
    -------
    list of (first, last, delta, length, kind)
        Point indices of the zone's ends, its relative deflection Δ [m] from its own
        chord (+ sagging, − hogging), its length along the line [m] and
        ``"sagging"`` or ``"hogging"``, in order along the line.

    Notes
    -----
    Burland & Wroth (1974) and Burland, Broms & de Mello (1977) judge a wall by
    the deflection ratio Δ/L of each sagging and each hogging zone, measured from
    the chord of the zone over its own length, since the two modes crack walls at
    different ratios. On discrete points the zones are the runs of interior points
    whose angular strain (:func:`angular_strain`) has one sign (points with α = 0
    join the run before them); a run of interior points p…q makes the zone from
    point p − 1 to point q + 1, so zones either side of an inflection share one
    segment (or meet at a point where α = 0); the first zone starts at the line's
    first point and the last ends at its last point. A line of one curvature is one
    zone: the whole line and its chord, as :func:`relative_deflection`.

    Examples
    --------
    >>> xy = [[0, 0], [5, 0], [10, 0], [15, 0], [20, 0]]
    >>> [(a, b, round(d, 4), L, k) for a, b, d, L, k in
    ...  deflection_zones(xy, [0.0, 0.01, 0.0, -0.01, 0.0])]
    [(0, 2, 0.01, 10.0, 'sagging'), (2, 4, -0.01, 10.0, 'hogging')]
    """
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    s = np.asarray(s, dtype=float)
    n = len(s)
    chain = np.concatenate([[0.0], np.cumsum(np.hypot(*np.diff(xy, axis=0).T))])
    if n < 3:
        return [(0, n - 1, 0.0, float(chain[-1]), "sagging")]
    alpha = angular_strain(xy, s)
    scale = max(float(np.nanmax(np.abs(alpha))), 1e-300) if np.isfinite(alpha).any() else 1.0
    sign = np.where(np.abs(alpha) <= 1e-9 * scale, 0, np.sign(alpha)).astype(int)
    nonzero = np.flatnonzero(sign)
    if not len(nonzero):  # straight: one zone, Δ = 0
        nonzero, sign = np.array([0]), np.ones_like(sign)
    runs = []  # (first interior, last interior, sign); zeros between equal signs merge
    for k in nonzero:
        if runs and runs[-1][2] == sign[k]:
            runs[-1][1] = int(k)
        else:
            runs.append([int(k), int(k), int(sign[k])])
    runs[0][0] = 0
    runs[-1][1] = len(sign) - 1
    zones = []
    for p, q, sg in runs:
        a, b = p, q + 2  # interior index k is point k + 1
        length = float(chain[b] - chain[a])
        chord = s[a] + (s[b] - s[a]) * (chain[a : b + 1] - chain[a]) / length
        d = s[a : b + 1] - chord
        delta = float(np.nanmax(d)) if sg > 0 else float(np.nanmin(d))
        if np.isnan(d).any():
            delta = math.nan
        zones.append((a, b, delta, length, "sagging" if sg > 0 else "hogging"))
    return zones


def movement_after(times, s, t_after: float) -> np.ndarray:
    """The part of the settlement that happens after ``t_after``.

    Parameters
    ----------
    times : array_like
        (n_t,) increasing report times [yr] (≥ 0).
    s : array_like
        (..., n_t) settlement at those times [m].
    t_after : float
        Time from which the structure is sensitive (finishes fixed, cladding hung) [yr].

    Returns
    -------
    numpy.ndarray
        (..., n_t): s(t) − s(t_after) for t ≥ t_after, 0 before. s(t_after) is
        interpolated linearly in log time between the report times (exact at a report
        time); before the first report time it is interpolated linearly from s = 0 at
        t = 0 (which counts some of the first movement as late: on the safe side).
        ``t_after`` ≤ 0 returns ``s`` unchanged.

    Raises
    ------
    InputError
        When ``t_after`` is after the last report time.

    Examples
    --------
    >>> movement_after([1.0, 10.0, 100.0], [0.010, 0.020, 0.030], 10.0).round(6).tolist()
    [0.0, 0.0, 0.01]
    >>> movement_after([1.0, 100.0], [0.010, 0.030], 10.0).round(6).tolist()
    [0.0, 0.01]
    """
    times = np.asarray(times, dtype=float)
    s = np.asarray(s, dtype=float)
    if t_after <= 0:
        return s.copy()
    if t_after > times[-1]:
        raise InputError(
            "[checks] checked_after",
            f"{t_after:g} yr is after the last report time ({times[-1]:g} yr)",
            "a time within the design life",
        )
    t = times
    sv = s
    if times[0] > 0:  # prepend the origin: s = 0 at t = 0
        t = np.concatenate([[0.0], times])
        sv = np.concatenate([np.zeros(s.shape[:-1] + (1,)), s], axis=-1)
    j = int(np.clip(np.searchsorted(t, t_after, side="right") - 1, 0, len(t) - 2))
    t0, t1 = t[j], t[j + 1]
    if t0 <= 0:
        w = (t_after - t0) / (t1 - t0)
    else:
        w = (math.log(t_after) - math.log(t0)) / (math.log(t1) - math.log(t0))
    s_after = sv[..., j] * (1 - w) + sv[..., j + 1] * w
    return np.where(times >= t_after, s - s_after[..., None], 0.0)


# --- the checks of a plan ----------------------------------------------------------------


def _nearest_stations(st_xy: np.ndarray, a: np.ndarray, b: np.ndarray):
    """For each pair, the indices of the two members' nearest stations (NaN rows skipped)."""
    sa = np.zeros(len(a), dtype=np.intp)
    sb = np.zeros(len(a), dtype=np.intp)
    multi = np.flatnonzero(
        (np.sum(np.isfinite(st_xy[a, :, 0]), axis=1) > 1)
        | (np.sum(np.isfinite(st_xy[b, :, 0]), axis=1) > 1)
    )
    for p in multi:
        d = np.hypot(
            st_xy[a[p], :, None, 0] - st_xy[b[p], None, :, 0],
            st_xy[a[p], :, None, 1] - st_xy[b[p], None, :, 1],
        )
        d = np.where(np.isnan(d), np.inf, d)
        i, j = np.unravel_index(int(np.argmin(d)), d.shape)
        sa[p], sb[p] = i, j
    return sa, sb


def relative_rotation_along(xy, s) -> float:
    """Largest relative rotation along a line of points: segment slope less the chord's.

    Parameters
    ----------
    xy : array_like
        (n, 2) points in order along the line [m].
    s : array_like
        (n,) their settlements [m].

    Returns
    -------
    float
        max_i |(s_{i+1} − s_i)/d_i − (s_n − s_1)/L| [-]: the angular distortion of
        each segment after the line's own rigid-body tilt (the chord) is removed
        (relative rotation β, EN 1997-1:2004 Fig. H.1; Burland, Broms & de Mello 1977).

    Examples
    --------
    >>> round(relative_rotation_along([[0, 0], [5, 0], [10, 0]], [0.0, 0.01, 0.0]), 6)
    0.002
    """
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    s = np.asarray(s, dtype=float)
    d = np.hypot(*np.diff(xy, axis=0).T)
    length = float(d.sum())
    if length <= 0 or len(s) < 2:
        return math.nan
    chord = (s[-1] - s[0]) / length
    return float(np.max(np.abs(np.diff(s) / d - chord)))


def _zone_label(ids, a: int, b: int, kind: str) -> str:
    if ids is None:
        return kind
    return f"{kind} {ids[a]}–{ids[b]}"


def _line_row(ids, label_ids, xy, s, cset: CriteriaSet, rotation=math.nan, suffix=""):
    """Check one line (a structure line or a strip) by its sagging and hogging zones.

    Returns the row of :class:`LineChecks` as a dict, and the hogging zones as
    (first, last) point indices.
    """
    sag = cset.limit("deflection_ratio")
    hog = cset.limit("deflection_ratio_hog") or sag
    zones = deflection_zones(xy, s)
    best = None
    sag_ratio, hog_ratio = math.nan, math.nan
    for a, b, delta, length, kind in zones:
        ratio = delta / length if length > 0 else math.nan
        if kind == "sagging":
            sag_ratio = ratio if math.isnan(sag_ratio) else max(sag_ratio, ratio)
        else:
            hog_ratio = ratio if math.isnan(hog_ratio) else min(hog_ratio, ratio)
        lim = sag if kind == "sagging" else hog
        util = abs(ratio) / lim.value if lim is not None else -math.inf
        key = math.inf if math.isnan(util) else util
        if best is None or key > best[0] or (key == best[0] and abs(ratio) > abs(best[4])):
            best = (key, util, lim, (a, b, delta, length, kind), ratio)
    _, util, lim, (a, b, delta, length, kind), ratio = best
    alpha = angular_strain(xy, s) if len(s) >= 3 else np.zeros(0)
    a_max = float(alpha[np.nanargmax(np.abs(alpha))]) if np.isfinite(alpha).any() else math.nan
    chain = float(np.sum(np.hypot(*np.diff(np.asarray(xy, float), axis=0).T)))
    if lim is None:
        text, util, passed = f"no deflection-ratio limit in {cset.name}", math.nan, True
    else:
        text = lim.describe() + suffix
        passed = bool(np.isfinite(util) and util <= 1.0)
    row = {
        "ids": tuple(ids),
        "length": chain,
        "relative_deflection": delta,
        "deflection_ratio": ratio,
        "limit": text,
        "limit_value": lim.value if lim else math.nan,
        "limit_source": lim.source if lim else "",
        "utilisation": util,
        "passed": passed,
        "angular_distortion": rotation,
        "zone": _zone_label(label_ids, a, b, kind),
        "zone_length": length,
        "sagging_ratio": sag_ratio,
        "hogging_ratio": hog_ratio,
        "angular_strain": a_max,
    }
    hog_zones = [(z[0], z[1]) for z in zones if z[4] == "hogging"]
    return row, hog_zones


def _line_checks(rows: list[dict]) -> LineChecks | None:
    if not rows:
        return None
    fields = LineChecks.__dataclass_fields__
    out = {}
    for k in fields:
        values = [r[k] for r in rows]
        out[k] = (
            tuple(values)
            if k in ("ids", "limit", "limit_source", "zone")
            else np.array(values, dtype=bool if k == "passed" else float)
        )
    return LineChecks(**out)


def _strip_rows(footings, st_xy, st_moved, cset) -> list[dict]:
    """Deflection ratio along every footing with several stations (a strip), checked like
    a structure line (by zones); the largest relative rotation between its stations is
    reported with it, not checked: stations one width apart see the local end effect of
    a flexible strip, which the wall it carries bridges (the deflection ratio is the
    measure for a wall; Burland & Wroth 1974)."""
    rows = []
    n_ok = np.isfinite(st_xy[..., 0]).sum(axis=1) if len(footings) else np.zeros(0, int)
    for i in np.flatnonzero(n_ok >= 3):  # the footings with three stations or more
        f = footings[i]
        ok = np.isfinite(st_xy[i, :, 0])
        rot = relative_rotation_along(st_xy[i, ok], st_moved[i, ok])
        row, _ = _line_row(
            (f.id,), None, st_xy[i, ok], st_moved[i, ok], cset, rot, " along the strip"
        )
        rows.append(row)
    return rows


def _utilisation(value: np.ndarray, limit: Limit) -> np.ndarray:
    return np.abs(value) / limit.value


def _index(ids: dict[str, int], fid: str, where: str) -> int:
    if fid not in ids:
        some = ", ".join(f'"{k}"' for k in list(ids)[:8])
        raise InputError(
            where,
            f'unknown footing or query point id "{fid}"',
            f"an id of the footings or query points file ({some}…)",
        )
    return ids[fid]


def _pair_list(footings: Sequence[Footing], settings: CheckSettings, extra_ids=(), auto_pairs=None):
    """Pairs to check: {(a, b): origin}, plus the structure lines as index arrays.

    ``extra_ids`` (query points) may appear in listed pairs and structure lines;
    their indices follow the footings'. ``auto_pairs`` is
    ``footing_pairs(footings, drop_long=True)`` when the caller has it already.
    """
    rule = PairRule.parse(settings.pairs, "[checks] pairs")
    ids = {f.id: i for i, f in enumerate(footings)}
    if len(ids) != len(footings):
        raise InputError("footings", "footing ids are not unique", "one row per footing id")
    for j, q in enumerate(extra_ids):
        if q in ids:
            raise InputError(
                "query points", f'id "{q}" is also a footing id', "ids unique across both"
            )
        ids[q] = len(footings) + j
    pairs: dict[tuple[int, int], str] = {}
    if rule == PairRule.AUTO:
        if auto_pairs is None:
            auto_pairs = footing_pairs(footings, drop_long=True)
        for a, b in auto_pairs:
            pairs[(int(a), int(b))] = "auto"
    for fa, fb in settings.listed_pairs:
        where = f'listed pair ("{fa}", "{fb}")'
        a, b = _index(ids, fa, where), _index(ids, fb, where)
        if a == b:
            raise InputError(where, "a footing cannot pair with itself", "two different ids")
        pairs[(min(a, b), max(a, b))] = "listed"
    lines = []
    for n, line in enumerate(settings.structure_lines):
        where = f"structure line {n + 1} ({', '.join(line[:3])}{'…' if len(line) > 3 else ''})"
        if len(line) < 2:
            raise InputError(where, "a structure line needs at least two footings", "2 or more ids")
        idx = np.array([_index(ids, fid, where) for fid in line], dtype=np.intp)
        if np.any(idx[1:] == idx[:-1]) or len(set(idx.tolist())) != len(idx):
            raise InputError(where, "a footing appears twice", "each footing once, in order")
        lines.append(idx)
        for a, b in zip(idx[:-1], idx[1:]):
            pairs[(int(min(a, b)), int(max(a, b)))] = "line"
    return pairs, lines


def _govern(values: list[np.ndarray], limits: list[list[Limit | None]], n: int):
    """Largest utilisation per item over the applicable limits (NaN if any is NaN)."""
    util = np.full((len(values), n), -np.inf)
    for m, (v, lims) in enumerate(zip(values, limits)):
        lv = np.array([lim.value if lim else np.nan for lim in lims])
        has = np.array([lim is not None for lim in lims], dtype=bool)
        with np.errstate(invalid="ignore"):
            u = np.abs(v) / lv
        util[m] = np.where(has, np.where(np.isnan(u), np.nan, u), -np.inf)
    filled = np.where(np.isnan(util), np.inf, util)
    k = np.argmax(filled, axis=0) if len(values) else np.zeros(n, dtype=int)
    best = util[k, np.arange(n)] if len(values) else np.full(n, -np.inf)
    gov = [limits[k[i]][i] if len(values) else None for i in range(n)]
    best = np.where(np.isinf(best) & (best < 0), np.nan, best)
    no_limit = np.array([g is None for g in gov], dtype=bool)
    passed = np.where(no_limit, True, best <= 1.0)
    return best, gov, passed


def check_movements(
    footings: Sequence[Footing],
    times: np.ndarray,
    total: np.ndarray,
    point_xy: np.ndarray,
    point_total: np.ndarray,
    settings: CheckSettings,
    *,
    design_life_index: int = -1,
    station_xy: np.ndarray | None = None,
    station_total: np.ndarray | None = None,
    query: tuple | None = None,
    on_loading: np.ndarray | None = None,
    auto_pairs: np.ndarray | None = None,
) -> Checks:
    """Check every footing, neighbour pair and structure line against a criteria set.

    Parameters
    ----------
    footings : sequence of Footing
        The plan; index ``i`` of every array below is ``footings[i]``.
    times : numpy.ndarray
        (n_t,) report times [yr], increasing.
    total : numpy.ndarray
        (n_f, n_t) footing-level total settlement [m].
    point_xy : numpy.ndarray
        (n_f, n_p, 2) evaluation points of each footing [m] (NaN rows if unused).
    point_total : numpy.ndarray
        (n_f, n_p, n_t) their total settlement [m].
    settings : CheckSettings
        Criteria set and overrides, ``checked_after``, pair rule, listed pairs and
        structure lines, ``rigid_tilt``.
    design_life_index : int
        Column of the design life in the time axis.
    station_xy, station_total : numpy.ndarray, optional
        (n_f, n_s, 2) and (n_f, n_s, n_t) the stations of each footing (NaN rows
        if unused): one per pad (its centre and value), several along a strip.
        Default: one station per footing, its centre and ``total``.
    query : (ids, xy, total), optional
        Query points (ids, (n_q, 2) [m], (n_q, n_t) [m]) that listed pairs and
        structure lines may name; they are not footings and have no total limit.
    on_loading : numpy.ndarray, optional
        (n_f,) settlement on loading [m], for the bearing-failure proxy: above
        :data:`BEARING_PROXY` × B a footing's status is ``"beyond_range"``.
    auto_pairs : numpy.ndarray, optional
        (n, 2) ``footing_pairs(footings, drop_long=True)`` when the caller has made
        it already (the neighbour search is then not repeated).

    Returns
    -------
    Checks

    Notes
    -----
    * Total settlement is checked as computed (all of it); differential settlement,
      angular distortion, footing tilt, building tilt and deflection ratios are of
      the movement after ``settings.checked_after`` (:func:`movement_after`).
    * A pair is taken between the nearest stations of its two members: for pads
      (one station) the centroids and the footing-level settlements; a strip
      gives the settlement of its station nearest the other footing, and the span
      to it. Differential = |s_a − s_b|; β = differential / span, computed with the
      building's rigid-body tilt kept and with it removed (least-squares plane);
      ``settings.rigid_tilt`` says which is checked: ``"both"`` (default) the
      larger, or ``"kept"`` or ``"removed"``. Removing the tilt can increase |β|.
    * Totals are held to the set's limit for the footing's kind
      (:func:`sitesettle.site.foundation_kind`); the building's tilt to the set's
      ``building_tilt`` limit when it has one.
    * Structure lines and strips are split into sagging and hogging zones
      (:func:`deflection_zones`), each held to its own deflection-ratio limit;
      pairs within a hogging zone are held to the hogging angular-distortion limit.
    * A movement that cannot be computed (NaN) fails; a movement the set has no
      limit for passes and is reported.
    """
    footings = tuple(footings)
    n_f = len(footings)
    times = np.asarray(times, dtype=float)
    total = np.asarray(total, dtype=float)
    point_xy = np.asarray(point_xy, dtype=float)
    point_total = np.asarray(point_total, dtype=float)
    n_t = len(times)
    if total.shape != (n_f, n_t):
        raise ValueError(f"check_movements: total is {total.shape}, expected {(n_f, n_t)}")
    if (
        point_xy.ndim != 3
        or point_xy.shape[0] != n_f
        or point_xy.shape[2] != 2
        or point_total.shape != point_xy.shape[:2] + (n_t,)
    ):
        raise ValueError("check_movements: point arrays do not match the footings and times")
    cset: CriteriaSet = get_criteria(settings.criteria, settings.overrides)
    k = design_life_index
    t_after = float(settings.checked_after)
    if n_t and t_after > times[k]:
        raise InputError(
            "[checks] checked_after",
            f"{t_after:g} yr is after the design life ({times[k]:g} yr)",
            "a time before the design life",
        )

    moved = movement_after(times, total, t_after)[:, k]  # (n_f,)
    point_moved = movement_after(times, point_total, t_after)[..., k]  # (n_f, n_p)
    s_total = total[:, k]
    xy = np.array([[f.x, f.y] for f in footings], dtype=float).reshape(n_f, 2)
    if station_xy is None or station_total is None:
        station_xy = xy[:, None, :]
        station_total = total[:, None, :]
    st_xy = np.asarray(station_xy, dtype=float)
    st_moved = movement_after(times, np.asarray(station_total, dtype=float), t_after)[..., k]
    q_ids, q_xy, q_moved = (), np.zeros((0, 2)), np.zeros(0)
    if query is not None:
        q_ids = tuple(query[0])
        q_xy = np.asarray(query[1], dtype=float).reshape(-1, 2)
        q_moved = movement_after(times, np.asarray(query[2], dtype=float), t_after)[:, k]
    n_s = st_xy.shape[1]
    if len(q_ids):  # query points are members with one station
        pad_xy = np.full((len(q_ids), n_s, 2), np.nan)
        pad_s = np.full((len(q_ids), n_s), np.nan)
        pad_xy[:, 0] = q_xy
        pad_s[:, 0] = q_moved
        st_xy = np.concatenate([st_xy, pad_xy])
        st_moved = np.concatenate([st_moved, pad_s])
    m_xy = np.concatenate([xy, q_xy])
    m_moved = np.concatenate([moved, q_moved])
    member_ids = tuple(f.id for f in footings) + q_ids

    # building tilt from the checked movement (footings only)
    _, gx, gy = plane_fit(xy, moved) if n_f else (np.nan, np.nan, np.nan)
    b_tilt, b_dir = tilt_from_gradient(gx, gy)
    rigid_tilt = RigidTilt.parse(settings.rigid_tilt, "[checks] rigid_tilt")
    st_removed = st_moved
    if n_f:
        centre = xy.mean(axis=0)
        plane = gx * (st_xy[..., 0] - centre[0]) + gy * (st_xy[..., 1] - centre[1])
        st_removed = st_moved - plane

    # structure lines, by sagging and hogging zones
    pair_origin, lines = _pair_list(footings, settings, q_ids, auto_pairs)
    hog_pairs: set[tuple[int, int]] = set()
    rows = []
    for idx in lines:
        names = [member_ids[i] for i in idx]
        row, hog_zones = _line_row(names, names, m_xy[idx], m_moved[idx], cset)
        rows.append(row)
        for z0, z1 in hog_zones:
            hog_pairs.update(
                (int(min(a, b)), int(max(a, b))) for a, b in zip(idx[z0:z1], idx[z0 + 1 : z1 + 1])
            )
    rows += _strip_rows(footings, st_xy[:n_f], st_moved[:n_f], cset)
    line_checks = _line_checks(rows)

    # pairs, between the nearest stations of the two members
    keys = sorted(pair_origin)
    a = np.array([p[0] for p in keys], dtype=np.intp)
    b = np.array([p[1] for p in keys], dtype=np.intp)
    n_p = len(keys)
    sa, sb = _nearest_stations(st_xy, a, b)
    span = np.hypot(*(st_xy[a, sa] - st_xy[b, sb]).T) if n_p else np.zeros(0)
    differential = np.abs(st_moved[a, sa] - st_moved[b, sb])
    beta_kept = angular_distortion(st_moved[a, sa], st_moved[b, sb], span)
    beta_removed = angular_distortion(st_removed[a, sa], st_removed[b, sb], span)
    if rigid_tilt == RigidTilt.KEPT:
        removed_governs = np.zeros(n_p, dtype=bool)
    elif rigid_tilt == RigidTilt.REMOVED:
        removed_governs = np.ones(n_p, dtype=bool)
    else:
        removed_governs = np.nan_to_num(beta_removed, nan=np.inf) > np.nan_to_num(
            beta_kept, nan=np.inf
        )
    beta = np.where(removed_governs, beta_removed, beta_kept)
    beta_sag = cset.limit("angular_distortion")
    beta_hog = cset.limit("angular_distortion_hog") or beta_sag
    beta_lims = [beta_hog if key in hog_pairs else beta_sag for key in keys]
    diff_lim = cset.limit("differential")
    util, gov, passed = _govern([beta, differential], [beta_lims, [diff_lim] * n_p], n_p)
    pair_checks = PairChecks(
        a=a,
        b=b,
        span=span,
        differential=differential,
        angular_distortion=beta,
        limit=tuple(g.describe() if g else f"no pair limit in {cset.name}" for g in gov),
        limit_value=np.array([g.value if g else np.nan for g in gov]),
        limit_measure=tuple(g.measure if g else "" for g in gov),
        limit_source=tuple(g.source if g else "" for g in gov),
        utilisation=util,
        passed=passed.astype(bool),
        origin=tuple(pair_origin[key] for key in keys),
        angular_distortion_tilt_kept=beta_kept,
        angular_distortion_tilt_removed=beta_removed,
        beta_basis=tuple("tilt removed" if r else "tilt kept" for r in removed_governs),
    )

    # footings: total (all of it) against the limit for their kind, tilt (of the
    # checked movement), and the bearing-failure proxy (settlement on loading > 0.1 B)
    kinds = tuple(foundation_kind(f) for f in footings)
    tilt, _ = footing_tilt(point_xy, point_moved)
    widths = np.array([f.width for f in footings], dtype=float)
    loading = np.full(n_f, np.nan) if on_loading is None else np.asarray(on_loading, float)
    ok = np.ones(n_f, dtype=bool)
    status, reasons = [], []
    limits_total = np.full(n_f, np.nan)
    for i in range(n_f):
        why = []
        beyond = bool(np.isfinite(loading[i]) and loading[i] > BEARING_PROXY * widths[i])
        if beyond:
            why.append(
                f"outside the methods' range — bearing failure likely: "
                f"{loading[i] * 1000:.0f} mm on loading > {BEARING_PROXY:g} B = "
                f"{BEARING_PROXY * widths[i] * 1000:.0f} mm"
            )
        tot_i = cset.limit("total", kinds[i])
        tilt_i = cset.limit("tilt", kinds[i])
        limits_total[i] = tot_i.value if tot_i else np.nan
        for measure, value, lim in (("total", s_total[i], tot_i), ("tilt", tilt[i], tilt_i)):
            if lim is None:
                continue
            if not np.isfinite(value):
                why.append(f"{measure} not computed")
            elif value > lim.value:
                why.append(
                    f"{measure} {format_value(measure, value)} > "
                    f"{format_value(measure, lim.value, exact=True)} ({lim.source})"
                )
        ok[i] = not why
        status.append("beyond_range" if beyond else ("pass" if ok[i] else "fail"))
        reasons.append("; ".join(why))

    b_lim = cset.limit("building_tilt")
    b_ok = True
    if b_lim is not None and n_f:
        b_ok = bool(np.isfinite(b_tilt) and float(b_tilt) <= b_lim.value)
    pad_lim = cset.limit("total", "pad")

    return Checks(
        criteria=cset.name,
        sources=cset.sources,
        pairs=pair_checks,
        lines=line_checks,
        footing_passed=ok,
        footing_reasons=tuple(reasons),
        footing_limit_total=pad_lim.value if pad_lim else math.nan,
        footing_limit_source=pad_lim.source if pad_lim else "",
        building_tilt=float(b_tilt),
        building_tilt_direction=float(b_dir),
        checked_after=t_after,
        footing_status=tuple(status),
        footing_kind=kinds,
        footing_limit=limits_total,
        building_tilt_limit=b_lim.value if b_lim else math.nan,
        building_tilt_source=b_lim.source if b_lim else "",
        building_tilt_passed=b_ok,
        rigid_tilt=rigid_tilt.value,
    )


__all__ = [
    "BEARING_PROXY",
    "ELONGATED_RATIO",
    "MEASURES",
    "NEIGHBOUR_TOLERANCE",
    "PairRule",
    "angular_distortion",
    "angular_strain",
    "centre_line_points",
    "check_movements",
    "deflection_zones",
    "far_footings",
    "footing_pairs",
    "long_span_pairs",
    "plan_spacing",
    "footing_tilt",
    "movement_after",
    "neighbour_pairs",
    "plane_fit",
    "relative_deflection",
    "relative_rotation_along",
    "remove_plane",
    "tilt_from_gradient",
]
