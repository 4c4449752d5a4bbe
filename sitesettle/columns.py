"""Evaluation columns: where settlement is computed, their ground and their sublayers.

Every place whose settlement is wanted — a footing's characteristic point or a
station along a strip, a map grid point, a query point — is a *column*: a plan
position, the depth where the integration starts, and the footing it belongs to
(``owner``, −1 for none). This module builds the columns, the ground under them
(one vectorised :class:`GroundColumns`), their sublayers, and the depth rule
that decides how deep each column is integrated (docs/methods.md §3):

* down to the top of the first rigid stratum, where there is one; else
* down to a depth below which the remaining settlement is provably small:
  :func:`tail_bound` bounds it from above, and a column is deepened until the
  bound is below ``truncation_tolerance`` (0.5 %) of the column's settlement.

Nothing here computes a stress or a strain of its own; the bound uses only the
Boussinesq point-load envelope and Hooke's law / the e–log σ' line.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from sitesettle.methods import elastic
from sitesettle.options import Behaviour
from sitesettle.site import STRIP_RATIO, WATER_UNIT_WEIGHT, Footing

#: a rectangle longer than this many widths is a strip: rigid (if rigid) across
#: its width, flexible along its length, evaluated at stations along its length
#: (a tool choice: a concrete pad stays stiff over a few widths, a wall footing does
#: not; docs/methods.md §4)
LONG_FOOTING_RATIO = STRIP_RATIO
#: stations along a strip: about one per width, at least 3 and at most this many
MAX_STATIONS = 41
#: the thinnest sublayer [m] and, relative to the sublayer scale, the thinnest
#: sliver kept next to a stratum boundary
MIN_SUBLAYER = 1e-3
SLIVER_FRACTION = 0.25
#: sublayers grow in proportion to the depth below the start: ``fraction/2`` of
#: it down to ``DEEP_START`` widths, then ``DEEP_GROWTH`` of it (the strain there
#: is smooth and decays as 1/z² or faster; midpoint error under 1.3 % of a deep
#: sublayer's own small share)
DEEP_START = 10.0
DEEP_GROWTH = 0.2
#: no sublayer is thicker than this fraction of the depth of its top below ground (so
#: that σ'v0 changes by at most about 15 % across it, whatever the footing's width)
DEPTH_FRACTION = 0.15
#: ... nor, near the surface, thicker than this [m]
SHALLOW_SUBLAYER = 0.05
#: the first pass integrates at least this far below the start, in widths and in
#: metres; a column still short of the bound is deepened by ``DEEPEN_FACTOR``
FIRST_REACH_WIDTHS = 12.0
FIRST_REACH_METRES = 30.0
DEEPEN_FACTOR = 4.0
#: the deepest the integration ever goes below ground [m]; reached only in a deep
#: uniform half-space under a very large plan, and then warned about
MAX_INTEGRATION_DEPTH = 200_000.0
#: a remaining settlement below this is small whatever the column settles [m]
ABSOLUTE_TAIL = 1e-5


# --------------------------------------------------------------------------- points


@dataclass(frozen=True)
class Points:
    """Evaluation columns before their ground is known (arrays of length n).

    ``kind`` is "footing", "map" or "query"; ``owner`` the footing index (−1 for
    none); ``station`` the station of a footing point (points of one station are
    averaged: the two points across a rigid strip, the four characteristic points
    of a rigid pad); ``base`` the depth where the integration starts [m];
    ``scale`` the width that sets the sublayer thickness [m].
    """

    xy: np.ndarray
    base: np.ndarray
    scale: np.ndarray
    owner: np.ndarray
    station: np.ndarray
    kind: np.ndarray

    def __len__(self) -> int:
        return len(self.base)

    @staticmethod
    def concat(*parts: Points) -> Points:
        """One set of points from several (order kept)."""
        parts = [p for p in parts if len(p)]
        if not parts:
            return Points(*(np.zeros(0) for _ in range(6)))
        return Points(
            **{
                k: np.concatenate([getattr(p, k) for p in parts])
                for k in ("xy", "base", "scale", "owner", "station", "kind")
            }
        )


def is_strip(footing: Footing) -> bool:
    """True for a rectangle longer than :data:`LONG_FOOTING_RATIO` widths."""
    return footing.shape == "rectangle" and footing.length > LONG_FOOTING_RATIO * footing.width


def footing_point_layout(footing: Footing) -> tuple[np.ndarray, np.ndarray]:
    """Plan points where a footing's settlement is evaluated, and their stations.

    Returns
    -------
    xy : numpy.ndarray
        (n, 2) plan points [m].
    station : numpy.ndarray
        (n,) station of each point; a station's settlement is the mean of its points.

    Notes
    -----
    * Flexible pads, circles and polygons: the centroid (one station).
    * Rigid rectangles and polygons: the four characteristic points (±0.37 L,
      ±0.37 B from the centre along the footing's axes; Graßhoff 1955,
      :data:`sitesettle.methods.elastic.CHARACTERISTIC_POINT_OFFSET`), one station;
      rigid circles: four points at 0.845 a. A point outside a non-convex polygon
      is moved toward the centroid until it lies inside.
    * Strips (:func:`is_strip`): stations at the centres of about L/B equal
      lengths along the long axis (3 to :data:`MAX_STATIONS`); at each, the
      centre-line point (flexible) or the two points at ±0.37 B across (rigid
      across the width).
    """
    centre = np.array([footing.x, footing.y])
    ax_l, ax_b = footing.axes()
    if is_strip(footing):
        n = int(np.clip(math.ceil(footing.length / footing.width), 3, MAX_STATIONS))
        u = -0.5 * footing.length + (np.arange(n) + 0.5) * footing.length / n
        line = centre + u[:, None] * ax_l
        if not footing.rigid:
            return line, np.arange(n)
        dv = elastic.CHARACTERISTIC_POINT_OFFSET * footing.width
        pts = np.concatenate([line + dv * ax_b, line - dv * ax_b])
        return pts, np.concatenate([np.arange(n), np.arange(n)])
    if not footing.rigid:
        return centre[None, :], np.zeros(1, dtype=int)
    if footing.shape == "circle":
        r = elastic.CIRCLE_CHARACTERISTIC_RADIUS * footing.radius / math.sqrt(2.0)
        du, dv = r, r
    else:
        du = elastic.CHARACTERISTIC_POINT_OFFSET * footing.length
        dv = elastic.CHARACTERISTIC_POINT_OFFSET * footing.width
    signs = np.array([[1, 1], [-1, 1], [-1, -1], [1, -1]], dtype=float)
    pts = centre + signs[:, :1] * du * ax_l + signs[:, 1:] * dv * ax_b
    if footing.shape == "polygon":
        for k in range(len(pts)):
            for _ in range(20):
                if inside(footing.outline, pts[k]):
                    break
                pts[k] = centre + 0.8 * (pts[k] - centre)
    return pts, np.zeros(len(pts), dtype=int)


def inside(outline: np.ndarray, p: np.ndarray) -> bool:
    """Even-odd ray test: is plan point p inside the polygon outline?"""
    x, y = outline[:, 0], outline[:, 1]
    x2, y2 = np.roll(x, -1), np.roll(y, -1)
    crosses = ((y > p[1]) != (y2 > p[1])) & (
        p[0] < (x2 - x) * (p[1] - y) / np.where(y2 == y, np.inf, y2 - y) + x
    )
    return bool(np.count_nonzero(crosses) % 2)


def footing_points(footings) -> Points:
    """The evaluation columns of every footing, footing by footing (owner order)."""
    xy, base, scale, owner, station = [], [], [], [], []
    for i, f in enumerate(footings):
        p, s = footing_point_layout(f)
        xy.append(p)
        station.append(s)
        n = len(p)
        base.append(np.full(n, f.depth))
        scale.append(np.full(n, f.width))
        owner.append(np.full(n, i))
    if not xy:
        return Points.concat()
    return Points(
        xy=np.concatenate(xy),
        base=np.concatenate(base),
        scale=np.concatenate(scale),
        owner=np.concatenate(owner).astype(int),
        station=np.concatenate(station).astype(int),
        kind=np.full(sum(len(p) for p in xy), "footing", dtype=object),
    )


def free_points(xy, depth, scale: float, kind: str) -> Points:
    """Columns that belong to no footing (map grid or query points) at ``depth`` [m]."""
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    n = len(xy)
    return Points(
        xy=xy,
        base=np.broadcast_to(np.asarray(depth, dtype=float), (n,)).copy(),
        scale=np.full(n, float(scale)),
        owner=np.full(n, -1, dtype=int),
        station=np.zeros(n, dtype=int),
        kind=np.full(n, kind, dtype=object),
    )


# --------------------------------------------------------------------------- ground


@dataclass
class GroundColumns:
    """The ground under every column, as arrays (n columns, k strata).

    ``variant`` indexes :attr:`variants`, the distinct tuples of strata (measured
    interval values make strata differ between columns); parameters are read
    through :meth:`parameter` as (n, k) tables.
    """

    x: np.ndarray
    y: np.ndarray
    tops: np.ndarray
    bottoms: np.ndarray
    water: np.ndarray
    outside_hull: np.ndarray
    variant: np.ndarray
    variants: list

    @staticmethod
    def build(ground, xy: np.ndarray) -> GroundColumns:
        ns = len(ground.strata)
        if len(xy):
            g = ground.column_arrays(xy[:, 0], xy[:, 1])
            tops, bottoms, water, hull = g.tops, g.bottoms, g.water, g.outside_hull
            variant, variants = g.variant, g.variants
        else:
            tops = bottoms = np.zeros((0, ns))
            water, hull = np.zeros(0), np.zeros(0, dtype=bool)
            variant, variants = np.zeros(0, dtype=int), []
        return GroundColumns(
            x=xy[:, 0].astype(float),
            y=xy[:, 1].astype(float),
            tops=tops,
            bottoms=bottoms,
            water=water,
            outside_hull=hull,
            variant=variant,
            variants=variants,
        )

    def parameter(self, get, dtype=float) -> np.ndarray:
        """(n_columns, n_strata) table of ``get(stratum)``."""
        table = np.array([[get(s) for s in strata] for strata in self.variants], dtype=dtype)
        if len(self.variant) == 0:
            return np.zeros((0, table.shape[1] if table.ndim == 2 else 0), dtype=dtype)
        return table[self.variant]

    def stratum_at(self, col: np.ndarray, z: np.ndarray) -> np.ndarray:
        """Index of the stratum at depth z in column col (a boundary belongs below)."""
        b = self.bottoms[col]
        return np.minimum(np.sum(z[:, None] >= b, axis=1), self.tops.shape[1] - 1)

    def total_stress(self, col: np.ndarray, z: np.ndarray) -> np.ndarray:
        """In-situ total vertical stress [kPa] at depth z of column col (vectorised
        :meth:`sitesettle.ground.Column.total_stress`)."""
        if len(col) == 0:
            return np.zeros(0)
        tops, bots, zw = self.tops[col], self.bottoms[col], self.water[col][:, None]
        zz = np.asarray(z, dtype=float)[:, None]
        # the thickness of each stratum above z and above / below the water table
        # (the same operations as ground.Column.total_stress, with fewer temporaries)
        zb = np.minimum(zz, bots)
        above = np.minimum(zb, zw)
        above -= tops
        np.clip(above, 0.0, None, out=above)
        below = zb
        below -= np.maximum(tops, zw)
        np.clip(below, 0.0, None, out=below)
        for part, name in ((above, "unit_weight"), (below, "saturated_unit_weight")):
            gamma = self._unit_weights(name)[self.variant[col]]
            dry = ~(part > 0)
            np.multiply(part, gamma, out=part)
            part[dry] = 0.0
        above += below
        return above.sum(axis=1)

    def _unit_weights(self, name: str) -> np.ndarray:
        """(n_variants, n_strata) unit weights of each variant of the strata [kN/m³]."""
        return np.array([[getattr(s, name) for s in strata] for strata in self.variants], float)

    def effective_stress(self, col: np.ndarray, z: np.ndarray) -> np.ndarray:
        """In-situ vertical effective stress σ'v0 [kPa] at depth z of column col."""
        u = WATER_UNIT_WEIGHT * np.maximum(z - self.water[col], 0.0)
        return self.total_stress(col, z) - u

    def rigid_top(self) -> np.ndarray:
        """Depth of the top of the first rigid stratum of real thickness (inf: none) [m]."""
        rigid = self.parameter(lambda s: s.behaviour == Behaviour.RIGID, dtype=bool)
        present = rigid & (self.bottoms - self.tops > 0)
        tops = np.where(present, self.tops, np.inf)
        return tops.min(axis=1) if tops.size else np.full(len(self.x), np.inf)


# --------------------------------------------------------------------------- sublayers


def regular_edges(base: float, scale: float, fraction: float, bottom: float) -> np.ndarray:
    """Sublayer edges from ``base`` to ``bottom`` before stratum boundaries are added [m].

    ``fraction·scale`` thick down to 2 widths below the base, then growing with
    the depth below the base (``fraction/2`` of it, and beyond
    :data:`DEEP_START` widths :data:`DEEP_GROWTH` of it).
    """
    h0 = max(fraction * scale, 1e-6)
    z, out = base, [base]
    deep = base + DEEP_START * scale
    while z < bottom - 1e-9:
        d = z - base
        growth = DEEP_GROWTH * d if z >= deep else 0.5 * fraction * d
        z = z + max(h0, growth)
        out.append(min(z, bottom))
    return np.array(out)


def column_edges(
    base: float,
    scale: float,
    fraction: float,
    top: float,
    bottom: float,
    boundaries: np.ndarray,
    template: np.ndarray | None = None,
) -> np.ndarray:
    """Sublayer edges of one column between depths ``top`` and ``bottom`` [m].

    The regular edges (:func:`regular_edges`, from ``base``) that fall inside,
    plus every stratum boundary and load plane in ``boundaries`` inside the
    range; slivers thinner than a quarter of the first sublayer (at most 1 mm)
    next to a boundary are merged; a sublayer thicker than
    :data:`DEPTH_FRACTION` of its depth (at least :data:`SHALLOW_SUBLAYER`) is split.
    """
    e = template if template is not None else regular_edges(base, scale, fraction, bottom)
    e = e[(e > top) & (e < bottom)]
    inner = boundaries[(boundaries > top) & (boundaries < bottom)]
    e = np.unique(np.concatenate([[top], e, inner, [bottom]]))
    sliver = min(MIN_SUBLAYER, SLIVER_FRACTION * fraction * scale)
    is_boundary = np.isin(e, inner) | (e == top) | (e == bottom)
    d_prev = np.r_[np.inf, np.diff(e)]
    d_next = np.r_[np.diff(e), np.inf]
    keep = is_boundary | ((d_prev >= sliver) & (d_next >= sliver))
    e = e[keep]
    # no sublayer thicker than DEPTH_FRACTION of its depth (a wide footing's first
    # sublayers would otherwise span a shallow clay whole)
    h = np.diff(e)
    cap = np.maximum(DEPTH_FRACTION * e[:-1], SHALLOW_SUBLAYER)
    # at least one part: a sublayer thinner than 1e-9 of its cap (a boundary a hair
    # below another) is kept whole, never dropped
    parts = np.maximum(np.ceil(h / cap - 1e-9), 1).astype(int)
    if np.any(parts > 1):
        which = np.repeat(np.arange(len(h)), parts)
        step = np.arange(len(which)) - np.repeat(np.cumsum(parts) - parts, parts)
        e = np.concatenate([e[:-1][which] + h[which] * step / parts[which], e[-1:]])
    return e


def many_column_edges(
    base: np.ndarray,
    scale: np.ndarray,
    fraction: float,
    top: np.ndarray,
    bottom: np.ndarray,
    boundaries: np.ndarray,
    templates: dict | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Sublayers of many columns at once: :func:`column_edges` of each, flattened.

    Parameters
    ----------
    base, scale, top, bottom : numpy.ndarray
        (m,) per column: the depth where its sublayers start [m], its sublayer scale
        [m], and the range to cut into sublayers [m] (``top < bottom``).
    fraction : float
        The sublayer fraction of the scale.
    boundaries : numpy.ndarray
        (m, nb) per column: stratum boundaries and load planes [m]; entries that are
        not finite are ignored.
    templates : dict, optional
        ``{(base, scale): regular_edges(base, scale, fraction, MAX_INTEGRATION_DEPTH)}``,
        filled as needed (the caller keeps it between passes).

    Returns
    -------
    row, top, bottom : numpy.ndarray
        Per sublayer: the position of its column in the arguments, and its top and
        bottom [m]; by column, then by depth. The same numbers as
        :func:`column_edges` column by column (the same floating-point operations,
        made on all columns together).
    """
    base = np.asarray(base, float)
    scale = np.asarray(scale, float)
    top = np.asarray(top, float)
    bottom = np.asarray(bottom, float)
    m = len(base)
    if m == 0:
        z = np.zeros(0)
        return np.zeros(0, dtype=np.intp), z, z
    templates = {} if templates is None else templates
    bnd = np.asarray(boundaries, float).reshape(m, -1)
    # the regular edges inside (top, bottom): a contiguous range of each template
    keys, key_of = np.unique(np.column_stack([base, scale]), axis=0, return_inverse=True)
    key_of = key_of.ravel()
    flat, offset = [], 0
    start = np.empty(m, dtype=np.intp)
    count = np.empty(m, dtype=np.intp)
    for q, (b0, s0) in enumerate(keys):
        key = (float(b0), float(s0))
        if key not in templates:
            templates[key] = regular_edges(key[0], key[1], fraction, MAX_INTEGRATION_DEPTH)
        t = templates[key]
        rows = np.flatnonzero(key_of == q)
        lo = np.searchsorted(t, top[rows], side="right")  # first edge > top
        hi = np.searchsorted(t, bottom[rows], side="left")  # first edge >= bottom
        start[rows] = offset + lo
        count[rows] = np.maximum(hi - lo, 0)
        flat.append(t)
        offset += len(t)
    flat = np.concatenate(flat)
    total = int(count.sum())
    tpl_row = np.repeat(np.arange(m), count)
    within = np.arange(total) - np.repeat(np.cumsum(count) - count, count)
    tpl_idx = within + np.repeat(start, count)
    inner = (bnd > top[:, None]) & (bnd < bottom[:, None])
    in_row, in_col = np.nonzero(inner)
    rows = np.concatenate([np.arange(m), tpl_row, in_row, np.arange(m)])
    vals = np.concatenate([top, flat[tpl_idx], bnd[in_row, in_col], bottom])
    is_bnd = np.concatenate(
        [np.ones(m, bool), np.zeros(total, bool), np.ones(len(in_row), bool), np.ones(m, bool)]
    )
    order = np.lexsort((vals, rows))
    rows, vals, is_bnd = rows[order], vals[order], is_bnd[order]
    # unique values per column; a value is a boundary if any of its copies is one
    first = np.r_[True, (rows[1:] != rows[:-1]) | (vals[1:] != vals[:-1])]
    at = np.flatnonzero(first)
    is_bnd = np.logical_or.reduceat(is_bnd, at)
    rows, vals = rows[at], vals[at]
    # slivers next to a boundary are merged
    sliver = np.minimum(MIN_SUBLAYER, SLIVER_FRACTION * fraction * scale)[rows]
    same = rows[1:] == rows[:-1]
    gap = np.diff(vals)
    d_prev = np.r_[np.inf, np.where(same, gap, np.inf)]
    d_next = np.r_[np.where(same, gap, np.inf), np.inf]
    keep = is_bnd | ((d_prev >= sliver) & (d_next >= sliver))
    rows, vals = rows[keep], vals[keep]
    # no sublayer thicker than DEPTH_FRACTION of its depth: split
    inside = np.flatnonzero(rows[1:] == rows[:-1])  # each sublayer's top edge
    e0 = vals[inside]
    h = vals[inside + 1] - e0
    cap = np.maximum(DEPTH_FRACTION * e0, SHALLOW_SUBLAYER)
    # at least one part: a sublayer thinner than 1e-9 of its cap (a boundary a hair
    # below another) is kept whole, never dropped
    parts = np.maximum(np.ceil(h / cap - 1e-9), 1).astype(int)
    which = np.repeat(np.arange(len(h)), parts)
    step = np.arange(len(which)) - np.repeat(np.cumsum(parts) - parts, parts)
    tops = e0[which] + h[which] * step / parts[which]
    row = rows[inside][which]
    # each piece's bottom: the next piece's top in its column, or the column's last edge
    last = np.r_[row[1:] != row[:-1], True]
    bots = np.empty_like(tops)
    bots[:-1] = tops[1:]
    col_end = vals[np.r_[np.flatnonzero(rows[1:] != rows[:-1]), len(rows) - 1]]
    bots[last] = col_end[row[last]] if len(row) else bots[last]
    return row.astype(np.intp), tops, bots


# --------------------------------------------------------------------------- depth bound


def tail_bound(
    depth: np.ndarray,
    total_load: float,
    load_depth: float,
    gc: GroundColumns,
    *,
    field_modulus_min: np.ndarray,
    creep: np.ndarray,
    undrained: bool,
) -> np.ndarray:
    """Upper bound of the settlement of everything below ``depth`` in each column [m].

    Parameters
    ----------
    depth : numpy.ndarray
        (n,) depth below ground where each column's integration stops [m].
    total_load : float
        Sum of the magnitudes of all loads P = Σ|q|A [kN].
    load_depth : float
        Depth of the deepest load plane [m].
    gc : GroundColumns
        The columns' ground.
    field_modulus_min : numpy.ndarray
        (n, k) smallest Young's modulus of each granular stratum below ``depth``
        in each column [kPa] (NaN where unknown: the bound is then infinite).
    creep : numpy.ndarray
        (n, k) largest time factor of each stratum's method over the design life
        (Schmertmann's C2, Burland & Burbidge's ft; 1 for elastic).
    undrained : bool
        Add the undrained immediate strain of clay with an undrained modulus.

    Returns
    -------
    numpy.ndarray
        (n,) bound [m]; 0 where a rigid stratum starts at ``depth``; inf where
        ``depth`` is not below every load plane or a modulus is unknown.

    Notes
    -----
    Below every load plane, each element of a load is a point load, so at any
    point at depth z the vertical stress of all loads is at most the on-axis
    point-load value of their sum (Boussinesq 1885):
    Δσz ≤ 3P / (2π (z − D)²). The first stress invariant of downward loads is
    positive, so Hooke's law gives εz ≤ (1 + ν) Δσz / E on granular strata; on
    cohesive strata log10(1 + x) ≤ x/ln 10 gives ε ≤ Cc Δσz / ((1 + e0) ln 10 σ'0)
    whichever branch applies (Cc ≥ Cr), with σ'0 at the top of the part below.
    Integrated from a to b: ∫ dz/(z − D)² = 1/(a − D) − 1/(b − D). The bound
    therefore holds for any plan, any footing shapes and any point position,
    and tends to zero as the depth grows (as 1/z on granular ground, 1/z² on
    clay).
    """
    n, k = gc.tops.shape
    z = np.asarray(depth, dtype=float)
    out = np.zeros(n)
    if total_load <= 0 or n == 0:
        return out
    reach = z - load_depth
    with np.errstate(divide="ignore", invalid="ignore"):
        coef = 3.0 * total_load / (2.0 * math.pi)
        behaviour = gc.parameter(lambda s: str(s.behaviour), dtype=object)
        nu = gc.parameter(lambda s: s.poisson)
        cc = gc.parameter(
            lambda s: np.nan if s.compression_index is None else float(s.compression_index)
        )
        e0 = gc.parameter(lambda s: np.nan if s.void_ratio is None else float(s.void_ratio))
        eu = gc.parameter(
            lambda s: np.nan if s.undrained_modulus is None else float(s.undrained_modulus)
        )
        stop = np.full(n, np.inf)  # the first rigid stratum at or below z
        for j in range(k):
            a = np.maximum(gc.tops[:, j], z)
            b = np.minimum(gc.bottoms[:, j], stop)
            real = b > a
            rigid = (
                (behaviour[:, j] == Behaviour.RIGID.value)
                & (gc.bottoms[:, j] > z)
                & (gc.bottoms[:, j] > gc.tops[:, j])
            )
            stop = np.where(rigid, np.minimum(stop, np.maximum(gc.tops[:, j], z)), stop)
            if not real.any():
                continue
            part = coef * (
                1.0 / (a - load_depth) - 1.0 / np.where(np.isinf(b), np.inf, b - load_depth)
            )
            gran = behaviour[:, j] == Behaviour.GRANULAR.value
            coh = behaviour[:, j] == Behaviour.COHESIVE.value
            w = np.zeros(n)
            w = np.where(gran, (1.0 + nu[:, j]) * creep[:, j] / field_modulus_min[:, j], w)
            if coh.any():
                cols = np.arange(n)
                s0 = gc.effective_stress(cols, a)
                wc = cc[:, j] / ((1.0 + e0[:, j]) * math.log(10.0) * s0)
                if undrained:
                    wc = wc + np.where(np.isfinite(eu[:, j]), 1.5 / eu[:, j], 0.0)
                w = np.where(coh, wc, w)
            add = np.where(real & (gran | coh), w * part, 0.0)
            add = np.where(real & (gran | coh) & ~np.isfinite(add), np.inf, add)
            out = out + add
    out = np.where(reach > 0, out, np.inf)
    return np.where(np.isnan(out), np.inf, out)
