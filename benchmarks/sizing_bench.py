"""Sizing benchmark: ``sitesettle.size_footings`` on generated plans (a plain script).

Writes the plans of ``scale_bench.py`` (pads, wall strips, a raft, a clay lens),
sizes them under an allowable net bearing pressure and prints, per size, the
number of analyses, the time of the search, the time of one analysis without the
map, whether the search settled, and how many checks fail before and after.

Usage::

    python benchmarks/sizing_bench.py [--sizes 40 200] [--bearing 250]

Never run as a test: timings depend on the machine (the project's rule).
"""

from __future__ import annotations

import argparse
import pathlib
import sys
import tempfile
import time
import warnings

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))

from scale_bench import write_project  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[40, 200])
    ap.add_argument("--bearing", type=float, default=250.0, help="allowable net pressure [kPa]")
    args = ap.parse_args()
    import sitesettle
    from sitesettle.sizing import SizingLimits, failing_checks, size_footings

    warnings.simplefilter("ignore")
    print(f"{'pads':>6} {'analyses':>9} {'search s':>9} {'1 analysis s':>13} settled  failing")
    for n in args.sizes:
        with tempfile.TemporaryDirectory() as tmp:
            folder = pathlib.Path(tmp) / f"plan{n}"
            write_project(folder, n, with_map=False)
            site = sitesettle.load_site(folder)
            t = time.perf_counter()
            sitesettle.analyse(site, with_map=False)
            one = time.perf_counter() - t
            t = time.perf_counter()
            out = size_footings(site, SizingLimits(bearing_pressure=args.bearing))
            search = time.perf_counter() - t
            before = len(failing_checks(out.original))
            after = len(failing_checks(out.results))
            print(
                f"{n:>6} {out.rounds:>9} {search:>9.1f} {one:>13.2f} "
                f"{'yes' if out.converged else 'no':>7}  {before} → {after}"
            )


if __name__ == "__main__":
    main()
