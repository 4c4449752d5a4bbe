"""
The stress engine alone
=======================

``sitesettle.stress`` superposes the Boussinesq stress of uniformly loaded areas
(rectangles, circles, polygons) at any points, with or without a project. Here a
row of three pads, a vertical section under them, and the stress under the middle
pad against the 2:1 spread that hand calculations often use.
"""

# %%
import matplotlib.pyplot as plt
import numpy as np

from sitesettle import stress

# three 2 m × 2 m pads at 4 m centres, 200 kPa each, founded 1 m down
loads = stress.Loads.rectangles(
    x=[-4.0, 0.0, 4.0], y=0.0, width=2.0, length=2.0, rotation=0.0, pressure=200.0, depth=1.0
)

# %%
# A vertical section along the row (y = 0), 1–11 m deep:
x = np.linspace(-8, 8, 161)
z = np.linspace(1.0, 11.0, 101)
X, Z = np.meshgrid(x, z)
points = np.column_stack([X.ravel(), np.zeros(X.size), Z.ravel()])
sz = stress.vertical_stress(loads, points, tolerance=0).reshape(X.shape)  # exact sum [kPa]

fig, ax = plt.subplots(figsize=(8, 4))
cs = ax.contourf(X, Z, sz, levels=[5, 10, 20, 40, 60, 100, 150, 200], cmap="cividis")
ax.contour(X, Z, sz, levels=cs.levels, colors="k", linewidths=0.4)
ax.invert_yaxis()
ax.set_aspect("equal")
ax.set_xlabel("x [m]")
ax.set_ylabel("depth [m]")
fig.colorbar(cs, ax=ax, label="Δσz [kPa]")

# %%
# Under the centre of the middle pad: the superposed stress of the row, the pad
# alone, and the 2:1 spread of the pad alone.
zc = np.linspace(1.05, 11.0, 60)
centre = np.column_stack([np.zeros_like(zc), np.zeros_like(zc), zc])
alone = stress.Loads.rectangles(0.0, 0.0, 2.0, 2.0, 0.0, 200.0, 1.0)
fig, ax = plt.subplots(figsize=(5, 5))
ax.plot(stress.vertical_stress(loads, centre, tolerance=0), zc, label="row of three pads")
ax.plot(stress.vertical_stress(alone, centre, tolerance=0), zc, label="middle pad alone")
ax.plot(stress.spread_2to1(200.0, 2.0, 2.0, zc - 1.0), zc, "--", label="2:1 spread, pad alone")
ax.invert_yaxis()
ax.set_xlabel("Δσz [kPa]")
ax.set_ylabel("depth [m]")
ax.legend()
