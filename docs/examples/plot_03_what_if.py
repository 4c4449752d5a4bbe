"""
What-if: a wider pad and a softer clay
======================================

``Site`` is frozen; ``with_footing`` and ``with_stratum`` return changed copies, so
the base case and each variant can be analysed and compared side by side.
"""

# %%
import matplotlib.pyplot as plt
import pandas as pd

import sitesettle

site = sitesettle.load_site(sitesettle.demo_site())
base = sitesettle.analyse(site, with_map=False)

# %%
# Two variants: the pads F3 and F4 on either side of the worst pair widened to
# 3.2 m square, and the clay of the mill pond a fifth more compressible
# (compression index 0.50 → 0.60, a sensitivity check on the laboratory value).
wider = site.with_footing("F4", width=3.2, length=3.2).with_footing("F3", width=3.2, length=3.2)
softer = site.with_stratum("clay", compression_index=0.60)
variants = {
    "base": base,
    "F3, F4 wider": sitesettle.analyse(wider, with_map=False),
    "clay Cc 0.60": sitesettle.analyse(softer, with_map=False),
}

# %%
# Total settlement at the design life [mm], footing by footing:
totals = pd.DataFrame({name: r.footings()["total_mm"] for name, r in variants.items()})
totals.loc[["F3", "F4", "E4", "G4", "A1"]]

# %%
# The worst pair in each case:
worst = pd.DataFrame(
    {name: r.pairs()["utilisation"] for name, r in variants.items()}
).sort_values("base", ascending=False)
worst.head(6)

# %%
# How much each footing moves in each variant, against the base:
fig, ax = plt.subplots(figsize=(8, 3.5))
for name in list(variants)[1:]:
    (totals[name] - totals["base"]).plot(ax=ax, marker="o", ls="", label=name)
ax.axhline(0, color="k", lw=0.5)
ax.set_ylabel("change of total [mm]")
ax.set_xticks(range(len(totals)), totals.index, rotation=90, fontsize=7)
ax.legend()
