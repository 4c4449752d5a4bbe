"""
The demo, step by step
======================

The whole check of the demonstration project as a notebook would do it: what the
project holds, the settlements, the checks, and the results folder.
"""

# %%
# The project
# -----------
# ``demo_site()`` is the folder of the bundled demo; ``load_site`` reads and checks
# it into a ``Site`` in core units (m, kN, kPa).
import tempfile
from pathlib import Path

import matplotlib.pyplot as plt
from matplotlib.collections import LineCollection, PolyCollection

import sitesettle

site = sitesettle.load_site(sitesettle.demo_site())
print(site.name, "-", len(site.footings), "footings,", len(site.boreholes), "boreholes")
print("strata:", ", ".join(s.name for s in site.strata))

# %%
# The analysis
# ------------
results = sitesettle.analyse(site, with_map=False)
for line in results.basis:
    print("basis:", line)

# %%
# The footings that settle most at the design life, with the parts of their
# settlement [mm]:
f = results.footings()
f.nlargest(6, "total_mm")[
    ["on_loading_mm", "creep_mm", "consolidation_mm", "secondary_mm", "total_mm", "status"]
]

# %%
# The checks
# ----------
# Failing footings and pairs, and the structure lines:
p = results.pairs()
print("all checks pass:", results.checks.all_passed)
print("failing footings:", ", ".join(f.index[f.status == "fail"]))
p[p.status == "fail"][["differential_mm", "angular_distortion", "utilisation"]]

# %%
results.lines()[["kind", "length_m", "relative_deflection_mm", "deflection_ratio", "status"]]

# %%
# A plan with the failing pairs
# -----------------------------
fig, ax = plt.subplots(figsize=(8, 6))
ax.set_aspect("equal")
patches = PolyCollection(
    [g.outline for g in site.footings], array=f.total_mm, cmap="cividis", edgecolor="k"
)
ax.add_collection(patches)
xy = {g.id: (g.x, g.y) for g in site.footings} | {
    q.id: (q.x, q.y) for q in site.points
}
bad = p[p.status == "fail"].index
ax.add_collection(LineCollection([(xy[a], xy[b]) for a, b in bad], colors="m", lw=3))
ax.autoscale_view()
fig.colorbar(patches, ax=ax, label="total settlement at 50 years [mm]")
ax.set_title("failing pairs in magenta")

# %%
# The results folder
# ------------------
# ``write_results`` writes the same files as ``sitesettle check``, atomically.
out = sitesettle.write_results(results, Path(tempfile.mkdtemp()) / "results")
print(sorted(p.name for p in out.iterdir()))
