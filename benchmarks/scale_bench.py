"""Scale benchmark: the whole ``sitesettle check`` on generated plans (a plain script).

For each size it writes a project folder — a column grid of pads (1.5–4 m, varied
loads), wall strips along two edges, an L-shaped raft polygon (GeoJSON), sand over a
clay lens over gravel on rock, nine boreholes — runs ``sitesettle check`` on it as a
subprocess (wall time and peak resident memory of the child), then repeats the work
in-process to time each phase: start-up (imports), reading, the analysis stages as
the progress callback reports them, and each output. Finally the growth exponent of
the wall time is fitted between the sizes (log–log least squares).

Usage::

    python benchmarks/scale_bench.py [--sizes 100 1000 10000] [--no-phases] [--keep DIR]

Never run as a test: timings depend on the machine (the project's rule).
"""

from __future__ import annotations

import argparse
import json
import math
import os
import pathlib
import subprocess
import sys
import tempfile
import time

import numpy as np

SITE = """\
[project]
name = "scale benchmark, {n} footings"
crs = "EPSG:27700"

[groundwater]
depth = "2.5 m"

[footings]
file = ["footings.csv", "raft.gpkg"]
depth = "1.2 m"
sustained_live_fraction = 0.3

[boreholes]
file = "boreholes.csv"

[[strata]]
name = "sand"
behaviour = "granular"
unit_weight = "18 kN/m^3"
saturated_unit_weight = "20 kN/m^3"
poisson_ratio = 0.3
cone_resistance = "10 MPa"

[[strata]]
name = "clay"
behaviour = "cohesive"
unit_weight = "17 kN/m^3"
saturated_unit_weight = "18 kN/m^3"
poisson_ratio = 0.35
compression_index = 0.3
recompression_index = 0.05
void_ratio = 1.1
ocr = 1.5
consolidation_coefficient = "1.5 m^2/yr"
secondary_index = 0.005

[[strata]]
name = "gravel"
behaviour = "granular"
unit_weight = "20 kN/m^3"
saturated_unit_weight = "21 kN/m^3"
poisson_ratio = 0.25
youngs_modulus = "80 MPa"

[[strata]]
name = "rock"
behaviour = "rigid"
unit_weight = "22 kN/m^3"
saturated_unit_weight = "22 kN/m^3"

[analysis]
report_times = ["1 month", "1 yr", "10 yr"]
design_life = "50 yr"
{map_line}

[checks]
checked_after = "6 months"
"""


#: plan origin in the project's coordinates (British National Grid, an invented site)
E0, N0 = 400000.0, 300000.0


def write_project(folder: pathlib.Path, n: int, *, with_map: bool, seed: int = 7) -> None:
    """A plan of about ``n`` footings: pads on a 6 m grid, two wall strips per 10 bays, a raft."""
    import geopandas as gpd
    import shapely

    rng = np.random.default_rng(seed)
    folder.mkdir(parents=True, exist_ok=True)
    n_strips = max(2, n // 50)
    n_pads = max(1, n - n_strips - 1)
    nx = int(math.ceil(math.sqrt(n_pads)))
    rows = [
        "id,shape,x [m],y [m],width [m],length [m],rotation [deg],dead_load [kN],live_load [kN]"
    ]
    for k in range(n_pads):
        i, j = k % nx, k // nx
        b = float(rng.uniform(1.5, 4.0))
        q = float(rng.uniform(120.0, 260.0))
        rows.append(f"P{k},rectangle,{E0 + 6.0 * i},{N0 + 6.0 * j},{b:.2f},{b:.2f},0,"
                    f"{0.75 * q * b * b:.0f},"
                    f"{0.25 * q * b * b:.0f}")
    ext = 6.0 * nx
    for s in range(n_strips):  # 0.6 m wall strips, 5.4 m long, south and west edges
        t = 6.0 * (s // 2) + 3.0
        x, y, rot = (t, -3.0, 0) if s % 2 == 0 else (-3.0, t, 90)
        rows.append(f"W{s},rectangle,{E0 + x},{N0 + y},0.6,5.4,{rot},{60 * 5.4:.0f},"
                    f"{20 * 5.4:.0f}")
    (folder / "footings.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    ny = int(math.ceil(n_pads / nx))
    x0, y0 = E0 + ext + 6.0, N0 + 6.0 * ny / 3
    raft = shapely.Polygon([(x0, y0), (x0 + 14, y0), (x0 + 14, y0 + 6), (x0 + 6, y0 + 6),
                            (x0 + 6, y0 + 12), (x0, y0 + 12)])
    gdf = gpd.GeoDataFrame({"id": ["R1"], "dead_load": [30.0 * raft.area],
                            "live_load": [10.0 * raft.area]}, geometry=[raft], crs="EPSG:27700")
    gdf.to_file(folder / "raft.gpkg", driver="GPKG")
    top = 6.0 * ny + 6
    holes = [(-8, -8, 0.0), (ext / 2, -8, 1.0), (ext + 24, -8, 2.0), (-8, top / 2, 1.5),
             (ext / 2, top / 2, 3.0), (ext + 24, top / 2, 4.0), (-8, top, 2.5),
             (ext / 2, top, 5.0), (ext + 24, top, 6.0)]
    lines = ["borehole,x [m],y [m],stratum,top [m],bottom [m]"]
    for k, (x, y, clay) in enumerate(holes):
        x, y = E0 + x, N0 + y
        lines.append(f"BH{k},{x},{y},sand,0,5")
        if clay > 0:
            lines.append(f"BH{k},{x},{y},clay,5,{5 + clay}")
        lines.append(f"BH{k},{x},{y},gravel,{5 + clay},25")
        lines.append(f"BH{k},{x},{y},rock,25,30")
    (folder / "boreholes.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    map_line = 'map_spacing = "0 m"  # chosen from the plan' if with_map else ""
    (folder / "site.toml").write_text(SITE.format(n=n, map_line=map_line), encoding="utf-8")


def run_subprocess(folder: pathlib.Path, with_map: bool) -> tuple[float, float, int]:
    """Wall time [s], peak RSS of the child [MB] and exit code of ``sitesettle check``.

    The peak is this child's own (``os.wait4``), not the largest of all children so
    far (``RUSAGE_CHILDREN`` keeps the maximum over every child waited for).
    """
    cmd = [sys.executable, "-m", "sitesettle_cli", "check", str(folder), "--quiet",
           "--out", str(folder / "results")]
    t0 = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    err = proc.stderr.read()
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    rc = os.waitstatus_to_exitcode(status)
    proc.returncode = rc
    if rc not in (0, 1):
        print(err[-2000:], file=sys.stderr)
    return wall, usage.ru_maxrss / 1024.0, rc


def phases(folder: pathlib.Path, with_map: bool) -> dict[str, float]:
    """Time each phase in-process (a fresh interpreter so start-up is counted)."""
    code = r"""
import json, sys, time
t0 = time.perf_counter()
import sitesettle
from sitesettle.io import output
from sitesettle.io.project import load_site
from sitesettle.analysis import analyse
out = {"start-up": time.perf_counter() - t0}
t = time.perf_counter(); site = load_site(sys.argv[1]); out["read"] = time.perf_counter() - t
try:  # what sitesettle.budget estimates for this plan (its coefficients come from here)
    from sitesettle import analysis as an
    ctx = an.prepare(site)
    pts, lay = an.evaluation_points(ctx.site, with_map=sys.argv[2] == "1")
    est = an.plan_estimate(ctx, pts, lay)
    out["estimate: time [s]"] = est.seconds
    out["estimate: memory [GB]"] = est.bytes / 1e9
    out["estimate: sublayers [million]"] = est.counts.sublayers / 1e6
    out["estimate: columns [thousand]"] = est.counts.columns / 1e3
except (ImportError, AttributeError):  # a version without the estimate
    pass
marks = []
def progress(stage, frac):
    marks.append((stage, time.perf_counter()))
t = time.perf_counter()
r = analyse(site, progress=progress, with_map=sys.argv[2] == "1")
end = time.perf_counter()
prev = t
for (stage, at), nxt in zip(marks, [m[1] for m in marks[1:]] + [end]):
    out["analyse: " + stage] = out.get("analyse: " + stage, 0.0) + (nxt - at)
def timing(owner, name, label):
    fn = getattr(owner, name, None)
    if fn is None:
        return
    def timed(*a, _fn=fn, **k):
        t = time.perf_counter(); v = _fn(*a, **k)
        out["output: " + label] = out.get("output: " + label, 0.0) + time.perf_counter() - t
        return v
    setattr(owner, name, timed)
for name in ("footing_table", "pair_table", "time_table", "summary_dict", "write_geopackage",
             "make_figures", "_write_csv"):
    timing(output, name, name)
import sitesettle.report, sitesettle.io.cad
timing(sitesettle.report, "report_parts", "render_report")
timing(sitesettle.io.cad, "write_dxf", "write_dxf")
try:  # figures drawn in worker processes: the time this process waits for them
    from sitesettle.io import figure_workers
    timing(figure_workers.FigureJob, "result", "figures (waiting for the workers)")
except ImportError:
    pass
t = time.perf_counter()
from sitesettle.analysis import worst_pair_section
output.write_results(r, sys.argv[3], section=worst_pair_section(r))  # as the command line
out["output: all"] = time.perf_counter() - t
print(json.dumps(out))
"""
    done = subprocess.run([sys.executable, "-c", code, str(folder), "1" if with_map else "0",
                           str(folder / "results_phases")], capture_output=True, text=True)
    if done.returncode != 0:
        return {"(phases failed)": float("nan")}
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[100, 300, 1000, 3000])
    ap.add_argument("--no-phases", action="store_true", help="only the subprocess runs")
    ap.add_argument("--keep", help="write the projects here (kept) instead of a temp folder")
    args = ap.parse_args()
    with_map = True  # the command always draws the map
    base = pathlib.Path(args.keep) if args.keep else pathlib.Path(tempfile.mkdtemp())
    walls = []
    print(f"{'footings':>9} {'wall s':>8} {'peak MB':>8} {'exit':>4}   (cores: {os.cpu_count()})")
    for n in args.sizes:
        folder = base / f"plan_{n}"
        write_project(folder, n, with_map=with_map)
        wall, peak, rc = run_subprocess(folder, with_map)
        walls.append(wall)
        print(f"{n:>9} {wall:>8.1f} {peak:>8.0f} {rc:>4}")
        if not args.no_phases:
            for name, sec in phases(folder, with_map).items():
                unit = "" if name.startswith("estimate") else " s"
                print(f"{'':>12}{name:<40} {sec:>7.2f}{unit}")
    if len(args.sizes) > 1:
        slope = np.polyfit(np.log(args.sizes), np.log(walls), 1)[0]
        print(f"growth exponent of the wall time ({args.sizes[0]}–{args.sizes[-1]}): {slope:.2f}")


if __name__ == "__main__":
    main()
