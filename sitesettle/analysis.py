"""Orchestration: Site → settlements of every footing over time → :class:`Results`.

One explicit pipeline, no engineering formulas of its own (those live in
:mod:`sitesettle.stress`, :mod:`sitesettle.ground` and :mod:`sitesettle.methods`):

1. net pressure of every footing, full service and sustained
   (``q_net = P/A + γ_f D − σ_v0(D)``, DESIGN §3);
2. evaluation points: the centre of a flexible footing, the four characteristic
   points of a rigid one (±0.37 L, ±0.37 B along its axes; Graßhoff 1955);
3. a column of sublayers under every point, from the base down to a rigid base or
   ``max_depth_widths`` widths (thin near the base, thicker with depth, split at
   every stratum boundary);
4. the superposed Boussinesq stresses of all footings at every sublayer (one call
   of the stress engine per load case), and the footing's own part exactly;
5. per sublayer, the method of its stratum: the footing's own load by the chosen
   granular method (Schmertmann, elastic or Burland & Burbidge), clay by e–log σ'
   consolidation under the whole superposed stress, and the neighbours' part by
   elastic strain (granular) or consolidation (cohesive);
6. settlement at every report time, the footing value (mean of the points or the
   centre), the tilt, the traces, the map and the checks.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from sitesettle import checks as checks_mod
from sitesettle import stress
from sitesettle.ground import Ground
from sitesettle.methods import burland_burbidge as bb
from sitesettle.methods import consolidation as cons
from sitesettle.methods import elastic
from sitesettle.methods import schmertmann as sch
from sitesettle.options import Behaviour, GranularMethod
from sitesettle.results import Results, SettlementMap, Trace
from sitesettle.site import Footing, Site

#: Poisson's ratio of a saturated clay loaded undrained (common practice: 0.5)
UNDRAINED_POISSON = 0.5
#: the thinnest sublayer [m]: below this a stratum sliver is one sublayer
MIN_SUBLAYER = 1e-3
#: a settlement above this fraction of the footing width is commonly taken as
#: bearing failure (common practice, e.g. the 0.1 B settlement criterion of plate
#: and footing load tests): past it the small-strain methods say nothing
FAILURE_SETTLEMENT_RATIO = 0.10
#: Schmertmann's diagrams need Δp/σ'vp; σ'vp is floored here [kPa] for footings at the surface
MIN_PEAK_STRESS = 1.0

Progress = Callable[[str, float], None]


@dataclass
class _Segments:
    """All sublayers of all evaluation points, flattened (one entry per sublayer)."""

    footing: np.ndarray  # footing index
    point: np.ndarray  # evaluation-point index within its footing
    column: np.ndarray  # column index (one per footing point)
    top: np.ndarray
    bottom: np.ndarray
    stratum: np.ndarray  # stratum index in site.strata
    x: np.ndarray
    y: np.ndarray
    offsets: np.ndarray  # sublayers of column c are rows offsets[c]:offsets[c + 1]

    def rows(self, c: int) -> slice:
        """The sublayers of column ``c`` (they are stored contiguously, top down)."""
        return slice(int(self.offsets[c]), int(self.offsets[c + 1]))

    def indices(self, c: int) -> np.ndarray:
        """Row numbers of the sublayers of column ``c``."""
        return np.arange(int(self.offsets[c]), int(self.offsets[c + 1]))

    # computed once: the per-column loops read them thousands of times
    @cached_property
    def mid(self) -> np.ndarray:
        return 0.5 * (self.top + self.bottom)

    @cached_property
    def thickness(self) -> np.ndarray:
        return self.bottom - self.top


# --------------------------------------------------------------------------- geometry


def characteristic_points(footing: Footing) -> np.ndarray:
    """Plan points where a footing's settlement is evaluated, (n, 2) [m].

    Flexible footings: the centroid. Rigid rectangles and polygons: the four
    characteristic points (±0.37 L, ±0.37 B from the centre along the footing's
    axes, Graßhoff 1955 — :data:`sitesettle.methods.elastic.CHARACTERISTIC_POINT_OFFSET`);
    rigid circles: four points at 0.845 a (:data:`elastic.CIRCLE_CHARACTERISTIC_RADIUS`).
    A point that falls outside a non-convex polygon is moved toward the centroid
    until it lies inside.
    """
    centre = np.array([footing.x, footing.y])
    if not footing.rigid:
        return centre[None, :]
    ax_l, ax_b = footing.axes()
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
                if _inside(footing.outline, pts[k]):
                    break
                pts[k] = centre + 0.8 * (pts[k] - centre)
    return pts


def _inside(outline: np.ndarray, p: np.ndarray) -> bool:
    """Even-odd ray test: is plan point p inside the polygon outline?"""
    x, y = outline[:, 0], outline[:, 1]
    x2, y2 = np.roll(x, -1), np.roll(y, -1)
    crosses = ((y > p[1]) != (y2 > p[1])) & (
        p[0] < (x2 - x) * (p[1] - y) / np.where(y2 == y, np.inf, y2 - y) + x
    )
    return bool(np.count_nonzero(crosses) % 2)


def footing_loads(
    footings: tuple[Footing, ...], pressure: np.ndarray
) -> tuple[stress.Loads, np.ndarray]:
    """Stress-engine loads of the footings and, per footing, the index of its load.

    Rectangles and circles use their exact closed forms, anything else the polygon
    edge sum. ``pressure`` is the net pressure of each footing [kPa].
    """
    kinds = {"rectangle": [], "circle": [], "polygon": []}
    for i, f in enumerate(footings):
        kinds[f.shape if f.shape in ("rectangle", "circle") else "polygon"].append(i)

    def field(ix: list[int], name: str) -> list:
        return [getattr(footings[i], name) for i in ix]

    build = {
        "rectangle": lambda ix: stress.Loads.rectangles(
            *(field(ix, n) for n in ("x", "y", "width", "length", "rotation")),
            pressure[ix],
            field(ix, "depth"),
        ),
        "circle": lambda ix: stress.Loads.circles(
            *(field(ix, n) for n in ("x", "y", "radius")), pressure[ix], field(ix, "depth")
        ),
        "polygon": lambda ix: stress.Loads.polygons(
            [np.asarray(o, float) for o in field(ix, "outline")], pressure[ix], field(ix, "depth")
        ),
    }
    parts = [build[k](ix) for k, ix in kinds.items() if ix]
    order = [i for ix in kinds.values() for i in ix]
    loads = stress.Loads.concat(*parts) if len(parts) > 1 else parts[0]
    load_of = np.empty(len(footings), dtype=int)
    load_of[np.asarray(order, dtype=int)] = np.arange(len(order))
    return loads, load_of


# --------------------------------------------------------------------------- pressures


def net_pressures(site: Site, ground: Ground) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Net base pressure of every footing, full service and sustained [kPa].

    ``q_net = P/A + γ_f·D − σ_v0(D)`` with σ_v0 the total overburden at base level
    under the footing centre (DESIGN §3; γ_f default 20 kN/m³, common practice).
    A negative net pressure (an over-excavated footing) is set to 0 with a
    warning: the methods here do not model heave.
    """
    full, sust, warn = [], [], []
    for f in site.footings:
        col = ground.column(f.x, f.y)
        s0 = float(col.total_stress(np.array([f.depth]))[0])
        extra = f.fill_unit_weight * f.depth - s0
        qf = f.service_load / f.area + extra
        qs = f.sustained_load / f.area + extra
        if qf < 0 or qs < 0:
            warn.append(
                f"footing {f.id}: net pressure {min(qf, qs):.1f} kPa < 0 taken as 0 "
                "(heave is not modelled)"
            )
        full.append(max(qf, 0.0))
        sust.append(max(qs, 0.0))
    return np.array(full), np.array(sust), warn


# --------------------------------------------------------------------------- sublayers


def sublayer_edges(
    base: float, bottom: float, width: float, fraction: float, boundaries: np.ndarray
) -> np.ndarray:
    """Sublayer boundaries from ``base`` to ``bottom`` [m].

    Thickness ``fraction·B`` down to 2B below the base, then growing in proportion
    to the depth below the base (``fraction·z/2``), so that the sublayer count stays
    small while the strain, which decays with depth, stays resolved; every stratum
    boundary inside the range is a sublayer boundary.
    """
    h0 = fraction * width
    edges = [base]
    z = base
    while z < bottom - 1e-9:
        z = z + max(h0, fraction * (z - base) / 2.0)
        edges.append(min(z, bottom))
    inner = boundaries[(boundaries > base + MIN_SUBLAYER) & (boundaries < bottom - MIN_SUBLAYER)]
    e = np.unique(np.concatenate([np.array(edges), inner]))
    # drop slivers created by a boundary next to a regular edge
    keep = np.concatenate([[True], np.diff(e) > MIN_SUBLAYER])
    e = e[keep]
    e[-1] = bottom
    return e


def _build_segments(
    site: Site, columns: list, points: list[np.ndarray], owners: list[int]
) -> _Segments:
    st = site.analysis
    parts = {k: [] for k in ("footing", "point", "column", "top", "bottom", "stratum", "x", "y")}
    counts = np.zeros(len(columns), dtype=int)
    first = {}
    for c, i in enumerate(owners):
        first.setdefault(i, c)
    for c, (col, xy, i) in enumerate(zip(columns, points, owners)):
        f = site.footings[i]
        bottom = f.depth + st.max_depth_widths * f.width
        rigid = [
            k
            for k, s in enumerate(col.strata)
            if s.behaviour == Behaviour.RIGID and col.bottoms[k] - col.tops[k] > 0
        ]
        if rigid:
            bottom = min(bottom, float(col.tops[rigid[0]]))
        if bottom <= f.depth + MIN_SUBLAYER:
            continue
        bounds = np.concatenate([col.tops, col.bottoms])
        bounds = bounds[np.isfinite(bounds)]
        e = sublayer_edges(f.depth, bottom, f.width, st.sublayer_fraction, bounds)
        top, bot = e[:-1], e[1:]
        k = np.asarray(col.index_at(0.5 * (top + bot)), dtype=int)
        n = len(top)
        parts["footing"].append(np.full(n, i))
        counts[c] = n
        parts["point"].append(np.full(n, c - first[i]))
        parts["column"].append(np.full(n, c))
        parts["top"].append(top)
        parts["bottom"].append(bot)
        parts["stratum"].append(k)
        parts["x"].append(np.full(n, xy[0]))
        parts["y"].append(np.full(n, xy[1]))
    cat = {k: (np.concatenate(v) if v else np.zeros(0)) for k, v in parts.items()}
    for k in ("footing", "point", "column", "stratum"):
        cat[k] = cat[k].astype(int)
    return _Segments(**cat, offsets=np.concatenate([[0], np.cumsum(counts)]))


# --------------------------------------------------------------------------- parameters


def _lookup(columns: list, seg: _Segments, value, dtype=float) -> np.ndarray:
    """Per-sublayer value of ``value(stratum)`` through a (column, stratum) table."""
    table = np.array([[value(s) for s in col.strata] for col in columns], dtype=dtype)
    if len(seg.top) == 0:
        return np.zeros(0, dtype=dtype)
    return table[seg.column, seg.stratum]


def _parameter(columns: list, seg: _Segments, name: str, default: float = np.nan) -> np.ndarray:
    """Per-sublayer value of a stratum parameter (borehole overrides applied)."""

    def get(s):
        v = getattr(s, name)
        return default if v is None else float(v)

    return _lookup(columns, seg, get)


def _behaviour(columns: list, seg: _Segments) -> np.ndarray:
    return _lookup(columns, seg, lambda s: s.behaviour, dtype=object)


def _granular_method(site: Site, columns: list, seg: _Segments) -> np.ndarray:
    return _lookup(columns, seg, lambda s: s.method or site.analysis.granular_method, dtype=object)


def _modulus_from_cone(
    site: Site, ground: Ground, columns: list, seg: _Segments, factor: np.ndarray
) -> np.ndarray:
    """Young's modulus of granular sublayers: given E, else factor·qc (value or soundings)."""
    e_given = _parameter(columns, seg, "youngs_modulus")
    qc = _parameter(columns, seg, "cone_resistance")
    use_s = _parameter(columns, seg, "use_soundings", 0.0) > 0
    need = use_s & np.isnan(e_given)
    if np.any(need):
        qc[need] = ground.cone_resistance(seg.x[need], seg.y[need], seg.mid[need])
    return np.where(np.isnan(e_given), factor * qc, e_given)


# --------------------------------------------------------------------------- the analysis


def analyse(
    site: Site, *, progress: Progress | None = None, with_map: bool = True, with_checks: bool = True
) -> Results:
    """Settlement of every footing of ``site`` over time, with traces, map and checks.

    Parameters
    ----------
    site : Site
        The project, in core units (see :func:`sitesettle.load_site`).
    progress : callable, optional
        ``progress(stage, fraction)`` is called as the work advances.
    with_map, with_checks : bool
        Compute the settlement map and the movement checks (default True).

    Returns
    -------
    Results
        Per-footing settlements (m) at every report time and the design life.
    """
    say = progress or (lambda stage, frac: None)
    st = site.analysis
    ground = Ground(site)
    times = np.unique(np.array([*st.report_times, st.design_life], dtype=float))
    times = times[times > 0]
    i_life = int(np.argmin(np.abs(times - st.design_life)))
    nf = len(site.footings)

    say("net pressures", 0.0)
    q_full, q_sust, warnings = net_pressures(site, ground)

    # evaluation points and their ground columns
    points, owners = [], []
    for i, f in enumerate(site.footings):
        for xy in characteristic_points(f):
            points.append(xy)
            owners.append(i)
    pxy = np.array(points)
    columns = ground.columns(pxy[:, 0], pxy[:, 1])
    npts = max(owners.count(i) for i in range(nf))
    seg = _build_segments(site, columns, points, owners)
    say("stresses", 0.1)

    # stresses: full service (granular) and sustained (cohesive), total and own
    loads_full, load_of = footing_loads(site.footings, q_full)
    loads_sust = loads_full.with_pressure(q_sust[np.argsort(load_of)])
    xyz = np.column_stack([seg.x, seg.y, seg.mid])
    tol = st.stress_tolerance
    sz_full, t_full = stress.stress_sums(loads_full, xyz, tolerance=tol)
    say("stresses", 0.4)
    sz_sust, _ = stress.stress_sums(loads_sust, xyz, tolerance=tol)
    own_sz, own_t = stress.own_stress(loads_full, xyz, load_of[seg.footing])
    ratio = np.divide(q_sust, q_full, out=np.zeros(nf), where=q_full > 0)[seg.footing]
    own_sz_sust = own_sz * ratio
    say("settlements", 0.6)

    sig0 = np.zeros(len(seg.top))
    for c, col in enumerate(columns):
        r = seg.rows(c)
        sig0[r] = col.effective_stress(seg.mid[r])
    behaviour = _behaviour(columns, seg)
    granular = behaviour == Behaviour.GRANULAR
    cohesive = behaviour == Behaviour.COHESIVE
    nu = _parameter(columns, seg, "poisson", 0.3)
    h = seg.thickness

    # influence depth per point: the bottom of the deepest sublayer where Δσz ≥ fraction·σ'v0
    # (below it the stress increase stays under that fraction)
    strong = sz_full >= st.influence_fraction * np.maximum(sig0, 1e-9)
    active = np.ones(len(seg.top), dtype=bool)
    influence_depth = np.zeros(len(columns))
    for c in range(len(columns)):
        m = seg.indices(c)
        if len(m) == 0:
            influence_depth[c] = site.footings[owners[c]].depth
            continue
        keep = np.flatnonzero(strong[m])
        n_keep = max(keep[-1] + 1 if len(keep) else 1, 1)
        active[m[n_keep:]] = False
        influence_depth[c] = seg.bottom[m[n_keep - 1]]

    nt = len(times)
    own_s = np.zeros((len(seg.top), nt))  # own settlement of each sublayer over time
    nb_s = np.zeros((len(seg.top), nt))
    cons_own = np.zeros((len(seg.top), nt))
    cons_nb = np.zeros((len(seg.top), nt))
    sec_own = np.zeros((len(seg.top), nt))
    sec_nb = np.zeros((len(seg.top), nt))
    iz = np.full(len(seg.top), np.nan)
    method_of = np.full(len(seg.top), "", dtype=object)

    fw = np.array([f.width for f in site.footings])
    fl_ = np.array([f.length for f in site.footings])
    fd = np.array([f.depth for f in site.footings])
    lb = np.where(np.array([f.shape == "circle" for f in site.footings]), 1.0, fl_ / fw)
    gm = _granular_method(site, columns, seg)

    # ---- granular: modulus, own part by method, neighbours elastic
    version = np.where(gm == GranularMethod.SCHMERTMANN_1970, "1970", "1978")
    diag78 = sch.diagram(lb, version="1978", interpolation=st.shape_interpolation)
    diag70 = sch.diagram(lb, version="1970")
    factor = np.where(
        version == "1970",
        np.asarray(diag70.modulus_factor)[seg.footing] * np.ones(len(seg.top)),
        np.asarray(diag78.modulus_factor)[seg.footing] * np.ones(len(seg.top)),
    )
    E = _modulus_from_cone(site, ground, columns, seg, factor)
    nb_sz = sz_full - own_sz
    nb_t = t_full - own_t
    hsum_own = (1 + nu) * own_t - own_sz
    hsum_nb = (1 + nu) * nb_t - nb_sz

    # time factor applied to granular settlement (creep): per method
    c2 = np.asarray(sch.creep_factor(times))
    ft_bb = np.asarray(bb.time_factor(times, r3=st.bb_r3, r=st.bb_r))

    is_sch = granular & np.isin(gm, [GranularMethod.SCHMERTMANN, GranularMethod.SCHMERTMANN_1970])
    is_el = granular & (gm == GranularMethod.ELASTIC)
    is_bb = granular & (gm == GranularMethod.BURLAND_BURBIDGE)

    # Schmertmann own part, per evaluation point
    col_sig_base = np.array(
        [
            float(columns[c].effective_stress(np.array([site.footings[owners[c]].depth]))[0])
            for c in range(len(columns))
        ]
    )
    dp = q_full[seg.footing]
    zrel_top = seg.top - fd[seg.footing]
    zrel_bot = seg.bottom - fd[seg.footing]
    if np.any(is_sch):
        for ver, dg in (("1978", diag78), ("1970", diag70)):
            m = is_sch & (version == ver)
            if not np.any(m):
                continue
            fi = seg.footing[m]
            dgi = sch.Diagram(*(np.asarray(a)[fi] if a is not None else None for a in dg))
            if ver == "1978":
                # σ'vp at the depth of the peak, once per evaluation point
                oc = np.asarray(owners)
                zp_col = fd[oc] + np.asarray(
                    sch.peak_depth(
                        fw[oc],
                        sch.Diagram(*(np.asarray(a)[oc] if a is not None else None for a in dg)),
                    )
                )
                sig_p_col = np.array(
                    [
                        float(col.effective_stress(np.array([z]))[0])
                        for col, z in zip(columns, zp_col)
                    ]
                )
                sig_p = sig_p_col[seg.column[m]]
                peak = sch.peak_factor(dp[m], np.maximum(sig_p, MIN_PEAK_STRESS))
            else:
                peak = None
            integral = sch.influence_integral(zrel_top[m], zrel_bot[m], fw[fi], dgi, peak)
            c1 = sch.embedment_factor(col_sig_base[seg.column[m]], dp[m])
            s1 = c1 * dp[m] * integral / E[m]
            own_s[m] = s1[:, None] * c2[None, :]
            iz[m] = integral / h[m]
            method_of[m] = "schmertmann" if ver == "1978" else "schmertmann_1970"
        # neighbours: elastic strain, with the same creep factor
        m = is_sch & active
        e_nb = elastic.vertical_strain(nb_sz[m], hsum_nb[m], E[m], nu[m])
        nb_s[m] = (e_nb * h[m])[:, None] * c2[None, :]

    if np.any(is_el):
        m = is_el & active
        e_own = elastic.vertical_strain(own_sz[m], hsum_own[m], E[m], nu[m])
        e_nb = elastic.vertical_strain(nb_sz[m], hsum_nb[m], E[m], nu[m])
        own_s[m] = (e_own * h[m])[:, None]
        nb_s[m] = (e_nb * h[m])[:, None]
        method_of[is_el] = "elastic"

    if np.any(is_bb):
        bb_own, bb_E = _burland_burbidge(
            site, columns, seg, is_bb, q_full, fw, lb, fd, own_sz, hsum_own, nu, h
        )
        own_s[is_bb] = bb_own[is_bb][:, None] * ft_bb[None, :]
        m = is_bb & active
        e_nb = elastic.vertical_strain(nb_sz[m], hsum_nb[m], bb_E[m], nu[m])
        nb_s[m] = (e_nb * h[m])[:, None] * ft_bb[None, :]
        method_of[is_bb] = "burland_burbidge"
        E = np.where(is_bb, bb_E, E)

    # ---- cohesive: undrained immediate (optional), consolidation and secondary
    eu = _parameter(columns, seg, "undrained_modulus")
    imm_clay = cohesive & active & np.isfinite(eu) & st.cohesive_immediate
    if np.any(imm_clay):
        m = imm_clay
        hs_o = (1 + UNDRAINED_POISSON) * own_t[m] - own_sz[m]
        hs_n = (1 + UNDRAINED_POISSON) * nb_t[m] - nb_sz[m]
        own_s[m] = (elastic.vertical_strain(own_sz[m], hs_o, eu[m], UNDRAINED_POISSON) * h[m])[
            :, None
        ]
        nb_s[m] = (elastic.vertical_strain(nb_sz[m], hs_n, eu[m], UNDRAINED_POISSON) * h[m])[
            :, None
        ]

    mc = cohesive & active
    if np.any(mc):
        cc = _parameter(columns, seg, "compression_index")
        cr = _parameter(columns, seg, "recompression_index")
        e0 = _parameter(columns, seg, "void_ratio")
        sp = _parameter(columns, seg, "preconsolidation")
        ocr = _parameter(columns, seg, "ocr")
        cv = _parameter(columns, seg, "consolidation_coefficient")
        ca = _parameter(columns, seg, "secondary_index", 0.0)
        tp_given = _parameter(columns, seg, "end_of_primary")
        sp = np.where(np.isfinite(sp), sp, np.where(np.isfinite(ocr), ocr * sig0, sig0))
        cr = np.where(np.isfinite(cr), cr, cc)
        tot_ds = sz_sust
        eps_tot = cons.primary_strain(sig0[mc], tot_ds[mc], sp[mc], cc[mc], cr[mc], e0[mc])
        eps_own = cons.primary_strain(sig0[mc], own_sz_sust[mc], sp[mc], cc[mc], cr[mc], e0[mc])
        # degree of consolidation of the whole stratum at this column
        hdr_all, open_clays = _drainage_paths(columns, seg, influence_depth)
        hdr = hdr_all[mc]
        for name in open_clays:
            warnings.append(
                f"stratum {name}: no bottom in the boreholes; consolidated as drained at its "
                "top only, down to the influence depth"
            )
        tv = cons.time_factor_at(times[None, :], cv[mc][:, None], hdr[:, None])
        U = cons.degree_of_consolidation(tv)
        cons_own[mc] = (eps_own * h[mc])[:, None] * U
        cons_nb[mc] = ((eps_tot - eps_own) * h[mc])[:, None] * U
        tp = cons.end_of_primary_time(st.end_of_primary, cv[mc], hdr, given=tp_given[mc])
        ep = cons.void_ratio_after(e0[mc], eps_tot)
        eps_sec = cons.secondary_strain(ca[mc][:, None], ep[:, None], times[None, :], tp[:, None])
        eps_sec = np.where((tot_ds[mc] > 0)[:, None], eps_sec, 0.0)
        share = np.divide(eps_own, eps_tot, out=np.ones_like(eps_own), where=eps_tot > 0)
        sec_own[mc] = eps_sec * h[mc][:, None] * share[:, None]
        sec_nb[mc] = eps_sec * h[mc][:, None] * (1 - share)[:, None]
        method_of[mc] = "consolidation"
    say("assembling", 0.85)

    # ---- per point, then per footing
    ncol = len(columns)

    def per_column(a: np.ndarray) -> np.ndarray:
        out = np.zeros((ncol, nt))
        np.add.at(out, seg.column, a)
        return out

    imm_c = per_column(own_s + nb_s)
    con_c = per_column(cons_own + cons_nb)
    sec_c = per_column(sec_own + sec_nb)
    own_c = per_column(own_s + cons_own + sec_own)
    nb_c = per_column(nb_s + cons_nb + sec_nb)

    owners_a = np.asarray(owners)
    point_xy = np.full((nf, npts, 2), np.nan)
    point_total = np.full((nf, npts, nt), np.nan)
    res = {k: np.zeros((nf, nt)) for k in ("imm", "con", "sec", "own", "nb")}
    infl = np.zeros(nf)
    first_col = np.searchsorted(owners_a, np.arange(nf))
    last_col = np.searchsorted(owners_a, np.arange(nf), side="right")
    for i in range(nf):
        cs = np.arange(first_col[i], last_col[i])
        for k, a in (("imm", imm_c), ("con", con_c), ("sec", sec_c), ("own", own_c), ("nb", nb_c)):
            res[k][i] = a[cs].mean(axis=0)
        point_xy[i, : len(cs)] = np.array([points[c] for c in cs])
        point_total[i, : len(cs)] = imm_c[cs] + con_c[cs] + sec_c[cs]
        infl[i] = influence_depth[cs].max()

    tilt = np.zeros(nf)
    tilt_dir = np.zeros(nf)
    for i in range(nf):
        ok = np.isfinite(point_xy[i, :, 0])
        if ok.sum() >= 3:
            tilt[i], tilt_dir[i] = checks_mod.footing_tilt(
                point_xy[i, ok], point_total[i, ok, i_life]
            )

    methods = []
    for i in range(nf):
        lo, hi = seg.offsets[first_col[i]], seg.offsets[last_col[i]]
        ms = sorted({str(x) for x in method_of[lo:hi] if x})
        methods.append(" + ".join(ms) if ms else "none")

    life_own = own_s[:, i_life] + cons_own[:, i_life] + sec_own[:, i_life]
    life_nb = nb_s[:, i_life] + cons_nb[:, i_life] + sec_nb[:, i_life]
    rows = {  # per-sublayer columns of the calculation sheet, at the design life
        "sigma_v0": sig0,
        "own_stress": np.where(cohesive, own_sz_sust, own_sz),
        "neighbour_stress": np.where(cohesive, sz_sust - own_sz_sust, nb_sz),
        "strain": np.divide(life_own + life_nb, h, out=np.zeros_like(h), where=h > 0),
        "own_settlement": life_own,
        "neighbour_settlement": life_nb,
        "influence": iz,
        "modulus": np.where(granular, E, np.where(imm_clay, eu, np.nan)),
    }
    traces = _traces(site, seg, columns, owners, points, method_of, rows)
    outside = np.asarray(
        ground.outside_hull([f.x for f in site.footings], [f.y for f in site.footings]), dtype=bool
    )
    for i in np.flatnonzero(outside):
        warnings.append(
            f"footing {site.footings[i].id} lies outside the boreholes' hull: "
            "its ground is extrapolated"
        )

    results = Results(
        site=site,
        times=times,
        design_life_index=i_life,
        immediate=res["imm"],
        consolidation=res["con"],
        secondary=res["sec"],
        own=res["own"],
        neighbours=res["nb"],
        point_xy=point_xy,
        point_total=point_total,
        tilt=tilt,
        tilt_direction=tilt_dir,
        net_pressure=q_full,
        sustained_net_pressure=q_sust,
        influence_depth=infl,
        methods=tuple(methods),
        outside_hull=outside,
        traces=traces,
        warnings=tuple(warnings),
    )
    total_life = results.at_design_life("total")
    for i in np.flatnonzero(total_life > FAILURE_SETTLEMENT_RATIO * fw):
        f = site.footings[i]
        warnings.append(
            f"footing {f.id} settles {total_life[i] * 1000:.0f} mm, more than "
            f"{FAILURE_SETTLEMENT_RATIO:.0%} of its width ({f.width:g} m): beyond the range "
            "of the settlement methods (a settlement of 0.1 B is commonly taken as bearing "
            "failure); check the moduli, the loads and their units"
        )
    smap = None
    if with_map:
        say("settlement map", 0.9)
        smap = settlement_map(site, ground, results, loads_full, loads_sust, warnings)
    chk = None
    if with_checks:
        chk = checks_mod.check_movements(
            site.footings,
            times,
            results.total,
            point_xy,
            point_total,
            site.checks,
            design_life_index=i_life,
        )
    say("done", 1.0)
    return Results(**{**results.__dict__, "map": smap, "checks": chk, "warnings": tuple(warnings)})


def _drainage_paths(
    columns: list, seg: _Segments, influence_depth: np.ndarray
) -> tuple[np.ndarray, list[str]]:
    """Drainage path H_dr of the cohesive stratum of every sublayer [m].

    From the stratum's thickness at that column and its drainage boundaries. A
    cohesive stratum that is the last one (no bottom found in the boreholes) is
    taken as drained at its top only, over the thickness down to the influence
    depth — a tool choice, reported as a warning.
    """
    hdr = np.zeros(len(seg.top))
    notes: list[str] = []
    for c, col in enumerate(columns):
        m = seg.rows(c)
        th = np.asarray(col.bottoms, float) - np.asarray(col.tops, float)
        frac = np.array([cons.DRAINAGE_PATH_FRACTION[s.drainage] for s in col.strata])
        open_ended = ~np.isfinite(th)
        th = np.where(
            open_ended, np.maximum(influence_depth[c] - np.asarray(col.tops, float), 0.0), th
        )
        frac = np.where(open_ended, 1.0, frac)
        hdr[m] = (th * frac)[seg.stratum[m]]
        k = seg.stratum[m]
        for j in np.unique(k[open_ended[k]]):
            if col.strata[j].behaviour == Behaviour.COHESIVE:
                notes.append(col.strata[j].name)
    return hdr, sorted(set(notes))


def _burland_burbidge(site, columns, seg, is_bb, q_full, fw, lb, fd, own_sz, hsum_own, nu, h):
    """Burland & Burbidge (1985) own settlement per sublayer share, and an equivalent modulus.

    The method gives one settlement per footing point: it is spread over the
    granular sublayers inside the zone of influence z1 in proportion to their
    thickness (for the trace only). The equivalent modulus is the one with which
    elastic strain integration of the footing's own stress over z1 gives the same
    settlement; it carries the neighbours' stress on that stratum (a tool
    extension: the 1985 method is a single-footing correlation).
    """
    own = np.zeros(len(seg.top))
    e_eq = np.full(len(seg.top), np.nan)
    n_all = _parameter(columns, seg, "spt_n")
    for c in np.unique(seg.column[is_bb]):
        m = seg.indices(c)
        i = seg.footing[m[0]]
        col = columns[c]
        B = fw[i]
        z1 = float(bb.influence_depth(B))
        zr = seg.top[m] - fd[i]
        in_zone = (zr < z1) & is_bb[m]
        if not np.any(in_zone):
            continue
        n = n_all[m]
        gravel = np.array([col.strata[k].gravel for k in seg.stratum[m]])
        fine = np.array([col.strata[k].fine_or_silty for k in seg.stratum[m]])
        below_water = seg.mid[m] > col.water_depth
        n_c = bb.corrected_n(n, gravel=gravel, fine_or_silty_below_water=fine & below_water)
        w = np.minimum(seg.bottom[m] - fd[i], z1) - np.maximum(zr, 0.0)
        w = np.where(in_zone, np.clip(w, 0.0, None), 0.0)
        n_mean = float(np.sum(w * n_c) / np.sum(w))
        ic = bb.compressibility_index(n_mean)
        non_gran = [
            k
            for k, s in enumerate(col.strata)
            if s.behaviour != Behaviour.GRANULAR
            and col.bottoms[k] > fd[i]
            and col.bottoms[k] - col.tops[k] > 0
        ]
        hs = (float(col.tops[non_gran[0]]) - fd[i]) if non_gran else np.inf
        fl = float(bb.thickness_factor(max(hs, 0.0), z1))
        fs = float(bb.shape_factor(lb[i]))
        k0 = seg.stratum[m[0]]
        sp = col.strata[k0].preconsolidation
        s_i = float(bb.immediate_settlement(q_full[i], B, ic, sp))
        s = fs * fl * s_i
        own[m] = np.where(w > 0, s * w / np.sum(w), 0.0)
        # equivalent modulus: elastic own settlement over the zone with E = 1 kPa
        unit = np.sum(elastic.vertical_strain(own_sz[m], hsum_own[m], 1.0, nu[m]) * w)
        slope = (
            s / q_full[i]
            if q_full[i] > 0
            else fs * fl * float(bb.immediate_settlement(1.0, B, ic, None))
        )
        unit_q = unit / q_full[i] if q_full[i] > 0 else np.nan
        e_eq[m] = unit_q / slope if slope > 0 and np.isfinite(unit_q) else np.nan
    return own, e_eq


def _traces(site, seg, columns, owners, points, method_of, rows: dict[str, np.ndarray]):
    """One :class:`Trace` per evaluation point: the sublayer slices of ``rows``."""
    out: dict[str, list[Trace]] = {f.id: [] for f in site.footings}
    for c, col in enumerate(columns):
        m = seg.rows(c)
        out[site.footings[owners[c]].id].append(
            Trace(
                point=(float(points[c][0]), float(points[c][1])),
                top=seg.top[m],
                bottom=seg.bottom[m],
                stratum=tuple(col.strata[j].name for j in seg.stratum[m]),
                method=tuple(str(x) if x else "below influence depth" for x in method_of[m]),
                **{name: values[m] for name, values in rows.items()},
            )
        )
    return {key: tuple(v) for key, v in out.items()}


# --------------------------------------------------------------------------- map


def settlement_map(
    site: Site,
    ground: Ground,
    results: Results,
    loads_full: stress.Loads,
    loads_sust: stress.Loads,
    notes: list[str] | None = None,
) -> SettlementMap:
    """Ground-surface settlement at the design life on a regular grid over the plan.

    Elastic strain integration of the superposed stresses on granular strata
    (E as given, 2.5·qc from cone data — Schmertmann, Hartman & Brown 1978
    axisymmetric factor — or, for SPT-only strata, the mean equivalent modulus of
    the footings' Burland & Burbidge results) and e–log σ' consolidation with
    Terzaghi time on cohesive strata; from the shallowest footing base down to the
    deepest influence depth of the footings, and at each grid point only as deep as
    the footings' rule allows (Δσz ≥ ``influence_fraction``·σ'v0). Grid points inside a
    footing take the footing's own computed settlement.
    """
    from sitesettle.mapping import default_grid

    st = site.analysis
    notes = [] if notes is None else notes
    gx, gy = default_grid(site.footings, st.map_spacing, st.map_margin)
    if st.map_spacing > 0 and len(gx) > 1 and gx[1] - gx[0] > st.map_spacing * (1 + 1e-9):
        notes.append(
            f"settlement map: spacing {st.map_spacing:g} m coarsened to {gx[1] - gx[0]:g} m "
            "to keep the grid within its size limit"
        )
    X, Y = np.meshgrid(gx, gy)
    z_top = min(f.depth for f in site.footings)
    z_bot = float(np.max(results.influence_depth))
    flat = np.zeros(X.size)
    edges_cache: dict = {}  # regular depth edges, shared by grid points with the same bottom
    seg_info = []
    for g, col in enumerate(ground.columns(X.ravel(), Y.ravel())):
        rigid = [
            k
            for k, s in enumerate(col.strata)
            if s.behaviour == Behaviour.RIGID and col.bottoms[k] - col.tops[k] > 0
        ]
        bot = min(z_bot, float(col.tops[rigid[0]])) if rigid else z_bot
        if bot <= z_top:
            continue
        key = (round(bot, 3),)
        if key not in edges_cache:
            n = max(8, int(math.ceil((bot - z_top) / max(0.25, (bot - z_top) / 40))))
            edges_cache[key] = np.linspace(z_top, bot, n + 1)
        e = edges_cache[key]
        bounds = np.concatenate([col.tops, col.bottoms])
        e = np.unique(np.concatenate([e, bounds[(bounds > z_top) & (bounds < bot)]]))
        mid = 0.5 * (e[:-1] + e[1:])
        seg_info.append((g, col, e, mid))
    if not seg_info:
        return SettlementMap(gx, gy, np.zeros_like(X), "no compressible ground")
    pts = np.concatenate(
        [
            np.column_stack([np.full(len(m), X.ravel()[g]), np.full(len(m), Y.ravel()[g]), m])
            for g, col, e, m in seg_info
        ]
    )
    sz, t = stress.stress_sums(loads_full, pts, tolerance=st.stress_tolerance)
    sz_s, _ = stress.stress_sums(loads_sust, pts, tolerance=st.stress_tolerance)
    bb_e = _mean_equivalent_modulus(results)
    flat[[g for g, *_ in seg_info]] = _map_column_settlements(
        site, ground, seg_info, X.ravel(), Y.ravel(), sz, t, sz_s, bb_e
    )
    S = flat.reshape(X.shape)
    # inside a footing: its own computed value
    tot = results.at_design_life("total")
    for i, f in enumerate(site.footings):
        xmin, ymin = f.outline.min(axis=0)
        xmax, ymax = f.outline.max(axis=0)
        jj = np.flatnonzero((gx >= xmin) & (gx <= xmax))
        ii = np.flatnonzero((gy >= ymin) & (gy <= ymax))
        for a in ii:
            for b in jj:
                if _inside(f.outline, np.array([gx[b], gy[a]])):
                    S[a, b] = tot[i]
    return SettlementMap(
        gx,
        gy,
        S,
        "elastic strain integration (granular) + e–log σ' consolidation "
        "(cohesive) of the superposed Boussinesq stress; footings: own computed values",
    )


def _map_column_settlements(site, ground, seg_info, xs, ys, sz, t, sz_s, bb_e) -> np.ndarray:
    """Settlement at the design life of each map column of ``seg_info`` [m].

    All sublayers of all columns at once, stratum by stratum: elastic strain on
    granular strata (E as given, 2.5·qc, or the mean Burland & Burbidge
    equivalent modulus), e–log σ' consolidation with Terzaghi time and secondary
    compression on cohesive ones, each column down to its deepest sublayer where
    Δσz ≥ ``influence_fraction``·σ'v0 (the footings' rule). A stratum's values
    may differ between columns (measured interval values), so they are gathered
    per column.
    """
    st = site.analysis
    life = st.design_life
    ncol = len(seg_info)
    lens = np.array([len(m) for *_, m in seg_info])
    first = np.cumsum(lens) - lens
    col = np.repeat(np.arange(ncol), lens)
    k = np.concatenate([np.asarray(c.index_at(m), dtype=int) for _, c, _, m in seg_info])
    sig0 = np.concatenate([c.effective_stress(m) for _, c, _, m in seg_info])
    h = np.concatenate([np.diff(e) for _, _, e, _ in seg_info])
    mid = np.concatenate([m for *_, m in seg_info])
    gx = xs[[g for g, *_ in seg_info]]
    gy = ys[[g for g, *_ in seg_info]]
    # down to the deepest sublayer of its column where Δσz ≥ fraction·σ'v0
    strong = sz >= st.influence_fraction * np.maximum(sig0, 1e-9)
    pos = np.arange(len(mid)) - first[col]
    last = np.full(ncol, -1)
    np.maximum.at(last, col[strong], pos[strong])
    live = pos <= last[col]
    total = np.zeros(ncol)

    def per_column(j, cols, get):
        """A value of stratum j per sublayer, read from each column's own stratum."""
        u, inv = np.unique(cols, return_inverse=True)
        vals = [get(seg_info[c][1].strata[j], seg_info[c][1]) for c in u]
        return vals, inv

    def num(v):
        return np.nan if v is None else float(v)

    for j, stratum in enumerate(site.strata):
        m = np.flatnonzero((k == j) & live)
        if len(m) == 0:
            continue
        cm = col[m]
        if stratum.behaviour == Behaviour.GRANULAR:
            vals, inv = per_column(
                j,
                cm,
                lambda s, c: (
                    num(s.youngs_modulus),
                    bool(s.use_soundings),
                    num(s.cone_resistance),
                    float(s.poisson),
                ),
            )
            e_given, sound, qc, nu = (np.array(v)[inv] for v in zip(*vals))
            E = e_given.copy()  # NaN where the stratum gives no modulus
            use = ~np.isfinite(e_given) & sound
            if use.any():
                E[use] = 2.5 * ground.cone_resistance(gx[cm[use]], gy[cm[use]], mid[m[use]])
            use = ~np.isfinite(e_given) & ~sound & np.isfinite(qc)
            E[use] = 2.5 * qc[use]
            use = ~np.isfinite(e_given) & ~sound & ~np.isfinite(qc)
            E[use] = bb_e.get(stratum.name, np.nan)
            hs = (1 + nu) * t[m] - sz[m]
            eps = elastic.vertical_strain(sz[m], hs, E, nu)
            part = eps * h[m]
            total += np.bincount(cm, weights=np.where(np.isnan(part), 0.0, part), minlength=ncol)
        elif stratum.behaviour == Behaviour.COHESIVE:
            vals, inv = per_column(
                j,
                cm,
                lambda s, c, j=j: (
                    num(s.preconsolidation),
                    num(s.ocr),
                    float(s.compression_index),
                    num(s.recompression_index),
                    float(s.void_ratio),
                    float(s.consolidation_coefficient),
                    float(c.bottoms[j] - c.tops[j]),
                    str(s.drainage),
                    num(s.end_of_primary),
                    float(s.secondary_index),
                ),
            )
            cols = [np.array(v)[inv] for v in zip(*vals)]
            sp_given, ocr, cc, cr, e0, cv, th, drainage, tp_given, ca = cols
            s0 = sig0[m]
            sp = np.where(np.isfinite(sp_given), sp_given, np.where(np.isfinite(ocr), ocr * s0, s0))
            cr = np.where(np.isfinite(cr), cr, cc)
            eps = cons.primary_strain(s0, sz_s[m], sp, cc, cr, e0)
            hdr = np.zeros(len(m))
            for d in np.unique(drainage):
                hdr[drainage == d] = cons.drainage_path(th[drainage == d], d)
            U = cons.degree_of_consolidation(cons.time_factor_at(life, cv, hdr))
            tp = cons.end_of_primary_time(st.end_of_primary, cv, hdr, given=tp_given)
            ep = cons.void_ratio_after(e0, eps)
            sec = cons.secondary_strain(ca, ep, life, tp)
            sec = np.where(sz_s[m] > 0, sec, 0.0)
            total += np.bincount(cm, weights=(eps * U + sec) * h[m], minlength=ncol)
    return total


def _mean_equivalent_modulus(results: Results) -> dict[str, float]:
    """Mean equivalent modulus of the Burland & Burbidge footings per stratum (for the map)."""
    vals: dict[str, list[float]] = {}
    for traces in results.traces.values():
        for tr in traces:
            for name, meth, e in zip(tr.stratum, tr.method, tr.modulus):
                if meth == "burland_burbidge" and np.isfinite(e):
                    vals.setdefault(name, []).append(float(e))
    return {k: float(np.median(v)) for k, v in vals.items()}


# --------------------------------------------------------------------------- section


def worst_pair_section(results: Results, *, samples: int = 80):
    """A section through the stratigraphy along the line of the most utilised pair.

    The line runs through the two footing centres and extends beyond each by half
    the span (at least 3 m); it reaches the deepest influence depth of the two
    footings. Returns None when there are no checked pairs.
    """
    from sitesettle.mapping import Section, SectionFooting

    chk = results.checks
    if chk is None or len(chk.pairs.a) == 0:
        return None
    site = results.site
    u = np.nan_to_num(np.asarray(chk.pairs.utilisation, float), nan=-1.0)
    k = int(np.argmax(u))
    a, b = site.footings[int(chk.pairs.a[k])], site.footings[int(chk.pairs.b[k])]
    pa, pb = np.array([a.x, a.y]), np.array([b.x, b.y])
    span = float(np.hypot(*(pb - pa)))
    d = (pb - pa) / span if span > 0 else np.array([1.0, 0.0])
    ext = max(0.5 * span, 3.0)
    start, end = pa - ext * d, pb + ext * d
    dist = np.linspace(0.0, span + 2 * ext, samples)
    ground = Ground(site)
    tops, water = [], []
    for s in dist:
        col = ground.column(*(start + s * d))
        tops.append(col.tops)
        water.append(col.water_depth)
    ia, ib = int(chk.pairs.a[k]), int(chk.pairs.b[k])
    bottom = float(max(results.influence_depth[ia], results.influence_depth[ib])) * 1.1
    tot = results.at_design_life()

    def along(f: Footing) -> float:
        return float(np.dot(np.array([f.x, f.y]) - start, d))

    def width_along(f: Footing) -> float:
        ax_l, _ = f.axes()
        c = abs(float(np.dot(ax_l, d)))
        return float(f.length * c + f.width * math.sqrt(max(0.0, 1 - c * c)))

    feet = tuple(
        SectionFooting(f.id, along(f), width_along(f), f.depth, float(tot[i]))
        for i, f in ((ia, a), (ib, b))
    )
    return Section(
        start=tuple(start),
        end=tuple(end),
        distance=dist,
        strata=tuple(s.name for s in site.strata),
        tops=np.array(tops).T,
        bottom=bottom,
        water_depth=np.array(water),
        footings=feet,
        behaviours=tuple(str(s.behaviour) for s in site.strata),
        title=f"Section through {a.id} and {b.id} (most utilised pair)",
    )
