"""Vectorised steps of the analysis pipeline against the simple per-item loops they replace.

Each replacement must give the same numbers, bit for bit, as the loop it replaced
(issue 18: speed and memory only, results unchanged); the loops are kept, or
written out here, as the reference.
"""

from __future__ import annotations

import numpy as np
from hypothesis import example, given, settings
from hypothesis import strategies as st

from sitesettle import columns as colmod


def _loop_edges(base, scale, fraction, top, bottom, boundaries):
    """The per-column loop that integrate ran before (column_edges, one column at a time)."""
    rows, tops, bots = [], [], []
    for r in range(len(base)):
        b = boundaries[r][np.isfinite(boundaries[r])]
        tpl = colmod.regular_edges(base[r], scale[r], fraction, colmod.MAX_INTEGRATION_DEPTH)
        e = colmod.column_edges(base[r], scale[r], fraction, top[r], bottom[r], b, tpl)
        rows.append(np.full(len(e) - 1, r))
        tops.append(e[:-1])
        bots.append(e[1:])
    return np.concatenate(rows), np.concatenate(tops), np.concatenate(bots)


@st.composite
def _columns(draw):
    m = draw(st.integers(1, 12))
    bases = draw(st.lists(st.sampled_from([0.0, 0.5, 1.2, 2.0]), min_size=m, max_size=m))
    scales = draw(st.lists(st.sampled_from([0.6, 1.5, 2.25, 4.0, 30.0]), min_size=m, max_size=m))
    fraction = draw(st.sampled_from([0.05, 0.1, 0.25]))
    top, bottom, bnd = [], [], []
    nb = draw(st.integers(0, 6))
    for r in range(m):
        z0 = bases[r] + draw(st.sampled_from([0.0, 0.0, 3.0, 17.5]))
        z1 = z0 + draw(st.floats(0.01, 300.0))
        top.append(z0)
        bottom.append(z1)
        row = draw(
            st.lists(
                st.one_of(
                    st.floats(0.0, 400.0),
                    st.sampled_from([np.inf, np.nan, z0, z1, z0 + 1e-4, 5.0, 5.0]),
                ),
                min_size=nb,
                max_size=nb,
            )
        )
        bnd.append(row)
    return (
        np.array(bases),
        np.array(scales),
        fraction,
        np.array(top),
        np.array(bottom),
        np.array(bnd, dtype=float).reshape(m, nb),
    )


@settings(max_examples=150, deadline=None)
@given(_columns())
@example(  # a boundary 1e-163 below the top: a sublayer far under 1e-9 of its cap
    (
        np.zeros(2),
        np.full(2, 0.6),
        0.05,
        np.zeros(2),
        np.ones(2),
        np.array([[0.0], [1.35985569e-163]]),
    )
)
def test_many_column_edges_is_the_column_loop(case):
    """The sublayers of all columns at once equal column_edges column by column, exactly."""
    base, scale, fraction, top, bottom, bnd = case
    want = _loop_edges(base, scale, fraction, top, bottom, bnd)
    got = colmod.many_column_edges(base, scale, fraction, top, bottom, bnd, {})
    for w, g in zip(want, got):
        assert w.shape == g.shape
        assert np.array_equal(w, g)


def test_many_column_edges_splits_and_merges():
    """A case with a sliver next to a boundary and a thick first sublayer to split
    (the rules of column_edges: slivers under a quarter of the first sublayer merged,
    no sublayer thicker than 15 % of its depth, at least 0.05 m)."""
    base = np.array([1.0, 1.0])
    scale = np.array([2.0, 40.0])
    bnd = np.array([[3.0001, 8.0], [2.0, np.nan]])
    row, top, bot = colmod.many_column_edges(
        base, scale, 0.1, np.array([1.0, 1.0]), np.array([10.0, 12.0]), bnd, {}
    )
    assert np.all(bot > top)
    assert np.all(bot - top <= np.maximum(colmod.DEPTH_FRACTION * top, 0.05) * (1 + 1e-12))
    near = top[(row == 0) & (np.abs(top - 3.0001) < colmod.MIN_SUBLAYER)]
    assert near.tolist() == [3.0001]  # the regular edge at 3.0 merged into the boundary
    assert np.array_equal(np.unique(row), [0, 1])


# --------------------------------------------------------------------------- ground, pressures

DEMO = __import__("pathlib").Path(__file__).resolve().parents[1] / "demo_site"


def _demo_site():
    import sitesettle

    return sitesettle.load_site(DEMO)


def test_column_arrays_are_the_columns():
    """Ground.column_arrays holds what Ground.columns' Column objects hold (demo ground,
    with measured interval values: several strata variants)."""
    from sitesettle.ground import Ground

    site = _demo_site()
    ground = Ground(site)
    rng = np.random.default_rng(7)
    fx = np.array([f.x for f in site.footings])
    fy = np.array([f.y for f in site.footings])
    x = np.concatenate([fx, rng.uniform(fx.min() - 20, fx.max() + 20, 200)])
    y = np.concatenate([fy, rng.uniform(fy.min() - 20, fy.max() + 20, 200)])
    cols = ground.columns(x, y)
    g = ground.column_arrays(x, y)
    assert len(g.variants) >= 1
    for m, c in enumerate(cols):
        assert np.array_equal(c.tops, g.tops[m]) and np.array_equal(c.bottoms, g.bottoms[m])
        assert c.water_depth == g.water[m] and c.outside_hull == g.outside_hull[m]
        assert c.strata == g.variants[g.variant[m]]


def test_pressure_parts_is_the_per_footing_loop():
    """The net-pressure parts from the ground as arrays equal the per-footing loop over
    Column.total_stress they replaced, bit for bit (demo plan: pads, strips, a raft)."""
    from sitesettle.analysis import pressure_parts
    from sitesettle.ground import Ground

    site = _demo_site()
    ground = Ground(site)
    dead, live, sust = [], [], []
    for f in site.footings:  # the loop analysis.pressure_parts ran before
        col = ground.columns([f.x], [f.y])[0]
        s0 = float(col.total_stress(np.array([f.depth]))[0])
        dead.append(f.dead_load / f.area + (f.fill_unit_weight * f.depth - s0))
        live.append(f.live_load / f.area)
        sust.append(f.sustained_live_fraction * f.live_load / f.area)
    got = pressure_parts(site, ground)
    for want, g in zip((dead, live, sust), got):
        assert np.array_equal(np.array(want), g)


# --------------------------------------------------------------------------- tilt, traces


@settings(max_examples=40, deadline=None)
@given(st.integers(3, 50), st.integers(1, 30), st.integers(0, 2**32 - 1))
def test_footing_tilt_in_groups_is_per_footing(n_pts, n_feet, seed):
    """footing_tilt on a stack of footings with the same point count gives, bit for bit,
    what it gives footing by footing (assemble_footings relies on it)."""
    from sitesettle.checks import footing_tilt

    rng = np.random.default_rng(seed)
    xy = rng.normal(size=(n_feet, n_pts, 2)) * rng.uniform(0.2, 5.0, (n_feet, 1, 1))
    xy += rng.uniform(-5e5, 5e5, (n_feet, 1, 2))
    s = 0.03 + 0.01 * rng.normal(size=(n_feet, n_pts))
    t, d = footing_tilt(xy, s)
    for i in range(n_feet):
        ti, di = footing_tilt(xy[i], s[i])
        assert t[i] == ti and (d[i] == di or (np.isnan(d[i]) and np.isnan(di)))


def test_modulus_source_is_the_formatted_text():
    """The modulus-source texts, formatted once per distinct factor, equal the
    element-wise formatting the trace tables used before."""
    from sitesettle.analysis import _modulus_source

    rng = np.random.default_rng(3)
    n = 500
    f = rng.choice([2.0, 2.5, 3.5, 2.8333333, 3.1049999], n)
    coh, eu, eg, snd, qg = (rng.random(n) < p for p in (0.3, 0.5, 0.3, 0.4, 0.5))
    shown = np.sort(rng.choice(n + 40, n, replace=False))
    want = np.where(
        coh,
        np.where(eu, "undrained E given", ""),
        np.where(
            eg,
            "given",
            np.where(
                snd,
                np.char.add(np.char.mod("%.2f", f), "·qc from soundings"),
                np.where(
                    qg,
                    np.char.add(np.char.mod("%.2f", f), "·qc given"),
                    "from SPT (Burland & Burbidge)",
                ),
            ),
        ),
    )
    got = _modulus_source(f, coh, eu, eg, snd, qg, n + 40, shown)
    assert got[shown].tolist() == want.tolist()
    assert set(np.delete(got, shown).tolist()) <= {""}


def _assemble_loop(ctx, pts, cols, run, significant):
    """The per-footing loop of analysis.assemble_footings before it was vectorised."""
    from sitesettle import checks as checks_mod

    site = ctx.site
    nf, nt = len(site.footings), len(ctx.times)
    fcols = np.flatnonzero(pts.kind == "footing")
    owner = pts.owner[fcols]
    npts = int(np.bincount(owner, minlength=nf).max())
    nst = int(pts.station[fcols].max()) + 1
    out = {k: np.zeros((nf, nt)) for k in ("imm", "creep", "con", "sec", "own", "nb")}
    point_xy, point_total = np.full((nf, npts, 2), np.nan), np.full((nf, npts, nt), np.nan)
    station_xy, station_total = np.full((nf, nst, 2), np.nan), np.full((nf, nst, nt), np.nan)
    tilt, tilt_dir, depth, sig = np.zeros(nf), np.zeros(nf), np.zeros(nf), np.full(nf, np.nan)
    starts = np.searchsorted(owner, np.arange(nf))
    ends = np.searchsorted(owner, np.arange(nf), side="right")
    for i in range(nf):
        cs = fcols[starts[i] : ends[i]]
        stn = pts.station[cs]
        k = int(stn.max()) + 1
        point_xy[i, : len(cs)] = pts.xy[cs]
        point_total[i, : len(cs)] = cols["tot"][cs]
        parts = {}
        for name in out:
            acc = np.zeros((k, nt))
            np.add.at(acc, stn, cols[name][cs])
            parts[name] = acc / np.bincount(stn, minlength=k)[:, None]
        sxy = np.zeros((k, 2))
        np.add.at(sxy, stn, pts.xy[cs])
        sxy /= np.bincount(stn, minlength=k)[:, None]
        stot = parts["imm"] + parts["creep"] + parts["con"] + parts["sec"]
        station_xy[i, :k] = sxy
        station_total[i, :k] = stot
        g = int(np.argmax(stot[:, ctx.life])) if k > 1 else 0
        for name in out:
            out[name][i] = parts[name][g]
        if len(cs) >= 3:
            tilt[i], tilt_dir[i] = checks_mod.footing_tilt(pts.xy[cs], cols["tot"][cs, ctx.life])
        depth[i] = float(np.max(run.bottom[cs]))
        s = significant[cs]
        sig[i] = float(np.nanmax(s)) if np.isfinite(s).any() else site.footings[i].depth
    out.update(
        point_xy=point_xy,
        point_total=point_total,
        station_xy=station_xy,
        station_total=station_total,
        tilt=tilt,
        tilt_dir=tilt_dir,
        depth=depth,
        significant=sig,
    )
    return out


def test_assemble_footings_is_the_per_footing_loop():
    """assemble_footings on all footings at once equals the per-footing loop, bit for bit,
    on the demo plan's columns (rigid pads, strips with stations, a raft) with random
    column settlements, depths and significant depths (some NaN)."""
    from sitesettle import analysis as an
    from sitesettle import field as fld

    site = _demo_site()
    ctx = an.prepare(site)
    pts, _ = an.evaluation_points(ctx.site, with_map=False)
    rng = np.random.default_rng(11)
    n, nt = len(pts), len(ctx.times)
    cols = {k: rng.uniform(0, 0.05, (n, nt)) for k in ("imm", "creep", "con", "sec", "own")}
    cols["tot"] = cols["imm"] + cols["creep"] + cols["con"] + cols["sec"]
    cols["nb"] = cols["tot"] - cols["own"]
    significant = np.where(rng.random(n) < 0.3, np.nan, rng.uniform(2, 20, n))
    sub = an._empty_sublayers()
    run = an.Integration(sub, rng.uniform(5, 40, n), np.full(n, ""), np.zeros(n), {}, {})
    assert isinstance(sub, fld.Sublayers)
    got = an.assemble_footings(ctx, pts, cols, run, significant)
    want = _assemble_loop(ctx, pts, cols, run, significant)
    for key, w in want.items():
        assert np.array_equal(w, got[key], equal_nan=True), key
