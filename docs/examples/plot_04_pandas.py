"""
Results into pandas
===================

Every table of the results folder is a DataFrame indexed by id, with the unit in
every column name; ``units="us"`` gives inches, feet, kips and ksf.
"""

# %%
import matplotlib.pyplot as plt

import sitesettle

results = sitesettle.analyse(sitesettle.load_site(sitesettle.demo_site()), with_map=False)

# %%
# Settlement against time: ``history()`` is indexed by ``(id, time_yr)``;
# ``unstack`` gives one column per footing.
h = results.history()["total_mm"].unstack("id")
h[["A1", "D2", "F4", "G4"]]

# %%
fig, ax = plt.subplots(figsize=(7, 4))
h[["A1", "D2", "F4", "G4"]].plot(ax=ax, logx=True, marker="o")
ax.invert_yaxis()
ax.set_xlabel("time after loading [yr]")
ax.set_ylabel("total settlement [mm]")

# %%
# Group the footings by the methods used under them:
f = results.footings()
f.groupby("method")[["total_mm", "consolidation_mm"]].agg(["count", "mean", "max"]).round(1)

# %%
# The query points (Mill Cottage next door and the culverted leat) at the design life:
q = results.query_points()
q.xs(results.times[results.design_life_index], level="time_yr")[["depth_m", "total_mm"]]

# %%
# The same footings in US customary units:
results.footings(units="us")[["width_ft", "q_net_ksf", "total_in"]].head()
