"""Benchmark of the whole analysis on generated plans (a plain script; prints a table).

A regular column grid of rigid square pads (1.5–4 m, 6 m spacing) on sand over a clay
lens over gravel, five boreholes; the full pipeline (stresses, Schmertmann, elastic
neighbours, consolidation, traces, checks) with and without the settlement map.
Usage: ``python benchmarks/analysis_bench.py [--sizes 100 500 2000] [--map]``.
"""

from __future__ import annotations

import argparse
import math
import resource
import time

import numpy as np

from sitesettle.analysis import analyse
from sitesettle.options import Behaviour
from sitesettle.site import AnalysisSettings, Borehole, Footing, Interval, Site, Stratum


def plan(n: int, seed: int = 7) -> Site:
    rng = np.random.default_rng(seed)
    nx = int(math.ceil(math.sqrt(n)))
    feet = []
    for k in range(n):
        i, j = k % nx, k // nx
        b = float(rng.uniform(1.5, 4.0))
        x, y = 6.0 * i, 6.0 * j
        outline = np.array(
            [
                [x - b / 2, y - b / 2],
                [x + b / 2, y - b / 2],
                [x + b / 2, y + b / 2],
                [x - b / 2, y + b / 2],
            ]
        )
        load = float(rng.uniform(150.0, 250.0)) * b * b
        feet.append(
            Footing(
                f"P{k}",
                outline,
                "rectangle",
                x,
                y,
                b,
                b,
                0.0,
                1.2,
                0.75 * load,
                0.25 * load,
                0.3,
                True,
            )
        )
    ext = 6.0 * nx
    strata = (
        Stratum("sand", Behaviour.GRANULAR, 18.0, 20.0, 0.3, cone_resistance=10000.0),
        Stratum(
            "clay",
            Behaviour.COHESIVE,
            17.0,
            18.0,
            0.35,
            compression_index=0.3,
            recompression_index=0.05,
            void_ratio=1.1,
            ocr=1.5,
            consolidation_coefficient=1.5,
            secondary_index=0.005,
        ),
        Stratum("gravel", Behaviour.GRANULAR, 20.0, 21.0, 0.25, youngs_modulus=80000.0),
        Stratum("rock", Behaviour.RIGID, 22.0, 22.0),
    )

    def bh(name, x, y, clay):
        return Borehole(
            name,
            x,
            y,
            (
                Interval("sand", 0, 5),
                Interval("clay", 5, 5 + clay),
                Interval("gravel", 5 + clay, 25),
                Interval("rock", 25, 30),
            ),
        )

    holes = (
        bh("BH1", -5, -5, 0.0),
        bh("BH2", ext, -5, 2.0),
        bh("BH3", -5, ext, 1.0),
        bh("BH4", ext, ext, 6.0),
        bh("BH5", ext / 2, ext / 2, 2.5),
    )
    st = AnalysisSettings(report_times=(0.1, 1.0, 10.0), design_life=50.0, map_margin=5.0)
    return Site(f"bench {n}", tuple(feet), strata, holes, water_depth=2.0, analysis=st)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", type=int, nargs="+", default=[100, 500, 2000])
    ap.add_argument("--map", action="store_true", help="also time the settlement map")
    args = ap.parse_args()
    print(
        f"{'footings':>9} {'points':>7} {'sublayers':>10} {'analyse s':>10} {'map s':>8} "
        f"{'peak RSS MB':>12}"
    )
    for n in args.sizes:
        site = plan(n)
        t0 = time.perf_counter()
        r = analyse(site, with_map=False)
        t1 = time.perf_counter()
        tmap = float("nan")
        if args.map:
            t2 = time.perf_counter()
            analyse(site, with_map=True)
            tmap = time.perf_counter() - t2 - (t1 - t0)
        sub = sum(len(t.top) for v in r.traces.values() for t in v)
        pts = sum(len(v) for v in r.traces.values())
        rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
        print(f"{n:>9} {pts:>7} {sub:>10} {t1 - t0:>10.1f} {tmap:>8.1f} {rss:>12.0f}")


if __name__ == "__main__":
    main()
