"""Fast against exact: footing totals with the default stress tolerance and with none.

The treecode bounds each stress sum's error by ``stress_tolerance`` × the largest
footing pressure (0.1 % by default; the proof is in ``sitesettle.stress.stress_sums``);
this script shows what that allowance does to the answer an engineer reads. For each
size it writes the generated plan of ``scale_bench.py`` (pads, wall strips, a raft over
sand, a clay lens and gravel), analyses it as given and again with
``--set analysis.stress_tolerance=0`` (the exact sums), and prints the largest
difference of any footing's total settlement at the design life, absolute and relative,
and the two analysis times.

Usage::

    python benchmarks/accuracy_bench.py [--sizes 300 1000]

Never run as a test: timings depend on the machine (the project's rule).
"""

from __future__ import annotations

import argparse
import pathlib
import sys
import tempfile
import time

import numpy as np

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))
from scale_bench import write_project  # noqa: E402

from sitesettle.analysis import analyse  # noqa: E402
from sitesettle.io.project import load_site  # noqa: E402


def totals(folder: pathlib.Path, overrides=()) -> tuple[np.ndarray, float]:
    """Each footing's total settlement at the design life [m] and the analysis time [s]."""
    site = load_site(folder, overrides=overrides)
    t = time.perf_counter()
    r = analyse(site, with_map=False)
    return r.total[:, r.design_life_index], time.perf_counter() - t


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[300, 1000])
    args = ap.parse_args()
    head = ("footings", "max |Δ| [mm]", "max |Δ|/S", "fast [s]", "exact [s]")
    print("{:>9} {:>13} {:>10} {:>9} {:>10}".format(*head))
    with tempfile.TemporaryDirectory() as tmp:
        for n in args.sizes:
            folder = pathlib.Path(tmp) / f"plan_{n}"
            write_project(folder, n, with_map=False)
            fast, t_fast = totals(folder)
            exact, t_exact = totals(folder, ["analysis.stress_tolerance=0"])
            diff = np.abs(fast - exact)
            rel = diff / np.maximum(np.abs(exact), 1e-12)
            print(
                f"{len(fast):>9} {1e3 * diff.max():>13.2e} {rel.max():>10.2e} "
                f"{t_fast:>9.1f} {t_exact:>10.1f}"
            )
    print("target (issue 18): no footing's total differs by more than 0.5 %")


if __name__ == "__main__":
    main()
