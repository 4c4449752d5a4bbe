"""The results as pandas DataFrames, indexed by id: what a notebook works with.

These are the tables the results folder is written from (:mod:`sitesettle.io.output`
writes ``frame.reset_index()`` of each, rounded, to its CSV file), so a DataFrame and
the CSV file of the same run hold the same columns and the same values to the CSV's
decimals.

Every column name carries its unit: ``total_mm``, ``span_m``, ``q_net_kPa`` in SI
(``units="si"``, the default), ``total_in``, ``span_ft``, ``q_net_ksf`` in US
customary units (``units="us"``), converted by the exact factors of NIST SP 811
(2008), Appendix B (1 ft = 0.3048 m, 1 in = 25.4 mm, 1 lbf = 4.448 221 615 260 5 N).
Ratios (``tilt``, ``angular_distortion``, ``deflection_ratio``, ``utilisation``) are
dimensionless [-]; ``tilt_direction_deg`` is in degrees from east, ``time_yr`` in
years. The values are unrounded floats.

The same functions are the methods of :class:`sitesettle.Results`
(``results.footings()`` is ``footings(results)``); they live here, at the edge,
because the model layer (``sitesettle.results`` and the core modules) is kept free
of pandas (``tests/test_layers.py``).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from sitesettle.io.output import _scale as _factor
from sitesettle.io.output import (
    _status,
    _units,
    column,
    footing_table,
    pair_table,
    point_table,
    time_table,
)
from sitesettle.results import Results

#: separator of the footing ids in a structure line's label (as in the report)
LINE_SEPARATOR = " → "


def footings(results: Results, units: str = "si") -> pd.DataFrame:
    """One row per footing at the design life, indexed by footing ``id``.

    Parameters
    ----------
    results : sitesettle.results.Results
        What :func:`sitesettle.analyse` returned.
    units : {"si", "us"}, optional
        SI (m, mm, kPa, kN; default) or US customary units (ft, in, ksf, kip).

    Returns
    -------
    pandas.DataFrame
        Position and size (``x_m``, ``width_m``, ``depth_m``…) [m], ``service_load_kN``
        [kN], ``q_net_kPa`` [kPa], the settlement by part (``immediate_mm`` =
        ``on_loading_mm`` + ``creep_mm``, ``consolidation_mm``, ``secondary_mm``,
        ``total_mm``, ``own_mm``, ``neighbours_mm``) [mm], ``tilt`` [rad],
        ``tilt_direction_deg`` [deg from east], ``integration_depth_m`` and
        ``significant_depth_m`` [m], ``method``, ``outside_boreholes``, ``kind``
        (pad, strip, raft), ``total_limit_mm`` [mm], ``status`` (``pass``, ``fail``,
        ``beyond range``, ``unchecked``) and ``reasons``: the columns of
        footings.csv (docs/outputs.md).
    """
    return footing_table(results, units).set_index("id")


def pairs(results: Results, units: str = "si") -> pd.DataFrame:
    """One row per checked pair, indexed by the pair's two ids ``(a, b)``.

    Parameters
    ----------
    results : sitesettle.results.Results
        What :func:`sitesettle.analyse` returned.
    units : {"si", "us"}, optional
        SI (m, mm; default) or US customary units (ft, in).

    Returns
    -------
    pandas.DataFrame
        ``span_m`` [m], ``differential_mm`` [mm] (of the movement checked, after
        ``checked_after`` when set), ``angular_distortion`` [-] (differential/span),
        ``angular_distortion_tilt_removed`` and ``angular_distortion_checked`` [-] with
        its ``beta_basis`` (docs/criteria.md §2.2), the governing
        ``limit`` and its ``limit_source``, ``utilisation`` [-] (value ÷ limit),
        ``status`` and ``origin`` (``auto``, ``listed`` or ``line``): the columns of
        pairs.csv. Empty, with these columns, when the analysis made no checks.
        ``results.pairs().sort_values("utilisation", ascending=False).head()`` gives
        the worst pairs.
    """
    return pair_table(results, units).set_index(["a", "b"])


def history(results: Results, units: str = "si") -> pd.DataFrame:
    """Settlement of every footing at every report time, indexed by ``(id, time_yr)``.

    Parameters
    ----------
    results : sitesettle.results.Results
        What :func:`sitesettle.analyse` returned.
    units : {"si", "us"}, optional
        Settlement in mm (default) or in.

    Returns
    -------
    pandas.DataFrame
        ``total_mm``, ``immediate_mm``, ``on_loading_mm``, ``creep_mm``,
        ``consolidation_mm``, ``secondary_mm`` [mm] at each time [yr] (the design
        life included): the columns of settlement_time.csv.
        ``history(r)["total_mm"].unstack("id")`` gives one column per footing.
    """
    return time_table(results, units).set_index(["id", "time_yr"])


def query_points(results: Results, units: str = "si") -> pd.DataFrame:
    """Every query point at every report time, indexed by ``(id, time_yr)``.

    Parameters
    ----------
    results : sitesettle.results.Results
        What :func:`sitesettle.analyse` returned.
    units : {"si", "us"}, optional
        SI (m, mm; default) or US customary units (ft, in).

    Returns
    -------
    pandas.DataFrame
        ``x_m``, ``y_m``, ``depth_m`` [m], ``total_mm``, ``on_loading_mm``,
        ``creep_mm``, ``consolidation_mm``, ``secondary_mm`` [mm] and
        ``integration_depth_m`` [m]: the columns of points.csv. Empty (no rows, no
        columns) when the site has no query points.
    """
    table = point_table(results, units)
    if table.empty:
        return pd.DataFrame(index=pd.MultiIndex.from_arrays([[], []], names=["id", "time_yr"]))
    return table.set_index(["id", "time_yr"])


def line_table(results: Results, units: str = "si") -> pd.DataFrame:
    """Structure lines and strips as the flat table of lines.csv (see :func:`lines`)."""
    u = _units(units)
    length, delta = column("length", "length", u), column("relative_deflection", "settlement", u)
    zone_length = column("zone_length", "length", u)
    cols = {
        "line": object,
        "kind": object,
        "footings": object,
        length: float,
        delta: float,
        "deflection_ratio": float,
        "zone": object,
        zone_length: float,
        "sagging_ratio": float,
        "hogging_ratio": float,
        "angular_strain": float,
        "angular_distortion": float,
        "limit": object,
        "limit_source": object,
        "utilisation": float,
        "status": object,
    }
    lc = None if results.checks is None else results.checks.lines
    if lc is None or len(lc.ids) == 0:
        return pd.DataFrame({c: pd.Series(dtype=t) for c, t in cols.items()})
    n = len(lc.ids)

    def optional(values) -> np.ndarray:
        return np.full(n, np.nan) if values is None else np.asarray(values, float)

    zones = tuple(lc.zone) if len(lc.zone) == n else ("",) * n
    return pd.DataFrame(
        {
            "line": [LINE_SEPARATOR.join(ids) for ids in lc.ids],
            "kind": ["strip" if len(ids) == 1 else "structure line" for ids in lc.ids],
            "footings": [len(ids) for ids in lc.ids],
            length: np.asarray(lc.length, float) * _factor("length", u),
            delta: np.asarray(lc.relative_deflection, float) * _factor("settlement", u),
            "deflection_ratio": np.asarray(lc.deflection_ratio, float),
            "zone": list(zones),
            zone_length: optional(lc.zone_length) * _factor("length", u),
            "sagging_ratio": optional(lc.sagging_ratio),
            "hogging_ratio": optional(lc.hogging_ratio),
            "angular_strain": optional(lc.angular_strain),
            "angular_distortion": optional(lc.angular_distortion),
            "limit": list(lc.limit),
            "limit_source": list(lc.limit_source),
            "utilisation": np.asarray(lc.utilisation, float),
            "status": [_status(bool(p)) for p in lc.passed],
        }
    ).astype({"footings": "int64"})


def lines(results: Results, units: str = "si") -> pd.DataFrame:
    """Relative deflection along each structure line and strip, indexed by ``line``.

    A structure line's label is its footing ids in order joined by ``" → "``
    (``"A1 → B1 → C1"``, as in the report); a strip's is its own id.

    Parameters
    ----------
    results : sitesettle.results.Results
        What :func:`sitesettle.analyse` returned.
    units : {"si", "us"}, optional
        SI (m, mm; default) or US customary units (ft, in).

    Returns
    -------
    pandas.DataFrame
        ``kind`` (``structure line`` or ``strip``), ``footings`` (how many),
        ``length_m`` [m], ``relative_deflection_mm`` [mm] (+ sagging, − hogging) and
        ``deflection_ratio`` Δ/L [-] of the governing zone, ``zone`` (its kind and
        ends) and ``zone_length_m`` [m], ``sagging_ratio`` and ``hogging_ratio`` [-]
        (the largest of each kind, NaN when there is none), ``angular_strain`` α
        [-] (EN 1997-1:2004 Fig. H.1; + sagging), ``angular_distortion`` [-] (a strip's largest
        relative rotation between stations; NaN for a structure line, whose
        consecutive footings are checked as pairs), ``limit``, ``limit_source``,
        ``utilisation`` [-] and ``status``: the columns of lines.csv. Empty, with
        these columns, when there are no lines or no checks.
    """
    return line_table(results, units).set_index("line")
