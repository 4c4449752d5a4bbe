"""Benchmark of the stress engine (sitesettle.stress): a plain script printing a table.

Run:  python benchmarks/stress_bench.py [--quick] [--tolerance=1e-3]

1. exact evaluations per second (load × point pairs) for rectangles and polygons;
2. a plan of 2,000 rectangular footings (sides 1.5–4 m on a 6 m column grid,
   pressures 100–300 kPa, base depth 1–1.5 m) evaluated at 10,000 plan points
   plus 5 points per footing, each at 30 depths down to 30 m (600,000 points),
   with the default tolerance: wall time (untraced), peak memory (traced, in a
   second run), multipole clusters and exact loads evaluated per point, and the
   largest error against the exact sum on a random subsample of points.
The scenario is invented for this benchmark.
"""

from __future__ import annotations

import resource
import sys
import time
import tracemalloc

import numpy as np

from sitesettle import stress, treecode


def plan(n_side_x=50, n_side_y=40, seed=7):
    rng = np.random.default_rng(seed)
    gx, gy = np.meshgrid(np.arange(n_side_x) * 6.0, np.arange(n_side_y) * 6.0)
    n = gx.size
    width = rng.uniform(1.5, 4.0, n)
    length = np.minimum(width * rng.uniform(1.0, 1.6, n), 4.0)
    width = np.minimum(width, length)
    loads = stress.Loads.rectangles(
        gx.ravel(),
        gy.ravel(),
        width,
        length,
        rng.choice([0.0, 90.0], n),
        rng.uniform(100.0, 300.0, n),
        rng.uniform(1.0, 1.5, n),
    )
    return loads, rng


def points(loads, rng, n_plan=10_000, n_depths=30):
    x0, x1 = loads.x.min() - 5, loads.x.max() + 5
    y0, y1 = loads.y.min() - 5, loads.y.max() + 5
    plan_xy = np.column_stack([rng.uniform(x0, x1, n_plan), rng.uniform(y0, y1, n_plan)])
    # centre and four characteristic points (±0.37 B, ±0.37 L) of every footing
    t = np.radians(loads.rotation)
    c, s = np.cos(t), np.sin(t)
    own = [np.column_stack([loads.x, loads.y])]
    for sl, sb in ((1, 1), (1, -1), (-1, 1), (-1, -1)):
        dl, db = 0.37 * sl * loads.length, 0.37 * sb * loads.width
        own.append(np.column_stack([loads.x + dl * c - db * s, loads.y + dl * s + db * c]))
    xy = np.vstack([plan_xy] + own)
    z = np.linspace(1.0, 30.0, n_depths)
    pts = np.column_stack([np.repeat(xy, n_depths, axis=0), np.tile(z, len(xy))])
    return pts


def rate(fn, pairs):
    t = time.perf_counter()
    fn()
    return pairs / (time.perf_counter() - t)


def main(quick=False, tolerance=1e-3):
    rows = []
    loads, rng = plan()
    pts = points(loads, rng)
    # 1. exact throughput
    sub = loads.subset(slice(0, 500))
    p = pts[rng.choice(len(pts), 4000, replace=False)]
    rows.append(
        (
            "exact rectangles [pairs/s]",
            f"{rate(lambda: stress.stress_sums(sub, p, tolerance=0), len(sub) * len(p)):.3g}",
        )
    )
    hexa = [
        np.column_stack(
            [x + 1.5 * np.cos(np.arange(6) * np.pi / 3), y + 1.5 * np.sin(np.arange(6) * np.pi / 3)]
        )
        for x, y in zip(sub.x[:200], sub.y[:200])
    ]
    poly = stress.Loads.polygons(hexa, 200.0, 1.2)
    rows.append(
        (
            "exact hexagons [pairs/s]",
            f"{rate(lambda: stress.stress_sums(poly, p, tolerance=0), len(poly) * len(p)):.3g}",
        )
    )
    # 2. the plan
    if quick:
        pts = pts[rng.choice(len(pts), 60_000, replace=False)]
    # timed without tracemalloc (which slows every Python allocation), then run
    # again under it for the peak memory
    treecode._STATS = counts = {}
    t = time.perf_counter()
    sz, tt = stress.stress_sums(loads, pts, tolerance=tolerance)
    wall = time.perf_counter() - t
    treecode._STATS = None
    tracemalloc.start()
    stress.stress_sums(loads, pts, tolerance=tolerance)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    check = rng.choice(len(pts), 3000, replace=False)
    ez, et = stress.stress_sums(loads, pts[check], tolerance=0)
    qmax = float(np.abs(loads.pressure).max())
    rows += [
        ("plan: loads × points", f"{len(loads)} × {len(pts)}"),
        ("plan: wall time [s]", f"{wall:.2f}"),
        ("plan: peak traced memory [MB]", f"{peak / 2**20:.0f}"),
        ("process max RSS [MB]", f"{rss:.0f}"),
        (
            "per point: multipole clusters, exact loads",
            f"{counts.get('far', 0) / len(pts):.0f}, {counts.get('exact', 0) / len(pts):.0f}",
        ),
        ("max |σz − exact| [kPa] (3,000 points)", f"{np.abs(sz[check] - ez).max():.2e}"),
        ("max |T − exact| [kPa]", f"{np.abs(tt[check] - et).max():.2e}"),
        (f"allowed: {tolerance:g} · max q [kPa]", f"{tolerance * qmax:.3f}"),
    ]
    w = max(len(r[0]) for r in rows)
    for k, v in rows:
        print(f"{k:<{w}}  {v}")


if __name__ == "__main__":
    tol = 1e-3
    for arg in sys.argv[1:]:
        if arg.startswith("--tolerance="):
            tol = float(arg.split("=", 1)[1])
    main(quick="--quick" in sys.argv, tolerance=tol)
