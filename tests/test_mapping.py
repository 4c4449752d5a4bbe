"""Contour levels, contour lines and map grids (sitesettle.mapping).

Round numbers: the 1–2–2.5–5 × 10^k series of drafting practice (common practice).
Contour lines are checked against an analytic field: on a plane z = a·x + b·y + c,
linear interpolation along grid edges is exact, so every vertex of the level-v line
must satisfy a·x + b·y + c = v (to rounding).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from _factories import make_section, rectangle
from hypothesis import example, given, settings
from hypothesis import strategies as st

from sitesettle.mapping import contour_levels, contour_lines, default_grid, nice_step
from sitesettle.results import SettlementMap

ROUND_MANTISSAS = (1.0, 2.0, 2.5, 5.0)


def _is_round(step: float) -> bool:
    """step is 1, 2, 2.5 or 5 × 10^k (to a relative 1e-6: levels carry binary noise)."""
    return any(
        abs(step / (m * 10.0**e) - 1.0) < 1e-6 for e in range(-9, 9) for m in ROUND_MANTISSAS
    )


@pytest.mark.parametrize(
    "value, up, expected",
    [
        (1.0, True, 1.0),
        (1.01, True, 2.0),
        (2.1, True, 2.5),
        (2.6, True, 5.0),
        (7.0, True, 10.0),
        (0.0031, True, 0.005),
        (4300.0, True, 5000.0),
        (3.2, False, 2.5),
        (4.0, False, 5.0),
        (1.3, False, 1.0),
    ],
)
def test_nice_step(value, up, expected):
    assert nice_step(value, up=up) == expected


def test_nice_step_refuses_non_positive():
    with pytest.raises(ValueError):
        nice_step(0.0)


@settings(max_examples=200, deadline=None)
@given(lo=st.floats(-500, 500), spread=st.floats(1e-3, 1e4), max_levels=st.integers(3, 20))
@example(lo=5.960464477539063e-08, spread=200.0, max_levels=3)  # once gave a level 0 < lo
@example(lo=279.134500278392, spread=0.001, max_levels=4)  # a level within the slack of lo
def test_contour_levels_are_round_multiples_inside_the_range(lo, spread, max_levels):
    hi = lo + spread
    levels = contour_levels(np.array([lo, hi, np.nan]), max_levels=max_levels)
    assert 1 <= levels.size <= max_levels
    assert levels.min() >= lo - 1e-9 * max(1, abs(lo)) and levels.max() <= hi + 1e-9 * max(
        1, abs(hi)
    )
    if levels.size >= 2:
        steps = np.diff(levels)
        step = steps[0]
        assert np.allclose(steps, step, rtol=1e-9)
        assert _is_round(step)
        assert np.allclose(levels / step, np.round(levels / step), atol=1e-6)
        # the finest round step that fits: the next finer round step gives too many levels
        finer = max(
            m * 10.0**e
            for e in range(-8, 6)
            for m in ROUND_MANTISSAS
            if m * 10.0**e < step * (1 - 1e-9)
        )
        # counted with the same slack as "inside" above (1e-9 of the values, ≥ 1e-9 mm)
        slack_lo, slack_hi = 1e-9 * max(1, abs(lo)), 1e-9 * max(1, abs(hi))
        n_finer = math.floor((hi + slack_hi) / finer) - math.ceil((lo - slack_lo) / finer) + 1
        assert n_finer > max_levels


def test_contour_levels_of_a_flat_or_empty_field():
    assert contour_levels([5.0, 5.0]).size == 0
    assert contour_levels([np.nan]).size == 0
    assert contour_levels([]).size == 0


def test_contour_lines_on_a_plane_lie_on_the_exact_level_lines():
    x = np.linspace(0.0, 20.0, 41)
    y = np.linspace(-5.0, 10.0, 31)
    X, Y = np.meshgrid(x, y)
    a, b, c = 0.7, -0.3, 12.0  # mm per m, mm per m, mm
    m = SettlementMap(x, y, (a * X + b * Y + c) / 1000.0, "plane")
    levels = contour_levels(a * X + b * Y + c)
    lines = contour_lines(m, levels)
    assert {lvl for lvl, _ in lines} == set(levels.tolist())
    for level, line in lines:
        xy = np.asarray(line.coords)
        np.testing.assert_allclose(a * xy[:, 0] + b * xy[:, 1] + c, level, atol=1e-9)


def test_contour_lines_of_a_cone_are_near_circles():
    # z = r: the level-v line is the circle of radius v; grid interpolation error is
    # below h²/(8 r) for grid spacing h (second derivative of r is 1/r) → 0.02 m here
    x = y = np.linspace(-10.0, 10.0, 81)
    X, Y = np.meshgrid(x, y)
    m = SettlementMap(x, y, np.hypot(X, Y) / 1000.0, "cone")
    for level, line in contour_lines(m, [4.0, 8.0]):
        r = np.hypot(*np.asarray(line.coords).T)
        np.testing.assert_allclose(r, level, atol=0.25**2 / (8 * level) + 1e-12)
        assert line.is_closed


def test_contour_lines_skip_nan_cells():
    x = y = np.arange(5.0)
    z = np.tile(x, (5, 1)) / 1000.0
    z[2, 2] = np.nan
    lines = contour_lines(SettlementMap(x, y, z, "ramp"), [1.5])
    assert lines and all(np.isfinite(np.asarray(g.coords)).all() for _, g in lines)


def test_default_grid_covers_the_plan_and_margin():
    fs = [rectangle("A", 0.0, 0.0, 2.0, 2.0), rectangle("B", 118.0, 40.0, 2.0, 2.0)]
    x, y = default_grid(fs, 0.0, 5.0)
    step = x[1] - x[0]
    assert step == 2.0  # 120 m extent / 60 = 2 m (a round number)
    assert x[0] <= -1.0 - 5.0 and x[-1] >= 119.0 + 5.0 and y[0] <= -6.0 and y[-1] >= 46.0
    assert np.allclose(np.diff(x), step) and np.allclose(np.diff(y), step)


def test_default_grid_is_never_finer_than_half_a_metre():
    x, _ = default_grid([rectangle("A", 0.0, 0.0, 1.0, 1.0)], 0.0, 1.0)
    assert x[1] - x[0] == 0.5


def test_default_grid_takes_a_given_spacing():
    x, y = default_grid([rectangle("A", 0.0, 0.0, 1.0, 3.0)], 0.25, 0.0)
    assert x[1] - x[0] == 0.25 and x[0] == -1.5 and x[-1] == 1.5 and y[0] == -0.5 and y[-1] == 0.5


def test_section_boundaries_fill_nan_and_stay_ordered():
    from _factories import make_results

    s = make_section(make_results())
    tops = np.array(s.tops, dtype=float)
    tops[1, :3] = np.nan  # stratum absent at the start
    s2 = type(s)(s.start, s.end, s.distance, s.strata, tops, s.bottom, s.water_depth)
    bounds = s2.boundaries()
    assert bounds.shape == (len(s.strata) + 1, s.distance.size)
    assert np.all(np.diff(bounds, axis=0) >= 0) and np.all(bounds[-1] == s.bottom)
    np.testing.assert_array_equal(bounds[1, :3], tops[2, :3])
