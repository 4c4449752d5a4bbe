"""Figures: drawn without a display, never shown, failing items marked, user text literal.

The figures themselves were inspected by eye; these tests pin what a reader relies
on: every failing footing and pair is drawn in the failure colour, that colour is
far from every colour of the settlement colour map, the map's method is written on
the contour figure, and a ``$`` in an id is drawn as a dollar sign (not mathtext).
"""

from __future__ import annotations

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
from _factories import make_results, make_section  # noqa: E402
from matplotlib.collections import LineCollection  # noqa: E402
from matplotlib.colors import to_rgba  # noqa: E402
from matplotlib.patches import Polygon  # noqa: E402

from sitesettle import plots  # noqa: E402

FAIL = to_rgba(plots.FAIL_COLOUR)


@pytest.fixture(autouse=True)
def _no_show_and_close(monkeypatch):
    def show(*args, **kwargs):
        raise AssertionError("plots must never call show()")

    monkeypatch.setattr(plt, "show", show)
    yield
    plt.close("all")


def _texts(fig) -> list[str]:
    fig.canvas.draw()
    return [" ".join(t.get_text().split()) for t in fig.findobj(matplotlib.text.Text)]


def test_fail_colour_is_not_a_colour_of_the_settlement_map():
    cmap = plt.get_cmap(plots.SETTLEMENT_CMAP)
    rgb = cmap(np.linspace(0, 1, 256))[:, :3]
    # Euclidean distance in RGB [0, 1]^3; 0.3 is far more than a just-noticeable difference
    assert np.min(np.linalg.norm(rgb - np.array(FAIL[:3]), axis=1)) > 0.3


def test_plan_marks_every_failing_footing_and_pair():
    r = make_results()
    fig = plots.plan_figure(r)
    ax = fig.axes[0]
    outlines = [
        p
        for p in ax.patches
        if isinstance(p, Polygon) and not p.get_fill() and np.allclose(p.get_edgecolor(), FAIL)
    ]
    n_fail = int((~r.checks.footing_passed).sum())
    assert n_fail > 0 and len(outlines) == n_fail
    assert all(p.get_linewidth() >= 2.0 for p in outlines)
    fail_lines = [
        c
        for c in ax.collections
        if isinstance(c, LineCollection)
        and len(c.get_segments())
        and np.allclose(c.get_colors()[0], FAIL)
    ]
    n_bad_pairs = int((~r.checks.pairs.passed).sum())
    assert n_bad_pairs > 0 and sum(len(c.get_segments()) for c in fail_lines) == n_bad_pairs
    texts = _texts(fig)
    assert {"pair fails its limit", "footing fails", "N"} <= set(texts)
    assert all(fid in texts for fid in r.ids)  # ids legible at this spacing
    assert any(t.endswith(" m") for t in texts)  # scale bar
    assert len(fig.axes) == 2  # plan and colour bar
    assert "[mm]" in fig.axes[1].get_ylabel()


def test_plan_without_checks_and_in_us_units():
    r = make_results(with_checks=False)
    fig = plots.plan_figure(r, units="us")
    assert "[in]" in fig.axes[1].get_ylabel()
    assert "no checks were run" in _texts(fig)
    assert "[ft]" in fig.axes[0].get_xlabel()


def test_plan_draws_on_a_given_axes():
    fig, ax = plt.subplots()
    assert plots.plan_figure(make_results(), ax=ax) is fig


def test_contour_figure_states_the_map_method():
    r = make_results()
    texts = " ".join(_texts(plots.contour_figure(r)))
    assert r.map.method in texts


def test_contour_figure_without_a_map_says_it_interpolates():
    texts = " ".join(_texts(plots.contour_figure(make_results(with_map=False))))
    assert "interpolated between footing values" in texts


def test_time_figure_shows_the_worst_footings_and_pair():
    r = make_results()
    fig = plots.time_figure(r)
    assert len(fig.axes) == 2
    ax1, ax2 = fig.axes
    assert ax1.get_xscale() == "log"
    worst = r.ids[int(np.argmax(r.at_design_life()))]
    labels = [line.get_label() for line in ax1.get_lines()]
    assert any(lbl.startswith(worst) for lbl in labels)
    assert (
        len([lbl for lbl in labels if not lbl.startswith(("limit", "_"))])
        == plots.TIME_FIGURE_FOOTINGS
    )
    top, bottom = ax1.get_ylim()
    assert bottom == 0.0 and top > 0.0  # settlement axis points down from 0
    k = int(np.argmax(r.checks.pairs.utilisation))
    a, b = r.ids[r.checks.pairs.a[k]], r.ids[r.checks.pairs.b[k]]
    assert any(a in lbl and b in lbl for lbl in (line.get_label() for line in ax2.get_lines()))


def test_section_figure_draws_strata_water_and_footings():
    r = make_results()
    s = make_section(r)
    fig = plots.section_figure(s)
    texts = " ".join(_texts(fig))
    for name in s.strata:
        assert name in texts
    assert "water table" in texts
    for f in s.footings:
        assert f.id in texts
    top, bottom = fig.axes[0].get_ylim()
    assert top == s.bottom and bottom < 0  # depth axis downward, room above ground


def test_dollar_signs_in_ids_are_drawn_literally():
    r = make_results(["C$1$", "$x$", "C3", "a$b", "C5", "C6"], name="Site $2$")
    from matplotlib.text import Text

    figures = [
        (plots.plan_figure(r), True),
        (plots.contour_figure(r), True),
        (plots.time_figure(r), True),
        (plots.section_figure(make_section(r)), False),
    ]  # the section is titled by its footings
    for fig, titled_by_site in figures:
        fig.canvas.draw()  # would raise on broken mathtext
        shown_texts = []
        for t in fig.findobj(Text):
            raw = t.get_text()
            if raw.startswith("$\\mathdefault"):
                continue  # matplotlib's own log-axis tick labels
            # Text._preprocess_math: matplotlib's own test of whether a text is mathtext
            shown, is_math = t._preprocess_math(raw)
            assert is_math is False, raw
            shown_texts.append(shown)
        joined = " ".join(shown_texts)
        assert "Site $2$" in joined or not titled_by_site
        assert any(
            fid in joined for fid in ("C$1$", "$x$", "a$b")
        )  # each figure names some of them


def test_many_footings_skip_illegible_labels():
    r = make_results(nx=30, ny=20, spacing=3.0)
    texts = _texts(plots.plan_figure(r))
    assert sum(t in texts for t in r.ids) < len(r.ids)  # too crowded to label every one


def test_worst_pair_curve_ends_at_the_checked_differential():
    # with checked_after, the check looks at movement after that time only; the curve
    # must end at the differential the check used (factory: log-time interpolation)
    for after in (0.0, 1.0):
        r = make_results(checked_after=after)
        fig = plots.time_figure(r)
        k = int(np.argmax(r.checks.pairs.utilisation))
        curve = next(line for line in fig.axes[1].get_lines() if line.get_label().startswith("|s("))
        assert curve.get_ydata()[-1] == pytest.approx(
            r.checks.pairs.differential[k] * 1000, rel=1e-9
        )
        assert curve.get_xdata()[0] == pytest.approx(after if after else r.times[0])


def test_contour_figure_shows_the_whole_map_and_no_more():
    r = make_results()
    ax = plots.contour_figure(r).axes[0]
    assert ax.get_xlim() == pytest.approx((r.map.x.min(), r.map.x.max()))
    assert ax.get_ylim() == pytest.approx((r.map.y.min(), r.map.y.max()))
