"""The calculation sheet of one footing (the data behind ``sitesettle explain``).

One row per sublayer and evaluation point, at the design life, with every number
a checker needs to redo the sublayer by hand and plain headings with units:

* Schmertmann (own load): ``on loading = C1 · Δp · Iz · h / E`` and
  ``creep = (C2 − 1) × on loading`` (Schmertmann, Hartman & Brown 1978);
* clay: ``primary strain = Cr/(1+e0)·log10(σ'p/σ'v0) + Cc/(1+e0)·log10(σ'/σ'p)``
  (the branch says which parts apply), of which ``primary strain × h`` is
  reached at U(t); the on-loading part is the undrained strain (Terzaghi 1943;
  docs/methods.md);
* the neighbours' part is elastic strain of their Δσz with the field modulus E.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from sitesettle.results import Results

#: exact factors, NIST SP 811 (2008) Appendix B
_FT = 0.3048
_KSF = 4.4482216152605 / _FT**2  # kPa
_KSI = _KSF * 144.0 / 1000.0  # MPa

#: (heading in SI, quantity) in sheet order; quantity picks the US unit
_COLUMNS: tuple[tuple[str, str], ...] = (
    ("point", ""),
    ("x (m)", "length"),
    ("y (m)", "length"),
    ("top (m)", "length"),
    ("bottom (m)", "length"),
    ("h (m)", "length"),
    ("stratum", ""),
    ("method", ""),
    ("σ'v0 (kPa)", "pressure"),
    ("Δσz own (kPa)", "pressure"),
    ("Δσz neighbours (kPa)", "pressure"),
    ("Δp (kPa)", "pressure"),
    ("C1", ""),
    ("C2", ""),
    ("Iz", ""),
    ("qc (kPa)", "pressure"),
    ("E (MPa)", "modulus"),
    ("E source", ""),
    ("σ'p (kPa)", "pressure"),
    ("final σ' (kPa)", "pressure"),
    ("branch", ""),
    ("primary strain", ""),
    ("U(t)", ""),
    ("drainage path (m)", "length"),
    ("on loading (mm)", "settlement"),
    ("creep (mm)", "settlement"),
    ("consolidation (mm)", "settlement"),
    ("secondary (mm)", "settlement"),
    ("own (mm)", "settlement"),
    ("neighbours (mm)", "settlement"),
    ("settlement (mm)", "settlement"),
)
_US = {
    "length": ("(m)", "(ft)", 1.0 / _FT),
    "pressure": ("(kPa)", "(ksf)", 1.0 / _KSF),
    "modulus": ("(MPa)", "(ksi)", 1.0 / _KSI),
    "settlement": ("(mm)", "(in)", 1.0 / 25.4),
}
#: every heading of the SI sheet
SHEET_COLUMNS = [name for name, _ in _COLUMNS]


def heading(name: str, units: str = "si") -> str:
    """A sheet heading in the output units: ``heading("top (m)", "us") == "top (ft)"``."""
    q = dict(_COLUMNS).get(name, "")
    if units == "us" and q in _US:
        si, us, _ = _US[q]
        return name.replace(si, us)
    return name


def trace_table(results: Results, footing_id: str, units: str = "si") -> pd.DataFrame:
    """Layer-by-layer calculation of one footing at the design life, one row per sublayer.

    Columns are :data:`SHEET_COLUMNS` (headings in US units with ``units="us"``).
    Raises KeyError listing some valid ids when ``footing_id`` is unknown.
    """
    if footing_id not in results.traces:
        ids = list(results.traces)
        raise KeyError(
            f'no footing "{footing_id}"; footings are {", ".join(ids[:12])}'
            + (" …" if len(ids) > 12 else "")
        )
    frames = []
    for p, tr in enumerate(results.traces[footing_id], start=1):
        n = len(tr.top)
        nan = np.full(n, np.nan)
        d = tr.details

        def get(key, default=nan, d=d):
            return np.asarray(d.get(key, default))

        mod = tr.modulus if tr.modulus is not None else nan
        own = np.asarray(tr.own_settlement) * 1000.0
        nb = np.asarray(tr.neighbour_settlement) * 1000.0
        cols = {
            "point": np.full(n, p),
            "x (m)": np.full(n, tr.point[0]),
            "y (m)": np.full(n, tr.point[1]),
            "top (m)": tr.top,
            "bottom (m)": tr.bottom,
            "h (m)": get("thickness h (m)", np.asarray(tr.bottom) - np.asarray(tr.top)),
            "stratum": list(tr.stratum),
            "method": list(tr.method),
            "σ'v0 (kPa)": tr.sigma_v0,
            "Δσz own (kPa)": tr.own_stress,
            "Δσz neighbours (kPa)": tr.neighbour_stress,
            "Δp (kPa)": get("Δp (kPa)"),
            "C1": get("C1"),
            "C2": get("C2"),
            "Iz": tr.influence,
            "qc (kPa)": get("qc (kPa)"),
            "E (MPa)": np.asarray(mod, float) / 1000.0,
            "E source": [str(x) for x in get("E source", np.full(n, "", dtype=object))],
            "σ'p (kPa)": get("σ'p (kPa)"),
            "final σ' (kPa)": get("final σ' (kPa)"),
            "branch": [str(x) for x in get("branch", np.full(n, "", dtype=object))],
            "primary strain": get("primary strain"),
            "U(t)": get("U(t)"),
            "drainage path (m)": get("drainage path (m)"),
            "on loading (mm)": get("on loading (mm)"),
            "creep (mm)": get("creep (mm)"),
            "consolidation (mm)": get("consolidation (mm)"),
            "secondary (mm)": get("secondary (mm)"),
            "own (mm)": own,
            "neighbours (mm)": nb,
            "settlement (mm)": own + nb,
        }
        frames.append(pd.DataFrame(cols, columns=SHEET_COLUMNS))
    df = pd.concat(frames, ignore_index=True) if frames else pd.DataFrame(columns=SHEET_COLUMNS)
    if units == "us":
        for name, q in _COLUMNS:
            if q in _US:
                df[name] = df[name].astype(float) * _US[q][2]
        df = df.rename(columns={c: heading(c, "us") for c in df.columns})
    return df


#: the sheet's column groups printed as separate blocks (each ≤ 100 columns wide)
_BLOCKS: tuple[tuple[str, tuple[str, ...]], ...] = (
    (
        "stresses",
        (
            "top (m)",
            "bottom (m)",
            "h (m)",
            "stratum",
            "method",
            "σ'v0 (kPa)",
            "Δσz own (kPa)",
            "Δσz neighbours (kPa)",
        ),
    ),
    (
        "granular: own on loading = C1·Δp·Iz·h/E, creep = (C2 − 1) × on loading",
        ("top (m)", "Δp (kPa)", "C1", "C2", "Iz", "qc (kPa)", "E (MPa)", "E source"),
    ),
    (
        "clay: primary strain from σ'v0 to the final σ' via σ'p; reached at U = 1",
        (
            "top (m)",
            "σ'p (kPa)",
            "final σ' (kPa)",
            "branch",
            "primary strain",
            "U(t)",
            "drainage path (m)",
            "E (MPa)",
        ),
    ),
    (
        "settlement of each sublayer by part",
        ("top (m)", "on loading (mm)", "creep (mm)", "consolidation (mm)", "secondary (mm)"),
    ),
    (
        "settlement of each sublayer by load",
        ("top (m)", "own (mm)", "neighbours (mm)", "settlement (mm)"),
    ),
)

_FORMATS = {
    "x (m)": "{:.2f}",
    "y (m)": "{:.2f}",
    "top (m)": "{:.2f}",
    "bottom (m)": "{:.2f}",
    "h (m)": "{:.3f}",
    "σ'v0 (kPa)": "{:.1f}",
    "Δσz own (kPa)": "{:.1f}",
    "Δσz neighbours (kPa)": "{:.1f}",
    "Δp (kPa)": "{:.1f}",
    "C1": "{:.3f}",
    "C2": "{:.3f}",
    "Iz": "{:.3f}",
    "qc (kPa)": "{:.0f}",
    "E (MPa)": "{:.2f}",
    "σ'p (kPa)": "{:.1f}",
    "final σ' (kPa)": "{:.1f}",
    "primary strain": "{:.4e}",
    "U(t)": "{:.3f}",
    "drainage path (m)": "{:.2f}",
    "on loading (mm)": "{:.3f}",
    "creep (mm)": "{:.3f}",
    "consolidation (mm)": "{:.3f}",
    "secondary (mm)": "{:.3f}",
    "own (mm)": "{:.3f}",
    "neighbours (mm)": "{:.3f}",
    "settlement (mm)": "{:.3f}",
}
_US_FORMATS = {"pressure": "{:.3f}", "modulus": "{:.3f}", "settlement": "{:.4f}"}


def _fmt(name: str, units: str) -> str:
    q = dict(_COLUMNS).get(name, "")
    if units == "us" and q in _US_FORMATS:
        return _US_FORMATS[q]
    return _FORMATS.get(name, "{}")


def shape_text(f, units: str = "si") -> str:
    """A footing's plan size: ``Ø 3.00 m`` for a circle, ``2.00 m × 3.00 m`` otherwise."""
    s, u = (1.0 / _FT, "ft") if units == "us" else (1.0, "m")
    if f.shape == "circle":
        return f"circle Ø {f.width * s:.2f} {u}"
    return f"{f.shape} {f.width * s:.2f} {u} × {f.length * s:.2f} {u}"


def format_sheet(results: Results, footing_id: str, units: str = "si") -> str:
    """A readable calculation sheet: header, the sublayer blocks per point, and the sums."""
    from sitesettle.io.unit_text import in_units

    i = results.ids.index(footing_id) if footing_id in results.ids else None
    df = trace_table(results, footing_id)
    f = results.site.footings[i]
    k = results.design_life_index
    creep = 0.0 if results.creep is None else results.creep[i, k]
    lines = [
        f"Footing {f.id}: {shape_text(f)}, base {f.depth:.2f} m, "
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
        f"  at {results.times[k]:g} years: total {results.total[i, k] * 1000:.1f} mm",
        f"    = on loading {results.immediate[i, k] * 1000:.1f} + creep {creep * 1000:.1f} "
        f"+ consolidation {results.consolidation[i, k] * 1000:.1f} + secondary "
        f"{results.secondary[i, k] * 1000:.1f} mm",
        f"    = own {results.own[i, k] * 1000:.1f} + neighbours "
        f"{results.neighbours[i, k] * 1000:.1f} mm",
        "",
    ]
    lines = [in_units(x, units) for x in lines]
    traces = results.traces[footing_id]
    shown = trace_table(results, footing_id, units=units)
    for p, part in df.groupby("point", sort=True):
        tr = traces[int(p) - 1]
        rows = shown[df["point"] == p]
        lines.append(
            in_units(
                f"Point {p} at ({part['x (m)'].iloc[0]:.2f}, {part['y (m)'].iloc[0]:.2f}) m: "
                f"{part['settlement (mm)'].sum():.2f} mm (own {part['own (mm)'].sum():.2f}, "
                f"neighbours {part['neighbours (mm)'].sum():.2f})",
                units,
            )
        )
        lines.extend(f"  {in_units(n, units)}" for n in tr.notes)
        gran = part["C2"].notna() | part["Iz"].notna()
        clay = part["branch"].astype(str) != ""
        for title, names in _BLOCKS:
            keep = (
                gran if title.startswith("granular") else clay if title.startswith("clay") else None
            )
            block = rows if keep is None else rows[keep.to_numpy()]
            if not len(block):
                continue
            cols = [heading(c, units) for c in names]
            text = block[cols].copy()
            for c, name in zip(cols, names):
                fm = _fmt(name, units)
                if pd.api.types.is_float_dtype(text[c].dtype):
                    text[c] = [("" if not np.isfinite(v) else fm.format(v)) for v in text[c]]
            lines.append(f"  {title}:")
            lines.extend("  " + x for x in text.to_string(index=False).split("\n"))
        lines.append("")
    if f.rigid and len(traces) > 1:
        lines.append("Rigid footing: its settlement is the mean of the points above.")
    from sitesettle.io.summary import fit

    return "\n".join(fit(lines))
