"""Dense-polygon benchmark: a raft with a densely digitised outline (a plain script).

The raft is a 40 m × 25 m rectangle with 5 m rounded corners whose sides carry a
shallow wave (amplitude 0.05 m, wavelength 2 m) — the kind of outline a CAD
export of a curved slab edge gives — sampled at n equally spaced vertices. For
each n it reports

(a) the stress kernel on the points the analysis uses: ``stress_states`` is
    replaced while ``analyse`` runs by a stub that records the points of every
    call; the polygon alone is then timed exactly (``tolerance=0``) and at the
    default tolerance on a random sample of those points, giving the cost per
    (point × vertex), the estimated time of all the calls, and the largest
    difference between the two against q_max;
(b) ``sitesettle check`` end to end (a subprocess, as benchmarks/scale_bench.py
    runs it) on a generated project folder, the raft alone and inside a small
    plan of pads (the plan of scale_bench.py with this raft in place of its own).

Usage::

    python benchmarks/polygon_bench.py [--sizes 100 1000 8000 50000 200000]
                                       [--pads 40] [--no-cli] [--no-kernel]

Never run as a test: timings depend on the machine (the project's rule). The
scenario is invented for this benchmark.
"""

from __future__ import annotations

import argparse
import json
import pathlib
import subprocess
import sys
import tempfile
import time

import numpy as np

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))
import scale_bench  # noqa: E402  (the project generator and the CLI runner)


def raft_outline(n: int, x0: float = 0.0, y0: float = 0.0) -> np.ndarray:
    """n vertices, counter-clockwise, of the wavy rounded 40 m × 25 m raft [m]."""
    hx, hy, rc = 15.0, 7.5, 5.0  # half sides of the inner rectangle, corner radius
    # pieces in order, counter-clockwise from the bottom of the east side: a straight
    # side (inner corner it leaves from, its outward normal angle, its length) then a
    # quarter circle about the inner corner it reaches
    pieces = [
        ((hx, -hy), 0.0, 2 * hy),
        ((hx, hy), 0.5 * np.pi, 2 * hx),
        ((-hx, hy), np.pi, 2 * hy),
        ((-hx, -hy), 1.5 * np.pi, 2 * hx),
    ]
    arc = 0.5 * np.pi * rc
    per = sum(p[2] for p in pieces) + 4 * arc
    s = np.arange(n) * per / n
    out, nrm = np.empty((n, 2)), np.empty((n, 2))
    pos = 0.0
    for (cx, cy), th, length in pieces:
        # straight side along the tangent (−sin θ, cos θ), offset rc along the normal
        m = (s >= pos) & (s < pos + length)
        u = s[m] - pos
        ncx, ncy = np.cos(th), np.sin(th)
        out[m, 0] = cx + rc * ncx - u * ncy
        out[m, 1] = cy + rc * ncy + u * ncx
        nrm[m] = [ncx, ncy]
        pos += length
        # quarter circle about the next inner corner
        ex, ey = cx - length * ncy, cy + length * ncx
        m = (s >= pos) & (s < pos + arc)
        phi = th + (s[m] - pos) / rc
        out[m, 0], out[m, 1] = ex + rc * np.cos(phi), ey + rc * np.sin(phi)
        nrm[m, 0], nrm[m, 1] = np.cos(phi), np.sin(phi)
        pos += arc
    out += (0.05 * np.sin(2 * np.pi * s / 2.0))[:, None] * nrm
    return out + [x0, y0]


def write_project(folder: pathlib.Path, n_vertices: int, n_pads: int) -> None:
    """scale_bench's project with this raft; no pads at all when ``n_pads`` is 0."""
    import geopandas as gpd
    import shapely

    scale_bench.write_project(folder, max(n_pads, 3), with_map=True)
    nx = int(np.ceil(np.sqrt(max(1, n_pads - max(2, n_pads // 50) - 1))))
    x0 = scale_bench.E0 + 6.0 * nx + 30.0
    y0 = scale_bench.N0 + 12.5
    raft = shapely.Polygon(raft_outline(n_vertices, x0, y0))
    gdf = gpd.GeoDataFrame(
        {"id": ["R1"], "dead_load": [30.0 * raft.area], "live_load": [10.0 * raft.area]},
        geometry=[raft],
        crs="EPSG:27700",
    )
    gdf.to_file(folder / "raft.gpkg", driver="GPKG")
    if n_pads == 0:
        toml = (folder / "site.toml").read_text(encoding="utf-8")
        toml = toml.replace('file = ["footings.csv", "raft.gpkg"]', 'file = "raft.gpkg"')
        (folder / "site.toml").write_text(toml, encoding="utf-8")


KERNEL = r"""
import json, sys, time
import numpy as np
from sitesettle import stress
from sitesettle.io.project import load_site
import sitesettle.analysis as an
site = load_site(sys.argv[1])
sample = int(sys.argv[2])
calls = []
exact_sums = stress.stress_sums
def sums(loads, pressures, points, **k):  # record the points the analysis asks for; no stresses
    calls.append((loads, np.asarray(points)))
    shape = (len(np.atleast_2d(pressures)), len(points))
    return np.zeros(shape), np.zeros(shape)
real_states = stress.stress_states
an.stress.stress_states = sums
t = time.perf_counter(); an.analyse(site, with_map=True); t_rest = time.perf_counter() - t
an.stress.stress_states = real_states  # stress_sums below sums through it
loads, pts = calls[0]
poly = loads.subset(np.flatnonzero(loads.kind == stress.POLYGON))
nv = sum(len(o) for o in poly.outlines)
rng = np.random.default_rng(1)
sub = pts[rng.choice(len(pts), min(sample, len(pts)), replace=False)]
below = sub[sub[:, 2] > poly.depth.max()]  # points that see the raft at all
exact_sums(poly, below[:50], tolerance=0)  # compile (or load) both paths
exact_sums(poly, below[:50], notes=[])
t = time.perf_counter(); ex, _ = exact_sums(poly, sub, tolerance=0)
te = (time.perf_counter() - t) / len(sub)
t = time.perf_counter(); ap, _ = exact_sums(poly, sub, notes=[])
ta = (time.perf_counter() - t) / len(sub)
old = below[: max(20, min(len(below), 2_000_000 // nv))]  # the numpy edge sum, before
t = time.perf_counter()
stress._polygon_dense(stress._edges(poly, [0]), old[:, 0], old[:, 1], old[:, 2])
to = (time.perf_counter() - t) / len(old)
qmax = float(np.max(np.abs(loads.pressure)))
n_eval = sum(len(p) for _, p in calls)
frac = len(below) / len(sub)
print(json.dumps({
    "analysis without stresses s": t_rest, "stress calls": len(calls),
    "points per call": len(pts), "points, all calls": n_eval,
    "share below the raft's plane": frac, "vertices": nv,
    "numpy ns per point-vertex": 1e9 * to / nv,
    "numpy s, all calls (est.)": to * frac * n_eval,
    "exact ns per point-vertex": 1e9 * te / frac / nv,
    "exact s, all calls (est.)": te * n_eval,
    "default tol us per point": 1e6 * ta / frac,
    "default tol s, all calls (est.)": ta * n_eval,
    "default tol max error / q_max": float(np.max(np.abs(ap - ex))) / qmax}))
"""


def kernel(folder: pathlib.Path, sample: int) -> dict:
    done = subprocess.run(
        [sys.executable, "-c", KERNEL, str(folder), str(sample)], capture_output=True, text=True
    )
    if done.returncode != 0:
        return {"(kernel failed)": done.stderr[-400:]}
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[100, 1000, 8000, 50000, 200000])
    ap.add_argument("--pads", type=int, default=40, help="pads of the small plan")
    ap.add_argument("--no-cli", action="store_true", help="skip the end-to-end runs")
    ap.add_argument("--no-kernel", action="store_true", help="skip the in-process kernel runs")
    ap.add_argument(
        "--sample",
        type=int,
        default=2000,
        help="analysis points on which the polygon kernel is timed",
    )
    ap.add_argument("--alone-only", action="store_true", help="only the raft alone")
    ap.add_argument("--keep", help="write the projects here (kept) instead of a temp folder")
    args = ap.parse_args()
    base = pathlib.Path(args.keep) if args.keep else pathlib.Path(tempfile.mkdtemp())
    plans = [("alone", 0)] + ([] if args.alone_only else [("with pads", args.pads)])
    for n in args.sizes:
        for label, pads in plans:
            folder = base / f"raft_{n}_{pads}"
            write_project(folder, n, pads)
            print(f"n = {n:>7} vertices, raft {label}:", flush=True)
            if not args.no_cli:
                wall, peak, rc = scale_bench.run_subprocess(folder, True)
                print(
                    f"    sitesettle check      {wall:8.1f} s  {peak:6.0f} MB  exit {rc}",
                    flush=True,
                )
            if not args.no_kernel:
                t = time.perf_counter()
                res = kernel(folder, args.sample)
                for key, val in res.items():
                    fmt = f"{val:10.3f}" if isinstance(val, float) else f"{val!s:>10}"
                    print(f"    {key:<22}{fmt}")
                print(f"    (kernel run {time.perf_counter() - t:.1f} s)", flush=True)


if __name__ == "__main__":
    main()
