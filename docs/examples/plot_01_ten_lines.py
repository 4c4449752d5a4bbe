"""
From the demo to a what-if in ten lines
=======================================

Load the bundled demo, list the worst pairs, draw a plan coloured by settlement
and compare a what-if: the pad F4 over the thickest clay widened from 2.5 m to
3.2 m square. After the imports, the first cell is six lines; the cells after it
show what they give.
"""

# %%
import sitesettle
from sitesettle import plots

site = sitesettle.load_site(sitesettle.demo_site())
results = sitesettle.analyse(site, with_map=False)
worst = results.pairs().nlargest(5, "utilisation")
f = results.footings()
ax = plots.plan(results)  # a matplotlib Axes: restyle it as you like
wider = sitesettle.analyse(site.with_footing("F4", width=3.2, length=3.2), with_map=False)
change = wider.footings().total_mm - f.total_mm

# %%
# The five most utilised pairs (utilisation = value ÷ limit; above 1 fails):
worst[["span_m", "differential_mm", "angular_distortion", "limit", "utilisation", "status"]]

# %%
# The what-if: F4 on a larger base carries the same load on a lower pressure, so
# its own settlement falls; the footings around it change a little, as its stress
# spreads wider. The largest changes [mm]:
change[change.abs().sort_values(ascending=False).index].head(6).to_frame("change [mm]")

# %%
# and the pairs around F4, before and after:
compare = worst[["utilisation"]].assign(wider=wider.pairs()["utilisation"].reindex(worst.index))
compare
