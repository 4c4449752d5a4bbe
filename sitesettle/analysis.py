"""Orchestration: Site → settlement of every footing, map and query point over time → Results.

One settlement engine for every place (docs/methods.md §2). The flow of one point,
from site to result, is :func:`analyse`:

1. :func:`prepare` — the ground, the report times, the net pressure of every
   footing (``q_net = P/A + γ_f D − σ_v0(D)``, DESIGN §3) and the stress-engine loads;
2. evaluation columns (:mod:`sitesettle.columns`): each footing's characteristic
   points or strip stations, the query points, the map grid;
3. :func:`integrate` — sublayers, superposed Boussinesq stresses and the strain
   of every sublayer by its stratum's method (:mod:`sitesettle.field`), column by
   column down to a rigid stratum or until the bounded remainder is under 0.5 %;
4. :func:`sitesettle.field.histories` — settlement over time per sublayer
   (creep, consolidation with the real load profile, secondary compression);
5. assembly — per column, then per footing (rigid mean, strip stations, tilt),
   query points and the map; traces; the movement checks.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, replace
from dataclasses import field as dc_field

import numpy as np

from sitesettle import budget, stress
from sitesettle import checks as checks_mod
from sitesettle import columns as colmod
from sitesettle import field as fld
from sitesettle.columns import GroundColumns, Points
from sitesettle.errors import InputError
from sitesettle.ground import Ground
from sitesettle.options import Behaviour, DepthRule, LargePlan
from sitesettle.results import QueryResults, Results, SettlementMap, Trace
from sitesettle.site import Footing, LoadStage, Site

#: a settlement above this fraction of the footing width is beyond the small-strain
#: methods (the 0.1 B criterion of plate and footing load tests, common practice); on
#: loading it is the checks' bearing-failure status, over time a warning
FAILURE_SETTLEMENT_RATIO = checks_mod.BEARING_PROXY
#: at most this many distinct load-plane depths are made sublayer boundaries
MAX_LOAD_PLANES = 32
#: why a column's integration stopped (Integration.reason)
STOP_RIGID = "top of a rigid stratum"
STOP_CAP = "a depth cap of [analysis] (max_depth / max_depth_widths)"
STOP_DEEPEST = "the deepest integration allowed"
STOP_BOUND = "the remaining settlement is bounded below the tolerance"
#: warn when more than this share of a footing's settlement comes from below the
#: deepest borehole or sounding (the ground there is assumed, not investigated)
ASSUMED_GROUND_SHARE = 0.10

Progress = Callable[[str, float], None]


def characteristic_points(footing: Footing) -> np.ndarray:
    """Plan points where a footing's settlement is evaluated, (n, 2) [m].

    See :func:`sitesettle.columns.footing_point_layout` (centre, the four
    characteristic points of a rigid footing, or stations along a strip).
    """
    return colmod.footing_point_layout(footing)[0]


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


def area_loads(loads) -> stress.Loads:
    """Stress-engine loads of the site's area loads (uniform polygons, in order)."""
    return stress.Loads.polygons(
        [np.asarray(a.outline, float) for a in loads],
        np.array([a.pressure for a in loads], float),
        np.array([a.depth for a in loads], float),
    )


def pressure_parts(site: Site, ground: Ground) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Per footing: the dead part of the net pressure (with the fill and the removed
    overburden), the live pressure and its sustained part [kPa]."""
    fs = site.footings
    if not fs:
        return np.zeros(0), np.zeros(0), np.zeros(0)
    xy = np.array([[f.x, f.y] for f in fs], dtype=float)
    depth = np.array([f.depth for f in fs], dtype=float)
    gc = GroundColumns.build(ground, xy)
    s0 = gc.total_stress(np.arange(len(fs)), depth)  # under each centre, at its base
    s0 = np.where(np.isnan(depth) | (depth < 0), np.nan, s0)  # as Column.total_stress
    area = np.array([f.area for f in fs], dtype=float)
    dead_load = np.array([f.dead_load for f in fs], dtype=float)
    live_load = np.array([f.live_load for f in fs], dtype=float)
    fill = np.array([f.fill_unit_weight for f in fs], dtype=float)
    frac = np.array([f.sustained_live_fraction for f in fs], dtype=float)
    extra = fill * depth - s0
    return dead_load / area + extra, live_load / area, frac * live_load / area


def net_pressures(site: Site, ground: Ground) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Net base pressure of every footing, full service and sustained [kPa].

    ``q_net = P/A + γ_f·D − σ_v0(D)`` with σ_v0 the total overburden at base level
    under the footing centre (DESIGN §3; γ_f default 20 kN/m³, common practice).
    A negative net pressure (a footing lighter than the soil it replaces) unloads
    the ground: granular strata rebound with the unloading modulus and clay swells
    on Cr (docs/methods.md §4.7), with a warning that names the footing.
    """
    return _net_from_parts(site, *pressure_parts(site, ground))


def _net_from_parts(site: Site, dead, live, sust) -> tuple[np.ndarray, np.ndarray, list[str]]:
    qf, qs = dead + live, dead + sust
    warn = [
        f"footing {f.id}: net pressure {min(a, b):.1f} kPa < 0: it unloads the ground, "
        f"which rebounds (granular strata with {fld.UNLOADING_MODULUS_RATIO:g} × E, clay "
        "swelling on Cr)"
        for f, a, b in zip(site.footings, qf, qs)
        if a < 0 or b < 0
    ]
    return qf, qs, warn


def resolve_excavations(site: Site, ground: Ground) -> Site:
    """Area loads given as excavations get their pressure: minus the overburden removed.

    An excavation to depth d unloads its base by the total vertical stress σv0(d)
    there (at the centroid of its outline: water and strata as the boreholes give
    them), applied at depth d as a negative uniform pressure.
    """
    if not any(a.excavation_depth > 0 for a in site.area_loads):
        return site
    out = []
    for a in site.area_loads:
        if a.excavation_depth > 0:
            cx, cy = np.asarray(a.outline, float).mean(axis=0)
            col = ground.columns([cx], [cy])[0]
            s0 = float(col.total_stress(np.array([a.excavation_depth]))[0])
            a = replace(
                a,
                pressure=-s0,
                depth=a.excavation_depth,
                description=f"excavation {a.excavation_depth:g} m deep: {-s0:.1f} kPa "
                "(the overburden removed)",
            )
        out.append(a)
    return replace(site, area_loads=tuple(out))


def load_stages(site: Site) -> tuple[LoadStage, ...]:
    """The load history: the site's stages, or the default one.

    By default the dead load and every area load arrive at time 0 and the live load
    just after ``[checks] checked_after`` (:func:`live_load_start`; at time 0 when it
    is 0).
    """
    if site.stages:
        return site.stages
    names = tuple(a.name for a in site.area_loads)
    tl = live_load_start(site)
    if tl > 0:
        return (
            LoadStage("dead load", 0.0, 0.0, dead=1.0, area_loads=names),
            LoadStage("live load", tl, 0.0, live=1.0),
        )
    return (LoadStage("all loads", 0.0, 0.0, dead=1.0, live=1.0, area_loads=names),)


# --------------------------------------------------------------------------- stage 1


@dataclass
class Context:
    """What every stage shares: ground, times, pressures, loads, warnings."""

    site: Site
    ground: Ground
    times: np.ndarray
    life: int
    q_full: np.ndarray
    q_sust: np.ndarray
    loads_full: stress.Loads
    loads_sust: stress.Loads
    load_of: np.ndarray
    warnings: list[str]
    #: the load history (:func:`load_stages`) and, for each stage but the last, the
    #: loads applied once it is complete: (q_full, q_sust, loads_full, loads_sust)
    stages: tuple[LoadStage, ...] = ()
    states: tuple = ()

    @property
    def total_load(self) -> float:
        """Σ |q|·A over the footings and area loads [kN] (for the depth bound)."""
        areas = np.array([f.area for f in self.site.footings])
        extra = sum(abs(a.pressure) * a.area for a in self.site.area_loads)
        return float(np.sum(np.abs(self.q_full) * areas) + extra)

    @property
    def load_depth(self) -> float:
        """Depth of the deepest load plane [m]."""
        depths = [f.depth for f in self.site.footings] + [a.depth for a in self.site.area_loads]
        return float(max(depths, default=0.0))


def prepare(site: Site) -> Context:
    """Stage 1: ground, report times, net pressures and the stress-engine loads."""
    st = site.analysis
    ground = Ground(site)
    site = resolve_excavations(site, ground)
    stages = load_stages(site)
    check_stages(site, stages)
    marks = [t for stg in stages for t in (stg.start, stg.end)]
    times = np.unique(np.array([*st.report_times, st.design_life, *marks], dtype=float))
    times = times[times > 0]
    life = int(np.argmin(np.abs(times - st.design_life)))
    parts = pressure_parts(site, ground)
    q_full, q_sust, warnings = _net_from_parts(site, *parts)
    loads_full, load_of = footing_loads(site.footings, q_full)
    order = np.argsort(load_of)
    loads_sust = loads_full.with_pressure(q_sust[order])
    area_p = np.array([a.pressure for a in site.area_loads], float)
    if site.area_loads:  # after the footings' loads: load_of is unchanged
        area = area_loads(site.area_loads)
        loads_full = stress.Loads.concat(loads_full, area)
        loads_sust = stress.Loads.concat(loads_sust, area)  # permanent: sustained in full
    states = []
    if len(stages) > 1:
        dead, live, sust = parts
        cd = np.cumsum([stg.dead for stg in stages])
        cl = np.cumsum([stg.live for stg in stages])
        first = {}
        for k, stg in enumerate(stages):
            for name in stg.area_loads:
                first.setdefault(name, k)
        area_stage = np.array([first.get(a.name, 0) for a in site.area_loads], dtype=int)
        for k in range(len(stages) - 1):
            qf = np.maximum(cd[k] * dead + cl[k] * live, 0.0)
            qs = np.maximum(cd[k] * dead + cl[k] * sust, 0.0)
            ap = np.where(area_stage <= k, area_p, 0.0)
            states.append(
                (
                    qf,
                    qs,
                    loads_full.with_pressure(np.concatenate([qf[order], ap])),
                    loads_full.with_pressure(np.concatenate([qs[order], ap])),
                )
            )
    return Context(
        site,
        ground,
        times,
        life,
        q_full,
        q_sust,
        loads_full,
        loads_sust,
        load_of,
        warnings,
        stages,
        tuple(states),
    )


def check_stages(site: Site, stages) -> None:
    """The stages apply every load exactly once (InputError naming what is wrong)."""
    where = "site.toml [[stages]]"
    for name, total, used in (
        ("dead", sum(stg.dead for stg in stages), True),
        ("live", sum(stg.live for stg in stages), any(f.live_load > 0 for f in site.footings)),
    ):
        if used and abs(total - 1.0) > 1e-6:
            raise InputError(
                where,
                f"the stages apply {total:g} of the {name} load",
                f"{name} fractions that add up to 1 over the stages",
            )
    known = {a.name for a in site.area_loads}
    seen: set[str] = set()
    for stg in stages:
        for name in stg.area_loads:
            if name not in known:
                raise InputError(
                    f"{where} (\"{stg.name}\"), key 'area_loads'",
                    f'unknown area load "{name}"',
                    f"one of the [[area_loads]] names: {', '.join(sorted(known)) or 'none'}",
                )
            if name in seen:
                raise InputError(
                    f"{where} (\"{stg.name}\"), key 'area_loads'",
                    f'the area load "{name}" is applied twice',
                    "each area load in one stage",
                )
            seen.add(name)


def live_load_start(site: Site) -> float:
    """When the live load arrives [yr]: just after ``[checks] checked_after`` by default.

    The dead load (and every area load) is applied at time 0; the live load — the
    finishes' occupants, stored goods, the part of the load that comes once the
    building is in use — arrives when the structure is complete, so the movement
    checked after ``checked_after`` includes its settlement on loading. 0 when there
    is no live load, nothing is checked after a time, or ``[analysis] live_load_from
    = "start"``.
    """
    t = float(site.checks.checked_after)
    has_live = any(f.live_load > 0 for f in site.footings)
    if site.analysis.live_load_from != "checked_after" or t <= 0 or not has_live:
        return 0.0
    return t


# --------------------------------------------------------------------------- stage 2


def evaluation_points(site: Site, *, with_map: bool) -> tuple[Points, dict]:
    """Stage 2: every column — footing points, query points, map grid — and where each is."""
    from sitesettle.mapping import default_grid

    st = site.analysis
    feet = colmod.footing_points(site.footings)
    scale = float(np.median([f.width for f in site.footings])) if site.footings else 1.0
    query = colmod.free_points(
        [[p.x, p.y] for p in site.points], [p.depth for p in site.points], scale, "query"
    )
    grid = colmod.free_points(np.zeros((0, 2)), 0.0, scale, "map")
    layout = {"grid": None}
    if with_map and site.footings:
        gx, gy = default_grid(site.footings, st.map_spacing, st.map_margin)
        X, Y = np.meshgrid(gx, gy)
        grid = colmod.free_points(np.column_stack([X.ravel(), Y.ravel()]), 0.0, scale, "map")
        layout["grid"] = (gx, gy)
    pts = Points.concat(feet, query, grid)
    layout["footing"] = np.flatnonzero(pts.kind == "footing")
    layout["query"] = np.flatnonzero(pts.kind == "query")
    layout["map"] = np.flatnonzero(pts.kind == "map")
    return pts, layout


# --------------------------------------------------------------------------- stage 3


@dataclass
class Integration:
    """The sublayers of every column with their strains, and how deep each column went."""

    sub: fld.Sublayers
    bottom: np.ndarray  # (n_columns,) depth where the integration stopped [m]
    reason: np.ndarray  # (n_columns,) why it stopped there (text)
    bound: np.ndarray  # (n_columns,) bound of what lies below [m]
    own_notes: dict[int, list[str]]
    spt_modulus: dict[str, float]
    #: (n_sub,) the sublayers of the first pass (where the own-load methods apply)
    first_pass: np.ndarray | None = None
    own_params: dict[int, dict[str, float]] = dc_field(default_factory=dict)
    #: (n_columns,) 0 footing, 1 query point, 2 map: the points of each kind are
    #: summed apart (:func:`_stresses`)
    column_group: np.ndarray | None = None
    #: (n_states, 3, n_sub) superposed σz, T and sustained σz of the loads of every
    #: stage but the last (``Context.states``), summed with the full loads
    stage_stress: np.ndarray | None = None


#: the kinds of column whose stresses are summed in separate calls
_GROUP_OF_KIND = {"footing": 0, "query": 1, "map": 2}


def _column_groups(kind) -> np.ndarray:
    return np.array([_GROUP_OF_KIND.get(k, 2) for k in kind], dtype=int)


def _field_modulus_min(ctx, tab, gc, cols, z, spt_modulus) -> np.ndarray:
    """(n, k) smallest field modulus of every granular stratum below depth z [kPa]."""
    n, k = len(cols), tab.behaviour.shape[1]
    out = np.full((n, k), np.nan)
    for j in range(k):
        e = tab.youngs[cols, j].copy()
        meth = tab.method[cols, j]
        factor = np.where(
            meth == "schmertmann_1970", fld.FIELD_CONE_FACTOR["1970"], fld.FIELD_CONE_FACTOR["1978"]
        )
        qc = tab.qc[cols, j].copy()
        snd = tab.sound[cols, j] & np.isnan(e)
        if snd.any():
            zz = np.maximum(z[snd], gc.tops[cols[snd], j])
            qc[snd] = ctx.ground.cone_minimum_below(gc.x[cols[snd]], gc.y[cols[snd]], zz)
        e = np.where(np.isnan(e), factor * qc, e)
        e = np.where(np.isnan(e), spt_modulus.get(tab.names[j], np.nan), e)
        out[:, j] = e
    return out


def integrate(
    ctx: Context, pts: Points, gc: GroundColumns, tab: fld.Tables, say: Progress
) -> Integration:
    """Stage 3: sublayers, stresses and strains, each column as deep as the depth rule needs.

    Every column starts at its base. The first pass reaches
    max(:data:`~sitesettle.columns.FIRST_REACH_WIDTHS` widths,
    :data:`~sitesettle.columns.FIRST_REACH_METRES`) below it; a column is then
    deepened (×:data:`~sitesettle.columns.DEEPEN_FACTOR` in depth below its base)
    until a rigid stratum, a cap the user set, or until the bound of the settlement
    still below (:func:`sitesettle.columns.tail_bound`) is under
    ``truncation_tolerance`` of the column's settlement (or under
    :data:`~sitesettle.columns.ABSOLUTE_TAIL`).
    """
    site = ctx.site
    st = site.analysis
    n = len(pts)
    rigid = gc.rigid_top()
    user_cap = np.full(n, np.inf)
    if math.isfinite(st.max_depth):
        user_cap = np.minimum(user_cap, st.max_depth)
    if math.isfinite(st.max_depth_widths):
        user_cap = np.minimum(user_cap, pts.base + st.max_depth_widths * pts.scale)
    stop = np.minimum(np.minimum(rigid, user_cap), colmod.MAX_INTEGRATION_DEPTH)
    planes = np.unique([f.depth for f in site.footings] + [a.depth for a in site.area_loads])[
        :MAX_LOAD_PLANES
    ]
    reach = np.maximum(colmod.FIRST_REACH_WIDTHS * pts.scale, colmod.FIRST_REACH_METRES)
    z_from = pts.base.copy()
    z_to = np.minimum(stop, pts.base + reach)
    estimate = np.zeros(n)
    creep_life = fld.creep_factors(np.array([ctx.times[ctx.life]]), st.bb_r3, st.bb_r)[:, 0]
    creep_tab = creep_life[fld.creep_kinds(tab.method)] if tab.method.size else np.ones((n, 0))
    templates: dict = {}
    parts: list[fld.Sublayers] = []
    active = z_to > z_from + 1e-9
    bound = np.full(n, np.inf)
    spt_modulus: dict[str, float] = {}
    own_notes: dict[int, list[str]] = {}
    own_params: dict[int, dict[str, float]] = {}
    groups = _column_groups(pts.kind)
    staged: list = []  # per pass, the stresses of the stages' load states
    first = True
    passes = 0
    while active.any():
        passes += 1
        cols = np.flatnonzero(active)
        bnd = np.hstack([gc.tops[cols], np.broadcast_to(planes, (len(cols), len(planes)))])
        row, top, bot = colmod.many_column_edges(
            pts.base[cols],
            pts.scale[cols],
            st.sublayer_fraction,
            z_from[cols],
            z_to[cols],
            bnd,
            templates,
        )
        col = cols[row]
        mid = 0.5 * (top + bot)
        sub = fld.Sublayers(
            col=col,
            top=top,
            bottom=bot,
            stratum=gc.stratum_at(col, mid),
            x=gc.x[col],
            y=gc.y[col],
            owner=pts.owner[col],
        )
        say("stresses", min(0.1 + 0.1 * passes, 0.6))
        staged.append(_stresses(ctx, sub, st.stress_tolerance, group=groups[col]))
        sub.sig0 = gc.effective_stress(col, mid)
        fld.sublayer_strains(
            sub, tab, ctx.ground, spt_modulus, cohesive_immediate=st.cohesive_immediate
        )
        if first:
            own = fld.own_load_settlement(
                sub,
                tab,
                gc,
                ctx.ground,
                site.footings,
                ctx.q_full,
                shape_interpolation=st.shape_interpolation,
                bb_reading=str(st.bb_pressure),
            )
            own_notes = own.notes
            own_params = own.params
            spt_modulus = {k: float(np.median(v)) for k, v in own.spt_modulus.items()}
            stale = np.flatnonzero(np.isnan(sub.gran_nb) | np.isnan(sub.gran_own))
            fld.granular_field(
                sub,
                stale[np.isin(sub.method[stale], ["", "elastic"]) | np.isnan(sub.gran_nb[stale])],
                tab,
                ctx.ground,
                spt_modulus,
            )
            first = False
        else:
            fld.own_below_reach(sub, tab)
        est = fld.final_estimate(sub, creep_life)
        estimate += np.bincount(col, weights=np.nan_to_num(est), minlength=n)
        parts.append(sub)
        # the bound of what lies below, and which columns go deeper
        fmin = _field_modulus_min(ctx, tab, gc, cols, z_to[cols], spt_modulus)
        bound[cols] = colmod.tail_bound(
            z_to[cols],
            ctx.total_load,
            ctx.load_depth,
            _subset(gc, cols),
            field_modulus_min=fmin,
            creep=creep_tab[cols],
            undrained=st.cohesive_immediate,
        )
        at_stop = z_to >= stop - 1e-9
        small = bound <= np.maximum(
            st.truncation_tolerance * np.abs(estimate), colmod.ABSOLUTE_TAIL
        )
        done = at_stop | small
        nxt = np.minimum(stop, pts.base + colmod.DEEPEN_FACTOR * (z_to - pts.base))
        active = ~done & (nxt > z_to + 1e-9)
        z_from = np.where(active, z_to, z_from)
        z_to = np.where(active, nxt, z_to)
    n_first = len(parts[0]) if parts else 0
    sub = fld.Sublayers.concat(parts) if parts else _empty_sublayers()  # (empties the parts)
    del parts
    order = np.lexsort((sub.top, sub.col))
    sub = sub.take(order)
    first_pass = np.zeros(len(sub), dtype=bool)
    first_pass[:n_first] = True
    first_pass = first_pass[order]
    stage_stress = None
    if staged and staged[0] is not None:
        stage_stress = np.concatenate(staged, axis=2)[:, :, order]
        del staged
    bottom = np.where(z_to > pts.base, z_to, pts.base)
    bound = np.where(bottom >= rigid - 1e-9, 0.0, bound)
    reason = np.where(
        bottom >= rigid - 1e-9,
        STOP_RIGID,
        np.where(
            bottom >= user_cap - 1e-9,
            STOP_CAP,
            np.where(
                bottom >= colmod.MAX_INTEGRATION_DEPTH - 1e-9,
                STOP_DEEPEST,
                STOP_BOUND,
            ),
        ),
    )
    return Integration(
        sub, bottom, reason, bound, own_notes, spt_modulus, first_pass, own_params, groups,
        stage_stress,
    )  # fmt: skip


def _subset(gc: GroundColumns, cols: np.ndarray) -> GroundColumns:
    return GroundColumns(
        x=gc.x[cols],
        y=gc.y[cols],
        tops=gc.tops[cols],
        bottoms=gc.bottoms[cols],
        water=gc.water[cols],
        outside_hull=gc.outside_hull[cols],
        variant=gc.variant[cols],
        variants=gc.variants,
    )


def _empty_sublayers() -> fld.Sublayers:
    z = np.zeros(0)
    zi = np.zeros(0, dtype=int)
    return fld.Sublayers(
        col=zi,
        top=z,
        bottom=z,
        stratum=zi,
        x=z,
        y=z,
        owner=zi,
        sig0=z,
        sz=z,
        t=z,
        sz_sust=z,
        own_sz=z,
        own_t=z,
        own_sust=z,
        gran_own=z,
        gran_nb=z,
        und_own=z,
        und_nb=z,
        eps_own=z,
        eps_tot=z,
        modulus=z,
        iz=z,
        creep=zi,
        method=np.zeros(0, dtype=object),
    )


def same_loads(a: stress.Loads, b: stress.Loads, *, pressure: bool = True) -> bool:
    """True when two sets of loads are the same, bit for bit (their stresses are then
    equal); with ``pressure=False``, when their geometry is (one stress pass serves both).

    >>> sq = stress.Loads.rectangles([0.0], [0.0], [2.0], [2.0], [0.0], [100.0], [1.0])
    >>> same_loads(sq, sq.with_pressure([100.0])), same_loads(sq, sq.with_pressure([90.0]))
    (True, False)
    >>> same_loads(sq, sq.with_pressure([90.0]), pressure=False)
    True
    """
    if a is b:
        return True
    if len(a) != len(b) or len(a.outlines) != len(b.outlines):
        return False
    names = ("kind", "x", "y", "length", "width", "rotation", "radius", "depth")
    names += ("pressure",) if pressure else ()
    arrays = [(getattr(a, k), getattr(b, k)) for k in names] + list(zip(a.outlines, b.outlines))
    return all(
        u is v
        or (
            np.asarray(u).shape == np.asarray(v).shape
            and np.asarray(u).dtype == np.asarray(v).dtype
            and np.asarray(u).tobytes() == np.asarray(v).tobytes()
        )
        for u, v in arrays
    )


def _stresses(
    ctx: Context, sub: fld.Sublayers, tol: float, group=None, *, stages: bool = True
) -> np.ndarray | None:
    """Superposed stresses of all loads and the own footing's, full and sustained (in place).

    ``group`` (n_sub,) sorts the sublayers into footing, query and map columns
    (:func:`_column_groups`; by default footing columns and the rest), whose
    stresses are summed in separate calls: the treecode groups the points of one
    call, so this keeps every footing's and query point's result independent of
    the map grid (each within the stated bound either way).

    Every load state of one geometry is summed in the same pass
    (:func:`sitesettle.stress.stress_states`): the full and sustained loads and,
    with ``stages``, those of every construction stage but the last
    (``ctx.states``), whose superposed σz, T and sustained σz are returned as an
    (n_states, 3, n_sub) array (None without stages)."""
    xyz = np.column_stack([sub.x, sub.y, sub.mid])
    full, sust = ctx.loads_full, ctx.loads_sust
    states = ctx.states if stages else ()
    staged = np.zeros((len(states), 3, len(xyz))) if states else None
    if len(full) and len(xyz):
        notes: list = []
        if group is None:
            group = np.where(sub.owner >= 0, 0, 2)
        groups = [g for g in (np.flatnonzero(group == k) for k in range(3)) if len(g)]
        passes, where = _state_rows([full, sust] + [ld for state in states for ld in state[2:]])
        sums = []
        for geo, rows in passes:
            qs = np.stack(rows)
            a, b = np.zeros((len(qs), len(xyz))), np.zeros((len(qs), len(xyz)))
            for g in groups:
                a[:, g], b[:, g] = stress.stress_states(geo, qs, xyz[g], tolerance=tol, notes=notes)
            sums.append((a, b))

        def at(k):
            i, r = where[k]
            return sums[i][0][r], sums[i][1][r]

        (sub.sz, sub.t), sub.sz_sust = at(0), at(1)[0].copy()
        for k in range(len(states)):
            (staged[k, 0], staged[k, 1]), staged[k, 2] = at(2 + 2 * k), at(3 + 2 * k)[0]
        _outline_notes(ctx, notes)
    else:
        sub.sz = sub.t = sub.sz_sust = np.zeros(len(xyz))
    _own_stresses(ctx, sub, xyz)
    return staged


def _state_rows(wanted: list[stress.Loads]):
    """The stress passes for a list of load states: one pass per geometry (the
    states of a plan share the footings' outlines; a caller may hand in others)
    with one row per distinct pressure vector, and for each state its (pass, row).

    >>> sq = stress.Loads.rectangles([0.0], [0.0], [2.0], [2.0], [0.0], [100.0], [1.0])
    >>> passes, where = _state_rows([sq, sq.with_pressure([90.0]), sq.with_pressure([100.0])])
    >>> len(passes), [len(rows) for _, rows in passes], where
    (1, [2], [(0, 0), (0, 1), (0, 0)])
    """
    passes: list[tuple[stress.Loads, list[np.ndarray]]] = []
    where = []
    for ld in wanted:
        i = next(
            (k for k, (geo, _) in enumerate(passes) if same_loads(geo, ld, pressure=False)), None
        )
        if i is None:
            passes.append((ld, []))
            i = len(passes) - 1
        rows = passes[i][1]
        r = next((k for k, q in enumerate(rows) if np.array_equal(q, ld.pressure)), None)
        if r is None:
            rows.append(ld.pressure)
            r = len(rows) - 1
        where.append((i, r))
    return passes, where


def _own_stresses(ctx: Context, sub: fld.Sublayers, xyz: np.ndarray) -> None:
    """The stresses of each owned sublayer's own footing, full and sustained (in place)."""
    sub.own_sz = np.zeros(len(xyz))
    sub.own_t = np.zeros(len(xyz))
    owned = np.flatnonzero(sub.owner >= 0)
    if len(owned):
        osz, ot = stress.own_stress(ctx.loads_full, xyz[owned], ctx.load_of[sub.owner[owned]])
        sub.own_sz[owned], sub.own_t[owned] = osz, ot
    ratio = np.divide(ctx.q_sust, ctx.q_full, out=np.zeros(len(ctx.q_full)), where=ctx.q_full > 0)
    sub.own_sust = np.where(sub.owner >= 0, sub.own_sz * ratio[np.maximum(sub.owner, 0)], 0.0)


def _outline_notes(ctx: Context, notes: list) -> None:
    """A warning naming each dense outline the stress engine simplified (once per run)."""
    nf = len(ctx.site.footings)
    for note in notes:
        k = note.load
        if k < nf:
            name = f"footing {ctx.site.footings[int(np.flatnonzero(ctx.load_of == k)[0])].id}"
        else:
            name = f"area load {ctx.site.area_loads[k - nf].name}"
        text = (
            f"{name}: its outline of {note.vertices} vertices was simplified for the "
            f"stresses at {note.points} of {note.evaluated} points (up to "
            f"{note.most_dropped} vertices dropped at a point); the stress error this "
            f"adds is at most {note.bound:.1g} kPa, within the stress tolerance"
        )
        if not any(w.startswith(f"{name}: its outline of") for w in ctx.warnings):
            ctx.warnings.append(text)


def _histories(
    ctx, sub, tab, gc, *, own_mask=None, total_mask=None, times=None, units=None
) -> fld.History:
    """Stage 4 with the site's settings (the one place the engine's histories are asked for)."""
    st = ctx.site.analysis
    return fld.histories(
        sub,
        tab,
        gc,
        ctx.times if times is None else times,
        end_of_primary=st.end_of_primary,
        r3=st.bb_r3,
        r=st.bb_r,
        investigated_depth=ctx.ground.investigated_depth,
        own_mask=own_mask,
        total_mask=total_mask,
        clay_settlement=str(st.clay_settlement),
        cohesive_immediate=st.cohesive_immediate,
        strip=_strip_sublayers(ctx.site, sub),
        units=units,
    )


#: the histories of a load state are made this many (sublayer × time) elements at a
#: time, whole columns each (memory in proportion to the chunk, not to the plan)
HISTORY_CHUNK = 1_000_000


def column_chunks(col: np.ndarray, per_row: int, limit: int = HISTORY_CHUNK) -> list[slice]:
    """Row ranges of sublayers sorted by column, whole columns each, of about
    ``limit / per_row`` rows (a column larger than that is a range of its own).

    >>> column_chunks(np.array([0, 0, 1, 1, 1, 2]), 1, limit=3)
    [slice(0, 2, None), slice(2, 5, None), slice(5, 6, None)]
    """
    n = len(col)
    rows = max(1, limit // max(1, per_row))
    if n <= rows:
        return [slice(0, n)]
    starts = np.flatnonzero(np.r_[True, col[1:] != col[:-1]])  # first row of each column
    out, a = [], 0
    while a < n:
        if a + rows >= n:
            b = n
        else:
            k = int(np.searchsorted(starts, a + rows, side="right")) - 1  # last start ≤ a + rows
            if starts[k] > a:
                b = int(starts[k])
            else:  # one column longer than a chunk: it alone
                b = int(starts[k + 1]) if k + 1 < len(starts) else n
        out.append(slice(a, b))
        a = b
    return out


def _state(
    ctx: Context, run: Integration, tab, gc, state, index: int | None = None
) -> tuple[Context, fld.Sublayers]:
    """The sublayers' stresses and strains under the loads of one stage's state, slim.

    ``state`` is (q_full, q_sust, loads_full, loads_sust), ``ctx.states[index]``
    (its superposed stresses then come from ``run.stage_stress``, summed with the
    full loads; without an index they are summed here). The same columns and
    sublayers as the full run; the own-load methods applied on the first pass's
    sublayers as :func:`integrate` does, with the state's pressures. Returned as
    :func:`_slim_state` keeps it: the full run's geometry (shared, read only) and the
    state's own :data:`_STATE_FIELDS`, in the full run's order. The state's arrays
    are made once; only where a second pass added sublayers are the first pass's
    rows copied (for the own-load methods) and written back.
    """
    st = ctx.site.analysis
    qf, qs, lf, ls = state
    sctx = replace(ctx, q_full=qf, q_sust=qs, loads_full=lf, loads_sust=ls)
    full = run.sub
    # the geometry and σ'v0 shared with the full run (never written); the state's
    # stresses and strains are new arrays
    d = fld.Sublayers(
        **{k: getattr(full, k) for k in ("col", "top", "bottom", "stratum", "x", "y", "owner")},
        sig0=full.sig0,
    )
    if index is not None and run.stage_stress is not None:
        d.sz, d.t, d.sz_sust = (v.copy() for v in run.stage_stress[index])
        _own_stresses(sctx, d, np.column_stack([d.x, d.y, d.mid]))
    else:
        group = run.column_group[d.col] if run.column_group is not None else None
        _stresses(sctx, d, st.stress_tolerance, group=group, stages=False)
    fld.sublayer_strains(
        d, tab, ctx.ground, run.spt_modulus, cohesive_immediate=st.cohesive_immediate
    )
    whole = bool(run.first_pass.all())  # the usual case: no second pass
    first = np.flatnonzero(run.first_pass)
    # the first pass's rows, to which the own-load methods apply (a copy, unless all)
    a = d if whole else d.take(first)
    if not whole:
        fld.own_below_reach(d, tab, np.flatnonzero(~run.first_pass))  # the rest, in place
    fld.own_load_settlement(
        a,
        tab,
        gc,
        ctx.ground,
        ctx.site.footings,
        qf,
        shape_interpolation=st.shape_interpolation,
        bb_reading=str(st.bb_pressure),
    )
    stale = np.flatnonzero(np.isnan(a.gran_nb) | np.isnan(a.gran_own))
    fld.granular_field(
        a,
        stale[np.isin(a.method[stale], ["", "elastic"]) | np.isnan(a.gran_nb[stale])],
        tab,
        ctx.ground,
        run.spt_modulus,
    )
    for k in () if whole else _STATE_FIELDS:  # the first pass's results back in their rows
        v, part = getattr(d, k), getattr(a, k)
        if v.dtype != part.dtype:  # (never so far: kept exact should a method change one)
            v = v.astype(np.result_type(v, part))
            setattr(d, k, v)
        v[first] = part
    del a
    return sctx, _slim_state(d, full)


#: the parts of a History that change with time (the others are per sublayer)
_TIMED = ("imm_own", "imm_nb", "creep_own", "creep_nb", "cons_own", "cons_nb", "sec_own", "sec_nb")


#: Gauss–Legendre nodes over a ramp (the ramp integral of an instant-load history)
RAMP_NODES = 24


def ramp_nodes(tau, duration, n: int = RAMP_NODES):
    """Quadrature of a load applied linearly over ``duration`` from instant-load histories.

    Parameters
    ----------
    tau : array_like
        (n_t,) time since the start of the loading [yr].
    duration : float
        Loading period T_c [yr]; 0: applied at once.
    n : int
        Gauss–Legendre nodes over the ramp.

    Returns
    -------
    time, weight, index : numpy.ndarray
        H_ramp(τ_q) = Σ weight · H_inst(time) over the nodes with ``index`` = q.

    Notes
    -----
    A linear ramp is the sum of infinitesimal instant increments dq = q ds/T_c, each
    acting from its own start (Duhamel's superposition, the basis of Olson's 1977
    ramp-loading solution of Terzaghi's equation):

    .. math:: H_{ramp}(\\tau) = \\frac{1}{T_c}\\int_0^{\\min(\\tau, T_c)}
              H_{inst}(\\tau - s)\\,ds

    integrated here by Gauss–Legendre quadrature (tested against Olson's closed form).

    Examples
    --------
    >>> t, w, q = ramp_nodes([2.0], 0.0)
    >>> t.tolist(), w.tolist(), q.tolist()
    ([2.0], [1.0], [0])
    >>> t, w, q = ramp_nodes([0.5, 2.0], 1.0, n=4)
    >>> [round(float(w[q == k].sum()), 6) for k in (0, 1)]  # load applied so far
    [0.5, 1.0]
    """
    tau = np.asarray(tau, dtype=float)
    idx = np.flatnonzero(tau > 0)
    if duration <= 0:
        return tau[idx], np.ones(len(idx)), idx
    x, w = np.polynomial.legendre.leggauss(n)
    span = np.minimum(tau[idx], duration)  # (m,)
    s = span[:, None] / 2 * (x[None, :] + 1)  # (m, n) times since the start of loading
    time = tau[idx, None] - s
    weight = span[:, None] / 2 * w[None, :] / duration
    return time.ravel(), weight.ravel(), np.repeat(idx, n)


def _add_nodes(acc, values, weight, index, sign: float) -> None:
    """acc[:, q] += sign · Σ weight · values over the nodes of report time q (in place).

    :func:`ramp_nodes` gives every report time the same number of consecutive nodes,
    so the sum is a reshape, not a scatter.
    """
    if not len(index):
        return
    q = np.unique(index)
    k = len(index) // len(q)
    if k == 1 and np.all(weight == 1.0):  # a load applied at once: the values themselves
        part = values  # (x·1 and a sum of one term are x exactly: the same numbers)
    else:
        part = (values * weight).reshape(values.shape[0], len(q), k).sum(axis=2)
    if len(q) == q[-1] - q[0] + 1:  # consecutive report times: a slice, not a gather
        view = acc[:, q[0] : q[-1] + 1]
        if sign == 1.0:
            view += part
        else:
            view += sign * part
    else:
        acc[:, q] += sign * part


@dataclass
class Reduced:
    """What the assembly needs of the histories: per-column sums over time and
    per-sublayer values at the design life (not every sublayer at every time).

    ``cols``: "imm", "creep", "con", "sec" (own + other loads of each part) and
    "own" (all parts of the own load), (n_columns, n_t) [m], each summed over the
    column's sublayers as :func:`per_column` does; ``life``: each part of
    :data:`_TIMED`, (n_sub,) at the design life [m]; ``degree``: U of the total
    load at the design life (n_sub,); ``drainage_path`` and ``drainage_note``
    (n_sub,) as in :class:`sitesettle.field.History`.
    """

    cols: dict
    life: dict
    degree: np.ndarray
    drainage_path: np.ndarray
    drainage_note: np.ndarray


class _Reducer:
    """Adds whole columns' histories into a :class:`Reduced` (rows in column order)."""

    def __init__(self, col: np.ndarray, n_columns: int, nt: int, life: int):
        n_sub = len(col)
        self.col, self.life = col, life
        self.cols = {k: np.zeros((n_columns, nt)) for k in ("imm", "creep", "con", "sec", "own")}
        self.at = {name: np.zeros(n_sub) for name in _TIMED}
        self.degree = np.full(n_sub, np.nan)
        self.path = np.full(n_sub, np.nan)
        self.note = np.full(n_sub, "", dtype=object)

    def add(self, rows: slice, parts: dict) -> None:
        """``parts``: each name of :data:`_TIMED` → (rows, n_t) of whole columns."""
        col = self.col[rows]
        if not len(col):
            return
        lo, hi = int(col[0]), int(col[-1]) + 1
        c = col - lo
        p = parts
        for key, v in (
            ("imm", p["imm_own"] + p["imm_nb"]),
            ("creep", p["creep_own"] + p["creep_nb"]),
            ("con", p["cons_own"] + p["cons_nb"]),
            ("sec", p["sec_own"] + p["sec_nb"]),
            ("own", p["imm_own"] + p["creep_own"] + p["cons_own"] + p["sec_own"]),
        ):
            # the columns of the rows are whole: their sums are complete here (as
            # per_column makes them), added to zeros
            acc = self.cols[key][lo:hi]
            for j in range(v.shape[1]):
                acc[:, j] += np.bincount(c, weights=np.nan_to_num(v[:, j]), minlength=hi - lo)
        for name in _TIMED:
            self.at[name][rows] = p[name][:, self.life]

    def result(self) -> Reduced:
        return Reduced(self.cols, self.at, self.degree, self.path, self.note)


def reduced_histories(ctx, run: Integration, tab, gc, *, own_mask=None, total_mask=None):
    """The histories of a single load applied at time 0, reduced (:class:`Reduced`)."""
    sub = run.sub
    h = _histories(ctx, sub, tab, gc, own_mask=own_mask, total_mask=total_mask)
    red = _Reducer(sub.col, len(run.bottom), len(ctx.times), ctx.life)
    red.add(slice(0, len(sub)), {name: getattr(h, name) for name in _TIMED})
    red.degree[:] = h.degree[:, ctx.life]
    red.path[:] = h.drainage_path
    red.note[:] = h.drainage_note
    return red.result()


#: the fields of a load state's sublayers that the histories read and that differ
#: from the full run's (the geometry, σ'v0 and the owner are the full run's arrays)
_STATE_FIELDS = (
    "sz", "t", "sz_sust", "own_sz", "own_t", "own_sust", "gran_own", "gran_nb",
    "und_own", "und_nb", "eps_own", "eps_tot", "creep",
)  # fmt: skip


#: bytes per sublayer of a slim state (its 13 arrays)
_SLIM_BYTES = 8 * len(_STATE_FIELDS)


def _slim_state(ssub: fld.Sublayers, full: fld.Sublayers) -> fld.Sublayers:
    """A state's sublayers for the histories only: its own stresses and strains, the
    full run's geometry (the same sublayers in the same order), nothing else."""
    keep = {k: getattr(ssub, k) for k in _STATE_FIELDS}
    geometry = {k: getattr(full, k) for k in ("col", "top", "bottom", "stratum", "x", "y")}
    return fld.Sublayers(**geometry, owner=full.owner, sig0=full.sig0, **keep)


def _common_bounds(chunkings: list[list[slice]], n: int) -> list[slice]:
    """Row ranges bounded where every chunking has a boundary (each chunk of every
    chunking lies inside one range).

    >>> _common_bounds([[slice(0, 2), slice(2, 5)], [slice(0, 5)]], 5)
    [slice(0, 5, None)]
    """
    common = None
    for chunks in chunkings:
        starts = np.array([c.start for c in chunks] + [n])
        common = starts if common is None else np.intersect1d(common, starts)
    b = np.union1d([] if common is None else common, [0, n]).astype(int).tolist()
    return [slice(a, z) for a, z in zip(b[:-1], b[1:]) if z > a]


def staged_histories(ctx, run: Integration, tab, gc, *, own_mask=None, total_mask=None):
    """Histories of the load stages, each increment from its own start, by superposition.

    With H_k the history of every sublayer under the loads of stages 1…k (the last
    is the full run), stage k starting at t_k and ramped over T_k,

        H(t) = Σ_k R_k[H_k − H_{k−1}](t − t_k)

    where R_k is the ramp integral of :func:`ramp_nodes` (the identity for a load
    applied at once; H_0 = 0): each increment's settlement on loading, creep,
    consolidation and the secondary compression that goes with it, from its own
    start (superposition of load increments, as for staged loading in Terzaghi's
    theory; exact where the model is linear, and the usual approximation for e–log
    clay, which it makes exact once every increment is consolidated).

    Returns the sums the assembly needs (:class:`Reduced`). The stresses and
    strains of every stage's state are made first (their sublayers kept slim:
    :func:`_slim_state`); the histories are then made and summed whole columns
    at a time, every state's in turn, so that no (sublayer × time) array of the
    whole plan exists. Each state's histories use the same rows at a time and
    the same times as when made state by state, and are added in the same order.
    """
    t = ctx.times
    stages = ctx.stages
    K = len(stages)
    nodes = [ramp_nodes(t - stg.start, stg.duration) for stg in stages]
    nt = len(t)
    n_sub = len(run.sub)
    clay = tab.behaviour.size and (tab.behaviour == Behaviour.COHESIVE.value).any()
    units = fld.consolidating_units(gc, tab, ctx.ground.investigated_depth) if clay else None
    keys = [_state_key(state) for state in ctx.states] + [None]
    # which stage reuses the state before it (a stage that adds no load), and how
    # many states have to be made
    same = [0 < j < K - 1 and keys[j] == keys[j - 1] for j in range(K)]
    n_made = sum(1 for j in range(K - 1) if not same[j])
    plan = []  # per state: its grid of times, the two increments' node counts, its chunks
    for j in range(K):
        own_t, own_w, own_q = nodes[j]
        nxt_t, nxt_w, nxt_q = nodes[j + 1] if j + 1 < K else (np.zeros(0),) * 3
        grid = np.concatenate([own_t, nxt_t, t if j == K - 1 else np.zeros(0)])
        a, b = len(own_t), len(own_t) + len(nxt_t)
        chunks = column_chunks(run.sub.col, len(grid)) if len(grid) else []
        plan.append((grid, a, b, own_w, own_q, nxt_w, nxt_q, chunks))
    red = _Reducer(run.sub.col, len(run.bottom), nt, ctx.life)
    ranges = _common_bounds([p[-1] for p in plan if len(p[0])], n_sub)
    # column ranges one after the other, every state's in turn (all states' sublayers
    # kept, slim), when that holds less than one range of the whole plan with each
    # state made in turn (one state's sublayers and the accumulators of every row)
    if len(ranges) > 1 and n_made * _SLIM_BYTES > _SLIM_BYTES + 8 * len(_TIMED) * nt:
        ranges = [slice(0, n_sub)] if n_sub else []
    made: dict = {}

    def state(j):
        """The sublayers of state j: made once, dropped once no later stage needs them."""
        if j == K - 1:
            return ctx, run.sub
        if same[j]:
            return state(j - 1)
        if j not in made:
            made[j] = _state(ctx, run, tab, gc, ctx.states[j], j)
        return made[j]

    one_range = len(ranges) == 1
    for span in ranges:  # whole columns; every state's chunks inside it
        out = {name: np.zeros((span.stop - span.start, nt)) for name in _TIMED}
        for j in range(K):  # state j enters increment j (+) and increment j + 1 (−)
            grid, a, b, own_w, own_q, nxt_w, nxt_q, chunks = plan[j]
            if not len(grid):
                continue
            sctx, ssub = state(j)
            for rows in chunks:
                if rows.start < span.start or rows.stop > span.stop:
                    continue
                h = _histories(
                    sctx,
                    ssub.take(rows),  # views (the histories only read them)
                    tab,
                    gc,
                    own_mask=None if own_mask is None else own_mask[rows],
                    total_mask=None if total_mask is None else total_mask[rows],
                    times=grid,
                    units=units,
                )
                local = slice(rows.start - span.start, rows.stop - span.start)
                if j == K - 1:
                    red.degree[rows] = h.degree[:, -nt:][:, ctx.life]
                    red.path[rows] = h.drainage_path
                    red.note[rows] = h.drainage_note
                for name in _TIMED:
                    v = getattr(h, name)
                    acc = out[name][local]
                    _add_nodes(acc, v[:, :a], own_w, own_q, 1.0)
                    if b > a:
                        _add_nodes(acc, v[:, a:b], nxt_w, nxt_q, -1.0)
                del h
            if one_range and not (j + 1 < K and same[j + 1]):
                made.clear()  # no later stage needs this state (the next one makes its own)
            del ssub
        red.add(span, out)
        del out
    # the states made are dropped here: ``state`` refers to itself (it recurses), so
    # the closure and ``made`` form a reference cycle that only the cyclic garbage
    # collector would free, long after
    made.clear()
    return red.result()


def _state_key(state) -> bytes:
    """The pressures of a stage's state, as bytes (equal bytes: equal stresses and strains)."""
    qf, qs, lf, ls = state
    return b"|".join(np.ascontiguousarray(a, dtype=float).tobytes()
                     for a in (qf, qs, lf.pressure, ls.pressure))


def _strip_sublayers(site: Site, sub: fld.Sublayers) -> np.ndarray:
    """Per sublayer: does its column belong to a strip (plane strain)?"""
    strips = np.array([colmod.is_strip(f) for f in site.footings] + [False], dtype=bool)
    return strips[np.where(sub.owner >= 0, sub.owner, len(site.footings))]


def depth_masks(sub: fld.Sublayers, n_columns: int, fraction: float):
    """Significant depth of every column, and the sublayers the stress-ratio rule keeps.

    Returns ``(significant, own_mask, total_mask)``: the bottom of the deepest
    sublayer where Δσz ≥ fraction·σ'v0 (all loads) per column [m] (NaN where none),
    and per sublayer whether it lies above the deepest such sublayer of its
    column for the own load alone and for all loads.
    """
    limit = fraction * np.maximum(sub.sig0, 1e-9)

    def keep(strong):
        last = np.full(n_columns, -np.inf)
        np.maximum.at(last, sub.col[strong], sub.bottom[strong])
        return last, sub.bottom <= last[sub.col] + 1e-12

    last_tot, tot = keep(sub.sz >= limit)
    _, own = keep((sub.own_sz >= limit) & (sub.owner >= 0))
    own = np.where(sub.owner >= 0, own, True)
    return np.where(np.isfinite(last_tot), last_tot, np.nan), own, tot


# --------------------------------------------------------------------------- stage 5


def per_column(sub: fld.Sublayers, values: np.ndarray, n: int) -> np.ndarray:
    """Sum of per-sublayer values (n_sub, nt) per column → (n, nt)."""
    out = np.zeros((n, values.shape[1]))
    for j in range(values.shape[1]):
        out[:, j] = np.bincount(sub.col, weights=np.nan_to_num(values[:, j]), minlength=n)
    return out


def analyse(
    site: Site,
    *,
    progress: Progress | None = None,
    with_map: bool = True,
    with_checks: bool = True,
    on_warning: Callable[[str], None] | None = None,
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
    on_warning : callable, optional
        ``on_warning(text)`` is called at once, before the work starts, when the plan
        is estimated to be large (:mod:`sitesettle.budget`); the text is also among
        the results' warnings.

    Returns
    -------
    Results
        Per-footing settlements (m) at every report time and the design life.
    """
    say = progress or (lambda stage, frac: None)
    st = site.analysis
    say("net pressures", 0.0)
    ctx = prepare(site)
    site = ctx.site  # excavations resolved to their pressures
    pts, layout = evaluation_points(site, with_map=with_map)
    # refused or warned before any stress is computed (PlanTooLarge: an InputError)
    large = budget.assess(
        plan_estimate(ctx, pts, layout), refuse=str(st.large_plan) == LargePlan.REFUSE.value
    )
    if large:
        ctx.warnings.append(large)
        if on_warning is not None:
            on_warning(large)
    gc = GroundColumns.build(ctx.ground, pts.xy)
    tab = fld.Tables.build(gc, str(st.granular_method))
    run = integrate(ctx, pts, gc, tab, say)
    sub = run.sub
    n = len(pts)
    significant, own_mask, total_mask = depth_masks(sub, n, st.influence_fraction)
    ratio_rule = st.depth_rule == DepthRule.STRESS_RATIO
    say("settlements", 0.7)
    masks = {
        "own_mask": own_mask if ratio_rule else None,
        "total_mask": total_mask if ratio_rule else None,
    }
    if len(ctx.stages) > 1 or ctx.stages[0].start > 0 or ctx.stages[0].duration > 0:
        hist = staged_histories(ctx, run, tab, gc, **masks)
    else:
        hist = reduced_histories(ctx, run, tab, gc, **masks)
    say("assembling", 0.85)
    cols = dict(hist.cols)  # per column: the sums of its sublayers (per_column)
    cols["tot"] = cols["imm"] + cols["creep"] + cols["con"] + cols["sec"]
    cols["nb"] = cols["tot"] - cols["own"]
    warnings = ctx.warnings
    _depth_warnings(ctx, pts, gc, tab, sub, hist, run, cols, ratio_rule, warnings)
    feet = assemble_footings(ctx, pts, cols, run, significant)
    traces = _traces(ctx, pts, gc, sub, hist, run, tab)
    del hist  # the per-time arrays of every sublayer: not needed past here
    outside = np.asarray(
        ctx.ground.outside_hull([f.x for f in site.footings], [f.y for f in site.footings]),
        dtype=bool,
    )
    for i in np.flatnonzero(outside):
        warnings.append(
            f"footing {site.footings[i].id} lies outside the boreholes' hull: "
            "its ground is extrapolated"
        )
    query = _query_results(site, pts, cols, run, layout["query"])
    smap = None
    if with_map and layout["grid"] is not None:
        say("settlement map", 0.9)
        gx, gy = layout["grid"]
        values = cols["tot"][layout["map"], ctx.life].reshape(len(gy), len(gx))
        smap = SettlementMap(gx, gy, values, _map_basis(site, ctx))
        if st.map_spacing > 0 and len(gx) > 1 and gx[1] - gx[0] > st.map_spacing * (1 + 1e-9):
            warnings.append(
                f"settlement map: spacing {st.map_spacing:g} m coarsened to {gx[1] - gx[0]:g} m "
                "to keep the grid within its size limit"
            )
    results = Results(
        site=site,
        times=ctx.times,
        design_life_index=ctx.life,
        immediate=feet["imm"],
        consolidation=feet["con"],
        secondary=feet["sec"],
        own=feet["own"],
        neighbours=feet["nb"],
        point_xy=feet["point_xy"],
        point_total=feet["point_total"],
        tilt=feet["tilt"],
        tilt_direction=feet["tilt_dir"],
        net_pressure=ctx.q_full,
        sustained_net_pressure=ctx.q_sust,
        influence_depth=feet["depth"],
        methods=feet["methods"],
        outside_hull=outside,
        traces=traces,
        creep=feet["creep"],
        significant_depth=feet["significant"],
        station_xy=feet["station_xy"],
        station_total=feet["station_total"],
        points=query,
        map=smap,
        basis=_basis(site, ctx),
    )
    total_life = results.at_design_life("total")
    fw = np.array([f.width for f in site.footings])
    on_loading = results.immediate[:, ctx.life]
    for i in np.flatnonzero(total_life > FAILURE_SETTLEMENT_RATIO * fw):
        f = site.footings[i]
        when = (
            "on loading: its status is beyond range, bearing failure likely"
            if on_loading[i] > FAILURE_SETTLEMENT_RATIO * fw[i]
            else "over time (not on loading): beyond the range of the settlement methods"
        )
        warnings.append(
            f"footing {f.id} settles {total_life[i] * 1000:.0f} mm, more than "
            f"{FAILURE_SETTLEMENT_RATIO:.0%} of its width ({f.width:g} m), {when}; check the "
            "moduli, the loads and their units"
        )
    auto_pairs = _far_warnings(site, warnings, with_checks)
    chk = None
    if with_checks:
        chk = checks_mod.check_movements(
            site.footings,
            ctx.times,
            results.total,
            feet["point_xy"],
            feet["point_total"],
            site.checks,
            design_life_index=ctx.life,
            station_xy=feet["station_xy"],
            station_total=feet["station_total"],
            query=None if query is None else (query.ids, query.xy, query.total),
            on_loading=results.immediate[:, ctx.life],
            auto_pairs=auto_pairs,
        )
    say("done", 1.0)
    return Results(**{**results.__dict__, "checks": chk, "warnings": tuple(warnings)})


def plan_estimate(ctx: Context, pts: Points, layout: dict) -> budget.Estimate:
    """The time and memory a run will take, from its counts (:func:`sitesettle.budget.estimate`)."""
    site = ctx.site
    n_states = len(ctx.stages)
    return budget.estimate(
        budget.counts(
            len(site.footings),
            len(pts),
            len(layout["map"]),
            len(ctx.times),
            n_states,
            site.analysis.sublayer_fraction,
        )
    )


def _far_warnings(site, warnings: list[str], with_checks: bool) -> np.ndarray | None:
    """Footings and boreholes far from the plan (likely coordinate typos), and the
    automatic pairs not formed because their footings are too far apart.

    Returns the automatic pairs the checks use (those not too far apart), when it
    searched for them (None otherwise): the neighbour search is made once."""
    fs = site.footings
    far = checks_mod.far_footings(fs)
    for i, dist, spacing in far:
        warnings.append(
            f"footing {fs[i].id} is {dist:.0f} m from the nearest other footing (the plan's "
            f"typical spacing is {spacing:.1f} m): check its coordinates"
        )
    spacing, _ = checks_mod.plan_spacing(fs)
    if fs and math.isfinite(spacing):
        xy = np.array([[f.x, f.y] for f in fs], dtype=float)
        extent = float(np.hypot(*(xy.max(axis=0) - xy.min(axis=0))))
        reach = max(checks_mod.FAR_FACTOR * spacing, extent)
        for holes, kind in ((site.boreholes, "borehole"), (site.soundings, "sounding")):
            for b in holes:
                d = float(np.min(np.hypot(xy[:, 0] - b.x, xy[:, 1] - b.y)))
                if d > reach:
                    warnings.append(
                        f"{kind} {b.id} is {d:.0f} m from the nearest footing (the plan spans "
                        f"{extent:.0f} m): check its coordinates"
                    )
    auto = None
    if with_checks and str(getattr(site.checks, "pairs", "auto")).lower().endswith("auto"):
        pairs = checks_mod.footing_pairs(fs)
        long = checks_mod.long_span_pairs(fs, pairs)
        auto = pairs[~long]  # what footing_pairs(fs, drop_long=True) gives
        for a, b in pairs[long]:
            d = float(np.hypot(fs[a].x - fs[b].x, fs[a].y - fs[b].y))
            warnings.append(
                f"footing {fs[a].id} and footing {fs[b].id} are not paired: {d:.0f} m apart, "
                f"far beyond the plan's spacing ({spacing:.1f} m); list the pair in [checks] "
                "to check it"
            )
    return auto


def assemble_footings(ctx: Context, pts: Points, cols: dict, run: Integration, significant):
    """Per footing: stations (mean of their points), the footing's value, tilt, depths."""
    site = ctx.site
    nf, nt = len(site.footings), len(ctx.times)
    fcols = np.flatnonzero(pts.kind == "footing")
    owner = pts.owner[fcols]
    counts = np.bincount(owner, minlength=nf) if nf else np.zeros(0, int)
    npts = int(counts.max()) if nf else 0
    stations = pts.station[fcols]
    nst = int(stations.max()) + 1 if len(stations) else 1
    out = {k: np.zeros((nf, nt)) for k in ("imm", "creep", "con", "sec", "own", "nb")}
    point_xy = np.full((nf, npts, 2), np.nan)
    point_total = np.full((nf, npts, nt), np.nan)
    station_xy = np.full((nf, nst, 2), np.nan)
    station_total = np.full((nf, nst, nt), np.nan)
    tilt = np.zeros(nf)
    tilt_dir = np.zeros(nf)
    depth = np.zeros(nf)
    sig = np.full(nf, np.nan)
    if nf:
        # every footing's points are consecutive (footing order); its stations 0…k−1
        starts = np.searchsorted(owner, np.arange(nf))
        n_pts = counts
        k_of = np.maximum.reduceat(stations, starts) + 1  # stations of each footing
        s_off = np.cumsum(k_of) - k_of
        gst = s_off[owner] + stations  # each point's station, numbered across the plan
        n_st = int(k_of.sum())
        per_station = np.bincount(gst, minlength=n_st)[:, None]
        parts = {}
        for name in out:  # the mean of each station's points (added in point order)
            acc = np.zeros((n_st, nt))
            np.add.at(acc, gst, cols[name][fcols])
            parts[name] = acc / per_station
        sxy = np.zeros((n_st, 2))
        np.add.at(sxy, gst, pts.xy[fcols])
        sxy /= per_station
        stot = parts["imm"] + parts["creep"] + parts["con"] + parts["sec"]
        st_owner = np.repeat(np.arange(nf), k_of)
        st_index = np.arange(n_st) - s_off[st_owner]
        station_xy[st_owner, st_index] = sxy
        station_total[st_owner, st_index] = stot
        # the governing station: the one settling most at the design life
        life_st = np.full((nf, nst), -np.inf)
        life_st[st_owner, st_index] = stot[:, ctx.life]
        g = np.where(k_of > 1, np.argmax(life_st, axis=1), 0)
        for name in out:
            out[name][:] = parts[name][s_off + g]
        pos = np.arange(len(fcols)) - starts[owner]  # each point's place in its footing
        point_xy[owner, pos] = pts.xy[fcols]
        point_total[owner, pos] = cols["tot"][fcols]
        # tilt of the footings with three points or more, in groups of equal count
        for m in np.unique(n_pts[n_pts >= 3]):
            which = np.flatnonzero(n_pts == m)
            rows = fcols[starts[which][:, None] + np.arange(m)[None, :]]
            tilt[which], tilt_dir[which] = checks_mod.footing_tilt(
                pts.xy[rows], cols["tot"][rows, ctx.life]
            )
        depth[:] = np.maximum.reduceat(run.bottom[fcols], starts)
        sf = significant[fcols]
        has = np.logical_or.reduceat(np.isfinite(sf), starts)
        with np.errstate(invalid="ignore"):
            top_sig = np.fmax.reduceat(sf, starts)
        sig[:] = np.where(has, top_sig, [f.depth for f in site.footings])
    sub = run.sub
    found: list[set] = [set() for _ in range(nf)]
    owned = np.flatnonzero((sub.owner >= 0) & (pts.kind[sub.col] == "footing"))
    if len(owned):  # each footing's distinct methods
        names, code = np.unique(sub.method[owned], return_inverse=True)
        key = np.unique(sub.owner[owned].astype(np.int64) * len(names) + code.ravel())
        for o, c in zip(key // len(names), key % len(names)):
            if names[c]:
                found[int(o)].add(str(names[c]))
    methods = [" + ".join(sorted(ms)) if ms else "none" for ms in found]
    out.update(
        point_xy=point_xy,
        point_total=point_total,
        station_xy=station_xy,
        station_total=station_total,
        tilt=tilt,
        tilt_dir=tilt_dir,
        depth=depth,
        significant=sig,
        methods=tuple(methods),
    )
    return out


def _query_results(site, pts, cols, run, idx) -> QueryResults | None:
    if not site.points:
        return None
    return QueryResults(
        ids=tuple(p.id for p in site.points),
        xy=pts.xy[idx],
        depth=pts.base[idx],
        immediate=cols["imm"][idx],
        creep=cols["creep"][idx],
        consolidation=cols["con"][idx],
        secondary=cols["sec"][idx],
        depth_reached=run.bottom[idx],
    )


def _basis(site: Site, ctx: Context) -> tuple[str, ...]:
    st = site.analysis
    life = ctx.times[ctx.life]
    rule = (
        "to the top of a rigid stratum, or until the bounded remaining settlement is "
        f"under {st.truncation_tolerance:.1%} of each point's"
        if st.depth_rule == DepthRule.COMPLETE
        else f"down to where Δσz < {st.influence_fraction:g}·σ'v0 (stress-ratio rule, as set)"
    )
    what_if = (
        ("what-if changes, not in the project files: " + "; ".join(site.overrides),)
        if site.overrides
        else ()
    )
    return (
        *what_if,
        f"settlements at the design life, {life:g} yr after loading, unless a time is named",
        "loads: the full service load (dead + live) for settlement on loading and in "
        "granular strata; dead + sustained live for consolidation and creep of clay",
        _load_history(site, ctx),
        f"integration depth: {rule}",
    )


def _load_history(site: Site, ctx: Context) -> str:
    """One line that says when each load arrives."""
    return "load history: " + describe_stages(ctx.stages, site)


def describe_stages(stages, site: Site) -> str:
    """The stages in words (for the basis lines, the summary and the report)."""
    if not site.stages:  # the default history
        area = " and the area loads" if site.area_loads else ""
        if len(stages) > 1:
            return (
                f"dead load{area} at time 0; live load just after {stages[1].start:g} yr "
                "([checks] checked_after), so the checked movement includes its settlement "
                "on loading"
            )
        return f"all loads{area} at time 0"
    parts = []
    for stg in stages:
        what = []
        if stg.dead:
            what.append("dead load" if stg.dead == 1 else f"{stg.dead:.0%} of the dead load")
        if stg.live:
            what.append("live load" if stg.live == 1 else f"{stg.live:.0%} of the live load")
        what += list(stg.area_loads)
        when = (
            "at time 0"
            if stg.start == 0 and stg.duration == 0
            else f"just after {stg.start:g} yr"
            if stg.duration == 0
            else f"from {stg.start:g} to {stg.end:g} yr (ramp)"
        )
        parts.append(f"{stg.name}: {', '.join(what) or 'nothing'} {when}")
    return "; ".join(parts)


def _map_basis(site: Site, ctx: Context) -> str:
    return (
        f"ground-surface settlement at the design life ({ctx.times[ctx.life]:g} yr) by the same "
        "engine as the footings: elastic strain integration of the superposed Boussinesq "
        "stress on granular strata (with the stratum method's creep factor) and e–log σ' "
        "consolidation with time on clay; footings' own load there counted the same way "
        "(a footing's own method — Schmertmann, Burland & Burbidge — applies at its own points)"
    )


def _depth_warnings(ctx, pts, gc, tab, sub, hist, run, cols, ratio_rule, warnings) -> None:
    """Warn where a cap or the stress-ratio rule leaves compressible ground out, and
    where much of a footing's settlement comes from ground below the investigation."""
    site = ctx.site
    st = site.analysis
    life = ctx.life
    names = [s.name for s in site.strata]
    fcols = np.flatnonzero(pts.kind == "footing")

    def label(c):
        if pts.kind[c] == "footing":
            return f"footing {site.footings[pts.owner[c]].id}"
        return f"{pts.kind[c]} point at ({pts.xy[c][0]:.1f}, {pts.xy[c][1]:.1f})"

    # a cap of the user's stops the integration inside compressible ground
    capped = np.flatnonzero(
        (run.reason == STOP_CAP)
        & (run.bound > st.truncation_tolerance * np.abs(cols["tot"][:, life]))
        & (pts.kind != "map")
    )
    seen = set()
    for c in capped:
        lab = label(c)
        if lab in seen:
            continue
        seen.add(lab)
        k = int(gc.stratum_at(np.array([c]), np.array([run.bottom[c] - 1e-9]))[0])
        warnings.append(
            f"{lab}: the integration stops at {run.bottom[c]:.2f} m ([analysis] max_depth / "
            f"max_depth_widths) inside {names[k]}; up to {run.bound[c] * 1000:.2f} mm "
            "below it is left out (bound)"
        )
    if ratio_rule:
        left = _left_out(sub, gc, tab, pts, cols, ctx, st)
        for i, (mm, stratum) in left.items():
            warnings.append(
                f"footing {site.footings[i].id}: the stress-ratio depth rule "
                f"(Δσz < {st.influence_fraction:g}·σ'v0) leaves out {mm:.2f} mm of the "
                f"settlement of {stratum} below its cut (the complete rule counts it)"
            )
    # ground assumed below the investigation
    deep = ctx.ground.investigated_depth
    below = sub.mid > deep
    if below.any() and len(fcols):
        at = [hist.life[name] for name in _TIMED]  # the same sum, at the design life
        tot_life = at[0] + at[1] + at[2] + at[3] + at[4] + at[5] + at[6] + at[7]
        part = np.bincount(
            sub.col[below], weights=np.nan_to_num(tot_life[below]), minlength=len(pts)
        )
        share = np.divide(
            part,
            np.abs(cols["tot"][:, life]),
            out=np.zeros(len(pts)),
            where=np.abs(cols["tot"][:, life]) > 0,
        )
        worst = fcols[np.argsort(-share[fcols])]
        worst = [c for c in worst if share[c] > ASSUMED_GROUND_SHARE]
        if worst:
            c = worst[0]
            feet = sorted({site.footings[pts.owner[w]].id for w in worst})
            warnings.append(
                f"{len(feet)} footing(s) take more than {ASSUMED_GROUND_SHARE:.0%} of their "
                f"settlement from below the deepest borehole or sounding ({deep:.1f} m), where "
                "the last stratum is assumed to continue with no rigid base (most: "
                f"{label(c)}, {share[c]:.0%}, integrated to {run.bottom[c]:.0f} m): give the "
                "deeper strata or a rigid base if they are known ("
                + ", ".join(feet[:8])
                + ("…" if len(feet) > 8 else "")
                + ")"
            )


def _left_out(sub, gc, tab, pts, cols, ctx, st) -> dict[int, tuple[float, str]]:
    """Per footing, what the stress-ratio rule leaves out at the design life [mm] and where."""
    site = ctx.site
    life = ctx.life
    full = _histories(ctx, sub, tab, gc)
    n = len(pts)
    all_life = per_column(
        sub,
        (
            full.imm_own
            + full.imm_nb
            + full.creep_own
            + full.creep_nb
            + full.cons_own
            + full.cons_nb
            + full.sec_own
            + full.sec_nb
        )[:, [life]],
        n,
    )[:, 0]
    gap = all_life - cols["tot"][:, life]
    out = {}
    names = [s.name for s in site.strata]
    starts = np.searchsorted(sub.col, np.arange(n))  # sublayers sorted by column
    ends = np.searchsorted(sub.col, np.arange(n), side="right")
    for c in np.flatnonzero(
        (pts.kind == "footing") & (gap > st.truncation_tolerance * np.abs(all_life))
    ):
        i = int(pts.owner[c])
        rows = np.arange(starts[c], ends[c])
        strata = sorted({names[k] for k in sub.stratum[rows]})
        if i not in out or gap[c] * 1000 > out[i][0]:
            out[i] = (float(gap[c] * 1000), ", ".join(strata))
    return out


# --------------------------------------------------------------------------- traces


def _traces(ctx, pts, gc, sub, hist, run, tab) -> dict[str, tuple[Trace, ...]]:
    """One :class:`Trace` per footing evaluation point (values at the design life)."""
    site = ctx.site
    life = ctx.life
    names = [s.name for s in site.strata]
    out: dict[str, list[Trace]] = {f.id: [] for f in site.footings}
    # the design-life column of each part first (the same sums, element by element)
    at = hist.life
    own_life = at["imm_own"] + at["creep_own"] + at["cons_own"] + at["sec_own"]
    nb_life = at["imm_nb"] + at["creep_nb"] + at["cons_nb"] + at["sec_nb"]
    h = sub.h
    coh = (tab.behaviour == "cohesive")[sub.col, sub.stratum] if len(sub) else np.zeros(0, bool)
    sp = np.where(
        np.isfinite(tab.sp[sub.col, sub.stratum]),
        tab.sp[sub.col, sub.stratum],
        np.where(
            np.isfinite(tab.ocr[sub.col, sub.stratum]),
            tab.ocr[sub.col, sub.stratum] * sub.sig0,
            sub.sig0,
        ),
    )
    sp = np.maximum(sp, sub.sig0)
    final = sub.sig0 + np.maximum(sub.sz_sust, 0.0)
    # texts as object arrays indexing a few strings (not a fixed-width copy of each)
    branches = np.array(["", "recompression (OC)", "virgin (NC)", "OC → NC"], dtype=object)
    branch = branches[
        np.where(~coh, 0, np.where(final <= sp + 1e-9, 1, np.where(sp <= sub.sig0 + 1e-9, 2, 3)))
    ]
    starts = np.searchsorted(sub.col, np.arange(len(pts)))
    ends = np.searchsorted(sub.col, np.arange(len(pts)), side="right")
    parts = {
        "on loading (mm)": (at["imm_own"] + at["imm_nb"]) * 1000,
        "creep (mm)": (at["creep_own"] + at["creep_nb"]) * 1000,
        "consolidation (mm)": (at["cons_own"] + at["cons_nb"]) * 1000,
        "secondary (mm)": (at["sec_own"] + at["sec_nb"]) * 1000,
        "σ'p (kPa)": np.where(coh, sp, np.nan),
        "final σ' (kPa)": np.where(coh, final, np.nan),
        "branch": branch,
        "primary strain": np.where(coh, sub.eps_tot, np.nan),
        "U(t)": hist.degree,
        "drainage path (m)": hist.drainage_path,
    }
    # what a checker needs to redo a sublayer by hand
    n_sub = len(sub)
    st = site.analysis
    c2 = (
        fld.creep_factors(np.array([ctx.times[life]]), st.bb_r3, st.bb_r)[sub.creep, 0]
        if n_sub
        else np.zeros(0)
    )
    gran = ~coh & (sub.method != "none") if n_sub else np.zeros(0, bool)
    is_sch = np.isin(sub.method, ["schmertmann", "schmertmann_1970"]) if n_sub else gran
    dp = np.full(n_sub, np.nan)
    c1 = np.full(n_sub, np.nan)
    factor = np.full(n_sub, np.nan)
    for col_, prm in run.own_params.items():
        rows_ = slice(int(starts[col_]), int(ends[col_]))
        dp[rows_] = prm["dp"]
        c1[rows_] = prm["c1"]
        factor[rows_] = prm["factor"]
    dp = np.where(is_sch, dp, np.nan)
    c1 = np.where(is_sch, c1, np.nan)
    e_given = tab.youngs[sub.col, sub.stratum] if n_sub else np.zeros(0)
    sounded = tab.sound[sub.col, sub.stratum] if n_sub else np.zeros(0, bool)
    qc_given = tab.qc[sub.col, sub.stratum] if n_sub else np.zeros(0)
    field_factor = np.where(
        sub.method == "schmertmann_1970",
        fld.FIELD_CONE_FACTOR["1970"],
        fld.FIELD_CONE_FACTOR["1978"],
    )
    f_used = np.where(is_sch & np.isfinite(factor), factor, field_factor)
    # the text of the modulus' source, formatted only where a trace shows it (the
    # sublayers of the footings' columns, not those of the map and query points)
    shown = np.flatnonzero(pts.kind[sub.col] == "footing") if n_sub else np.zeros(0, int)
    if n_sub:
        source = _modulus_source(
            f_used[shown],
            coh[shown],
            np.isfinite(sub.modulus[shown]),
            np.isfinite(e_given[shown]),
            sounded[shown],
            np.isfinite(qc_given[shown]),
            n_sub,
            shown,
        )
    else:
        source = np.zeros(0, dtype=object)
    qc_used = (
        np.where(
            ~coh & np.isnan(e_given) & (sounded | np.isfinite(qc_given)),
            sub.modulus / f_used,
            np.nan,
        )
        if n_sub
        else np.zeros(0)
    )
    parts = {
        "thickness h (m)": h,
        "Δp (kPa)": dp,
        "C1": c1,
        "C2": np.where(gran, c2, np.nan),
        "qc (kPa)": qc_used,
        "E source": source,
        **parts,
    }
    # per sublayer once (the traces take slices)
    own_stress = np.where(coh, sub.own_sust, sub.own_sz)
    nb_stress = np.where(coh, sub.sz_sust - sub.own_sust, sub.sz - sub.own_sz)
    strain = np.divide(own_life + nb_life, h, out=np.zeros_like(h), where=h > 0)
    stratum_name = np.array(names, dtype=object)[sub.stratum] if n_sub else np.zeros(0, object)
    method_text = np.empty(n_sub, dtype=object)  # what the traces show (footing columns)
    shown_method = sub.method[shown]  # labels (str): "" where no method applies
    shown_method[shown_method == ""] = "none"
    method_text[shown] = shown_method
    noted = np.flatnonzero(hist.drainage_note != "") if n_sub else np.zeros(0, int)
    for c in np.flatnonzero(pts.kind == "footing"):
        m = slice(int(starts[c]), int(ends[c]))
        i = int(pts.owner[c])
        rows = {
            "sigma_v0": sub.sig0[m],
            "own_stress": own_stress[m],
            "neighbour_stress": nb_stress[m],
            "strain": strain[m],
            "own_settlement": own_life[m],
            "neighbour_settlement": nb_life[m],
            "influence": sub.iz[m],
            "modulus": sub.modulus[m],
        }
        details = {key: values[m] for key, values in parts.items()}
        notes = list(run.own_notes.get(int(c), []))
        lo, hi = np.searchsorted(noted, [m.start, m.stop])
        for text, stratum in sorted(
            {(hist.drainage_note[r], names[sub.stratum[r]]) for r in noted[lo:hi]}
        ):
            notes.append(text if str(text).startswith(f"{stratum}:") else f"{stratum}: {text}")
        notes.append(
            f"integrated to {run.bottom[c]:.2f} m below ground: {run.reason[c]}"
            + (
                f" (at most {run.bound[c] * 1000:.3f} mm below)"
                if 0 < run.bound[c] < np.inf
                else ""
            )
        )
        out[site.footings[i].id].append(
            Trace(
                point=(float(pts.xy[c][0]), float(pts.xy[c][1])),
                top=sub.top[m],
                bottom=sub.bottom[m],
                stratum=tuple(stratum_name[m]),
                method=tuple(method_text[m]),
                details=details,
                notes=tuple(notes),
                **rows,
            )
        )
    return {key: tuple(v) for key, v in out.items()}


def _modulus_source(f_used, coh, eu_given, e_given, sounded, qc_given, n_sub, shown):
    """The text of each shown sublayer's modulus source, (n_sub,) ('' where not shown).

    Each distinct text is formatted once (the factors E/qc take few values) and
    then indexed: the same strings as formatting every sublayer.
    """
    u, inv = np.unique(f_used, return_inverse=True)
    inv = inv.ravel()
    fixed = ["undrained E given", "", "given", "from SPT (Burland & Burbidge)"]
    text = [f"{v:.2f}" for v in u]
    table = np.array(
        fixed + [t + "·qc from soundings" for t in text] + [t + "·qc given" for t in text],
        dtype=object,
    )
    code = np.where(
        coh,
        np.where(eu_given, 0, 1),
        np.where(
            e_given,
            2,
            np.where(sounded, 4 + inv, np.where(qc_given, 4 + len(u) + inv, 3)),
        ),
    )
    source = np.full(n_sub, "", dtype=object)
    source[shown] = table[code]
    return source


# --------------------------------------------------------------------------- section


def outline_chord(outline: np.ndarray, start: np.ndarray, direction: np.ndarray):
    """Where the line ``start + t·direction`` crosses a footing outline: (t_in, t_out) [m].

    The chord of the polygon on the line (its first entry and last exit), so a
    section through a 0.6 m strip shows it 0.6 m wide where the line crosses it
    square, and its true cut where it crosses at an angle. (nan, nan) when the
    line misses the outline.

    >>> sq = np.array([[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [0.0, 1.0]])
    >>> [round(v, 6) for v in outline_chord(sq, np.array([-1.0, 0.5]), np.array([1.0, 0.0]))]
    [1.0, 3.0]
    """
    p = np.asarray(outline, float)
    q = np.roll(p, -1, axis=0)
    e = q - p
    n = np.array([-direction[1], direction[0]])
    denom = e @ n
    ts = []
    for k in range(len(p)):
        if abs(denom[k]) < 1e-12:
            continue
        s = float(np.dot(start - p[k], n) / denom[k])
        if -1e-9 <= s <= 1 + 1e-9:
            hit = p[k] + s * e[k]
            ts.append(float(np.dot(hit - start, direction)))
    if len(ts) < 2:
        return math.nan, math.nan
    return min(ts), max(ts)


def worst_pair_section(results: Results, *, samples: int = 80):
    """A section through the stratigraphy along the line of the most utilised pair.

    The line runs through the two footing centres and extends beyond each by half
    the span (at least 3 m); it reaches the deeper integration depth of the two
    footings (at most 3 spans below the deeper base, so a deep integration does not
    flatten the drawing). Returns None when there are no checked pairs.
    """
    from sitesettle.mapping import Section, SectionFooting

    chk = results.checks
    if chk is None or len(chk.pairs.a) == 0:
        return None
    site = results.site
    nf = len(site.footings)
    u = np.nan_to_num(np.asarray(chk.pairs.utilisation, float), nan=-1.0)
    footing_pairs = (np.asarray(chk.pairs.a) < nf) & (np.asarray(chk.pairs.b) < nf)
    if not footing_pairs.any():
        return None
    u = np.where(footing_pairs, u, -np.inf)
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
    reach = float(max(results.influence_depth[ia], results.influence_depth[ib]))
    bottom = min(reach, max(a.depth, b.depth) + 3.0 * max(span, 1.0)) * 1.1
    tot = results.at_design_life()

    def cut(f: Footing) -> tuple[float, float]:
        """(centre distance, width) of the footing's outline along the line."""
        t0, t1 = outline_chord(np.asarray(f.outline, float), start, d)
        if not math.isfinite(t0):  # the line misses the outline: its centre, no width
            return float(np.dot(np.array([f.x, f.y]) - start, d)), 0.0
        return 0.5 * (t0 + t1), t1 - t0

    feet = tuple(
        SectionFooting(f.id, *cut(f), f.depth, float(tot[i])) for i, f in ((ia, a), (ib, b))
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


__all__ = [
    "FAILURE_SETTLEMENT_RATIO",
    "analyse",
    "assemble_footings",
    "characteristic_points",
    "depth_masks",
    "evaluation_points",
    "footing_loads",
    "integrate",
    "net_pressures",
    "prepare",
    "outline_chord",
    "worst_pair_section",
]
