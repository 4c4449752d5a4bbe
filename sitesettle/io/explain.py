"""The calculation sheet of one footing as a table (the data behind ``sitesettle explain``)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from sitesettle.results import Results

#: columns of the calculation sheet, with their units
SHEET_COLUMNS = [
    "point",
    "x_m",
    "y_m",
    "top_m",
    "bottom_m",
    "stratum",
    "method",
    "sigma_v0_kPa",
    "own_dsz_kPa",
    "neighbours_dsz_kPa",
    "modulus_MPa",
    "Iz",
    "strain",
    "own_mm",
    "neighbours_mm",
    "settlement_mm",
]


def trace_table(results: Results, footing_id: str) -> pd.DataFrame:
    """Layer-by-layer calculation of one footing at the design life, one row per sublayer.

    Raises KeyError listing some valid ids when ``footing_id`` is unknown.
    """
    if footing_id not in results.traces:
        ids = list(results.traces)
        raise KeyError(
            f'no footing "{footing_id}"; footings are {", ".join(ids[:12])}'
            + (" …" if len(ids) > 12 else "")
        )
    rows = []
    for p, tr in enumerate(results.traces[footing_id], start=1):
        mod = tr.modulus if tr.modulus is not None else np.full(len(tr.top), np.nan)
        for k in range(len(tr.top)):
            rows.append(
                [
                    p,
                    tr.point[0],
                    tr.point[1],
                    tr.top[k],
                    tr.bottom[k],
                    tr.stratum[k],
                    tr.method[k],
                    tr.sigma_v0[k],
                    tr.own_stress[k],
                    tr.neighbour_stress[k],
                    mod[k] / 1000.0,
                    tr.influence[k],
                    tr.strain[k],
                    tr.own_settlement[k] * 1000.0,
                    tr.neighbour_settlement[k] * 1000.0,
                    (tr.own_settlement[k] + tr.neighbour_settlement[k]) * 1000.0,
                ]
            )
    return pd.DataFrame(rows, columns=SHEET_COLUMNS)


def format_sheet(results: Results, footing_id: str) -> str:
    """A readable calculation sheet: header, the sublayer table per point, and the sums."""
    i = results.ids.index(footing_id) if footing_id in results.ids else None
    df = trace_table(results, footing_id)
    f = results.site.footings[i]
    k = results.design_life_index
    lines = [
        f"Footing {f.id}: {f.shape} {f.width:.2f} m x {f.length:.2f} m, base {f.depth:.2f} m, "
        f"{'rigid' if f.rigid else 'flexible'}",
        f"  loads: dead {f.dead_load:.0f} kN, live {f.live_load:.0f} kN "
        f"(sustained {f.sustained_live_fraction:.0%}); q_net {results.net_pressure[i]:.1f} kPa "
        f"(sustained {results.sustained_net_pressure[i]:.1f} kPa)",
        f"  methods: {results.methods[i]}; integrated to {results.influence_depth[i]:.2f} m"
        + (
            f" (significant depth {results.significant_depth[i]:.2f} m)"
            if getattr(results, "significant_depth", None) is not None
            else ""
        ),
        f"  at {results.times[k]:g} years: total {results.total[i, k] * 1000:.1f} mm = on loading "
        f"{results.immediate[i, k] * 1000:.1f} + creep "
        f"{(0.0 if results.creep is None else results.creep[i, k]) * 1000:.1f} + consolidation "
        f"{results.consolidation[i, k] * 1000:.1f} + secondary "
        f"{results.secondary[i, k] * 1000:.1f} mm (own {results.own[i, k] * 1000:.1f}, "
        f"neighbours {results.neighbours[i, k] * 1000:.1f})",
        "",
    ]
    fmt = {
        "x_m": "{:.2f}",
        "y_m": "{:.2f}",
        "top_m": "{:.2f}",
        "bottom_m": "{:.2f}",
        "sigma_v0_kPa": "{:.1f}",
        "own_dsz_kPa": "{:.1f}",
        "neighbours_dsz_kPa": "{:.1f}",
        "modulus_MPa": "{:.1f}",
        "Iz": "{:.3f}",
        "strain": "{:.2e}",
        "own_mm": "{:.2f}",
        "neighbours_mm": "{:.2f}",
        "settlement_mm": "{:.2f}",
    }
    for p, part in df.groupby("point", sort=True):
        lines.append(
            f"Point {p} at ({part.x_m.iloc[0]:.2f}, {part.y_m.iloc[0]:.2f}) m: "
            f"{part.settlement_mm.sum():.2f} mm "
            f"(own {part.own_mm.sum():.2f}, neighbours {part.neighbours_mm.sum():.2f})"
        )
        shown = part.drop(columns=["point", "x_m", "y_m"]).copy()
        for c, fm in fmt.items():
            if c in shown:
                shown[c] = [("" if not np.isfinite(v) else fm.format(v)) for v in shown[c]]
        lines.append(shown.to_string(index=False))
        lines.append("")
    if f.rigid and len(results.traces[footing_id]) > 1:
        lines.append("Rigid footing: its settlement is the mean of the points above.")
    return "\n".join(lines)
