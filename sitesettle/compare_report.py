"""comparison.html: one self-contained page (inline CSS, the map as base64 PNG, no scripts).

The page gives the two folders, the basis differences, the counts and regressions,
the difference map and the compared tables sorted by change. Every text that comes
from the folders (ids, limits, paths) goes through :func:`html.escape`.
"""

from __future__ import annotations

import base64
import math

import numpy as np

import sitesettle
from sitesettle.report import _CSS, CAUTIONS, _e, _header, _table

#: the page's own colours: rows that got worse, that got better, added, removed
_COMPARE_CSS = """
tr.worse td{background:#fde2d4}
tr.better td{background:#d9efe9}
tr.added td{background:#eef0fb}
tr.removed td{background:#efefef;color:#555}
span.worse{color:#a3106b;font-weight:700}
span.better{color:#0f6f66;font-weight:700}
span.up{color:#9a4a00}
span.down{color:#4b2c83}
"""

#: columns shown on the page (the CSV files hold them all)
_FOOTING_COLUMNS = (
    "id",
    "presence",
    "kind_b",
    "width_a_{L}",
    "width_b_{L}",
    "length_a_{L}",
    "length_b_{L}",
    "total_a_{S}",
    "total_b_{S}",
    "total_delta_{S}",
    "own_delta_{S}",
    "neighbours_delta_{S}",
    "status_a",
    "status_b",
    "change",
)
_PAIR_COLUMNS = (
    "a",
    "b",
    "presence",
    "basis_b",
    "span_b_{L}",
    "differential_a_{S}",
    "differential_b_{S}",
    "differential_delta_{S}",
    "angular_distortion_checked_a",
    "angular_distortion_checked_b",
    "angular_distortion_checked_delta",
    "limit_b",
    "status_a",
    "status_b",
    "change",
)
_LINE_COLUMNS = (
    "line",
    "kind",
    "presence",
    "relative_deflection_a_{S}",
    "relative_deflection_b_{S}",
    "relative_deflection_delta_{S}",
    "deflection_ratio_a",
    "deflection_ratio_b",
    "angular_distortion_a",
    "angular_distortion_b",
    "limit_b",
    "status_a",
    "status_b",
    "change",
)


def _cell(name: str, value, decimals: int) -> tuple[str, str]:
    """(escaped text, class) of one cell."""
    if isinstance(value, (bool, np.bool_)):
        return ("yes" if value else "no"), ""
    if isinstance(value, (float, np.floating)):
        v = float(value)
        if not math.isfinite(v):
            return "", ""
        if "angular_distortion" in name or "ratio" in name:
            if "delta" in name:
                text = f"{v:+.2e}"
            else:
                from sitesettle.io.summary import ratio_text

                text = ratio_text(v)
        elif "delta" in name:
            text = f"{v:+.{decimals}f}"
        else:
            text = f"{v:.{decimals}f}"
        cls = ("up" if v > 0 else "down" if v < 0 else "") if "delta" in name else ""
        return _e(text), cls
    return _e(value), ""


def _compared_table(df, columns, settlement: str, length: str) -> str:
    cols = [c.format(S=settlement, L=length) for c in columns]
    cols = [c for c in cols if c in df.columns]
    if not len(df):
        return "<p>None in either run.</p>"
    d_s = 2 if settlement == "in" else 1
    header = [_e(_header(c)) for c in cols]
    rows, classes = [], []
    numeric = {k for k, c in enumerate(cols) if str(df[c].dtype).startswith("float")}
    for _, r in df.iterrows():
        cells = []
        for c in cols:
            text, cls = _cell(c, r[c], d_s if c.endswith(f"_{settlement}") else 2)
            if c == "change" and text in ("worse", "better"):
                text = f"<span class='{text}'>{text}</span>"
            cells.append(text if not cls else f"<span class='{cls}'>{text}</span>")
        rows.append(cells)
        ch = r["change"]
        classes.append(ch if ch in ("worse", "better", "added", "removed") else "")
    return _table(header, rows, row_classes=classes, numeric=numeric)


def _list(items: list) -> str:
    if not items:
        return "none"
    return ", ".join(_e(i if isinstance(i, str) else "–".join(i)) for i in items)


def render_comparison(c, map_png: bytes) -> str:
    """The comparison page as one HTML string.

    Parameters
    ----------
    c : sitesettle.io.comparison.Comparison
        The comparison.
    map_png : bytes
        The difference map (PNG), embedded as base64.
    """
    S, L = c.settlement, c.length
    k = c.counts
    title = "Comparison of two settlement results"
    body = [
        f"<h1>{title}</h1>",
        f"<p class='note'>sitesettle {_e(sitesettle.__version__)} · every difference is "
        f"B − A · settlements in {_e(S)}, sizes in {_e(L)}</p>",
        "<dl class='kv'>"
        f"<dt>A (reference)</dt><dd>{_e(c.a)}</dd><dt>B (compared)</dt><dd>{_e(c.b)}</dd></dl>",
    ]
    verdict = (
        f"<b>{c.n_regressions} regression(s)</b>: checks that A passed and B fails."
        if c.n_regressions
        else "No regressions: B fails no check that A passed."
    )
    if k["no_change"]:
        verdict = "No change: every footing, pair and line is the same in A and B."
    body.append(f"<div class='verdict'>{verdict}</div>")
    body.append("<h2 id='basis'>Basis</h2>")
    if c.warnings:
        body.append(
            "<div class='box'><p>The basis differs, so some numbers are held to different "
            "things:</p><ul>" + "".join(f"<li>{_e(w)}</li>" for w in c.warnings) + "</ul></div>"
        )
    else:
        body.append("<p>Both runs have the same basis (criteria, limits, times, loads).</p>")
    rows = [
        [_e(r["item"]), _e(r["a"]), _e(r["b"]), "yes" if r["same"] else "<b>no</b>"]
        for _, r in c.basis.iterrows()
    ]
    body.append(_table(["item", "A", "B", "same"], rows))
    body.append("<h2 id='counts'>Counts</h2>")
    fk, pk, lk = k["footings"], k["pairs"], k["lines"]
    items = [
        ("footings in A / B", f"{fk['in_a']} / {fk['in_b']}"),
        ("footings added", _list(fk["added"])),
        ("footings removed", _list(fk["removed"])),
        ("footings resized", _list(fk["size_changed"])),
        ("footings of another kind", _list(fk["kind_changed"])),
        ("footings moved", _list(fk["moved"])),
        ("pairs in A / B", f"{pk['in_a']} / {pk['in_b']}"),
        ("pairs added / removed", f"{_list(pk['added'])} / {_list(pk['removed'])}"),
    ]
    for name, t in (("footings", fk), ("pairs", pk), ("lines", lk)):
        if t is None:
            continue
        items.append((f"{name}: regressions (pass → fail)", _list(t["regressions"])))
        items.append((f"{name}: got better", _list(t["improvements"])))
    body.append(
        "<dl class='kv'>" + "".join(f"<dt>{_e(a)}</dt><dd>{b}</dd>" for a, b in items) + "</dl>"
    )
    data = base64.b64encode(map_png).decode("ascii")
    body.append("<h2 id='map'>Difference map</h2>")
    body.append(
        f"<figure><img src='data:image/png;base64,{data}' alt='difference map'>"
        "<figcaption>B's footings coloured by ΔS = S_B − S_A (total at the design life), a "
        "diverging scale centred at 0: purple where B settles less, orange where it settles "
        "more. Hatched: only in B; dashed: only in A; thick outlines and lines: checks that "
        "changed status.</figcaption></figure>"
    )
    body.append("<h2 id='footings'>Footings, sorted by change</h2>")
    body.append(_compared_table(c.footings, _FOOTING_COLUMNS, S, L))
    body.append("<h2 id='pairs'>Pairs, sorted by change</h2>")
    body.append(_compared_table(c.pairs, _PAIR_COLUMNS, S, L))
    if len(c.lines):
        body.append("<h2 id='lines'>Structure lines and strips, sorted by change</h2>")
        body.append(_compared_table(c.lines, _LINE_COLUMNS, S, L))
    body.append("<h2 id='cautions'>Cautions</h2>")
    body.append(
        "<div class='box'><ul>" + "".join(f"<li>{_e(x)}</li>" for x in CAUTIONS) + "</ul></div>"
    )
    return (
        "<!DOCTYPE html>\n<html lang='en'><head><meta charset='utf-8'>"
        "<meta name='viewport' content='width=device-width, initial-scale=1'>"
        f"<title>{title}</title><style>{_CSS}{_COMPARE_CSS}</style></head>"
        f"<body><main>{''.join(body)}</main></body></html>\n"
    )
