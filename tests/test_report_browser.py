"""The HTML report: self-contained, every user string escaped, checked in a real browser.

The browser tests render the report in headless Chromium (Debian's package; CI
installs it) and read the DOM back: every section heading and footing id must be in
the rendered text, and ids that are HTML or script (``<script>alert(1)</script>``,
an ``<img onerror=…>``) must show as text and run nothing. A control page proves
that scripts do run in this browser, so "no script ran" is a real observation.
A screenshot goes to test-artifacts/report.png for a person to look at.
"""

from __future__ import annotations

import html
import os
import pathlib
import re
import shutil
import subprocess
from html.parser import HTMLParser

import pytest
from _factories import make_results, make_section

from sitesettle.io.output import make_figures
from sitesettle.report import CAUTIONS, SECTIONS, render_report

ARTIFACTS = pathlib.Path(__file__).resolve().parents[1] / "test-artifacts"
NASTY_IDS = [
    "C1",
    "<script>alert(1)</script>",
    "\"&'",
    "<img src=x onerror=\"document.title='pwned'\">",
    "<script>document.title='pwned'</script>",
    "C$6$",
]
NAME = 'Quay <b>North</b> & Co\'s "depot"'


@pytest.fixture(scope="module")
def nasty():
    r = make_results(
        NASTY_IDS,
        name=NAME,
        info={"client": "<i>Harbour</i> & Sons", "notes": "</table><h2>fake"},
        warnings=("stratum <soft clay> has no cv",),
    )
    return r, render_report(
        r, make_figures(r, section=make_section(r)), date="2026-01-01 00:00 UTC"
    )


class _Dom(HTMLParser):
    """Collects the text, the tags and the attributes of a page."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.text: list[str] = []
        self.tags: list[tuple[str, dict]] = []
        self.title = ""
        self._in_title = False
        self.headings: list[str] = []
        self._in_h = False

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        self._in_title = tag == "title"
        if tag in ("h1", "h2", "h3"):
            self._in_h = True
            self.headings.append("")

    def handle_endtag(self, tag):
        if tag == "title":
            self._in_title = False
        if tag in ("h1", "h2", "h3"):
            self._in_h = False

    def handle_data(self, data):
        self.text.append(data)
        if self._in_title:
            self.title += data
        if self._in_h:
            self.headings[-1] += data


def _parse(page: str) -> _Dom:
    dom = _Dom()
    dom.feed(page)
    return dom


# ----------------------------------------------------------- without a browser


def test_report_is_self_contained_and_has_no_scripts(nasty):
    _, page = nasty
    assert "<script" not in page.lower()  # not one script element, not even escaped
    assert not re.search(r"\b(src|href)\s*=\s*['\"]?(?!data:)(https?:|//)", page)  # nothing fetched
    assert "<link" not in page.lower() and "@import" not in page
    dom = _parse(page)
    imgs = [a for t, a in dom.tags if t == "img"]
    assert len(imgs) == 4 and all(a["src"].startswith("data:image/png;base64,") for a in imgs)
    assert not any(k.startswith("on") for _, a in dom.tags for k in a)  # no event handlers


def test_every_user_string_is_escaped(nasty):
    r, page = nasty
    for fid in r.ids:
        assert html.escape(fid, quote=True) in page
    assert "<script>alert(1)</script>" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page
    assert "&quot;&amp;&#x27;" in page  # html.escape of "&'
    assert html.escape(NAME) in page and "<b>North</b>" not in page
    assert "&lt;i&gt;Harbour&lt;/i&gt; &amp; Sons" in page and "</table><h2>fake" not in page
    assert "stratum &lt;soft clay&gt; has no cv" in page


def test_sections_tables_cautions_and_version(nasty):
    r, page = nasty
    dom = _parse(page)
    for heading in SECTIONS:
        assert heading in dom.headings
    text = " ".join(dom.text)
    for fid in r.ids:  # the parsed text holds the ids as the user wrote them
        assert fid in text
    pc = r.checks.pairs
    failing = [(r.ids[i], r.ids[j]) for i, j, ok in zip(pc.a, pc.b, pc.passed) if not ok]
    assert failing and all(
        f"{a} – {b}" in text for a, b in failing
    )  # the checks' list of failing pairs
    drainage_auto = sum(  # drainage is echoed for the strata that consolidate
        str(st.drainage) == "auto" and str(st.behaviour) == "cohesive" for st in r.site.strata
    )
    assert sum(t == "auto" for t in dom.text) == len(pc.a) + drainage_auto
    # one pairs-table row per pair (origin cell), and the strata table's drainage "auto"
    for caution in CAUTIONS:
        assert caution in text
    for stratum in r.site.strata:
        assert stratum.name in text
    for bh in r.site.boreholes:
        assert bh.id in text
    for word in ("Schmertmann", "Terzaghi", "Burland & Burbidge", "elastic half-space", "SPT"):
        assert word in text
    assert "sitesettle 0.1.0" in text and "2026-01-01" in text
    worst = r.ids[int(r.at_design_life().argmax())]
    assert f"Calculation trace of footing {worst}" in text
    own = r.traces[worst][0].own_settlement.sum() * 1000
    assert f"{own:.3f} mm own" in text  # the trace adds up to the footing's own settlement
    assert "Bjerrum (1963); EN 1997-1:2004 Annex H" in text  # the pairs' limit source


def test_run_date_follows_source_date_epoch(monkeypatch):
    from sitesettle.report import run_date

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")  # 2026-01-01T00:00:00Z
    assert run_date() == "2026-01-01 00:00 UTC"


def test_report_without_checks_or_figures():
    r = make_results(with_checks=False, with_map=False, warnings=())
    page = render_report(r, {})
    text = " ".join(_parse(page).text)
    assert "No movement checks were run" in text and "No warnings" in text and "No figures" in text


# ------------------------------------------------------------------ a browser


def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        path = shutil.which(name)
        if path:
            return path
    return "/usr/bin/chromium" if os.path.exists("/usr/bin/chromium") else None


def _run_chromium(tmp_path: pathlib.Path, url: str, *extra: str) -> str:
    exe = _chromium()
    if exe is None:
        pytest.skip("no chromium binary on this machine (apt-get install chromium)")
    cmd = [
        exe,
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--disable-dev-shm-usage",
        f"--user-data-dir={tmp_path / 'profile'}",
        *extra,
        url,
    ]
    run = subprocess.run(cmd, capture_output=True, text=True, timeout=180)
    assert run.returncode == 0, run.stderr[-2000:]
    return run.stdout


@pytest.mark.browser
def test_scripts_do_run_in_this_browser(tmp_path):
    """Control: without it, "no script ran" below could be a browser that runs none."""
    page = tmp_path / "control.html"
    page.write_text(
        "<!DOCTYPE html><html><head><title>before</title></head><body>"
        "<script>document.title='after'</script></body></html>"
    )
    dom = _parse(_run_chromium(tmp_path, page.as_uri(), "--dump-dom"))
    assert dom.title == "after"


@pytest.mark.browser
def test_report_in_a_browser_shows_everything_and_runs_nothing(tmp_path, nasty):
    r, page = nasty
    path = tmp_path / "report.html"
    path.write_text(page, encoding="utf-8")
    dom = _parse(_run_chromium(tmp_path, path.as_uri(), "--dump-dom"))
    assert dom.title == f"Settlement report — {NAME}"  # no script changed it
    assert not [t for t, _ in dom.tags if t == "script"]
    assert not any(k.startswith("on") for _, a in dom.tags for k in a)
    assert sum(t == "img" for t, _ in dom.tags) == 4  # the four figures and no injected image
    for heading in SECTIONS:
        assert heading in dom.headings
    text = " ".join(dom.text)
    for fid in r.ids:
        assert fid in text, fid
    assert NAME in text


@pytest.mark.browser
def test_report_screenshot_for_a_person(tmp_path, nasty):
    _, page = nasty
    path = tmp_path / "report.html"
    path.write_text(page, encoding="utf-8")
    ARTIFACTS.mkdir(exist_ok=True)
    shot = ARTIFACTS / "report.png"
    shot.unlink(missing_ok=True)
    _run_chromium(
        tmp_path,
        path.as_uri(),
        f"--screenshot={shot}",
        "--window-size=1280,4000",
        "--hide-scrollbars",
    )
    data = shot.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 50_000  # a blank page is a few kB
