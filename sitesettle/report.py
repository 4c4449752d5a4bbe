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
    "Verdict and governing results",
    "Inputs",
    "Methods and validity",
    "Results",
    "Calculation traces",
    "Figures",
    "Warnings",
    "Cautions",
    "Sign-off",
    "About this report",
)
#: anchors of the sections, in the order of :data:`SECTIONS`
ANCHORS: tuple[str, ...] = (
    "verdict",
    "inputs",
    "methods",
    "results",
    "traces",
    "figures",
    "warnings",
    "cautions",
    "signoff",
    "about",
)
#: the sign-off rows: (label, [project] key)
SIGN_OFF: tuple[tuple[str, str], ...] = (
    ("prepared by", "prepared_by"),
    ("checked by", "checked_by"),
    ("approved by", "approved_by"),
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


def _column_table(
    header: list[str],
    columns: list[list[str]],
    *,
    row_classes: list[str] | None = None,
    numeric: set[int] | None = None,
) -> str:
    """The HTML of :func:`_table` from the cells given column by column (escaped text).

    The same bytes as ``_table(header, rows, ...)`` with ``rows`` the transpose of
    ``columns``; each column's cells are wrapped in one pass, then the rows joined,
    with no per-cell test of the column's kind.
    """
    numeric = numeric or set()
    wrapped = [
        [f"<td class='num'>{c}</td>" for c in col]
        if j in numeric
        else [f"<td>{c}</td>" for c in col]
        for j, col in enumerate(columns)
    ]
    n = len(columns[0]) if columns else 0
    if row_classes:
        starts = [f"<tr class='{c}'>" if c else "<tr>" for c in row_classes]
    else:
        starts = ["<tr>"] * n
    body = "".join([s + "".join(cells) + "</tr>" for s, *cells in zip(starts, *wrapped)])
    head = "".join([f"<th>{h}</th>" for h in header])
    return (
        f"<div class='scroll'><table><thead><tr>{head}</tr></thead><tbody>{body}"
        "</tbody></table></div>"
    )


def pd_float(series) -> bool:
    """True for a float column."""
    return str(series.dtype).startswith("float")


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


def _df_table(df, status=None, units: str = "si") -> str:
    """A formatted DataFrame (text cells) as an escaped table; failing rows highlighted.

    ``status`` (a Series of "pass"/"fail") marks the rows when the table has no
    status column of its own.
    """
    from sitesettle.io.output import format_table
    from sitesettle.io.summary import ratio_text
    from sitesettle.io.unit_text import in_units

    text = format_table(df)
    # settlements to 0.1 mm or 0.01 in in the report (the CSV files keep 3 and 4 decimals)
    for c in df.columns:
        if str(c).endswith(("_mm", "_in")) and pd_float(df[c]):
            d = 2 if str(c).endswith("_in") else 1
            text[c] = [f"{v:.{d}f}" if np.isfinite(v) else "" for v in df[c].to_numpy(float)]
        elif c in ("reasons", "limit"):
            text[c] = [in_units(v, units) for v in df[c]]
    # as an engineer reads them: ratios as 1/N, utilisation to two decimals (the
    # CSV files keep the full values)
    for c in df.columns:
        if str(c).startswith(_ONE_IN_N) and pd_float(df[c]):
            text[c] = [ratio_text(v) for v in df[c].to_numpy(float)]
    if "utilisation" in df.columns:
        text["utilisation"] = [
            f"{v:.2f}" if np.isfinite(v) else "" for v in df["utilisation"].to_numpy(float)
        ]
    numeric = {j for j, c in enumerate(df.columns) if str(df[c].dtype).startswith(("float", "int"))}
    # column by column (one pass per column, no pandas row objects); each cell as the
    # row-by-row loop made it: status as a marked span, booleans as yes/no, the rest escaped
    columns = []
    for c in text.columns:
        values = text[c].tolist()
        if c == "status":
            cells = [
                f"<span class='{_e(v) if v in ('pass', 'fail') else ''}'>{_e(v)}</span>"
                for v in values
            ]
        else:
            cells = [
                ("yes" if v else "no") if isinstance(v, (bool, np.bool_)) else _e(v)
                for v in values
            ]
        columns.append(cells)
    if status is not None:
        states = status.tolist()
    elif "status" in text.columns:
        states = text["status"].tolist()
    else:
        states = [None] * len(text)
    classes = ["fail" if st == "fail" else "" for st in states]
    return _column_table(
        [_e(_header(c)) for c in text.columns], columns, row_classes=classes, numeric=numeric
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


#: page sizes the print CSS is written for (A4 by default; Letter with ``page="letter"``)
PAGE_SIZES = ("A4", "letter")

_CSS = """
body{font-family:"DejaVu Sans",Helvetica,Arial,sans-serif;color:#1d1d1d;margin:0;background:#f4f4f1;
line-height:1.45;font-size:14px}
main{max-width:1180px;margin:0 auto;padding:24px 32px 48px;background:#fff}
h1{font-size:24px;margin:0 0 4px;border-bottom:3px solid #2f4b7c;padding-bottom:6px}
h2{font-size:19px;margin:34px 0 10px;color:#2f4b7c;border-bottom:1px solid #c9d1de;
padding-bottom:3px}
h3{font-size:15px;margin:20px 0 6px}
h4{font-size:13.5px;margin:14px 0 4px}
table{border-collapse:collapse;margin:6px 0 14px;font-size:12.5px}
th,td{border:1px solid #cfd3d8;padding:3px 7px;text-align:left;vertical-align:top}
th{background:#e8ecf3;font-weight:600}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
.nw{white-space:nowrap}
tr.fail td{background:#fbe3f0}
span.fail{color:#a3106b;font-weight:700}
span.pass{color:#1d6b35;font-weight:700}
.box{border-left:5px solid #d4148c;background:#fdf1f8;padding:8px 14px;margin:10px 0}
.verdict{border-left:6px solid #2f4b7c;background:#eef2f8;padding:10px 14px;margin:10px 0;
font-size:15px}
.note{color:#555;font-size:12.5px}
figure{margin:14px 0 24px}
figure img{max-width:100%;border:1px solid #ddd}
figcaption{font-size:12.5px;color:#444}
dl.kv{display:grid;grid-template-columns:max-content auto;gap:2px 16px;margin:6px 0}
dl.kv dt{font-weight:600}
dl.kv dd{margin:0}
.scroll{overflow-x:auto;max-width:100%}
.scroll th:first-child,.scroll td:first-child{position:sticky;left:0;background:#fff;z-index:1}
.scroll th:first-child{background:#e8ecf3}
.scroll tr.fail td:first-child{background:#fbe3f0}
nav.toc{font-size:13px;margin:10px 0 0;display:flex;flex-wrap:wrap;gap:4px 14px}
nav.toc a{color:#2f4b7c;text-decoration:none}
table.signoff td{min-width:150px;height:34px}
.readings{font-size:11px;max-width:900px}
.pagefoot{display:none}
@media (max-width:600px){main{padding:12px 10px 30px}h1{font-size:20px}
dl.kv{grid-template-columns:1fr}body{font-size:13px}}
@page{size:A4;margin:16mm 14mm 18mm 14mm;
@bottom-left{content:var(--foot);font-size:8pt;color:#555}
@bottom-right{content:"page " counter(page) " of " counter(pages);font-size:8pt;color:#555}}
@media print{body{background:#fff;font-size:10px}main{max-width:none;padding:0}
.scroll{overflow:visible}nav.toc{display:none}table{font-size:8px}
.scroll th:first-child,.scroll td:first-child{position:static}
thead{display:table-header-group}tr,figure,dl.kv,.verdict,table.signoff{break-inside:avoid}
h1,h2,h3,h4{break-after:avoid;page-break-after:avoid}
h2{break-before:auto}figure img{max-height:230mm}
table.trace{font-size:6.5px}table.trace th,table.trace td{padding:0 2px;line-height:1.2}
.pagefoot{display:block;position:fixed;bottom:-12mm;left:0;font-size:8pt;color:#555}}
"""


def css_string(text: str) -> str:
    """``text`` as a quoted CSS string: every character but letters, digits and spaces
    written as a CSS escape (``\\3c `` for ``<``), so user text cannot end the string,
    the rule or the style element.

    >>> print(css_string('A</style><b>"'))
    "A\\3c \\2f style\\3e \\3c b\\3e \\22 "
    """
    out = []
    for ch in str(text):
        if ch.isascii() and (ch.isalnum() or ch == " "):
            out.append(ch)
        else:
            out.append(f"\\{ord(ch):x} ")
    return '"' + "".join(out) + '"'


def _page_css(page: str, footer: str) -> str:
    """The page rule for ``page`` ("A4" or "letter") with the running footer text."""
    size = "letter" if str(page).lower() == "letter" else "A4"
    return f"@page{{size:{size}}}:root{{--foot:{css_string(footer)}}}"


class _Q:
    """Values in the report's units: SI, or US customary (NIST SP 811 factors)."""

    def __init__(self, units: str):
        from sitesettle.io.output import FOOT, KIP, KSF

        self.us = units == "us"
        pcf = KIP / FOOT**3 / 1000.0  # 1 lbf/ft³ in kN/m³
        self.spec = {
            "length": ("ft", 1 / FOOT, 2) if self.us else ("m", 1.0, 2),
            "settlement": ("in", 1 / 25.4, 2) if self.us else ("mm", 1.0, 1),
            "force": ("kip", 1 / KIP, 1) if self.us else ("kN", 1.0, 0),
            "pressure": ("ksf", 1 / KSF, 3) if self.us else ("kPa", 1.0, 1),
            "modulus": ("ksi", 1 / (KSF * 0.144), 2) if self.us else ("MPa", 1.0, 2),
            "unit_weight": ("pcf", 1 / pcf, 1) if self.us else ("kN/m³", 1.0, 1),
            "diffusivity": ("ft²/yr", 1 / FOOT**2, 2) if self.us else ("m²/yr", 1.0, 3),
        }

    def unit(self, q: str) -> str:
        return self.spec[q][0]

    def v(self, value, q: str, decimals: int | None = None) -> str:
        """A number in the report's unit of ``q`` (no unit); "–" for None or NaN.

        Settlement is given in mm (SI core for text), modulus in MPa, the rest in
        core units.
        """
        if value is None:
            return "–"
        try:
            x = float(value)
        except (TypeError, ValueError):
            return _e(value)
        if not math.isfinite(x):
            return "–"
        _, f, d = self.spec[q]
        return f"{x * f:.{d if decimals is None else decimals}f}"

    def t(self, value, q: str, decimals: int | None = None) -> str:
        """Number and unit: ``"2.50 m"``."""
        v = self.v(value, q, decimals)
        return v if v == "–" else f"{v} {self.unit(q)}"

    def h(self, label: str, q: str) -> str:
        """A heading with its unit: ``"x [ft]"``."""
        return f"{label} [{self.unit(q)}]"


def _text(value: object, units: str) -> str:
    """Escaped user or engine text with its quantities in the report's units."""
    from sitesettle.io.unit_text import in_units

    return _e(in_units(str(value), units))


def _size(f, q: _Q) -> str:
    """A footing's plan size: ``Ø 3.00 m`` for a circle, ``2.00 × 3.00 m`` otherwise."""
    if f.shape == "circle":
        return f"Ø {q.t(f.width, 'length')}"
    return f"{q.v(f.width, 'length')} × {q.t(f.length, 'length')}"


# ------------------------------------------------------------------ sections


def _verdict(results: Results, units: str) -> str:
    """Verdict, the governing result of each measure, and what fails."""
    from sitesettle.io.output import pair_basis
    from sitesettle.io.summary import ratio_text

    q = _Q(units)
    c = results.checks
    ids = results.ids
    total = results.at_design_life()
    life = results.times[results.design_life_index]
    if c is None:
        worst = int(np.nanargmax(total)) if np.isfinite(total).any() else None
        line = (
            f"Largest total settlement {q.t(total[worst] * 1000, 'settlement')} at footing "
            f"{_e(ids[worst])} ({life:g} yr)."
            if worst is not None
            else ""
        )
        return f"<div class='verdict'>No movement checks were run. {line}</div>"
    nff = int(np.count_nonzero(~np.asarray(c.footing_passed, bool)))
    nfp = int(np.count_nonzero(~np.asarray(c.pairs.passed, bool)))
    nfl = 0 if c.lines is None else int(np.count_nonzero(~np.asarray(c.lines.passed, bool)))
    verdict = (
        "<span class='pass'>PASS</span> — every footing, pair and structure line passes"
        if c.all_passed
        else f"<span class='fail'>FAIL</span> — {nff} footing(s), {nfp} pair(s) and "
        f"{nfl} structure line(s) exceed their limits"
    )
    basis, _ = pair_basis(results)
    parts = [
        f"<div class='verdict'>{verdict} (criteria <b>{_e(c.criteria)}</b>; settlements at "
        f"the design life, {life:g} yr; pairs on the movement {_e(basis)}).</div>",
    ]
    if getattr(c, "beyond_range", ()):
        names = ", ".join(_e(ids[i]) for i in c.beyond_range)
        parts.append(
            "<p class='fail'><b>Outside the methods' range — bearing failure likely</b> at "
            f"{names}: the settlement on loading exceeds 0.1 B, where the settlement methods "
            "no longer apply. Check the bearing resistance and the inputs before reading "
            "anything else for these footings.</p>"
        )
    parts.append("<h3>Governing results</h3>")
    rows = []
    if len(ids) and np.isfinite(total).any():
        # the limit of each footing's kind (EN 1997-1 Annex H's total is for isolated
        # foundations: a raft may have none); the governing one has the largest use
        limits = (
            np.asarray(c.footing_limit, float)
            if c.footing_limit is not None
            else np.full(len(ids), c.footing_limit_total)
        )
        kinds = tuple(c.footing_kind) or ("footing",) * len(ids)
        with np.errstate(invalid="ignore", divide="ignore"):
            use = np.where(limits > 0, total / limits, np.nan)
        i = int(np.nanargmax(use)) if np.isfinite(use).any() else int(np.nanargmax(total))
        util = float(use[i])
        rows.append(
            [
                f"total settlement of a {_e(kinds[i])} (total)",
                q.t(total[i] * 1000, "settlement"),
                f"footing {_e(ids[i])}",
                f"≤ {q.t(limits[i] * 1000, 'settlement', 2 if q.us else 0)}"
                if np.isfinite(limits[i])
                else "none for its kind",
                _e(c.footing_limit_source) if np.isfinite(limits[i]) else "",
                _num(util, "{:.2f}"),
                "pass" if not util > 1 else "<span class='fail'>fail</span>",
            ]
        )
        free = [k for k in range(len(ids)) if not np.isfinite(limits[k])]
        if free:
            k = max(free, key=lambda j: np.nan_to_num(total[j], nan=-np.inf))
            rows.append(
                [
                    f"total settlement of a {_e(kinds[k])} (total)",
                    q.t(total[k] * 1000, "settlement"),
                    f"footing {_e(ids[k])}",
                    f"no total limit for a {_e(kinds[k])} in {_e(c.criteria)}: judged by "
                    "its relative rotation and tilt",
                    "",
                    "",
                    "reported",
                ]
            )
    tilt = np.asarray(results.tilt, float)
    if np.isfinite(tilt).any():
        i = int(np.nanargmax(tilt))
        rows.append(
            [
                f"tilt of a footing ({_e(basis)})",
                ratio_text(tilt[i]),
                f"footing {_e(ids[i])}",
                *_tilt_limit(results, tilt[i]),
            ]
        )
    pc = c.pairs
    mids = results.member_ids
    for label, values in (
        ("differential settlement", np.asarray(pc.differential, float)),
        ("angular distortion β", np.asarray(pc.angular_distortion, float)),
    ):
        if not len(values) or not np.isfinite(values).any():
            continue
        k = int(np.nanargmax(values))
        shown = (
            q.t(values[k] * 1000, "settlement")
            if label.startswith("differential")
            else ratio_text(values[k])
        )
        rows.append(
            [
                f"{label} of a pair ({_e(basis)})",
                shown,
                f"{_e(mids[int(pc.a[k])])} – {_e(mids[int(pc.b[k])])}",
                _text(pc.limit[k], units),
                _e(pc.limit_source[k]),
                _num(pc.utilisation[k], "{:.2f}"),
                "pass" if pc.passed[k] else "<span class='fail'>fail</span>",
            ]
        )
    if len(pc.a):
        k = int(np.nanargmax(np.nan_to_num(np.asarray(pc.utilisation, float), nan=-1)))
        rows.append(
            [
                f"most utilised pair ({_e(basis)})",
                f"β {ratio_text(pc.angular_distortion[k])}",
                f"{_e(mids[int(pc.a[k])])} – {_e(mids[int(pc.b[k])])}",
                _text(pc.limit[k], units),
                _e(pc.limit_source[k]),
                _num(pc.utilisation[k], "{:.2f}"),
                "pass" if pc.passed[k] else "<span class='fail'>fail</span>",
            ]
        )
    if c.lines is not None and len(c.lines.ids):
        k = int(np.nanargmax(np.nan_to_num(np.asarray(c.lines.utilisation, float), nan=-1)))
        rows.append(
            [
                f"deflection ratio Δ/L of a line ({_e(basis)})",
                ratio_text(abs(c.lines.deflection_ratio[k])),
                _e(" → ".join(c.lines.ids[k])),
                _text(c.lines.limit[k], units),
                _e(c.lines.limit_source[k]),
                _num(c.lines.utilisation[k], "{:.2f}"),
                "pass" if c.lines.passed[k] else "<span class='fail'>fail</span>",
            ]
        )
    rows.append(
        [
            f"building tilt (plane through the footings, {_e(basis)})",
            ratio_text(c.building_tilt),
            f"toward {_num(c.building_tilt_direction, '{:.0f}')}° from east",
            "reported",
            "",
            "",
            "",
        ]
    )
    parts.append(
        _table(
            ["measure (basis)", "worst value", "where", "limit", "source", "utilisation", "status"],
            rows,
            numeric={5},
        )
    )
    parts.append(
        "<p class='note'>Utilisation is the movement divided by its limit; above 1.00 it "
        f"fails. Settlements are given to {'0.01 in' if q.us else '0.1 mm'}, ratios as 1/N "
        "to three significant figures, below 1/10,000 as &lt; 1/10,000 (docs/outputs.md); "
        "the CSV files keep full precision.</p>"
    )
    bad = [i for i, ok in enumerate(c.footing_passed) if not ok]
    parts.append("<h3>Failing footings</h3>")
    if bad:
        parts.append(
            _table(
                ["footing", q.h("total", "settlement"), "reason"],
                [
                    [
                        _e(ids[i]),
                        q.v(total[i] * 1000, "settlement"),
                        _text(c.footing_reasons[i], units),
                    ]
                    for i in bad
                ],
                numeric={1},
            )
        )
    else:
        parts.append("<p>None.</p>")
    badp = [k for k, ok in enumerate(pc.passed) if not ok]
    parts.append("<h3>Failing pairs</h3>")
    if badp:
        parts.append(
            _table(
                [
                    "pair",
                    q.h(f"differential {basis}", "settlement"),
                    f"β {_e(basis)}",
                    "limit",
                    "source",
                    "utilisation",
                ],
                [
                    [
                        f"{_e(mids[int(pc.a[k])])} – {_e(mids[int(pc.b[k])])}",
                        q.v(pc.differential[k] * 1000, "settlement"),
                        ratio_text(pc.angular_distortion[k]),
                        _text(pc.limit[k], units),
                        _e(pc.limit_source[k]),
                        _num(pc.utilisation[k], "{:.2f}"),
                    ]
                    for k in badp
                ],
                numeric={1, 2, 5},
            )
        )
    else:
        parts.append("<p>None.</p>")
    if c.lines is not None and nfl:
        parts.append("<h3>Failing structure lines</h3>")
        parts.append(
            "<ul>"
            + "".join(
                f"<li>{_e(' → '.join(line))}: {_text(lim, units)} ({_e(src)})</li>"
                for line, lim, src, ok in zip(
                    c.lines.ids, c.lines.limit, c.lines.limit_source, c.lines.passed
                )
                if not ok
            )
            + "</ul>"
        )
    return "".join(parts)


def _tilt_limit(results: Results, tilt: float) -> list[str]:
    """Limit, source, utilisation and status cells of the worst footing tilt."""
    from sitesettle.criteria import get_criteria

    ck = results.site.checks
    try:
        lim = get_criteria(ck.criteria, ck.overrides).limit("tilt")
    except Exception:  # the set was checked on input
        lim = None
    if lim is None:
        return [f"no tilt limit in {_e(ck.criteria)} (reported)", "", "", ""]
    u = tilt / lim.value
    return [
        _e(lim.describe()),
        _e(lim.source),
        _num(u, "{:.2f}"),
        "pass" if not u > 1 else "<span class='fail'>fail</span>",
    ]


def _stratum_rows(results: Results, q: _Q) -> tuple[list[str], list[list[str]]]:
    """Every stratum parameter as used, with where it came from."""
    site = results.site
    spt = {}
    for tr in results.traces.values():
        for t in tr:
            src = t.details.get("E source")
            if src is None or t.modulus is None:
                continue
            # per trace, not per sublayer: the sublayers whose E comes from SPT N
            e = np.asarray(t.modulus, float)
            n = min(len(t.stratum), len(src), len(e))
            if n == 0:
                continue
            text = np.asarray(src[:n])
            if text.dtype.kind != "U":
                text = np.asarray([str(v) for v in text.tolist()], dtype=str)
            from_spt = np.char.startswith(text, "from SPT")
            keep = np.flatnonzero(from_spt & np.isfinite(e[:n]))
            for j in keep.tolist():
                spt.setdefault(t.stratum[j], []).append(float(e[j]))
    header = [
        "stratum",
        "behaviour",
        q.h("γ", "unit_weight"),
        q.h("γsat", "unit_weight"),
        "ν",
        "stiffness as used (source)",
        "SPT N",
        "Cc",
        "Cr",
        "e0",
        "σ'p / OCR",
        q.h("cv", "diffusivity"),
        "Cα",
        "drainage",
        q.h("Eu", "modulus"),
        "method",
    ]
    rows = []
    for s in site.strata:
        beh = str(getattr(s.behaviour, "value", s.behaviour))
        if s.youngs_modulus is not None:
            stiff = f"E = {q.t(s.youngs_modulus / 1000, 'modulus')} (given)"
        elif s.use_soundings:
            stiff = "E = factor × qc, qc from the soundings at each sublayer (see the traces)"
        elif s.cone_resistance is not None:
            stiff = f"qc = {q.t(s.cone_resistance / 1000, 'modulus')} (given); E = factor × qc"
        elif s.spt_n is not None and beh == "granular":
            eq = spt.get(s.name)
            stiff = "from SPT N (Burland & Burbidge)" + (
                f"; equivalent E ≈ {q.t(float(np.median(eq)) / 1000, 'modulus')}" if eq else ""
            )
        else:
            stiff = "–"
        if s.preconsolidation is not None:
            sp = f"σ'p = {q.t(s.preconsolidation, 'pressure')} (given)"
        elif s.ocr is not None:
            sp = f"OCR = {s.ocr:.2f} (given)"
        elif beh == "cohesive":
            sp = "normally consolidated (σ'p = σ'v0)"
        else:
            sp = "–"
        method = s.method.value if s.method is not None else ""
        if beh == "granular" and not method:
            method = f"{results.site.analysis.granular_method.value} (site default)"
        rows.append(
            [
                _e(s.name),
                _e(beh),
                q.v(s.unit_weight, "unit_weight"),
                q.v(s.saturated_unit_weight, "unit_weight"),
                _num(s.poisson, "{:.2f}"),
                _e(stiff),
                _num(s.spt_n, "{:.0f}"),
                _num(s.compression_index, "{:.3g}"),
                _num(s.recompression_index, "{:.3g}"),
                _num(s.void_ratio, "{:.3g}"),
                _e(sp),
                q.v(s.consolidation_coefficient, "diffusivity"),
                _num(s.secondary_index, "{:.3g}") if beh == "cohesive" else "–",
                _e(getattr(s.drainage, "value", s.drainage)) if beh == "cohesive" else "–",
                q.v(None if s.undrained_modulus is None else s.undrained_modulus / 1000, "modulus"),
                _e(method or "–"),
            ]
        )
    return header, rows


#: the analysis settings with what they mean (site.toml [analysis])
_SETTING_MEANING = {
    "granular_method": "own-load method of granular strata (unless a stratum names one)",
    "shape_interpolation": "Schmertmann diagram between L/B = 1 and 10",
    "report_times": "times reported besides the design life [yr]",
    "design_life": "time of the settlements that are checked [yr]",
    "depth_rule": "how deep each column is integrated",
    "truncation_tolerance": "remaining settlement allowed below the integration (fraction)",
    "influence_fraction": "significant depth: Δσz below this fraction of σ'v0",
    "max_depth_widths": "cap on the integration below the base, in widths",
    "max_depth": "cap on the integration depth [m]",
    "sublayer_fraction": "sublayer thickness as a fraction of the footing width",
    "end_of_primary": "end of primary consolidation (start of secondary compression)",
    "bb_r3": "Burland & Burbidge time factor R3",
    "bb_r": "Burland & Burbidge time factor R",
    "bb_pressure": "Burland & Burbidge bearing pressure q'",
    "map_spacing": "settlement map grid spacing [m] (0: from the plan)",
    "map_margin": "settlement map margin around the footings [m]",
    "stress_tolerance": "stress engine tolerance (fraction of the largest pressure)",
    "cohesive_immediate": "clay settles on loading by its undrained modulus",
    "clay_settlement": "how undrained and consolidation settlement of clay combine",
    "large_plan": "a plan estimated beyond the machine's memory: refused or run",
}


def _setting_value(v) -> str:
    if isinstance(v, tuple):
        return ", ".join(f"{x:.4g}" for x in v)
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float):
        return "none" if not math.isfinite(v) else f"{v:.4g}"
    return str(getattr(v, "value", v))


def _inputs(results: Results, units: str) -> str:
    import dataclasses

    from sitesettle.criteria import get_criteria

    q = _Q(units)
    site = results.site
    parts = ["<h3>Project</h3>"]
    info = "".join(
        f"<dt>{_e(k.replace('_', ' '))}</dt><dd>{_e(v)}</dd>" for k, v in site.info.items()
    )
    parts.append(
        f"<dl class='kv'><dt>name</dt><dd>{_e(site.name)}</dd>{info}"
        f"<dt>coordinate system</dt><dd>{_e(site.crs) if site.crs else 'none given'}</dd></dl>"
    )
    # footings
    fs = site.footings
    parts.append("<h3>Footing schedule</h3>")
    parts.append(
        "<p class='note'>Every footing as analysed: loads on the base, the sustained part "
        "of the live load (for consolidation and creep of clay), rigidity and the fill "
        "above the base; net pressures as computed.</p>"
    )
    rows = []
    for i, f in enumerate(fs):
        rows.append(
            [
                _e(f.id),
                _e(f.shape),
                f"<span class='nw'>{_size(f, q)}</span>",
                q.v(f.x, "length"),
                q.v(f.y, "length"),
                f"{f.rotation:.1f}",
                q.v(f.depth, "length"),
                q.v(f.dead_load, "force"),
                q.v(f.live_load, "force"),
                f"{f.sustained_live_fraction:.2f}",
                q.v(f.sustained_load, "force"),
                "rigid" if f.rigid else "flexible",
                q.v(f.fill_unit_weight, "unit_weight"),
                q.v(results.net_pressure[i], "pressure"),
                q.v(results.sustained_net_pressure[i], "pressure"),
                _e(results.methods[i]),
            ]
        )
    parts.append(
        _table(
            [
                "id",
                "shape",
                "size B × L",
                q.h("x", "length"),
                q.h("y", "length"),
                "rotation [°]",
                q.h("base depth", "length"),
                q.h("dead", "force"),
                q.h("live", "force"),
                "sustained live fraction",
                q.h("sustained load", "force"),
                "rigidity",
                q.h("fill γ", "unit_weight"),
                q.h("q net", "pressure"),
                q.h("q net sustained", "pressure"),
                "method",
            ],
            rows,
            numeric={3, 4, 5, 6, 7, 8, 9, 10, 12, 13, 14},
        )
    )
    # strata
    parts.append("<h3>Strata</h3>")
    parts.append(
        "<p class='note'>Top-down order; every parameter as used, with where it came "
        "from (given, from the cone soundings, from SPT).</p>"
    )
    header, rows = _stratum_rows(results, q)
    parts.append(_table(header, rows, numeric={2, 3, 4, 6, 7, 8, 9, 11, 12, 14}))
    # boreholes
    parts.append("<h3>Boreholes</h3>")
    rows = []
    for b in site.boreholes:
        layers = "; ".join(
            f"{_e(iv.stratum)} {q.v(iv.top, 'length')}–{q.t(iv.bottom, 'length')}"
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
                q.v(b.x, "length"),
                q.v(b.y, "length"),
                q.v(b.water_depth, "length") if b.water_depth is not None else "site value",
                layers,
            ]
        )
    parts.append(
        _table(
            [
                "id",
                q.h("x", "length"),
                q.h("y", "length"),
                q.h("water depth", "length"),
                "strata (depth below ground)",
            ],
            rows,
            numeric={1, 2, 3},
        )
    )
    if site.soundings:
        parts.append("<h3>Cone soundings</h3>")
        rows = []
        for s in site.soundings:
            readings = ", ".join(
                f"{q.v(z, 'length')}: {q.v(v / 1000, 'modulus')}" for z, v in zip(s.depth, s.qc)
            )
            rows.append(
                [
                    _e(s.id),
                    q.v(s.x, "length"),
                    q.v(s.y, "length"),
                    str(len(s.depth)),
                    f"<span class='readings'>{readings}</span>",
                ]
            )
        parts.append(
            _table(
                [
                    "id",
                    q.h("x", "length"),
                    q.h("y", "length"),
                    "readings",
                    f"depth [{q.unit('length')}]: qc [{q.unit('modulus')}]",
                ],
                rows,
                numeric={1, 2, 3},
            )
        )
    parts.append("<h3>Groundwater</h3>")
    water = "none" if not math.isfinite(site.water_depth) else q.t(site.water_depth, "length")
    own = [b for b in site.boreholes if b.water_depth is not None]
    parts.append(
        f"<p>Site water table: {_e(water)} below ground"
        + (
            "; boreholes with their own level: "
            + ", ".join(f"{_e(b.id)} {q.t(b.water_depth, 'length')}" for b in own)
            if own
            else ""
        )
        + ".</p>"
    )
    if site.points:
        parts.append("<h3>Query points</h3>")
        parts.append(
            _table(
                ["id", q.h("x", "length"), q.h("y", "length"), q.h("depth", "length")],
                [
                    [_e(p.id), q.v(p.x, "length"), q.v(p.y, "length"), q.v(p.depth, "length")]
                    for p in site.points
                ],
                numeric={1, 2, 3},
            )
        )
    if site.area_loads:
        parts.append("<h3>Area loads</h3>")
        parts.append(
            _table(
                ["name", "what", q.h("pressure", "pressure"), q.h("depth", "length"),
                 "area [m²]"],
                [
                    [_e(a.name), _text(a.description, units), q.v(a.pressure, "pressure"),
                     q.v(a.depth, "length"), _num(a.area, "{:.1f}")]
                    for a in site.area_loads
                ],
                numeric={2, 3, 4},
            )
        )
    parts.append("<h3>Load history</h3>")
    history = [b for b in results.basis if b.startswith("load history:")]
    if site.stages:
        parts.append(
            _table(
                ["stage", "start [yr]", "duration [yr]", "dead load", "live load", "area loads"],
                [
                    [_e(g.name), _num(g.start, "{:.3g}"), _num(g.duration, "{:.3g}"),
                     f"{g.dead:.0%}", f"{g.live:.0%}", _e(", ".join(g.area_loads)) or "—"]
                    for g in site.stages
                ],
                numeric={1, 2, 3, 4},
            )
        )
    parts.append(
        "<p>" + (_e(history[0]) if history else "all loads at time 0") + " (docs/methods.md "
        "§4.6: each stage's increment from its own start; ramps by Olson's 1977 solution)</p>"
    )
    parts.append("<h3>Analysis settings</h3>")
    rows = []
    for fld in dataclasses.fields(site.analysis):
        v = getattr(site.analysis, fld.name)
        rows.append([_e(fld.name), _e(_setting_value(v)), _e(_SETTING_MEANING.get(fld.name, ""))])
    parts.append(_table(["setting", "value", "meaning"], rows))
    parts.append(
        "<ul class='note'>" + "".join(f"<li>{_e(b)}</li>" for b in results.basis) + "</ul>"
    )
    # criteria
    ck = site.checks
    parts.append("<h3>Checks and criteria</h3>")
    try:
        cset = get_criteria(ck.criteria, ck.overrides)
    except Exception:  # an unknown set was refused on input; nothing to echo
        cset = None
    if cset is not None:
        parts.append(f"<p>Criteria set <b>{_e(cset.name)}</b>: {_e(cset.title)}.</p>")
        parts.append(
            _table(
                ["measure", "limit", "source", "note"],
                [
                    [
                        _e(lim.measure.replace("_", " ")),
                        _text(lim.describe(), units),
                        _e(lim.source),
                        _e(lim.note),
                    ]
                    for lim in cset.limits
                ],
            )
        )
    rule = (
        "automatic neighbours plus the listed pairs"
        if str(ck.pairs) == "auto"
        else ("listed pairs only")
    )
    parts.append(
        "<dl class='kv'>"
        "<dt>movement checked</dt><dd>"
        + (f"after {ck.checked_after:g} yr" if ck.checked_after > 0 else "total")
        + "</dd>"
        f"<dt>pairs</dt><dd>{_e(rule)}</dd>"
        f"<dt>listed pairs</dt><dd>"
        + (", ".join(f"{_e(a)} – {_e(b)}" for a, b in ck.listed_pairs) or "none")
        + "</dd><dt>structure lines</dt><dd>"
        + ("; ".join(_e(" → ".join(line)) for line in ck.structure_lines) or "none")
        + f"</dd><dt>rigid-body tilt in β</dt><dd>{_e(getattr(ck, 'rigid_tilt', ''))}</dd>"
        + "</dl>"
    )
    outside = getattr(site, "outside_files", ())
    if outside:
        parts.append(
            "<p>Input files read from outside the project folder: "
            + ", ".join(_e(x) for x in outside)
            + "</p>"
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
            "characteristic points; flexible ones report the centre. Settlement on "
            "loading is that of the granular strata (Schmertmann's C2 = 1, Burland & "
            "Burbidge's ft = 1) and of undrained clay; creep is the granular part beyond "
            "that (C2 − 1, ft − 1) up to the design life.</p>"
        )
    )


def _results_tables(results: Results, units: str) -> str:
    from sitesettle.io.output import footing_table, pair_basis, pair_table, point_table

    ft = footing_table(results, units)
    su = "in" if units == "us" else "mm"
    life = float(results.times[results.design_life_index])
    keep = (
        ["id"]
        + [
            f"{c}_{su}"
            for c in (
                "on_loading",
                "creep",
                "consolidation",
                "secondary",
                "total",
                "own",
                "neighbours",
            )
        ]
        + ["tilt", "status", "reasons"]
    )
    parts = [f"<h3>Footing settlements at the design life ({life:g} yr)</h3>"]
    parts.append(
        "<p class='note'>total = on loading + creep + consolidation + secondary = own + "
        "neighbours; tilt of the checked movement.</p>"
    )
    parts.append(_df_table(ft[keep], status=ft["status"], units=units))
    basis, _ = pair_basis(results)
    parts.append(f"<h3>Pairs (differential and β {_e(basis)})</h3>")
    pt = pair_table(results, units)
    parts.append(_df_table(pt, units=units) if len(pt) else "<p>No pairs were checked.</p>")
    c = results.checks
    if c is not None and c.lines is not None and len(c.lines.ids):
        from sitesettle.io.summary import ratio_text

        q = _Q(units)
        rows = [
            [
                _e(" → ".join(line)),
                q.v(length, "length"),
                _e(zone),
                ratio_text(abs(ratio)),
                _text(lim, units),
                _num(u, "{:.2f}"),
                "pass" if p else "<span class='fail'>fail</span>",
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
        parts.append(f"<h3>Structure lines (Δ/L {_e(basis)})</h3>")
        parts.append(
            _table(
                [
                    "footings",
                    q.h("length", "length"),
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
    if getattr(results, "points", None) is not None:
        qt = point_table(results, units)
        parts.append(f"<h3>Query points at the design life ({life:g} yr)</h3>")
        parts.append(
            "<p class='note'>Named points with no load of their own (an existing building's "
            "footings, a tank rim, a buried service): the same engine as the footings, the "
            "footings' own load counted by elastic strain and consolidation.</p>"
        )
        parts.append(_df_table(qt[np.isclose(qt["time_yr"], life)], units=units))
    if c is not None:
        parts.append("<p>Sources cited: " + "; ".join(_e(s) for s in c.sources) + ".</p>")
    return "".join(parts)


def traced_footings(results: Results) -> list[str]:
    """The footings the report traces: every failing one, then the worst passing one."""
    ids = results.ids
    total = results.at_design_life()
    order = [int(i) for i in np.argsort(-np.nan_to_num(total, nan=-np.inf), kind="stable")]
    c = results.checks
    if c is None:
        return [ids[order[0]]] if order else []
    failing = [ids[i] for i in order if not c.footing_passed[i]]
    passing = [ids[i] for i in order if c.footing_passed[i]]
    return failing + passing[:1]


#: trace columns of granular rows: (heading, key or attribute, quantity, decimals)
_TRACE_PLACE = (
    ("top", "top", "length", 2),
    ("bottom", "bottom", "length", 2),
    ("h", "thickness h (m)", "length", 3),
    ("stratum", "stratum", "", None),
)
_TRACE_STRESS = (
    ("σ'v0", "sigma_v0", "pressure", 1),
    ("Δσz own", "own_stress", "pressure", 1),
    ("Δσz neighbours", "neighbour_stress", "pressure", 1),
)
_GRANULAR_TRACE = (
    *_TRACE_PLACE,
    ("method", "method", "", None),
    *_TRACE_STRESS,
    ("Δp", "Δp (kPa)", "pressure", 1),
    ("C1", "C1", "", 3),
    ("C2", "C2", "", 3),
    ("Iz", "influence", "", 4),
    ("qc", "qc (kPa)", "modulus", 2),
    ("E", "modulus", "modulus", 2),
    ("E source", "E source", "", None),
    ("on loading", "on loading (mm)", "settlement", 3),
    ("creep", "creep (mm)", "settlement", 3),
    ("own", "own_settlement", "settlement", 3),
    ("neighbours", "neighbour_settlement", "settlement", 3),
)
_CLAY_TRACE = (
    *_TRACE_PLACE,
    *_TRACE_STRESS,
    ("σ'p", "σ'p (kPa)", "pressure", 1),
    ("final σ'", "final σ' (kPa)", "pressure", 1),
    ("branch", "branch", "", None),
    ("primary strain", "primary strain", "", 5),
    ("U(t)", "U(t)", "", 3),
    ("drainage path", "drainage path (m)", "length", 2),
    ("Eu", "modulus", "modulus", 2),
    ("on loading", "on loading (mm)", "settlement", 3),
    ("consolidation", "consolidation (mm)", "settlement", 3),
    ("secondary", "secondary (mm)", "settlement", 3),
    ("own", "own_settlement", "settlement", 3),
    ("neighbours", "neighbour_settlement", "settlement", 3),
)


def _trace_column(t, key: str) -> np.ndarray:
    if key in t.details:
        return np.asarray(t.details[key])
    if key == "thickness h (m)":
        return np.asarray(t.bottom, float) - np.asarray(t.top, float)
    if not hasattr(t, key):  # a trace made without that detail
        text = key in ("E source", "branch")
        return np.full(len(t.top), "" if text else np.nan, dtype=object if text else float)
    v = getattr(t, key)
    if key in ("own_settlement", "neighbour_settlement"):
        return np.asarray(v, float) * 1000.0
    if key == "modulus":
        return np.asarray(v, float) / 1000.0 if v is not None else np.full(len(t.top), np.nan)
    return np.asarray(v) if not isinstance(v, tuple) else np.array(v, dtype=object)


def _trace_cell(q: _Q, v, key: str, qty: str, dec) -> str:
    """One cell of a trace table (the rule :func:`_trace_cells` applies to a whole column)."""
    if dec is None:
        return _e(v)
    if qty:
        if qty == "settlement" and q.us:
            dec = 4
        return q.v(v, qty, dec if not (q.us and qty == "pressure") else 3)
    if key == "primary strain":
        return _num(v, "{:.4e}")
    return _num(v, f"{{:.{dec}f}}")


def _trace_cells(q: _Q, col: np.ndarray, rows: np.ndarray, key: str, qty: str, dec) -> list[str]:
    """The cells of one trace column at ``rows``, as :func:`_trace_cell` makes each.

    A float or integer column is formatted in one pass (NaN and ±inf as "–", as
    ``_Q.v`` and ``_num`` give them); any other column (text, booleans, objects)
    cell by cell through :func:`_trace_cell`.
    """
    values = col[rows]
    if dec is None:
        if values.dtype.kind not in "OUS":
            return [_e(v) for v in values]
        memo: dict[str, str] = {}  # strata, methods and sources repeat down a column
        out = []
        for v in values.tolist():
            if type(v) is str:  # only text is looked up: 0.0 == -0.0 and 1 == True as keys
                cell = memo.get(v)
                if cell is None:
                    cell = memo[v] = _e(v)
            else:
                cell = _e(v)
            out.append(cell)
        return out
    if values.dtype.kind not in "fiu":
        return [_trace_cell(q, v, key, qty, dec) for v in values]
    x = values.astype(float)
    finite = np.isfinite(x).tolist()
    if qty:
        if qty == "settlement" and q.us:
            dec = 4
        if q.us and qty == "pressure":
            dec = 3
        x = x * q.spec[qty][1]
        fmt = f"%.{dec}f"
    elif key == "primary strain":
        fmt = "%.4e"
    else:
        fmt = f"%.{dec}f"
    return [fmt % v if ok else "–" for v, ok in zip(x.tolist(), finite)]


def _trace_table(t, rows: np.ndarray, spec, units: str) -> str:
    q = _Q(units)
    heads = [q.h(h, qty) if qty else h for h, _, qty, _ in spec]
    rows = np.asarray(rows, int)
    columns = [
        _trace_cells(q, _trace_column(t, key), rows, key, qty, dec) for _, key, qty, dec in spec
    ]
    numeric = {j for j, (_, _, _, d) in enumerate(spec) if d is not None}
    return _column_table(heads, columns, numeric=numeric).replace(
        "<table>", "<table class='trace'>", 1
    )


def _governing_points(results: Results, i: int, traces) -> set[int]:
    """Indices of the trace points that make footing ``i``'s settlement.

    A pad's settlement comes from all its points; a strip's from the station that
    settles most at the design life, so only that station's points (each point
    belongs to its nearest station).
    """
    every = set(range(len(traces)))
    sx, st = results.station_xy, results.station_total
    if sx is None or st is None:
        return every
    xy = np.asarray(sx, float)[i]
    ok = np.isfinite(xy[:, 0])
    if ok.sum() <= 1:
        return every
    tot = np.asarray(st, float)[i, :, results.design_life_index]
    g = int(np.nanargmax(np.where(ok, tot, -np.inf)))
    pts = np.array([t.point for t in traces], float)
    d = np.hypot(pts[:, None, 0] - xy[None, :, 0], pts[:, None, 1] - xy[None, :, 1])
    d = np.where(ok[None, :], d, np.inf)
    return {int(k) for k in np.flatnonzero(np.argmin(d, axis=1) == g)} or every


def _trace(results: Results, fid: str, units: str, why: str, i: int | None = None) -> str:
    """Every evaluation point of footing ``fid``: granular and clay sublayers a checker can redo."""
    from sitesettle.io.unit_text import in_units

    traces = results.traces.get(fid)
    if not traces:
        return ""
    q = _Q(units)
    i = results.ids.index(fid) if i is None else i
    f = results.site.footings[i]
    k = results.design_life_index
    parts = [
        f"<h3>Calculation trace of footing {_e(fid)} ({_e(why)})</h3>",
        f"<p class='note'>{_e(f.shape)} {_size(f, q)}, base {q.t(f.depth, 'length')}, "
        f"{'rigid' if f.rigid else 'flexible'}; q net {q.t(results.net_pressure[i], 'pressure')} "
        f"(sustained {q.t(results.sustained_net_pressure[i], 'pressure')}); total "
        f"{q.t(results.total[i, k] * 1000, 'settlement')} at {results.times[k]:g} yr.</p>",
    ]
    shown = _governing_points(results, i, traces)
    if len(shown) < len(traces):
        parts.append(
            f"<p class='note'>A strip: the points of its station that settles most "
            f"({len(shown)} of {len(traces)} points; <code>sitesettle explain</code> lists "
            "them all).</p>"
        )
    for p, t in enumerate(traces, start=1):
        if p - 1 not in shown:
            continue
        own = float(np.nansum(t.own_settlement)) * 1000
        nb = float(np.nansum(t.neighbour_settlement)) * 1000
        unit = "in" if q.us else "mm"
        sc = 1 / 25.4 if q.us else 1.0
        parts.append(
            f"<h4>Point {p} of {len(traces)} at ({q.v(t.point[0], 'length')}, "
            f"{q.v(t.point[1], 'length')}) {q.unit('length')}</h4>"
        )
        parts.append(
            f"<p class='note'>The sublayers add up to {own * sc:.3f} {unit} own and "
            f"{nb * sc:.3f} {unit} from the neighbours at this point.</p>"
        )
        if t.notes:
            parts.append(
                "<ul class='note'>"
                + "".join(f"<li>{_e(in_units(n, units))}</li>" for n in t.notes)
                + "</ul>"
            )
        branch = np.asarray(t.details.get("branch", np.full(len(t.top), "")), dtype=object)
        clay = np.array([bool(str(b)) for b in branch], dtype=bool)
        gran = np.flatnonzero(~clay)
        if len(gran):
            parts.append(
                "<p class='note'>Granular sublayers: own on loading = C1·Δp·Iz·h/E "
                "(Schmertmann's own-load rows; Iz = 0 where the diagram has ended), creep = "
                "(C2 − 1) × on loading; the neighbours' part is elastic strain of their Δσz "
                "with E.</p>"
            )
            parts.append(_trace_table(t, gran, _GRANULAR_TRACE, units))
        cl = np.flatnonzero(clay)
        if len(cl):
            parts.append(
                "<p class='note'>Clay sublayers: primary strain = Cr/(1+e0)·log10(σ'p/σ'v0) + "
                "Cc/(1+e0)·log10(σ'/σ'p) along the branch shown, final σ' = σ'v0 + Δσz "
                "(sustained); on loading + consolidation = strain × h × U(t) "
                "(the on-loading part is undrained, at once); secondary after the end of "
                "primary.</p>"
            )
            parts.append(_trace_table(t, cl, _CLAY_TRACE, units))
    return "".join(parts)


def _trace_parts(results: Results, units: str) -> list[str]:
    """The calculation traces section, a piece per traced footing."""
    ids = traced_footings(results)
    if not ids:
        return ["<p>No footings.</p>"]
    c = results.checks
    parts = [
        "<p>Every failing footing is traced at all its evaluation points, then the worst "
        "passing one; <code>sitesettle explain PROJECT ID</code> gives any footing.</p>"
    ]
    where = {fid: i for i, fid in enumerate(results.ids)}  # one look-up table, not a scan each
    for fid in ids:
        i = where[fid]
        if c is None:
            why = "the largest settlement"
        elif not c.footing_passed[i]:
            why = "fails"
        else:
            why = "the worst passing footing"
        parts.append(_trace(results, fid, units, why, i))
    return parts


def _sign_off(site, date: str) -> str:
    info = site.info
    rows = [
        [
            _e(label),
            _e(info.get(key, "")),
            "",
            _e(info.get("date", "")) if key == "prepared_by" else "",
        ]
        for label, key in SIGN_OFF
    ]
    top = (
        "<dl class='kv'>"
        f"<dt>project</dt><dd>{_e(site.name)}</dd>"
        f"<dt>job number</dt><dd>{_e(info.get('job_number', '–'))}</dd>"
        f"<dt>revision</dt><dd>{_e(info.get('revision', '–'))}</dd>"
        f"<dt>date</dt><dd>{_e(info.get('date', date))}</dd>"
        "</dl>"
    )
    return top + _table(["role", "name", "signature", "date"], rows).replace(
        "<table>", "<table class='signoff'>", 1
    )


def render_report(
    results: Results,
    figures: dict[str, bytes],
    *,
    units: str = "si",
    date: str | None = None,
    page: str = "A4",
) -> str:
    """The whole report as one HTML string: ``"".join(report_parts(...))`` (the
    parameters of :func:`report_parts`)."""
    return "".join(report_parts(results, figures, units=units, date=date, page=page))


def report_parts(
    results: Results,
    figures: dict[str, bytes],
    *,
    units: str = "si",
    date: str | None = None,
    page: str = "A4",
) -> list[str]:
    """The whole report as HTML pieces, in order (joined: :func:`render_report`).

    A plan with thousands of failing footings has a report of hundreds of
    megabytes, nearly all of it the calculation traces: kept as one piece per
    trace, it is written piece by piece and never held whole, nor twice.

    Order: verdict and governing results, the inputs echoed in full, methods and
    their validity, the per-footing and per-pair tables, the calculation traces,
    the figures, warnings, cautions and the sign-off block (from ``[project]``).

    Parameters
    ----------
    results : Results
        The analysis results.
    figures : dict of str to bytes
        PNG images by name (``"plan"``, ``"contours"``, ``"settlement_time"``,
        ``"section"`` or any other), embedded as base64 in that order.
    units : {"si", "us"}, optional
        Units of every table and sentence.
    date : str, optional
        Run date shown at the end (default: :func:`run_date`).
    page : {"A4", "letter"}, optional
        Paper size of the print style sheet.
    """
    site = results.site
    when = date or run_date()
    title = f"Settlement report — {_e(site.name)}"
    info = site.info
    footer = (
        f"{site.name} · job {info.get('job_number', '–')} · revision "
        f"{info.get('revision', '–')} · sitesettle {sitesettle.__version__}"
    )
    body = [
        f"<h1>{title}</h1>",
        f"<p class='note'>job {_e(info.get('job_number', '–'))} · revision "
        f"{_e(info.get('revision', '–'))} · {_e(info.get('date', when))} · sitesettle "
        f"{_e(sitesettle.__version__)} · design life "
        f"{results.times[results.design_life_index]:g} yr · units "
        f"{'US customary' if units == 'us' else 'SI'}</p>",
        "<nav class='toc'>"
        + "".join(f"<a href='#{a}'>{h}</a>" for a, h in zip(ANCHORS, SECTIONS))
        + "</nav>",
    ]
    sec = iter(zip(ANCHORS, SECTIONS))

    def h2() -> str:
        a, h = next(sec)
        return f"<h2 id='{a}'>{h}</h2>"

    body.append(h2())
    body.append(_verdict(results, units))
    body.append(h2())
    body.append(_inputs(results, units))
    body.append(h2())
    body.append(_methods(results))
    body.append(h2())
    body.append(_results_tables(results, units))
    body.append(h2())
    body.extend(_trace_parts(results, units))
    body.append(h2())
    if not figures:
        body.append("<p>No figures were made.</p>")
    for name, png in figures.items():
        data = base64.b64encode(png).decode("ascii")
        caption = FIGURE_CAPTIONS.get(name, name)
        body.append(
            f"<figure><img src='data:image/png;base64,{data}' alt='{_e(name)} figure'>"
            f"<figcaption>{_e(caption)}</figcaption></figure>"
        )
    body.append(h2())
    if results.warnings:
        body.append(
            "<ul>" + "".join(f"<li>{_text(w, units)}</li>" for w in results.warnings) + "</ul>"
        )
    else:
        body.append("<p>No warnings.</p>")
    body.append(h2())
    body.append(
        "<div class='box'><ul>" + "".join(f"<li>{_e(c)}</li>" for c in CAUTIONS) + "</ul></div>"
    )
    body.append(h2())
    body.append(_sign_off(site, when))
    body.append(h2())
    body.append(f"<p>Made by sitesettle {_e(sitesettle.__version__)} on {_e(when)}.</p>")
    css = _CSS + _page_css(page, footer)
    head = (
        "<!DOCTYPE html>\n<html lang='en'><head><meta charset='utf-8'>"
        "<meta name='viewport' content='width=device-width, initial-scale=1'>"
        f"<title>{title}</title><style>{css}</style></head>"
        "<body><main>"
    )
    return [head, *body, "</main></body></html>\n"]
