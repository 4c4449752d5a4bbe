"""The far field of the stress sums: a treecode with a rigorous error bound.

Loads are grouped into a binary tree of clusters with their multipole
moments and the moments that bound the truncation error; points into blocks
(one plan cell, one depth band) and an implicit binary tree of groups of
consecutive blocks. :func:`treecode` traverses the two together (compiled, in
:mod:`sitesettle.farfield`) and returns (σz, T) at every point within ε of
the exact sum. The proof of the bound and the acceptance rules are in the
Notes of :func:`sitesettle.stress.stress_sums`, the public entry point; this
module knows loads only through their :class:`LoadGeometry`, which
:class:`sitesettle.stress.Loads` builds.

References
----------
.. [1] Barnes, J. & Hut, P. (1986). A hierarchical O(N log N) force-calculation
   algorithm. Nature 324, 446–449 (the treecode idea used for the far field).
"""

from __future__ import annotations

import math
import threading
from concurrent.futures import ThreadPoolExecutor
from typing import NamedTuple

import numpy as np

from sitesettle import farfield as ff


class LoadGeometry(NamedTuple):
    """What the treecode needs of each of n loads (built by ``Loads._geometry``)."""

    #: uniform pressure (n,) [kPa]
    pressure: np.ndarray
    #: plan centroid and depth of the loaded plane (n, 3) [m]
    centre: np.ndarray
    #: area (n,) [m²]
    area: np.ndarray
    #: radial moments μ0…μ4 = ∫|s − c|^k dA about the centroid, exact or upper
    #: bounds (n, 5)
    mu: np.ndarray
    #: plan second-moment tensor ∫ t tᵀ dA about the centroid, in 3-D (n, 3, 3)
    inertia: np.ndarray
    #: radius of the smallest centroid-centred circle holding the load (n,) [m]
    reach: np.ndarray
    #: centrally symmetric (rectangle, circle: odd moments vanish) (n,)
    symmetric: np.ndarray
    #: half-extents in x and y of the plan bounding box about the centroid (n, 2)
    extent: np.ndarray
    #: per load x, y, cos θ, sin θ, half length, half width, pressure, depth and
    #: 1.0 for a rectangle (0.0 otherwise), for the compiled exact rectangle (n, 9)
    rectangles: np.ndarray


def _rising(p, m):
    """Rising factorial (p)_m = p (p+1) … (p+m−1)."""
    out = 1.0
    for i in range(m):
        out *= p + i
    return out


def _bound_coefficients(n):
    """Coefficients of the order-n remainder bounds (see :func:`sitesettle.stress.stress_sums`).

    Returns two lists of (j, coefficient) for σz (power 3 kernel, r^-5) and for
    T (power 1 kernel, r^-3): the bound is Σ_j coef · w^{p−j} δ^j M_{n−j} / r^{2p−1+n−j}.
    """
    sig = [
        (
            j,
            ff.K_SIGMA
            / math.factorial(n)
            * math.comb(n, j)
            * math.factorial(3)
            / math.factorial(3 - j)
            * _rising(5, n - j),
        )
        for j in range(min(n, 3) + 1)
    ]
    the = [
        (j, ff.K_THETA / math.factorial(n) * math.comb(n, j) * _rising(3, n - j))
        for j in range(min(n, 1) + 1)
    ]
    return sig, the


_BOUND = {n: _bound_coefficients(n) for n in (3, 4)}


#: powers 0…4 and the binomial tensor B[m, k, j] = C(m, k) if j = m − k, for M_m
_POW5 = np.arange(5)
_BINOM5 = np.zeros((5, 5, 5))
for _m in range(5):
    for _k in range(_m + 1):
        _BINOM5[_m, _k, _m - _k] = math.comb(_m, _k)


def _cluster_moments(aq, mu, h, inert, reach, sym, node):
    """Upper bounds of M_k = Σ|q|∫|s − C|^k dA, k = 0…4, per cluster (K, 5).

    Per member i of cluster ``node[i]`` (0…K−1): ``aq`` |q|, ``mu`` its moments
    μ0…μ4 about its own centroid (exact or upper bounds), ``h`` the centroid
    offset c_i − C (3-D), ``inert`` the plan second-moment tensor, ``reach``
    the largest |t| on the load, ``sym`` whether it is centrally symmetric.
    Two bounds are combined by taking the smaller: the binomial expansion of
    |s − C| ≤ |t| + |h| (t = s − c_i), and, with |s − C|² = |t|² + 2t·h + |h|²
    and ∫t dA = 0, the exact M2 = Σ|q|(μ2 + A|h|²) and
    M4 = Σ|q|(μ4 + 2|h|²μ2 + 4hᵀIh + A|h|⁴ + 4∫|t|²(t·h)), whose last term
    vanishes for centrally symmetric loads and is at most 4|h|·reach·μ2
    otherwise; then M1 ≤ √(M0 M2) and M3 ≤ √(M2 M4) (Cauchy–Schwarz for the
    measure |q| dA).
    """
    k = int(node.max()) + 1 if len(node) else 0

    def add(v):
        return np.bincount(node, weights=v, minlength=k)

    d2 = (h * h).sum(axis=1)
    d = np.sqrt(d2)
    each = np.einsum("i,ij,ik,mkj->im", aq, d[:, None] ** _POW5, mu, _BINOM5)
    binom = np.column_stack([add(each[:, i]) for i in range(5)])
    area, mu2, mu4 = mu[:, 0], mu[:, 2], mu[:, 4]
    hih = np.einsum("ia,iab,ib->i", h, inert, h)
    odd = np.where(sym, 0.0, 4.0 * d * reach * mu2)
    m0 = binom[:, 0]
    m2 = np.minimum(add(aq * (mu2 + area * d2)), binom[:, 2])
    m4 = np.minimum(
        add(aq * (mu4 + 2.0 * d2 * mu2 + 4.0 * hih + area * d2 * d2 + odd)), binom[:, 4]
    )
    m1 = np.minimum(np.sqrt(m0 * m2), binom[:, 1])
    m3 = np.minimum(np.sqrt(m2 * m4), binom[:, 3])
    return np.column_stack([m0, m1, m2, m3, m4])


#: the ten distinct components of a symmetric 3-tensor, as (a, b, c) index
#: triples (0 x, 1 y, 2 w), in the order of farfield.NT_OCT
_OCT_INDEX = ((0, 0, 0), (0, 0, 1), (0, 1, 1), (1, 1, 1), (0, 0, 2), (0, 1, 2), (1, 1, 2),
              (0, 2, 2), (1, 2, 2), (2, 2, 2))  # fmt: skip


def _third_moments(q, area, h, inert, node):
    """The octupole O_abc = Σ q ∫ (s − C)_a (s − C)_b (s − C)_c dA per cluster, its
    ten distinct components (order of ``_OCT_INDEX``), for centrally symmetric
    loads: ∫ (h + t)⊗3 dA = A h⊗h⊗h + h_a I_bc + h_b I_ac + h_c I_ab, with h the
    centroid offset from C and I the plan second-moment tensor (the odd moments
    of t vanish). Member i belongs to cluster ``node[i]``."""
    k = int(node.max()) + 1 if len(node) else 0
    cols = []
    for a, b, c in _OCT_INDEX:
        v = q * (
            area * h[:, a] * h[:, b] * h[:, c]
            + h[:, a] * inert[:, b, c]
            + h[:, b] * inert[:, a, c]
            + h[:, c] * inert[:, a, b]
        )
        cols.append(np.bincount(node, weights=v, minlength=k))
    return np.column_stack(cols) if cols else np.zeros((0, 10))


def _segments(starts, stops):
    """Positions of the elements of the ranges [starts[k], stops[k]) concatenated,
    the range of each element, and the first position of each range in the result."""
    size = stops - starts
    first = np.cumsum(size) - size
    rep = np.repeat(np.arange(len(starts)), size)
    return starts[rep] + np.arange(int(size.sum())) - first[rep], rep, first


def _build(qs, cen, area, mu, inert, reach, sym, ext, idx):
    """The load tree over loads ``idx``, built one level at a time (vectorised).

    ``qs`` (K, n) holds the pressures of K load states on the same geometry. A
    node holds a contiguous range of a permutation of the loads; a node of
    m > 1 loads is split at m // 2 after a stable sort of its centroids along
    the plan axis of their larger extent. Nodes are numbered in depth-first
    preorder, so the subtree of node i is the range [i, end[i]) (a full binary
    tree: 2m − 1 nodes for m loads): the left child of node i is i + 1, the
    right child i + 2·(m // 2). Returns per node the topology, the centre C (the
    centroid weighted by Σ_k |q_k|·A, so |q|A for one state), the bounding box
    and the depths of its planes, and per state and node (leading axis K) the
    multipole moments about C, the moments of the bound
    (:func:`_cluster_moments`) and the octupole of clusters of rectangles and
    circles (:func:`_third_moments`).
    """
    qs = np.atleast_2d(qs)
    ns = len(qs)
    m = len(idx)
    n = 2 * m - 1
    perm = np.asarray(idx, dtype=np.intp).copy()
    out = {
        "left": np.full(n, -1),
        "right": np.full(n, -1),
        "load": np.full(n, -1),
        "end": np.zeros(n, dtype=int),
        "c": np.zeros((n, 3)),
        "F": np.zeros((ns, n)),
        "Q0": np.zeros((ns, n)),
        "dip": np.zeros((ns, n, 3)),
        "quad": np.zeros((ns, n, 6)),
        "M": np.zeros((ns, n, 5)),
        "rho": np.zeros(n),
        "delta": np.zeros(n),
        "order": np.zeros(n, dtype=int),
        "dmin": np.zeros(n),
        "dmax": np.zeros(n),
        "lo": np.zeros((n, 3)),
        "hi": np.zeros((n, 3)),
        "oct": np.zeros((ns, n, 10)),
        "has_oct": np.zeros(n, dtype=bool),
    }
    weight = np.abs(qs).sum(axis=0) * area
    ids = np.zeros(1, dtype=np.intp)
    a0, a1 = np.zeros(1, dtype=np.intp), np.full(1, m, dtype=np.intp)
    while len(ids):
        pos, rep, first = _segments(a0, a1)
        j = perm[pos]
        size = a1 - a0
        nk = len(ids)

        def add(v, rep=rep, nk=nk):
            return np.bincount(rep, weights=v, minlength=nk)

        def top(v, fn, first=first):
            return fn.reduceat(v, first)

        wj = weight[j]
        c = np.column_stack([add(wj * cen[j, k]) for k in range(3)]) / add(wj)[:, None]
        h = cen[j] - c[rep]
        d2 = (h * h).sum(axis=1)
        d = np.sqrt(d2)
        o = out
        o["end"][ids] = ids + 2 * size - 1
        o["c"][ids] = c
        ixx, ixy, iyy = inert[j, 0, 0], inert[j, 0, 1], inert[j, 1, 1]
        single = size == 1
        all_sym = top(sym[j].astype(np.int8), np.minimum) > 0
        third = ~single & all_sym
        for s, q in enumerate(qs):
            qj = q[j]
            qa = qj * area[j]
            o["F"][s, ids], o["Q0"][s, ids] = add(np.abs(qj) * area[j]), add(qa)
            o["dip"][s, ids] = np.column_stack([add(qa * h[:, k]) for k in range(3)])
            o["quad"][s, ids] = np.column_stack(
                [
                    add(qj * ixx + qa * h[:, 0] ** 2),
                    add(qj * ixy + qa * h[:, 0] * h[:, 1]),
                    add(qj * iyy + qa * h[:, 1] ** 2),
                    add(qa * h[:, 0] * h[:, 2]),
                    add(qa * h[:, 1] * h[:, 2]),
                    add(qa * h[:, 2] ** 2),
                ]
            )
            o["M"][s, ids] = _cluster_moments(np.abs(qj), mu[j], h, inert[j], reach[j], sym[j], rep)
            if third.any():
                o["oct"][s, ids[third]] = _third_moments(qj, area[j], h, inert[j], rep)[third]
        o["rho"][ids] = top(d + reach[j], np.maximum)
        lo = np.column_stack([cen[j, 0] - ext[j, 0], cen[j, 1] - ext[j, 1], cen[j, 2]])
        hi = np.column_stack([cen[j, 0] + ext[j, 0], cen[j, 1] + ext[j, 1], cen[j, 2]])
        o["lo"][ids], o["hi"][ids] = top(lo, np.minimum), top(hi, np.maximum)
        o["dmin"][ids], o["dmax"][ids] = o["lo"][ids, 2], o["hi"][ids, 2]
        o["delta"][ids] = top(np.abs(h[:, 2]), np.maximum)
        # rectangles and circles only: a single one has no third moments about
        # its centroid, a cluster of them carries its octupole; either way the
        # expansion is exact to third order and the remainder is of order 4
        o["order"][ids] = np.where(all_sym, 4, 3)
        o["has_oct"][ids[third]] = True
        o["load"][ids[single]] = perm[a0[single]]
        # split the nodes of more than one load
        k = np.flatnonzero(~single)
        if len(k) == 0:
            break
        ids, a0, a1, size = ids[k], a0[k], a1[k], size[k]
        pos, rep, first = _segments(a0, a1)
        xy = cen[perm[pos], :2]
        span = np.maximum.reduceat(xy, first) - np.minimum.reduceat(xy, first)
        axis = (span[:, 1] > span[:, 0]).astype(np.intp)  # argmax: x on ties
        key = xy[np.arange(len(pos)), axis[rep]]
        perm[pos] = perm[pos[np.lexsort((key, rep))]]
        half = size // 2
        left, right = ids + 1, ids + 2 * half
        o["left"][ids], o["right"][ids] = left, right
        ids = np.concatenate([left, right])
        a0, a1 = np.concatenate([a0, a0 + half]), np.concatenate([a0 + half, a1])
    return out


class Tree:
    """Binary tree of load clusters with their multipole moments (internal).

    ``pressures`` (K, n) gives K load states on the loads' geometry (default:
    the geometry's own pressures, K = 1): the topology, centre and boxes are
    shared, the moments are per state (``st``, one table per state in the layout
    of the ``farfield.ST_*`` columns). ``nt`` holds the geometry and the first
    state's moments (the single-state tables of the tests and ``far``)."""

    def __init__(self, geo: LoadGeometry, idx: np.ndarray, pressures=None):
        qs = np.atleast_2d(geo.pressure if pressures is None else pressures)
        cen = geo.centre
        area, mu, inert, reach, sym = geo.area, geo.mu, geo.inertia, geo.reach, geo.symmetric
        self.rect = geo.rectangles
        #: (K, n_loads) pressure of every load in every state (the exact rectangles')
        self.pressures = np.ascontiguousarray(qs, dtype=float)
        t = _build(qs, cen, area, mu, inert, reach, sym, geo.extent, np.asarray(idx))
        self.n = len(t["load"])
        self.load, self.end = t["load"], t["end"]
        self.left, self.right = t["left"], t["right"]
        self.c = t["c"]
        self.F, self.Q0, self.dip, self.quad = t["F"][0], t["Q0"][0], t["dip"][0], t["quad"][0]
        self.M, self.rho, self.delta, self.order = t["M"][0], t["rho"], t["delta"], t["order"]
        self.dmin, self.dmax, self.lo, self.hi = t["dmin"], t["dmax"], t["lo"], t["hi"]
        self.extent = np.sqrt(((self.hi[:, :2] - self.lo[:, :2]) ** 2).sum(axis=1))
        self.leaf = self.load >= 0
        # clusters of rectangles and circles carry the octupole O (third order)
        self.oct, self.has_oct = t["oct"][0], t["has_oct"]
        # coefficient of M₃ in the harmonic bound of T: 4 (the order-3 Legendre
        # term), 0 where the expansion is of order 3 (octupole) or the third
        # moments vanish (a single centrally symmetric load): order n = 4
        self.h3 = np.where(self.order == 4, 0.0, 4.0)
        # the bound's six terms per node and state (σz: j = 0…3, T: j = 0, 1, the
        # order of farfield.TERM_A), each coefficient · δ^j · M_{n−j} with the
        # power b of 1/r (a = 3 − j, b = 5 + n − j for σz; a = 1 − j, b = 3 + n − j
        # for T)
        rows = np.arange(self.n)
        coefs, b1 = [], []
        for kernel, (p, m) in enumerate(((3, 5), (1, 3))):
            for j in range(p + 1):
                coefs.append(
                    (np.array([dict(_BOUND[o][kernel]).get(j, 0.0) for o in self.order]), j)
                )
                b1.append(m + self.order - j)
        amp = np.stack(
            [
                np.column_stack([c * self.delta**j * M[rows, self.order - j] for c, j in coefs])
                for M in t["M"]
            ]
        )

        # the same as flat tables for the compiled loops (sitesettle.farfield)
        nt = np.zeros((self.n, ff.NT_COLS))
        nt[:, ff.NT_C : ff.NT_C + 3] = self.c
        nt[:, ff.NT_Q0] = self.Q0
        nt[:, ff.NT_DIP : ff.NT_DIP + 3] = self.dip
        nt[:, ff.NT_QUAD : ff.NT_QUAD + 6] = self.quad
        nt[:, ff.NT_LO : ff.NT_LO + 3] = self.lo
        nt[:, ff.NT_HI : ff.NT_HI + 3] = self.hi
        nt[:, ff.NT_DMIN], nt[:, ff.NT_DMAX] = self.dmin, self.dmax
        nt[:, ff.NT_RHO], nt[:, ff.NT_H3] = self.rho, self.h3
        nt[:, ff.NT_EXTENT], nt[:, ff.NT_F] = self.extent, self.F
        nt[:, ff.NT_M : ff.NT_M + 5] = self.M
        nt[:, ff.NT_HAS_OCT] = self.has_oct
        nt[:, ff.NT_OCT : ff.NT_OCT + 10] = self.oct
        self.nt = nt
        st = np.zeros((len(qs), self.n, ff.ST_COLS))
        st[:, :, ff.ST_Q0] = t["Q0"]
        st[:, :, ff.ST_DIP : ff.ST_DIP + 3] = t["dip"]
        st[:, :, ff.ST_QUAD : ff.ST_QUAD + 6] = t["quad"]
        st[:, :, ff.ST_OCT : ff.ST_OCT + 10] = t["oct"]
        st[:, :, ff.ST_F] = t["F"]
        st[:, :, ff.ST_M3] = t["M"][:, :, 3]
        st[:, :, ff.ST_M4] = t["M"][:, :, 4]
        st[:, :, ff.ST_AMP : ff.ST_AMP + 6] = amp
        self.st = st
        self.amp1 = amp[0]
        self.b1 = np.column_stack(b1).astype(np.int64)
        # child and load indices as the compiled traversal takes them
        self.links = tuple(
            np.asarray(v, dtype=np.int64) for v in (self.left, self.right, self.load)
        )
        self.tables = (self.nt, self.st, self.b1)

    def bounds(self, lo, hi):
        """Per node: truncation bound valid at every point of the box [lo, hi], and
        whether the node contributes nothing there (all points above its planes)."""
        lo = np.broadcast_to(np.asarray(lo, dtype=float), (self.n, 3))
        hi = np.broadcast_to(np.asarray(hi, dtype=float), (self.n, 3))
        return self.pair_bounds(lo, hi, np.arange(self.n))

    def pair_bounds(self, lo, hi, nodes, lam=None):
        """Bound e (of the first load state) and "contributes nothing" flag of each
        (box, node) pair.

        ``lo``, ``hi`` are (K, 3) boxes of points and ``nodes`` (K,) node indices.
        Each term of the bound has the form W^a / r^b with W the kernel's vertical
        distance and r its 3-D distance, at a point of the segment from C to a
        source. With h the plan gap between the box and the cluster's bounding
        box, v = z − d_max the vertical gap and Δ = d_max − d_min, one has
        W ≤ v + Δ and r² ≥ h² + v², and (v + Δ)^a (h² + v²)^(−b/2) is unimodal in
        v with its maximum at the positive root of (b − a)v² + bΔv − ah² = 0; the
        sup over the box's depth range is taken at that root clipped to the range.

        The harmonic bound of T is smaller only now and then and costs about as
        much as the first: with ``lam`` (K,) the acceptance thresholds it is
        computed only for pairs whose first bound lies in (λ·LAZY_LO, λ·LAZY_HI]
        (sitesettle.farfield), where it may change the acceptance or add to a
        block's sum; elsewhere e is the first bound, which is as rigorous (both
        are upper bounds of the same error).
        """
        nodes = np.ascontiguousarray(nodes, dtype=np.int64)
        lo = np.ascontiguousarray(np.broadcast_to(lo, (len(nodes), 3)), dtype=float)
        hi = np.ascontiguousarray(np.broadcast_to(hi, (len(nodes), 3)), dtype=float)
        lam = np.full(len(nodes), -1.0) if lam is None else np.ascontiguousarray(lam, dtype=float)
        e, zero = ff.bounds_many(*self.tables, nodes, lo, hi, lam)
        return e, zero

    def _harmonic_bound(self, lo, hi, nodes):
        """Harmonic bound of T's far-field error for (box, node) pairs whose points
        all lie below the node's planes (see stress_sums), and its part from the
        Legendre terms of order ≥ 4: with r_c the least distance from the box to
        the node's centre C and ρ its radius about C, (1/π)[4·M₃/r_c⁵ +
        M₄·S(ρ/r_c)/r_c⁶], S(x) = 5/(1 − x) + x/(1 − x)² (inf where ρ ≥ r_c; no
        M₃ term where the expansion is of third order or a single load is
        centrally symmetric)."""
        nodes = np.ascontiguousarray(nodes, dtype=np.int64)
        lo = np.ascontiguousarray(np.broadcast_to(lo, (len(nodes), 3)), dtype=float)
        hi = np.ascontiguousarray(np.broadcast_to(hi, (len(nodes), 3)), dtype=float)
        return ff.harmonic_many(self.nt, nodes, lo, hi)

    def far(self, nodes, px, py, pz):
        """Multipole (σz, T) of ``nodes`` at the points in the first load state,
        summed over the nodes (to second order; to third where a node carries an
        octupole)."""
        nodes = np.asarray(nodes, dtype=np.int64)
        px, py, pz = (np.asarray(v, dtype=float) for v in (px, py, pz))
        k = np.repeat(nodes[None, :], len(px), axis=0).ravel()
        rep = lambda v: np.repeat(v, len(nodes))  # noqa: E731
        a, b = ff.multipole_many(self.nt, self.st[:1], k, rep(px), rep(py), rep(pz))
        return a[0].reshape(len(px), -1).sum(axis=1), b[0].reshape(len(px), -1).sum(axis=1)


def _morton(ix, iy):
    """Z-order key of non-negative integer cell indices (16 bits each)."""
    key = np.zeros(len(ix), dtype=np.int64)
    for bit in range(16):
        key |= ((ix >> bit) & 1) << (2 * bit)
        key |= ((iy >> bit) & 1) << (2 * bit + 1)
    return key


def _point_blocks(p, cell, ratio, z0, max_points):
    """Group points into blocks of one plan cell and one depth band (vectorised).

    Points whose plan position falls in the same ``cell`` × ``cell`` square and
    whose depth falls in the same band [z0·ratio^k, z0·ratio^(k+1)) (all depths
    below z0 in one band) form a block, cut into runs of at most ``max_points``.
    Blocks are ordered by band, then along a Z-order curve of their cells, so
    that runs of consecutive blocks are compact. Returns the permutation that
    makes blocks contiguous, the first position and size of each block, and
    each block's bounding box (lo, hi).
    """
    ix = np.floor(p[:, 0] / cell)
    iy = np.floor(p[:, 1] / cell)
    ix = (ix - ix.min()).astype(np.int64)
    iy = (iy - iy.min()).astype(np.int64)
    # beyond 2^16 cells a side the Z-order key only loses compactness, not correctness
    key = _morton(ix & 0xFFFF, iy & 0xFFFF)
    band = np.floor(np.log(np.maximum(p[:, 2], z0) / z0) / math.log(ratio))
    if ix.max(initial=0) < 1 << 16 and iy.max(initial=0) < 1 << 16:
        # the key then tells cells apart: band and key in one integer, one sort
        # key fewer for the same order (bands are 0…~60: log2 of depth / z0)
        order = np.lexsort((p[:, 2], (band.astype(np.int64) << 32) | key))
    else:
        order = np.lexsort((p[:, 2], iy, ix, key, band))
    ix, iy, band = ix[order], iy[order], band[order]
    n = len(p)
    new = np.ones(n, dtype=bool)
    new[1:] = (ix[1:] != ix[:-1]) | (iy[1:] != iy[:-1]) | (band[1:] != band[:-1])
    group = np.flatnonzero(new)
    pos = np.arange(n) - np.repeat(group, np.diff(np.append(group, n)))
    new |= pos % max_points == 0
    starts = np.flatnonzero(new)
    counts = np.diff(np.append(starts, n))
    ps = p[order]
    lo = np.minimum.reduceat(ps, starts, axis=0)
    hi = np.maximum.reduceat(ps, starts, axis=0)
    return order, starts, counts, lo, hi


class _Groups:
    """Implicit binary tree over consecutive blocks (internal).

    Node (L, i) holds blocks [i·2^L, (i+1)·2^L) and so a contiguous range of
    points; its children are (L−1, 2i) and (L−1, 2i+1). Nodes are numbered
    level by level: id = off[L] + i.
    """

    def __init__(self, starts, counts, lo, hi, levels):
        nb = len(starts)
        ends = starts + counts
        glo, ghi, gst, gct, glev, gidx, self.off, self.size = [], [], [], [], [], [], [], []
        off = 0
        for lev in range(levels + 1):
            first = np.arange(0, nb, 1 << lev)
            last = np.minimum(first + (1 << lev), nb) - 1
            glo.append(np.minimum.reduceat(lo, first, axis=0))
            ghi.append(np.maximum.reduceat(hi, first, axis=0))
            gst.append(starts[first])
            gct.append(ends[last] - starts[first])
            glev.append(np.full(len(first), lev))
            gidx.append(np.arange(len(first)))
            self.off.append(off)
            self.size.append(len(first))
            off += len(first)
            if len(first) == 1:
                break
        self.top = len(self.off) - 1
        self.lo, self.hi = np.concatenate(glo), np.concatenate(ghi)
        self.start, self.count = np.concatenate(gst), np.concatenate(gct)
        self.level, self.index = np.concatenate(glev), np.concatenate(gidx)
        self.extent = np.sqrt(((self.hi[:, :2] - self.lo[:, :2]) ** 2).sum(axis=1))
        self.off = np.array(self.off)
        self.size = np.array(self.size)

    def roots(self):
        return self.off[self.top] + np.arange(self.size[self.top])


def _pair_chunks(pcount, limit):
    """Split pairs into runs of about ``limit`` point elements."""
    if len(pcount) == 0:
        return []
    cum = np.cumsum(pcount)
    cuts = np.searchsorted(cum, np.arange(limit, cum[-1], limit), side="left") + 1
    cuts = np.unique(np.concatenate([[0], cuts, [len(pcount)]]))
    return [slice(a, b) for a, b in zip(cuts[:-1], cuts[1:]) if b > a]


def _expand(pstart, pcount):
    """Point positions and pair index of every (pair, point of its range) element."""
    total = int(pcount.sum())
    rep = np.repeat(np.arange(len(pstart)), pcount)
    first = np.cumsum(pcount) - pcount
    return pstart[rep] + np.arange(total) - first[rep], rep


def _accumulate(out_s, out_t, pidx, a, b):
    """Add element values to the points ``pidx`` of the result arrays."""
    p0 = int(pidx.min())
    m = int(pidx.max()) - p0 + 1
    out_s[p0 : p0 + m] += np.bincount(pidx - p0, weights=a, minlength=m)
    out_t[p0 : p0 + m] += np.bincount(pidx - p0, weights=b, minlength=m)


#: plan cell [m], depth-band ratio and shallowest band edge [m] of the point
#: blocks, their largest size, and the levels of block groups (2^levels blocks
#: at most in a group). A (group, cluster) pair that is rejected splits the
#: cluster when its plan extent is at least _SPLIT_RATIO times the group's, else
#: the group. Measured on the benchmark plan (a central window of 30,000
#: points, with the earlier numpy traversal): ratios 0.5, 1, 2, 4 gave 687,
#: 513, 476, 488 multipole clusters per point and 1 the shortest time (fewer
#: pairs to bound).
_CELL = 0.5
_BAND_RATIO = 2.0
_BAND_Z0 = 1.0
_BLOCK_MAX = 512
_GROUP_LEVELS = 7
_SPLIT_RATIO = 1.0
#: worker threads over chunks of root groups (the compiled traversal releases
#: the GIL)
_THREADS = 2
#: first size of the compiled traversal's pair stack and list of exact
#: circle / polygon pairs (both double when full; the stack holds about
#: twice the depth of the two trees)
_CAPACITY = 256
#: a block accepts a node when its bound e ≤ ε·2^−k, for the first k of this list
#: that keeps the block's Σ e ≤ ε; None is the fallback e ≤ ε·F/F_total, which
#: always does (see the proof). On the benchmark plan 2^−6, 2^−6.5, 2^−7 passed
#: in 42 %, 76 %, 99 % of the blocks, with 5 % more clusters per step; starting
#: at 2^−7 instead of 2^−6.5 redoes few blocks (a window of 120,000 points of
#: the benchmark, with the earlier numpy traversal: 2.64 M instead of 3.28 M
#: traversal pairs, 4.6–5.0 s instead of 5.3–5.9 s, the same 324 clusters per
#: point).
_THRESHOLDS = (7.0, 8.0, None)
#: (point, load) elements handed to ``exact_pairs`` at once
_EXACT_CHUNK = 1 << 14


#: when set to a dict, the treecode adds its counts to it (points, multipole
#: cluster × point and exact load × point evaluations, traversal pairs); for
#: benchmarks
_STATS: dict | None = None
_STATS_LOCK = threading.Lock()


def treecode(geo: LoadGeometry, active, p, eps, exact_pairs, stats=None, pressures=None):
    """(σz, T) at points p (N, 3) from the loads ``active`` of ``geo``, each
    within ε [kPa] of the exact sum (see sitesettle.stress.stress_sums).

    With ``pressures`` (K, n), K load states on the same geometry are summed in
    one traversal: the results are (K, N) and ``eps`` holds each state's ε
    (a pair is accepted when its bound fits every state's threshold, so each
    state's sum is within its own ε). ``exact_pairs(j, x, y, z)`` returns the
    exact (σz, T) of load j[k] at point k in every state, (K, m) each, for the
    circles and polygons that the compiled traversal leaves to it (for one
    state, (m,) arrays will do).
    """
    if stats is None:
        stats = _STATS
    single = pressures is None
    tree = Tree(geo, active, pressures)
    ns = len(tree.pressures)
    eps = np.broadcast_to(np.asarray(eps, dtype=float), (ns,)).copy()
    out_s, out_t = np.zeros((ns, len(p))), np.zeros((ns, len(p)))
    todo = np.arange(len(p))
    root_f = tree.st[:, 0, ff.ST_F]
    for k in _THRESHOLDS:
        if k is None:
            tau = np.divide(eps, root_f, out=np.zeros(ns), where=root_f > 0)
            rule = (1, np.zeros(ns), tau)
        else:
            rule = (0, eps * 2.0**-k, np.zeros(ns))
        a, b, bad = _treecode_pass(tree, p[todo], eps, rule, k is None, exact_pairs, stats)
        out_s[:, todo], out_t[:, todo] = a, b
        todo = todo[bad]
        if len(todo) == 0:
            break
    if single:
        return out_s[0], out_t[0]
    return out_s, out_t


def _treecode_pass(tree, p, eps, rule, final, exact_pairs, stats):
    """One pass of the treecode; returns (σz, T) (K, N) and the points whose bound failed."""
    order, starts, counts, blo, bhi = _point_blocks(p, _CELL, _BAND_RATIO, _BAND_Z0, _BLOCK_MAX)
    groups = _Groups(starts, counts, blo, bhi, _GROUP_LEVELS)
    ps = p[order]
    px, py, pz = (np.ascontiguousarray(ps[:, i]) for i in range(3))
    nb = len(starts)
    ns = len(tree.pressures)
    rs, rt = np.zeros((ns, len(p))), np.zeros((ns, len(p)))
    esum = np.zeros((ns, nb))
    nfar = np.zeros(nb, dtype=np.int64)
    nexact = np.zeros(nb, dtype=np.int64)
    gtab = (
        groups.lo,
        groups.hi,
        groups.start.astype(np.int64),
        groups.count.astype(np.int64),
        groups.level.astype(np.int64),
        groups.index.astype(np.int64),
        groups.extent,
        groups.off.astype(np.int64),
        groups.size.astype(np.int64),
    )
    roots = groups.roots().astype(np.int64)
    # roots are handed out in chunks of consecutive groups, whose point ranges
    # are disjoint, so the threads write disjoint parts of the result arrays
    nchunk = min(len(roots), 8 * _THREADS)
    chunks = [c for c in np.array_split(roots, nchunk) if len(c)]
    mode, lam0, tau0 = rule

    def run(chunk):
        return ff.traverse(
            chunk,
            *gtab,
            *tree.tables,
            *tree.links,
            tree.rect,
            tree.pressures,
            mode,
            lam0,
            tau0,
            _SPLIT_RATIO,
            px,
            py,
            pz,
            rs,
            rt,
            esum,
            nfar,
            nexact,
            _CAPACITY,
        )

    if _THREADS > 1 and len(chunks) > 1:
        with ThreadPoolExecutor(max_workers=_THREADS) as pool:
            done = list(pool.map(run, chunks))
    else:
        done = [run(c) for c in chunks]
    ob = np.concatenate([d[0] for d in done])
    ol = np.concatenate([d[1] for d in done])
    bad_block = np.zeros(nb, dtype=bool) if final else (esum > eps[:, None]).any(axis=0)
    if stats is not None:
        ok = ~bad_block
        add = {
            "points": int(counts[ok].sum()),
            "far": int((nfar * counts)[ok].sum()),
            "exact": int((nexact * counts)[ok].sum()),
            "pairs": int(sum(d[2] for d in done)),
        }
        with _STATS_LOCK:
            for key, val in add.items():
                stats[key] = stats.get(key, 0) + val
    # exact circles and polygons, left by the compiled traversal (blocks whose
    # bound failed are redone by the caller: skip them)
    keep = ~bad_block[ob]
    ob, ol = ob[keep], ol[keep]
    for sl in _pair_chunks(counts[ob], _EXACT_CHUNK):
        pidx, rep = _expand(starts[ob[sl]], counts[ob[sl]])
        a, b = exact_pairs(ol[sl][rep], px[pidx], py[pidx], pz[pidx])
        a, b = np.atleast_2d(a), np.atleast_2d(b)
        for s in range(ns):
            _accumulate(rs[s], rt[s], pidx, a[s], b[s])
    sz, tt = np.empty((ns, len(p))), np.empty((ns, len(p)))
    sz[:, order], tt[:, order] = rs, rt
    bad = np.zeros(len(p), dtype=bool)
    bad[order] = np.repeat(bad_block, counts)
    return sz, tt, bad
