"""Small synthetic Results for the output, plot and report tests.

Nothing here is an engineering calculation: the settlements are smooth made-up
fields chosen so that the tables tie together exactly as the output contract
requires (total = immediate + consolidation + secondary = own + neighbours;
differential = |total_a − total_b|; angular distortion = differential / span),
with a known number of failing footings and pairs.
"""

from __future__ import annotations

import math

import numpy as np

from sitesettle.mapping import Section, SectionFooting, default_grid
from sitesettle.options import Behaviour
from sitesettle.results import Checks, PairChecks, Results, SettlementMap, Trace
from sitesettle.site import Borehole, Footing, Interval, Site, Stratum

#: limits of the synthetic checks (the numbers of the generic criteria: total 50 mm,
#: EN 1997-1:2004 Annex H; angular distortion 1/500, Bjerrum 1963)
TOTAL_LIMIT = 0.050
BETA_LIMIT = 1.0 / 500.0


def rectangle(
    fid: str,
    x: float,
    y: float,
    width: float,
    length: float,
    depth: float = 1.0,
    load: float = 800.0,
) -> Footing:
    """An axis-aligned rectangular footing centred on (x, y)."""
    b, l = width / 2.0, length / 2.0
    outline = np.array([[x - l, y - b], [x + l, y - b], [x + l, y + b], [x - l, y + b]])
    return Footing(
        fid, outline, "rectangle", x, y, width, length, 0.0, depth, load, 0.25 * load, 0.5
    )


def make_site(
    ids=None,
    *,
    nx: int = 3,
    ny: int = 2,
    spacing: float = 6.0,
    crs: str | None = "EPSG:32633",
    name: str = "Riverside Depot",
    info=None,
) -> Site:
    """A regular nx × ny column grid of 2 m × 2.5 m pads."""
    n = nx * ny
    ids = list(ids) if ids is not None else [f"C{i + 1}" for i in range(n)]
    if len(ids) != n:
        raise ValueError("one id per footing")
    footings = []
    for k, fid in enumerate(ids):
        i, j = k % nx, k // nx
        footings.append(
            rectangle(fid, 10.0 + i * spacing, 20.0 + j * spacing, 2.0, 2.5, 1.2 + 0.1 * i)
        )
    strata = (
        Stratum("made ground", Behaviour.GRANULAR, unit_weight=17.0, youngs_modulus=8000.0),
        Stratum(
            "dense sand",
            Behaviour.GRANULAR,
            unit_weight=19.0,
            saturated_unit_weight=20.5,
            cone_resistance=9000.0,
        ),
        Stratum(
            "soft clay",
            Behaviour.COHESIVE,
            unit_weight=17.5,
            saturated_unit_weight=18.0,
            compression_index=0.35,
            recompression_index=0.05,
            void_ratio=1.1,
            ocr=1.5,
            consolidation_coefficient=1.2,
            secondary_index=0.01,
        ),
        Stratum("rock", Behaviour.RIGID),
    )
    boreholes = (
        Borehole(
            "BH1",
            5.0,
            15.0,
            (
                Interval("made ground", 0.0, 0.8),
                Interval("dense sand", 0.8, 6.0),
                Interval("soft clay", 6.0, 11.0),
                Interval("rock", 11.0, 20.0),
            ),
            2.5,
        ),
        Borehole(
            "BH2",
            25.0,
            30.0,
            (
                Interval("made ground", 0.0, 1.1),
                Interval("dense sand", 1.1, 5.0),
                Interval("soft clay", 5.0, 13.0, {"void_ratio": 1.25}),
                Interval("rock", 13.0, 20.0),
            ),
            3.0,
        ),
    )
    return Site(
        name,
        tuple(footings),
        strata,
        boreholes,
        water_depth=2.8,
        crs=crs,
        info=dict(
            info or {"client": "Harbour Estates", "job": "J-2041", "engineer": "A. N. Other"}
        ),
    )


def make_results(
    ids=None,
    *,
    nx: int = 3,
    ny: int = 2,
    spacing: float = 6.0,
    crs: str | None = "EPSG:32633",
    with_map: bool = True,
    with_checks: bool = True,
    checked_after: float = 0.0,
    scale: float = 1.0,
    name: str = "Riverside Depot",
    info=None,
    warnings: tuple[str, ...] = ("BH2 ends 0.4 m above the deepest influence depth",),
) -> Results:
    """Results for a regular grid of footings with a settlement bowl centred on the plan.

    ``scale`` multiplies every settlement (scale 1: the largest total is about
    57 mm, so some footings exceed the 50 mm limit and some pairs 1/500).
    """
    site = make_site(ids, nx=nx, ny=ny, spacing=spacing, crs=crs, name=name, info=info)
    n = len(site.footings)
    times = np.array([0.1, 1.0, 5.0, 10.0, 50.0])
    life = times.size - 1
    xy = np.array([[f.x, f.y] for f in site.footings])
    centre = xy.mean(axis=0) + np.array([2.0, 1.0])
    r2 = ((xy - centre) ** 2).sum(axis=1)
    bowl = np.exp(-r2 / (2 * (1.2 * spacing) ** 2))  # 0–1, made up
    imm = scale * (0.006 + 0.010 * bowl)[:, None] * np.ones(times.size)
    u = 1.0 - np.exp(-times / 4.0)  # made-up degree of consolidation
    cons = scale * (0.010 + 0.030 * bowl)[:, None] * u[None, :]
    sec = scale * 0.002 * np.clip(np.log10(times / 5.0), 0.0, None)[None, :] * (1 + bowl)[:, None]
    total = imm + cons + sec
    own = 0.8 * total
    neigh = total - own
    tilt = 1e-4 * (1 + np.arange(n)) / n
    tilt[0] = math.nan if n > 3 else tilt[0]  # a footing whose tilt is not defined
    results_map = None
    if with_map:
        gx, gy = default_grid(site.footings, 1.0, 4.0)
        X, Y = np.meshgrid(gx, gy)
        field = (
            scale
            * 0.058
            * np.exp(-((X - centre[0]) ** 2 + (Y - centre[1]) ** 2) / (2 * (1.5 * spacing) ** 2))
        )
        results_map = SettlementMap(
            gx, gy, field, "elastic strain integration on a grid (synthetic)"
        )
    checks = None
    if with_checks:
        checks = _checks(
            site, total[:, life], total[:, -1] - _at(total, times, checked_after), checked_after
        )
    return Results(
        site=site,
        times=times,
        design_life_index=life,
        immediate=imm,
        consolidation=cons,
        secondary=sec,
        own=own,
        neighbours=neigh,
        point_xy=np.repeat(xy[:, None, :], 4, axis=1),
        point_total=np.repeat(total[:, None, :], 4, axis=1),
        tilt=tilt,
        tilt_direction=np.linspace(0.0, 315.0, n),
        net_pressure=np.full(n, 180.0) + np.arange(n),
        sustained_net_pressure=np.full(n, 150.0),
        influence_depth=np.full(n, 6.5),
        methods=tuple("schmertmann + consolidation" for _ in range(n)),
        outside_hull=np.arange(n) == n - 1,
        traces=_traces(site, xy, total[:, life], own[:, life]),
        map=results_map,
        checks=checks,
        warnings=warnings,
    )


def _traces(site: Site, xy: np.ndarray, total: np.ndarray, own: np.ndarray) -> dict:
    """A made-up trace of the worst footing: 8 sublayers whose settlements add up to its own."""
    i = int(np.argmax(total))
    top = np.linspace(1.4, 6.0, 9)
    w = np.linspace(1.0, 0.2, 8)  # made-up share of each sublayer
    own_s = own[i] * w / w.sum()
    neigh_s = (total[i] - own[i]) * w / w.sum()
    tr = Trace(
        point=(float(xy[i, 0]), float(xy[i, 1])),
        top=top[:-1],
        bottom=top[1:],
        stratum=("dense sand",) * 6 + ("soft clay",) * 2,
        method=("schmertmann",) * 6 + ("consolidation",) * 2,
        sigma_v0=np.linspace(30.0, 90.0, 8),
        own_stress=np.linspace(150.0, 20.0, 8),
        neighbour_stress=np.linspace(5.0, 12.0, 8),
        strain=(own_s + neigh_s) / np.diff(top),
        own_settlement=own_s,
        neighbour_settlement=neigh_s,
        influence=np.r_[np.linspace(0.3, 0.1, 6), np.nan, np.nan],
    )
    return {site.footings[i].id: (tr,)}


def _at(total: np.ndarray, times: np.ndarray, t: float) -> np.ndarray:
    """Total settlement at time t (0 before the first time), interpolated in log time."""
    if t <= 0:
        return np.zeros(total.shape[0])
    return np.array([np.interp(math.log(t), np.log(times), row) for row in total])


def _checks(site: Site, total: np.ndarray, checked: np.ndarray, checked_after: float) -> Checks:
    """Grid-neighbour pairs checked against 1/500 and footings against 50 mm."""
    xy = np.array([[f.x, f.y] for f in site.footings])
    d = np.hypot(*(xy[:, None, :] - xy[None, :, :]).transpose(2, 0, 1))
    np.fill_diagonal(d, np.inf)
    a, b = np.nonzero(np.triu(d <= 1.01 * d.min(), 1))  # grid neighbours, a < b
    span = np.hypot(*(xy[a] - xy[b]).T)
    movement = checked if checked_after > 0 else total
    diff = np.abs(movement[a] - movement[b])
    beta = diff / span
    util = beta / BETA_LIMIT
    k = len(a)
    pairs = PairChecks(
        a=a,
        b=b,
        span=span,
        differential=diff,
        angular_distortion=beta,
        limit=("angular distortion ≤ 1/500",) * k,
        limit_value=np.full(k, BETA_LIMIT),
        limit_measure=("angular_distortion",) * k,
        limit_source=("Bjerrum (1963); EN 1997-1:2004 Annex H",) * k,
        utilisation=util,
        passed=util <= 1.0,
        origin=("auto",) * k,
    )
    passed = total <= TOTAL_LIMIT
    reasons = tuple("" if p else f"total {t * 1000:.1f} mm > 50 mm" for p, t in zip(passed, total))
    return Checks(
        criteria="eurocode7",
        sources=("EN 1997-1:2004 Annex H", "Bjerrum (1963)"),
        pairs=pairs,
        lines=None,
        footing_passed=passed,
        footing_reasons=reasons,
        footing_limit_total=TOTAL_LIMIT,
        footing_limit_source="EN 1997-1:2004 Annex H",
        building_tilt=2.5e-4,
        building_tilt_direction=30.0,
        checked_after=checked_after,
    )


def make_section(results: Results, i: int = 0, j: int = 1) -> Section:
    """A section through footings i and j with the strata of the factory's boreholes."""
    fi, fj = results.site.footings[i], results.site.footings[j]
    start = (fi.x - 4.0, fi.y)
    end = (fj.x + 4.0, fj.y)
    length = math.hypot(end[0] - start[0], end[1] - start[1])
    d = np.linspace(0.0, length, 25)
    s = d / length
    tops = np.vstack([np.zeros_like(d), 0.8 + 0.3 * s, 6.0 - 1.0 * s, 11.0 + 2.0 * s])
    total = results.at_design_life()
    fs = (
        SectionFooting(fi.id, 4.0, fi.length, fi.depth, float(total[i])),
        SectionFooting(fj.id, length - 4.0, fj.length, fj.depth, float(total[j])),
    )
    return Section(
        start,
        end,
        d,
        tuple(st.name for st in results.site.strata),
        tops,
        16.0,
        2.5 + 0.5 * s,
        fs,
        tuple(st.behaviour.value for st in results.site.strata),
        f"Section through {fi.id} and {fj.id}",
    )
