"""Tests of sitesettle.methods.burland_burbidge.

The constants 1.71, 1.4, 0.763 and the forms of fs and fl are Burland & Burbidge
(1985) as recalled (METHODS.md §4, "from memory"); the check values below are
computed from those equations (METHODS.md §4, "computed"), so they test the
implementation of the equations as recalled, not the recollection itself. The
time factor, R3/R values and N corrections were verified against a reproduction
of the method (METHODS.md §4 [V]).
"""

import numpy as np
import pytest
from methods_support import check_array_forms

from sitesettle.methods import burland_burbidge as bb


@pytest.mark.parametrize(
    "n, flags, expected",
    [
        # Terzaghi & Peck (1948) correction, as used by Burland & Burbidge (1985) [V]
        (25.0, {"fine_or_silty_below_water": True}, 20.0),  # 15 + 0.5 × 10
        (15.0, {"fine_or_silty_below_water": True}, 15.0),
        (10.0, {"fine_or_silty_below_water": True}, 10.0),  # only above 15
        # gravel or sandy gravel: 1.25 N (Burland & Burbidge 1985) [V]
        (20.0, {"gravel": True}, 25.0),
        (20.0, {}, 20.0),
    ],
)
def test_corrected_n(n, flags, expected):
    assert bb.corrected_n(n, **flags) == pytest.approx(expected, rel=1e-15)


def test_corrected_n_flags_broadcast_and_exclude_each_other():
    got = bb.corrected_n([30.0, 30.0, 30.0], gravel=[True, False, False],
                         fine_or_silty_below_water=[False, True, False])  # fmt: skip
    np.testing.assert_allclose(got, [37.5, 22.5, 30.0], rtol=1e-15)
    with pytest.raises(ValueError, match="both gravel"):
        bb.corrected_n(30.0, gravel=True, fine_or_silty_below_water=True)


@pytest.mark.parametrize(
    "n_mean, ic",
    # METHODS.md §4: Ic = 1.71/N^1.4 (constants from memory), values computed, 4 s.f.
    [(5, 0.1797), (10, 0.0681), (20, 0.0258), (30, 0.0146), (50, 0.0072)],
)
def test_compressibility_index(n_mean, ic):
    # 4 significant figures as printed → rtol 1e-3 (0.0072 has two: ±0.00005)
    assert bb.compressibility_index(n_mean) == pytest.approx(ic, rel=1e-3, abs=5e-5)


def test_compressibility_index_needs_positive_n():
    assert np.isnan(bb.compressibility_index(0.0))


@pytest.mark.parametrize(
    "width, z1",
    # METHODS.md §4: z1 = B^0.763 (exponent from memory), computed, 2 decimals
    [(1.0, 1.00), (2.0, 1.70), (3.0, 2.31), (5.0, 3.41), (10.0, 5.79)],
)
def test_influence_depth(width, z1):
    assert bb.influence_depth(width) == pytest.approx(z1, abs=0.005)


def test_influence_depth_when_n_decreases():
    # Burland & Burbidge (1985) [V]: z1 = 2B where N decreases with depth
    np.testing.assert_allclose(
        bb.influence_depth([2.0, 2.0], n_decreases=[True, False]), [4.0, 2.0**0.763]
    )


@pytest.mark.parametrize(
    "length_ratio, fs",
    # METHODS.md §4: fs = [1.25 (L/B)/(L/B + 0.25)]² (form from memory), computed, 3 decimals
    [(1.0, 1.0), (1.5, 1.148), (2.0, 1.235), (3.0, 1.331), (5.0, 1.417), (10.0, 1.487)],
)
def test_shape_factor(length_ratio, fs):
    assert bb.shape_factor(length_ratio) == pytest.approx(fs, abs=5e-4)


def test_shape_factor_limits():
    # a strip tends to 1.25² = 1.5625; L/B < 1 is taken as 1
    assert bb.shape_factor(1e9) == pytest.approx(1.5625, rel=1e-8)
    assert bb.shape_factor(0.5) == 1.0


@pytest.mark.parametrize(
    "thickness, z1, fl",
    [
        # METHODS.md §4 (computed from the form recalled): Hs = 1.5 m, z1 = 3^0.763 = 2.312 m
        (1.5, 3.0**0.763, 0.8766),
        (0.5, 1.0, 0.75),  # (Hs/z1)(2 − Hs/z1) = 0.5 × 1.5
        (1.0, 1.0, 1.0),  # no correction at Hs = z1
        (5.0, 1.0, 1.0),  # nor below it
        (np.inf, 2.0, 1.0),
        (0.0, 2.0, 0.0),
    ],
)
def test_thickness_factor(thickness, z1, fl):
    assert bb.thickness_factor(thickness, z1) == pytest.approx(fl, abs=5e-5)


@pytest.mark.parametrize(
    "time, r3, r, ft",
    [
        # METHODS.md §4 [V for the formula and R3/R], values computed (2 decimals):
        # static loads 1.30, 1.40, 1.50, 1.60 at 3, 10, 30, 100 yr
        (3.0, 0.3, 0.2, 1.30),
        (10.0, 0.3, 0.2, 1.40),
        (30.0, 0.3, 0.2, 1.50),
        (100.0, 0.3, 0.2, 1.60),
        # fluctuating loads: 1.70, 2.12, 2.50, 2.92
        (3.0, 0.7, 0.8, 1.70),
        (10.0, 0.7, 0.8, 2.12),
        (30.0, 0.7, 0.8, 2.50),
        (100.0, 0.7, 0.8, 2.92),
    ],
)
def test_time_factor(time, r3, r, ft):
    assert bb.time_factor(time, r3, r) == pytest.approx(ft, abs=0.005)


@pytest.mark.parametrize(
    "time, ft",
    # tool choice (documented): 1 + R3 t/3 before 3 years, 1 at t ≤ 0
    [(-1.0, 1.0), (0.0, 1.0), (1.5, 1.15), (3.0 - 1e-12, 1.3)],
)
def test_time_factor_before_three_years(time, ft):
    assert bb.time_factor(time) == pytest.approx(ft, abs=1e-11)


def test_default_time_ratios_are_static_loads():
    assert bb.time_factor(10.0) == bb.time_factor(10.0, *bb.STATIC_LOADS)
    assert bb.STATIC_LOADS == (0.3, 0.2)
    assert bb.FLUCTUATING_LOADS == (0.7, 0.8)


# METHODS.md §4 synthetic benchmark (constants from memory, computed): B = L = 3 m, N̄ = 20,
# q' = 150 kPa: Ic = 0.02580, B^0.7 = 2.1577, s_i = 8.35 mm NC; 2.78 mm OC with q' ≤ σ'p;
# 4.64 mm OC with σ'p = 100 kPa


def test_benchmark_normally_consolidated():
    ic = bb.compressibility_index(20.0)
    assert ic == pytest.approx(0.02580, abs=5e-6)
    assert 3.0**0.7 == pytest.approx(2.1577, abs=5e-5)
    # by hand: 150 × 2.1577 × 0.02580 = 8.35 mm
    s = bb.immediate_settlement(150.0, 3.0, ic)
    assert s == pytest.approx(150 * 3.0**0.7 * 1.71 / 20**1.4 / 1000, rel=1e-14)
    assert s * 1000 == pytest.approx(8.35, abs=0.005)


def test_benchmark_overconsolidated():
    ic = bb.compressibility_index(20.0)
    below = bb.immediate_settlement(150.0, 3.0, ic, preconsolidation=200.0)
    assert below * 1000 == pytest.approx(2.78, abs=0.005)  # 8.35 / 3
    above = bb.immediate_settlement(150.0, 3.0, ic, preconsolidation=100.0)
    # by hand: (150 − 2/3 × 100) × 2.1577 × 0.02580 = 83.33 × 0.05567 = 4.64 mm
    assert above * 1000 == pytest.approx(4.64, abs=0.005)


def test_overconsolidated_cases_join_at_preconsolidation():
    ic = bb.compressibility_index(15.0)
    lo = bb.immediate_settlement(120.0 - 1e-9, 2.0, ic, preconsolidation=120.0)
    hi = bb.immediate_settlement(120.0 + 1e-9, 2.0, ic, preconsolidation=120.0)
    assert hi - lo == pytest.approx(0.0, abs=1e-12)


def test_no_settlement_without_pressure():
    assert bb.immediate_settlement(0.0, 2.0, 0.03) == 0.0
    assert bb.immediate_settlement(-50.0, 2.0, 0.03) == 0.0


def test_total_settlement_is_the_product_of_the_factors():
    # s_t = fs fl ft s_i (Burland & Burbidge 1985 [V]); strip-like 2 m × 6 m footing on a
    # 1.2 m thick sand layer over rock, 30 years, fluctuating loads
    ic = bb.compressibility_index(12.0)
    z1 = 2.0**0.763
    expected = (
        (1.25 * 3 / 3.25) ** 2
        * (1.2 / z1) * (2 - 1.2 / z1)
        * (1 + 0.7 + 0.8 * np.log10(30 / 3))
        * 180 * 2.0**0.7 * ic / 1000
    )  # fmt: skip
    got = bb.settlement(180.0, 6.0, 2.0, ic, 30.0, 1.2, r3=0.7, r=0.8)
    assert got == pytest.approx(expected, rel=1e-14)
    # the benchmark square at 3 years: 8.35 mm × 1.3
    assert bb.settlement(150.0, 3.0, 3.0, bb.compressibility_index(20.0), 3.0) == pytest.approx(
        8.349e-3 * 1.3, rel=1e-3
    )


def test_settlement_with_given_influence_depth():
    ic = bb.compressibility_index(12.0)
    # N decreasing: z1 = 2B = 4 m, a 2 m layer gives fl = 0.5 × 1.5 = 0.75
    thin = bb.settlement(100.0, 2.0, 2.0, ic, 0.0, 2.0, influence_depth=4.0)
    deep = bb.settlement(100.0, 2.0, 2.0, ic, 0.0)
    assert thin / deep == pytest.approx(0.75, rel=1e-14)


CASES = [
    (bb.corrected_n, (25.0,), {0}, {"fine_or_silty_below_water": True}),
    (bb.corrected_n, (25.0,), {0}, {"gravel": True}),
    (bb.compressibility_index, (20.0,), {0}, {}),
    (bb.influence_depth, (3.0,), {0}, {}),
    (bb.shape_factor, (2.0,), {0}, {}),
    (bb.thickness_factor, (1.5, 2.3), {0, 1}, {}),
    (bb.time_factor, (1.5, 0.3, 0.2), {0, 1, 2}, {}),
    (bb.time_factor, (30.0, 0.7, 0.8), {0, 1, 2}, {}),
    (bb.immediate_settlement, (150.0, 3.0, 0.0258), {0, 1, 2}, {}),
    (bb.immediate_settlement, (150.0, 3.0, 0.0258, 100.0), {0, 1, 2, 3}, {}),
    (bb.settlement, (150.0, 3.0, 4.5, 0.0258, 10.0, 1.5), {0, 1, 2, 3, 4, 5}, {}),
    (
        bb.settlement,
        (150.0, 3.0, 4.5, 0.0258, 10.0),
        {0, 1, 2, 3, 4},
        {"preconsolidation": 90.0},
    ),
]


@pytest.mark.parametrize(
    "func, args, vary, kwargs", CASES, ids=[f"{c[0].__name__}-{i}" for i, c in enumerate(CASES)]
)
def test_array_forms_and_nan(func, args, vary, kwargs):
    check_array_forms(func, args, vary, kwargs)
