"""The ground at any plan position: strata from the boreholes, water table, in-situ stress.

:class:`Ground` is built once from a :class:`~sitesettle.site.Site`;
``Ground(site).column(x, y)`` gives the :class:`Column` of strata at a point,
``Ground(site).columns(xs, ys)`` those at many points in one pass, and
``Ground(site).tops(x, y)`` the stratum tops on any array of points.

Interpolation between boreholes (docs/input.md, "How the ground is built"):

* For every stratum of the site's ordered list, its **top depth** at each
  borehole. A stratum missing from a borehole has zero thickness there, at the
  depth where it would sit (the top of the next stratum the borehole meets). A
  stratum below the end of a borehole takes the value interpolated from the
  boreholes that reached it, but never less than the borehole's end depth; a
  stratum no borehole reached starts at infinite depth.
* Three or more boreholes not on one line: linear over the Delaunay
  triangulation of their positions (barycentric weights); outside the convex
  hull, the nearest borehole.
* Two boreholes, or all on one line: linear along that line (the point is
  projected onto it), the end borehole beyond either end.
* One borehole: its log everywhere.
* Points not inside the hull (off the line, or away from a single borehole)
  are flagged :attr:`Column.outside_hull`.

Interpolated tops are convex combinations of non-decreasing borehole tops, so
strata stay in order with no negative thickness.

Measured interval values (``Interval.overrides``) apply at a point from the
nearest borehole that gives that value for that stratum. Cone resistance comes
from the nearest sounding, linear in depth between readings; above the first
reading the first value and below the last reading the last value are held
(:meth:`Ground.sounding_end` tells where a sounding stops).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np
from scipy.spatial import Delaunay, cKDTree

from sitesettle.errors import AnalysisError
from sitesettle.options import Behaviour
from sitesettle.site import WATER_UNIT_WEIGHT, Site, Sounding, Stratum

#: boreholes count as collinear when the smaller singular value of their centred
#: positions is below this fraction of the larger (round-off in coordinates)
COLLINEAR_TOLERANCE = 1e-9
#: a point within this fraction of the borehole spread of the hull counts as inside
HULL_TOLERANCE = 1e-9


class PlanInterpolator:
    """Weights that interpolate values known at scattered plan points.

    Parameters
    ----------
    xy : array_like
        (n, 2) positions [m] of the known points (distinct).

    Notes
    -----
    Linear on the Delaunay triangulation for n ≥ 3 points not on a line,
    linear along the line for collinear points, constant for one point;
    nearest point outside the hull.
    """

    def __init__(self, xy) -> None:
        self.xy = np.asarray(xy, dtype=float).reshape(-1, 2)
        n = len(self.xy)
        if n == 0:
            raise AnalysisError("no points to interpolate from")
        self._tree = cKDTree(self.xy)
        centre = self.xy.mean(axis=0)
        spread = float(np.ptp(self.xy, axis=0).max()) if n > 1 else 0.0
        self._tol = HULL_TOLERANCE * max(spread, 1.0)
        self.kind = "single"
        if n >= 2:
            _, sv, vt = np.linalg.svd(self.xy - centre)
            if n >= 3 and sv[1] > COLLINEAR_TOLERANCE * sv[0]:
                self.kind = "triangles"
                self._tri = Delaunay(self.xy)
            else:
                self.kind = "line"
                self._origin, self._dir = centre, vt[0]
                t = (self.xy - centre) @ vt[0]
                self._order = np.argsort(t)
                self._t = t[self._order]

    def weights(self, x, y) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Indices (m, k), weights (m, k) and outside-hull flags (m,) for flattened points.

        NaN coordinates get NaN weights.
        """
        q = np.column_stack([np.ravel(x), np.ravel(y)]).astype(float)
        m = len(q)
        finite = np.all(np.isfinite(q), axis=1)
        safe = np.where(finite[:, None], q, self.xy[0])
        _, nearest = self._tree.query(safe)
        nearest = np.asarray(nearest).reshape(m)
        if self.kind == "single":
            idx = np.zeros((m, 1), dtype=int)
            w = np.ones((m, 1))
            outside = np.hypot(*(safe - self.xy[0]).T) > self._tol
        elif self.kind == "line":
            rel = safe - self._origin
            t = rel @ self._dir
            off = np.abs(rel @ np.array([-self._dir[1], self._dir[0]]))
            tc = np.clip(t, self._t[0], self._t[-1])
            j = np.clip(np.searchsorted(self._t, tc, side="right") - 1, 0, len(self._t) - 2)
            span = self._t[j + 1] - self._t[j]
            f = np.where(span > 0, (tc - self._t[j]) / np.where(span > 0, span, 1.0), 0.0)
            idx = np.column_stack([self._order[j], self._order[j + 1]])
            w = np.column_stack([1.0 - f, f])
            outside = (
                (off > self._tol) | (t < self._t[0] - self._tol) | (t > self._t[-1] + self._tol)
            )
        else:
            simplex = self._tri.find_simplex(safe, tol=self._tol)
            inside = simplex >= 0
            s = np.where(inside, simplex, 0)
            T = self._tri.transform[s]
            b = np.einsum("mij,mj->mi", T[:, :2, :], safe - T[:, 2, :])
            bary = np.column_stack([b, 1.0 - b.sum(axis=1)])
            bary = np.clip(bary, 0.0, 1.0)
            bary /= bary.sum(axis=1, keepdims=True)
            idx = np.where(inside[:, None], self._tri.simplices[s], nearest[:, None])
            w = np.where(inside[:, None], bary, np.array([1.0, 0.0, 0.0]))
            outside = ~inside
        w = np.where(finite[:, None], w, np.nan)
        return idx, w, outside & finite

    def __call__(self, values, x, y, *, weights=None) -> np.ndarray:
        """Interpolate ``values`` (n, …) at the points (x, y); returns shape (m, …).

        Infinite values stay infinite where they carry weight (0·inf counts 0).
        ``weights`` may pass the result of :meth:`weights` for the same points.
        """
        values = np.asarray(values, dtype=float)
        idx, w, _ = self.weights(x, y) if weights is None else weights
        v = values[idx]  # (m, k, …)
        wk = w.reshape(w.shape + (1,) * (values.ndim - 1))
        terms = np.where(wk > 0, wk * np.where(np.isfinite(v), v, 0.0), 0.0)
        terms = terms + np.where((wk > 0) & np.isinf(v), v, 0.0)
        out = terms.sum(axis=1)
        return np.where(np.isnan(wk).any(axis=1), np.nan, out)


@dataclass(frozen=True)
class Column:
    """The ground at one plan position.

    Attributes
    ----------
    x, y : float
        Plan position [m].
    strata : tuple of Stratum
        All strata of the site in order, with measured interval values applied;
        strata absent here have zero thickness.
    tops, bottoms : numpy.ndarray
        Top and bottom depth of each stratum [m]; ``bottoms[-1]`` is infinite.
    water_depth : float
        Depth of the water table [m] (inf: none).
    outside_hull : bool
        True where the point is not inside the boreholes' convex hull.
    """

    x: float
    y: float
    strata: tuple[Stratum, ...]
    tops: np.ndarray
    bottoms: np.ndarray
    water_depth: float
    outside_hull: bool

    @property
    def thicknesses(self) -> np.ndarray:
        """Thickness of each stratum [m] (inf for the last)."""
        return self.bottoms - self.tops

    @property
    def base_depth(self) -> float:
        """Depth where the integration stops: the top of a rigid last stratum, else inf [m]."""
        if self.strata and self.strata[-1].behaviour == Behaviour.RIGID:
            return float(self.tops[-1])
        return math.inf

    def index_at(self, z) -> np.ndarray:
        """Index into :attr:`strata` of the stratum at each depth ``z`` [m].

        A depth on a boundary belongs to the stratum below it; zero-thickness
        strata are never returned. ``-1`` for z < 0 or NaN.
        """
        z = np.asarray(z, dtype=float)
        i = np.searchsorted(self.bottoms, z, side="right")
        i = np.clip(i, 0, len(self.strata) - 1)
        return np.where(np.isnan(z) | (z < 0), -1, i)

    def total_stress(self, z) -> np.ndarray:
        r"""In-situ total vertical stress at depth ``z`` [kPa].

        .. math:: \sigma_v(z) = \int_0^z \gamma(\zeta)\,d\zeta

        with γ the unit weight above the water table and the saturated unit
        weight below it, stratum by stratum (common practice). NaN for z < 0.
        """
        z = np.asarray(z, dtype=float)
        zz = z[..., None]
        dry = np.array([s.unit_weight for s in self.strata])
        sat = np.array([s.saturated_unit_weight for s in self.strata])
        zw = self.water_depth
        above = np.clip(np.minimum(np.minimum(zz, self.bottoms), zw) - self.tops, 0.0, None)
        below = np.clip(np.minimum(zz, self.bottoms) - np.maximum(self.tops, zw), 0.0, None)
        sigma = (np.where(above > 0, above * dry, 0.0) + np.where(below > 0, below * sat, 0.0)).sum(
            axis=-1
        )
        return np.where(np.isnan(z) | (z < 0), np.nan, sigma)

    def pore_pressure(self, z) -> np.ndarray:
        r"""Hydrostatic pore pressure :math:`u = \gamma_w \max(z - z_w, 0)` [kPa]."""
        z = np.asarray(z, dtype=float)
        u = WATER_UNIT_WEIGHT * np.maximum(z - self.water_depth, 0.0)
        return np.where(np.isnan(z) | (z < 0), np.nan, u)

    def effective_stress(self, z) -> np.ndarray:
        r"""In-situ vertical effective stress :math:`\sigma'_v = \sigma_v - u` [kPa]."""
        return self.total_stress(z) - self.pore_pressure(z)


@dataclass(frozen=True)
class ColumnArrays:
    """The ground at many plan positions as arrays (n positions, k strata).

    ``tops``/``bottoms`` (n, k) [m] (the last bottom infinite), ``water`` (n,) the
    water-table depth [m] (inf: none), ``outside_hull`` (n,), and ``variant`` (n,)
    the index into ``variants``, the distinct tuples of strata (measured interval
    values make strata differ between positions).
    """

    tops: np.ndarray
    bottoms: np.ndarray
    water: np.ndarray
    outside_hull: np.ndarray
    variant: np.ndarray
    variants: list


def _borehole_tops(site: Site) -> np.ndarray:
    """(n_boreholes, n_strata) top depth of each stratum at each borehole (see module notes)."""
    names = [s.name for s in site.strata]
    n_b, n_s = len(site.boreholes), len(names)
    tops = np.full((n_b, n_s), np.nan)
    ends = np.zeros(n_b)
    for b, bh in enumerate(site.boreholes):
        present = {iv.stratum: iv for iv in bh.intervals}
        ends[b] = max((iv.bottom for iv in bh.intervals), default=0.0)
        nxt = np.nan
        for s in range(n_s - 1, -1, -1):
            if names[s] in present:
                nxt = present[names[s]].top
            tops[b, s] = nxt
        if n_s:
            tops[b, 0] = 0.0
    xy = np.array([[bh.x, bh.y] for bh in site.boreholes], dtype=float)
    for s in range(n_s):
        unknown = np.isnan(tops[:, s])
        if not unknown.any():
            continue
        known = ~unknown
        if known.any():
            est = PlanInterpolator(xy[known])(tops[known, s], xy[unknown, 0], xy[unknown, 1])
            tops[unknown, s] = np.maximum(est, ends[unknown])
        else:
            tops[unknown, s] = np.inf
    return np.maximum.accumulate(tops, axis=1)


class Ground:
    """Strata, water table and cone resistance anywhere on the site.

    Parameters
    ----------
    site : Site
        With at least one borehole.
    """

    def __init__(self, site: Site) -> None:
        if not site.boreholes:
            raise AnalysisError("the site has no boreholes")
        self.site = site
        self.strata = site.strata
        xy = np.array([[b.x, b.y] for b in site.boreholes], dtype=float)
        self._plan = PlanInterpolator(xy)
        self._tops = _borehole_tops(site)
        # water table: each borehole's own depth, else the site's; boreholes with neither left out
        water = np.array(
            [
                b.water_depth if b.water_depth is not None else site.water_depth
                for b in site.boreholes
            ],
            dtype=float,
        )
        has = np.isfinite(water)
        self._water = None
        if has.all():
            self._water = (self._plan, water)
        elif has.any():
            self._water = (PlanInterpolator(xy[has]), water[has])
        # measured interval values: (stratum index, field) → (positions, values)
        self._overrides: dict[tuple[int, str], tuple[cKDTree, np.ndarray]] = {}
        found: dict[tuple[int, str], list] = {}
        index = {s.name: i for i, s in enumerate(self.strata)}
        for b in site.boreholes:
            for iv in b.intervals:
                for field, value in iv.overrides.items():
                    found.setdefault((index[iv.stratum], field), []).append((b.x, b.y, value))
        for key, rows in found.items():
            arr = np.array(rows, dtype=float)
            self._overrides[key] = (cKDTree(arr[:, :2]), arr[:, 2])
        self.soundings: tuple[Sounding, ...] = tuple(site.soundings)
        self._sounding_tree = (
            cKDTree(np.array([[s.x, s.y] for s in self.soundings], dtype=float))
            if self.soundings
            else None
        )

    # -- vectorised helpers ---------------------------------------------------
    def tops(self, x, y) -> np.ndarray:
        """Top depth of every stratum at each point: shape ``np.shape(x) + (n_strata,)`` [m]."""
        shape = np.broadcast(np.asarray(x), np.asarray(y)).shape
        xb, yb = np.broadcast_arrays(np.asarray(x, float), np.asarray(y, float))
        out = self._plan(self._tops, xb, yb)
        return np.maximum.accumulate(out, axis=-1).reshape(shape + (len(self.strata),))

    def outside_hull(self, x, y) -> np.ndarray:
        """True where a point is not inside the boreholes' convex hull (see module notes)."""
        xb, yb = np.broadcast_arrays(np.asarray(x, float), np.asarray(y, float))
        return self._plan.weights(xb, yb)[2].reshape(xb.shape)

    def water_depth(self, x, y) -> np.ndarray:
        """Depth of the water table at each point [m] (inf: none)."""
        xb, yb = np.broadcast_arrays(np.asarray(x, float), np.asarray(y, float))
        if self._water is None:
            return np.full(xb.shape, self.site.water_depth)
        interp, values = self._water
        return interp(values, xb, yb).reshape(xb.shape)

    # -- one point ------------------------------------------------------------
    def column(self, x: float, y: float) -> Column:
        """The :class:`Column` of strata at plan position (x, y) [m]."""
        return self.columns([x], [y])[0]

    def columns(self, x, y) -> list[Column]:
        """The :class:`Column` at each of many plan positions (one interpolation pass).

        Parameters
        ----------
        x, y : array_like
            Plan positions [m], broadcast together and flattened.
        """
        xb, yb = np.broadcast_arrays(np.asarray(x, float), np.asarray(y, float))
        xf, yf = xb.ravel(), yb.ravel()
        g = self.column_arrays(xf, yf)
        return [
            Column(
                x=float(xf[m]),
                y=float(yf[m]),
                strata=g.variants[g.variant[m]],
                tops=g.tops[m],
                bottoms=g.bottoms[m],
                water_depth=float(g.water[m]),
                outside_hull=bool(g.outside_hull[m]),
            )
            for m in range(len(xf))
        ]

    def column_arrays(self, x, y) -> ColumnArrays:
        """The ground at many plan positions as arrays (what :meth:`columns` holds,
        without a :class:`Column` object per position).

        Parameters
        ----------
        x, y : array_like
            (n,) plan positions [m].
        """
        xf, yf = np.asarray(x, float).ravel(), np.asarray(y, float).ravel()
        weights = self._plan.weights(xf, yf)
        tops = np.maximum.accumulate(self._plan(self._tops, xf, yf, weights=weights), axis=-1)
        if self._water is None:
            water = np.full(len(xf), self.site.water_depth)
        elif self._water[0] is self._plan:
            water = self._plan(self._water[1], xf, yf, weights=weights)
        else:
            water = self._water[0](self._water[1], xf, yf)
        picks = {}
        for key, (tree, values) in self._overrides.items():
            q = np.column_stack([xf, yf])
            ok = np.all(np.isfinite(q), axis=1)
            j = np.zeros(len(xf), dtype=int)
            if ok.any():
                j[ok] = tree.query(q[ok])[1]
            picks[key] = values[j]
        # positions with the same measured values (the same nearest borehole) share
        # one tuple of strata, built once (keyed by the bytes of the values, so that
        # NaN matches NaN), numbered in the order they first appear
        keys = list(picks)
        table = np.column_stack([picks[k] for k in keys] or [np.zeros(len(xf))]).astype(float)
        table = np.ascontiguousarray(table)
        rows = table.view(np.dtype((np.void, table.dtype.itemsize * table.shape[1]))).ravel()
        _, first, inverse = np.unique(rows, return_index=True, return_inverse=True)
        rank = np.empty(len(first), dtype=int)
        rank[np.argsort(first, kind="stable")] = np.arange(len(first))
        variant = rank[inverse.ravel()]
        variants = []
        for m in np.sort(first):
            changed = list(self.strata)
            changes: dict[int, dict] = {}
            for (i, field), v in zip(keys, table[m]):
                changes.setdefault(i, {})[field] = float(v)
                if field == "cone_resistance":
                    changes[i]["use_soundings"] = False
            for i, kw in changes.items():
                changed[i] = dataclasses.replace(changed[i], **kw)
            variants.append(tuple(changed))
        bottoms = np.concatenate([tops[:, 1:], np.full((len(xf), 1), np.inf)], axis=1)
        return ColumnArrays(
            tops=tops,
            bottoms=bottoms,
            water=np.asarray(water, float),
            outside_hull=np.asarray(weights[2], bool),
            variant=variant,
            variants=variants,
        )

    # -- cone soundings -------------------------------------------------------
    def nearest_sounding(self, x: float, y: float) -> Sounding | None:
        """The sounding nearest to (x, y) in plan, or None when the site has none."""
        if self._sounding_tree is None:
            return None
        return self.soundings[int(self._sounding_tree.query([x, y])[1])]

    def _nearest_sounding_index(self, xb: np.ndarray, yb: np.ndarray) -> np.ndarray:
        """Index of the nearest sounding per point; -1 where x or y is not finite."""
        q = np.column_stack([xb.ravel(), yb.ravel()])
        finite = np.all(np.isfinite(q), axis=1)
        k = np.full(len(q), -1)
        if finite.any():
            k[finite] = self._sounding_tree.query(q[finite])[1]
        return k.reshape(xb.shape)

    def sounding_end(self, x, y) -> np.ndarray:
        """Depth of the last reading of the nearest sounding [m] (NaN: no soundings)."""
        xb, yb = np.broadcast_arrays(np.asarray(x, float), np.asarray(y, float))
        if self._sounding_tree is None:
            return np.full(xb.shape, np.nan)
        ends = np.array([s.depth[-1] for s in self.soundings])
        k = self._nearest_sounding_index(xb, yb)
        return np.where(k >= 0, ends[np.maximum(k, 0)], np.nan)

    @property
    def investigated_depth(self) -> float:
        """Depth of the deepest borehole or sounding [m]: below it the ground is assumed."""
        ends = [iv.bottom for b in self.site.boreholes for iv in b.intervals]
        ends += [float(s.depth[-1]) for s in self.soundings if len(s.depth)]
        return float(max(ends, default=0.0))

    def cone_minimum_below(self, x, y, z) -> np.ndarray:
        """Smallest cone resistance of the nearest sounding at or below depth z [kPa].

        The reading interpolated at z and every reading deeper (the last one is
        held below the sounding's end, as :meth:`cone_resistance` does). NaN
        where the site has no soundings.
        """
        xb, yb, zb = np.broadcast_arrays(
            np.asarray(x, float), np.asarray(y, float), np.asarray(z, float)
        )
        out = np.full(zb.shape, np.nan)
        if self._sounding_tree is None:
            return out
        k = self._nearest_sounding_index(xb, yb)
        for i, s in enumerate(self.soundings):
            mask = k == i
            if not mask.any():
                continue
            at = np.interp(zb[mask], s.depth, s.qc)
            # minimum of the readings deeper than each z: a suffix minimum
            suffix = np.minimum.accumulate(s.qc[::-1])[::-1]
            j = np.searchsorted(s.depth, zb[mask], side="right")
            deeper = np.where(j < len(s.qc), suffix[np.minimum(j, len(s.qc) - 1)], np.inf)
            out[mask] = np.minimum(at, deeper)
        return np.where(np.isnan(zb), np.nan, out)

    def cone_resistance(self, x, y, z) -> np.ndarray:
        """Cone resistance qc [kPa] at (x, y, z) from the nearest sounding, broadcast.

        Linear in depth between readings; the first reading is held above it and
        the last below it. NaN where the site has no soundings or x, y or z is NaN.
        """
        xb, yb, zb = np.broadcast_arrays(
            np.asarray(x, float), np.asarray(y, float), np.asarray(z, float)
        )
        out = np.full(zb.shape, np.nan)
        if self._sounding_tree is None:
            return out
        k = self._nearest_sounding_index(xb, yb)
        for i, s in enumerate(self.soundings):
            mask = k == i
            if mask.any():
                out[mask] = np.interp(zb[mask], s.depth, s.qc)
        return np.where(np.isnan(zb), np.nan, out)


def stratigraphy_at(site: Site, x: float, y: float) -> Column:
    """The :class:`Column` at (x, y): ``Ground(site).column(x, y)`` for a single use."""
    return Ground(site).column(x, y)


def cone_resistance_at(site: Site, x, y, z) -> np.ndarray:
    """Cone resistance [kPa] at (x, y, z): ``Ground(site).cone_resistance`` for a single use."""
    return Ground(site).cone_resistance(x, y, z)
