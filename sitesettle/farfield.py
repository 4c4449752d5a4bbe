"""Compiled inner loops of the stress treecode (internal to :mod:`sitesettle.treecode`).

The treecode of :func:`sitesettle.stress.stress_sums` spends its time in three
small computations repeated tens of millions of times on a large plan: the
rigorous truncation bound of a (box of points, cluster of loads) pair, the
multipole value (monopole, dipole, quadrupole and, for clusters of rectangles
and circles, octupole) of a cluster at a run of points, and the exact
corner-superposition value of a rectangle at a point. This module holds them
as functions compiled with numba (the multipole as a loop over contiguous
slices of points that the compiler turns into SIMD instructions, with results
identical to the scalar loop: no fast-math, no reassociation), and the dual traversal of
the load tree and the point groups that calls them, so that no pair list is
ever stored and the two threads of the driver run truly in parallel (the
compiled functions release the GIL).

The mathematics, the proof of the bound and the acceptance rules are those of
:func:`sitesettle.stress.stress_sums` (see its Notes); the tree and its tables
are built by ``treecode.Tree``. The functions are checked against independent
references (the rectangle-corner table, a finite-difference Taylor expansion
of the kernels) and the treecode against the exact numpy sums, in
tests/test_farfield.py and tests/test_stress_superposition.py.

Table layouts (columns of the float table ``nt`` of the load tree, one row per
node) are the ``NT_*`` constants below; the bound's six terms per node are, in
order, σz with j = 0…3 (powers W^(3−j)) and T with j = 0, 1 (powers W^(1−j)).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

#: Boussinesq point-load coefficient 3/(2π) and the solid-angle coefficient 1/π
K_SIGMA = 3.0 / (2.0 * math.pi)
K_THETA = 1.0 / math.pi
_TWO_PI = 2.0 * math.pi
_TINY = 1e-300

# columns of the node table ``nt``
NT_C = 0  # 0–2 centre C (x, y, depth)
NT_Q0 = 3  # monopole Σ q A
NT_DIP = 4  # 4–6 dipole
NT_QUAD = 7  # 7–12 quadrupole xx, xy, yy, xw, yw, ww
NT_LO = 13  # 13–15 bounding box low corner
NT_HI = 16  # 16–18 bounding box high corner
NT_DMIN = 19
NT_DMAX = 20
NT_RHO = 21  # radius about C holding every source
NT_H3 = 22  # coefficient of M3 in the harmonic bound of T
NT_EXTENT = 23  # plan diagonal of the bounding box
NT_F = 24  # Σ |q| A
NT_M = 25  # 25–29 radial moments M0…M4
NT_HAS_OCT = 30  # 1 where the expansion includes the octupole (third order)
NT_OCT = 31  # 31–40 octupole xxx, xxy, xyy, yyy, xxw, xyw, yyw, xww, yww, www
NT_COLS = 41

# columns of the per-state node table ``st`` (K, n, ST_COLS): what the bound of one
# load state needs first (read for every pair, so together at the row's start),
# then its multipole moments about the shared centre C (read when accepted)
ST_AMP = 0  # 0–5 the six amplitudes of the first bound (TERM_A order)
ST_F = 6  # Σ |q| A
ST_M3 = 7  # radial moments M3, M4 (the harmonic bound of T)
ST_M4 = 8
ST_Q0 = 9  # monopole Σ q A
ST_DIP = 10  # 10–12 dipole
ST_QUAD = 13  # 13–18 quadrupole xx, xy, yy, xw, yw, ww
ST_OCT = 19  # 19–28 octupole, in the order of NT_OCT
ST_COLS = 29

#: power of W in each of the six bound terms, and its kernel (0 σz, 1 T)
TERM_A = np.array([3, 2, 1, 0, 1, 0], dtype=np.int64)
TERM_KERNEL = np.array([0, 0, 0, 0, 1, 1], dtype=np.int64)

#: the harmonic bound of T is computed only for pairs whose first bound e₁ lies
#: in (λ·LAZY_LO, λ·LAZY_HI] (see treecode.Tree.pair_bounds), where it may change
#: the acceptance or a block's sum
LAZY_LO = 0.25
LAZY_HI = 5.0

#: points per chunk of the multipole's scratch (5 × 256 doubles: 10 kB, in L1)
MULTIPOLE_CHUNK = 256

_JIT = {"nogil": True, "fastmath": False, "error_model": "numpy"}


def _compiled(fn):
    """``fn`` compiled by numba, its machine code cached on disk where numba
    finds a writable place (beside the package, or the user's cache folder, or
    NUMBA_CACHE_DIR); where it finds none, compiled afresh in each process."""
    try:
        return njit(cache=True, **_JIT)(fn)
    except RuntimeError:  # numba: "cannot cache function …: no locator available"
        return njit(cache=False, **_JIT)(fn)


@_compiled
def _ipow(x, n):
    out = 1.0
    for _ in range(n):
        out *= x
    return out


def _stationary_tables(amax=3, bmax=9):
    """For W^a (h² + W²)^(−b/2) on one plane (Δ = 0): its maximum over W > 0 is at
    W* = h·√(a/(b − a)), where it equals h^(a−b) (a/(b − a))^(a/2) ((b − a)/b)^(b/2).
    Tables of √(a/(b − a)) and of that constant, indexed [a, b]."""
    ratio = np.zeros((amax + 1, bmax + 1))
    const = np.zeros((amax + 1, bmax + 1))
    for a in range(1, amax + 1):
        for b in range(a + 1, bmax + 1):
            ratio[a, b] = math.sqrt(a / (b - a))
            const[a, b] = (a / (b - a)) ** (a / 2) * ((b - a) / b) ** (b / 2)
    return ratio, const


_W_RATIO, _W_CONST = _stationary_tables()


@_compiled
def _sup_terms(amp, b, hh, vmin, vmax, dd):
    """Σ over six terms amp · sup (v + Δ)^a (h² + v²)^(−b/2), v in [vmin, vmax],
    for σz (terms 0–3) and T (terms 4, 5).

    Each term is unimodal in v with its maximum at the positive root of
    (b − a)v² + bΔv − ah² = 0, clipped to the range; on one plane (Δ = 0) the
    root is h·√(a/(b − a)) and the value there has a closed form
    (:func:`_stationary_tables`), so one square root serves every term."""
    es = 0.0
    et = 0.0
    flat = dd == 0.0
    h = math.sqrt(hh) if flat else 0.0
    ir_lo = 1.0 / math.sqrt(hh + vmin * vmin)
    ir_hi = -1.0
    for k in range(6):
        ak = amp[k]
        if ak == 0.0:
            continue
        a = TERM_A[k]
        bk = b[k]
        if a == 0:
            val = ak * _ipow(ir_lo, bk)
        else:
            if flat:
                vs = _W_RATIO[a, bk] * h
            else:
                bd = bk * dd
                vs = (-bd + math.sqrt(bd * bd + 4.0 * (bk - a) * a * hh)) / (2.0 * (bk - a))
            if vs <= vmin:
                val = ak * _ipow(ir_lo, bk) * _ipow(vmin + dd, a)
            elif vs >= vmax:
                if ir_hi < 0.0:
                    ir_hi = 1.0 / math.sqrt(hh + vmax * vmax)
                val = ak * _ipow(ir_hi, bk) * _ipow(vmax + dd, a)
            elif flat:
                val = ak * _W_CONST[a, bk] * _ipow(1.0 / h, bk - a)
            else:
                val = ak * _ipow(1.0 / math.sqrt(hh + vs * vs), bk) * _ipow(vs + dd, a)
        if TERM_KERNEL[k] == 0:
            es += val
        else:
            et += val
    return es, et


@_compiled
def harmonic_bound(nt, m3, m4, node, lo0, lo1, lo2, hi0, hi1, hi2):
    """Harmonic bound of T's far-field error of ``node`` over the box, for its
    radial moments M3 = ``m3``, M4 = ``m4`` (of one load state), and its part
    from the Legendre terms of order ≥ 4 (inf, inf where ρ ≥ r_c)."""
    c0 = nt[node, NT_C]
    c1 = nt[node, NT_C + 1]
    c2 = nt[node, NT_C + 2]
    cx = max(max(lo0 - c0, c0 - hi0), 0.0)
    cy = max(max(lo1 - c1, c1 - hi1), 0.0)
    cz = max(max(lo2 - c2, c2 - hi2), 0.0)
    rc = math.sqrt(cx * cx + cy * cy + cz * cz)
    rho = nt[node, NT_RHO]
    if not rc > rho:
        return math.inf, math.inf
    x = rho / rc
    ir = 1.0 / rc
    ir2 = ir * ir
    ir6 = ir2 * ir2 * ir2
    sx = 5.0 / (1.0 - x) + x / ((1.0 - x) * (1.0 - x))
    tail = K_THETA * m4 * ir6 * sx
    return K_THETA * nt[node, NT_H3] * m3 * (ir6 * rc) + tail, tail


@_compiled
def pair_bound(nt, st, s, b1, node, lo0, lo1, lo2, hi0, hi1, hi2, lam):
    """Bound e of the far-field error of ``node`` in load state ``s`` (its moments
    ``st[s]``) at every point of the box [lo, hi], and whether the node
    contributes nothing there (all points above its planes). ``lam`` < 0 computes
    T's harmonic bound always; otherwise only where the first bound lies in
    (λ·LAZY_LO, λ·LAZY_HI]. e = inf where some point is not below the node's
    deepest plane."""
    dmin = nt[node, NT_DMIN]
    dmax = nt[node, NT_DMAX]
    if hi2 <= dmin:
        return 0.0, True
    vmin = lo2 - dmax
    if not vmin > 0.0:
        return math.inf, False
    vmax = hi2 - dmax
    gx = max(max(lo0 - nt[node, NT_HI], nt[node, NT_LO] - hi0), 0.0)
    gy = max(max(lo1 - nt[node, NT_HI + 1], nt[node, NT_LO + 1] - hi1), 0.0)
    hh = gx * gx + gy * gy
    dd = dmax - dmin
    es, et = _sup_terms(st[s, node, ST_AMP : ST_AMP + 6], b1[node], hh, vmin, vmax, dd)
    e1 = max(es, et)
    if lam < 0.0 or (e1 > LAZY_LO * lam and e1 <= LAZY_HI * lam):
        eh, _ = harmonic_bound(
            nt, st[s, node, ST_M3], st[s, node, ST_M4], node, lo0, lo1, lo2, hi0, hi1, hi2
        )
        et = min(et, eh)
    return max(es, et), False


@njit(inline="always", **_JIT)
def _second_order(X, Y, W, W2, W3, ir2, ir3, q0, dx, dy, dw, hxx, hyy, qxy, qxw, qyw, qww, ss):
    """Orders 0–2 of the expansion at offset (X, Y, W) from C: q0·k − d·∇k + ½ Q:∇∇k
    of k = W³r⁻⁵ (σz) and t = W r⁻³ (T), grouped by powers of r⁻², without the
    kernels' constants."""
    d1 = dx * X + dy * Y
    q1 = qxw * X + qyw * Y
    q2 = hxx * (X * X) + hyy * (Y * Y) + qxy * (X * Y)
    ir5 = ir3 * ir2
    ir7 = ir5 * ir2
    ir9 = ir7 * ir2
    s5 = W * (q0 * W2 - 3.0 * dw * W + 3.0 * qww)
    s7 = W2 * (5.0 * W * (d1 + dw * W) - (2.5 * ss + 17.5 * qww) * W - 15.0 * q1)
    s9 = W3 * (35.0 * q2 + 17.5 * qww * W2 + 35.0 * W * q1)
    t3 = q0 * W - dw
    t5 = 3.0 * W * (d1 + dw * W) - (1.5 * ss + 4.5 * qww) * W - 3.0 * q1
    t7 = W * (15.0 * q2 + 7.5 * qww * W2 + 15.0 * W * q1)
    return ir5 * s5 + ir7 * s7 + ir9 * s9, ir3 * t3 + ir5 * t5 + ir7 * t7


@njit(inline="always", **_JIT)
def _third_order(X, Y, W, W2, W3, ir2, ir3, o, lx, ly, trw):
    """The third-order term −(1/6) O:∇³k at offset (X, Y, W), for σz and T without
    the kernels' constants; ``o`` the ten distinct components of O = Σ q∫(s − C)⊗3 dA
    (xxx, xxy, xyy, yyy, xxw, xyw, yyw, xww, yww, www), lx = O_xxx + O_xyy,
    ly = O_xxy + O_yyy, trw = O_xxw + O_yyw. Grouped by powers of r⁻² (derived with
    a computer algebra system; tests/test_farfield.py checks it against finite
    differences of the kernels)."""
    oxxx, oxxy, oxyy, oyyy, oxxw, oxyw, oyyw, oxww, oyww, owww = o
    ir5 = ir3 * ir2
    ir7 = ir5 * ir2
    ir9 = ir7 * ir2
    ir11 = ir9 * ir2
    c3 = X * X * (oxxx * X + 3.0 * oxxy * Y) + Y * Y * (3.0 * oxyy * X + oyyy * Y)
    cq = X * (oxxw * X + 2.0 * oxyw * Y) + oyyw * (Y * Y)
    cl = oxww * X + oyww * Y
    lin = lx * X + ly * Y
    full = W3 * owww + 3.0 * W2 * cl + 3.0 * W * cq + c3
    p9 = 70.0 * W2 * owww + 122.5 * W * cl + 17.5 * W * lin + 52.5 * cq + 17.5 * W2 * trw
    sz = (
        ir11 * (52.5 * W3 * full)
        - ir9 * (W2 * p9)
        + ir7 * (W * (22.5 * W * owww + 7.5 * W * trw + 15.0 * cl))
        - ir5 * owww
    )
    tt = (
        ir9 * (17.5 * W * full)
        - ir7 * (15.0 * W2 * owww + 22.5 * W * cl + 7.5 * W * lin + 7.5 * cq + 7.5 * W2 * trw)
        + ir5 * (1.5 * (owww + trw))
    )
    return sz, tt


@_compiled
def multipole_add(nt, st, node, px, py, pz, out_s, out_t, p0, p1, scratch):
    """Add the multipole (σz, T) of ``node`` in every load state k of ``st``
    (K, n, ST_COLS) to the points p0…p1−1 of ``out_s[k]``, ``out_t[k]``: the
    Taylor expansion of the kernels about the node's centre C to second order
    (monopole Q0, dipole d, quadrupole Q: q0·k − d·∇k + ½ Q:∇∇k,
    :func:`_second_order`) and to third order (− (1/6) O:∇³k, :func:`_third_order`)
    where the node holds an octupole (``nt``).

    The offsets from C and the powers of 1/r are formed once per point, for all
    states (in ``scratch``, (5, MULTIPOLE_CHUNK), a chunk of points at a time so
    that it stays in the first-level cache), then each state's polynomial, in a
    loop over contiguous slices that the compiler vectorises. Each point's value
    is formed by the same operations in the same order as a scalar loop, so the
    result depends neither on how points are grouped nor on the other states."""
    c0 = nt[node, 0]
    c1 = nt[node, 1]
    c2 = nt[node, 2]
    has_oct = nt[node, NT_HAS_OCT] > 0.0
    for c in range(p0, p1, MULTIPOLE_CHUNK):  # chunks whose scratch stays in L1
        ce = min(c + MULTIPOLE_CHUNK, p1)
        m = ce - c
        xs = px[c:ce]
        ys = py[c:ce]
        zs = pz[c:ce]
        for k in range(m):
            X = xs[k] - c0
            Y = ys[k] - c1
            W = zs[k] - c2
            ir2 = 1.0 / (X * X + Y * Y + W * W)
            scratch[0, k] = X
            scratch[1, k] = Y
            scratch[2, k] = W
            scratch[3, k] = ir2
            scratch[4, k] = ir2 * math.sqrt(ir2)
        for s in range(st.shape[0]):
            q0 = st[s, node, ST_Q0]
            dx = st[s, node, ST_DIP]
            dy = st[s, node, ST_DIP + 1]
            dw = st[s, node, ST_DIP + 2]
            qxx = st[s, node, ST_QUAD]
            qxy = st[s, node, ST_QUAD + 1]
            qyy = st[s, node, ST_QUAD + 2]
            qxw = st[s, node, ST_QUAD + 3]
            qyw = st[s, node, ST_QUAD + 4]
            qww = st[s, node, ST_QUAD + 5]
            hxx = 0.5 * qxx
            hyy = 0.5 * qyy
            ss = qxx + qyy
            oc = ST_OCT
            o = (
                st[s, node, oc], st[s, node, oc + 1], st[s, node, oc + 2], st[s, node, oc + 3],
                st[s, node, oc + 4], st[s, node, oc + 5], st[s, node, oc + 6],
                st[s, node, oc + 7], st[s, node, oc + 8], st[s, node, oc + 9],
            )  # fmt: skip
            lx = o[0] + o[2]
            ly = o[1] + o[3]
            trw = o[4] + o[6]
            os_ = out_s[s, c:ce]
            ot = out_t[s, c:ce]
            for k in range(m):
                X = scratch[0, k]
                Y = scratch[1, k]
                W = scratch[2, k]
                W2 = W * W
                W3 = W2 * W
                ir2 = scratch[3, k]
                ir3 = scratch[4, k]
                a2, b2 = _second_order(
                    X, Y, W, W2, W3, ir2, ir3, q0, dx, dy, dw, hxx, hyy, qxy, qxw, qyw, qww, ss
                )
                if has_oct:
                    a3, b3 = _third_order(X, Y, W, W2, W3, ir2, ir3, o, lx, ly, trw)
                    a2 += a3
                    b2 += b3
                os_[k] += K_SIGMA * a2
                ot[k] += K_THETA * b2


@_compiled
def rectangle(hl, hw, u, v, w):
    """σz/q and Ω at local offsets (u, v) from the centre of a rectangle of
    half sides ``hl`` × ``hw`` at depth w > 0 below its plane (signed Holl corner
    superposition, as stress._rect_terms)."""
    x1 = hl - u
    x0 = -hl - u
    y1 = hw - v
    y0 = -hw - v
    w2 = w * w
    sx1 = x1 * x1
    sx0 = x0 * x0
    sy1 = y1 * y1
    sy0 = y0 * y0
    ix1 = 1.0 / (sx1 + w2 + _TINY)
    ix0 = 1.0 / (sx0 + w2 + _TINY)
    iy1 = 1.0 / (sy1 + w2 + _TINY)
    iy0 = 1.0 / (sy0 + w2 + _TINY)
    # corners (x1, y1) +, (x1, y0) −, (x0, y1) −, (x0, y0) +
    r11 = math.sqrt(sx1 + sy1 + w2)
    r10 = math.sqrt(sx1 + sy0 + w2)
    r01 = math.sqrt(sx0 + sy1 + w2)
    r00 = math.sqrt(sx0 + sy0 + w2)
    i11, i10, i01, i00 = x1 * y1, x1 * y0, x0 * y1, x0 * y0
    e11, e10, e01, e00 = w * r11, w * r10, w * r01, w * r00
    kk = (
        (i11 * w) * (ix1 + iy1) / (r11 + _TINY)
        - (i10 * w) * (ix1 + iy0) / (r10 + _TINY)
        - (i01 * w) * (ix0 + iy1) / (r01 + _TINY)
        + (i00 * w) * (ix0 + iy0) / (r00 + _TINY)
    )
    om = math.atan2(i11 * e10 - e11 * i10, e11 * e10 + i11 * i10) + math.atan2(
        i00 * e01 - e00 * i01, e00 * e01 + i00 * i01
    )
    return (om + kk) / _TWO_PI, om


@_compiled
def bounds_many(nt, st, b1, nodes, lo, hi, lam):
    """pair_bound of (box k, nodes[k]) for n pairs in the first load state;
    ``lam`` (n,) or negative."""
    n = len(nodes)
    e = np.empty(n)
    zero = np.empty(n, dtype=np.bool_)
    for k in range(n):
        e[k], zero[k] = pair_bound(
            nt, st, 0, b1, nodes[k],
            lo[k, 0], lo[k, 1], lo[k, 2], hi[k, 0], hi[k, 1], hi[k, 2], lam[k],
        )  # fmt: skip
    return e, zero


@_compiled
def harmonic_many(nt, nodes, lo, hi):
    """harmonic_bound of (box k, nodes[k]) for K pairs."""
    n = len(nodes)
    eh = np.empty(n)
    tail = np.empty(n)
    for k in range(n):
        node = nodes[k]
        eh[k], tail[k] = harmonic_bound(
            nt, nt[node, NT_M + 3], nt[node, NT_M + 4], node,
            lo[k, 0], lo[k, 1], lo[k, 2], hi[k, 0], hi[k, 1], hi[k, 2],
        )  # fmt: skip
    return eh, tail


@_compiled
def multipole_many(nt, st, nodes, px, py, pz):
    """Multipole (σz, T) of nodes[k] at point k in every state, (K, n) each, for
    1-D arrays of one length (:func:`multipole_add` one point at a time, for tests
    and small sums)."""
    n = len(nodes)
    sz = np.zeros((st.shape[0], n))
    tt = np.zeros((st.shape[0], n))
    scratch = np.empty((5, MULTIPOLE_CHUNK))
    for k in range(n):
        multipole_add(nt, st, nodes[k], px, py, pz, sz, tt, k, k + 1, scratch)
    return sz, tt


@_compiled
def _grow(buf, n):
    out = np.empty(max(2 * len(buf), 2), dtype=buf.dtype)
    out[:n] = buf[:n]
    return out


@_compiled
def traverse(
    roots,
    g_lo,
    g_hi,
    g_start,
    g_count,
    g_level,
    g_index,
    g_extent,
    g_off,
    g_size,
    nt,
    st,
    b1,
    left,
    right,
    load,
    rect,
    rq,
    mode,
    lam0,
    tau0,
    split_ratio,
    px,
    py,
    pz,
    out_s,
    out_t,
    esum,
    nfar,
    nexact,
    capacity,
):
    """Dual traversal of the load tree and the point groups from each root group,
    for K load states on one geometry at once.

    A (group, node) pair is accepted for the far field of all the group's
    points when its bound in every state k is e_k ≤ λ_k (``mode`` 0: λ_k =
    ``lam0[k]``; 1: λ_k = τ0[k]·F_k(node)); then each state's multipole (moments
    ``st[k]``) is added at the group's points (``out_s[k]``, ``out_t[k]``) and
    e_k to the bound sum ``esum[k]`` of each of the group's blocks. A (block,
    single load) pair that is not accepted is summed exactly here for a
    rectangle (``rect`` holds per load x, y, cos, sin, half length, half width,
    pressure, depth, and 1 for a rectangle; ``rq[k]`` the pressures of state k),
    the kernel once and its value times each state's pressure, or returned for
    the caller otherwise. Else the larger of the two (plan extent, the node when
    ≥ ``split_ratio`` × the group's) is split. Pairs whose group lies wholly
    above the node's planes are dropped.

    The pair stack and the list of pairs left to the caller start with
    ``capacity`` entries and double when full. Returns those (block, load)
    pairs and the number of traversal pairs accepted or summed exactly.
    """
    ns = st.shape[0]
    o_blk = np.empty(capacity, dtype=np.int64)
    o_load = np.empty(capacity, dtype=np.int64)
    n_other = 0
    s_g = np.empty(capacity, dtype=np.int64)
    s_n = np.empty(capacity, dtype=np.int64)
    e = np.empty(ns)
    scratch = np.empty((5, MULTIPOLE_CHUNK))
    pairs = 0
    nb = g_size[0]
    for r in range(len(roots)):
        s_g[0] = roots[r]
        s_n[0] = 0
        top = 1
        while top > 0:
            top -= 1
            g = s_g[top]
            node = s_n[top]
            # accepted when every state's bound fits its threshold (the first
            # state that does not ends the test: rejected pairs cost one bound)
            ok = True
            zero = False
            for s in range(ns):
                lam = lam0[s] if mode == 0 else tau0[s] * st[s, node, ST_F]
                e[s], zero = pair_bound(
                    nt, st, s, b1, node,
                    g_lo[g, 0], g_lo[g, 1], g_lo[g, 2], g_hi[g, 0], g_hi[g, 1], g_hi[g, 2], lam,
                )  # fmt: skip
                if zero or not e[s] <= lam:
                    ok = False
                    break
            if zero:
                continue
            lev = g_level[g]
            if ok:
                pairs += 1
                p0 = g_start[g]
                p1 = p0 + g_count[g]
                multipole_add(nt, st, node, px, py, pz, out_s, out_t, p0, p1, scratch)
                b0 = g_index[g] << lev
                b1_ = min(b0 + (1 << lev), nb)
                for s in range(ns):
                    es = e[s]  # a local: the loop then need not reload it after each store
                    row = esum[s]
                    for blk in range(b0, b1_):
                        row[blk] += es
                for blk in range(b0, b1_):
                    nfar[blk] += 1
                continue
            j = load[node]
            if lev == 0 and j >= 0:
                pairs += 1
                nexact[g] += 1
                if rect[j, 8] > 0.0:
                    x, y, c, sn = rect[j, 0], rect[j, 1], rect[j, 2], rect[j, 3]
                    hl, hw, dep = rect[j, 4], rect[j, 5], rect[j, 7]
                    p0 = g_start[g]
                    for k in range(p0, p0 + g_count[g]):
                        w = pz[k] - dep
                        if w > 0.0:
                            dx = px[k] - x
                            dy = py[k] - y
                            a, om = rectangle(hl, hw, dx * c + dy * sn, dy * c - dx * sn, w)
                            for s in range(ns):
                                q = rq[s, j]
                                out_s[s, k] += q * a
                                out_t[s, k] += q * om * K_THETA
                else:
                    if n_other == len(o_blk):
                        o_blk = _grow(o_blk, n_other)
                        o_load = _grow(o_load, n_other)
                    o_blk[n_other] = g
                    o_load[n_other] = j
                    n_other += 1
                continue
            if top + 2 > len(s_g):
                s_g = _grow(s_g, top)
                s_n = _grow(s_n, top)
            if j < 0 and (lev == 0 or nt[node, NT_EXTENT] >= split_ratio * g_extent[g]):
                s_g[top] = g
                s_n[top] = right[node]
                s_g[top + 1] = g
                s_n[top + 1] = left[node]
                top += 2
            else:
                lv = lev - 1
                c0 = 2 * g_index[g]
                base = g_off[lv]
                s_g[top] = base + c0
                s_n[top] = node
                top += 1
                if c0 + 1 < g_size[lv]:
                    s_g[top] = base + c0 + 1
                    s_n[top] = node
                    top += 1
    return o_blk[:n_other], o_load[:n_other], pairs
