"""The HTML report: one self-contained file (inline CSS, figures as base64 PNG, no scripts).

Every string that comes from the user (project name and information, footing,
stratum and borehole ids, notes, warnings) goes through :func:`html.escape`, so a
footing called ``<script>alert(1)</script>`` is shown as those characters and runs
nothing.
"""

from __future__ import annotations

import base64
import datetime as _dt
import html
import math
import os

import numpy as np

import sitesettle
from sitesettle.results import Results

#: the cautions shown in every report and summary.json
CAUTIONS: tuple[str, ...] = (
    "These results support, and never replace, the judgement of a licensed engineer.",
    "Local codes and the project's own acceptance criteria govern; the built-in limits are "
    "published "
    "guidance, not a code requirement for this project.",
    "Each method holds only within its range of validity (see Methods): Schmertmann's method for "
    "granular soils under static load; elastic strain integration for a linear elastic half-space; "
    "consolidation for saturated clays in one dimension; Burland & Burbidge for sand and gravel "
    "characterised by SPT.",
    "Check the inputs echoed in this report against the site investigation before relying on the "
    "results.",
)

#: (method, source, range of validity, keyword in Results.methods)
METHOD_NOTES: tuple[tuple[str, str, str, str], ...] = (
    (
        "Vertical stress from every footing (Boussinesq superposition)",
        "Boussinesq (1885); Newmark (1935) rectangle corner formula; exact polygon edge sum",
        "Linear elastic, homogeneous, isotropic half-space under flexible uniform loads; the "
        "stress of "
        "all footings is superposed.",
        "",
    ),
    (
        "Schmertmann strain-influence method",
        "Schmertmann (1970); Schmertmann, Hartman & Brown (1978) improved strain-influence "
        "diagrams",
        "Granular soils (sand, gravel) under static load; modulus from cone resistance or given; "
        "1978 diagrams with interpolation for 1 < L/B < 10.",
        "schmertmann",
    ),
    (
        "Elastic strain integration",
        "Linear elastic half-space stresses (Boussinesq); Steinbrenner (1934) as a check on a "
        "layer",
        "Linear elastic strata; ε_z = [Δσ_z − ν(Δσ_x + Δσ_y)] / E integrated to the influence "
        "depth or a "
        "rigid base.",
        "elastic",
    ),
    (
        "Primary consolidation and secondary compression",
        "Terzaghi (1925, 1943) one-dimensional consolidation; e–log σ' with Cc, Cr, σ'p; Cα after "
        "the end "
        "of primary consolidation",
        "Saturated clays and silts, one-dimensional compression and drainage; uniform initial "
        "excess "
        "pore pressure.",
        "consolidation",
    ),
    (
        "Burland & Burbidge",
        "Burland & Burbidge (1985), Settlement of foundations on sand and gravel, Proc. ICE 78",
        "Sand and gravel characterised by SPT blow counts; static loads with the published time "
        "factor.",
        "burland",
    ),
)

#: headings of the report's sections, in order (tests look for every one)
SECTIONS: tuple[str, ...] = (
    "Project",
    "Inputs",
    "Methods",
    "Results",
    "Figures",
    "Checks",
    "Warnings",
    "Cautions",
    "About this report",
)

FIGURE_CAPTIONS: dict[str, str] = {
    "plan": "Plan of the footings coloured by total settlement at the design life; failing "
    "footings and "
    "pairs are outlined in magenta.",
    "contours": "Settlement contours with the footings overlaid; the map's method is stated on the "
    "figure.",
    "settlement_time": "Settlement with time of the worst footings, and the differential "
    "settlement of "
    "the worst pair.",
    "section": "Section through the stratigraphy along a line through two footings, with the water "
    "table.",
}

_CSS = """
body{font-family:"DejaVu Sans",Helvetica,Arial,sans-serif;color:#1d1d1d;margin:0;background:#f4f4f1;
line-height:1.45;font-size:14px}
main{max-width:1180px;margin:0 auto;padding:24px 32px 48px;background:#fff}
h1{font-size:24px;margin:0 0 4px;border-bottom:3px solid #2f4b7c;padding-bottom:6px}
h2{font-size:19px;margin:34px 0 10px;color:#2f4b7c;border-bottom:1px solid #c9d1de;
padding-bottom:3px}
h3{font-size:15px;margin:20px 0 6px}
table{border-collapse:collapse;margin:6px 0 14px;font-size:12.5px}
th,td{border:1px solid #cfd3d8;padding:3px 7px;text-align:left;vertical-align:top}
th{background:#e8ecf3;font-weight:600}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
tr.fail td{background:#fbe3f0}
span.fail{color:#a3106b;font-weight:700}
span.pass{color:#1d6b35;font-weight:700}
.box{border-left:5px solid #d4148c;background:#fdf1f8;padding:8px 14px;margin:10px 0}
.note{color:#555;font-size:12.5px}
figure{margin:14px 0 24px}
figure img{max-width:100%;border:1px solid #ddd}
figcaption{font-size:12.5px;color:#444}
dl.kv{display:grid;grid-template-columns:max-content auto;gap:2px 16px;margin:6px 0}
dl.kv dt{font-weight:600}
dl.kv dd{margin:0}
.scroll{overflow-x:auto}
nav.toc{font-size:13px;margin:10px 0 0}
nav.toc a{color:#2f4b7c;margin-right:14px;text-decoration:none}
@media print{body{background:#fff;font-size:11px}main{max-width:none;padding:0}
.scroll{overflow:visible}nav.toc{display:none}table{font-size:9.5px}figure{break-inside:avoid}}
"""


def _e(value: object) -> str:
    """HTML-escaped text of a user-provided value."""
    return html.escape(str(value), quote=True)


def _num(value: object, fmt: str = "{:.3g}") -> str:
    if value is None:
        return "–"
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    try:
        v = float(value)
    except (TypeError, ValueError):
        return _e(value)
    if not math.isfinite(v):
        return "–"
    return fmt.format(v)


def _table(
    header: list[str],
    rows: list[list[str]],
    *,
    row_classes: list[str] | None = None,
    numeric: set[int] | None = None,
) -> str:
    """An HTML table; cells must already be escaped."""
    numeric = numeric or set()
    out = ["<div class='scroll'><table><thead><tr>"]
    out += [f"<th>{h}</th>" for h in header]
    out.append("</tr></thead><tbody>")
    for k, row in enumerate(rows):
        cls = f" class='{row_classes[k]}'" if row_classes and row_classes[k] else ""
        out.append(f"<tr{cls}>")
        out += [
            f"<td class='num'>{c}</td>" if j in numeric else f"<td>{c}</td>"
            for j, c in enumerate(row)
        ]
        out.append("</tr>")
    out.append("</tbody></table></div>")
    return "".join(out)


#: footing columns shown in the settlement table (the rest go in the geometry table)
_SETTLEMENT_COLUMNS = (
    "immediate_",
    "consolidation_",
    "secondary_",
    "total_",
    "own_",
    "neighbours_",
    "tilt",
)


#: ratio columns shown as 1/N in the report's tables
_ONE_IN_N = ("angular_distortion", "tilt")


def _df_table(df, status=None) -> str:
    """A formatted DataFrame (text cells) as an escaped table; failing rows highlighted.

    ``status`` (a Series of "pass"/"fail") marks the rows when the table has no
    status column of its own.
    """
    from sitesettle.io.output import format_table
    from sitesettle.io.summary import ratio_text

    text = format_table(df)
    # as an engineer reads them: ratios as 1/N, utilisation to two decimals (the
    # CSV files keep the full values)
    for c in _ONE_IN_N:
        if c in df.columns:
            text[c] = [ratio_text(v) for v in df[c].to_numpy(float)]
    if "utilisation" in df.columns:
        text["utilisation"] = [
            f"{v:.2f}" if np.isfinite(v) else "" for v in df["utilisation"].to_numpy(float)
        ]
    numeric = {j for j, c in enumerate(df.columns) if str(df[c].dtype).startswith(("float", "int"))}
    rows, classes = [], []
    for _, r in text.iterrows():
        cells = []
        for c in text.columns:
            v = r[c]
            if c == "status":
                cells.append(
                    f"<span class='{_e(v) if v in ('pass', 'fail') else ''}'>{_e(v)}</span>"
                )
            elif isinstance(v, (bool, np.bool_)):
                cells.append("yes" if v else "no")
            else:
                cells.append(_e(v))
        rows.append(cells)
        st = r.get("status") if status is None else status.iloc[len(classes)]
        classes.append("fail" if st == "fail" else "")
    return _table(
        [_e(_header(c)) for c in text.columns], rows, row_classes=classes, numeric=numeric
    )


_HEADER_UNITS = ("mm", "in", "m", "ft", "kPa", "ksf", "kN", "kip", "deg", "yr")


def _header(column: str) -> str:
    """A column name as a table heading: ``total_mm`` → ``total [mm]``."""
    base, _, unit = column.rpartition("_")
    if base and unit in _HEADER_UNITS:
        return f"{base.replace('_', ' ')} [{'°' if unit == 'deg' else unit}]"
    return column.replace("_", " ")


def run_date() -> str:
    """Today's date (UTC), or the date of ``SOURCE_DATE_EPOCH`` when set (reproducible output)."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    if epoch and epoch.strip().isdigit():
        when = _dt.datetime.fromtimestamp(int(epoch), tz=_dt.UTC)
    else:
        when = _dt.datetime.now(tz=_dt.UTC)
    return when.strftime("%Y-%m-%d %H:%M UTC")


_STRATUM_FIELDS = (
    ("behaviour", "behaviour", None),
    ("γ [kN/m³]", "unit_weight", "{:.1f}"),
    ("γsat [kN/m³]", "saturated_unit_weight", "{:.1f}"),
    ("ν", "poisson", "{:.2f}"),
    ("E [kPa]", "youngs_modulus", "{:.0f}"),
    ("qc [kPa]", "cone_resistance", "{:.0f}"),
    ("N", "spt_n", "{:.0f}"),
    ("Cc", "compression_index", "{:.3g}"),
    ("Cr", "recompression_index", "{:.3g}"),
    ("e0", "void_ratio", "{:.3g}"),
    ("σ'p [kPa]", "preconsolidation", "{:.0f}"),
    ("OCR", "ocr", "{:.2f}"),
    ("cv [m²/yr]", "consolidation_coefficient", "{:.3g}"),
    ("Cα", "secondary_index", "{:.3g}"),
    ("drainage", "drainage", None),
)


def _depth(value: float) -> str:
    """A depth to the centimetre, without trailing zeros (``0.600456`` → ``0.6``)."""
    return f"{value:.2f}".rstrip("0").rstrip(".")


def _inputs(results: Results) -> str:
    site = results.site
    parts = [
        "<h3>Strata</h3>",
        "<p class='note'>Parameters in core units as read (top-down order).</p>",
    ]
    rows = []
    for s in site.strata:
        cells = [_e(s.name)]
        for _, attr, fmt in _STRATUM_FIELDS:
            v = getattr(s, attr)
            if fmt is None:
                cells.append(_e(getattr(v, "value", v)) if v is not None else "–")
            else:
                cells.append(_num(v, fmt) if v is not None else "–")
        if s.use_soundings:
            cells[6] = "from soundings"
        rows.append(cells)
    parts.append(
        _table(
            ["name"] + [h for h, _, _ in _STRATUM_FIELDS],
            rows,
            numeric=set(range(2, len(_STRATUM_FIELDS) + 1)) - {15},
        )
    )
    parts.append("<h3>Boreholes</h3>")
    rows = []
    for b in site.boreholes:
        layers = "; ".join(
            f"{_e(iv.stratum)} {_depth(iv.top)}–{_depth(iv.bottom)} m"
            + (
                " ("
                + ", ".join(f"{_e(k)} = {v:.4g}" for k, v in sorted(iv.overrides.items()))
                + ")"
                if iv.overrides
                else ""
            )
            for iv in b.intervals
        )
        rows.append(
            [
                _e(b.id),
                _num(b.x, "{:.2f}"),
                _num(b.y, "{:.2f}"),
                _num(b.water_depth, "{:.2f}") if b.water_depth is not None else "–",
                layers,
            ]
        )
    parts.append(
        _table(
            ["id", "x [m]", "y [m]", "water depth [m]", "strata (depth below ground)"],
            rows,
            numeric={1, 2, 3},
        )
    )
    if site.soundings:
        rows = [
            [
                _e(s.id),
                _num(s.x, "{:.2f}"),
                _num(s.y, "{:.2f}"),
                _num(float(np.max(s.depth)) if len(s.depth) else math.nan, "{:.2f}"),
            ]
            for s in site.soundings
        ]
        parts.append("<h3>Cone soundings</h3>")
        parts.append(_table(["id", "x [m]", "y [m]", "final depth [m]"], rows, numeric={1, 2, 3}))
    fs = site.footings
    parts.append("<h3>Footings</h3>")
    if fs:
        shapes = sorted({f.shape for f in fs})
        widths = [f.width for f in fs]
        depths = [f.depth for f in fs]
        loads = [f.service_load for f in fs]
        water = "none" if not math.isfinite(site.water_depth) else f"{site.water_depth:g} m"
        parts.append(
            "<dl class='kv'>"
            f"<dt>number</dt><dd>{len(fs)} ({_e(', '.join(shapes))})</dd>"
            f"<dt>width B</dt><dd>{min(widths):.2f} – {max(widths):.2f} m</dd>"
            f"<dt>base depth D</dt><dd>{min(depths):.2f} – {max(depths):.2f} m</dd>"
            f"<dt>service load</dt><dd>{min(loads):.0f} – {max(loads):.0f} kN (total "
            f"{sum(loads):.0f} kN)</dd>"
            f"<dt>site water table</dt><dd>{_e(water)}</dd>"
            f"<dt>design life</dt><dd>{site.analysis.design_life:g} yr</dd>"
            f"<dt>coordinate system</dt><dd>{_e(site.crs) if site.crs else 'none given'}</dd>"
            "</dl>"
        )
    return "".join(parts)


def _methods(results: Results) -> str:
    # methods named per footing, and the map's method (which also gives the neighbours' share)
    used = (
        " ".join(results.methods).lower()
        + " "
        + (results.map.method.lower() if results.map else "")
    )
    rows = []
    for name, source, validity, key in METHOD_NOTES:
        flag = "yes" if (not key or key in used) else "no"
        rows.append([_e(name), _e(source), _e(validity), flag])
    rows_html = _table(["method", "source", "range of validity", "used here"], rows)
    m = results.map
    note = (
        f"<p>Settlement map: {_e(m.method)}.</p>"
        if m is not None
        else "<p>No settlement map was computed; any contours are interpolated between footing "
        "values.</p>"
    )
    return (
        rows_html
        + note
        + (
            "<p class='note'>Rigid footings settle as the mean of their four "
            "characteristic points; flexible ones report the centre.</p>"
        )
    )


def _checks(results: Results, units: str) -> str:
    c = results.checks
    if c is None:
        return "<p>No movement checks were run.</p>"
    S, su = (1000.0 / 25.4, "in") if units == "us" else (1000.0, "mm")
    ids = results.ids
    verdict = (
        "<span class='pass'>all checks pass</span>"
        if c.all_passed
        else "<span class='fail'>some checks fail</span>"
    )
    parts = []
    if c.beyond_range:
        names = ", ".join(_e(ids[i]) for i in c.beyond_range)
        parts.append(
            "<p class='fail'><b>Outside the methods' range — bearing failure likely</b> at "
            f"{names}: the settlement on loading exceeds 0.1 B, where the settlement methods "
            "no longer apply. Check the bearing resistance and the inputs before reading "
            "anything else for these footings.</p>"
        )
    parts.append(f"<p>Criteria: <b>{_e(c.criteria)}</b> — {verdict}.</p>")
    limits = sorted({(lim, src) for lim, src in zip(c.pairs.limit, c.pairs.limit_source)})
    kinds = tuple(c.footing_kind) or ("pad",) * len(ids)
    lim_of = {}
    if c.footing_limit is not None:
        for kind, value in zip(kinds, c.footing_limit):
            lim_of.setdefault(kind, value)
    else:
        lim_of = {"pad": c.footing_limit_total}
    rows = [
        [
            f"total settlement of a {kind}",
            f"≤ {value * S:.4g} {su}" if np.isfinite(value) else "none in this set",
            _e(c.footing_limit_source) if np.isfinite(value) else "",
        ]
        for kind, value in lim_of.items()
    ]
    if np.isfinite(c.building_tilt_limit):
        rows.append(
            [
                "tilt of the building",
                f"≤ 1/{1 / c.building_tilt_limit:.0f}",
                _e(c.building_tilt_source),
            ]
        )
    rows += [["pairs", _e(lim), _e(src)] for lim, src in limits]
    if c.lines is not None:
        rows += [
            ["structure lines", _e(lim), _e(src)]
            for lim, src in sorted(set(zip(c.lines.limit, c.lines.limit_source)))
        ]
    parts.append(_table(["applies to", "limit", "source"], rows))
    if c.checked_after > 0:
        parts.append(f"<p>Only the movement after {c.checked_after:g} yr is checked for pairs.</p>")
    basis = {
        "both": "computed with the building's rigid-body tilt kept and with it removed; "
        "the larger is checked",
        "kept": "computed with the building's rigid-body tilt kept",
        "removed": "computed with the building's rigid-body tilt removed",
    }[c.rigid_tilt]
    parts.append(
        f"<p>Angular distortion β is {basis} (docs/criteria.md §2.2). Structure lines "
        "are judged by their sagging and hogging zones separately (Burland &amp; Wroth "
        "1974).</p>"
    )
    bad_f = [_e(i) for i, p in zip(ids, c.footing_passed) if not p]
    bad_p = [
        f"{_e(results.member_ids[int(a)])} – {_e(results.member_ids[int(b)])}"
        for a, b, p in zip(c.pairs.a, c.pairs.b, c.pairs.passed)
        if not p
    ]
    parts.append(
        "<dl class='kv'>"
        f"<dt>failing footings</dt><dd>{', '.join(bad_f) if bad_f else 'none'}</dd>"
        f"<dt>failing pairs</dt><dd>{', '.join(bad_p) if bad_p else 'none'}</dd>"
        f"<dt>building tilt</dt><dd>{_num(c.building_tilt, '{:.3g}')} rad toward "
        f"{_num(c.building_tilt_direction, '{:.0f}')}° from east"
        + (
            f" ({'pass' if c.building_tilt_passed else 'FAIL'})"
            if np.isfinite(c.building_tilt_limit)
            else ""
        )
        + "</dd>"
        "</dl>"
    )
    if c.lines is not None and len(c.lines.ids):
        rows = [
            [
                _e(" → ".join(line)),
                _num(length, "{:.2f}"),
                _e(zone),
                _num(ratio, "{:.3g}"),
                _e(lim),
                _num(u, "{:.2f}"),
                "pass" if p else "fail",
            ]
            for line, length, zone, ratio, lim, u, p in zip(
                c.lines.ids,
                c.lines.length,
                c.lines.zone or ("",) * len(c.lines.ids),
                c.lines.deflection_ratio,
                c.lines.limit,
                c.lines.utilisation,
                c.lines.passed,
            )
        ]
        parts.append("<h3>Structure lines</h3>")
        parts.append(
            _table(
                [
                    "footings",
                    "length [m]",
                    "governing zone",
                    "Δ/L",
                    "limit",
                    "utilisation",
                    "status",
                ],
                rows,
                numeric={1, 3, 5},
            )
        )
    parts.append("<p>Sources cited: " + "; ".join(_e(s) for s in c.sources) + ".</p>")
    return "".join(parts)


def _trace(results: Results, fid: str | None, units: str) -> str:
    """The layer-by-layer calculation of one footing (its first evaluation point), if kept."""
    traces = results.traces.get(fid) if fid is not None else None
    if not traces:
        return ""
    t = traces[0]
    S, su = (1000.0 / 25.4, "in") if units == "us" else (1000.0, "mm")
    rows = [
        [
            _num(top, "{:.2f}"),
            _num(bottom, "{:.2f}"),
            _e(stratum),
            _e(method),
            _num(s0, "{:.1f}"),
            _num(own, "{:.1f}"),
            _num(nb, "{:.1f}"),
            _num(eps, "{:.3e}"),
            _num(so * S, "{:.3f}"),
            _num(sn * S, "{:.3f}"),
            _num(iz, "{:.3f}"),
        ]
        for top, bottom, stratum, method, s0, own, nb, eps, so, sn, iz in zip(
            t.top,
            t.bottom,
            t.stratum,
            t.method,
            t.sigma_v0,
            t.own_stress,
            t.neighbour_stress,
            t.strain,
            t.own_settlement,
            t.neighbour_settlement,
            t.influence,
        )
    ]
    total_own = float(np.nansum(t.own_settlement)) * S
    total_nb = float(np.nansum(t.neighbour_settlement)) * S
    header = [
        "top [m]",
        "bottom [m]",
        "stratum",
        "method",
        "σ'v0 [kPa]",
        "Δσz own [kPa]",
        "Δσz neighbours [kPa]",
        "strain",
        f"own [{su}]",
        f"neighbours [{su}]",
        "Iz",
    ]
    return (
        f"<h3>Calculation trace of footing {_e(fid)} (the largest settlement)</h3>"
        f"<p class='note'>At ({t.point[0]:.2f}, {t.point[1]:.2f}) m, at the design life; "
        f"the sublayers add up to {total_own:.3f} {su} own and {total_nb:.3f} {su} from the "
        "neighbours at this point.</p>" + _table(header, rows, numeric={0, 1, 4, 5, 6, 7, 8, 9, 10})
    )


def render_report(
    results: Results, figures: dict[str, bytes], *, units: str = "si", date: str | None = None
) -> str:
    """The whole report as one HTML string.

    Parameters
    ----------
    results : Results
        The analysis results.
    figures : dict of str to bytes
        PNG images by name (``"plan"``, ``"contours"``, ``"settlement_time"``,
        ``"section"`` or any other), embedded as base64 in that order.
    units : {"si", "us"}, optional
        Units of the results tables.
    date : str, optional
        Run date shown at the end (default: :func:`run_date`).
    """
    from sitesettle.io.output import footing_table, pair_table, summary_dict

    site = results.site
    summary = summary_dict(results, units)
    S, su = (1000.0 / 25.4, "in") if units == "us" else (1000.0, "mm")
    title = f"Settlement report — {_e(site.name)}"
    body = [
        f"<h1>{title}</h1>",
        f"<p class='note'>sitesettle {_e(sitesettle.__version__)} · design life "
        f"{_e(summary['design_life_yr'])} yr · units "
        f"{'US customary' if units == 'us' else 'SI'}</p>",
    ]

    anchors = (
        "project",
        "inputs",
        "methods",
        "results",
        "figures",
        "checks",
        "warnings",
        "cautions",
        "about",
    )
    body.append(
        "<nav class='toc'>"
        + "".join(f"<a href='#{a}'>{h}</a>" for a, h in zip(anchors, SECTIONS))
        + "</nav>"
    )
    body.append(f"<h2 id='project'>{SECTIONS[0]}</h2>")
    info = "".join(f"<dt>{_e(k)}</dt><dd>{_e(v)}</dd>" for k, v in site.info.items())
    body.append(f"<dl class='kv'><dt>name</dt><dd>{_e(site.name)}</dd>{info}</dl>")
    total = results.at_design_life() * S
    verdict = ""
    if results.checks is not None:
        verdict = (
            " All checks pass."
            if results.checks.all_passed
            else f" <span class='fail'>{len(summary['failing_footings'])} footing(s) and "
            f"{len(summary['failing_pairs'])} pair(s) fail.</span>"
        )
    if np.isfinite(total).any():
        worst = summary["worst_footing"]
        body.append(
            f"<p>{len(results.ids)} footings; largest total settlement {np.nanmax(total):.1f} {su} "
            f"at footing {_e(worst)}.{verdict}</p>"
        )

    body.append(f"<h2 id='inputs'>{SECTIONS[1]}</h2>")
    body.append(_inputs(results))
    body.append(f"<h2 id='methods'>{SECTIONS[2]}</h2>")
    body.append(_methods(results))
    body.append(f"<h2 id='results'>{SECTIONS[3]}</h2>")
    ft = footing_table(results, units)
    settle_cols = [c for c in ft.columns if c.startswith(_SETTLEMENT_COLUMNS)]
    body.append(
        f"<h3>Footing settlements at the design life ({_e(summary['design_life_yr'])} yr)</h3>"
    )
    body.append(_df_table(ft[["id"] + settle_cols + ["status", "reasons"]], status=ft["status"]))
    body.append("<h3>Footing geometry, loads and methods</h3>")
    body.append(
        _df_table(
            ft[[c for c in ft.columns if c not in settle_cols + ["status", "reasons"]]],
            status=ft["status"],
        )
    )
    body.append(_trace(results, summary.get("worst_footing"), units))
    body.append("<h3>Pairs</h3>")
    pt = pair_table(results, units)
    body.append(_df_table(pt) if len(pt) else "<p>No pairs were checked.</p>")
    if getattr(results, "points", None) is not None:
        from sitesettle.io.output import point_table

        qt = point_table(results, units)
        life = float(results.times[results.design_life_index])
        body.append(f"<h3>Query points at the design life ({life:g} yr)</h3>")
        body.append(
            "<p class='note'>Named points with no load of their own (an existing building's "
            "footings, a tank rim, a buried service): the same engine as the footings, the "
            "footings' own load counted by elastic strain and consolidation.</p>"
        )
        body.append(_df_table(qt[np.isclose(qt["time_yr"], life)]))

    body.append(f"<h2 id='figures'>{SECTIONS[4]}</h2>")
    if not figures:
        body.append("<p>No figures were made.</p>")
    for name, png in figures.items():
        data = base64.b64encode(png).decode("ascii")
        caption = FIGURE_CAPTIONS.get(name, name)
        body.append(
            f"<figure><img src='data:image/png;base64,{data}' alt='{_e(name)} figure'>"
            f"<figcaption>{_e(caption)}</figcaption></figure>"
        )

    body.append(f"<h2 id='checks'>{SECTIONS[5]}</h2>")
    body.append(_checks(results, units))
    body.append(f"<h2 id='warnings'>{SECTIONS[6]}</h2>")
    if results.warnings:
        body.append("<ul>" + "".join(f"<li>{_e(w)}</li>" for w in results.warnings) + "</ul>")
    else:
        body.append("<p>No warnings.</p>")
    body.append(f"<h2 id='cautions'>{SECTIONS[7]}</h2>")
    body.append(
        "<div class='box'><ul>" + "".join(f"<li>{_e(c)}</li>" for c in CAUTIONS) + "</ul></div>"
    )
    body.append(f"<h2 id='about'>{SECTIONS[8]}</h2>")
    body.append(
        f"<p>Made by sitesettle {_e(sitesettle.__version__)} on {_e(date or run_date())}.</p>"
    )
    return (
        "<!DOCTYPE html>\n<html lang='en'><head><meta charset='utf-8'>"
        "<meta name='viewport' content='width=device-width, initial-scale=1'>"
        f"<title>{title}</title><style>{_CSS}</style></head>"
        f"<body><main>{''.join(body)}</main></body></html>\n"
    )
