"""Tests of sitesettle.methods.schmertmann against the published method and exact integrals."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from methods_support import check_array_forms
from scipy import integrate

from sitesettle.methods import schmertmann as sm

SQUARE = sm.diagram(1.0)
STRIP = sm.diagram(10.0)
OLD = sm.diagram(1.0, version="1970")


# ---------------------------------------------------------------- C1 and C2


def test_embedment_factor_never_below_half():
    # Schmertmann (1970): C1 = 1 - 0.5 σ'v0/Δp, not less than 0.5
    ratio = np.linspace(0.0, 20.0, 401)
    c1 = sm.embedment_factor(ratio * 100.0, 100.0)
    assert c1.min() == 0.5
    np.testing.assert_allclose(c1[ratio <= 1.0], 1.0 - 0.5 * ratio[ratio <= 1.0], rtol=1e-15)


@pytest.mark.parametrize(
    "sigma_v0, net_pressure, expected",
    [
        (0.0, 100.0, 1.0),  # surface footing: no embedment correction
        (18.0, 182.0, 1.0 - 0.5 * 18.0 / 182.0),  # METHODS.md §3.6
        (100.0, 100.0, 0.5),  # the limit is reached at σ'v0 = Δp
        (50.0, 0.0, 1.0),  # no net load: documented C1 = 1
        (50.0, -20.0, 1.0),  # unloading: documented C1 = 1
    ],
)
def test_embedment_factor_values(sigma_v0, net_pressure, expected):
    assert sm.embedment_factor(sigma_v0, net_pressure) == pytest.approx(expected, rel=1e-15)


@pytest.mark.parametrize(
    "time, expected",
    [
        # Schmertmann (1970): C2 = 1 + 0.2 log10(t/0.1 yr); 1.2 at 1 yr, 1.4 at 10 yr
        (1.0, 1.2),
        (10.0, 1.4),
        (0.1, 1.0),
        (100.0, 1.6),
        # documented choice: no extrapolation below 0.1 yr
        (0.01, 1.0),
        (0.0, 1.0),
    ],
)
def test_creep_factor(time, expected):
    assert sm.creep_factor(time) == pytest.approx(expected, rel=1e-14)


# ---------------------------------------------------------------- diagrams


@pytest.mark.parametrize(
    "length_ratio, expected",
    [
        # Schmertmann, Hartman & Brown (1978), as universally reproduced (METHODS.md §3.3,
        # from memory): axisymmetric 0.1 / B/2 / 2B / 2.5 qc, plane strain 0.2 / B / 4B / 3.5 qc
        (1.0, (0.1, 0.5, 2.0, 2.5)),
        (10.0, (0.2, 1.0, 4.0, 3.5)),
        (25.0, (0.2, 1.0, 4.0, 3.5)),  # plane strain for every L/B ≥ 10
        # halfway in L/B: linear interpolation (common practice)
        (5.5, (0.15, 0.75, 3.0, 3.0)),
    ],
)
def test_1978_diagrams(length_ratio, expected):
    d = sm.diagram(length_ratio)
    got = (d.iz_base, d.peak_depth_ratio, d.zero_depth_ratio, d.modulus_factor)
    np.testing.assert_allclose(got, expected, rtol=1e-14)
    assert d.peak is None


@pytest.mark.parametrize("length_ratio", [1.0, 2.0, 4.0, 7.0, 10.0])
def test_linear_interpolation_matches_printed_slopes(length_ratio):
    # Salgado (2008), as reproduced by Das (from memory): Iz(0) = 0.1 + 0.0111 (L/B-1),
    # peak depth 0.5 + 0.0555 (L/B-1), zero depth 2 + 0.222 (L/B-1). The printed slopes
    # are rounded to 3 significant figures: at most 9 × (half a unit of the last digit,
    # plus the rounding of 0.0555 vs 0.05556) away from the exact ninths.
    d = sm.diagram(length_ratio)
    x = length_ratio - 1.0
    assert d.iz_base == pytest.approx(0.1 + 0.0111 * x, abs=9 * 1.2e-5)
    assert d.peak_depth_ratio == pytest.approx(0.5 + 0.0555 * x, abs=9 * 6e-5)
    assert d.zero_depth_ratio == pytest.approx(2 + 0.222 * x, abs=9 * 2.3e-4)


@pytest.mark.parametrize(
    "length_ratio, expected",
    [
        # E/qc = 2.5 [1 + 0.4 log10(L/B)] (Terzaghi, Peck & Mesri 1996, from memory)
        (1.0, 2.5),
        (10.0, 3.5),
        (10**0.5, 3.0),
        (50.0, 3.5),  # capped at the plane-strain value
    ],
)
def test_log_modulus_factor(length_ratio, expected):
    d = sm.diagram(length_ratio, interpolation="log")
    assert d.modulus_factor == pytest.approx(expected, rel=1e-14)
    # the geometry is the linear rule's
    assert d.zero_depth_ratio == sm.diagram(length_ratio).zero_depth_ratio


def test_1970_diagram():
    # Schmertmann (1970): 0 at the base, 0.6 at B/2, 0 at 2B, E = 2 qc (METHODS.md §3.2)
    for r in (1.0, 3.0, 10.0):
        d = sm.diagram(r, version="1970")
        got = (d.iz_base, d.peak, d.peak_depth_ratio, d.zero_depth_ratio, d.modulus_factor)
        np.testing.assert_array_equal(got, (0.0, 0.6, 0.5, 2.0, 2.0))


def test_bad_options_list_the_valid_ones():
    with pytest.raises(ValueError, match="1978"):
        sm.diagram(1.0, version="1985")
    with pytest.raises(ValueError, match="'linear', 'log'"):
        sm.diagram(1.0, interpolation="cubic")
    with pytest.raises(ValueError, match="peak_factor"):
        sm.influence_factor(0.5, 1.0, SQUARE)


def test_youngs_modulus_and_peak_depth():
    np.testing.assert_allclose(sm.youngs_modulus(8000.0, SQUARE), 20000.0, rtol=1e-15)
    np.testing.assert_allclose(sm.youngs_modulus(8000.0, STRIP), 28000.0, rtol=1e-15)
    np.testing.assert_allclose(sm.peak_depth(2.0, SQUARE), 1.0, rtol=1e-15)
    np.testing.assert_allclose(sm.peak_depth(1.5, STRIP), 1.5, rtol=1e-15)


# ---------------------------------------------------------------- Izp and Iz


@pytest.mark.parametrize(
    "net_pressure, sigma_v_peak, expected",
    [
        (182.0, 36.0, 0.5 + 0.1 * np.sqrt(182.0 / 36.0)),  # 0.7248, METHODS.md §3.6
        (100.0, 100.0, 0.6),  # Δp = σ'vp
        (400.0, 25.0, 0.9),  # Δp/σ'vp = 16
        (0.0, 30.0, 0.5),
        (-10.0, 30.0, 0.5),  # no net load: the square root is not taken of a negative
        (100.0, 0.0, np.nan),  # σ'vp must be positive: documented NaN
    ],
)
def test_peak_factor(net_pressure, sigma_v_peak, expected):
    # Schmertmann, Hartman & Brown (1978): Izp = 0.5 + 0.1 sqrt(Δp/σ'vp)
    np.testing.assert_allclose(sm.peak_factor(net_pressure, sigma_v_peak), expected, rtol=1e-14)


@pytest.mark.parametrize(
    "z, expected",
    [
        (-0.1, 0.0),  # above the base
        (0.0, 0.1),
        (0.5, 0.4),  # halfway up: (0.1 + 0.7)/2
        (1.0, 0.7),  # peak at B/2
        (2.5, 0.35),  # halfway down from the peak at 1 m to zero at 4 m
        (4.0, 0.0),
        (6.0, 0.0),
    ],
)
def test_influence_factor_square(z, expected):
    # B = 2 m, axisymmetric diagram with Izp = 0.7: read off the diagram's straight lines
    assert sm.influence_factor(z, 2.0, SQUARE, 0.7) == pytest.approx(expected, abs=1e-15)


def _quad(width, diagram, peak, a, b):
    kinks = [
        width * float(diagram.peak_depth_ratio),
        width * float(diagram.zero_depth_ratio),
        0.0,
    ]
    pts = [k for k in kinks if a < k < b]

    def f(z):
        return float(sm.influence_factor(z, width, diagram, peak))

    return integrate.quad(f, a, b, points=pts or None, epsabs=1e-13, epsrel=1e-13)[0]


@pytest.mark.parametrize("width", [0.8, 2.0, 3.5])
@pytest.mark.parametrize("izp", [0.5, 0.7248, 0.9])
def test_whole_diagram_integrals(width, izp):
    # METHODS.md §3.3 (derived): B (Izp + 0.025) axisymmetric, B (0.1 + 2 Izp) plane
    # strain, 0.6 B for 1970; and scipy quad of influence_factor as an independent check.
    # quad of a piecewise-linear function with its kinks given is exact to ~1e-13.
    cases = [
        (SQUARE, izp, width * (izp + 0.025)),
        (STRIP, izp, width * (0.1 + 2 * izp)),
        (OLD, None, 0.6 * width),
    ]
    for d, peak, closed in cases:
        exact = sm.influence_integral(0.0, 10 * width, width, d, peak)
        assert exact == pytest.approx(closed, rel=1e-13)
        assert exact == pytest.approx(_quad(width, d, peak, 0.0, 10 * width), rel=1e-11)


@pytest.mark.parametrize("length_ratio", [1.0, 2.0, 6.0, 12.0])
def test_sublayer_integrals_match_quadrature(length_ratio):
    # boundaries deliberately off the kinks; a sublayer straddling the peak and one
    # straddling the zero depth; a sublayer partly above the base
    d = sm.diagram(length_ratio)
    b, izp = 1.7, 0.68
    edges = np.array([-0.3, 0.13, 0.61, 1.2, 2.05, 3.3, 4.0, 6.9, 9.0])
    got = sm.influence_integral(edges[:-1], edges[1:], b, d, izp)
    want = [_quad(b, d, izp, lo, hi) for lo, hi in zip(edges[:-1], edges[1:])]
    np.testing.assert_allclose(got, want, rtol=1e-10, atol=1e-14)
    # and the parts add up to the whole
    assert got.sum() == pytest.approx(sm.influence_integral(0.0, 100.0, b, d, izp), rel=1e-13)


def test_reversed_and_empty_intervals():
    whole = sm.influence_integral(0.0, 4.0, 2.0, SQUARE, 0.7)
    assert sm.influence_integral(4.0, 0.0, 2.0, SQUARE, 0.7) == pytest.approx(-whole)
    assert sm.influence_integral(1.3, 1.3, 2.0, SQUARE, 0.7) == 0.0
    assert sm.influence_integral(5.0, 9.0, 2.0, SQUARE, 0.7) == 0.0


# ---------------------------------------------------------------- settlement


def test_three_layer_footing_by_hand():
    # Square B = 2 m, Izp = 0.7 (given), Δp = 150 kPa, σ'v0 = 20 kPa, t = 1 yr.
    # Layers below the base: 0-0.6 m E = 10 MPa, 0.6-2.5 m E = 20 MPa, 2.5-5 m E = 40 MPa.
    # Diagram (SH&B 1978 axisymmetric): Iz = 0.1 at 0, 0.7 at 1 m, 0 at 4 m, so
    # Iz(0.6) = 0.1 + 0.6 * 0.6 = 0.46 and Iz(2.5) = 0.7 * (4 - 2.5)/3 = 0.35.
    # Trapezoids by hand:
    layer1 = (0.1 + 0.46) / 2 * 0.6  # 0.168
    layer2 = (0.46 + 0.7) / 2 * 0.4 + (0.7 + 0.35) / 2 * 1.5  # 0.232 + 0.7875
    layer3 = 0.35 * 1.5 / 2  # the triangle down to 4 m; nothing below
    assert layer1 + layer2 + layer3 == pytest.approx(2.0 * (0.7 + 0.025))  # §3.3 closed form
    c1 = 1 - 0.5 * 20 / 150  # 0.9333
    c2 = 1.2  # 1 + 0.2 log10(1/0.1)
    hand = c1 * c2 * 150 * (layer1 / 10e3 + layer2 / 20e3 + layer3 / 40e3)  # 12.489 mm

    top, bottom = np.array([0.0, 0.6, 2.5]), np.array([0.6, 2.5, 5.0])
    modulus = np.array([10e3, 20e3, 40e3])
    parts = sm.sublayer_settlement(150.0, 20.0, 1.0, top, bottom, modulus, 2.0, SQUARE, 0.7)
    np.testing.assert_allclose(
        parts, c1 * c2 * 150 * np.array([layer1 / 10e3, layer2 / 20e3, layer3 / 40e3]), rtol=1e-13
    )
    assert sm.settlement(150.0, 20.0, 1.0, top, bottom, modulus, 2.0, SQUARE, 0.7) == (
        pytest.approx(hand, rel=1e-13)
    )
    assert hand == pytest.approx(0.0124886, rel=1e-5)


@pytest.mark.parametrize(
    "time, expected_mm",
    # METHODS.md §3.6 (computed, not published): 12.97, 15.57, 18.16 mm
    [(0.1, 12.97), (1.0, 15.57), (10.0, 18.16)],
)
def test_synthetic_square_benchmark(time, expected_mm):
    # B = 2 m at 1 m depth, dry γ = 18 kN/m³, gross q = 200 kPa, qc = 8 MPa
    gamma, depth, width, q, qc = 18.0, 1.0, 2.0, 200.0, 8000.0
    sv0 = gamma * depth
    dp = q - sv0
    svp = gamma * (depth + float(sm.peak_depth(width, SQUARE)))  # 36 kPa
    izp = sm.peak_factor(dp, svp)
    # ten sublayers that do not fall on the kinks, down past the zero depth
    edges = np.linspace(0.0, 4.4, 11)
    e = sm.youngs_modulus(np.full(10, qc), SQUARE)
    s = sm.settlement(dp, sv0, time, edges[:-1], edges[1:], e, width, SQUARE, izp)
    # the sheet prints mm to 2 decimals: ±0.005 mm
    assert s * 1000 == pytest.approx(expected_mm, abs=0.005)


def test_synthetic_strip_and_1970_benchmarks():
    # METHODS.md §3.6 (computed): strip B = 1.5 m, same soil, σ'vp = 18 × 2.5 = 45 kPa,
    # Izp = 0.7011, E = 3.5 qc = 28 MPa → 13.92 mm at C2 = 1
    izp = sm.peak_factor(182.0, 45.0)
    assert izp == pytest.approx(0.7011, abs=5e-5)
    s = sm.settlement(182.0, 18.0, 0.1, [0.0], [6.0], [28e3], 1.5, sm.diagram(20.0), izp)
    assert s * 1000 == pytest.approx(13.92, abs=0.005)
    # the 1970 diagram (E = 2 qc = 16 MPa) gives the same 12.97 mm on the square
    s70 = sm.settlement(182.0, 18.0, 0.1, [0.0], [4.0], sm.youngs_modulus(8000.0, OLD), 2.0, OLD)
    assert s70 * 1000 == pytest.approx(12.97, abs=0.005)


def test_no_settlement_without_net_load():
    for dp in (0.0, -30.0):
        s = sm.settlement(dp, 20.0, 1.0, [0.0], [4.0], [20e3], 2.0, SQUARE, 0.6)
        assert s == 0.0


def test_several_footings_at_once():
    # three footings (F,) on four sublayers each (F, n): per-footing args get a trailing axis
    dp = np.array([100.0, 150.0, 200.0])
    width = np.array([1.0, 2.0, 3.0])
    d = sm.diagram(np.array([1.0, 3.0, 10.0])[:, None])
    izp = sm.peak_factor(dp, 30.0)[:, None]
    top = np.array([0.0, 1.0, 2.0, 4.0]) * width[:, None]
    bottom = top + width[:, None]
    e = np.full((3, 4), 25e3)
    s = sm.settlement(dp[:, None], 15.0, 5.0, top, bottom, e, width[:, None], d, izp)
    assert s.shape == (3,)
    for i in range(3):
        di = sm.diagram([1.0, 3.0, 10.0][i])
        one = sm.settlement(dp[i], 15.0, 5.0, top[i], bottom[i], e[i], width[i], di, izp[i, 0])
        assert s[i] == pytest.approx(one, rel=1e-14)


# ---------------------------------------------------------------- array forms and NaN

CASES = [
    (sm.embedment_factor, (18.0, 182.0), {0, 1}, {}),
    (sm.creep_factor, (3.0,), {0}, {}),
    (sm.diagram, (3.0,), {0}, {}),
    (sm.diagram, (3.0,), {0}, {"interpolation": "log"}),
    (sm.diagram, (3.0,), {0}, {"version": "1970"}),
    (sm.peak_factor, (150.0, 40.0), {0, 1}, {}),
    (sm.peak_depth, (2.0, SQUARE), {0}, {}),
    (sm.youngs_modulus, (8000.0, STRIP), {0}, {}),
    (sm.influence_factor, (0.7, 2.0, SQUARE, 0.7), {0, 1, 3}, {}),
    (sm.influence_factor, (2.7, 2.0, OLD), {0, 1}, {}),
    (sm.influence_integral, (0.3, 1.9, 2.0, STRIP, 0.7), {0, 1, 2, 4}, {}),
    (
        sm.sublayer_settlement,
        (150.0, 20.0, 2.0, 0.3, 1.9, 20e3, 2.0, SQUARE, 0.7),
        {0, 1, 2, 3, 4, 5, 6, 8},
        {},
    ),
]


@pytest.mark.parametrize(
    "func, args, vary, kwargs", CASES, ids=[f"{c[0].__name__}-{i}" for i, c in enumerate(CASES)]
)
def test_array_forms_and_nan(func, args, vary, kwargs):
    check_array_forms(func, args, vary, kwargs)


def test_settlement_array_forms():
    # settlement sums over the sublayer axis: scalar = one sublayer, 1-D = one footing's
    # sublayers, 2-D = footings × sublayers
    args = (150.0, 20.0, 2.0, 0.3, 1.9, 20e3, 2.0, SQUARE, 0.7)
    one = sm.settlement(*args)
    assert np.ndim(one) == 0
    assert one == pytest.approx(sm.sublayer_settlement(*args), rel=1e-15)
    top, bottom = np.array([0.0, 0.3, 1.9]), np.array([0.3, 1.9, 5.0])
    column = sm.settlement(*args[:3], top, bottom, *args[5:])
    assert np.ndim(column) == 0
    grid = sm.settlement(*args[:3], np.tile(top, (4, 1)), np.tile(bottom, (4, 1)), *args[5:])
    assert grid.shape == (4,)
    np.testing.assert_allclose(grid, column, rtol=1e-15)


@pytest.mark.parametrize("position", [0, 1, 2, 3, 4, 5, 6, 8])
def test_settlement_nan_in_any_input_gives_nan(position):
    args = [150.0, 20.0, 2.0, np.array([0.0, 1.0]), np.array([1.0, 3.0]), 20e3, 2.0, SQUARE, 0.7]
    ok = sm.settlement(*args)
    assert np.isfinite(ok) and ok > 0
    bad = list(args)
    bad[position] = np.where(np.arange(2) == 1, np.nan, np.asarray(args[position], dtype=float))
    assert np.isnan(sm.settlement(*bad))


# ---------------------------------------------------------------- laws (hypothesis)

depths = st.floats(-1.0, 12.0, allow_nan=False)


@settings(max_examples=200, deadline=None)
@given(
    a=depths,
    b=depths,
    c=depths,
    ratio=st.floats(1.0, 15.0),
    width=st.floats(0.3, 4.0),
    izp=st.floats(0.5, 1.0),
)
def test_integral_is_additive_over_intervals(a, b, c, ratio, width, izp):
    # ∫[a,b] + ∫[b,c] = ∫[a,c] for any order of a, b, c: what lets sublayers of any
    # thickness add up to the whole diagram
    d = sm.diagram(ratio)
    ab = sm.influence_integral(a, b, width, d, izp)
    bc = sm.influence_integral(b, c, width, d, izp)
    ac = sm.influence_integral(a, c, width, d, izp)
    assert ab + bc == pytest.approx(ac, abs=1e-12)


@settings(max_examples=200, deadline=None)
@given(
    z=st.floats(0.0, 12.0),
    ratio=st.floats(1.0, 15.0),
    width=st.floats(0.3, 4.0),
    izp=st.floats(0.5, 1.0),
)
def test_influence_factor_within_diagram_bounds(z, ratio, width, izp):
    # Iz is never negative and never above the peak
    iz = sm.influence_factor(z, width, sm.diagram(ratio), izp)
    assert 0.0 <= iz <= izp + 1e-15
