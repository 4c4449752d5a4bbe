"""Write demo_site/: an invented three-storey community building beside a filled mill pond.

The scenario is our own: a concrete-framed building of 7 × 5 grid lines (bays of
7.2 m and 6.5 m, with a narrower 6.0 m end bay and a 4.5 m north bay), an L-shaped
raft under the lift and stair core (a polygon in a GeoPackage), a masonry east
gable on a strip footing, a plant-room wall strip and three small canopy pads set
out by the steelwork contractor in feet and kips. Medium-dense sand overlies a
soft clay lens, the silted bed of the old mill pond, which thickens toward the
north-east corner, over dense gravel and mudstone. Every number is invented but
plausible. Run from the repository root: ``python tools/make_demo_site.py``.
"""

from __future__ import annotations

import pathlib

import geopandas as gpd
import numpy as np
from shapely.geometry import Polygon

OUT = pathlib.Path(__file__).resolve().parents[1] / "demo_site"
E0, N0 = 431250.0, 289400.0  # site origin in British National Grid (EPSG:27700), invented
XS = [0.0, 7.2, 14.4, 21.6, 28.8, 36.0, 42.0]
YS = [0.0, 6.5, 13.0, 19.5, 24.0]
CORE = {(2, 2), (3, 2)}  # grid points replaced by the core raft


def grid_name(i: int, j: int) -> str:
    return f"{'ABCDEFG'[i]}{j + 1}"


def pads() -> list[str]:
    rows = []
    nx, ny = len(XS), len(YS)
    for i, x in enumerate(XS):
        for j, y in enumerate(YS):
            if (i, j) in CORE:
                continue
            edge_x = i in (0, nx - 1)
            edge_y = j in (0, ny - 1)
            # tributary area [m²] from the half-bays either side
            wx = ((XS[i] - XS[i - 1]) if i > 0 else 0.0) / 2 + (
                (XS[i + 1] - XS[i]) if i < nx - 1 else 0.0
            ) / 2
            wy = ((YS[j] - YS[j - 1]) if j > 0 else 0.0) / 2 + (
                (YS[j + 1] - YS[j]) if j < ny - 1 else 0.0
            ) / 2
            area = wx * wy
            # three suspended floors and a roof: dead 7.5 kPa per floor + 5 kPa roof,
            # live 3 kPa per floor + 1 kPa roof, cladding on the perimeter
            dead = area * (3 * 7.5 + 5.0) + (120.0 if (edge_x or edge_y) else 0.0)
            live = area * (3 * 3.0 + 1.0)
            q_allow = 220.0  # sizing pressure used by the designer [kPa]
            side = max(1.4, round(np.sqrt((dead + live) / q_allow) / 0.1) * 0.1)
            depth = 1.0 if (edge_x or edge_y) else 1.2
            rows.append(
                f"{grid_name(i, j)},rectangle,{E0 + x:.2f},{N0 + y:.2f},{side:.1f},{side:.1f},0,"
                f"{depth:.1f},{dead:.0f},{live:.0f},"
            )
    return rows


def write() -> None:
    OUT.mkdir(exist_ok=True)
    lines = [
        "# Column pads, wall strips and canopy pads of the Millbrook Community Hub (invented).",
        "# Most rows are in metres and kN (the header units); the canopy pads came from the",
        "# steelwork contractor in feet and kips and keep their own units in each cell.",
        "# Grid: lines A-G at x = 0, 7.2 ... 42.0 m, rows 1-5 at y = 0 ... 24.0 m from the origin.",
        "id,shape,x [m],y [m],width [m],length [m],rotation [deg],depth [m],"
        "dead_load [kN],live_load [kN],notes",
    ]
    lines += pads()
    # east gable: masonry wall on a strip 1.2 m wide along grid line 8, 25 m long
    lines.append(
        f"W1,rectangle,{E0 + 47.0:.2f},{N0 + 12.0:.2f},1.2,25.0,90,0.9,3900,900,"
        "east gable wall strip"
    )
    # plant-room wall along the north side of bays A-B
    lines.append(
        f"W2,rectangle,{E0 + 3.6:.2f},{N0 + 27.6:.2f},0.9,7.0,0,0.8,850,250,plant-room wall strip"
    )
    # canopy pads south of the entrance, set out in feet and kips
    for k, xm in enumerate((12.0, 18.0, 24.0), start=1):
        lines.append(
            f"K{k},rectangle,{E0 + xm:.2f},{N0 - 4.5:.2f},4 ft,4 ft,0,3 ft,18 kip,9 kip,canopy pad"
        )
    (OUT / "footings.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")

    # the L-shaped core raft: lift shaft and stair around grid points C3 and D3
    x0, y0 = E0 + 12.9, N0 + 10.0
    core = Polygon(
        [
            (x0, y0),
            (x0 + 10.2, y0),
            (x0 + 10.2, y0 + 4.6),
            (x0 + 4.2, y0 + 4.6),
            (x0 + 4.2, y0 + 7.4),
            (x0, y0 + 7.4),
        ]
    )
    gdf = gpd.GeoDataFrame(
        {
            "id": ["R1"],
            "depth": [1.5],
            "dead_load": [7200.0],
            "live_load": [2100.0],
            "rigid": ["true"],
            "notes": ["lift and stair core raft"],
        },
        geometry=[core],
        crs="EPSG:27700",
    )
    path = OUT / "core_raft.gpkg"
    if path.exists():
        path.unlink()
    gdf.to_file(path, layer="core", driver="GPKG")

    # boreholes: the clay lens is absent to the south-west and 5.5 m thick to the north-east
    bh = [
        (
            "BH1",
            -4.0,
            -6.0,
            2.6,
            [("made ground", 0.7), ("sand", 7.6), ("gravel", 19.0), ("mudstone", 21.0)],
            {},
        ),
        (
            "BH2",
            50.0,
            -5.0,
            2.5,
            [
                ("made ground", 0.8),
                ("sand", 6.2),
                ("clay", 6.5),
                ("gravel", 18.5),
                ("mudstone", 20.0),
            ],
            {},
        ),
        (
            "BH3",
            -3.0,
            29.0,
            2.7,
            [("made ground", 0.6), ("sand", 7.2), ("gravel", 19.5), ("mudstone", 21.0)],
            {},
        ),
        (
            "BH4",
            50.0,
            29.0,
            2.2,
            [
                ("made ground", 1.1),
                ("sand", 4.6),
                ("clay", 11.4),
                ("gravel", 19.8),
                ("mudstone", 21.5),
            ],
            {"sand": 12},
        ),
        (
            "BH5",
            30.0,
            15.0,
            2.4,
            [
                ("made ground", 0.9),
                ("sand", 5.8),
                ("clay", 6.6),
                ("gravel", 19.2),
                ("mudstone", 21.0),
            ],
            {},
        ),
    ]
    n_sand = {"BH1": 22, "BH2": 18, "BH3": 20, "BH4": 12, "BH5": 16}
    rows = [
        "# Boreholes of the invented site investigation (long form, depths below ground).",
        "# BH3 was logged in feet by the driller; its depths keep their own units.",
        "borehole,x [m],y [m],stratum,top [m],bottom [m],water_depth [m],spt_n",
    ]
    for name, x, y, wd, layers, _ in bh:
        top = 0.0
        for k, (stratum, bottom) in enumerate(layers):
            n = {"sand": n_sand[name], "gravel": 45, "made ground": 6}.get(stratum, "")
            if name == "BH3":
                t, b = f"{top / 0.3048:.2f} ft", f"{bottom / 0.3048:.2f} ft"
                w = f"{wd / 0.3048:.2f} ft" if k == 0 else ""
            else:
                t, b, w = f"{top:.2f}", f"{bottom:.2f}", (f"{wd:.2f}" if k == 0 else "")
            rows.append(f"{name},{E0 + x:.2f},{N0 + y:.2f},{stratum},{t},{b},{w},{n}")
            top = bottom
    (OUT / "boreholes.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")

    # cone soundings through the sand (qc in MPa, the header unit)
    rng = np.random.default_rng(20261201)
    srows = [
        "# Cone soundings: qc and fs in MPa (header units); readings every 0.25 m.",
        "sounding,x [m],y [m],depth [m],qc [MPa],fs [MPa]",
    ]
    for name, x, y, base, slope, stop in (
        ("CPT1", 8.0, 4.0, 13.0, 0.6, 7.5),
        ("CPT2", 39.0, 21.0, 11.5, 0.4, 5.0),
        ("CPT3", 25.0, 8.0, 12.5, 0.5, 6.0),
    ):
        for z in np.arange(0.5, stop + 1e-9, 0.25):
            qc = max(1.0, base + slope * z + rng.normal(0.0, 0.5))
            srows.append(f"{name},{E0 + x:.2f},{N0 + y:.2f},{z:.2f},{qc:.2f},{qc * 0.008:.3f}")
    (OUT / "soundings.csv").write_text("\n".join(srows) + "\n", encoding="utf-8")


if __name__ == "__main__":
    write()
    print(f"demo site written to {OUT}")
