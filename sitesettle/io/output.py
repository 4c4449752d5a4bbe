"""The results folder: tables, GeoPackage, figures and report, written atomically.

:func:`write_results` builds every file in a temporary folder beside the target
and swaps it into place, so a results folder is always complete: either the new
one or, after any error or Ctrl-C, the old one untouched.

The tables are also available as DataFrames (:func:`footing_table`,
:func:`pair_table`, :func:`time_table`) and the summary as a dict
(:func:`summary_dict`) for the command line and for tests. Column names carry
their units: ``total_mm``, ``span_m``, ``q_net_kPa`` in SI, ``total_in``,
``span_ft``, ``q_net_ksf`` in US units. Conversions use the exact factors of
NIST SP 811 (2008), Appendix B: 1 ft = 0.3048 m, 1 in = 25.4 mm,
1 lbf = 4.448 221 615 260 5 N.

CSV and JSON output is deterministic: the same Results give byte-identical
files (fixed decimals per column, sorted JSON keys, no dates). The run date
appears in report.html only; set ``SOURCE_DATE_EPOCH`` to make it fixed too.

The CSV files are opened in spreadsheets: a text cell that begins with ``=``,
``+``, ``-``, ``@``, a tab or a carriage return is written with a leading single
quote (:func:`sitesettle.io.text.spreadsheet_text`), so that it stays text and is
never run as a formula. Numeric columns are never changed (``-3.200`` stays a
number).

One run at a time writes a results folder: :func:`write_results` holds an
exclusive lock (``.NAME.lock`` beside the folder, holding the process id) from the
temporary folder to the swap; a second run waits for it. Under the lock, the
leftovers of runs that died (``.NAME.tmp-*``, ``.NAME.old-*`` after a SIGKILL or a
power cut) are removed first, and a set-aside old folder whose swap never finished
is put back. A results path that is a symbolic link to a folder is followed: the
folder it points to is replaced and the link is left as it was.
"""

from __future__ import annotations

import contextlib
import glob
import json
import math
import os
import shutil
import signal
import unicodedata
import uuid
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

import sitesettle
from sitesettle.errors import OutputError
from sitesettle.io.text import FORBIDDEN_CATEGORIES, spreadsheet_text, terminal_line
from sitesettle.io.unit_text import in_units
from sitesettle.results import Results
from sitesettle.site import foundation_kind

#: exact conversion factors, NIST SP 811 (2008) Appendix B.8 / B.9
FOOT = 0.3048  # m
INCH = 0.0254  # m
KIP = 4.4482216152605  # kN (1000 lbf)
KSF = KIP / FOOT**2  # kPa (kip per square foot)

#: every file that write_results makes (section.png only when a section is given,
#: points.csv only when the site has query points, lines.csv only when structure
#: lines or strips were checked)
OUTPUT_FILES = (
    "footings.csv",
    "pairs.csv",
    "settlement_time.csv",
    "points.csv",
    "lines.csv",
    "summary.json",
    "site.gpkg",
    "site.dxf",
    "plan.png",
    "contours.png",
    "settlement_time.png",
    "section.png",
    "report.html",
)

#: figure resolution [dots per inch]
FIGURE_DPI = 150


@dataclass(frozen=True)
class _Unit:
    """One output unit: column suffix, factor from the core unit, decimals written."""

    suffix: str
    factor: float
    decimals: int


#: quantity → (SI unit, US unit); factors multiply the core value (m, kPa, kN)
UNITS: dict[str, dict[str, _Unit]] = {
    "length": {"si": _Unit("m", 1.0, 3), "us": _Unit("ft", 1.0 / FOOT, 3)},
    "settlement": {"si": _Unit("mm", 1000.0, 3), "us": _Unit("in", 1.0 / INCH, 4)},
    "pressure": {"si": _Unit("kPa", 1.0, 2), "us": _Unit("ksf", 1.0 / KSF, 4)},
    "force": {"si": _Unit("kN", 1.0, 1), "us": _Unit("kip", 1.0 / KIP, 2)},
}
#: decimals of the columns whose unit does not change
FIXED_DECIMALS = {"tilt_direction_deg": 2, "time_yr": 4}
#: ratios (tilt, angular distortion, utilisation) are written to 6 significant figures
RATIO_FORMAT = "{:.6g}"
RATIO_COLUMNS = (
    "tilt",
    "angular_distortion",
    "angular_distortion_tilt_removed",
    "angular_distortion_checked",
    "deflection_ratio",
    "sagging_ratio",
    "hogging_ratio",
    "angular_strain",
    "utilisation",
)


def _units(units: str) -> str:
    u = str(units).strip().lower()
    if u not in ("si", "us"):
        raise ValueError(f'units must be "si" or "us", not {units!r}')
    return u


def column(base: str, quantity: str, units: str = "si") -> str:
    """Column name with its unit suffix: ``column("total", "settlement", "us") == "total_in"``."""
    return f"{base}_{UNITS[quantity][_units(units)].suffix}"


def _scale(quantity: str, units: str) -> float:
    return UNITS[quantity][_units(units)].factor


def _decimals(name: str) -> int | None:
    """Decimals written for a column (None: ratio or text)."""
    if name in FIXED_DECIMALS:
        return FIXED_DECIMALS[name]
    for spec in UNITS.values():
        for unit in spec.values():
            if name.endswith("_" + unit.suffix):
                return unit.decimals
    return None


def _status(passed: bool | None) -> str:
    if passed is None:
        return "unchecked"
    return "pass" if passed else "fail"


# --------------------------------------------------------------------- tables


def footing_table(results: Results, units: str = "si") -> pd.DataFrame:
    """One row per footing at the design life (unrounded floats; see module notes for units)."""
    u = _units(units)
    L, S, P, F = (_scale(q, u) for q in ("length", "settlement", "pressure", "force"))
    fs = results.site.footings
    life = results.design_life_index
    checks = results.checks
    n = len(fs)
    passed = [None] * n if checks is None else [bool(p) for p in checks.footing_passed]
    reasons = [""] * n if checks is None else [in_units(r, u) for r in checks.footing_reasons]
    status = [_status(p) for p in passed]
    if checks is not None and len(checks.footing_status) == n:  # "beyond range" first
        status = [st.replace("_", " ") for st in checks.footing_status]
    kinds = [foundation_kind(f) for f in fs]
    limit = np.full(n, np.nan)
    if checks is not None and checks.footing_limit is not None:
        limit = np.asarray(checks.footing_limit, float)
    return pd.DataFrame(
        {
            "id": [f.id for f in fs],
            column("x", "length", u): [f.x * L for f in fs],
            column("y", "length", u): [f.y * L for f in fs],
            column("width", "length", u): [f.width * L for f in fs],
            column("length", "length", u): [f.length * L for f in fs],
            column("depth", "length", u): [f.depth * L for f in fs],
            column("service_load", "force", u): [f.service_load * F for f in fs],
            column("q_net", "pressure", u): np.asarray(results.net_pressure, float) * P,
            column("immediate", "settlement", u): _granular_all(results)[:, life] * S,
            column("on_loading", "settlement", u): results.immediate[:, life] * S,
            column("creep", "settlement", u): _creep(results)[:, life] * S,
            column("consolidation", "settlement", u): results.consolidation[:, life] * S,
            column("secondary", "settlement", u): results.secondary[:, life] * S,
            column("total", "settlement", u): results.total[:, life] * S,
            column("own", "settlement", u): results.own[:, life] * S,
            column("neighbours", "settlement", u): results.neighbours[:, life] * S,
            "tilt": np.asarray(results.tilt, float),
            "tilt_direction_deg": np.asarray(results.tilt_direction, float),
            column("integration_depth", "length", u): np.asarray(results.influence_depth, float)
            * L,
            column("significant_depth", "length", u): _significant(results) * L,
            "method": list(results.methods),
            "outside_boreholes": [bool(v) for v in results.outside_hull],
            "kind": kinds,
            column("total_limit", "settlement", u): limit * S,
            "status": status,
            "reasons": reasons,
        }
    )


_PAIR_BASE = (
    "a",
    "b",
    "span",
    "differential",
    "angular_distortion",
    "limit",
    "limit_source",
    "utilisation",
    "status",
    "origin",
)


def pair_basis(results: Results) -> tuple[str, str]:
    """What the pairs' differential and angular distortion measure, as (words, name part).

    ``("after 0.5 yr", "after_0.5yr")`` when the checks look at the movement after
    ``checked_after`` years, ``("total", "total")`` otherwise.
    """
    after = 0.0 if results.checks is None else float(results.checks.checked_after)
    if after > 0:
        return f"after {after:g} yr", f"after_{after:g}yr"
    return "total", "total"


def total_differential(results: Results) -> np.ndarray:
    """|total_a − total_b| of every checked pair at the design life [m] (the total basis).

    For a strip, its station nearest the other member, as the checks take it.
    """
    from sitesettle.checks import _nearest_stations

    pc = results.checks.pairs if results.checks is not None else None
    if pc is None or len(pc.a) == 0:
        return np.zeros(0)
    k = results.design_life_index
    if results.station_xy is not None and results.station_total is not None:
        st_xy = np.asarray(results.station_xy, float)
        st_tot = np.asarray(results.station_total, float)[..., k]
    else:
        st_xy = results.member_xy[: len(results.ids), None, :]
        st_tot = results.total[:, None, k]
    if results.points is not None:
        nq, ns = len(results.points.ids), st_xy.shape[1]
        pad_xy = np.full((nq, ns, 2), np.nan)
        pad_xy[:, 0] = np.asarray(results.points.xy, float).reshape(-1, 2)
        pad_s = np.full((nq, ns), np.nan)
        pad_s[:, 0] = results.points.total[:, k]
        st_xy = np.concatenate([st_xy, pad_xy])
        st_tot = np.concatenate([st_tot, pad_s])
    a, b = np.asarray(pc.a, int), np.asarray(pc.b, int)
    sa, sb = _nearest_stations(st_xy, a, b)
    return np.abs(st_tot[a, sa] - st_tot[b, sb])


def _opt(values, fallback, n: int = 0) -> np.ndarray:
    """An optional result array, or the fallback (NaN of length n when None)."""
    if values is not None:
        return np.asarray(values, float)
    return np.full(n, np.nan) if fallback is None else np.asarray(fallback, float)


def pair_table(results: Results, units: str = "si") -> pd.DataFrame:
    """One row per checked pair (empty, with the columns, when there are no checks).

    ``differential`` and the angular distortions are of the checked movement; the
    ``basis`` column says which ("after 0.5 yr" or "total"). When the checks look
    at the movement after a time, ``differential_total`` and
    ``angular_distortion_total`` give the total difference beside it.
    """
    u = _units(units)
    span, diff = column("span", "length", u), column("differential", "settlement", u)
    diff_tot = column("differential_total", "settlement", u)
    words, _ = pair_basis(results)
    after = words != "total"
    cols = [
        "a",
        "b",
        span,
        diff,
        "angular_distortion",
        "angular_distortion_tilt_removed",
        "angular_distortion_checked",
        "beta_basis",
        "basis",
    ]
    if after:
        cols += [diff_tot, "angular_distortion_total"]
    cols += ["limit", "limit_source", "utilisation", "status", "origin"]
    ratios = ("angular_distortion", "angular_distortion_tilt_removed", "angular_distortion_checked")
    numeric = {span, diff, diff_tot, *ratios, "angular_distortion_total", "utilisation"}
    if results.checks is None or len(results.checks.pairs.a) == 0:
        return pd.DataFrame({c: pd.Series(dtype=float if c in numeric else object) for c in cols})
    pc = results.checks.pairs
    ids = results.member_ids
    k = len(pc.a)
    origin = tuple(pc.origin) if len(pc.origin) == k else ("",) * k
    data = {
        "a": [ids[int(i)] for i in pc.a],
        "b": [ids[int(j)] for j in pc.b],
        span: np.asarray(pc.span, float) * _scale("length", u),
        diff: np.asarray(pc.differential, float) * _scale("settlement", u),
        # β = differential / span (the rigid-body tilt kept), β with the building's
        # plane removed, and the one checked (docs/criteria.md §2.2)
        "angular_distortion": _opt(pc.angular_distortion_tilt_kept, pc.angular_distortion),
        "angular_distortion_tilt_removed": _opt(pc.angular_distortion_tilt_removed, None, k),
        "angular_distortion_checked": np.asarray(pc.angular_distortion, float),
        "beta_basis": list(pc.beta_basis) if len(pc.beta_basis) == k else [""] * k,
        "basis": [words] * k,
    }
    if after:
        tot = total_differential(results)
        sp = np.asarray(pc.span, float)
        data[diff_tot] = tot * _scale("settlement", u)
        data["angular_distortion_total"] = np.divide(tot, sp, out=np.full(k, np.nan), where=sp > 0)
    data.update(
        {
            "limit": [in_units(x, u) for x in pc.limit],
            "limit_source": list(pc.limit_source),
            "utilisation": np.asarray(pc.utilisation, float),
            "status": [_status(bool(p)) for p in pc.passed],
            "origin": list(origin),
        }
    )
    return pd.DataFrame(data)


def point_table(results: Results, units: str = "si") -> pd.DataFrame:
    """Every query point at every report time (point-major order): where it is, how deep
    the integration went, and its settlement by part."""
    u = _units(units)
    S = _scale("settlement", u)
    L = _scale("length", u)
    q = results.points
    if q is None:
        return pd.DataFrame()
    n, m = q.total.shape
    rep = np.repeat
    return pd.DataFrame(
        {
            "id": rep(np.array(q.ids, dtype=object), m),
            column("x", "length", u): rep(np.asarray(q.xy, float)[:, 0] * L, m),
            column("y", "length", u): rep(np.asarray(q.xy, float)[:, 1] * L, m),
            column("depth", "length", u): rep(np.asarray(q.depth, float) * L, m),
            "time_yr": np.tile(np.asarray(results.times, float), n),
            column("total", "settlement", u): q.total.reshape(-1) * S,
            column("on_loading", "settlement", u): q.immediate.reshape(-1) * S,
            column("creep", "settlement", u): q.creep.reshape(-1) * S,
            column("consolidation", "settlement", u): q.consolidation.reshape(-1) * S,
            column("secondary", "settlement", u): q.secondary.reshape(-1) * S,
            column("integration_depth", "length", u): rep(np.asarray(q.depth_reached) * L, m),
        }
    )


def _creep(results: Results) -> np.ndarray:
    """Granular creep (n_f, n_t) [m]; zeros for results made without the split."""
    c = getattr(results, "creep", None)
    return np.zeros_like(results.immediate) if c is None else c


def _granular_all(results: Results) -> np.ndarray:
    """'immediate' of the tables: on loading plus granular creep (total = it + cons + sec)."""
    return results.immediate + _creep(results)


def _significant(results: Results) -> np.ndarray:
    s = getattr(results, "significant_depth", None)
    return np.full(len(results.ids), np.nan) if s is None else np.asarray(s, float)


def time_table(results: Results, units: str = "si") -> pd.DataFrame:
    """Settlement of every footing at every time of ``results.times`` (footing-major order)."""
    u = _units(units)
    S = _scale("settlement", u)
    n, m = results.total.shape
    return pd.DataFrame(
        {
            "id": np.repeat(np.array(results.ids, dtype=object), m),
            "time_yr": np.tile(np.asarray(results.times, float), n),
            column("total", "settlement", u): results.total.reshape(-1) * S,
            column("immediate", "settlement", u): _granular_all(results).reshape(-1) * S,
            column("on_loading", "settlement", u): results.immediate.reshape(-1) * S,
            column("creep", "settlement", u): _creep(results).reshape(-1) * S,
            column("consolidation", "settlement", u): results.consolidation.reshape(-1) * S,
            column("secondary", "settlement", u): results.secondary.reshape(-1) * S,
        }
    )


def _round(value: float, decimals: int | None) -> float | None:
    """A JSON-ready float: rounded like the CSV column, None for NaN."""
    if value is None or not math.isfinite(float(value)):
        return None
    if decimals is None:
        return float(RATIO_FORMAT.format(float(value)))
    return round(float(value), decimals)


def summary_dict(results: Results, units: str = "si") -> dict:
    """The summary written to summary.json (rounded as in the CSV files)."""
    from sitesettle.report import CAUTIONS

    u = _units(units)
    S = _scale("settlement", u)
    sd = UNITS["settlement"][u].decimals
    total = results.at_design_life() * S
    ids = results.ids
    checks = results.checks
    worst = int(np.nanargmax(total)) if np.isfinite(total).any() else None
    out: dict = {
        "program": "sitesettle",
        "version": sitesettle.__version__,
        "site": results.site.name,
        "units": u,
        "n_footings": len(ids),
        column("max_total", "settlement", u): _round(np.nanmax(total), sd)
        if worst is not None
        else None,
        "worst_footing": ids[worst] if worst is not None else None,
        "design_life_yr": _round(
            results.times[results.design_life_index], FIXED_DECIMALS["time_yr"]
        ),
        "warnings": [in_units(w, u) for w in results.warnings],
        "cautions": list(CAUTIONS),
        "files_outside_project": list(getattr(results.site, "outside_files", ())),
        "overrides": list(getattr(results.site, "overrides", ())),
    }
    diff_name = column("max_differential", "settlement", u)
    if checks is None:
        out.update(
            {
                "n_pairs": 0,
                diff_name: None,
                "max_angular_distortion": None,
                "pair_basis": None,
                "failing_footings": [],
                "failing_pairs": [],
                "worst_pair": None,
                "building_tilt": None,
                "building_tilt_direction_deg": None,
                "criteria": None,
                "criteria_sources": [],
                "all_passed": None,
                "n_lines": 0,
                "failing_lines": [],
            }
        )
        return out
    pc = checks.pairs
    k = len(pc.a)
    mids = results.member_ids
    pairs = [[mids[int(i)], mids[int(j)]] for i, j in zip(pc.a, pc.b)]
    worst_pair = None
    if k:
        util = np.asarray(pc.utilisation, float)
        key = util if np.isfinite(util).any() else np.asarray(pc.angular_distortion, float)
        worst_pair = pairs[int(np.nanargmax(key))] if np.isfinite(key).any() else None
    out.update(
        {
            "n_pairs": k,
            diff_name: _round(np.nanmax(pc.differential) * S, sd) if k else None,
            "max_angular_distortion": _round(np.nanmax(pc.angular_distortion), None) if k else None,
            "pair_basis": pair_basis(results)[0],
            "failing_footings": [fid for fid, p in zip(ids, checks.footing_passed) if not p],
            "failing_pairs": [pr for pr, p in zip(pairs, pc.passed) if not p],
            "worst_pair": worst_pair,
            "building_tilt": _round(checks.building_tilt, None),
            "building_tilt_direction_deg": _round(checks.building_tilt_direction, 2),
            "criteria": checks.criteria,
            "criteria_sources": list(checks.sources),
            column("footing_limit_total", "settlement", u): _round(
                checks.footing_limit_total * S, sd
            ),
            "footing_limit_source": checks.footing_limit_source,
            "beyond_range_footings": [ids[i] for i in checks.beyond_range],
            "stages": [
                {
                    "name": g.name,
                    "start_yr": g.start,
                    "duration_yr": g.duration,
                    "dead_fraction": g.dead,
                    "live_fraction": g.live,
                    "area_loads": list(g.area_loads),
                }
                for g in results.site.stages
            ],
            "area_loads": [
                {
                    "name": a.name,
                    "pressure_kPa": a.pressure,
                    "depth_m": a.depth,
                    "area_m2": round(a.area, 3),
                    "description": a.description,
                }
                for a in results.site.area_loads
            ],
            "rigid_tilt": checks.rigid_tilt,
            "building_tilt_limit": _round(checks.building_tilt_limit, None)
            if np.isfinite(checks.building_tilt_limit)
            else None,
            "building_tilt_passed": bool(checks.building_tilt_passed),
            "all_passed": bool(checks.all_passed),
            "n_lines": 0 if checks.lines is None else len(checks.lines.ids),
            "failing_lines": []
            if checks.lines is None
            else [list(ids) for ids, ok in zip(checks.lines.ids, checks.lines.passed) if not ok],
        }
    )
    if checks.checked_after > 0:
        out["checked_after_yr"] = _round(checks.checked_after, FIXED_DECIMALS["time_yr"])
    return out


def format_table(df: pd.DataFrame) -> pd.DataFrame:
    """The table as text, each column with its fixed decimals (NaN → empty)."""
    out = df.copy()
    for name in df.columns:
        s = df[name]
        if s.dtype == bool or not pd.api.types.is_float_dtype(s.dtype):
            continue
        d = _decimals(name)
        if d is None and not name.startswith(RATIO_COLUMNS):
            d = 6
        fmt = RATIO_FORMAT if d is None else f"{{:.{d}f}}"
        out[name] = [fmt.format(v) if math.isfinite(v) else "" for v in s.to_numpy(float)]
    return out


def spreadsheet_safe(df: pd.DataFrame) -> pd.DataFrame:
    """The table with every text cell through :func:`spreadsheet_text` (numbers untouched).

    Only columns of text (object or string dtype) are changed, and in them only
    ``str`` cells; numeric and boolean columns are left as they are.
    """
    out = df.copy()
    for name in df.columns:
        col = df[name]
        if col.dtype == object or pd.api.types.is_string_dtype(col.dtype):
            out[name] = pd.Series([spreadsheet_text(v) for v in col], index=col.index, dtype=object)
    return out


def _write_csv(df: pd.DataFrame, path: Path) -> None:
    format_table(spreadsheet_safe(df)).to_csv(path, index=False, lineterminator="\n")


def _write_json(data: dict, path: Path) -> None:
    path.write_text(
        json.dumps(data, indent=2, sort_keys=True, ensure_ascii=False, allow_nan=False) + "\n",
        encoding="utf-8",
    )


# ------------------------------------------------------------------ geopackage


def _rounded(df: pd.DataFrame) -> pd.DataFrame:
    """Float columns rounded as in the CSV (for the GeoPackage attributes)."""
    out = df.copy()
    for name in df.columns:
        if pd.api.types.is_float_dtype(df[name].dtype) and df[name].dtype != bool:
            d = _decimals(name)
            out[name] = df[name].round(d) if d is not None else df[name]
    return out


def contour_table(results: Results, units: str = "si"):
    """Contour lines of the settlement map as a GeoDataFrame (level in mm or in)."""
    import geopandas as gpd

    from sitesettle.mapping import contour_levels, contour_lines

    u = _units(units)
    S = _scale("settlement", u)
    name = column("level", "settlement", u)
    rows: list[tuple[float, object]] = []
    method = ""
    if results.map is not None:
        method = results.map.method
        levels = contour_levels(np.asarray(results.map.settlement, float) * S)
        rows = [
            (lvl / 1000.0 * S, geom)
            for lvl, geom in contour_lines(results.map, levels / S * 1000.0)
        ]
    d = UNITS["settlement"][u].decimals
    return gpd.GeoDataFrame(
        {name: [round(r[0], d) for r in rows], "method": [method] * len(rows)},
        geometry=gpd.GeoSeries([r[1] for r in rows], crs=results.site.crs),
        crs=results.site.crs,
    )


def write_geopackage(results: Results, path: Path, units: str = "si") -> None:
    """site.gpkg: layers ``footings`` (polygons), ``pairs`` (lines) and ``contours`` (lines).

    The layers carry the site's CRS; a site without one gives layers without one
    (the library's warning about that is expected and silenced).
    """
    import warnings

    with warnings.catch_warnings():
        if results.site.crs is None:
            warnings.filterwarnings(
                "ignore", message="'crs' was not provided", category=UserWarning
            )
        _write_layers(results, path, units)


def _write_layers(results: Results, path: Path, units: str) -> None:
    import geopandas as gpd
    import shapely

    crs = results.site.crs
    ft = _rounded(footing_table(results, units))
    L = _scale("length", units)
    polys = [shapely.Polygon(np.asarray(f.outline, float) * L) for f in results.site.footings]
    gpd.GeoDataFrame(ft, geometry=polys, crs=crs).to_file(
        path, layer="footings", driver="GPKG", engine="pyogrio"
    )
    pt = _rounded(pair_table(results, units))
    xy = {m: (p[0] * L, p[1] * L) for m, p in zip(results.member_ids, results.member_xy)}
    lines = [shapely.LineString([xy[a], xy[b]]) for a, b in zip(pt["a"], pt["b"])]
    gpd.GeoDataFrame(pt, geometry=gpd.GeoSeries(lines, crs=crs), crs=crs).to_file(
        path, layer="pairs", driver="GPKG", engine="pyogrio", geometry_type="LineString"
    )
    ct = contour_table(results, units)
    if L != 1.0:
        ct = ct.set_geometry(ct.geometry.scale(L, L, origin=(0, 0)))
    ct.to_file(path, layer="contours", driver="GPKG", engine="pyogrio", geometry_type="LineString")


# ---------------------------------------------------------------- the folder


def _figure_bytes(fig) -> bytes:
    """The figure as PNG bytes (closed afterwards), drawn once.

    With a layout engine, ``savefig`` draws the figure twice: once with drawing
    switched off to run the layout, then for real. Here the layout runs once at
    the saving resolution (the steps ``Figure.draw`` takes: aspect, layout,
    aspect), the engine is switched off and the figure drawn a single time: the
    same pixels (checked in the tests) for the cost of one draw.
    """
    import io

    import matplotlib.pyplot as plt
    from matplotlib import cbook

    from sitesettle.plots import _place_axes

    buf = io.BytesIO()
    if fig.get_layout_engine() is not None and fig.axes:
        with cbook._setattr_cm(fig, dpi=FIGURE_DPI):
            _place_axes(fig)
        fig.set_layout_engine("none")
    fig.savefig(
        buf,
        format="png",
        dpi=FIGURE_DPI,
        metadata={"Software": f"sitesettle {sitesettle.__version__}"},
    )
    plt.close(fig)
    return buf.getvalue()


def figure_names(section=None) -> list[str]:
    """The PNG figures of a results folder, in the report's order."""
    return ["plan", "contours", "settlement_time"] + (["section"] if section is not None else [])


def figure_png(name: str, results: Results, *, units: str = "si", section=None) -> bytes:
    """One figure of :func:`figure_names` as PNG bytes."""
    from sitesettle import plots

    if name == "plan":
        fig = plots.plan(results, units=units).figure
    elif name == "contours":
        fig = plots.contours(results, units=units).figure
    elif name == "settlement_time":
        ax1, ax2 = plots.history_axes()
        fig = plots.history(results, ax=ax1, units=units, pair_ax=ax2).figure
    elif name == "section" and section is not None:
        fig = plots.section(section, units=units, site=results.site).figure
    else:
        raise ValueError(f"no figure {name!r}")
    return _figure_bytes(fig)


def make_figures(results: Results, *, units: str = "si", section=None) -> dict[str, bytes]:
    """The PNG figures as bytes: plan, contours, settlement_time and (with a section) section."""
    return {
        name: figure_png(name, results, units=units, section=section)
        for name in figure_names(section)
    }


#: the file whose ``"program": "sitesettle"`` marks a results folder as ours
RESULTS_MARKER = "summary.json"


def _is_results_folder(path: Path, marker: str = RESULTS_MARKER) -> bool:
    """An empty folder, or one that sitesettle wrote (its ``marker`` file says so)."""
    entries = list(path.iterdir())
    if not entries:
        return True
    summary = path / marker
    try:
        return json.loads(summary.read_text(encoding="utf-8")).get("program") == "sitesettle"
    except (OSError, ValueError, AttributeError):
        return False


def _check_target(out: Path, marker: str = RESULTS_MARKER, what: str = "results") -> None:
    """Raise OutputError when ``out`` cannot become a folder of ours (nothing is written).

    ``marker`` is the JSON file that says an existing folder is ours (summary.json for
    results); ``what`` names the folder in the messages ("results", "the comparison").
    """
    bad = [c for c in str(out) if unicodedata.category(c) in FORBIDDEN_CATEGORIES]
    if bad:
        raise OutputError(
            f"cannot write {what} to {terminal_line(str(out))}: the path holds the control "
            f"or invisible character U+{ord(bad[0]):04X}, which the GIS library cannot "
            "write and a terminal cannot show; choose a plain folder name"
        )
    if out.exists() or out.is_symlink():
        if not out.is_dir():
            raise OutputError(
                f"cannot write {what} to {out}: it is an existing file, not a folder; "
                "choose another --out or remove the file"
            )
        if not _is_results_folder(out, marker):
            raise OutputError(
                f"cannot write {what} to {out}: the folder exists and was not written by "
                f"sitesettle (no {marker} of ours); choose an empty or new folder"
            )
    ancestor = out.parent
    while not ancestor.exists():
        ancestor = ancestor.parent
    if not ancestor.is_dir():
        raise OutputError(f"cannot write {what} to {out}: {ancestor} is a file, not a folder")
    if not os.access(ancestor, os.W_OK | os.X_OK):
        raise OutputError(f"cannot write {what} to {out}: no permission to write in {ancestor}")


def check_target(
    out_dir: str | os.PathLike, *, marker: str = RESULTS_MARKER, what: str = "results"
) -> None:
    """Raise OutputError now if ``out_dir`` cannot become a results folder.

    The command line calls it before a long analysis; :func:`write_results` calls it
    again before writing. Nothing is written. ``marker`` and ``what`` as for
    :func:`write_folder` (another kind of folder of ours, such as a comparison).
    """
    _check_target(_follow_link(Path(out_dir).absolute()), marker, what)


@contextlib.contextmanager
def _signals_deferred():
    """Hold SIGINT and SIGTERM while a few renames run, so Ctrl-C cannot split them.

    A signal that arrives meanwhile is delivered (as KeyboardInterrupt) when the
    block ends. Where signal masks are not available (not POSIX, or not the main
    thread) this does nothing.
    """
    held = {signal.SIGINT, getattr(signal, "SIGTERM", signal.SIGINT)}
    try:
        previous = signal.pthread_sigmask(signal.SIG_BLOCK, held)
    except (AttributeError, ValueError, OSError):
        yield
        return
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


def _swap(tmp: Path, out: Path) -> None:
    """Put the finished folder ``tmp`` in place of ``out`` (renames on one file system)."""
    with _signals_deferred():
        if not out.exists():
            os.replace(tmp, out)
            return
        old = out.parent / f".{out.name}.old-{uuid.uuid4().hex[:8]}"
        os.replace(out, old)
        try:
            os.replace(tmp, out)
        except BaseException:
            os.replace(old, out)
            raise
        shutil.rmtree(old, ignore_errors=True)  # a results folder: quick, still held


def _follow_link(out: Path) -> Path:
    """The folder a symbolic link ``out`` points to (``out`` itself when not a link).

    The swap then replaces that folder and leaves the link alone; a link that points
    nowhere is refused (it would otherwise be moved aside and left).
    """
    if not out.is_symlink():
        return out
    target = Path(os.path.realpath(out))
    if not target.exists():
        raise OutputError(
            f"cannot write results to {out}: it is a symbolic link to {target}, which does "
            "not exist; remove the link or give --out the real folder"
        )
    return target


@contextlib.contextmanager
def _results_lock(out: Path, on_wait: Callable[[str], None] | None):
    """Hold the exclusive lock of the results folder ``out`` (waiting for another run).

    The lock is ``flock`` on ``.NAME.lock`` beside the folder; it is released when the
    process ends, however it ends. The file is removed on release; a run that
    locked a file since removed by its holder locks the new one instead.
    """
    try:
        import fcntl
    except ImportError:  # pragma: no cover - not POSIX: no lock
        yield
        return
    path = out.parent / f".{out.name}.lock"
    while True:
        fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o644)
        try:
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except BlockingIOError:
                try:
                    holder = os.pread(fd, 32, 0).decode("ascii", "replace").strip() or "?"
                except OSError:
                    holder = "?"
                if on_wait is not None:
                    on_wait(
                        f"waiting for another sitesettle run (process {holder}) that is "
                        f"writing {out}"
                    )
                fcntl.flock(fd, fcntl.LOCK_EX)
            mine = os.fstat(fd)
            try:
                now = os.stat(path)
            except FileNotFoundError:
                now = None
            if now is not None and (now.st_dev, now.st_ino) == (mine.st_dev, mine.st_ino):
                break
        except BaseException:
            os.close(fd)
            raise
        os.close(fd)  # the holder removed that file: lock the new one
    try:
        os.ftruncate(fd, 0)
        os.pwrite(fd, f"{os.getpid()}\n".encode("ascii"), 0)
        yield
    finally:
        with contextlib.suppress(OSError):
            os.unlink(path)
        os.close(fd)


def _remove_stale(out: Path) -> None:
    """Remove what runs that died left beside ``out`` (the caller holds the lock).

    ``.NAME.tmp-*`` are unfinished results: removed. ``.NAME.old-*`` are earlier
    results set aside during a swap: when ``out`` is missing (the swap was cut
    between its two renames) the newest is put back, the others are removed.
    """
    tmps = sorted(out.parent.glob(f".{glob.escape(out.name)}.tmp-*"))
    olds = sorted(
        out.parent.glob(f".{glob.escape(out.name)}.old-*"),
        key=lambda p: p.lstat().st_mtime,
    )
    for p in tmps:
        if p.is_dir() and not p.is_symlink():
            shutil.rmtree(p, ignore_errors=True)
    if olds and not (out.exists() or out.is_symlink()):
        newest = olds.pop()
        if newest.is_dir() and not newest.is_symlink():
            os.replace(newest, out)
    for p in olds:
        if p.is_dir() and not p.is_symlink():
            shutil.rmtree(p, ignore_errors=True)


def write_results(
    results: Results,
    out_dir: str | os.PathLike,
    *,
    units: str = "si",
    progress: Callable[[str], None] | None = None,
    section=None,
    on_wait: Callable[[str], None] | None = None,
    extra_files: dict[str, bytes] | None = None,
) -> Path:
    """Write every output file into ``out_dir``, atomically.

    Parameters
    ----------
    results : Results
        What :func:`sitesettle.analyse` returned.
    out_dir : path
        The results folder. It may exist if it is empty or an earlier results
        folder; it is then replaced as a whole. A symbolic link to such a folder is
        followed (the folder is replaced, the link kept).
    units : {"si", "us"}, optional
        SI (m, mm, kPa, kN) or US customary units (ft, in, ksf, kip) in the tables,
        GeoPackage, figures and report.
    progress : callable, optional
        Called as ``progress(file_name)`` before each file is made.
    section : sitesettle.mapping.Section, optional
        A section through the stratigraphy; section.png is drawn when given.
    on_wait : callable, optional
        Called once with a message when another run holds the folder's lock and
        this one waits for it.
    extra_files : dict, optional
        More files for the folder, name → content (``sitesettle size`` adds the
        sized footings and the table of changes), written with the rest and
        replaced with it.

    Returns
    -------
    pathlib.Path
        The results folder.

    Raises
    ------
    OutputError
        ``out_dir`` is an existing file or a folder sitesettle did not write, a link
        to nothing, or its parent cannot be written; nothing is written then.
    OSError
        The disk is full, a file is too large, the old folder cannot be moved …:
        the temporary folder is removed and the old folder kept.
    """
    u = _units(units)

    def fill(tmp: Path) -> None:
        _write_all(results, tmp, u, progress or (lambda name: None), section)
        for name, content in (extra_files or {}).items():
            if Path(name).name != name or name.startswith("."):
                raise ValueError(f"extra file name {name!r} is not a plain file name")
            (tmp / name).write_bytes(content)

    return write_folder(out_dir, fill, on_wait=on_wait)


def write_folder(
    out_dir: str | os.PathLike,
    fill: Callable[[Path], None],
    *,
    marker: str = RESULTS_MARKER,
    what: str = "results",
    on_wait: Callable[[str], None] | None = None,
) -> Path:
    """Make a folder of ours atomically: ``fill`` writes a temporary folder, then it is
    swapped into place.

    This is the writing of :func:`write_results` without its files; ``sitesettle
    compare`` writes its folder the same way. The target is checked first (an existing
    file, a folder that is not ours, a link to nothing, a parent that cannot be written
    raise :class:`OutputError` before anything is written), the folder's lock is held
    from the temporary folder to the swap, the leftovers of killed runs are cleared,
    and after any error or interrupt the temporary folder is removed and the old
    folder kept.

    Parameters
    ----------
    out_dir : path
        The folder to (re)place. It may exist if it is empty or ours: its ``marker``
        file holds ``"program": "sitesettle"``.
    fill : callable
        Called as ``fill(tmp)`` with the temporary folder (a :class:`pathlib.Path`);
        it writes every file, including the ``marker``.
    marker : str, optional
        The JSON file that marks a folder as ours (``"summary.json"`` for results).
    what : str, optional
        The folder in the messages (``"results"``, ``"the comparison"``).
    on_wait : callable, optional
        Called once with a message when another run holds the folder's lock.

    Returns
    -------
    pathlib.Path
        The folder written (a symbolic link followed).
    """
    out = _follow_link(Path(out_dir).absolute())
    _check_target(out, marker, what)
    # the temporary folder's name is chosen before it exists, so that an interrupt at
    # any moment after its creation finds it and removes it
    tmp = out.parent / f".{out.name}.tmp-{uuid.uuid4().hex[:8]}"
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"cannot write {what} to {out}: {exc.strerror or exc}") from None
    with _results_lock(out, on_wait):
        _remove_stale(out)
        _check_target(out, marker, what)  # again: another run may have changed it meanwhile
        try:
            try:
                with _signals_deferred():
                    tmp.mkdir(mode=0o700)
            except OSError as exc:
                raise OutputError(f"cannot write {what} to {out}: {exc.strerror or exc}") from None
            umask = os.umask(0)
            os.umask(umask)
            os.chmod(tmp, 0o777 & ~umask)
            fill(tmp)
            _swap(tmp, out)
        except BaseException:
            shutil.rmtree(tmp, ignore_errors=True)
            raise
    return out


def _write_all(
    results: Results, folder: Path, units: str, progress: Callable[[str], None], section
) -> None:
    from sitesettle.io import figure_workers, frames

    # the figures are drawn in worker processes (when there are cores for them) while
    # this process writes the tables, layers, drawing and the report around them
    with figure_workers.rendering(results, units=units, section=section) as job:
        # the CSV files are the DataFrames of sitesettle.io.frames (the Results
        # methods), with their index as the first columns
        progress("footings.csv")
        _write_csv(frames.footings(results, units).reset_index(), folder / "footings.csv")
        progress("pairs.csv")
        _write_csv(frames.pairs(results, units).reset_index(), folder / "pairs.csv")
        progress("settlement_time.csv")
        _write_csv(frames.history(results, units).reset_index(), folder / "settlement_time.csv")
        if results.points is not None:
            progress("points.csv")
            _write_csv(frames.query_points(results, units).reset_index(), folder / "points.csv")
        lines = frames.lines(results, units)
        if len(lines):
            progress("lines.csv")
            _write_csv(lines.reset_index(), folder / "lines.csv")
        progress("summary.json")
        _write_json(summary_dict(results, units), folder / "summary.json")
        progress("site.gpkg")
        write_geopackage(results, folder / "site.gpkg", units)
        progress("site.dxf")
        from sitesettle.io.cad import write_dxf

        write_dxf(results, folder / "site.dxf", units)
        progress("figures")
        # the report around the figures now, each figure's place held by a marker
        page, marked = _report_with_markers(results, job.names, units)
        figures = job.result()
    for name, png in figures.items():
        (folder / f"{name}.png").write_bytes(png)
    progress("report.html")
    with open(folder / "report.html", "w", encoding="utf-8") as f:
        for piece in _fill_markers(page, marked, figures):
            f.write(piece)  # piece by piece: the report is never held whole


def _report_with_markers(results: Results, names: list[str], units: str):
    """The report with a unique marker image in place of each figure: (html, name → marker).

    The report embeds each figure as base64 text; rendered with marker bytes, each
    marker's base64 text appears once and is replaced by the figure's own base64
    text (:func:`_fill_markers`), which gives the HTML that rendering with the figures
    gives, character for character. The report comes as its pieces
    (:func:`sitesettle.report.report_parts`), to be written one by one.
    """
    from sitesettle.report import report_parts

    token = uuid.uuid4().hex
    marked = {name: f"sitesettle figure {name} {token}".encode("ascii") for name in names}
    # US units print on Letter, SI on A4 (either prints on both: the page rule is a default)
    parts = report_parts(results, marked, units=units, page="letter" if units == "us" else "A4")
    return parts, marked


def _fill_markers(
    parts: list[str], marked: dict[str, bytes], figures: dict[str, bytes]
) -> list[str]:
    """The report's pieces with each marker's base64 text replaced by its figure's
    (each marker found exactly once in all the pieces; only the pieces holding one
    are copied)."""
    import base64

    out = list(parts)
    for name, marker in marked.items():
        key = base64.b64encode(marker).decode("ascii")
        found = [i for i, p in enumerate(out) if key in p]
        if len(found) != 1 or out[found[0]].count(key) != 1:  # pragma: no cover - random
            raise RuntimeError(f"the report's place of figure {name!r} was not found once")
        i = found[0]
        out[i] = out[i].replace(key, base64.b64encode(figures[name]).decode("ascii"))
    return out
