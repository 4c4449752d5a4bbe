"""Issue 16: a calculation package an engineer can sign.

The demo's report must hold every input, the governing results before the first
figure and a sign-off block; the printed report (headless Chromium, A4 and
Letter) must stay within a page bound with no heading stranded at a page foot;
``--units us`` must leave no "mm" or "kN" in any line or CSV text; the terminal
must fit 100 columns; and a checker must be able to redo one Schmertmann and one
clay sublayer from the calculation sheet's printed columns alone.

Reference formulas (outside the project): Schmertmann, Hartman & Brown (1978),
ASCE JGED 104(GT8), eq. 1: s = C1·C2·Δp·Σ(Iz/E)·Δz; Terzaghi's e–log σ'
consolidation with the recompression and virgin branches (Terzaghi & Peck 1967;
Holtz & Kovacs 1981, eq. 9-4 to 9-6): ε = Cr/(1+e0)·log10(σ'p/σ'v0) +
Cc/(1+e0)·log10(σ'f/σ'p).
"""

from __future__ import annotations

import csv
import html
import io
import json
import math
import os
import pathlib
import re
import shutil
import subprocess
import tomllib
from contextlib import redirect_stderr, redirect_stdout
from html.parser import HTMLParser

import numpy as np
import pandas as pd
import pytest
from sitesettle_cli.main import main

import sitesettle

ROOT = pathlib.Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_site"
STARTER = pathlib.Path(sitesettle.__file__).parent / "templates" / "starter"


def run(*args: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        rc = main(list(args))
    return rc, out.getvalue(), err.getvalue()


@pytest.fixture(scope="module")
def demo_si(tmp_path_factory):
    out = tmp_path_factory.mktemp("si") / "results"
    rc, stdout, stderr = run("check", str(DEMO), "--out", str(out))
    assert rc in (0, 1), stderr
    return out, stdout, stderr


@pytest.fixture(scope="module")
def demo_us(tmp_path_factory):
    out = tmp_path_factory.mktemp("us") / "results"
    rc, stdout, stderr = run("check", str(DEMO / "site.toml"), "--units", "us", "--out", str(out))
    assert rc in (0, 1), stderr  # check accepts the path of a site.toml
    return out, stdout, stderr


class _Text(HTMLParser):
    """The visible text of a page, its headings and where the first figure is."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.parts: list[str] = []
        self.headings: list[str] = []
        self.first_figure: int | None = None
        self._skip = False
        self._h = False

    def handle_starttag(self, tag, attrs):
        if tag in ("style", "title"):
            self._skip = True
        if tag in ("h1", "h2", "h3", "h4"):
            self._h = True
            self.headings.append("")
        if tag == "figure" and self.first_figure is None:
            self.first_figure = len(" ".join(self.parts))

    def handle_endtag(self, tag):
        if tag in ("style", "title"):
            self._skip = False
        if tag in ("h1", "h2", "h3", "h4"):
            self._h = False

    def handle_data(self, data):
        if self._skip:
            return
        self.parts.append(data)
        if self._h:
            self.headings[-1] += data

    @property
    def text(self) -> str:
        return " ".join(" ".join(self.parts).split())


def _page(path: pathlib.Path) -> _Text:
    p = _Text()
    p.feed(path.read_text(encoding="utf-8"))
    return p


# ------------------------------------------------------------------ the report


def test_report_echoes_every_input_value_of_the_demo(demo_si):
    out, *_ = demo_si
    text = _page(out / "report.html").text
    site = sitesettle.load_site(DEMO)
    # the footing schedule, read from the project's own files (not through the report)
    with open(DEMO / "footings.csv", encoding="utf-8") as fh:
        rows = [r for r in csv.reader(line for line in fh if not line.startswith("#"))]
    for row in rows[1:]:
        assert row[0] in text, row[0]
    for f in site.footings:
        for value in (
            f"{f.x:.2f}",
            f"{f.y:.2f}",
            f"{f.depth:.2f}",
            f"{f.dead_load:.0f}",
            f"{f.live_load:.0f}",
            f"{f.sustained_live_fraction:.2f}",
            f"{f.sustained_load:.0f}",
            f"{f.fill_unit_weight:.1f}",
        ):
            assert value in text, (f.id, value)
    assert "rigid" in text
    # every stratum parameter of site.toml, as written there
    config = tomllib.loads((DEMO / "site.toml").read_text(encoding="utf-8"))
    for st in config["strata"]:
        assert st["name"] in text
        for key in ("compression_index", "recompression_index", "void_ratio", "poisson_ratio"):
            if key in st:
                assert f"{st[key]:.3g}" in text or f"{st[key]:.2f}" in text, (st["name"], key)
        for key in ("unit_weight", "saturated_unit_weight"):  # "17 kN/m^3" in site.toml
            v = float(st[key].split()[0])
            assert f"{v:.1f}" in text, (st["name"], key)
        if "youngs_modulus" in st:
            assert f"E = {float(st['youngs_modulus'].split()[0]):.2f} MPa (given)" in text
        if "consolidation_coefficient" in st:
            assert f"{float(st['consolidation_coefficient'].split()[0]):.3f}" in text
        if st.get("cone_resistance") == "from soundings":
            assert "qc from the soundings" in text
    # boreholes, every cone reading, groundwater, settings, criteria
    for b in site.boreholes:
        assert b.id in text and f"{b.x:.2f}" in text
        for iv in b.intervals:
            assert f"{iv.top:.2f}–{iv.bottom:.2f} m" in text, (b.id, iv)
    for s in site.soundings:
        assert s.id in text
        for z, qc in zip(s.depth, s.qc):
            assert f"{z:.2f}: {qc / 1000:.2f}" in text, (s.id, z)
    assert f"Site water table: {site.water_depth:.2f} m" in text
    for name in (
        "granular_method",
        "design_life",
        "sublayer_fraction",
        "end_of_primary",
        "truncation_tolerance",
        "map_spacing",
        "clay_settlement",
    ):
        assert name in text
    assert "EN 1997-1:2004 Annex H" in text and "angular distortion ≤ 1/500" in text
    assert "after 0.5 yr" in text


def test_report_order_governing_table_before_the_first_figure_and_sign_off(demo_si):
    out, *_ = demo_si
    page = _page(out / "report.html")
    text = " ".join(page.parts)
    heads = [" ".join(h.split()) for h in page.headings]
    order = [heads.index(h) for h in sitesettle.report.SECTIONS]
    assert order == sorted(order)  # the sections in the order
    gov = text.index("Governing results")
    assert page.first_figure is not None and gov < page.first_figure
    assert text.index("Failing footings") < page.first_figure
    assert text.index("Footing schedule") < page.first_figure  # inputs before figures too
    # the sign-off block, filled from [project]
    sign = text[text.index("Sign-off") :]
    for word in (
        "prepared by",
        "checked by",
        "approved by",
        "P1",
        "2026-03-02",
        "A. Example (invented)",
        "DEMO-2026-014",
    ):
        assert word in sign, word


def test_report_traces_every_failing_footing_and_the_worst_passing_one(demo_si):
    out, *_ = demo_si
    text = _page(out / "report.html").text
    summary = json.loads((out / "summary.json").read_text())
    for fid in summary["failing_footings"]:
        assert f"Calculation trace of footing {fid} (fails)" in text
    assert "(the worst passing footing)" in text
    for word in (
        "Δp [kPa]",
        "C1",
        "C2",
        "Iz",
        "E source",
        "σ'p [kPa]",
        "final σ' [kPa]",
        "branch",
        "primary strain",
        "U(t)",
        "drainage path [m]",
        "Izp",
        "σ'vp",
    ):
        assert word in text, word


# ---------------------------------------------------------------- US units


_SI_WORDS = re.compile(r"(?<![\w])(mm|kN)(?![\w])")


def test_us_units_leave_no_mm_or_kn_in_any_line_or_csv_text(demo_us):
    out, stdout, stderr = demo_us
    for line in (stdout + stderr).splitlines():
        assert not _SI_WORDS.search(line), line
    assert "in" in stdout and "1.97 in" in stdout  # the 50 mm limit in inches
    for name in ("footings.csv", "pairs.csv", "settlement_time.csv", "points.csv"):
        df = pd.read_csv(out / name)
        for col in df.columns:
            assert not _SI_WORDS.search(col), (name, col)
            if df[col].dtype == object:
                for cell in df[col].dropna():
                    assert not _SI_WORDS.search(str(cell)), (name, col, cell)
    summary = json.loads((out / "summary.json").read_text())
    for w in summary["warnings"]:
        assert not _SI_WORDS.search(w), w
    text = _page(out / "report.html").text
    hits = [m.start() for m in _SI_WORDS.finditer(text)]
    assert not hits, [text[max(0, h - 60) : h + 20] for h in hits[:5]]
    # inches to 2 decimals in the reasons (25.4 mm = 1 in, NIST SP 811 App. B)
    f = pd.read_csv(out / "footings.csv")
    reason = f.loc[f.status == "fail", "reasons"].iloc[0]
    assert re.search(r"total \d+\.\d\d in > 1\.97 in", reason), reason


def test_explain_in_us_units(demo_us):
    rc, out, err = run("explain", str(DEMO), "F4", "--units", "us")
    assert rc == 0, err
    assert "σ'v0 (ksf)" in out and "settlement (in)" in out
    assert not any(_SI_WORDS.search(line) for line in out.splitlines())


# ---------------------------------------------------------------- terminal


def test_terminal_lines_fit_100_columns_on_the_demo(demo_si):
    _, stdout, stderr = demo_si
    lines = (stdout + stderr).splitlines()
    assert max(len(line) for line in lines) <= 100, max(lines, key=len)
    assert "Caution:" in stdout and "use = utilisation" in stdout
    assert "after 0.5 yr" in stdout and "on loading" in stdout and "creep" in stdout
    rc, out, _ = run("explain", str(DEMO), "W1")
    assert rc == 0
    assert max(len(line) for line in out.splitlines()) <= 100


def _starter(tmp_path: pathlib.Path, extra_rows: str = "", toml_edit=None) -> pathlib.Path:
    dest = tmp_path / "p"
    shutil.copytree(STARTER, dest)
    if extra_rows:
        with open(dest / "footings.csv", "a", encoding="utf-8") as fh:
            fh.write(extra_rows)
    if toml_edit:
        p = dest / "site.toml"
        p.write_text(toml_edit(p.read_text(encoding="utf-8")), encoding="utf-8")
    return dest


def test_far_footing_is_warned_with_its_distance_and_not_paired(tmp_path):
    # a pad 400 m east of a plan spaced about 5 m: a likely coordinate typo
    p = _starter(tmp_path, "X9,rectangle,416.5,3.5,1.8,1.8,0,1.0,420,140,true\n")
    rc, out, err = run("check", str(p), "--out", str(tmp_path / "r"))
    assert rc in (0, 1), err
    assert re.search(r"footing X9 is 40\d m from the nearest other footing", err), err
    assert "not paired" in err and "X9" in err
    pairs = pd.read_csv(tmp_path / "r" / "pairs.csv")
    assert "X9" not in set(pairs.a) | set(pairs.b)
    assert "warning:" not in out and "warning:" in err  # warnings go to stderr


def test_repeated_warnings_are_grouped():
    from sitesettle.io.summary import group_warnings

    warnings = [
        f"footing A{i} lies outside the boreholes' hull: its ground is extrapolated"
        for i in range(31)
    ]
    lines = group_warnings(warnings)
    assert len(lines) <= 2
    assert lines[0].startswith("warning: 31 footings: lies outside the boreholes' hull")
    assert "A0, A1" in lines[0] and "listed in summary.json" in " ".join(lines)


def test_behavior_spelling_and_dimension_errors_in_words(tmp_path):
    p = _starter(tmp_path, toml_edit=lambda t: t.replace("behaviour =", "behavior =", 1))
    assert sitesettle.load_site(p).strata[0].behaviour is not None
    from sitesettle.errors import InputError
    from sitesettle.units import parse

    with pytest.raises(InputError, match="a force per length such as 15 kN/m"):
        parse("15 kN/m", "force", "footings.csv row 3")
    with pytest.raises(InputError, match=r"of dimension length × mass per time"):
        parse("3 kg*m/s", "force", "x")


# ---------------------------------------------------------------- trace by hand


def test_a_checker_can_redo_one_schmertmann_and_one_clay_sublayer(demo_si):
    rc, out, err = run("explain", str(DEMO), "F4", "--csv")
    assert rc == 0, err
    df = pd.read_csv(io.StringIO(out))
    # Schmertmann, Hartman & Brown (1978) eq. 1 on one sublayer of the own load:
    # own = C1 · C2 · Δp · Iz · h / E (E in kPa; the printed E is in MPa)
    sch = df[(df.method == "schmertmann") & (df.Iz > 0.3)].iloc[0]
    own = sch.C1 * sch.C2 * sch["Δp (kPa)"] * sch.Iz * sch["h (m)"] / (sch["E (MPa)"] * 1000)
    assert own * 1000 == pytest.approx(sch["own (mm)"], rel=0.005)
    assert sch["creep (mm)"] == pytest.approx((sch.C2 - 1) * sch["on loading (mm)"], rel=0.005)
    # clay, e–log σ' (Terzaghi; Holtz & Kovacs 1981 eq. 9-6) with Cc, Cr, e0 of site.toml
    clay_cfg = next(
        s for s in tomllib.loads((DEMO / "site.toml").read_text())["strata"] if s["name"] == "clay"
    )
    cc, cr, e0 = (clay_cfg[k] for k in ("compression_index", "recompression_index", "void_ratio"))
    clay = df[(df.stratum == "clay") & (df["U(t)"] > 0.999)].iloc[0]
    s0, sp, sf = clay["σ'v0 (kPa)"], clay["σ'p (kPa)"], clay["final σ' (kPa)"]
    assert sf == pytest.approx(s0 + clay["Δσz own (kPa)"] + clay["Δσz neighbours (kPa)"], rel=1e-3)
    if sf <= sp:  # the branch says which terms apply
        assert clay.branch.startswith("recompression")
        eps = cr / (1 + e0) * math.log10(sf / s0)
    else:
        eps = cr / (1 + e0) * math.log10(sp / s0) + cc / (1 + e0) * math.log10(sf / sp)
    assert eps == pytest.approx(clay["primary strain"], rel=0.005)
    primary = (clay["on loading (mm)"] + clay["consolidation (mm)"]) / 1000
    assert primary == pytest.approx(eps * clay["h (m)"], rel=0.005)


# ---------------------------------------------------------------- figures API


def test_public_plot_functions_return_axes_and_draw_on_a_given_axes():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from _factories import make_results, make_section
    from matplotlib.axes import Axes
    from matplotlib.collections import PatchCollection, PathCollection
    from matplotlib.lines import Line2D
    from matplotlib.patches import Rectangle

    from sitesettle import plots

    r = make_results()
    try:
        for fn, arg, kw in (
            (plots.plan, r, {}),
            (plots.contours, r, {}),
            (plots.history, r, {}),
            (plots.section, make_section(r), {"site": r.site}),
        ):
            ax = fn(arg, **kw)
            assert isinstance(ax, Axes), fn.__name__
            fig, given = plt.subplots()
            assert fn(arg, given, **kw) is given, fn.__name__  # draws on the given Axes
            assert given.figure is fig
        ax = plots.plan(r)
        assert any(isinstance(c, PatchCollection) for c in ax.collections)  # the footings
        marks = [c for c in ax.collections if isinstance(c, PathCollection)]
        assert len(marks) >= 1  # boreholes (and soundings) marked
        texts = {t.get_text() for t in ax.texts}
        assert {b.id for b in r.site.boreholes} <= texts  # and named
        total = r.at_design_life() * 1000
        assert f"{total[0]:.1f}" in texts  # settlement written on the footing
        cbar = [a for a in ax.figure.axes if a is not ax][0]
        assert any("limit 50 mm" in t.get_text() for t in cbar.texts)  # limit on the colour bar
        ax = plots.history(r)
        assert len([ln for ln in ax.get_lines() if ln.get_marker() == "o"]) >= 1
        ax = plots.section(make_section(r), site=r.site)
        assert any(isinstance(p, Rectangle) for p in ax.patches)  # the footings
        assert all(isinstance(ln, Line2D) for ln in ax.get_lines())
    finally:
        plt.close("all")


def test_section_draws_a_strip_at_its_true_width_along_the_line():
    from sitesettle.analysis import outline_chord

    # a 0.6 m × 7.6 m strip crossed square by the line: 0.6 m, not 7.6 m
    strip = np.array([[-0.3, -3.8], [0.3, -3.8], [0.3, 3.8], [-0.3, 3.8]])
    t0, t1 = outline_chord(strip, np.array([-5.0, 1.0]), np.array([1.0, 0.0]))
    assert t1 - t0 == pytest.approx(0.6) and 0.5 * (t0 + t1) == pytest.approx(5.0)
    # crossed at 45°: the chord is 0.6·√2 (plane geometry)
    d = np.array([1.0, 1.0]) / math.sqrt(2)
    t0, t1 = outline_chord(strip, np.array([-2.0, -2.0]), d)
    assert t1 - t0 == pytest.approx(0.6 * math.sqrt(2))


# ---------------------------------------------------------------- print


def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        path = shutil.which(name)
        if path:
            return path
    return "/usr/bin/chromium" if os.path.exists("/usr/bin/chromium") else None


#: the demo report prints on about 50 A4 pages (traces of nine failing footings);
#: more than this means the print CSS broke (a table one row per page, an image
#: page per figure) — a bound, not a pin
MAX_PAGES = 90
#: PDF page sizes in points (ISO 216 A4 210 × 297 mm; ANSI Letter 8.5 × 11 in)
PAGE_POINTS = {"A4": (595.3, 841.9), "letter": (612.0, 792.0)}


@pytest.mark.browser
@pytest.mark.parametrize("page", ["A4", "letter"])
def test_printed_report_page_count_and_no_heading_at_a_page_foot(demo_si, tmp_path, page):
    pypdf = pytest.importorskip("pypdf")
    exe = _chromium()
    if exe is None:
        pytest.skip("no chromium binary on this machine (apt-get install chromium)")
    out, *_ = demo_si
    src = (out / "report.html").read_text(encoding="utf-8")
    size = "letter" if page == "letter" else "A4"
    src = re.sub(r"@page\{size:(A4|letter)\}", f"@page{{size:{size}}}", src)
    html_path = tmp_path / "report.html"
    html_path.write_text(src, encoding="utf-8")
    pdf = tmp_path / "report.pdf"
    run_ = subprocess.run(
        [
            exe,
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--no-first-run",
            "--disable-dev-shm-usage",
            "--disable-background-networking",
            f"--user-data-dir={tmp_path / 'profile'}",
            "--no-pdf-header-footer",
            f"--print-to-pdf={pdf}",
            html_path.as_uri(),
        ],
        capture_output=True,
        text=True,
        timeout=600,
    )
    assert run_.returncode == 0 and pdf.exists(), run_.stderr[-2000:]
    reader = pypdf.PdfReader(str(pdf))
    n = len(reader.pages)
    assert 10 <= n <= MAX_PAGES
    w, h = (float(v) for v in reader.pages[0].mediabox[2:])
    assert (w, h) == pytest.approx(PAGE_POINTS[page], abs=2.0)
    headings = {" ".join(x.split()) for x in _page(out / "report.html").headings if x.strip()}
    first = reader.pages[0].extract_text()
    assert f"page 1 of {n}" in first and "DEMO-2026-014" in first  # the running footer
    for k, pg in enumerate(reader.pages[:-1]):
        lines = [" ".join(x.split()) for x in pg.extract_text().splitlines() if x.strip()]
        lines = [x for x in lines if not x.startswith(f"page {k + 1} of")]
        assert lines, k
        assert lines[-1] not in headings, (k + 1, lines[-1])
    assert html.escape("Sign-off") in src


#: measured in the page by a script added to a test copy only (the report has none)
_PROBE = """<script>
window.addEventListener('load', function () {
  var out = {width: window.innerWidth, page: document.scrollingElement.scrollWidth};
  var wide = null, boxes = document.querySelectorAll('div.scroll');
  for (var i = 0; i < boxes.length; i++) {
    if (boxes[i].scrollWidth > boxes[i].clientWidth + 20) { wide = boxes[i]; break; }
  }
  if (wide) {
    var cell = wide.querySelector('tbody td');
    var before = cell.getBoundingClientRect().left;
    wide.scrollLeft = 300;
    out.scrolled = wide.scrollLeft;
    out.idShift = Math.abs(cell.getBoundingClientRect().left - before);
    out.position = getComputedStyle(cell).position;
  }
  document.title = 'PROBE' + JSON.stringify(out);
});
</script>"""


@pytest.mark.browser
def test_at_400_px_tables_scroll_sideways_with_the_id_column_fixed(demo_si, tmp_path):
    exe = _chromium()
    if exe is None:
        pytest.skip("no chromium binary on this machine (apt-get install chromium)")
    out, *_ = demo_si
    src = (out / "report.html").read_text(encoding="utf-8").replace("</body>", _PROBE + "</body>")
    page = tmp_path / "narrow.html"
    page.write_text(src, encoding="utf-8")
    run_ = subprocess.run(
        [
            exe,
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--no-first-run",
            "--disable-dev-shm-usage",
            f"--user-data-dir={tmp_path / 'profile'}",
            "--window-size=400,900",
            "--virtual-time-budget=20000",
            "--dump-dom",
            page.as_uri(),
        ],
        capture_output=True,
        text=True,
        timeout=600,
    )
    assert run_.returncode == 0, run_.stderr[-2000:]
    m = re.search(r"<title>PROBE(\{.*?\})</title>", run_.stdout)
    assert m, run_.stdout[:500]
    probe = json.loads(html.unescape(m.group(1)))
    assert probe["page"] <= probe["width"] + 1, probe  # the page itself does not overflow
    assert probe.get("scrolled", 0) > 0, probe  # a wide table scrolls inside its box
    assert probe["position"] == "sticky" and probe["idShift"] < 1, probe  # id column stays
